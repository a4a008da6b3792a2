//! Transfer impedances for harmonic penetration: Z between every bus and a set of injection
//! buses, for any step combination, by the same depth-first rank-1 updates as the driving
//! points ([`super::ComboPlan`]). Per (order, scenario) Y₀(h) is factored once and the
//! columns at the bank buses and the injection buses are solved.

use num_complex::Complex64;

use super::plan::{PlanState, run_plan};
use super::{ComboPlan, Engine, SolveError, admissible};

/// Z₀ at one harmonic order and scenario: among bank buses (k×k), every bus to the bank
/// buses (n×k), bank buses to the injection buses (k×l), every bus to the injection buses
/// (n×l), per unit; and the bank step admittances.
#[derive(Debug, Clone)]
pub struct HarmonicPoint {
    pub order: f64,
    state: TState,
    y_step: Vec<Complex64>,
    /// Lean points keep only some rows of Z₀ to the injection buses (`state.zrj` holds
    /// those rows) and solve any other row on demand from the kept factorization.
    lean: Option<Lean>,
}

/// What a lean [`HarmonicPoint`] needs to solve a row of Z₀ on demand.
#[derive(Debug, Clone)]
struct Lean {
    sym: std::sync::Arc<crate::solve::Symbolic>,
    factor: crate::solve::Factor,
    /// The injection buses (columns).
    inject: Vec<usize>,
    /// Per bus, its row in `state.zrj` when kept.
    kept: Vec<Option<usize>>,
    /// Rows solved on demand, kept once solved (a row of Z₀ does not change with the
    /// configuration; the candidates of one configuration are mostly those of the next).
    solved: Vec<std::sync::OnceLock<Vec<Complex64>>>,
}

#[derive(Debug, Clone, Default)]
struct TState {
    k: usize,
    n: usize,
    l: usize,
    zss: Vec<Complex64>,
    zrs: Vec<Complex64>,
    zsj: Vec<Complex64>,
    zrj: Vec<Complex64>,
}

impl TState {
    /// Adds y at bank `a`'s bus (Sherman–Morrison, Z symmetric), keeping what later banks
    /// and the outputs need. False when exactly singular.
    fn add_into(&self, a: usize, y: Complex64, to: &mut TState) -> bool {
        let (k, n, l) = (self.k, self.n, self.l);
        let denom = 1.0 + y * self.zss[a * k + a];
        if !admissible(denom) {
            return false;
        }
        let f = y / denom;
        to.k = k;
        to.n = n;
        to.l = l;
        to.zss.resize(k * k, Complex64::default());
        to.zrs.resize(n * k, Complex64::default());
        to.zsj.resize(k * l, Complex64::default());
        to.zrj.resize(n * l, Complex64::default());
        for i in a + 1..k {
            let g = self.zss[i * k + a] * f;
            for j in a + 1..k {
                to.zss[i * k + j] = self.zss[i * k + j] - g * self.zss[a * k + j];
            }
            for c in 0..l {
                to.zsj[i * l + c] = self.zsj[i * l + c] - g * self.zsj[a * l + c];
            }
        }
        for r in 0..n {
            let g = self.zrs[r * k + a] * f;
            for j in a + 1..k {
                to.zrs[r * k + j] = self.zrs[r * k + j] - g * self.zss[a * k + j];
            }
            for c in 0..l {
                to.zrj[r * l + c] = self.zrj[r * l + c] - g * self.zsj[a * l + c];
            }
        }
        true
    }

    /// Every bus × injection bus after adding y at bank `a` (the last bank).
    fn leaf(&self, a: usize, y: Complex64, out: &mut [Complex64]) -> bool {
        let (k, n, l) = (self.k, self.n, self.l);
        let denom = 1.0 + y * self.zss[a * k + a];
        if !admissible(denom) {
            return false;
        }
        let f = y / denom;
        for r in 0..n {
            let g = self.zrs[r * k + a] * f;
            for c in 0..l {
                out[r * l + c] = self.zrj[r * l + c] - g * self.zsj[a * l + c];
            }
        }
        true
    }
}

/// Borrowed Z₀ blocks of a [`HarmonicPoint`] (see [`HarmonicPoint::z0_blocks`]).
#[derive(Debug, Clone, Copy)]
pub struct Z0Blocks<'a> {
    pub k: usize,
    pub n: usize,
    pub l: usize,
    pub bank_bank: &'a [Complex64],
    pub bus_bank: &'a [Complex64],
    pub bank_inj: &'a [Complex64],
    pub bus_inj: &'a [Complex64],
}

/// Reusable buffers for [`HarmonicPoint::evaluate`].
#[derive(Debug, Clone, Default)]
pub struct TransferScratch {
    levels: Vec<TState>,
}

impl Engine<'_> {
    /// Column `bus` of Z₀ = Y₀⁻¹ from its factorization, per unit, every bus.
    fn unit_column(&self, f: &crate::solve::Factor, bus: usize) -> Vec<Complex64> {
        let mut rhs = vec![Complex64::default(); self.network().buses.len()];
        rhs[bus] = Complex64::new(1.0, 0.0);
        self.solve(f, &mut rhs);
        rhs
    }

    /// Factors Y₀(h) in `scenario` and solves the columns at the bank buses: (factor, bank
    /// buses, their columns).
    #[allow(clippy::type_complexity)]
    fn bank_columns(
        &self,
        order: f64,
        scenario: usize,
    ) -> Result<(crate::solve::Factor, Vec<usize>, Vec<Vec<Complex64>>), SolveError> {
        let f = self.factor(order, scenario, &[])?;
        let banks: Vec<usize> = self.network().banks.iter().map(|b| b.bus).collect();
        let cols = banks.iter().map(|&b| self.unit_column(&f, b)).collect();
        Ok((f, banks, cols))
    }

    /// Factors Y₀(h) in `scenario` and solves the columns at the bank buses and at the
    /// injection buses `inject` (bus indices).
    pub fn harmonic_point(
        &self,
        order: f64,
        scenario: usize,
        inject: &[usize],
    ) -> Result<HarmonicPoint, SolveError> {
        let (f, banks, bank_cols) = self.bank_columns(order, scenario)?;
        let n = self.network().buses.len();
        let (k, l) = (banks.len(), inject.len());
        let column = |bus: usize| self.unit_column(&f, bus);
        let inj_cols: Vec<Vec<Complex64>> = inject.iter().map(|&b| column(b)).collect();
        let mut st = TState {
            k,
            n,
            l,
            zss: Vec::with_capacity(k * k),
            zrs: Vec::with_capacity(n * k),
            zsj: Vec::with_capacity(k * l),
            zrj: Vec::with_capacity(n * l),
        };
        for &a in &banks {
            for col in &bank_cols {
                st.zss.push(col[a]);
            }
            for col in &inj_cols {
                st.zsj.push(col[a]);
            }
        }
        for r in 0..n {
            for col in &bank_cols {
                st.zrs.push(col[r]);
            }
            for col in &inj_cols {
                st.zrj.push(col[r]);
            }
        }
        Ok(HarmonicPoint {
            order,
            state: st,
            y_step: self.y_steps(order),
            lean: None,
        })
    }

    /// Like [`Engine::harmonic_point`], keeping of Z₀ to the injection buses only the rows
    /// of the buses `keep`; the others are solved on demand
    /// ([`HarmonicPoint::bus_inj_row`]). Needs k + |keep| solves instead of k + l, and
    /// holds k·n + |keep|·l values instead of (k + l)·n. By symmetry of Y, row r of Z₀ at
    /// the injection buses is column r at those buses.
    pub fn harmonic_point_lean(
        &self,
        order: f64,
        scenario: usize,
        inject: &[usize],
        keep: &[usize],
        sym: &std::sync::Arc<crate::solve::Symbolic>,
    ) -> Result<HarmonicPoint, SolveError> {
        let (f, banks, bank_cols) = self.bank_columns(order, scenario)?;
        let n = self.network().buses.len();
        let (k, l) = (banks.len(), inject.len());
        let column = |bus: usize| self.unit_column(&f, bus);
        let mut st = TState {
            k,
            n,
            l,
            zss: Vec::with_capacity(k * k),
            zrs: Vec::with_capacity(n * k),
            zsj: Vec::with_capacity(k * l),
            zrj: Vec::with_capacity(keep.len() * l),
        };
        for &a in &banks {
            for col in &bank_cols {
                st.zss.push(col[a]);
            }
        }
        // Z₀[bank, c] = Z₀[c, bank]: the bank columns at the injection buses.
        for col in &bank_cols {
            st.zsj.extend(inject.iter().map(|&c| col[c]));
        }
        for r in 0..n {
            for col in &bank_cols {
                st.zrs.push(col[r]);
            }
        }
        let mut kept = vec![None; n];
        for (i, &q) in keep.iter().enumerate() {
            let col = column(q);
            st.zrj.extend(inject.iter().map(|&c| col[c]));
            kept[q] = Some(i);
        }
        Ok(HarmonicPoint {
            order,
            state: st,
            y_step: self.y_steps(order),
            lean: Some(Lean {
                sym: sym.clone(),
                factor: f,
                inject: inject.to_vec(),
                kept,
                solved: (0..n).map(|_| std::sync::OnceLock::new()).collect(),
            }),
        })
    }
}

impl HarmonicPoint {
    /// Number of buses (rows) and injection buses (columns) of each output block.
    pub fn shape(&self) -> (usize, usize) {
        (self.state.n, self.state.l)
    }

    /// One step's admittance of bank `b`, per unit.
    pub fn y_step(&self, b: usize) -> Complex64 {
        self.y_step[b]
    }

    /// Z₀ (no banks) blocks, per unit, row-major: among the bank buses (k×k), every bus to
    /// the bank buses (n×k), the bank buses to the injection buses (k×l) and every bus to
    /// the injection buses (n×l).
    pub fn z0_blocks(&self) -> Z0Blocks<'_> {
        let st = &self.state;
        Z0Blocks {
            k: st.k,
            n: st.n,
            l: st.l,
            bank_bank: &st.zss,
            bus_bank: &st.zrs,
            bank_inj: &st.zsj,
            bus_inj: &st.zrj,
        }
    }

    /// Z between every bus and every injection bus for each combination of `plan`: `out`
    /// holds slot after slot an n×l row-major block. False if any is singular. A lean point
    /// first solves its missing rows (n solves).
    pub fn evaluate(
        &self,
        plan: &ComboPlan,
        scratch: &mut TransferScratch,
        out: &mut [Complex64],
    ) -> bool {
        let block = self.state.n * self.state.l;
        let full;
        let state = if self.lean.is_some() {
            let mut st = self.state.clone();
            st.zrj.clear();
            let mut row = Vec::new();
            for r in 0..st.n {
                self.bus_inj_row_once(r, &mut row);
                st.zrj.extend_from_slice(&row);
            }
            full = st;
            &full
        } else {
            &self.state
        };
        run_plan(plan, state, &self.y_step, &mut scratch.levels, block, out)
    }

    /// Row r of Z₀ at the injection buses, into `out` (l values): kept, or solved from the
    /// factorization (lean points).
    pub fn bus_inj_row(&self, r: usize, out: &mut Vec<Complex64>) {
        let l = self.state.l;
        out.clear();
        match &self.lean {
            None => out.extend_from_slice(&self.state.zrj[r * l..(r + 1) * l]),
            Some(lean) => match lean.kept[r] {
                Some(i) => out.extend_from_slice(&self.state.zrj[i * l..(i + 1) * l]),
                None => {
                    let row = lean.solved[r].get_or_init(|| {
                        let mut x = vec![Complex64::default(); self.state.n];
                        x[r] = Complex64::new(1.0, 0.0);
                        let mut work = Vec::with_capacity(self.state.n);
                        lean.sym
                            .solve_in_place_fast(&lean.factor, &mut x, &mut work);
                        lean.inject.iter().map(|&c| x[c]).collect()
                    });
                    out.extend_from_slice(row);
                }
            },
        }
    }

    /// Like [`HarmonicPoint::bus_inj_row`] without keeping a solved row (for one pass over
    /// every bus).
    pub fn bus_inj_row_once(&self, r: usize, out: &mut Vec<Complex64>) {
        match &self.lean {
            Some(lean) if lean.kept[r].is_none() && lean.solved[r].get().is_none() => {
                let mut x = vec![Complex64::default(); self.state.n];
                x[r] = Complex64::new(1.0, 0.0);
                let mut work = Vec::with_capacity(self.state.n);
                lean.sym
                    .solve_in_place_fast(&lean.factor, &mut x, &mut work);
                out.clear();
                out.extend(lean.inject.iter().map(|&c| x[c]));
            }
            _ => self.bus_inj_row(r, out),
        }
    }

    /// V₀ = Z₀·I at every bus (per unit) for the currents `inj` injected at the injection
    /// buses (per unit, by column): one solve with the kept factorization on a lean point
    /// (Y₀·V₀ = I), the kept n×l block otherwise. `work` is scratch.
    pub fn z0_times(&self, inj: &[Complex64], out: &mut Vec<Complex64>, work: &mut Vec<Complex64>) {
        let (n, l) = (self.state.n, self.state.l);
        out.clear();
        match &self.lean {
            Some(lean) => {
                out.resize(n, Complex64::default());
                for (&bus, &i) in lean.inject.iter().zip(inj) {
                    out[bus] += i;
                }
                lean.sym.solve_in_place_fast(&lean.factor, out, work);
            }
            None => out.extend((0..n).map(|r| {
                self.state.zrj[r * l..(r + 1) * l]
                    .iter()
                    .zip(inj)
                    .map(|(z, i)| z * i)
                    .sum::<Complex64>()
            })),
        }
    }
}

impl PlanState for TState {
    fn add_into(&self, a: usize, y: Complex64, to: &mut Self) -> bool {
        TState::add_into(self, a, y, to)
    }
    fn leaf(&self, a: usize, y: Complex64, out: &mut [Complex64]) -> bool {
        TState::leaf(self, a, y, out)
    }
    fn outputs(&self) -> &[Complex64] {
        &self.zrj
    }
}
