//! The per-point engine: factor Y(h) without banks once per scan point and scenario, solve
//! for the impedance columns at the bank buses and the buses of interest, then apply any
//! step combination as a small dense correction (the compensation method, a form of the
//! Woodbury identity):
//!
//! Y = Y₀ + P·D·Pᵀ with D = diag(n_b·y_b(h)) the bank admittances at their buses, so
//! Z = Z₀ − Z₀P·(I + D·PᵀZ₀P)⁻¹·D·PᵀZ₀. This form needs no D⁻¹, so a bank at 0 steps is exact.
//! Cost per configuration O(k³) for k banks, independent of the number of buses.

use num_complex::Complex64;

use super::{Factor, Symbolic};
use crate::network::Network;

/// A network that cannot be solved at some frequency.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SolveError {
    #[error(
        "scenario \"{scenario}\": the network is singular at harmonic order {order} near bus \"{bus}\" (a lossless resonance or an element of zero impedance)"
    )]
    Singular {
        scenario: String,
        order: f64,
        bus: String,
    },
}

/// The sparse solver of one network, with the buses whose impedances are wanted.
#[derive(Debug, Clone)]
pub struct Engine<'a> {
    net: &'a Network,
    sym: Symbolic,
    /// Distinct buses whose columns of Z₀ are solved: bank buses first, then the rest of
    /// the buses of interest.
    cols: Vec<usize>,
    /// For each bank, its index in `cols`.
    bank_col: Vec<usize>,
    /// For each bus of interest, its index in `cols`.
    interest_col: Vec<usize>,
    /// The buses of interest (bus indices), as given.
    interest: Vec<usize>,
}

/// Z₀ at one scan point and scenario, restricted to the bank buses and buses of interest,
/// and the bank step admittances: everything needed to evaluate any step combination.
#[derive(Debug, Clone)]
pub struct PointSolution {
    /// Harmonic order of the point.
    pub order: f64,
    /// Z₀ among the solved columns, per unit, row-major c×c (symmetric).
    z0: Vec<Complex64>,
    c: usize,
    bank_col: Vec<usize>,
    interest_col: Vec<usize>,
    /// One step's admittance of each bank, per unit.
    y_step: Vec<Complex64>,
}

impl<'a> Engine<'a> {
    /// Analyses the network's pattern once and fixes the buses of interest (bus indices).
    pub fn new(net: &'a Network, interest: &[usize]) -> Self {
        let sym = Symbolic::new(net.buses.len(), &net.edges());
        let mut cols: Vec<usize> = Vec::new();
        let index_of = |bus: usize, cols: &mut Vec<usize>| match cols.iter().position(|&c| c == bus)
        {
            Some(i) => i,
            None => {
                cols.push(bus);
                cols.len() - 1
            }
        };
        let bank_col = net
            .banks
            .iter()
            .map(|b| index_of(b.bus, &mut cols))
            .collect();
        let interest_col = interest.iter().map(|&i| index_of(i, &mut cols)).collect();
        Engine {
            net,
            sym,
            cols,
            bank_col,
            interest_col,
            interest: interest.to_vec(),
        }
    }

    /// The buses of interest (bus indices), in the order given to [`Engine::new`].
    pub fn interest(&self) -> &[usize] {
        &self.interest
    }

    /// The network solved.
    pub fn network(&self) -> &Network {
        self.net
    }

    /// The symbolic analysis in use.
    pub fn symbolic(&self) -> &Symbolic {
        &self.sym
    }

    fn singular(&self, order: f64, scenario: usize, index: usize) -> SolveError {
        SolveError::Singular {
            scenario: self
                .net
                .scenarios
                .get(scenario)
                .map_or_else(String::new, |s| s.name.clone()),
            order,
            bus: self
                .net
                .buses
                .get(index)
                .map_or_else(String::new, |b| b.id.clone()),
        }
    }

    /// Factors Y(h) in `scenario` with `steps[b]` steps of bank b energized (an empty slice
    /// means no banks).
    pub fn factor(&self, order: f64, scenario: usize, steps: &[u32]) -> Result<Factor, SolveError> {
        let mut values = self.sym.zeros();
        self.net.stamp(order, scenario, |i, j, y| {
            if let Some(s) = self.sym.slot(i, j) {
                values[s] += y;
            }
        });
        for (b, &n) in self.net.banks.iter().zip(steps) {
            if n > 0 {
                values[self.sym.slot(b.bus, b.bus).unwrap_or(b.bus)] +=
                    b.y_step_pu(order, self.net.resistance) * f64::from(n);
            }
        }
        self.sym
            .factor(values)
            .map_err(|e| self.singular(order, scenario, e.index))
    }

    /// Solves Y·x = b with a factor from [`Engine::factor`]; b and x in per unit, by bus.
    pub fn solve(&self, f: &Factor, b: &mut [Complex64]) {
        let mut work = Vec::with_capacity(b.len());
        self.sym.solve_in_place(f, b, &mut work);
    }

    /// One step's admittance of every bank at order h, per unit.
    pub fn y_steps(&self, order: f64) -> Vec<Complex64> {
        self.net
            .banks
            .iter()
            .map(|b| b.y_step_pu(order, self.net.resistance))
            .collect()
    }

    /// Factors Y₀(h) (no banks) and solves the columns of Z₀ at the bank buses and the
    /// buses of interest.
    pub fn point(&self, order: f64, scenario: usize) -> Result<PointSolution, SolveError> {
        let f = self.factor(order, scenario, &[])?;
        let n = self.sym.n();
        let c = self.cols.len();
        let mut z0 = vec![Complex64::new(0.0, 0.0); c * c];
        let mut rhs = vec![Complex64::new(0.0, 0.0); n];
        let mut work = Vec::with_capacity(n);
        for (j, &bus) in self.cols.iter().enumerate() {
            rhs.iter_mut().for_each(|v| *v = Complex64::new(0.0, 0.0));
            rhs[bus] = Complex64::new(1.0, 0.0);
            self.sym.solve_in_place(&f, &mut rhs, &mut work);
            for (i, &row) in self.cols.iter().enumerate() {
                z0[i * c + j] = rhs[row];
            }
        }
        Ok(PointSolution {
            order,
            z0,
            c,
            bank_col: self.bank_col.clone(),
            interest_col: self.interest_col.clone(),
            y_step: self.y_steps(order),
        })
    }
}

impl PointSolution {
    /// Z₀ at order `order` by Lagrange interpolation through the solutions `near` (at
    /// distinct orders, typically the four grid points around `order`), with the bank step
    /// admittances `y_step` evaluated exactly at `order`. Z₀ has no capacitor banks in it,
    /// so it varies slowly with h and a cubic through grid points 0.01 apart reproduces it to
    /// far better than the 0.001-order refinement needs (checked against exact solutions in
    /// the tests).
    pub fn interpolate(near: &[&PointSolution], order: f64, y_step: Vec<Complex64>) -> Self {
        let first = near[0];
        let mut z0 = vec![Complex64::new(0.0, 0.0); first.z0.len()];
        for (a, pa) in near.iter().enumerate() {
            let mut w = 1.0;
            for (b, pb) in near.iter().enumerate() {
                if a != b {
                    w *= (order - pb.order) / (pa.order - pb.order);
                }
            }
            for (acc, v) in z0.iter_mut().zip(&pa.z0) {
                *acc += v * w;
            }
        }
        PointSolution {
            order,
            z0,
            c: first.c,
            bank_col: first.bank_col.clone(),
            interest_col: first.interest_col.clone(),
            y_step,
        }
    }

    fn z0(&self, i: usize, j: usize) -> Complex64 {
        self.z0[i * self.c + j]
    }

    /// Z₀ (no banks) at the bus of bank `b`, per unit: the driving-point impedance that the
    /// bank sees from the rest of the network.
    pub fn bank_bus_z0_pu(&self, b: usize) -> Complex64 {
        let c = self.bank_col[b];
        self.z0(c, c)
    }

    /// Transfer impedances Z_ij (per unit) between buses of interest `pairs` (indices into
    /// the engine's list of buses of interest) with `steps[b]` steps of each bank:
    /// Z_ij = Z₀_ij − r_iᵀ·(I + D·Z_SS)⁻¹·D·r_j, r_i = Z₀ at (bank buses, i), over the
    /// energized banks only. `None` if the combination makes the network exactly singular.
    pub fn transfer_pu(&self, steps: &[u32], pairs: &[(usize, usize)]) -> Option<Vec<Complex64>> {
        let mut scratch = Scratch::default();
        if !self.prepare(steps, &mut scratch) {
            return None;
        }
        let out: Vec<Complex64> = pairs
            .iter()
            .map(|&(i, j)| self.corrected(&mut scratch, self.interest_col[i], self.interest_col[j]))
            .collect();
        out.iter()
            .all(|z| z.re.is_finite() && z.im.is_finite())
            .then_some(out)
    }

    /// Driving-point impedances Z_ii (per unit) at every bus of interest with `steps[b]`
    /// steps of each bank; `None` if the combination is exactly singular.
    pub fn driving_point_pu(&self, steps: &[u32]) -> Option<Vec<Complex64>> {
        let mut out = vec![Complex64::new(0.0, 0.0); self.interest_col.len()];
        let mut scratch = Scratch::default();
        self.driving_point_into(steps, &mut scratch, &mut out)
            .then_some(out)
    }

    /// [`PointSolution::driving_point_pu`] into `out` (one value per bus of interest)
    /// without allocating once `scratch` has grown; false if the combination is singular.
    pub fn driving_point_into(
        &self,
        steps: &[u32],
        scratch: &mut Scratch,
        out: &mut [Complex64],
    ) -> bool {
        if !self.prepare(steps, scratch) {
            return false;
        }
        for (o, &ci) in out.iter_mut().zip(&self.interest_col) {
            *o = self.corrected(scratch, ci, ci);
            if !(o.re.is_finite() && o.im.is_finite()) {
                return false;
            }
        }
        true
    }

    /// Builds and factors M = I + D·Z_SS over the energized banks (LU with partial
    /// pivoting, in `scratch`); false when M is singular.
    fn prepare(&self, steps: &[u32], sc: &mut Scratch) -> bool {
        sc.active.clear();
        sc.d.clear();
        for (b, y) in self.y_step.iter().enumerate() {
            let n = steps.get(b).copied().unwrap_or(0);
            if n > 0 {
                sc.active.push(self.bank_col[b]);
                sc.d.push(*y * f64::from(n));
            }
        }
        let k = sc.active.len();
        sc.m.clear();
        for r in 0..k {
            for s in 0..k {
                let v = sc.d[r] * self.z0(sc.active[r], sc.active[s]);
                sc.m.push(if r == s { v + 1.0 } else { v });
            }
        }
        sc.piv.clear();
        sc.piv.extend(0..k);
        let m = &mut sc.m;
        for c in 0..k {
            let mut best = c;
            let mut best_norm = m[c * k + c].norm();
            for r in c + 1..k {
                let v = m[r * k + c].norm();
                if v > best_norm {
                    best = r;
                    best_norm = v;
                }
            }
            if !(best_norm.is_finite() && best_norm > 0.0) {
                return false;
            }
            if best != c {
                for j in 0..k {
                    m.swap(c * k + j, best * k + j);
                }
                sc.piv.swap(c, best);
            }
            let inv = m[c * k + c].inv();
            for r in c + 1..k {
                let f = m[r * k + c] * inv;
                m[r * k + c] = f;
                for j in c + 1..k {
                    let u = m[c * k + j];
                    m[r * k + j] -= f * u;
                }
            }
        }
        true
    }

    /// Z₀_ij − r_iᵀ·M⁻¹·D·r_j with M factored by [`PointSolution::prepare`].
    fn corrected(&self, sc: &mut Scratch, ci: usize, cj: usize) -> Complex64 {
        let k = sc.active.len();
        let base = self.z0(ci, cj);
        if k == 0 {
            return base;
        }
        sc.rhs.clear();
        for &p in &sc.piv {
            sc.rhs.push(sc.d[p] * self.z0(sc.active[p], cj));
        }
        let m = &sc.m;
        let x = &mut sc.rhs;
        for r in 0..k {
            for j in 0..r {
                let l = m[r * k + j];
                let xj = x[j];
                x[r] -= l * xj;
            }
        }
        for r in (0..k).rev() {
            for j in r + 1..k {
                let u = m[r * k + j];
                let xj = x[j];
                x[r] -= u * xj;
            }
            x[r] /= m[r * k + r];
        }
        let dz: Complex64 = (0..k).map(|a| self.z0(ci, sc.active[a]) * x[a]).sum();
        base - dz
    }
}

/// Reusable buffers of the step-combination correction.
#[derive(Debug, Clone, Default)]
pub struct Scratch {
    active: Vec<usize>,
    d: Vec<Complex64>,
    m: Vec<Complex64>,
    rhs: Vec<Complex64>,
    piv: Vec<usize>,
}
