//! The lumped circuit of one switching event and its time-domain solution by the
//! trapezoidal rule (companion models, nodal analysis, one factorization per time step).
//!
//! **Clarke α component.** The plant is balanced and the switch closes its three poles at
//! once, so the three-phase transient splits exactly into the Clarke components α, β and
//! γ (zero): α and β each obey the positive-sequence per-phase circuit, and γ is not
//! excited (balanced sources, a balanced pre-switch state and a balanced trapped charge
//! sum to zero in every phase). Phase a is α; phases b and c are the same waveforms at
//! closing angles 120° apart. The circuit here is that per-phase circuit, in per unit on
//! the network's bases, with time in seconds: an inductance is L = X/ω (pu·s), a
//! capacitance C = B/ω.
//!
//! **Every closing angle at once.** The circuit is linear with real coefficients, so a run
//! driven by the analytic source E·e^{jωt} (complex) carries two real runs in its real and
//! imaginary parts. The waveform of closing at phase φ of the sources is
//! x_φ(τ) = Re[e^{jφ}·W(τ)], τ the time since closing, and its worst absolute value over φ
//! is |W(τ)|: no search over closing instants is needed, and none is missed.
//!
//! Trapezoidal companion models (Dommel's method, textbook), per branch of current i from
//! node a to node b, u its voltage:
//! - series R-L with an EMF e on its reference side (u = v_a − v_b − e):
//!   i_n = G·u_n + G·(u_{n−1} + (2L/Δt − R)·i_{n−1}), G = 1/(R + 2L/Δt);
//! - capacitance: i_n = G_C·(u_n − u_{n−1}) − i_{n−1}, G_C = 2C/Δt;
//! - conductance: i_n = g·u_n; a current source draws Re[I·e^{jωt}] from a.

use num_complex::Complex64;

use crate::solve::{SingularPivot, Symbolic};

/// What a branch is.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Kind {
    /// Series R-L (pu, pu·s) with an EMF E·e^{jωt} (pu) between it and node `b`.
    Rl { r: f64, l: f64, emf: Complex64 },
    /// Capacitance, pu·s.
    C { c: f64 },
    /// Conductance, pu.
    G { g: f64 },
    /// A current I·e^{jωt} drawn from node `a` (pu).
    Current { i: Complex64 },
}

/// A branch from node `a` to node `b` (`None`: the reference).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Element {
    pub a: usize,
    pub b: Option<usize>,
    pub kind: Kind,
    /// True for the branches of the step that closes: absent before τ = 0.
    pub closing: bool,
}

/// A lumped per-phase circuit at fundamental frequency ω (rad/s).
#[derive(Debug, Clone)]
pub struct Circuit {
    pub nodes: usize,
    pub elements: Vec<Element>,
    pub w: f64,
}

/// Voltages (by node) and branch currents (by element) of one instant, per unit.
#[derive(Debug, Clone)]
pub struct State {
    pub v: Vec<Complex64>,
    pub i: Vec<Complex64>,
    /// Branch voltage u of each element (for an R-L, v_a − v_b − e).
    pub u: Vec<Complex64>,
}

/// The circuit's sinusoidal steady state at ω, as phasors (the analytic signal at τ = 0).
impl Circuit {
    fn edges(&self) -> Vec<(usize, usize)> {
        self.elements
            .iter()
            .filter_map(|e| e.b.map(|b| (e.a, b)))
            .collect()
    }

    /// Phasor steady state with the closing branches in (`closed`) or out. A node that
    /// only closing branches reach is held at 0 while they are out. Y·V = I with
    /// y_RL = 1/(R + jωL), y_C = jωC, an EMF's Norton current y·E into node a.
    pub fn steady_state(&self, closed: bool) -> Result<State, SingularPivot> {
        let sym = Symbolic::new(self.nodes, &self.edges());
        let mut y = sym.zeros();
        let mut rhs = vec![Complex64::default(); self.nodes];
        let mut reached = vec![false; self.nodes];
        let add = |y: &mut Vec<Complex64>, i: usize, j: usize, v: Complex64| {
            if let Some(k) = sym.slot(i, j) {
                y[k] += v;
            }
        };
        for e in self.elements.iter().filter(|e| closed || !e.closing) {
            let (adm, inj) = match e.kind {
                Kind::Rl { r, l, emf } => {
                    let adm = Complex64::new(r, self.w * l).inv();
                    (adm, adm * emf)
                }
                Kind::C { c } => (Complex64::new(0.0, self.w * c), Complex64::default()),
                Kind::G { g } => (Complex64::new(g, 0.0), Complex64::default()),
                Kind::Current { i } => (Complex64::default(), -i),
            };
            reached[e.a] = true;
            add(&mut y, e.a, e.a, adm);
            rhs[e.a] += inj;
            if let Some(b) = e.b {
                reached[b] = true;
                add(&mut y, b, b, adm);
                add(&mut y, e.a, b, -adm);
                rhs[b] -= inj;
            }
        }
        for (n, _) in reached.iter().enumerate().filter(|(_, r)| !**r) {
            add(&mut y, n, n, Complex64::new(1.0, 0.0));
        }
        let f = sym.factor(y)?;
        let mut v = rhs;
        sym.solve_in_place(&f, &mut v, &mut Vec::new());
        let mut state = State {
            i: vec![Complex64::default(); self.elements.len()],
            u: vec![Complex64::default(); self.elements.len()],
            v,
        };
        for (k, e) in self.elements.iter().enumerate() {
            if e.closing && !closed {
                continue;
            }
            let vab = state.v[e.a] - e.b.map_or(Complex64::default(), |b| state.v[b]);
            let (u, i) = match e.kind {
                Kind::Rl { r, l, emf } => {
                    let u = vab - emf;
                    (u, u / Complex64::new(r, self.w * l))
                }
                Kind::C { c } => (vab, vab * Complex64::new(0.0, self.w * c)),
                Kind::G { g } => (vab, vab * g),
                Kind::Current { i } => (vab, i),
            };
            state.u[k] = u;
            state.i[k] = i;
        }
        Ok(state)
    }
}

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
    pub fn new(circuit: &'a Circuit, dt: f64) -> Result<Self, SingularPivot> {
        let sym = Symbolic::new(circuit.nodes, &circuit.edges());
        let mut m = sym.zeros();
        let mut add = |i: usize, j: usize, v: f64| {
            if let Some(k) = sym.slot(i, j) {
                m[k] += v;
            }
        };
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
        };
        for (k, e) in circuit.elements.iter().enumerate() {
            let (k32, a) = (k as u32, e.a as u32);
            let b = e.b.map_or(GROUND, |b| b as u32);
            let end = usize::from(e.b.is_some());
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
                    st.cap[end].push(Slot {
                        k: k32,
                        a,
                        b,
                        value: g,
                    });
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
            add(e.a, e.a, ge);
            if let Some(b) = e.b {
                add(b, b, ge);
                add(e.a, b, -ge);
            }
        }
        // The matrix is real, so its complex factors are too (imaginary parts exactly 0).
        st.factor = sym.factor(m)?.real_parts(circuit.nodes);
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
        let on = if sources { 1.0 } else { 0.0 };
        let mut n = 0usize;
        let mut drive;
        loop {
            n += 1;
            if n == 1 && closing {
                drive = Complex64::default();
                for half in [0.5, 1.0] {
                    drive = Complex64::from_polar(on, c.w * (t0 + self.dt * half));
                    self.step(&mut state, drive, true, &mut hist, &mut work);
                }
            } else {
                drive = Complex64::from_polar(on, c.w * (t0 + self.dt * n as f64));
                self.step(&mut state, drive, false, &mut hist, &mut work);
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
        for s in &self.current {
            inject(rhs, s.a, s.b, -s.value * drive);
        }
        self.sym.solve_real_in_place(&self.factor, rhs, work);
        update(&self.rl, rhs, hist, u, i);
        for (s, _, e) in &self.rl_emf {
            let k = s.k as usize;
            u[k] = across(rhs, s.a, s.b) - e * drive;
            i[k] = s.g * u[k] + hist[k];
        }
        update(&self.cap, rhs, hist, u, i);
    }
}
