//! What every check found of one plan (its figures and the phrases of its failures), the
//! Pareto set and ranking of the plans, the reason for the recommendation and the
//! assumptions the design states.

use super::levels::{self, Control, Level, lowest_pf};
use super::{Baseline, Part, PlanResult};
use crate::jobs::check::CheckResults;
use crate::jobs::notes::Note;
use crate::model::*;
use crate::study::Verdict;

/// The margin used for ranking: the band margin, or 100 % when the bank has no peak in
/// the scanned range.
pub(super) fn margin(p: &PlanResult) -> f64 {
    p.outcome.margin_percent.unwrap_or(100.0)
}

/// Every figure and failure of one plan from its check results. `parts` are the plan's
/// banks, first design row first; they are the last banks of `res.plant`.
// Long: one plan's every figure, gathered from its check results into one struct.
#[allow(clippy::too_many_arguments)]
pub(super) fn evaluate(
    res: &CheckResults,
    mut parts: Vec<Part>,
    cost: f64,
    control: Vec<Vec<Control>>,
    levels: &[Level],
    reachable: &[Vec<bool>],
    baseline: &Baseline,
    target: f64,
    scan_only: bool,
    row: usize,
) -> PlanResult {
    let ids: Vec<&str> = parts.iter().map(|p| p.bank.id.as_str()).collect();
    let first = res.plant.banks.len().saturating_sub(parts.len());
    let labels: Vec<String> = (res.scan.configurations.iter())
        .filter(|c| c.steps.iter().skip(first).any(|&k| k > 0))
        .map(|c| c.label(&res.plant.banks))
        .collect();
    let outcome = crate::jobs::remedies::banks_outcome(res, &ids, &labels);
    let has = |c: &str| labels.iter().any(|l| l == c);
    let mine: Vec<&crate::study::ResonanceRow> = (res.resonance.rows.iter())
        .filter(|r| ids.contains(&r.bank.as_str()))
        .collect();
    let peaks: Vec<f64> = mine
        .iter()
        .filter_map(|r| r.peak.map(|p| p.order))
        .collect();
    let resonance = (!peaks.is_empty()).then(|| {
        (
            peaks.iter().copied().fold(f64::INFINITY, f64::min),
            peaks.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        )
    });
    let hand_order = mine
        .iter()
        .filter(|r| (parts.iter()).any(|p| p.bank.id == r.bank && p.bank.steps == r.steps))
        .map(|r| r.hand_order)
        .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.min(v))));
    let steps: Vec<&crate::study::operating::StepChange> = (res.operating.step_changes.iter())
        .filter(|s| ids.contains(&s.bank.as_str()))
        .collect();
    let rows: Vec<&crate::study::limits::LimitRow> = res
        .limit_rows
        .iter()
        .filter(|r| has(&r.configuration))
        .collect();
    let pcc_thd_percent = rows.iter().map(|r| r.pcc_thd.value).fold(0.0, f64::max);
    let tdd_percent = rows.iter().map(|r| r.tdd.value).fold(0.0, f64::max);
    let mut fails = pf_fails(res, &control, levels, reachable, target);
    fails.extend(check_fails(
        res,
        &outcome,
        &mine,
        &steps,
        scan_only,
        baseline,
        (pcc_thd_percent, tdd_percent),
    ));
    fails.extend(controller_fails(res, &control, levels, parts.len()));
    let (pf_weighted, pf_lowest) = pf_over_levels(&control, levels);
    let main = parts.remove(0);
    PlanResult {
        effective_kvar: main.effective_kvar + parts.iter().map(|p| p.effective_kvar).sum::<f64>(),
        plan: main.plan,
        bank: main.bank,
        cost,
        control,
        pf_weighted,
        pf_lowest,
        outcome,
        resonance,
        hand_order,
        step_change_percent: steps.iter().map(|s| s.change_percent).fold(0.0, f64::max),
        step_changes_exceeded: steps.iter().filter(|s| s.exceeds).count(),
        pcc_thd_percent,
        tdd_percent,
        scan_only,
        fails,
        pareto: false,
        rank: 0,
        row,
        also: parts,
    }
}

/// What the plan's controller does that the plant cannot accept: a designed bank (the last
/// `designed` banks) it never switches in at any level and scenario (the target is then
/// reached, if at all, by the other banks alone), and a state it reaches where another bank
/// is RESONANT (the designed banks' own resonance is judged over every configuration
/// already).
fn controller_fails(
    res: &CheckResults,
    control: &[Vec<Control>],
    levels: &[Level],
    designed: usize,
) -> Vec<String> {
    let mut fails = Vec::new();
    let first = res.plant.banks.len().saturating_sub(designed);
    let ids: Vec<&str> = (res.plant.banks[first..].iter())
        .map(|b| b.id.as_str())
        .collect();
    for (i, id) in ids.iter().enumerate() {
        let used =
            (control.iter().flatten()).any(|c| c.steps.get(first + i).is_some_and(|&k| k > 0));
        if used || control.is_empty() {
            continue;
        }
        let others = control
            .iter()
            .flatten()
            .any(|c| c.reaches && c.steps.iter().any(|&k| k > 0));
        fails.push(match (designed, others) {
            (1, true) => {
                "the controller never switches it in: only the other banks' steps reach the target"
                    .to_string()
            }
            (1, false) => "the controller never switches it in at any level".to_string(),
            _ => format!("the controller never switches {id} in at any level"),
        });
    }
    let mut seen: Vec<(usize, Vec<u32>)> = Vec::new();
    for (l, per) in control.iter().enumerate() {
        for (s, c) in per.iter().enumerate() {
            if seen.contains(&(s, c.steps.clone())) {
                continue;
            }
            seen.push((s, c.steps.clone()));
            let label = crate::study::Configuration {
                steps: c.steps.clone(),
            }
            .label(&res.plant.banks);
            let scenario = &res.network.scenarios[s].name;
            let resonant: Vec<&str> = (res.resonance.rows.iter())
                .filter(|r| {
                    &r.scenario == scenario
                        && r.configuration == label
                        && r.verdict == Verdict::Resonant
                        && !ids.contains(&r.bank.as_str())
                })
                .map(|r| r.bank.as_str())
                .collect();
            if !resonant.is_empty() {
                fails.push(format!(
                    "at {} ({scenario}) the controller reaches {label}, where {} is RESONANT",
                    levels[l].name,
                    resonant.join(" and ")
                ));
            }
        }
    }
    fails
}

/// The levels and scenarios where the plan leaves the power factor below the target although
/// another allowed plan reaches it there, one phrase each.
fn pf_fails(
    res: &CheckResults,
    control: &[Vec<Control>],
    levels: &[Level],
    reachable: &[Vec<bool>],
    target: f64,
) -> Vec<String> {
    let mut fails = Vec::new();
    for (l, per) in control.iter().enumerate() {
        for (s, c) in per.iter().enumerate() {
            if reachable[l][s] && !c.reaches {
                fails.push(format!(
                    "PF {} below {target} at {} ({})",
                    c.pf.map_or_else(|| "n/a".into(), |v| below_words(v, target)),
                    levels[l].name,
                    res.network.scenarios[s].name
                ));
            }
        }
    }
    fails
}

/// A power factor below `target`, with the fewest decimals (3 at least) that show it below:
/// 0.9496 against 0.95 reads `0.9496`, not `0.950`.
fn below_words(pf: f64, target: f64) -> String {
    (3..=6)
        .map(|d| format!("{pf:.d$}"))
        .find(|t| t.parse::<f64>().is_ok_and(|v| v < target))
        .unwrap_or_else(|| format!("{pf}"))
}

/// The phrases of the checks a plan fails: resonance, tolerance band, and (when it was
/// checked beyond the scan) duty, limits worse than without the bank, step voltage change.
fn check_fails(
    res: &CheckResults,
    outcome: &crate::study::remedy::Outcome,
    mine: &[&crate::study::ResonanceRow],
    steps: &[&crate::study::operating::StepChange],
    scan_only: bool,
    baseline: &Baseline,
    (pcc_thd_percent, tdd_percent): (f64, f64),
) -> Vec<String> {
    let mut fails = Vec::new();
    if outcome.resonant > 0 {
        let orders: Vec<f64> = {
            let mut o: Vec<f64> = mine
                .iter()
                .filter(|r| r.verdict == Verdict::Resonant)
                .filter_map(|r| r.nearest_characteristic)
                .collect();
            o.sort_by(f64::total_cmp);
            o.dedup();
            o
        };
        fails.push(format!(
            "resonant near h {} in {} row(s)",
            orders
                .iter()
                .map(|h| format!("{h}"))
                .collect::<Vec<_>>()
                .join(", "),
            outcome.resonant
        ));
    }
    if outcome.tolerance_flagged > 0 {
        fails.push(format!(
            "tolerance band reaches a characteristic order in {} configuration(s)",
            outcome.tolerance_flagged
        ));
    }
    if !scan_only {
        if outcome.duty_exceeded > 0 {
            fails.push(format!(
                "IEEE 18 duty exceeded in {} row(s)",
                outcome.duty_exceeded
            ));
        }
        let worse = pcc_thd_percent > baseline.pcc_thd_percent * (1.0 + 1e-9) + 1e-12
            || tdd_percent > baseline.tdd_percent * (1.0 + 1e-9) + 1e-12;
        if outcome.limits_exceeded > 0 && worse {
            fails.push(format!(
                "harmonic limits exceeded in {} configuration(s), worse at the PCC than without the bank",
                outcome.limits_exceeded
            ));
        }
        let exceeded = steps.iter().filter(|s| s.exceeds).count();
        if exceeded > 0 {
            fails.push(format!(
                "step voltage change above {} % ({} step(s))",
                res.operating.step_limit_percent, exceeded
            ));
        }
    }
    fails
}

/// The hours-weighted mean over the levels of the lowest PCC power factor over scenarios
/// (`None` when a level has none), and the lowest at any level.
fn pf_over_levels(control: &[Vec<Control>], levels: &[Level]) -> (Option<f64>, Option<f64>) {
    let weight: f64 = levels.iter().map(|l| l.hours).sum();
    let lowest_per_level: Vec<Option<f64>> = control.iter().map(lowest_pf).collect();
    let pf_weighted = (weight > 0.0 && lowest_per_level.iter().all(Option::is_some)).then(|| {
        lowest_per_level
            .iter()
            .zip(levels)
            .map(|(pf, l)| pf.unwrap_or(0.0) * l.hours)
            .sum::<f64>()
            / weight
    });
    let pf_lowest = lowest_per_level
        .iter()
        .flatten()
        .copied()
        .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.min(v))));
    (pf_weighted, pf_lowest)
}

/// Marks the Pareto set of the passing plans (lower cost, larger margin, higher weighted
/// PF; a plan is on it when no other passing plan is at least as good in all three and
/// better in one) and ranks: passing plans by cost, then margin (larger first), then PF;
/// then the others by number of failures, then cost.
pub(super) fn rank(plans: &mut [PlanResult]) {
    let key = |p: &PlanResult| (p.cost, margin(p), p.pf_weighted.unwrap_or(0.0));
    let n = plans.len();
    for i in 0..n {
        if !plans[i].passes() {
            continue;
        }
        let (ci, mi, fi) = key(&plans[i]);
        let dominated = (0..n).any(|j| {
            if j == i || !plans[j].passes() {
                return false;
            }
            let (cj, mj, fj) = key(&plans[j]);
            cj <= ci && mj >= mi && fj >= fi && (cj < ci || mj > mi || fj > fi)
        });
        plans[i].pareto = !dominated;
    }
    plans.sort_by(|a, b| {
        b.passes()
            .cmp(&a.passes())
            .then(a.fails.len().cmp(&b.fails.len()))
            .then(a.cost.total_cmp(&b.cost))
            .then(margin(b).total_cmp(&margin(a)))
            .then(
                b.pf_weighted
                    .unwrap_or(0.0)
                    .total_cmp(&a.pf_weighted.unwrap_or(0.0)),
            )
            .then(a.also.len().cmp(&b.also.len()))
            .then(a.plan.bus.cmp(&b.plan.bus))
            .then(a.plan.step_kvar.total_cmp(&b.plan.step_kvar))
            .then(a.plan.rated_kv.total_cmp(&b.plan.rated_kv))
    });
    for (i, p) in plans.iter_mut().enumerate() {
        p.rank = i + 1;
    }
}

/// Why the recommended plan, in one or two sentences.
pub(super) fn reason(plans: &[PlanResult], recommended: Option<usize>) -> String {
    let Some(r) = recommended.map(|i| &plans[i]) else {
        return "No plan passes every check: the nearest plans are listed with what each fails."
            .into();
    };
    let passing = plans.iter().filter(|p| p.passes()).count();
    let mut s = format!(
        "The least-cost plan of the {passing} that pass every check (power factor at every reachable level, no resonance across the tolerance band in any configuration or scenario, IEEE 18 duty, limits at the PCC, step voltage change)."
    );
    if let Some(wider) = plans
        .iter()
        .filter(|p| p.pareto && margin(p) > margin(r) + 1e-9)
        .max_by(|a, b| margin(a).total_cmp(&margin(b)))
    {
        s.push_str(&format!(
            " For more margin to the nearest characteristic order, {} costs {:.0} % more for {:.1} % margin against {:.1} %.",
            wider.joined(|p, b| format!("{} at {} ({})", p.label(), p.bus, b.id)),
            (wider.cost / r.cost - 1.0) * 100.0,
            margin(wider),
            margin(r)
        ));
    }
    s
}

/// The assumptions the design states.
pub(super) fn notes(
    levels: &[Level],
    rows: &[DesignRow],
    derived: bool,
    unreachable: &[(String, String)],
    target: f64,
) -> Vec<Note> {
    let mut out: Vec<String> = vec![
        format!(
            "Controller (common practice): at each load level and scenario the plant's other banks switch first, then the designed bank (banks designed together at several buses take one step each in rotation); each adds steps while the PCC power factor is below the target {target} and blocks a step that would leave it leading beyond the leading limit."
        ),
        "Equal steps within a bank. The step count of each bank of a plan is the most steps the controller uses at any level: more steps are never switched in (dominated: the same choices at every level, a higher cost), fewer miss the target.".into(),
        "Harmonic checks (resonance, tolerance band, duty, limits, step voltage change) run at the Loads sheet's study point over every step count of the designed bank(s) × every studied configuration of the other banks × every scenario, as `check` does.".into(),
    ];
    if levels.iter().any(|l| l.name == "full")
        && levels.iter().any(|l| l.name == "light")
        && levels.len() == 2
    {
        out.push(format!(
            "Load levels: no Load levels sheet, so full load (the Loads sheet as given, {} h/year) and light load (every load factor halved, {} h/year); hours invented for weighting only.",
            levels::DEFAULT_LEVELS[0].1,
            levels::DEFAULT_LEVELS[1].1
        ));
    }
    if derived {
        out.push("No Design sheet: each proposed bank's bus is designed, with steps of ½, 1 and 2 × its step kvar, 1 to 8 steps, plain, 5.67 %, 7 % and 14 % detuning and the two standard voltage classes above U/(1 − p).".into());
    }
    let mut invented = Vec::new();
    if rows.iter().any(|r| r.capacitor_cost_per_kvar.is_empty()) {
        invented.push(format!(
            "{DEFAULT_CAPACITOR_COST} per rated kvar of capacitor × (rated kV / bus kV)"
        ));
    }
    if rows.iter().any(|r| r.reactor_cost_per_kvar.is_none()) {
        invented.push(format!(
            "{DEFAULT_REACTOR_COST} per kvar of reactor (p × rated kvar)"
        ));
    }
    if rows.iter().any(|r| r.step_cost.is_none()) {
        invented.push(format!("{DEFAULT_STEP_COST} per step"));
    }
    if !invented.is_empty() {
        out.push(format!(
            "Costs are relative; where the Design sheet gives none they are INVENTED: {}; replace them with quotations.",
            invented.join(", ")
        ));
    }
    for (l, s) in unreachable {
        out.push(format!(
            "No allowed plan reaches the target at level {l}, scenario {s}: the power factor is not required there."
        ));
    }
    out.into_iter().map(Note::Design).collect()
}
