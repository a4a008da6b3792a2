//! Remedies for a bank that resonates near a characteristic order or fails its duty:
//! detuning reactors of 5.67 %, 7 % and 14 %, one computed for a target order (the edge of
//! the resonance margin below the lowest characteristic order), and a single-tuned filter
//! (at 0.94 of the lowest characteristic order of 5 or more: 4.7 for the 5th, common
//! practice). Each option is sized to deliver the bank's planned kvar at bus voltage, then
//! every study is re-run with it in place and compared with the plant as it was.
//!
//! Every option is re-run over every studied configuration in which the bank is energized,
//! through the same checks as `check`.
//!
//! Ranking (stated rule): options that pass the bank's own checks first (no resonance flag,
//! no tolerance band reaching a characteristic order, no duty limit exceeded, the reactor
//! within its linearity current); plant-wide harmonic limits, which a bank change may not be
//! able to fix, are reported beside each option but do not rank. Then the lowest capacitor
//! voltage class (a cost proxy: every passing option already clears the study's resonance
//! margin across the tolerance band, so a higher class buys margin the checks do not ask
//! for); then the widest margin of the bank's resonance band (across capacitance tolerance
//! and scenarios) to the nearest characteristic order; then the most reactor linearity
//! headroom (the lowest peak current over the linearity peak); then the smallest reactor
//! (kvar at fundamental). Every option keeps the planned kvar, so kvar delivered never
//! decides.

use serde::Serialize;

use super::detune::{Sizing, next_standard_rating, size_capacitor};
use crate::model::{CapacitorBank, Plant, Reactor};

/// One remedy option, sized.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RemedyOption {
    /// e.g. `7 % detuned` or `filter at 4.70`.
    pub name: String,
    pub reactor: Reactor,
    /// Sizing of one step.
    pub step: Sizing,
    /// Planned kvar of the whole bank at bus voltage (all steps).
    pub planned_kvar: f64,
    /// Delivered kvar of the whole bank at bus voltage with this option (all steps).
    pub effective_kvar: f64,
}

/// A remedy option with the studies re-run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RemedyResult {
    pub option: RemedyOption,
    pub before: Outcome,
    pub after: Outcome,
    /// Nothing flagged after.
    pub passes: bool,
    /// 1 = best by the ranking rule.
    pub rank: usize,
    /// The re-run's resonance orders of the bank (the parallel resonance that the reactor
    /// moves below its tuning order), lowest and highest over the configurations.
    pub resonance_after: Option<(f64, f64)>,
    /// Largest rms current of one step with harmonics after, A.
    pub step_rms_a: Option<f64>,
    /// Largest peak current of one step after (fundamental plus every harmonic, the
    /// background's included, in phase) over √2 × the reactor's linearity current
    /// 1.8 × I₁: above 1 the reactor saturates. `None` for a plain bank.
    pub linearity_ratio: Option<f64>,
}

/// What the studies found over the configurations compared.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Outcome {
    pub configurations: usize,
    /// Resonance rows of the bank flagged RESONANT.
    pub resonant: usize,
    /// Configurations exceeding a harmonic limit.
    pub limits_exceeded: usize,
    /// Duty rows of the bank exceeding a limit.
    pub duty_exceeded: usize,
    pub worst_thd_percent: f64,
    pub worst_tdd_percent: f64,
    /// Tolerance bands of the bank that reach a characteristic order the nominal clears.
    pub tolerance_flagged: usize,
    /// Smallest distance of the bank's resonance band (across capacitance tolerance and
    /// scenarios) to the nearest characteristic order of its sequence, % of that order (0
    /// when a band contains one); `None` without a band.
    pub margin_percent: Option<f64>,
}

/// The planned kvar of one step of `bank` at a bus of `bus_kv`: a plain step's rating at
/// bus voltage, or a detuned step's U² / (X_C − X_L).
pub fn planned_step_kvar(bank: &CapacitorBank, bus_kv: f64) -> f64 {
    let p = bank.reactor.p();
    bus_kv * bus_kv / (bank.step_xc_ohm() * (1.0 - p)) * 1000.0
}

/// The options for `bank` at a bus of `bus_kv`, given the plant's characteristic orders and
/// resonance margin (%).
pub fn options(
    plant: &Plant,
    bank: &CapacitorBank,
    bus_kv: f64,
    chars: &[f64],
    margin: f64,
) -> Vec<RemedyOption> {
    let f = plant.study.frequency_hz;
    let planned = planned_step_kvar(bank, bus_kv);
    let lowest = chars.first().copied().unwrap_or(5.0);
    let target = lowest * (1.0 - margin / 100.0);
    let filter_at = chars.iter().copied().find(|&h| h >= 5.0).unwrap_or(5.0) * 0.94;
    let mut list: Vec<(String, Reactor)> = vec![
        ("5.67 % detuned".into(), Reactor::Detuning { percent: 5.67 }),
        ("7 % detuned".into(), Reactor::Detuning { percent: 7.0 }),
        ("14 % detuned".into(), Reactor::Detuning { percent: 14.0 }),
    ];
    if target > 1.0 {
        let p = 100.0 / (target * target);
        if ![5.67, 7.0, 14.0].iter().any(|&q| (q - p).abs() < 0.05) && p < 50.0 {
            list.push((
                format!("{p:.2} % detuned (tuned to {target:.2})"),
                Reactor::Detuning {
                    percent: (p * 100.0).round() / 100.0,
                },
            ));
        }
    }
    list.push((
        format!("filter at {filter_at:.2}"),
        Reactor::Tuned {
            order: (filter_at * 100.0).round() / 100.0,
        },
    ));
    list.into_iter()
        .filter_map(|(name, reactor)| {
            let p = reactor.p();
            let rated = next_standard_rating(bus_kv / (1.0 - p))?;
            let q_rated = planned * (1.0 - p) * (rated / bus_kv).powi(2);
            let step = size_capacitor(f, bus_kv, rated, q_rated, p, bank.reactor_q, None);
            let n = f64::from(bank.steps);
            Some(RemedyOption {
                name,
                reactor,
                planned_kvar: planned * n,
                effective_kvar: step.effective_kvar * n,
                step,
            })
        })
        .collect()
}

/// `bank` with `option` in place: its reactor, capacitor rating and step kvar.
pub fn apply(bank: &CapacitorBank, option: &RemedyOption) -> CapacitorBank {
    CapacitorBank {
        reactor: option.reactor,
        rated_kv: option.step.capacitor_rated_kv,
        step_kvar: option.step.capacitor_kvar,
        ..bank.clone()
    }
}

/// True when `after` makes the plant's worst figure worse than `before`: a higher worst
/// voltage THD or TDD over the configurations compared.
pub fn worsens(before: &Outcome, after: &Outcome) -> bool {
    const SLACK: f64 = 1e-9;
    after.worst_thd_percent > before.worst_thd_percent * (1.0 + SLACK)
        || after.worst_tdd_percent > before.worst_tdd_percent * (1.0 + SLACK)
}

/// Orders results by the ranking rule and numbers them: an option that makes the plant's
/// worst figure worse ([`worsens`]) after every one that does not; then the bank's own
/// checks passing, the capacitor voltage class, the margin across the tolerance band,
/// linearity headroom and the reactor's size.
pub fn rank(results: &mut [RemedyResult]) {
    let margin = |r: &RemedyResult| r.after.margin_percent.unwrap_or(f64::NEG_INFINITY);
    let linearity = |r: &RemedyResult| r.linearity_ratio.unwrap_or(0.0);
    let worse = |r: &RemedyResult| worsens(&r.before, &r.after);
    results.sort_by(|a, b| {
        worse(a)
            .cmp(&worse(b))
            .then(b.passes.cmp(&a.passes))
            .then(
                a.option
                    .step
                    .capacitor_rated_kv
                    .total_cmp(&b.option.step.capacitor_rated_kv),
            )
            .then(margin(b).total_cmp(&margin(a)))
            .then(linearity(a).total_cmp(&linearity(b)))
            .then(reactor_kvar(a).total_cmp(&reactor_kvar(b)))
    });
    for (i, r) in results.iter_mut().enumerate() {
        r.rank = i + 1;
    }
}

/// Reactive power of one step's reactor at fundamental, kvar: 3·I₁²·X_L (three phases).
pub fn reactor_kvar(r: &RemedyResult) -> f64 {
    3.0 * r.option.step.i1_a * r.option.step.i1_a * r.option.step.xl_ohm / 1000.0
}

/// Distance of a resonance band [low, high] to the nearest of `orders`, % of that order:
/// 0 when the band contains one.
pub fn band_margin_percent(low: f64, high: f64, orders: &[f64]) -> Option<f64> {
    orders
        .iter()
        .map(|&h| {
            if (low..=high).contains(&h) {
                0.0
            } else {
                (low - h).abs().min((high - h).abs()) / h * 100.0
            }
        })
        .min_by(f64::total_cmp)
}
