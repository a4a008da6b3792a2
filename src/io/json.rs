//! The JSON summary of a check: settings, characteristic orders, every resonance row, every
//! peak and dip of every scanned series, the spectra used, and the harmonic distortion of
//! every configuration against its limits.

use serde::Serialize;

use crate::check::CheckResults;
use crate::study::limits::{BusCheck, LimitContext, LimitRow, bus_checks};
use crate::study::penetration::{BankAmplification, bank_amplification};
use crate::study::spectra::SpectrumChoice;
use crate::study::{Extremum, ResonanceStudy};

#[derive(Serialize)]
struct SeriesPeaks<'a> {
    scenario: &'a str,
    configuration: String,
    bus: &'a str,
    peaks: &'a [Extremum],
    dips: &'a [Extremum],
}

#[derive(Serialize)]
struct DistortionJson<'a> {
    limits: &'a LimitRow,
    bank_amplification: Vec<BankAmplification>,
    /// Every bus against its limits; omitted (null) for large studies.
    buses: Option<Vec<BusCheck>>,
    pcc_current_a: &'a [f64],
    bank_current_a: &'a [Vec<f64>],
    bank_voltage_percent: &'a [Vec<f64>],
}

/// The operating point: per scenario and configuration `pcc_p_kw`, `pcc_q_kvar` (positive =
/// drawn lagging) and `pcc_power_factor` (input contract, version 2), bus voltage extremes
/// and verdicts; the worst voltage change per step; the kvar needed per bank.
#[derive(Serialize)]
struct OperatingJson<'a> {
    target_power_factor: f64,
    voltage_range_pu: [f64; 2],
    step_voltage_change_limit_percent: f64,
    points: &'a [crate::study::operating::OperatingPoint],
    no_solution: Vec<String>,
    step_changes: &'a [crate::study::operating::StepChange],
    kvar_needed: &'a [crate::study::operating::KvarNeed],
}

/// Scenario × configuration × bus entries above which per-bus checks are left out of the
/// JSON (the limit rows, with each configuration's worst bus, stay).
pub const MAX_BUS_ENTRIES: usize = 200_000;

/// Everything the JSON summary holds, borrowed from a [`CheckResults`]; serialize it with
/// any serde format (the audit tests walk it for non-finite numbers).
#[derive(Serialize)]
pub struct Summary<'a> {
    tool: &'static str,
    version: &'static str,
    title: &'a str,
    plant: &'a str,
    frequency_hz: f64,
    pcc_bus: &'a str,
    scenarios: &'a [String],
    configurations: Vec<String>,
    resonance: &'a ResonanceStudy,
    scan: Vec<SeriesPeaks<'a>>,
    limits: &'a LimitContext,
    injected_orders: &'a [f64],
    spectra: &'a [SpectrumChoice],
    operating: OperatingJson<'a>,
    distortion: Vec<DistortionJson<'a>>,
    duty: &'a [crate::study::duty::DutyRow],
    tolerance: &'a [crate::study::tolerance::ToleranceBand],
    transients: &'a [crate::check::TransientRow],
    remedies: &'a [crate::check::BankRemedies],
    assumptions: &'a [String],
    cautions: &'static [&'static str],
}

/// The JSON text of the summary (pretty-printed). Non-finite numbers become `null`.
pub fn to_json(res: &CheckResults) -> String {
    serde_json::to_string_pretty(&summary(res))
        .unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}

/// The summary of `res` that [`to_json`] prints.
pub fn summary(res: &CheckResults) -> Summary<'_> {
    let scan = res
        .scan
        .series
        .iter()
        .map(|s| SeriesPeaks {
            scenario: &res.scan.scenarios[s.scenario],
            configuration: res.label(s.configuration),
            bus: &res.network.buses[res.scan.buses[s.bus]].id,
            peaks: &s.peaks,
            dips: &s.dips,
        })
        .collect();
    let nc = res.scan.configurations.len();
    let none = res.scan.configurations.iter().position(|c| c.is_none());
    let orders = &res.penetration.injections.orders;
    let per_bus = res.penetration.results.len() * res.network.buses.len() <= MAX_BUS_ENTRIES;
    let distortion = res
        .penetration
        .results
        .iter()
        .zip(&res.limit_rows)
        .map(|(d, row)| DistortionJson {
            limits: row,
            bank_amplification: none.map_or_else(Vec::new, |n0| {
                bank_amplification(d, res.penetration.result(d.scenario, n0, nc), orders)
            }),
            buses: per_bus.then(|| bus_checks(d, &res.limits, &res.network)),
            pcc_current_a: &d.pcc_current_a,
            bank_current_a: &d.bank_current_a,
            bank_voltage_percent: &d.bank_voltage_percent,
        })
        .collect();
    Summary {
        tool: "overtone",
        version: env!("CARGO_PKG_VERSION"),
        title: &res.plant.study.title,
        plant: &res.plant.study.plant,
        frequency_hz: res.plant.study.frequency_hz,
        pcc_bus: &res.network.buses[res.pcc].id,
        scenarios: &res.scan.scenarios,
        configurations: (0..res.scan.configurations.len())
            .map(|c| res.label(c))
            .collect(),
        resonance: &res.resonance,
        scan,
        limits: &res.limits,
        injected_orders: orders,
        spectra: &res.penetration.injections.spectra,
        operating: OperatingJson {
            target_power_factor: res.operating.target_power_factor,
            voltage_range_pu: [res.operating.low_pu, res.operating.high_pu],
            step_voltage_change_limit_percent: res.operating.step_limit_percent,
            points: &res.operating.points,
            no_solution: res
                .operating
                .collapsed
                .iter()
                .map(ToString::to_string)
                .collect(),
            step_changes: &res.operating.step_changes,
            kvar_needed: &res.operating.needs,
        },
        distortion,
        duty: &res.duty,
        tolerance: &res.tolerance,
        transients: &res.transients,
        remedies: &res.remedies,
        assumptions: &res.notes,
        cautions: crate::report::cautions::CAUTIONS,
    }
}
