//! The time-domain solution of a [`Circuit`] by the trapezoidal rule: companion models,
//! nodal analysis, one factorization per time step (see `circuit.rs` for the models).

use num_complex::Complex64;

use super::circuit::{Circuit, Kind, State};
use crate::solve::{SingularPivot, Symbolic};

/// An R-L branch's step coefficients: G = 1/(R + 2L/Δt), `trap` = 2L/Δt − R,
/// `euler` = G·2L/Δt.
#[derive(Debug, Clone, Copy)]
struct RlSlot {
    k: u32,
    a: u32,
    b: u32,
    g: f64,
    trap: f64,
    euler: f64,
}

/// A capacitance's (G_C = 2C/Δt), a conductance's (g) or a current source's branch.
#[derive(Debug, Clone, Copy)]
struct Slot<T> {
    k: u32,
    a: u32,
    b: u32,
    value: T,
}

/// Branches of one kind: `[to the reference, between two nodes]`. Kept apart so that the
/// many shunt branches add into one node only (a spare slot for the reference would chain
/// every one of them through the same memory cell).
type ByEnd<T> = [Vec<T>; 2];

/// A branch with history: its element, its nodes and its companion conductance.
trait Branch {
    /// (element, node a, node b or `GROUND`).
    fn ends(&self) -> (usize, usize, u32);
    fn g(&self) -> f64;
}

impl Branch for RlSlot {
    fn ends(&self) -> (usize, usize, u32) {
        (self.k as usize, self.a as usize, self.b)
    }
    fn g(&self) -> f64 {
        self.g
    }
}

impl Branch for Slot<f64> {
    fn ends(&self) -> (usize, usize, u32) {
        (self.k as usize, self.a as usize, self.b)
    }
    fn g(&self) -> f64 {
        self.value
    }
}

/// Each branch's history current h = `history(branch)` into `hist`, taken from its node a
/// and added at its node b (shunt branches first, touching one node only).
#[inline]
fn stamp_history<T: Branch>(
    slots: &ByEnd<T>,
    history: impl Fn(&T) -> Complex64,
    hist: &mut [Complex64],
    rhs: &mut [Complex64],
) {
    for s in &slots[0] {
        let (k, a, _) = s.ends();
        let h = history(s);
        hist[k] = h;
        rhs[a] -= h;
    }
    for s in &slots[1] {
        let (k, a, b) = s.ends();
        let h = history(s);
        hist[k] = h;
        rhs[a] -= h;
        rhs[b as usize] += h;
    }
}

/// Each branch's voltage u = v_a − v_b and current i = G·u + h after the solve.
#[inline]
fn update<T: Branch>(
    slots: &ByEnd<T>,
    v: &[Complex64],
    hist: &[Complex64],
    u: &mut [Complex64],
    i: &mut [Complex64],
) {
    for s in &slots[0] {
        let (k, a, _) = s.ends();
        u[k] = v[a];
        i[k] = s.g() * u[k] + hist[k];
    }
    for s in &slots[1] {
        let (k, a, b) = s.ends();
        u[k] = v[a] - v[b as usize];
        i[k] = s.g() * u[k] + hist[k];
    }
}

/// The post-closing circuit factored for one time step Δt.
///
/// The elements are kept by kind, each with its coefficients for Δt worked out once:
/// the R-L branches (those with an EMF apart, with G·E and E), the capacitances, the
/// current sources and the conductances. Conductances carry no history and current
/// sources none either, so a step updates only the R-L and capacitor branches; the others'
/// branch values are brought up to date when [`Stepper::run`] returns.
pub struct Stepper<'a> {
    circuit: &'a Circuit,
    pub dt: f64,
    sym: Symbolic,
    /// 1/D and L of the companion conductance matrix, which is real (see
    /// [`Symbolic::solve_real_in_place`]).
    factor: Vec<f64>,
    rl: ByEnd<RlSlot>,
    /// R-L branches with an EMF: (coefficients, G·E, E).
    rl_emf: Vec<(RlSlot, Complex64, Complex64)>,
    cap: ByEnd<Slot<f64>>,
    cond: Vec<Slot<f64>>,
    current: Vec<Slot<Complex64>>,
    /// Conductances in series with a capacitance to the reference through a node of their
    /// own (cable charging behind its surge impedance), eliminated from the solve.
    series: Vec<SeriesGc>,
    /// The nodes solved (all but the series pairs' inner nodes), by position in the
    /// factored system.
    solved: Vec<usize>,
}

/// A conductance G from node x to an inner node m that only a capacitance (G_C = 2C/Δt)
/// to the reference also touches. Per step the capacitance is G_C in parallel with its
/// history current h, so KCL at m gives v_m = (G·v_x − h)/(G + G_C), and node x sees
/// G·G_C/(G + G_C) to the reference and a current G/(G + G_C)·h drawn (series and
/// parallel conductances, exact): m leaves the factored system.
#[derive(Debug, Clone, Copy)]
struct SeriesGc {
    /// The capacitance's element.
    k: u32,
    x: u32,
    m: u32,
    g: f64,
    g_c: f64,
}

/// No node: the reference.
const GROUND: u32 = u32::MAX;

/// v_a − v_b of a branch (v = 0 at the reference).
#[inline]
fn across(v: &[Complex64], a: u32, b: u32) -> Complex64 {
    if b == GROUND {
        v[a as usize]
    } else {
        v[a as usize] - v[b as usize]
    }
}

/// Adds `x` into node a and takes it from node b (nothing at the reference).
#[inline]
fn inject(rhs: &mut [Complex64], a: u32, b: u32, x: Complex64) {
    rhs[a as usize] += x;
    if b != GROUND {
        rhs[b as usize] -= x;
    }
}

impl<'a> Stepper<'a> {
    /// Factors the companion conductance matrix of `circuit` (closing branches in) for
    /// step `dt` seconds.
    // Long: the companion-model coefficients of every element kind, worked out once against one
    // factorization.
    pub fn new(circuit: &'a Circuit, dt: f64) -> Result<Self, SingularPivot> {
        let nodes = circuit.nodes;
        // The series G-C pairs: an inner node touched by exactly one conductance and one
        // capacitance to the reference, neither of them closing.
        let mut touching: Vec<Vec<usize>> = vec![Vec::new(); nodes];
        for (k, e) in circuit.elements.iter().enumerate() {
            touching[e.a].push(k);
            if let Some(b) = e.b {
                touching[b].push(k);
            }
        }
        let mut pair_of = vec![None; circuit.elements.len()];
        let mut inner = vec![false; nodes];
        let mut series = Vec::new();
        for (m, ks) in touching.iter().enumerate() {
            let [k1, k2] = ks[..] else { continue };
            let pick = |kg: usize, kc: usize| {
                let (eg, ec) = (&circuit.elements[kg], &circuit.elements[kc]);
                let x = match (eg.a, eg.b) {
                    (a, Some(b)) if b == m && a != m => a,
                    (a, Some(b)) if a == m && b != m => b,
                    _ => return None,
                };
                match (eg.kind, ec.kind) {
                    (Kind::G { g }, Kind::C { c })
                        if ec.a == m && ec.b.is_none() && !eg.closing && !ec.closing =>
                    {
                        Some((kc, x, g, 2.0 * c / dt))
                    }
                    _ => None,
                }
            };
            if let Some((kc, x, g, g_c)) = pick(k1, k2).or_else(|| pick(k2, k1)) {
                if inner[x] {
                    continue;
                }
                inner[m] = true;
                pair_of[kc] = Some(series.len());
                pair_of[if kc == k1 { k2 } else { k1 }] = Some(series.len());
                series.push(SeriesGc {
                    k: kc as u32,
                    x: x as u32,
                    m: m as u32,
                    g,
                    g_c,
                });
            }
        }
        let solved: Vec<usize> = (0..nodes).filter(|&n| !inner[n]).collect();
        let mut at = vec![usize::MAX; nodes];
        for (i, &n) in solved.iter().enumerate() {
            at[n] = i;
        }
        let edges: Vec<(usize, usize)> = circuit
            .elements
            .iter()
            .enumerate()
            .filter(|(k, _)| pair_of[*k].is_none())
            .filter_map(|(_, e)| e.b.map(|b| (at[e.a], at[b])))
            .collect();
        let sym = Symbolic::new(solved.len(), &edges);
        let mut m = sym.zeros();
        let mut add = |i: usize, j: usize, v: f64| {
            if let Some(k) = sym.slot(at[i], at[j]) {
                m[k] += v;
            }
        };
        for p in &series {
            let (g, g_c) = (p.g, p.g_c);
            add(p.x as usize, p.x as usize, g * g_c / (g + g_c));
        }
        let mut st = Stepper {
            circuit,
            dt,
            sym: sym.clone(),
            factor: Vec::new(),
            rl: [Vec::new(), Vec::new()],
            rl_emf: Vec::new(),
            cap: [Vec::new(), Vec::new()],
            cond: Vec::new(),
            current: Vec::new(),
            series,
            solved,
        };
        for (k, e) in circuit.elements.iter().enumerate() {
            let (k32, a) = (k as u32, e.a as u32);
            let b = e.b.map_or(GROUND, |b| b as u32);
            let end = usize::from(e.b.is_some());
            let paired = pair_of[k].is_some();
            let ge = match e.kind {
                Kind::Rl { r, l, emf } => {
                    let g = 1.0 / (r + 2.0 * l / dt);
                    let slot = RlSlot {
                        k: k32,
                        a,
                        b,
                        g,
                        trap: 2.0 * l / dt - r,
                        euler: g * (2.0 * l / dt),
                    };
                    if emf == Complex64::default() {
                        st.rl[end].push(slot);
                    } else {
                        st.rl_emf.push((slot, g * emf, emf));
                    }
                    g
                }
                Kind::C { c } => {
                    let g = 2.0 * c / dt;
                    if !paired {
                        st.cap[end].push(Slot {
                            k: k32,
                            a,
                            b,
                            value: g,
                        });
                    }
                    g
                }
                Kind::G { g } => {
                    st.cond.push(Slot {
                        k: k32,
                        a,
                        b,
                        value: g,
                    });
                    g
                }
                Kind::Current { i } => {
                    st.current.push(Slot {
                        k: k32,
                        a,
                        b,
                        value: i,
                    });
                    0.0
                }
            };
            if paired {
                continue;
            }
            add(e.a, e.a, ge);
            if let Some(b) = e.b {
                add(b, b, ge);
                add(e.a, b, -ge);
            }
        }
        // The matrix is real, so its complex factors are too (imaginary parts exactly 0).
        st.factor = sym.factor(m)?.real_parts(st.solved.len());
        Ok(st)
    }

    /// Integrates from `state` at time `t0` (s since closing) with the sources on
    /// (`sources`: E·e^{jωτ}) or off, calling `observe(n, state)` after every step
    /// n = 1, 2, … (at τ = t0 + n·Δt) until it returns false; returns the last state.
    /// `observe` sees every node voltage and the R-L and capacitor branches of the step;
    /// the conductances' and current sources' branch values are those of the returned
    /// state only.
    ///
    /// With `closing`, the first step, across the closing, is taken as two backward-Euler
    /// half steps: they need only the states (inductor currents, capacitor voltages), which
    /// stay continuous when the switch closes, while the node voltages jump; and a
    /// backward-Euler step of Δt/2 has exactly the trapezoidal companion conductances of
    /// Δt, so the same factorization serves (the critical damping adjustment of EMT
    /// programs).
    pub fn run(
        &self,
        mut state: State,
        t0: f64,
        sources: bool,
        closing: bool,
        mut observe: impl FnMut(usize, &State) -> bool,
    ) -> State {
        let c = self.circuit;
        let mut hist = vec![Complex64::default(); c.elements.len()];
        let mut work = Vec::with_capacity(c.nodes);
        let mut reduced = Vec::with_capacity(self.solved.len());
        let on = if sources { 1.0 } else { 0.0 };
        let mut n = 0usize;
        let mut drive;
        loop {
            n += 1;
            if n == 1 && closing {
                drive = Complex64::default();
                for half in [0.5, 1.0] {
                    drive = Complex64::from_polar(on, c.w * (t0 + self.dt * half));
                    self.step(&mut state, drive, true, &mut hist, &mut reduced, &mut work);
                }
            } else {
                drive = Complex64::from_polar(on, c.w * (t0 + self.dt * n as f64));
                self.step(&mut state, drive, false, &mut hist, &mut reduced, &mut work);
            }
            if !observe(n, &state) {
                break;
            }
        }
        for s in &self.cond {
            let vab = across(&state.v, s.a, s.b);
            state.u[s.k as usize] = vab;
            state.i[s.k as usize] = s.value * vab;
        }
        for s in &self.current {
            state.u[s.k as usize] = across(&state.v, s.a, s.b);
            state.i[s.k as usize] = s.value * drive;
        }
        state
    }

    /// One step: trapezoidal over Δt, or (`euler`) backward Euler over Δt/2, with the
    /// sources at `drive` = e^{jωτ} of the step's end (0 when off). The node voltages are
    /// solved in place of `state.v`.
    fn step(
        &self,
        state: &mut State,
        drive: Complex64,
        euler: bool,
        hist: &mut [Complex64],
        reduced: &mut Vec<Complex64>,
        work: &mut Vec<Complex64>,
    ) {
        let zero = Complex64::default();
        let State { v: rhs, i, u } = state;
        rhs.iter_mut().for_each(|x| *x = zero);
        // Backward Euler over h = Δt/2: i_n·(R + L/h) = u_n + (L/h)·i_{n−1}.
        let rl_hist = |s: &RlSlot, i: &[Complex64], u: &[Complex64]| {
            let k = s.k as usize;
            if euler {
                s.euler * i[k]
            } else {
                s.g * (u[k] + s.trap * i[k])
            }
        };
        stamp_history(&self.rl, |s| rl_hist(s, i, u), hist, rhs);
        for (s, ge, _) in &self.rl_emf {
            let h = rl_hist(s, i, u);
            hist[s.k as usize] = h;
            inject(rhs, s.a, s.b, ge * drive - h);
        }
        // Backward Euler: i_n = (C/h)·(u_n − u_{n−1}).
        let c_hist = |s: &Slot<f64>, i: &[Complex64], u: &[Complex64]| {
            let k = s.k as usize;
            if euler {
                -s.value * u[k]
            } else {
                -s.value * u[k] - i[k]
            }
        };
        stamp_history(&self.cap, |s| c_hist(s, i, u), hist, rhs);
        for p in &self.series {
            let k = p.k as usize;
            let h = if euler {
                -p.g_c * u[k]
            } else {
                -p.g_c * u[k] - i[k]
            };
            hist[k] = h;
            rhs[p.x as usize] -= h * (p.g / (p.g + p.g_c));
        }
        for s in &self.current {
            inject(rhs, s.a, s.b, -s.value * drive);
        }
        reduced.clear();
        reduced.extend(self.solved.iter().map(|&n| rhs[n]));
        self.sym.solve_real_in_place(&self.factor, reduced, work);
        for (&n, &v) in self.solved.iter().zip(reduced.iter()) {
            rhs[n] = v;
        }
        for p in &self.series {
            let k = p.k as usize;
            let v_m = (p.g * rhs[p.x as usize] - hist[k]) / (p.g + p.g_c);
            rhs[p.m as usize] = v_m;
            u[k] = v_m;
            i[k] = p.g_c * v_m + hist[k];
        }
        update(&self.rl, rhs, hist, u, i);
        for (s, _, e) in &self.rl_emf {
            let k = s.k as usize;
            u[k] = across(rhs, s.a, s.b) - e * drive;
            i[k] = s.g * u[k] + hist[k];
        }
        update(&self.cap, rhs, hist, u, i);
    }
}
