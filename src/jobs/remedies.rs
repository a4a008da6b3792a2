//! The remedy study of `check`: for every flagged bank, the remedy options of
//! [`crate::study::remedy`] each re-run through the studies over every configuration with
//! the bank on, counted with the same findings `check` reports, and ranked.

use super::results::{
    BankRemedies, CheckOptions, CheckResults, JointOption, JointResult, PlantRemedies,
};
use super::studies::run_studies;
use crate::model::Sequence;
use crate::study::limits::LimitRow;
use crate::study::remedy::{Outcome, RemedyResult};
use crate::study::tolerance::ToleranceBand;

/// The before/after outcome for `bank` over the configurations labelled `labels` of `res`.
pub fn outcome(res: &CheckResults, bank: &str, labels: &[String]) -> Outcome {
    outcome_of(res, &|b| b == bank, labels)
}

/// The outcome of the banks `ids` together over the configurations labelled `labels`.
pub fn banks_outcome(res: &CheckResults, ids: &[&str], labels: &[String]) -> Outcome {
    outcome_of(res, &|b| ids.contains(&b), labels)
}

/// The whole plant's outcome over the configurations labelled `labels`: every bank's
/// resonance, tolerance and duty rows, and the limits.
pub fn plant_outcome(res: &CheckResults, labels: &[String]) -> Outcome {
    outcome_of(res, &|_| true, labels)
}

/// The outcome of the banks `of_bank` accepts over the configurations `labels`.
// Long: one count per finding, each over the same configurations.
fn outcome_of(res: &CheckResults, of_bank: &dyn Fn(&str) -> bool, labels: &[String]) -> Outcome {
    let labels: std::collections::HashSet<&str> = labels.iter().map(String::as_str).collect();
    let has = |c: &str| labels.contains(c);
    let limits: Vec<&LimitRow> = res
        .limit_rows
        .iter()
        .filter(|r| has(&r.configuration))
        .collect();
    let bands: Vec<&ToleranceBand> = res
        .tolerance
        .iter()
        .filter(|t| of_bank(&t.bank) && has(&t.configuration))
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
                of_bank(&r.bank)
                    && has(&r.configuration)
                    && r.verdict == crate::study::Verdict::Resonant
            })
            .count(),
        limits_exceeded: limits.iter().filter(|r| r.exceeds).count(),
        duty_exceeded: res
            .duty
            .iter()
            .filter(|r| of_bank(&r.bank) && has(&r.configuration) && r.exceeds)
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
    let rerun = options.rerun(labels.to_vec());
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

/// The smallest share of a flagged mode that makes a bank one of the banks forming it.
const MODE_SHARE: f64 = 0.1;

/// The sets of banks (indices, sheet order) that form a flagged mode together: at every
/// `RESONANT` row, the banks whose share of the critical mode is at least
/// [`MODE_SHARE`]; each set of two or more once.
pub fn mode_groups(res: &CheckResults) -> Vec<Vec<usize>> {
    let mut groups: Vec<Vec<usize>> = Vec::new();
    for r in &res.resonance.rows {
        let Some(mode) = &r.mode else { continue };
        let mut g: Vec<usize> = (mode.banks.iter())
            .filter(|(_, share)| *share >= MODE_SHARE)
            .filter_map(|(id, _)| res.plant.banks.iter().position(|b| &b.id == id))
            .collect();
        g.sort_unstable();
        if g.len() >= 2 && !groups.contains(&g) {
            groups.push(g);
        }
    }
    groups
}

/// The joint options of a group: each detuning every bank of it can take (the same name
/// for all), then one tuned filter in place of the bank with the largest share.
fn joint_options(res: &CheckResults, group: &[usize]) -> Vec<JointOption> {
    let per_bank: Vec<Vec<crate::study::remedy::RemedyOption>> = group
        .iter()
        .map(|&b| {
            let bank = &res.plant.banks[b];
            let bus_kv = res.network.buses[res.network.banks[b].bus].kv;
            crate::study::remedy::options(
                &res.plant,
                bank,
                bus_kv,
                &res.resonance.characteristic_orders,
                res.resonance.margin_percent,
            )
        })
        .collect();
    let ids: Vec<String> = group
        .iter()
        .map(|&b| res.plant.banks[b].id.clone())
        .collect();
    let mut out = Vec::new();
    for first in per_bank.first().into_iter().flatten() {
        if matches!(first.reactor, crate::model::Reactor::Tuned { .. }) {
            continue;
        }
        let all: Option<Vec<(String, crate::study::remedy::RemedyOption)>> = (ids.iter())
            .zip(&per_bank)
            .map(|(id, opts)| {
                opts.iter()
                    .find(|o| o.reactor == first.reactor)
                    .map(|o| (id.clone(), o.clone()))
            })
            .collect();
        if let Some(banks) = all {
            out.push(JointOption {
                name: format!("{}: {}", first.name, ids.join(" and ")),
                banks,
            });
        }
    }
    // One filter for the mode: in place of the bank with the largest share anywhere.
    let top = (res.resonance.rows.iter())
        .filter_map(|r| r.mode.as_ref())
        .flat_map(|m| m.banks.iter())
        .filter(|(id, _)| ids.contains(id))
        .max_by(|a, b| a.1.total_cmp(&b.1))
        .and_then(|(id, _)| ids.iter().position(|i| i == id));
    if let Some(k) = top
        && let Some(filter) = per_bank[k]
            .iter()
            .find(|o| matches!(o.reactor, crate::model::Reactor::Tuned { .. }))
    {
        out.push(JointOption {
            name: format!("{} in place of {}", filter.name, ids[k]),
            banks: vec![(ids[k].clone(), filter.clone())],
        });
    }
    out
}

/// The largest step peak current over √2 × the reactor's linearity current among the
/// changed banks of `option` in `after` (see [`RemedyResult::linearity_ratio`]); `None`
/// without a reactor.
fn joint_linearity(after: &CheckResults, option: &JointOption) -> Option<f64> {
    option
        .banks
        .iter()
        .filter(|(_, o)| o.step.linearity_a > 0.0)
        .flat_map(|(id, o)| {
            (after.duty.iter())
                .filter(move |r| &r.bank == id)
                .map(move |r| r.ratios.step_peak_a / (2f64.sqrt() * o.step.linearity_a))
        })
        .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))))
}

/// Whole-plant remedies: for every set of banks forming a flagged mode together, each
/// joint option re-run over every studied configuration and ranked by the plant's
/// outcome: an option that makes the plant's worst THD or TDD worse after every one that
/// does not; then passing, fewer configurations over a limit, the lower worst THD.
pub fn plant_remedies(res: &CheckResults, options: &CheckOptions) -> Vec<PlantRemedies> {
    let labels: Vec<String> = (0..res.scan.configurations.len())
        .map(|c| res.label(c))
        .collect();
    let before = plant_outcome(res, &labels);
    let rerun = options.rerun(labels.clone());
    let mut out = Vec::new();
    for group in mode_groups(res) {
        let mut results: Vec<JointResult> = joint_options(res, &group)
            .into_iter()
            .filter_map(|option| {
                let mut changed = res.plant.clone();
                for (id, o) in &option.banks {
                    let b = changed.banks.iter().position(|x| &x.id == id)?;
                    changed.banks[b] = crate::study::remedy::apply(&changed.banks[b], o);
                }
                let after_res = run_studies(&changed, &rerun).ok()?;
                let after = plant_outcome(&after_res, &labels);
                let linearity_ratio = joint_linearity(&after_res, &option);
                Some(JointResult {
                    passes: after.resonant == 0
                        && after.duty_exceeded == 0
                        && after.tolerance_flagged == 0
                        && linearity_ratio.is_none_or(|r| r <= 1.0),
                    linearity_ratio,
                    worsens: crate::study::remedy::worsens(&before, &after),
                    option,
                    before: before.clone(),
                    after,
                    rank: 0,
                })
            })
            .collect();
        results.sort_by(|a, b| {
            a.worsens
                .cmp(&b.worsens)
                .then(b.passes.cmp(&a.passes))
                .then(a.after.limits_exceeded.cmp(&b.after.limits_exceeded))
                .then(a.after.resonant.cmp(&b.after.resonant))
                .then(
                    a.after
                        .worst_thd_percent
                        .total_cmp(&b.after.worst_thd_percent),
                )
        });
        for (i, r) in results.iter_mut().enumerate() {
            r.rank = i + 1;
        }
        out.push(PlantRemedies {
            banks: group
                .iter()
                .map(|&b| res.plant.banks[b].id.clone())
                .collect(),
            results,
        });
    }
    out
}
