//! The lumped circuit of one switching event, its phasor steady state, and the models its
//! time-domain solution by the trapezoidal rule uses (`stepper.rs`).
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
