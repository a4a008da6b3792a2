//! The operating point: the fundamental load flow of every scenario × configuration, and
//! what the engineer reads from it: the P, Q and power factor the plant draws from the
//! utility at the PCC (the flow across the PCC bus's ties to the utility side, IEEE
//! 519-2014's point of common coupling; see `network::pcc`) against the target, every bus's voltage against its range, the voltage change at a
//! bank's bus when one step switches, and the kvar the load needs to reach the target.
//!
//! Model (input contract, version 2): sources are EMFs of `Voltage (pu)` at angle 0 behind
//! their impedance at h = 1; loads draw constant power; capacitor steps, reactors and cable
//! charging are constant admittances at h = 1; transformers at the ratio of their buses' kV.
//! Solved by Newton's method ([`crate::solve::LoadFlowSystem`]) to 1e-9 pu mismatch.
//! Configurations differ only by bank admittances: they are solved in sorted order, each
//! from the solution of the one before it (warm start), in blocks in parallel.

use std::collections::HashMap;

use rayon::prelude::*;
use serde::Serialize;

use super::Configuration;
use crate::model::Plant;
use crate::network::Network;
use crate::solve::{LoadFlowFailure, LoadFlowScratch, decreasing_root};

mod solver;
pub use solver::OperatingSolver;

/// A configuration whose load flow has no solution: the sentence the reports print (the
/// other studies go on, and that configuration's duty uses the nominal voltage).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error(
    "scenario \"{scenario}\", configuration \"{configuration}\": the load flow has no solution ({why}); check the loads, the source fault levels and Voltage (pu)"
)]
pub struct CollapseError {
    pub scenario: String,
    pub configuration: String,
    pub why: &'static str,
}

/// How a configuration's power factor at the PCC stands against the target.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum PfVerdict {
    /// Lagging and at or above the target.
    Reaches,
    /// Lagging and below the target.
    BelowTarget,
    /// Leading: reactive power flows back into the supply (overcompensated), a finding.
    Leading,
    /// No active power drawn: the power factor is not defined.
    NoLoad,
}

/// The operating point of one scenario × configuration.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OperatingPoint {
    pub scenario: String,
    pub configuration: String,
    /// Active power the plant draws from the utility at the PCC (the flow from the utility
    /// side into the PCC bus; on-site generation is the plant's), kW.
    pub pcc_p_kw: f64,
    /// Reactive power drawn from the utility at the PCC, kvar; positive = lagging (drawn).
    pub pcc_q_kvar: f64,
    /// P / √(P² + Q²); `None` without load.
    pub pcc_power_factor: Option<f64>,
    pub pf_verdict: PfVerdict,
    /// |V| at the PCC, pu.
    pub pcc_v_pu: f64,
    pub min_v_pu: f64,
    pub min_v_bus: String,
    pub max_v_pu: f64,
    pub max_v_bus: String,
    /// Buses outside the Study sheet's voltage range.
    pub buses_out_of_range: usize,
    /// |V| at each bank's bus, pu, in the order of the Capacitors sheet.
    pub bank_bus_v_pu: Vec<f64>,
    /// Newton iterations used.
    pub iterations: u32,
    /// Angle of every bus voltage in the shift-free network, radians (kept for `phasor`
    /// summation only, else empty): add the bus's zone shift for the actual angle.
    #[serde(skip)]
    pub angle_rad: Vec<f64>,
}

impl OperatingPoint {
    /// True when the configuration overcompensates or pushes a bus out of range.
    pub fn flagged(&self) -> bool {
        self.pf_verdict == PfVerdict::Leading || self.buses_out_of_range > 0
    }
}

/// The largest voltage change at a bank's bus when its step `step` switches in (from
/// `step − 1` steps, every other bank as in the configuration), over the scenarios and
/// studied configurations.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StepChange {
    pub bank: String,
    pub bus: String,
    pub step: u32,
    pub scenario: String,
    /// The configuration after the step closes.
    pub configuration: String,
    pub v_before_pu: f64,
    pub v_after_pu: f64,
    /// (V_after − V_before) / V_before, %.
    pub change_percent: f64,
    pub limit_percent: f64,
    pub exceeds: bool,
}

/// The reactive power the load needs, at the study point, to reach the target power factor
/// with one bank alone (every other bank off).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct KvarNeed {
    pub scenario: String,
    pub bank: String,
    /// PCC P and Q without banks (kW, kvar) and the power factor they give.
    pub p_kw_without_banks: f64,
    pub q_kvar_without_banks: f64,
    pub pf_without_banks: Option<f64>,
    /// The hand estimate Q = P·(tan φ₀ − tan φ_target), kvar at the PCC (textbook).
    pub hand_kvar: f64,
    /// The (fractional) number of this bank's steps that brings the PCC exactly to the
    /// target; 0 when the plant already meets it; `None` when even four times the installed
    /// steps do not.
    pub steps_needed: Option<f64>,
    /// `steps_needed` × Step kvar: rated kvar (at the capacitor's rated kV).
    pub rated_kvar_needed: Option<f64>,
    /// Steps × Step kvar installed.
    pub installed_kvar: f64,
}

/// The whole operating-point study.
#[derive(Debug, Clone)]
pub struct OperatingStudy {
    /// One per scenario × studied configuration that has a solution, in that nesting order
    /// (as the limit rows); [`OperatingStudy::point_at`] finds one.
    pub points: Vec<OperatingPoint>,
    /// The worst change per bank and step.
    pub step_changes: Vec<StepChange>,
    /// Per scenario and bank.
    pub needs: Vec<KvarNeed>,
    pub target_power_factor: f64,
    pub low_pu: f64,
    pub high_pu: f64,
    pub step_limit_percent: f64,
    /// Index into `points` of each scenario × studied configuration (`None`: no solution).
    slots: Vec<Option<usize>>,
    /// Configurations without a load-flow solution (voltage collapse), each a sentence.
    pub collapsed: Vec<CollapseError>,
}

/// Configurations solved one after the other from a warm start, per parallel task.
const BLOCK: usize = 64;

/// A solved configuration kept while the study runs.
struct Solved {
    p_kw: f64,
    q_kvar: f64,
    v_abs: Vec<f64>,
    /// Bus voltage angles, radians (only when kept).
    v_arg: Vec<f64>,
    iterations: u32,
}

impl OperatingStudy {
    /// Solves every scenario for `configurations` (plus, for the step changes, each
    /// configuration with one step fewer of each energized bank) with `solver`.
    pub fn run(
        plant: &Plant,
        net: &Network,
        solver: &OperatingSolver,
        configurations: &[Configuration],
    ) -> OperatingStudy {
        let keep_angles = plant.study.summation == crate::model::Summation::Phasor;
        let nk = net.banks.len();
        let label = |steps: &[u32]| {
            Configuration {
                steps: steps.to_vec(),
            }
            .label(&plant.banks)
        };
        let collapse = |s: usize, steps: &[f64], e: LoadFlowFailure| CollapseError {
            scenario: net.scenarios[s].name.clone(),
            configuration: label(&steps.iter().map(|&x| x as u32).collect::<Vec<_>>()),
            why: match e {
                LoadFlowFailure::Singular => "the Jacobian is singular: voltage collapse",
                LoadFlowFailure::NoConvergence => {
                    "Newton's method does not converge: voltage collapse"
                }
            },
        };
        let mut study = OperatingStudy {
            points: Vec::new(),
            step_changes: Vec::new(),
            needs: Vec::new(),
            target_power_factor: plant.study.target_power_factor,
            low_pu: plant.study.voltage_range.low_pu,
            high_pu: plant.study.voltage_range.high_pu,
            step_limit_percent: plant.study.step_voltage_change_percent,
            slots: Vec::new(),
            collapsed: Vec::new(),
        };
        let wanted = wanted(configurations, nk);
        let ns = net.scenarios.len();
        let tasks: Vec<(usize, &[Vec<u32>])> = (0..ns)
            .flat_map(|s| wanted.chunks(BLOCK).map(move |c| (s, c)))
            .collect();
        let solved: Vec<Vec<Outcome>> = tasks
            .par_iter()
            .map(|&(s, chunk)| solve_chunk(net, solver, s, chunk, keep_angles, &collapse))
            .collect();
        let mut index: HashMap<(usize, &[u32]), &Solved> = HashMap::new();
        let mut failed: HashMap<(usize, &[u32]), &CollapseError> = HashMap::new();
        for (&(s, chunk), sols) in tasks.iter().zip(&solved) {
            for (steps, sol) in chunk.iter().zip(sols) {
                match sol {
                    Ok(sol) => index.insert((s, steps.as_slice()), sol).map(|_| ()),
                    Err(e) => failed.insert((s, steps.as_slice()), e).map(|_| ()),
                };
            }
        }
        for s in 0..ns {
            for c in configurations {
                let key = (s, c.steps.as_slice());
                if let Some(sol) = index.get(&key) {
                    study.slots.push(Some(study.points.len()));
                    let point = study.point(net, plant, s, &label(&c.steps), sol);
                    study.points.push(point);
                } else {
                    study.slots.push(None);
                    if let Some(e) = failed.get(&key) {
                        study.collapsed.push((*e).clone());
                    }
                }
            }
        }
        study.step_changes = study.step_changes(net, plant, configurations, &index);
        study.needs = study.needs(net, plant, solver);
        study
    }

    /// The point of scenario `s` and studied configuration `c` (of `nc`).
    pub fn point_at(&self, s: usize, c: usize, nc: usize) -> Option<&OperatingPoint> {
        self.slots
            .get(s * nc + c)
            .copied()
            .flatten()
            .and_then(|i| self.points.get(i))
    }

    fn point(
        &self,
        net: &Network,
        plant: &Plant,
        s: usize,
        label: &str,
        sol: &Solved,
    ) -> OperatingPoint {
        let (mut min, mut max) = (0usize, 0usize);
        let angle_rad = sol.v_arg.clone();
        let mut out = 0;
        for (i, &v) in sol.v_abs.iter().enumerate() {
            if v < sol.v_abs[min] {
                min = i;
            }
            if v > sol.v_abs[max] {
                max = i;
            }
            if v < self.low_pu || v > self.high_pu {
                out += 1;
            }
        }
        let (pf, verdict) = power_factor(sol.p_kw, sol.q_kvar, self.target_power_factor);
        let pcc = plant
            .pcc_bus()
            .and_then(|id| net.bus_index(id))
            .unwrap_or(0);
        let at = |i: usize| sol.v_abs.get(i).copied().unwrap_or(f64::NAN);
        OperatingPoint {
            scenario: net.scenarios[s].name.clone(),
            configuration: label.to_string(),
            pcc_p_kw: sol.p_kw,
            pcc_q_kvar: sol.q_kvar,
            pcc_power_factor: pf,
            pf_verdict: verdict,
            pcc_v_pu: at(pcc),
            min_v_pu: at(min),
            min_v_bus: net
                .buses
                .get(min)
                .map_or_else(String::new, |b| b.id.clone()),
            max_v_pu: at(max),
            max_v_bus: net
                .buses
                .get(max)
                .map_or_else(String::new, |b| b.id.clone()),
            buses_out_of_range: out,
            bank_bus_v_pu: net.banks.iter().map(|b| at(b.bus)).collect(),
            iterations: sol.iterations,
            angle_rad,
        }
    }

    fn step_changes(
        &self,
        net: &Network,
        plant: &Plant,
        configurations: &[Configuration],
        index: &HashMap<(usize, &[u32]), &Solved>,
    ) -> Vec<StepChange> {
        let mut worst: Vec<StepChange> = Vec::new();
        for s in 0..net.scenarios.len() {
            for c in configurations {
                for (b, bank) in net.banks.iter().enumerate() {
                    let k = c.steps[b];
                    if k == 0 {
                        continue;
                    }
                    let mut below = c.steps.clone();
                    below[b] -= 1;
                    let (Some(after), Some(before)) = (
                        index.get(&(s, c.steps.as_slice())),
                        index.get(&(s, below.as_slice())),
                    ) else {
                        continue;
                    };
                    let (v0, v1) = (before.v_abs[bank.bus], after.v_abs[bank.bus]);
                    let change = (v1 - v0) / v0 * 100.0;
                    let row = StepChange {
                        bank: bank.id.clone(),
                        bus: net.buses[bank.bus].id.clone(),
                        step: k,
                        scenario: net.scenarios[s].name.clone(),
                        configuration: c.label(&plant.banks),
                        v_before_pu: v0,
                        v_after_pu: v1,
                        change_percent: change,
                        limit_percent: self.step_limit_percent,
                        exceeds: change.abs() > self.step_limit_percent,
                    };
                    match worst.iter_mut().find(|w| w.bank == row.bank && w.step == k) {
                        Some(w) if w.change_percent.abs() >= change.abs() => {}
                        Some(w) => *w = row,
                        None => worst.push(row),
                    }
                }
            }
        }
        worst.sort_by(|a, b| {
            let pos = |r: &StepChange| net.banks.iter().position(|x| x.id == r.bank);
            pos(a).cmp(&pos(b)).then(a.step.cmp(&b.step))
        });
        worst
    }

    /// Per scenario and bank, the fractional steps of that bank alone that bring the PCC to
    /// the target power factor: the root of g(x) = Q(x) − P(x)·tan(acos target) by the
    /// secant method safeguarded by bisection, each evaluation a load flow.
    fn needs(&self, net: &Network, plant: &Plant, solver: &OperatingSolver) -> Vec<KvarNeed> {
        let mut out = Vec::new();
        let tan_t = self.target_power_factor.acos().tan();
        let nk = net.banks.len();
        for s in 0..net.scenarios.len() {
            let Some(base) = solver.solved_base(s) else {
                continue;
            };
            let (p0, q0) = net.pcc_power(s, base);
            let (pf0, _) = power_factor(p0, q0, self.target_power_factor);
            let tan0 = if p0 > 0.0 { q0 / p0 } else { 0.0 };
            for (b, bank) in plant.banks.iter().enumerate() {
                let mut w = LoadFlowScratch::default();
                let mut v = base.to_vec();
                // g(x) = Q(x) − P(x)·tan φ_target, decreasing in the steps x; a trial
                // without load-flow solution can only be a very large bank (beyond the
                // root). Each trial starts from the one before.
                let mut g = |x: f64| -> Option<f64> {
                    let mut steps = vec![0.0; nk];
                    steps[b] = x;
                    solver.solve_into(s, &steps, &mut v, &mut w).ok()?;
                    let (p, q) = net.pcc_power(s, &v);
                    Some(q - p * tan_t)
                };
                let hi = 4.0 * f64::from(bank.steps.max(1));
                let steps_needed = decreasing_root(&mut g, q0 - p0 * tan_t, hi);
                out.push(KvarNeed {
                    scenario: net.scenarios[s].name.clone(),
                    bank: bank.id.clone(),
                    p_kw_without_banks: p0,
                    q_kvar_without_banks: q0,
                    pf_without_banks: pf0,
                    hand_kvar: (p0 * (tan0 - tan_t)).max(0.0),
                    steps_needed,
                    rated_kvar_needed: steps_needed.map(|x| x * bank.step_kvar),
                    installed_kvar: f64::from(bank.steps) * bank.step_kvar,
                });
            }
        }
        out
    }
}

/// A configuration's load flow as the study keeps it, or why it has none.
type Outcome = Result<Solved, CollapseError>;

/// Every configuration to solve: the studied ones and each with one step fewer of each
/// energized bank (for the step changes), each once, sorted (neighbours share most steps, so
/// each warm-starts the next).
fn wanted(configurations: &[Configuration], nk: usize) -> Vec<Vec<u32>> {
    let mut wanted: Vec<Vec<u32>> = Vec::new();
    let mut seen: HashMap<Vec<u32>, ()> = HashMap::new();
    for c in configurations {
        if seen.insert(c.steps.clone(), ()).is_none() {
            wanted.push(c.steps.clone());
        }
    }
    for c in configurations {
        for b in 0..nk {
            if c.steps[b] > 0 {
                let mut below = c.steps.clone();
                below[b] -= 1;
                if seen.insert(below.clone(), ()).is_none() {
                    wanted.push(below);
                }
            }
        }
    }
    wanted.sort();
    wanted
}

/// Solves scenario `s` for each configuration of `chunk` in turn, each from the solution
/// before it (from the start again after a failure).
fn solve_chunk(
    net: &Network,
    solver: &OperatingSolver,
    s: usize,
    chunk: &[Vec<u32>],
    keep_angles: bool,
    collapse: &(dyn Fn(usize, &[f64], LoadFlowFailure) -> CollapseError + Sync),
) -> Vec<Outcome> {
    let mut w = LoadFlowScratch::default();
    let mut v = solver.start(s).to_vec();
    chunk
        .iter()
        .map(|steps| {
            let x: Vec<f64> = steps.iter().map(|&k| f64::from(k)).collect();
            match solver.solve_into(s, &x, &mut v, &mut w) {
                Ok(iterations) => {
                    let (p_kw, q_kvar) = net.pcc_power(s, &v);
                    Ok(Solved {
                        p_kw,
                        q_kvar,
                        v_abs: v.iter().map(|z| z.norm()).collect(),
                        v_arg: if keep_angles {
                            v.iter().map(|z| z.arg()).collect()
                        } else {
                            Vec::new()
                        },
                        iterations,
                    })
                }
                Err(e) => {
                    v.copy_from_slice(solver.start(s));
                    Err(collapse(s, &x, e))
                }
            }
        })
        .collect()
}

/// PF = P / √(P² + Q²) and its verdict against `target` (lagging when Q ≥ 0).
pub fn power_factor(p_kw: f64, q_kvar: f64, target: f64) -> (Option<f64>, PfVerdict) {
    let s = p_kw.hypot(q_kvar);
    if p_kw.is_nan() || p_kw <= 1e-9 * s.max(1e-300) || !s.is_finite() {
        return (None, PfVerdict::NoLoad);
    }
    let pf = p_kw / s;
    let verdict = if q_kvar < 0.0 {
        PfVerdict::Leading
    } else if pf >= target - 1e-12 {
        PfVerdict::Reaches
    } else {
        PfVerdict::BelowTarget
    };
    (Some(pf), verdict)
}
