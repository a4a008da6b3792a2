//! The remedy study of `check`: for every flagged bank, the remedy options of
//! [`crate::study::remedy`] each re-run through the studies over every configuration with
//! the bank on, counted with the same findings `check` reports, and ranked.

use super::results::{BankRemedies, CheckOptions, CheckResults};
use super::studies::run_studies;
use crate::model::Sequence;
use crate::study::limits::LimitRow;
use crate::study::remedy::{Outcome, RemedyResult};
use crate::study::tolerance::ToleranceBand;

/// The before/after outcome for `bank` over the configurations labelled `labels` of `res`.
pub fn outcome(res: &CheckResults, bank: &str, labels: &[String]) -> Outcome {
    let has = |c: &str| labels.iter().any(|l| l == c);
    let limits: Vec<&LimitRow> = res
        .limit_rows
        .iter()
        .filter(|r| has(&r.configuration))
        .collect();
    let bands: Vec<&ToleranceBand> = res
        .tolerance
        .iter()
        .filter(|t| t.bank == bank && has(&t.configuration))
        .collect();
    let of_sequence = |seq: Sequence| -> Vec<f64> { res.resonance.orders_of(seq).to_vec() };
    let margin_percent = bands
        .iter()
        .filter_map(|t| {
            crate::study::remedy::band_margin_percent(
                t.low_order,
                t.high_order,
                &of_sequence(t.sequence),
            )
        })
        .min_by(f64::total_cmp);
    Outcome {
        configurations: labels.len(),
        tolerance_flagged: bands.iter().filter(|t| t.flagged).count(),
        margin_percent,
        resonant: res
            .resonance
            .rows
            .iter()
            .filter(|r| {
                r.bank == bank
                    && has(&r.configuration)
                    && r.verdict == crate::study::Verdict::Resonant
            })
            .count(),
        limits_exceeded: limits.iter().filter(|r| r.exceeds).count(),
        duty_exceeded: res
            .duty
            .iter()
            .filter(|r| r.bank == bank && has(&r.configuration) && r.exceeds)
            .count(),
        worst_thd_percent: limits.iter().map(|r| r.worst_thd.value).fold(0.0, f64::max),
        worst_tdd_percent: limits.iter().map(|r| r.tdd.value).fold(0.0, f64::max),
    }
}

/// Why bank `b` of `res` is flagged (resonance, its tolerance band, duty), `None` when it
/// is not.
fn flagged_reason(res: &CheckResults, bank: &str) -> Option<String> {
    let resonant = res
        .resonance
        .rows
        .iter()
        .any(|r| r.bank == bank && r.verdict == crate::study::Verdict::Resonant);
    let duty = res.duty.iter().any(|r| r.bank == bank && r.exceeds);
    let band = res.tolerance.iter().any(|t| t.bank == bank && t.flagged);
    if !resonant && !duty && !band {
        return None;
    }
    let mut why = Vec::new();
    if resonant {
        why.push("resonates near a characteristic order");
    } else if band {
        why.push("reaches a characteristic order across its capacitance tolerance");
    }
    if duty {
        why.push("exceeds its duty limits");
    }
    Some(why.join(" and "))
}

/// One remedy option of bank `b` re-run through the studies over the configurations
/// `labels` (`None` when the changed plant cannot be studied), with its outcome against
/// `before`; its rank is set by [`crate::study::remedy::rank`].
fn try_option(
    res: &CheckResults,
    b: usize,
    option: crate::study::remedy::RemedyOption,
    labels: &[String],
    before: &Outcome,
    options: &CheckOptions,
) -> Option<RemedyResult> {
    let (plant, bank) = (&res.plant, &res.plant.banks[b]);
    let mut changed = plant.clone();
    changed.banks[b] = crate::study::remedy::apply(bank, &option);
    let rerun = CheckOptions {
        buses: options.buses.clone(),
        configurations: labels.to_vec(),
        progress: None,
        remedies: Some(false),
        scan_only: false,
        switching: false,
        evaluation: options.evaluation,
        damping_band: Some(false),
    };
    // `remedies: Some(false)`: the studies alone, as `run_check` runs them.
    let after_res = run_studies(&changed, &rerun).ok()?;
    let after = outcome(&after_res, &bank.id, labels);
    let orders: Vec<f64> = after_res
        .resonance
        .rows
        .iter()
        .filter(|r| r.bank == bank.id)
        .filter_map(|r| r.peak.map(|p| p.order))
        .collect();
    let resonance_after = (!orders.is_empty()).then(|| {
        (
            orders.iter().copied().fold(f64::INFINITY, f64::min),
            orders.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        )
    });
    let i_rated_step = option.step.capacitor_kvar / (3f64.sqrt() * option.step.capacitor_rated_kv);
    let step_rms_a = after_res
        .duty
        .iter()
        .filter(|r| r.bank == bank.id)
        .map(|r| r.ratios.rms_current * i_rated_step)
        .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))));
    let linearity_ratio = (option.step.linearity_a > 0.0)
        .then(|| {
            after_res
                .duty
                .iter()
                .filter(|r| r.bank == bank.id)
                .map(|r| r.ratios.step_peak_a / (2f64.sqrt() * option.step.linearity_a))
                .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))))
        })
        .flatten();
    // The bank's own checks: plant-wide limits are reported, not required (a bank
    // change may not be able to fix them).
    let passes = after.resonant == 0
        && after.tolerance_flagged == 0
        && after.duty_exceeded == 0
        && linearity_ratio.is_none_or(|r| r <= 1.0);
    Some(RemedyResult {
        option,
        before: before.clone(),
        after,
        passes,
        rank: 0,
        resonance_after,
        step_rms_a,
        linearity_ratio,
    })
}

/// Sizes the remedy options of every flagged bank and re-runs the studies with each.
pub fn remedies(res: &CheckResults, options: &CheckOptions) -> Vec<BankRemedies> {
    let plant = &res.plant;
    let mut out = Vec::new();
    for (b, bank) in plant.banks.iter().enumerate() {
        let Some(reason) = flagged_reason(res, &bank.id) else {
            continue;
        };
        // Every studied configuration in which the bank is energized: the option must hold
        // where the bank was clear as well as where it was flagged.
        let labels = res.energized_labels(b);
        if labels.is_empty() {
            continue;
        }
        let before = outcome(res, &bank.id, &labels);
        let bus_kv = res.network.buses[res.network.banks[b].bus].kv;
        let mut results: Vec<RemedyResult> = crate::study::remedy::options(
            plant,
            bank,
            bus_kv,
            &res.resonance.characteristic_orders,
            res.resonance.margin_percent,
        )
        .into_iter()
        .filter_map(|option| try_option(res, b, option, &labels, &before, options))
        .collect();
        crate::study::remedy::rank(&mut results);
        out.push(BankRemedies {
            bank: bank.id.clone(),
            reason,
            configurations: labels,
            results,
        });
    }
    out
}
