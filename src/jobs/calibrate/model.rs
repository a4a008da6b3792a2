//! The model beside the measurement: the source impedance law, the calibrated plant's
//! scan and penetration for the configurations the recording saw, and the verdicts per
//! scenario.

use num_complex::Complex64;
use serde::Serialize;

use super::run::{MEASURED, source_r_factor};
use crate::jobs::check::{CheckError, CheckOptions, run_check};
use crate::model::{Plant, ResistanceModel};
use crate::study::Verdict;
use crate::study::measured::compliance::LimitsAt;
use crate::study::measured::events::Window;

/// The source model's Z(h), ohm per phase, of S_sc `s_mva` and `x_over_r` at `kv`:
/// |Z(1)| = kV²/S_sc, R(h) = R·k(h) (the plant's resistance law), X(h) = h·X.
pub fn source_z(
    kv: f64,
    s_mva: f64,
    x_over_r: f64,
    law: ResistanceModel,
) -> impl Fn(usize) -> Complex64 {
    let z = kv * kv / s_mva;
    let r = z / (1.0 + x_over_r * x_over_r).sqrt();
    let x = r * x_over_r;
    move |h| Complex64::new(r * source_r_factor(law, h as f64), x * h as f64)
}

/// kvar in service at `bus` in configuration `label`, corrected to the bus's nominal kV:
/// Σ n·Step kvar·(kV_bus/kV_rated)².
pub fn kvar_at_bus(plant: &Plant, bus: &str, label: &str) -> Option<f64> {
    let cfg = crate::study::parse_configuration(label, &plant.banks).ok()?;
    let kv = plant.buses.iter().find(|b| b.id == bus)?.nominal_kv;
    Some(
        plant
            .banks
            .iter()
            .zip(&cfg.steps)
            .filter(|(b, _)| b.bus == bus)
            .map(|(b, &n)| n as f64 * b.step_kvar * (kv / b.rated_kv).powi(2))
            .sum(),
    )
}

/// The IEEE 519-2014 limits at the recording point of `kv` for the log evaluation.
pub fn limits_at(plant: &Plant, kv: f64) -> LimitsAt {
    let i_l = plant
        .study
        .max_demand_current_a
        .unwrap_or_else(|| crate::study::limits::estimated_demand_a(plant, kv, None).0);
    let isc_ka = plant
        .sources
        .iter()
        .filter(|s| s.kind == crate::model::SourceKind::Utility)
        .map(|s| match s.short_circuit {
            crate::model::ShortCircuit::Mva(m) => m / (3f64.sqrt() * kv),
            crate::model::ShortCircuit::Ka(ka) => ka,
        })
        .fold(0.0, f64::max);
    LimitsAt {
        kv,
        i_l_a: i_l,
        isc_over_il: isc_ka * 1e3 / i_l,
    }
}

/// The resonance at the recording bus in one configuration: measured and modelled.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResonanceCompare {
    pub configuration: String,
    pub bank: String,
    /// The bank's bus.
    pub bus: String,
    /// kvar in service at the bus (nominal kV).
    pub q_kvar: f64,
    /// √(X_C/X_s) with X_s the measured source reactance (the slope of Im Z(h)), and X_C
    /// the bus's capacitance in service: the resonance the measurement implies.
    pub measured_order: Option<f64>,
    /// How `measured_order` was found.
    pub measured_basis: &'static str,
    /// The model's worst peak at the bank's bus per scenario (the `measured` one last).
    pub model_orders: Vec<(String, Option<f64>)>,
}

/// Measured against modelled harmonic voltage and current at one order.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OrderCompare {
    pub configuration: String,
    pub scenario: String,
    pub order: usize,
    /// At the recording bus, % of nominal phase voltage.
    pub measured_v_percent: f64,
    pub model_v_percent: f64,
    /// Into the plant at the recording point, A.
    pub measured_i_a: f64,
    /// Across the PCC, A (the plant's emission with the background).
    pub model_i_a: f64,
    /// Model − measured, percentage points of nominal voltage.
    pub v_residual_percent: f64,
    /// Model − measured, A.
    pub i_residual_a: f64,
}

/// The verdicts of one scenario of the calibrated plant.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VerdictCount {
    pub scenario: String,
    pub resonant: usize,
    pub limits_exceeded: usize,
    pub duty_exceeded: usize,
    pub rows: usize,
}

type Compared = (
    Vec<ResonanceCompare>,
    Vec<OrderCompare>,
    Vec<VerdictCount>,
    Box<crate::jobs::check::CheckResults>,
);

/// Checks `calibrated` in the configurations of `states` (scan and penetration), and in
/// every configuration for the verdicts; `x1` is the measured source reactance, ohm.
pub fn compare(
    plant: &Plant,
    calibrated: &Plant,
    bus: &str,
    states: &[Vec<u32>],
    windows: &[(Window, Vec<u32>)],
    x1: Option<f64>,
) -> Result<Compared, CheckError> {
    let mut labels: Vec<String> = states
        .iter()
        .map(|s| crate::study::Configuration { steps: s.clone() }.label(&plant.banks))
        .collect();
    labels.sort();
    labels.dedup();
    let res = run_check(calibrated, &CheckOptions::default().rerun(labels.clone()))?;
    let kv = res.network.buses[res.network.bus_index(bus).unwrap_or(0)].kv;
    let resonance = resonance_compared(plant, &res, (bus, kv), &labels, x1);
    let comparison = orders_compared(&res, bus, &labels, windows);
    // The calibrated plant's whole study, as `check` runs it (the review and report print it).
    let all = run_check(
        calibrated,
        &CheckOptions {
            switching: true,
            ..Default::default()
        },
    )?;
    let verdicts = all
        .scan
        .scenarios
        .iter()
        .map(|s| VerdictCount {
            scenario: s.clone(),
            resonant: all
                .resonance
                .rows
                .iter()
                .filter(|r| &r.scenario == s && r.verdict == Verdict::Resonant)
                .count(),
            limits_exceeded: all
                .limit_rows
                .iter()
                .filter(|r| &r.scenario == s && r.exceeds)
                .count(),
            duty_exceeded: all
                .duty
                .iter()
                .filter(|r| &r.scenario == s && r.exceeds)
                .count(),
            rows: all.limit_rows.iter().filter(|r| &r.scenario == s).count(),
        })
        .collect();
    Ok((resonance, comparison, verdicts, Box::new(all)))
}

/// Per configuration seen and bank in service: the resonance the measurement implies
/// beside the model's peak in every scenario of `res` (the calibrated plant's check).
fn resonance_compared(
    plant: &Plant,
    res: &crate::jobs::check::CheckResults,
    (bus, kv): (&str, f64),
    labels: &[String],
    x1: Option<f64>,
) -> Vec<ResonanceCompare> {
    let mut resonance = Vec::new();
    for label in labels {
        for b in &plant.banks {
            let rows: Vec<_> = (res.resonance.rows.iter())
                .filter(|r| &r.configuration == label && r.bank == b.id && r.steps > 0)
                .collect();
            if rows.is_empty() {
                continue;
            }
            let q = kvar_at_bus(plant, &b.bus, label).unwrap_or(0.0);
            // At the recording bus, from the measured source reactance alone; elsewhere, the
            // hand formula of the `measured` scenario (its S_sc at the bank's bus is the
            // measured source in series with the plant's transformers and cables).
            let (measured_order, measured_basis) = if b.bus == bus {
                let x_c = kv * kv / (q / 1e3);
                let h = x1.filter(|x| *x > 0.0 && q > 0.0).map(|x| (x_c / x).sqrt());
                (h, "√(X_C/X_s), X_s measured")
            } else {
                let h = rows
                    .iter()
                    .find(|r| r.scenario == MEASURED)
                    .map(|r| r.hand_order);
                (h, "hand formula at the bank's bus with the measured source")
            };
            resonance.push(ResonanceCompare {
                configuration: label.clone(),
                bank: b.id.clone(),
                bus: b.bus.clone(),
                q_kvar: q,
                measured_order: measured_order.filter(|h| h.is_finite()),
                measured_basis,
                model_orders: rows
                    .iter()
                    .map(|r| (r.scenario.clone(), r.peak.as_ref().map(|p| p.order)))
                    .collect(),
            });
        }
    }
    resonance
}

/// Per configuration seen, per scenario (`measured` and the plant's first), per integer
/// injected order: the model's V_h and PCC I_h beside the mean of the measured windows.
fn orders_compared(
    res: &crate::jobs::check::CheckResults,
    bus: &str,
    labels: &[String],
    windows: &[(Window, Vec<u32>)],
) -> Vec<OrderCompare> {
    let Some(b) = res.network.bus_index(bus) else {
        return Vec::new();
    };
    let v_nom = res.network.buses[b].kv * 1e3 / 3f64.sqrt();
    let nc = res.scan.configurations.len();
    let mut out = Vec::new();
    let scenarios: Vec<usize> = (0..res.scan.scenarios.len())
        .filter(|&s| s == 0 || res.scan.scenarios[s] == MEASURED)
        .collect();
    for (c, cfg) in res.scan.configurations.iter().enumerate() {
        let label = cfg.label(&res.plant.banks);
        if !labels.contains(&label) {
            continue;
        }
        let seen: Vec<&Window> = windows
            .iter()
            .filter(|w| w.1 == cfg.steps)
            .map(|w| &w.0)
            .collect();
        if seen.is_empty() {
            continue;
        }
        for &s in &scenarios {
            let Some(v) = res.penetration.voltages(s, &cfg.steps) else {
                continue;
            };
            let d = &res.penetration.results[s * nc + c];
            for (o, &h) in res.penetration.injections.orders.iter().enumerate() {
                let hu = h.round() as usize;
                if (h - h.round()).abs() > 1e-9 || seen.iter().any(|w| hu >= w.v.len()) {
                    continue;
                }
                let n = seen.len() as f64;
                let measured_v_percent = seen
                    .iter()
                    .map(|w| 100.0 * w.v[hu].norm() / v_nom)
                    .sum::<f64>()
                    / n;
                let measured_i_a = seen.iter().map(|w| w.i[hu].norm()).sum::<f64>() / n;
                let model_v_percent = 100.0 * v[b][o];
                let model_i_a = d.pcc_current_a.get(o).copied().unwrap_or(f64::NAN);
                out.push(OrderCompare {
                    configuration: label.clone(),
                    scenario: res.scan.scenarios[s].clone(),
                    order: hu,
                    measured_v_percent,
                    model_v_percent,
                    measured_i_a,
                    model_i_a,
                    v_residual_percent: model_v_percent - measured_v_percent,
                    i_residual_a: model_i_a - measured_i_a,
                });
            }
        }
    }
    out
}
