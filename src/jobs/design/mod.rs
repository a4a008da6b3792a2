//! The design search (`overtone design`): the bank plans that reach the target power
//! factor and stay clear of resonance, each checked exhaustively.
//!
//! 1. **Plans.** Per design bus: step size × detuning × capacitor voltage class (a family),
//!    × step count within the allowed range; equal steps.
//! 2. **Step count, pruned by the power factor (provably safe).** At each load level and
//!    scenario the controller of [`levels::control`] uses the fewest steps that reach the
//!    target. A family's count is the most steps the controller uses at any level with the
//!    largest count allowed: a count above it is never switched in (same power factor at
//!    every level, a higher cost, and more configurations, so no larger resonance margin:
//!    dominated), and a count below it misses the target at the level that needed it.
//! 3. **Scan (exact).** Each remaining plan is scanned by the combination engine over every
//!    configuration: its step counts 0..N × every studied configuration of the other banks
//!    × every scenario, across the capacitance tolerance band; a plan whose bank resonates
//!    near a characteristic order stops there.
//! 4. **Check (exact).** Survivors run every study of `check` (the same code): duty at the
//!    solved voltage, harmonic limits at the PCC against the plant without the bank, the
//!    step voltage change.
//!
//! The hand check h = √(S_sc/Q_c) is not used to discard plans: on the bundled cases it
//! differs from the scan by up to 12.5 % (loads and motors), more than the 10 % margin, so
//! it could discard a plan that passes. The scan-only pass in 3 is exact and cheap.

pub mod levels;
mod outcome;
pub mod plans;

use std::sync::Arc;

use rayon::prelude::*;
use serde::Serialize;

use crate::jobs::check::{CheckError, CheckOptions, CheckResults, run_check};
use crate::jobs::notes::Note;
use crate::model::*;
use crate::network::Network;
use crate::study::Verdict;
use crate::study::operating::OperatingSolver;
use crate::study::remedy::Outcome;
pub use levels::{Control, Level};
use outcome::{evaluate, notes, rank, reason};
pub use plans::{Family, Plan};

/// Why a design could not run: a sentence naming the sheet and cell.
#[derive(Debug, thiserror::Error)]
pub enum DesignError {
    #[error("{sheet}!{cell}: {message}")]
    Input {
        sheet: &'static str,
        cell: String,
        message: String,
    },
    #[error("{0}")]
    Sheet(String),
    #[error(transparent)]
    Check(#[from] CheckError),
    #[error("the study of the recommended plan could not run: {0}")]
    Recommended(CheckError),
}

/// What the engineer asked for beyond the workbook.
#[derive(Clone, Default)]
pub struct DesignOptions {
    /// Called with (plans done, plans to check) as the search advances.
    pub progress: Option<Arc<dyn Fn(u64, u64) + Send + Sync>>,
    pub evaluation: crate::study::penetration::Evaluation,
}

/// One plan and what every check found.
#[derive(Debug, Clone, Serialize)]
pub struct PlanResult {
    pub plan: Plan,
    pub bank: CapacitorBank,
    /// Relative cost (the Design sheet's prices, or the invented defaults).
    pub cost: f64,
    /// Output of every step at the bus's nominal voltage, kvar.
    pub effective_kvar: f64,
    /// The controller's choice per level and scenario ([level][scenario]).
    pub control: Vec<Vec<Control>>,
    /// Hours-weighted mean over the levels of the lowest PCC power factor over scenarios.
    pub pf_weighted: Option<f64>,
    /// The lowest PCC power factor the controller leaves at any level and scenario.
    pub pf_lowest: Option<f64>,
    /// The bank's outcome over every configuration with it energized.
    pub outcome: Outcome,
    /// Lowest and highest parallel resonance order of the bank (scanned).
    pub resonance: Option<(f64, f64)>,
    /// The hand check h at all steps (lowest over scenarios).
    pub hand_order: Option<f64>,
    /// Largest steady-state voltage change of one step, % (and how many exceed).
    pub step_change_percent: f64,
    pub step_changes_exceeded: usize,
    /// Worst PCC voltage THD and TDD over the configurations with the bank energized, %.
    pub pcc_thd_percent: f64,
    pub tdd_percent: f64,
    /// True when only the scan ran (the plan resonates; later checks were not needed).
    pub scan_only: bool,
    /// Why the plan fails, one phrase each; empty = passes every check.
    pub fails: Vec<String>,
    /// On the Pareto set of the passing plans (cost, margin, PF).
    pub pareto: bool,
    pub rank: usize,
    /// Index of the design row (bus) of the plan.
    pub row: usize,
}

impl PlanResult {
    pub fn passes(&self) -> bool {
        self.fails.is_empty()
    }
}

/// The plant without the bank, for comparison.
#[derive(Debug, Clone, Serialize)]
pub struct Baseline {
    /// Per level and scenario.
    pub control: Vec<Vec<Control>>,
    pub pcc_thd_percent: f64,
    pub tdd_percent: f64,
    pub limits_exceeded: usize,
}

/// How many plans each stage saw.
#[derive(Debug, Clone, Copy, Default, Serialize)]
pub struct Counts {
    /// Every plan allowed: families × step counts.
    pub enumerated: usize,
    pub families: usize,
    /// Left after the power-factor bound (one count per family).
    pub after_pf_bound: usize,
    /// Scanned over every configuration.
    pub scanned: usize,
    /// Run through every check.
    pub checked: usize,
    pub passed: usize,
}

/// Everything the design found.
#[derive(Debug, Clone)]
pub struct DesignResult {
    pub plant: Plant,
    /// Per design row, the plant its plans join (the proposed bank on its bus removed).
    pub bases: Vec<Plant>,
    pub levels: Vec<(String, f64)>,
    pub scenarios: Vec<String>,
    pub target_power_factor: f64,
    /// Ranked: passing plans first (cost, then margin), then the others (fewest failures).
    pub plans: Vec<PlanResult>,
    /// Index into `plans` of the recommended plan (`None`: no plan passes every check).
    pub recommended: Option<usize>,
    pub reason: String,
    /// Per design row, the plant without the bank.
    pub baselines: Vec<Baseline>,
    pub counts: Counts,
    /// Levels × scenarios at which no allowed plan reaches the target (waived there).
    pub unreachable: Vec<(String, String)>,
    /// The id the designed bank takes at each design row.
    pub bank_ids: Vec<String>,
    /// Assumptions and decisions the reports state.
    pub notes: Vec<Note>,
}

impl DesignResult {
    /// The plant without a bank that the reports compare with: the recommended plan's row
    /// (the first row when no plan passes).
    pub fn baseline(&self) -> &Baseline {
        &self.baselines[self.recommended.map_or(0, |i| self.plans[i].row)]
    }

    /// The plant of the reports when no plan passes: the first row's, without a bank.
    pub fn base(&self) -> &Plant {
        &self.bases[self.recommended.map_or(0, |i| self.plans[i].row)]
    }

    /// The plant with plan `i` in place: what `--write-plant` writes and `check` reruns.
    pub fn plant_with(&self, i: usize) -> Plant {
        let mut p = self.bases[self.plans[i].row].clone();
        p.banks.push(self.plans[i].bank.clone());
        p.design = self.plant.design.clone();
        p.load_levels = self.plant.load_levels.clone();
        p
    }
}

/// The design rows: the `Design` sheet's, or one per proposed bank (its bus, steps of half,
/// one and two times its step, 1 to 8 steps, the default detuning choices and classes).
fn design_rows(plant: &Plant) -> Result<(Vec<DesignRow>, bool), DesignError> {
    if !plant.design.is_empty() {
        return Ok((plant.design.clone(), false));
    }
    let mut rows: Vec<DesignRow> = Vec::new();
    for b in plant
        .banks
        .iter()
        .filter(|b| b.status == BankStatus::Proposed)
    {
        if rows.iter().any(|r| r.bus == b.bus) {
            continue;
        }
        rows.push(DesignRow {
            bus: b.bus.clone(),
            step_kvar: vec![b.step_kvar / 2.0, b.step_kvar, b.step_kvar * 2.0],
            steps_min: DEFAULT_STEPS.0,
            steps_max: DEFAULT_STEPS.1,
            reactors: DEFAULT_REACTORS.to_vec(),
            rated_kv: Vec::new(),
            capacitor_cost_per_kvar: Vec::new(),
            reactor_cost_per_kvar: None,
            step_cost: None,
            leading_pf_limit: None,
            cells: DesignCells::default(),
        });
    }
    if rows.is_empty() {
        return Err(DesignError::Sheet(
            "Design: the workbook has no Design sheet and no proposed bank on the Capacitors sheet: name the bus(es) where a bank may go and the allowed step sizes on a Design sheet (`overtone template FILE.xlsx` writes one)".into(),
        ));
    }
    Ok((rows, true))
}

/// The check options of the search: no remedies, no switching simulation.
fn check_options(options: &DesignOptions, scan_only: bool) -> CheckOptions {
    CheckOptions {
        remedies: Some(false),
        scan_only,
        switching: false,
        evaluation: options.evaluation,
        ..Default::default()
    }
}

/// The controller's choices per level and scenario for a plant whose banks are `banks`,
/// with `designed` (index of the designed bank, last in controller order) allowed `0..=max`.
fn controls(
    levels: &[Level],
    bank: Option<&CapacitorBank>,
    max: u32,
    leading_limit: f64,
) -> Result<Vec<Vec<Control>>, DesignError> {
    let mut out = Vec::new();
    for level in levels {
        let mut plant = level.plant.clone();
        if let Some(b) = bank {
            let mut b = b.clone();
            b.steps = max;
            b.studied_steps = (0..=max).collect();
            plant.banks.push(b);
        }
        let net = Network::build(&plant).map_err(CheckError::from)?;
        let study = OperatingSolver::new(&net);
        let allowed: Vec<Vec<u32>> = plant
            .banks
            .iter()
            .map(|b| b.studied_steps.clone())
            .collect();
        let order: Vec<usize> = (0..plant.banks.len()).collect();
        out.push(
            (0..net.scenarios.len())
                .map(|s| {
                    levels::control(
                        &study,
                        &net,
                        s,
                        &allowed,
                        &order,
                        plant.study.target_power_factor,
                        leading_limit,
                    )
                })
                .collect(),
        );
    }
    Ok(out)
}

fn designed_steps(control: &[Vec<Control>]) -> u32 {
    control
        .iter()
        .flatten()
        .map(|c| c.steps.last().copied().unwrap_or(0))
        .max()
        .unwrap_or(0)
}

/// A family's plan at its bounded step count, with the controller's choices at the largest
/// count and at that count ([level][scenario]).
type Bounded = (Plan, Vec<Vec<Control>>, Vec<Vec<Control>>);

/// Runs the design search on `plant` (its `Design` and `Load levels` rows).
pub fn run_design(plant: &Plant, options: &DesignOptions) -> Result<DesignResult, DesignError> {
    plant.validate().map_err(CheckError::from)?;
    if let Some(p) = design_problems(plant).into_iter().next() {
        return Err(DesignError::Input {
            sheet: p.sheet,
            cell: p.cell,
            message: p.message,
        });
    }
    let (rows, derived) = design_rows(plant)?;
    let target = plant.study.target_power_factor;
    // The plant each row's plans join: the proposed bank on that row's bus is what is
    // designed; every other bank stays as on the Capacitors sheet.
    let bases: Vec<Plant> = rows
        .iter()
        .map(|r| {
            let mut base = plant.clone();
            base.banks
                .retain(|b| !(b.status == BankStatus::Proposed && b.bus == r.bus));
            base
        })
        .collect();
    let templates: Vec<Option<&CapacitorBank>> = rows
        .iter()
        .map(|r| {
            plant
                .banks
                .iter()
                .find(|b| b.status == BankStatus::Proposed && b.bus == r.bus)
        })
        .collect();
    let bank_ids: Vec<String> = rows
        .iter()
        .zip(&templates)
        .map(|(r, t)| t.map_or_else(|| format!("PFC-{}", r.bus), |b| b.id.clone()))
        .collect();
    let mut row_levels: Vec<Vec<Level>> = Vec::new();
    for base in &bases {
        row_levels.push(levels::levels(base)?);
    }
    let levels = &row_levels[0];
    let scenarios = plant.scenarios();
    let bus_kv = |bus: &str| {
        plant
            .buses
            .iter()
            .find(|b| b.id == bus)
            .map_or(f64::NAN, |b| b.nominal_kv)
    };
    let families: Vec<Family> = rows
        .iter()
        .enumerate()
        .flat_map(|(i, r)| plans::families(i, r, bus_kv(&r.bus)))
        .collect();
    let mut counts = Counts {
        families: families.len(),
        enumerated: families
            .iter()
            .map(|f| (rows[f.row].steps_max - rows[f.row].steps_min + 1) as usize)
            .sum(),
        ..Default::default()
    };
    let leading = |r: &DesignRow| r.leading_pf_limit.unwrap_or(DEFAULT_LEADING_PF_LIMIT);
    let mut baseline_controls = Vec::new();
    for (r, row) in rows.iter().enumerate() {
        baseline_controls.push(controls(&row_levels[r], None, 0, leading(row))?);
    }
    // 2. The step count of each family from the controller at the largest count.
    let plan_of = |f: &Family, steps: u32| Plan {
        bus: rows[f.row].bus.clone(),
        step_kvar: f.step_kvar,
        steps,
        reactor: f.reactor,
        rated_kv: f.rated_kv,
    };
    let bounded: Vec<Result<Bounded, DesignError>> = families
        .par_iter()
        .map(|f| {
            let row = &rows[f.row];
            let widest = plan_of(f, row.steps_max);
            let b = plans::bank(&widest, &bank_ids[f.row], templates[f.row], f.bus_kv);
            let lv = &row_levels[f.row];
            let at_max = controls(lv, Some(&b), row.steps_max, leading(row))?;
            let n = designed_steps(&at_max).clamp(row.steps_min, row.steps_max);
            let at_n = if n == row.steps_max {
                at_max.clone()
            } else {
                controls(lv, Some(&b), n, leading(row))?
            };
            Ok((plan_of(f, n), at_max, at_n))
        })
        .collect();
    let mut bounded_ok = Vec::new();
    for b in bounded {
        bounded_ok.push(b?);
    }
    // Where no allowed plan reaches the target, it is waived; where none reaches it at any
    // level, the design limits contradict the target.
    let nl = levels.len();
    let ns = scenarios.len();
    let mut reachable = vec![vec![false; ns]; nl];
    for (_, at_max, _) in &bounded_ok {
        for (l, per) in at_max.iter().enumerate() {
            for (s, c) in per.iter().enumerate() {
                reachable[l][s] |= c.reaches;
            }
        }
    }
    if reachable.iter().flatten().all(|r| !r) {
        let best_pf = bounded_ok
            .iter()
            .filter_map(|(_, at_max, _)| levels::lowest_pf(at_max.iter().flatten()))
            .fold(f64::NAN, f64::max);
        let r = &rows[0];
        return Err(DesignError::Input {
            sheet: "Design",
            cell: r.cells.steps.clone(),
            message: format!(
                "no allowed plan reaches the target power factor {target} at any load level: the best leaves {best_pf:.3} at the PCC; allow more steps here or larger sizes in \"Step kvar\" ({}), or lower \"Target power factor\" on the Study sheet",
                r.cells.step_kvar
            ),
        });
    }
    let mut unreachable = Vec::new();
    for (l, per) in reachable.iter().enumerate() {
        for (s, ok) in per.iter().enumerate() {
            if !ok {
                unreachable.push((levels[l].name.clone(), scenarios[s].clone()));
            }
        }
    }
    let mut candidates: Vec<(usize, Plan, Vec<Vec<Control>>)> = Vec::new();
    for (i, (plan, _, at_n)) in bounded_ok.into_iter().enumerate() {
        if !candidates.iter().any(|(_, p, _)| *p == plan) {
            candidates.push((i, plan, at_n));
        }
    }
    counts.after_pf_bound = candidates.len();
    // The plant without the bank, for the limits comparison (per design row).
    let mut baselines = Vec::new();
    let mut base_notes = Vec::new();
    for (base, control) in bases.iter().zip(baseline_controls) {
        let base_res = run_check(base, &check_options(options, false))?;
        baselines.push(Baseline {
            control,
            pcc_thd_percent: base_res
                .limit_rows
                .iter()
                .map(|r| r.pcc_thd.value)
                .fold(0.0, f64::max),
            tdd_percent: base_res
                .limit_rows
                .iter()
                .map(|r| r.tdd.value)
                .fold(0.0, f64::max),
            limits_exceeded: base_res.limit_rows.iter().filter(|r| r.exceeds).count(),
        });
        if base_notes.is_empty() {
            base_notes = base_res.notes;
        }
    }
    // 3 and 4: scan every plan, check the ones clear of resonance.
    let total = candidates.len() as u64;
    let done = std::sync::atomic::AtomicU64::new(0);
    let results: Vec<Result<PlanResult, DesignError>> = candidates
        .par_iter()
        .map(|(fi, plan, control)| {
            let f = &families[*fi];
            let row = &rows[f.row];
            let bank = plans::bank(plan, &bank_ids[f.row], templates[f.row], f.bus_kv);
            let mut p = bases[f.row].clone();
            p.banks.push(bank.clone());
            let scan = run_check(&p, &check_options(options, true))?;
            let clear = !scan
                .resonance
                .rows
                .iter()
                .any(|r| r.bank == bank.id && r.verdict == Verdict::Resonant)
                && !scan
                    .tolerance
                    .iter()
                    .any(|t| t.bank == bank.id && t.flagged);
            let res = if clear {
                run_check(&p, &check_options(options, false))?
            } else {
                scan
            };
            let out = evaluate(
                &res,
                plan,
                bank,
                plans::cost(f, row, plan.steps),
                f.bus_kv,
                control.clone(),
                &row_levels[f.row],
                &reachable,
                &baselines[f.row],
                target,
                !clear,
                f.row,
            );
            let k = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
            if let Some(pr) = &options.progress {
                pr(k, total);
            }
            Ok(out)
        })
        .collect();
    let mut plans_out = Vec::new();
    for r in results {
        plans_out.push(r?);
    }
    counts.scanned = plans_out.len();
    counts.checked = plans_out.iter().filter(|p| !p.scan_only).count();
    counts.passed = plans_out.iter().filter(|p| p.passes()).count();
    rank(&mut plans_out);
    let recommended = plans_out.first().filter(|p| p.passes()).map(|_| 0);
    let reason = reason(&plans_out, recommended);
    let mut notes = notes(levels, &rows, derived, &unreachable, target);
    if rows.len() > 1 {
        notes.push(Note::Design("Several design buses: each plan puts one bank at one of them, replacing the proposed bank on that bus only; the other banks stay as on the Capacitors sheet.".into()));
    }
    if baselines
        .iter()
        .all(|b| b.control.iter().flatten().all(|c| c.reaches))
    {
        notes.insert(
            0,
            Note::Design("The plant reaches the target power factor at every level and scenario without the designed bank (its other banks or its loads suffice): the controller switches no designed step, and the plans are the smallest allowed.".into()),
        );
    }
    notes.extend(
        base_notes
            .iter()
            .filter(|n| matches!(n, Note::DemandEstimated { .. }))
            .cloned(),
    );
    Ok(DesignResult {
        plant: plant.clone(),
        levels: levels.iter().map(|l| (l.name.clone(), l.hours)).collect(),
        bases,
        scenarios,
        target_power_factor: target,
        plans: plans_out,
        recommended,
        reason,
        baselines,
        counts,
        unreachable,
        bank_ids,
        notes,
    })
}

/// Every study of the recommended plan (of the plant without a bank when no plan passes),
/// with switching and without remedies, carrying the design's notes after its own: what
/// the design review presents after the plans.
pub fn recommended_study(d: &DesignResult) -> Result<CheckResults, DesignError> {
    let plant = d
        .recommended
        .map_or_else(|| d.base().clone(), |i| d.plant_with(i));
    let options = CheckOptions {
        remedies: Some(false),
        switching: true,
        ..Default::default()
    };
    let mut res = run_check(&plant, &options).map_err(DesignError::Recommended)?;
    res.notes.extend(d.notes.iter().cloned());
    Ok(res)
}
