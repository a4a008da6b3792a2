//! The fundamental load flow of one plant, set up once: the sparse pattern, one Newton
//! system per scenario, each bank step's admittance, and the solution without banks that
//! every other solve starts from. The [`super::OperatingStudy`] reads it; the switching
//! simulation, the CSVs and the design's controller solve single configurations with it.

use num_complex::Complex64;

use crate::network::Network;
use crate::solve::{LoadFlowFailure, LoadFlowScratch, LoadFlowSystem, Symbolic};

/// The load flow of every scenario, ready to solve any step combination.
#[derive(Debug, Clone)]
pub struct OperatingSolver {
    sym: Symbolic,
    systems: Vec<LoadFlowSystem>,
    /// The start of every solve per scenario: the solution without banks, or a flat start
    /// at the largest source EMF when that configuration has no solution.
    base: Vec<Vec<Complex64>>,
    /// Whether `base` is the solution without banks.
    base_solved: Vec<bool>,
    /// One step's fundamental admittance of each bank and its bus.
    bank_y: Vec<(usize, Complex64)>,
    /// e^{jθ} of each bus's transformer phase-shift zone (positive sequence).
    zone: Vec<Complex64>,
    /// Per scenario, e^{−jθ} of the zone of its first in-service utility source's bus: the
    /// reference of the reported angles (that source's EMF at 0°).
    reference: Vec<Complex64>,
}

impl OperatingSolver {
    /// Sets up the load flow of `net` and solves every scenario without banks (from a flat
    /// start at the largest source EMF, at least 0.5 pu).
    pub fn new(net: &Network) -> OperatingSolver {
        let n = net.buses.len();
        let sym = Symbolic::new(n, &net.edges());
        let mut s_load = vec![Complex64::default(); n];
        for l in &net.power_loads {
            s_load[l.bus] += l.s_pu;
        }
        let systems: Vec<LoadFlowSystem> = (0..net.scenarios.len())
            .map(|s| {
                LoadFlowSystem::new(
                    &sym,
                    |add| net.stamp_load_flow(s, add),
                    &net.norton_currents(s),
                    &s_load,
                )
            })
            .collect();
        let bank_y: Vec<(usize, Complex64)> = net
            .banks
            .iter()
            .map(|b| (b.bus, b.y_step_pu(1.0, net.resistance)))
            .collect();
        let mut base = Vec::new();
        let mut base_solved = Vec::new();
        for (s, sys) in systems.iter().enumerate() {
            let flat = net.scenarios[s]
                .sources
                .iter()
                .map(|&i| net.source_emf_pu[i])
                .fold(0.0, f64::max)
                .max(0.5);
            let mut v = vec![Complex64::new(flat, 0.0); n];
            let ok = sys
                .solve(&sym, &[], &mut v, &mut LoadFlowScratch::default())
                .is_ok();
            if !ok {
                v = vec![Complex64::new(flat, 0.0); n];
            }
            base.push(v);
            base_solved.push(ok);
        }
        OperatingSolver {
            sym,
            systems,
            base,
            base_solved,
            bank_y,
            zone: net
                .zone_deg
                .iter()
                .map(|d| Complex64::from_polar(1.0, d.to_radians()))
                .collect(),
            reference: (net.scenarios.iter())
                .map(|sc| {
                    let first = (sc.sources.iter())
                        .find(|&&k| net.source_utility.get(k).copied().unwrap_or(true))
                        .or(sc.sources.first());
                    let deg = first
                        .and_then(|&k| net.zone_deg.get(net.sources[k].bus))
                        .copied()
                        .unwrap_or(0.0);
                    Complex64::from_polar(1.0, -deg.to_radians())
                })
                .collect(),
        }
    }

    /// The start of every solve of scenario `s` (see `base`).
    pub(super) fn start(&self, s: usize) -> &[Complex64] {
        &self.base[s]
    }

    /// The solution without banks of scenario `s`, `None` when it has none.
    pub fn solved_base(&self, s: usize) -> Option<&[Complex64]> {
        self.base_solved
            .get(s)
            .copied()
            .unwrap_or(false)
            .then(|| self.base[s].as_slice())
    }

    /// Solves scenario `s` with `steps[b]` (possibly fractional) steps of every bank,
    /// starting from and returning in `v` (per unit, by bus).
    pub(super) fn solve_into(
        &self,
        s: usize,
        steps: &[f64],
        v: &mut [Complex64],
        w: &mut LoadFlowScratch,
    ) -> Result<u32, LoadFlowFailure> {
        let shunts: Vec<(usize, Complex64)> = self
            .bank_y
            .iter()
            .zip(steps)
            .filter(|(_, n)| **n != 0.0)
            .map(|(&(bus, y), &n)| (bus, y * n))
            .collect();
        self.systems[s].solve(&self.sym, &shunts, v, w)
    }

    /// Every bus voltage (per unit, complex, by bus) of scenario `s` with `steps`, solved
    /// from the solution without banks; the same values as the study's to about 1e-14.
    /// Angles are against the EMF of the scenario's first utility source (in the Sources
    /// sheet's order) and include each bus's transformer phase shift.
    pub fn voltages(&self, s: usize, steps: &[u32]) -> Result<Vec<Complex64>, LoadFlowFailure> {
        let mut v = self.shift_free_voltages(s, steps)?;
        let r = self
            .reference
            .get(s)
            .copied()
            .unwrap_or(Complex64::new(1.0, 0.0));
        for (x, z) in v.iter_mut().zip(&self.zone) {
            *x *= z * r;
        }
        Ok(v)
    }

    /// |V| (pu) at each bank's bus of `net` in scenario `s` for each step vector of `list`
    /// (possibly fractional), solved in turn, each from the solution before it (from the
    /// start again after a failure); `None` where the load flow has no solution.
    pub fn bank_bus_voltages(
        &self,
        net: &Network,
        s: usize,
        list: &[Vec<f64>],
    ) -> Vec<Option<Vec<f64>>> {
        let Some(start) = self.base.get(s) else {
            return vec![None; list.len()];
        };
        let mut v = start.clone();
        let mut w = LoadFlowScratch::default();
        list.iter()
            .map(|steps| match self.solve_into(s, steps, &mut v, &mut w) {
                Ok(_) => Some(net.banks.iter().map(|b| v[b.bus].norm()).collect()),
                Err(_) => {
                    v.copy_from_slice(start);
                    None
                }
            })
            .collect()
    }

    /// Every bus voltage of scenario `s` with `steps` (possibly fractional: a capacitance
    /// above rated) in the shift-free network, per unit, by bus, solved from the solution
    /// without banks.
    pub fn shift_free_voltages_at(
        &self,
        s: usize,
        steps: &[f64],
    ) -> Result<Vec<Complex64>, LoadFlowFailure> {
        if self.base.get(s).is_none() {
            return Err(LoadFlowFailure::NoConvergence);
        }
        let mut v = self.base[s].clone();
        self.solve_into(s, steps, &mut v, &mut LoadFlowScratch::default())?;
        Ok(v)
    }

    /// Every bus voltage of scenario `s` with `steps` in the shift-free network (each
    /// zone's phase shift left out, every source EMF at angle 0), per unit, by bus.
    pub fn shift_free_voltages(
        &self,
        s: usize,
        steps: &[u32],
    ) -> Result<Vec<Complex64>, LoadFlowFailure> {
        let x: Vec<f64> = steps.iter().map(|&k| f64::from(k)).collect();
        self.shift_free_voltages_at(s, &x)
    }
}
