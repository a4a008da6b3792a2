//! How much the verdict leans on damping: the key figures of every flagged resonance (its
//! peak's amplification, the bank bus's voltage THD and the capacitor current) under the
//! study's damping models and again under the least-damped ones
//! ([`crate::model::LEAST_DAMPED`]), re-run over the flagged configurations only.

use std::collections::HashMap;

use serde::Serialize;

use super::results::{CheckError, CheckOptions, CheckResults};
use super::studies::run_studies;
use crate::model::{LEAST_DAMPED, Plant, Sequence};
use crate::study::penetration::Evaluation;
use crate::study::{ResonanceRow, Verdict};

/// The key figures of one bank in one scenario and configuration under one damping model.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct KeyFigures {
    /// The screened peak's order (`None`: no peak).
    pub peak_order: Option<f64>,
    /// |Z| at the peak against no banks, ×.
    pub amplification: Option<f64>,
    /// Voltage THD at the bank's bus, % of nominal (`None`: not evaluated).
    pub bus_thd_percent: Option<f64>,
    /// The bank's rms current, % of rated (IEEE 18 duty; `None`: no duty row).
    pub capacitor_current_percent: Option<f64>,
}

/// One flagged resonance's key figures under the study's models and the least-damped ones.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DampingBand {
    pub scenario: String,
    pub configuration: String,
    pub bank: String,
    pub sequence: Sequence,
    /// Under the Study sheet's resistance and load models.
    pub study: KeyFigures,
    /// Under constant resistance and CIGRE loads.
    pub least_damped: KeyFigures,
}

/// The key figures of `bank` in (`scenario`, `configuration`, `sequence`) of `res`; `None`
/// when that row was not studied.
pub fn key_figures(
    res: &CheckResults,
    scenario: &str,
    configuration: &str,
    bank: &str,
    sequence: Sequence,
) -> Option<KeyFigures> {
    Lookup::new(res).figures(scenario, configuration, bank, sequence)
}

/// The rows, configurations and duty rows of one result by name, indexed once.
struct Lookup<'r> {
    res: &'r CheckResults,
    rows: HashMap<(&'r str, &'r str, &'r str, Sequence), usize>,
    configurations: HashMap<String, usize>,
    duty: HashMap<(&'r str, &'r str, &'r str), usize>,
}

impl<'r> Lookup<'r> {
    fn new(res: &'r CheckResults) -> Self {
        Lookup {
            res,
            rows: (res.resonance.rows.iter().enumerate())
                .map(|(i, r)| {
                    let key = (
                        r.scenario.as_str(),
                        r.configuration.as_str(),
                        r.bank.as_str(),
                        r.sequence,
                    );
                    (key, i)
                })
                .collect(),
            configurations: (0..res.scan.configurations.len())
                .map(|c| (res.label(c), c))
                .collect(),
            duty: (res.duty.iter().enumerate())
                .map(|(i, d)| {
                    let key = (
                        d.scenario.as_str(),
                        d.configuration.as_str(),
                        d.bank.as_str(),
                    );
                    (key, i)
                })
                .collect(),
        }
    }

    fn figures(
        &self,
        scenario: &str,
        configuration: &str,
        bank: &str,
        sequence: Sequence,
    ) -> Option<KeyFigures> {
        let res = self.res;
        let row =
            &res.resonance.rows[*self.rows.get(&(scenario, configuration, bank, sequence))?];
        let s = (res.network.scenarios.iter()).position(|sc| sc.name == scenario)?;
        let nc = res.scan.configurations.len();
        let c = *self.configurations.get(configuration)?;
        let bus = (res.network.banks.iter()).find(|b| b.id == bank)?.bus;
        let thd = (res.penetration.results.get(s * nc + c))
            .and_then(|d| d.thd_percent.get(bus).copied())
            .filter(|v| v.is_finite());
        let current = (self.duty.get(&(scenario, configuration, bank)))
            .map(|&i| res.duty[i].ratios.rms_current * 100.0);
        Some(KeyFigures {
            peak_order: row.peak.map(|p| p.order),
            amplification: row.peak.map(|p| p.amplification),
            bus_thd_percent: thd,
            capacitor_current_percent: current,
        })
    }
}

/// The plant re-run under the least-damped models over the configurations with a row of
/// `rows` flagged `RESONANT` (and `none`, the reference), at the bank buses alone; `None`
/// when nothing is flagged or the study's models are the least-damped ones already (the
/// band's two sides are then the same figures). Needs only the resonance screen, so the
/// check runs it beside its other studies ([`super::studies::run_studies_beside`]).
pub fn least_damped_rerun(
    plant: &Plant,
    rows: &[ResonanceRow],
    options: &CheckOptions,
) -> Option<Result<CheckResults, CheckError>> {
    let study = &plant.study;
    if (study.resistance_model, study.load_model) == LEAST_DAMPED {
        return None;
    }
    let mut labels: Vec<String> = Vec::new();
    let mut seen = std::collections::HashSet::new();
    for r in rows.iter().filter(|r| r.verdict == Verdict::Resonant) {
        if seen.insert(r.configuration.as_str()) {
            labels.push(r.configuration.clone());
        }
    }
    if labels.is_empty() {
        return None;
    }
    let mut plant = plant.clone();
    (plant.study.resistance_model, plant.study.load_model) = LEAST_DAMPED;
    // The key figures are read at the bank buses alone: neither the PCC nor the extra
    // buses are scanned again, and penetration sums no bus beyond the PCC, bank and
    // source buses.
    let rerun = CheckOptions {
        screened_banks: Some(plant.banks.iter().map(|b| b.id.clone()).collect()),
        evaluation: match options.evaluation {
            Evaluation::Direct => Evaluation::Direct,
            _ => Evaluation::BankBuses,
        },
        ..options.rerun(labels)
    };
    Some(run_studies(&plant, &rerun))
}

/// The band of every resonance row of `res` flagged `RESONANT`, its least-damped side read
/// from `least` ([`least_damped_rerun`]; `None`: the study's models are the least-damped
/// ones, and both sides are `res`'s figures).
pub fn damping_bands(res: &CheckResults, least: Option<&CheckResults>) -> Vec<DampingBand> {
    let flagged = (res.resonance.rows.iter()).filter(|r| r.verdict == Verdict::Resonant);
    let (here, there) = (Lookup::new(res), Lookup::new(least.unwrap_or(res)));
    flagged
        .filter_map(|r| {
            let key =
                |x: &Lookup<'_>| x.figures(&r.scenario, &r.configuration, &r.bank, r.sequence);
            Some(DampingBand {
                scenario: r.scenario.clone(),
                configuration: r.configuration.clone(),
                bank: r.bank.clone(),
                sequence: r.sequence,
                study: key(&here)?,
                least_damped: key(&there)?,
            })
        })
        .collect()
}
