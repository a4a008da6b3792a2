//! The per-point engine: factor Y(h) without banks once per scan point and scenario, solve
//! for the impedance columns at the bank buses and the buses of interest, then apply any
//! step combination as a small dense correction (the compensation method, a form of the
//! Woodbury identity):
//!
//! Y = Y₀ + P·D·Pᵀ with D = diag(n_b·y_b(h)) the bank admittances at their buses, so
//! Z = Z₀ − Z₀P·(I + D·PᵀZ₀P)⁻¹·D·PᵀZ₀. This form needs no D⁻¹, so a bank at 0 steps is exact.
//! Cost per configuration O(k³) for k banks, independent of the number of buses.

use num_complex::Complex64;

use super::plan::{ComboPlan, PlanState, run_plan};
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

/// Z₀ at one scan point and scenario, restricted to what any step combination needs: among
/// the bank buses (k×k), between the buses of interest and the bank buses (m×k), and at each
/// bus of interest (m), plus the bank step admittances.
#[derive(Debug, Clone)]
pub struct PointSolution {
    /// Harmonic order of the point.
    pub order: f64,
    pub(super) state: State,
    /// One step's admittance of each bank, per unit.
    pub(super) y_step: Vec<Complex64>,
}

/// The impedances a step combination updates, per unit.
#[derive(Debug, Default)]
pub(super) struct State {
    pub(super) k: usize,
    pub(super) m: usize,
    /// Bank bus × bank bus, k×k row-major.
    pub(super) zss: Vec<Complex64>,
    /// Bus of interest × bank bus, m×k row-major.
    pub(super) zis: Vec<Complex64>,
    /// Driving point at each bus of interest.
    pub(super) zii: Vec<Complex64>,
}

impl Clone for State {
    fn clone(&self) -> Self {
        State {
            k: self.k,
            m: self.m,
            zss: self.zss.clone(),
            zis: self.zis.clone(),
            zii: self.zii.clone(),
        }
    }

    /// Copies into the buffers already held (the plan copies a level at every bank left at
    /// 0 steps, and every evaluation starts from Z₀: no allocation once they have grown).
    fn clone_from(&mut self, source: &Self) {
        (self.k, self.m) = (source.k, source.m);
        self.zss.clone_from(&source.zss);
        self.zis.clone_from(&source.zis);
        self.zii.clone_from(&source.zii);
    }
}

impl State {
    /// Adds the shunt admittance y at the bus of bank `a` by the Sherman–Morrison update
    /// Z′ = Z − Z[:,a]·Z[a,:]·y / (1 + y·Z[a,a]) (Z symmetric), keeping only the entries that
    /// banks after `a` and the buses of interest still need. False when 1 + y·Z[a,a] = 0
    /// (the combination is exactly singular).
    fn add_into(&self, a: usize, y: Complex64, to: &mut State) -> bool {
        let (k, m) = (self.k, self.m);
        let denom = 1.0 + y * self.zss[a * k + a];
        if !super::admissible(denom) {
            return false;
        }
        let f = y / denom;
        to.k = k;
        to.m = m;
        to.zss.resize(k * k, Complex64::default());
        to.zis.resize(m * k, Complex64::default());
        to.zii.resize(m, Complex64::default());
        for i in a + 1..k {
            let zia = self.zss[i * k + a] * f;
            for j in a + 1..k {
                to.zss[i * k + j] = self.zss[i * k + j] - zia * self.zss[a * k + j];
            }
        }
        for p in 0..m {
            let zpa = self.zis[p * k + a];
            let g = zpa * f;
            for j in a + 1..k {
                to.zis[p * k + j] = self.zis[p * k + j] - g * self.zss[a * k + j];
            }
            to.zii[p] = self.zii[p] - g * zpa;
        }
        true
    }

    /// Driving points at the buses of interest after adding y at bank `a` (the last update
    /// of a combination: only the diagonal is needed).
    fn leaf(&self, a: usize, y: Complex64, out: &mut [Complex64]) -> bool {
        let k = self.k;
        let denom = 1.0 + y * self.zss[a * k + a];
        if !super::admissible(denom) {
            return false;
        }
        let f = y / denom;
        for (p, o) in out.iter_mut().enumerate() {
            let zpa = self.zis[p * k + a];
            *o = self.zii[p] - zpa * zpa * f;
        }
        true
    }
}

/// Reusable buffers for evaluating step combinations: one state per bank level.
#[derive(Debug, Clone, Default)]
pub struct Scratch {
    levels: Vec<State>,
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
        self.factor_shifted(order, scenario, steps, Complex64::new(0.0, 0.0))
    }

    /// Factors Y(h) − σ·I at `order` (σ = `shift`, per unit, on every diagonal entry): the
    /// shifted matrix of inverse iteration.
    pub fn factor_shifted(
        &self,
        order: f64,
        scenario: usize,
        steps: &[u32],
        shift: Complex64,
    ) -> Result<Factor, SolveError> {
        self.factor_stamped(self.stamped(order, scenario, steps), order, scenario, shift)
    }

    /// The entries of Y(h) in `scenario` with `steps[b]` steps of bank b energized, laid out
    /// for [`Engine::factor_stamped`] (stamped once, factored with several shifts).
    pub fn stamped(&self, order: f64, scenario: usize, steps: &[u32]) -> Vec<Complex64> {
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
        values
    }

    /// Factors the stamped Y(h) (from [`Engine::stamped`] at `order` and `scenario`, which
    /// name a singular pivot) less σ = `shift` on every diagonal entry.
    pub fn factor_stamped(
        &self,
        mut values: Vec<Complex64>,
        order: f64,
        scenario: usize,
        shift: Complex64,
    ) -> Result<Factor, SolveError> {
        for i in 0..self.sym.n() {
            if let Some(s) = self.sym.slot(i, i) {
                values[s] -= shift;
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

    /// [`Engine::solve`] with the caller's work buffer (no allocation once it has grown).
    pub fn solve_with(&self, f: &Factor, b: &mut [Complex64], work: &mut Vec<Complex64>) {
        self.sym.solve_in_place(f, b, work);
    }

    /// [`Engine::solve_with`] multiplying by the inverse pivots ([`Symbolic::solve_in_place_fast`]:
    /// about twice as fast on a radial network, different in the last bits only).
    pub fn solve_fast_with(&self, f: &Factor, b: &mut [Complex64], work: &mut Vec<Complex64>) {
        self.sym.solve_in_place_fast(f, b, work);
    }

    /// One step's admittance of every bank at order h, per unit.
    pub fn y_steps(&self, order: f64) -> Vec<Complex64> {
        let mut y = Vec::with_capacity(self.net.banks.len());
        self.y_steps_into(order, &mut y);
        y
    }

    /// [`Engine::y_steps`] into `y` (cleared first): no allocation once `y` has grown.
    pub fn y_steps_into(&self, order: f64, y: &mut Vec<Complex64>) {
        y.clear();
        let r = self.net.resistance;
        y.extend(self.net.banks.iter().map(|b| b.y_step_pu(order, r)));
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
        let (k, m) = (self.bank_col.len(), self.interest_col.len());
        let mut state = State {
            k,
            m,
            zss: Vec::with_capacity(k * k),
            zis: Vec::with_capacity(m * k),
            zii: Vec::with_capacity(m),
        };
        for &a in &self.bank_col {
            for &b in &self.bank_col {
                state.zss.push(z0[a * c + b]);
            }
        }
        for &p in &self.interest_col {
            for &b in &self.bank_col {
                state.zis.push(z0[p * c + b]);
            }
            state.zii.push(z0[p * c + p]);
        }
        Ok(PointSolution {
            order,
            state,
            y_step: self.y_steps(order),
        })
    }

    /// Z_ij (per unit) between any two buses with `steps` bank steps energized, by a full
    /// factorization (the reference the compensation method is checked against).
    pub fn impedance_pu(
        &self,
        order: f64,
        scenario: usize,
        steps: &[u32],
        i: usize,
        j: usize,
    ) -> Result<Complex64, SolveError> {
        let f = self.factor(order, scenario, steps)?;
        let mut rhs = vec![Complex64::new(0.0, 0.0); self.sym.n()];
        rhs[j] = Complex64::new(1.0, 0.0);
        self.solve(&f, &mut rhs);
        Ok(rhs[i])
    }
}

impl PointSolution {
    /// Z₀ at order `order` by Lagrange interpolation through the solutions `near` (at
    /// distinct orders, typically the four grid points around `order`), with the bank step
    /// admittances `y_step` evaluated exactly at `order`. Z₀ has no capacitor banks in it,
    /// so it varies slowly with h and a cubic through grid points 0.01 apart reproduces it to
    /// far better than the 0.001-order refinement needs (checked against exact solutions in
    /// the tests). Only bus of interest `p` is kept (m = 1).
    pub fn interpolate_bus(
        near: &[PointSolution],
        order: f64,
        y_step: Vec<Complex64>,
        p: usize,
    ) -> Self {
        let mut point = PointSolution {
            order,
            state: State::default(),
            y_step,
        };
        point.interpolate_bus_from(near, order, p);
        point
    }

    /// [`PointSolution::interpolate_bus`] into this point, reusing its buffers: Z₀ at
    /// `order` for bus of interest `p` from `near`; the bank step admittances `y_step` are
    /// left as they are (the caller sets them for `order`).
    pub fn interpolate_bus_from(&mut self, near: &[PointSolution], order: f64, p: usize) {
        let k = near[0].state.k;
        let state = &mut self.state;
        (state.k, state.m) = (k, 1);
        for v in [&mut state.zss, &mut state.zis, &mut state.zii] {
            v.clear();
        }
        state.zss.resize(k * k, Complex64::default());
        state.zis.resize(k, Complex64::default());
        state.zii.resize(1, Complex64::default());
        for (a, pa) in near.iter().enumerate() {
            let mut w = 1.0;
            for (b, pb) in near.iter().enumerate() {
                if a != b {
                    w *= (order - pb.order) / (pa.order - pb.order);
                }
            }
            for (x, y) in state.zss.iter_mut().zip(&pa.state.zss) {
                *x += y * w;
            }
            for (x, y) in state.zis.iter_mut().zip(&pa.state.zis[p * k..(p + 1) * k]) {
                *x += y * w;
            }
            state.zii[0] += pa.state.zii[p] * w;
        }
        self.order = order;
    }

    /// True when `other` holds the same Z₀ (bit for bit) at the same order.
    pub fn same_z0(&self, other: &PointSolution) -> bool {
        let bits = |v: &[Complex64]| {
            v.iter()
                .map(|z| (z.re.to_bits(), z.im.to_bits()))
                .collect::<Vec<_>>()
        };
        self.order.to_bits() == other.order.to_bits()
            && (self.state.k, self.state.m) == (other.state.k, other.state.m)
            && bits(&self.state.zss) == bits(&other.state.zss)
            && bits(&self.state.zis) == bits(&other.state.zis)
            && bits(&self.state.zii) == bits(&other.state.zii)
    }

    /// The bank step admittances of this point, per unit (to be set with
    /// [`Engine::y_steps_into`] after [`PointSolution::interpolate_bus_from`]).
    pub fn y_step_mut(&mut self) -> &mut Vec<Complex64> {
        &mut self.y_step
    }

    /// The same point restricted to bus of interest `p` alone (m = 1): what refining one
    /// curve needs.
    pub fn for_bus(&self, p: usize) -> PointSolution {
        let k = self.state.k;
        PointSolution {
            order: self.order,
            state: State {
                k,
                m: 1,
                zss: self.state.zss.clone(),
                zis: self.state.zis[p * k..(p + 1) * k].to_vec(),
                zii: vec![self.state.zii[p]],
            },
            y_step: self.y_step.clone(),
        }
    }

    /// Z₀ (no banks) at bus of interest `p`, per unit.
    pub fn z0_pu(&self, p: usize) -> Complex64 {
        self.state.zii[p]
    }

    /// Z₀ (no banks) at the bus of bank `b`, per unit: the driving-point impedance that the
    /// bank sees from the rest of the network.
    pub fn bank_bus_z0_pu(&self, b: usize) -> Complex64 {
        self.state.zss[b * self.state.k + b]
    }

    /// Driving-point impedances Z_ii (per unit) at every bus of interest with `steps[b]`
    /// steps of each bank; `None` if the combination is exactly singular.
    pub fn driving_point_pu(&self, steps: &[u32]) -> Option<Vec<Complex64>> {
        let mut out = vec![Complex64::new(0.0, 0.0); self.state.m];
        let mut scratch = Scratch::default();
        self.driving_point_into(steps, &mut scratch, &mut out)
            .then_some(out)
    }

    /// [`PointSolution::driving_point_pu`] into `out` (one value per bus of interest),
    /// applying the energized banks one by one (sequential Sherman–Morrison updates, equal
    /// to the Woodbury correction Z = Z₀ − Z₀P·(I + D·PᵀZ₀P)⁻¹·D·PᵀZ₀); false if singular.
    pub fn driving_point_into(
        &self,
        steps: &[u32],
        scratch: &mut Scratch,
        out: &mut [Complex64],
    ) -> bool {
        let plan = ComboPlan::new(&[steps]);
        self.evaluate(&plan, scratch, out)
    }

    /// Evaluates every combination of `plan`: `out` holds, slot after slot, the driving
    /// points at the buses of interest (slots × m values). False if any is singular.
    pub fn evaluate(&self, plan: &ComboPlan, scratch: &mut Scratch, out: &mut [Complex64]) -> bool {
        run_plan(
            plan,
            &self.state,
            &self.y_step,
            &mut scratch.levels,
            self.state.m,
            out,
        )
    }
}

impl PlanState for State {
    fn add_into(&self, a: usize, y: Complex64, to: &mut Self) -> bool {
        State::add_into(self, a, y, to)
    }
    fn leaf(&self, a: usize, y: Complex64, out: &mut [Complex64]) -> bool {
        State::leaf(self, a, y, out)
    }
    fn outputs(&self) -> &[Complex64] {
        &self.zii
    }
}
