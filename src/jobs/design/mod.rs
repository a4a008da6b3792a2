//! The design search (`overtone design`): the bank plans that reach the target power
//! factor and stay clear of resonance, each checked exhaustively.
//!
//! 1. **Plans.** Per design bus: step size × detuning × capacitor voltage class (a family),
//!    × step count within the allowed range; equal steps. With several design buses also
//!    every kit of one family per bus with one detuning choice ([`kits::joint_kits`]): a
//!    bank at every design bus together, the kvar split across the buses.
//! 2. **Step count, pruned by the power factor (provably safe).** At each load level and
//!    scenario the controller of [`levels::control`] uses the fewest steps that reach the
//!    target (banks designed together take one step each in rotation). Each bank's count is
//!    the most steps the controller uses of it at any level with the largest counts allowed:
//!    a count above it is never switched in (the same choices at every level, a higher cost,
//!    and more configurations, so no larger resonance margin: dominated), and a count below
//!    it misses the target at the level that needed it.
//! 3. **Scan (exact).** Each remaining plan is scanned by the combination engine over every
//!    configuration: its banks' step counts 0..N × every studied configuration of the other
//!    banks × every scenario, across the capacitance tolerance band; a plan whose bank
//!    resonates near a characteristic order stops there.
//! 4. **Check (exact).** Survivors run every study of `check` (the same code): duty at the
//!    solved voltage, harmonic limits at the PCC against the plant without the bank, the
//!    step voltage change.
//!
//! The hand check h = √(S_sc/Q_c) is not used to discard plans: on the bundled cases it
//! differs from the scan by up to 12.5 % (loads and motors), more than the 10 % margin, so
//! it could discard a plan that passes. The scan-only pass in 3 is exact and cheap.

mod kits;
pub mod levels;
mod outcome;
pub mod plans;
mod prescreen;
mod search;

use std::sync::Arc;

use serde::Serialize;

use crate::jobs::check::{CheckError, CheckOptions, CheckResults, run_check};
use crate::jobs::notes::Note;
use crate::model::*;
use crate::study::remedy::Outcome;
pub use levels::{Control, Level};
pub use plans::{Family, Plan};
pub use search::run_design;

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
    /// The controller's choice per level and scenario (`[level][scenario]`).
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
    /// Index into [`DesignResult::bases`] of the plant the plan joins: its design row's, or
    /// for a plan at every design bus together the last (every row's replaced banks gone).
    pub row: usize,
    /// The plan's banks at the other design buses, when it puts a bank at every design bus
    /// together (empty for a plan at one bus; `plan` and `bank` are then the first row's).
    pub also: Vec<Part>,
}

/// A plan's bank at one more design bus (a plan at several buses together).
#[derive(Debug, Clone, Serialize)]
pub struct Part {
    pub plan: Plan,
    pub bank: CapacitorBank,
    /// Index of its design row.
    pub row: usize,
    /// Output of every step at the bus's nominal voltage, kvar.
    pub effective_kvar: f64,
}

impl PlanResult {
    pub fn passes(&self) -> bool {
        self.fails.is_empty()
    }

    /// Every bank of the plan with its plan: the first design bus's, then the others'.
    pub fn banks(&self) -> impl Iterator<Item = (&Plan, &CapacitorBank)> {
        std::iter::once((&self.plan, &self.bank))
            .chain(self.also.iter().map(|a| (&a.plan, &a.bank)))
    }

    /// `f` of each of the plan's banks, joined by ` + ` (one term for a plan at one bus).
    pub fn joined(&self, f: impl Fn(&Plan, &CapacitorBank) -> String) -> String {
        self.banks()
            .map(|(p, b)| f(p, b))
            .collect::<Vec<_>>()
            .join(" + ")
    }

    /// The steps of the plan's banks that the controller switches in at `c` (the designed
    /// banks are the last in `c.steps`).
    pub fn steps_in(&self, c: &Control) -> u32 {
        let k = 1 + self.also.len();
        c.steps.iter().rev().take(k).sum()
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
    /// Per design row, the plant its plans join (the banks the row replaces removed), and
    /// with several rows one more: the plant the plans at every design bus join.
    pub bases: Vec<Plant>,
    pub levels: Vec<(String, f64)>,
    pub scenarios: Vec<String>,
    pub target_power_factor: f64,
    /// Ranked: passing plans first (cost, then margin), then the others (fewest failures).
    pub plans: Vec<PlanResult>,
    /// Index into `plans` of the recommended plan (`None`: no plan passes every check).
    pub recommended: Option<usize>,
    pub reason: String,
    /// Per plant of `bases`, the plant without the designed bank(s).
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
        p.banks
            .extend(self.plans[i].banks().map(|(_, b)| b.clone()));
        p.design = self.plant.design.clone();
        p.load_levels = self.plant.load_levels.clone();
        p
    }
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
