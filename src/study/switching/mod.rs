//! Switching transients by time-domain simulation: energizing every step of every bank in
//! every scenario, isolated and back-to-back, at the worst closing instant, with the
//! closed formulas of [`crate::study::transient`] beside each event as the hand check.
//!
//! The circuit of an event ([`setup`]) is the plant's lumped network at its fundamental
//! parameters: source EMFs behind R-L, transformers and cables as R-L (cable charging as
//! capacitance), every energized capacitor step with its reactor and inrush inductance,
//! and the loads of the operating point of the configuration before closing (linear loads
//! as the parallel R-L that draws their P and Q at the solved voltage, motors as an EMF
//! behind their subtransient R + jX'', converters as their fundamental current), so that
//! the state before closing is the load flow's. See `circuit.rs` for the models and
//! `stepper.rs` for the integration.

mod circuit;
mod events;
pub mod measure;
mod run;
mod stepper;

pub use circuit::{Circuit, Element, Kind, State};
pub use events::{EventSpec, Setup, events, setup, step_values};
pub use run::{Inputs, formula, run};
pub use stepper::Stepper;

use num_complex::Complex64;
use serde::Serialize;

use crate::study::transient::{Inrush, Regime};

/// Time steps per period of the fastest capacitor loop of an event (the closing step's
/// own L-C and the energized steps on its bus) in the first cycle, where the peaks are
/// read: Δt = 1/(60·f_max), and at most 1/400 of the fundamental period.
pub const STEPS_PER_PERIOD: f64 = 60.0;
/// The same for the ring-down stage, which reads only the decay of the envelope.
pub const RING_DOWN_STEPS_PER_PERIOD: f64 = 20.0;
/// Fundamental cycles simulated at the fine step, where the peaks are read (the largest
/// inrush and overvoltages come within the first cycle of a closing).
pub const PEAK_CYCLES: f64 = 1.0;
/// Most fine steps (the fine step is lengthened to keep within it). Under the fuzzer
/// (`--cfg fuzzing`, whose instrumentation slows these loops about seventyfold) far fewer,
/// so that every input stays within its time limit: the code paths are the same.
#[cfg(not(fuzzing))]
pub const MAX_FINE_STEPS: usize = 100_000;
#[cfg(fuzzing)]
pub const MAX_FINE_STEPS: usize = 1_000;
/// The shortest simulated window, fundamental cycles.
pub const MIN_CYCLES: f64 = 5.0;
/// The longest simulated window, fundamental cycles, and at most [`MAX_STEPS`] steps.
pub const MAX_CYCLES: f64 = 60.0;
/// Most time steps of the ring-down stage (fewer under the fuzzer, as above).
#[cfg(not(fuzzing))]
pub const MAX_STEPS: usize = 100_000;
#[cfg(fuzzing)]
pub const MAX_STEPS: usize = 1_000;
/// The ring-down ends when the transient stays below this fraction of its peak.
pub const RING_DOWN_FRACTION: f64 = 0.05;

/// How the step closes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Case {
    /// No other capacitor on the bus: the step rings against the supply.
    Isolated,
    /// Other steps on the same bus discharge into the closing step.
    BackToBack,
}

impl Case {
    /// The contract's word for the case (`--transients-csv`).
    pub fn label(self) -> &'static str {
        match self {
            Case::Isolated => "isolated",
            Case::BackToBack => "back-to-back",
        }
    }
}

/// The peak voltage at another bank's bus during an event.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RemotePeak {
    pub bank: String,
    pub bus: String,
    /// Peak phase voltage, per unit of that bus's nominal peak phase voltage.
    pub peak_pu: f64,
}

/// One energizing event and what the simulation found.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SwitchingEvent {
    pub scenario: String,
    pub bank: String,
    pub bus: String,
    /// The step energized (1-based).
    pub step: u32,
    pub case: Case,
    /// The configuration before closing (label).
    pub before: String,
    /// Trapped charge on the closing step, per unit of nominal peak (worst polarity).
    pub trapped_charge_pu: f64,
    /// Peak inrush current through the closing step, A.
    pub peak_a: f64,
    /// Dominant ringing frequency of the inrush, Hz: the largest oscillating mode of the
    /// matrix-pencil fit of its transient (`None`: no oscillation fitted).
    pub frequency_hz: Option<f64>,
    /// That mode's damping ratio ζ = −Re(s)/|s|.
    pub zeta: Option<f64>,
    /// Every oscillating mode with at least 5 % of the largest one's amplitude, largest
    /// first (a multi-mode event lists several).
    pub modes: Vec<measure::RingingMode>,
    /// Under-damped when the largest component of the fit oscillates, over-damped when it
    /// is a real pole.
    pub regime: Regime,
    /// Peak phase voltage at the bank's bus, per unit of nominal peak.
    pub bus_peak_pu: f64,
    /// Peak voltage across the closing step's capacitor, per unit of the bus's nominal
    /// peak phase voltage.
    pub capacitor_peak_pu: f64,
    /// The same against the capacitor's rated peak phase voltage.
    pub capacitor_peak_rated: f64,
    /// Peak voltage at every other bank's bus.
    pub remote: Vec<RemotePeak>,
    /// Time for the inrush transient to fall for good below 5 % of its peak, ms (`None`:
    /// not within the simulated window).
    pub ring_down_ms: Option<f64>,
    pub simulated_ms: f64,
    pub step_us: f64,
    /// Closing instant of the largest inrush: degrees of the bus's phase voltage
    /// v = V̂·sin θ (90° = closing at its positive peak).
    pub closing_deg: f64,
    /// The closed formulas (hand check); `None` where they do not apply
    /// ([`run::formula_applies`]): said "not applicable".
    pub formula: Option<Inrush>,
    /// The switching device's inrush limit, A peak, when given.
    pub inrush_limit_a: Option<f64>,
    pub inrush_exceeds: bool,
    /// Inrush inductance per step (µH) that brings the peak under the limit, when
    /// exceeded (`None` when none up to 10 mH does).
    pub needed_inrush_uh: Option<f64>,
    /// The capacitor's peak exceeds the limit set's transient capability
    /// ([`crate::study::duty::transient_capability`]) of its rated peak.
    pub overvoltage_exceeds: bool,
}

impl SwitchingEvent {
    /// True when a limit is exceeded (the `--strict` criterion).
    pub fn flagged(&self) -> bool {
        self.inrush_exceeds || self.overvoltage_exceeds
    }
}

/// The worst event of a bank (largest inrush) as waveforms for a chart.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Waveform {
    pub bank: String,
    pub scenario: String,
    pub step: u32,
    pub case: Case,
    pub time_ms: Vec<f64>,
    /// Inrush current through the closing step, A (instantaneous).
    pub current_a: Vec<f64>,
    /// Bus phase voltage, per unit of nominal peak.
    pub bus_pu: Vec<f64>,
    /// Capacitor voltage of the closing step, per unit of the bus's nominal peak.
    pub capacitor_pu: Vec<f64>,
    /// The formula's peak inrush, A.
    pub formula_peak_a: Option<f64>,
}

/// Every event of the plant.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct SwitchingStudy {
    pub events: Vec<SwitchingEvent>,
    pub waveforms: Vec<Waveform>,
    /// Events that could not be simulated, each a sentence.
    pub failures: Vec<String>,
}

/// What one run of an event gave, per unit.
pub struct Sim {
    /// The fine step of the first stage, s (the step of `transient` and `channels`).
    pub dt: f64,
    /// Steps of both stages.
    pub steps: usize,
    /// Time simulated, s.
    pub simulated_s: f64,
    /// Time for the inrush to fall for good below 5 % of its peak, s (when it did).
    pub ring_down_s: Option<f64>,
    /// Worst over closing instants, refined between samples.
    pub peak_i_pu: f64,
    pub bus_peak_pu: f64,
    pub cap_peak_pu: f64,
    pub remote_peak_pu: Vec<f64>,
    /// The inrush's transient component at its worst closing instant over the first stage,
    /// per unit.
    pub transient: Vec<f64>,
    /// The run ended because the transient had decayed.
    pub decayed: bool,
    /// Closing angle φ of the sources (rad) and trapped-charge sign of the largest inrush.
    pub phi: f64,
    pub q_sign: f64,
    /// With `capture`: the worst-instant waveforms (current, bus and capacitor voltage).
    pub channels: Option<[Vec<f64>; 3]>,
}

/// What an event reads at every sample: the closing step's current, the voltage at each
/// watched bus (the bank's, then the remote banks'), the closing capacitor's voltage.
struct Trace<T> {
    i: Vec<T>,
    v: Vec<Vec<T>>,
    c: Vec<T>,
}

impl<T> Trace<T> {
    fn new(buses: usize) -> Self {
        Trace {
            i: Vec::new(),
            v: (0..buses).map(|_| Vec::new()).collect(),
            c: Vec::new(),
        }
    }

    /// Appends the state's values, each mapped by `f` (the complex run keeps them, the
    /// trapped-charge run keeps their real part).
    fn push(&mut self, s: &Setup, watch: &[usize], st: &State, f: impl Fn(Complex64) -> T) {
        self.i.push(f(st.i[s.closing_rl]));
        for (k, &bus) in watch.iter().enumerate() {
            self.v[k].push(f(st.v[bus]));
        }
        self.c.push(f(st.u[s.closing_c]));
    }
}

/// Runs one event: the analytic (complex) run with the sources, and, with a trapped charge
/// `q`, a run from a unit capacitor voltage without sources; the worst closing instant of
/// each quantity is max over τ of |W(τ)| + |q|·|y(τ)|.
///
/// Two stages: the first [`PEAK_CYCLES`] cycles at the fine step (every capacitance at the
/// bus resolved: the largest peaks come there), then the coarse step (the bank's loops
/// resolved) until the inrush has rung down, for the ring-down time; each figure's peak is
/// the larger of the two stages'.
// Long: the two stages of one simulation share the stepper and the running peaks.
pub fn simulate(s: &Setup, q: f64, capture: bool) -> Result<Sim, crate::solve::SingularPivot> {
    let c = &s.circuit;
    let period = 2.0 * std::f64::consts::PI / c.w;
    let fine = Stepper::new(c, s.dt_fine)?;
    let coarse = Stepper::new(c, s.dt)?;
    let pre = c.steady_state(false)?;
    let post = c.steady_state(true)?;
    let i_post = post.i[s.closing_rl];
    let n_fine = ((PEAK_CYCLES * period / s.dt_fine).ceil() as usize).clamp(1, 4 * MAX_FINE_STEPS);
    let t_fine = n_fine as f64 * s.dt_fine;
    let n_min = (((MIN_CYCLES * period - t_fine) / s.dt).ceil().max(1.0) as usize).min(MAX_STEPS);
    let n_max = (((MAX_CYCLES * period - t_fine) / s.dt).ceil() as usize)
        .min(MAX_STEPS)
        .max(n_min);
    let quiet = (period / s.dt).ceil() as usize;
    let watch: Vec<usize> = std::iter::once(s.bus)
        .chain(s.remote.iter().map(|r| r.1))
        .collect();
    let mut w: Trace<Complex64> = Trace::new(watch.len());
    // The inrush's transient envelope |W − I_post·e^{jωτ}| over both stages, with times.
    let mut env_tr: Vec<(f64, f64)> = Vec::with_capacity(n_fine + n_min);
    let tr = |i: Complex64, tau: f64| (i - i_post * Complex64::from_polar(1.0, c.w * tau)).norm();
    let mid = fine.run(pre.clone(), 0.0, true, true, |n, st| {
        let i = st.i[s.closing_rl];
        w.push(s, &watch, st, |x| x);
        let tau = n as f64 * s.dt_fine;
        env_tr.push((tau, tr(i, tau)));
        n < n_fine
    });
    let mut top = env_tr.iter().fold(0.0f64, |t, e| t.max(e.1));
    let mut last_coarse = 0usize;
    let mut decayed = false;
    let mut n_coarse = 0usize;
    // The ring-down stage's values, for the peaks that come later (a slowly decaying
    // detuned ring beating with the fundamental).
    let mut cw: Trace<Complex64> = Trace::new(watch.len());
    coarse.run(mid, t_fine, true, false, |n, st| {
        let tau = t_fine + n as f64 * s.dt;
        cw.push(s, &watch, st, |x| x);
        let e = tr(st.i[s.closing_rl], tau);
        env_tr.push((tau, e));
        top = top.max(e);
        if e >= RING_DOWN_FRACTION * top {
            last_coarse = n;
        }
        n_coarse = n;
        if n >= n_min && n - last_coarse >= quiet {
            decayed = true;
            return false;
        }
        n < n_max
    });
    // The trapped-charge runs: a unit voltage on the closing capacitor, sources off, over
    // the same two stages.
    let mut y: Trace<f64> = Trace::new(watch.len());
    let mut cy: Trace<f64> = Trace::new(watch.len());
    if q != 0.0 {
        let mut init = State {
            v: vec![Complex64::default(); c.nodes],
            i: vec![Complex64::default(); c.elements.len()],
            u: vec![Complex64::default(); c.elements.len()],
        };
        init.u[s.closing_c] = Complex64::new(1.0, 0.0);
        let mid = fine.run(init, 0.0, false, true, |n, st| {
            y.push(s, &watch, st, |x| x.re);
            n < n_fine
        });
        let mut k = n_fine;
        coarse.run(mid, t_fine, false, false, |n, st| {
            if let Some(e) = env_tr.get_mut(k) {
                e.1 += q.abs() * st.i[s.closing_rl].re.abs();
            }
            cy.push(s, &watch, st, |x| x.re);
            k += 1;
            n < n_coarse
        });
        for (e, y) in env_tr.iter_mut().zip(&y.i) {
            e.1 += q.abs() * y.abs();
        }
    }
    let ring_down = {
        let top = env_tr.iter().fold(0.0f64, |m, e| m.max(e.1));
        env_tr
            .iter()
            .rev()
            .find(|e| e.1 >= RING_DOWN_FRACTION * top)
            .map_or(0.0, |e| e.0)
    };
    let qa = q.abs();
    let envelope = |wv: &[Complex64], yv: &[f64]| -> Vec<f64> {
        wv.iter()
            .enumerate()
            .map(|(n, x)| x.norm() + qa * yv.get(n).map_or(0.0, |v| v.abs()))
            .collect()
    };
    // Each figure's peak over both stages (each refined between its samples).
    let both = |a: &[Complex64], b: &[f64], ca: &[Complex64], cb: &[f64]| {
        measure::refined_peak(&envelope(a, b))
            .0
            .max(measure::refined_peak(&envelope(ca, cb)).0)
    };
    let (fine_i, n_star) = measure::refined_peak(&envelope(&w.i, &y.i));
    let (coarse_i, m_star) = measure::refined_peak(&envelope(&cw.i, &cy.i));
    let peak_i_pu = fine_i.max(coarse_i);
    let v_peaks: Vec<f64> = (0..watch.len())
        .map(|k| both(&w.v[k], &y.v[k], &cw.v[k], &cy.v[k]))
        .collect();
    let cap_peak_pu = both(&w.c, &y.c, &cw.c, &cy.c);
    // The worst closing instant of the inrush: Re[e^{jφ}·W] = |W| at its largest sample,
    // and the trapped charge's polarity adding to it.
    let (at, y_at) = if coarse_i > fine_i {
        (cw.i.get(m_star), cy.i.get(m_star))
    } else {
        (w.i.get(n_star), y.i.get(n_star))
    };
    let phi = at.map_or(0.0, |x| -x.arg());
    let q_sign = y_at.map_or(1.0, |y| y.signum());
    let e = Complex64::from_polar(1.0, phi);
    let worst = |wv: &[Complex64], yv: &[f64]| -> Vec<f64> {
        wv.iter()
            .enumerate()
            .map(|(n, x)| (e * x).re + qa * q_sign * yv.get(n).copied().unwrap_or(0.0))
            .collect()
    };
    let current = worst(&w.i, &y.i);
    let transient: Vec<f64> = current
        .iter()
        .enumerate()
        .map(|(n, x)| {
            let tau = (n + 1) as f64 * s.dt_fine;
            x - (e * i_post * Complex64::from_polar(1.0, c.w * tau)).re
        })
        .collect();
    let channels = capture.then(|| [current, worst(&w.v[0], &y.v[0]), worst(&w.c, &y.c)]);
    Ok(Sim {
        dt: s.dt_fine,
        steps: n_fine + n_coarse,
        simulated_s: t_fine + n_coarse as f64 * s.dt,
        peak_i_pu,
        bus_peak_pu: v_peaks[0],
        cap_peak_pu,
        remote_peak_pu: v_peaks[1..].to_vec(),
        transient,
        decayed,
        ring_down_s: decayed.then_some(ring_down),
        phi: phi + pre.v.get(s.bus).map_or(0.0, |v| v.arg()),
        q_sign,
        channels,
    })
}

/// Closing angle θ (degrees, 0..360) on v = V̂·sin θ for a closing at source phase φ with
/// the bus phasor's angle already added: cos(φ + arg V) = sin(φ + arg V + 90°).
pub fn closing_deg(phi_plus_bus: f64) -> f64 {
    (phi_plus_bus.to_degrees() + 90.0).rem_euclid(360.0)
}
