//! Capacitor switching events in a recording, and what each one measures of the network
//! on the source side of the recording point.
//!
//! An event is a step in the fundamental reactive power the plant draws (a bank step
//! switching). Around it, a window of whole cycles before and one after the ringing has
//! died out give the fundamental and harmonic phasors; with the source's EMF unchanged
//! across the event, V = E − Z·I gives the source-side impedance per order,
//! Z(h) = −ΔV_h / ΔI_h (the usual switching-event method of network impedance
//! measurement, common practice), and at the fundamental the published approximation
//! ΔV/V ≈ ΔQ/S_sc beside it. After an energizing, the voltage's transient component rings
//! at the resonance of the source inductance with the capacitance in service.

use num_complex::Complex64;

use super::signals::{
    Sampled, cycle_phasors, line_to_neutral, sequence_component, window_spectrum,
};

/// How events are found and measured.
#[derive(Debug, Clone, Copy)]
pub struct EventOptions {
    /// Smallest step in the fundamental reactive power taken as an event, var (3-phase).
    pub threshold_var: f64,
    /// Highest harmonic order analysed.
    pub orders: usize,
    /// Cycles per analysis window: about 200 ms (10 cycles at 50 Hz, 12 at 60 Hz, the
    /// window of IEC 61000-4-7, from memory).
    pub window_cycles: usize,
    /// Cycles after the switching instant before the after-window starts.
    pub settle_cycles: usize,
    /// Nominal line-to-line voltage at the recording point, kV.
    pub kv_nominal: f64,
}

/// Fundamental and harmonic phasors of one steady window (rms, phase-to-neutral volts and
/// line amperes, each order's characteristic sequence component), referred to a common
/// time origin; index = order (0 unused).
#[derive(Debug, Clone, PartialEq)]
pub struct Window {
    pub start_cycle: usize,
    pub cycles: usize,
    pub v: Vec<Complex64>,
    pub i: Vec<Complex64>,
}

impl Window {
    /// Three-phase complex power drawn by the plant, VA: 3·V₁·I₁*.
    pub fn power_va(&self) -> Complex64 {
        3.0 * self.v[1] * self.i[1].conj()
    }
}

/// One order's source-side impedance from an event.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct HarmonicImpedance {
    pub order: usize,
    /// Z(h) = −ΔV_h/ΔI_h, ohm per phase.
    #[serde(serialize_with = "crate::study::measured::ser_complex")]
    pub z_ohm: Complex64,
    /// |ΔI_h|, A.
    pub delta_i_a: f64,
}

/// One switching event and what it measures.
#[derive(Debug, Clone, PartialEq)]
pub struct Event {
    /// The switching instant, s from the recording's first sample.
    pub time_s: f64,
    /// Change in the plant's fundamental reactive power, kvar (3-phase; negative when
    /// capacitance switches in).
    pub delta_q_kvar: f64,
    /// |V₁| before, V phase to neutral.
    pub v_before_v: f64,
    /// Δ|V₁| / |V₁|, %.
    pub delta_v_percent: f64,
    /// S_sc from ΔV/V ≈ ΔQ/S_sc (X = 3·|V|·Δ|V|/(−ΔQ), S_sc = kV²/X), MVA at nominal kV.
    pub s_sc_approx_mva: f64,
    /// Z(1) = −ΔV₁/ΔI₁, ohm per phase.
    pub z1_ohm: Complex64,
    /// kV²/|Z(1)|, MVA.
    pub s_sc_mva: f64,
    /// Im Z(1)/Re Z(1).
    pub x_over_r: f64,
    pub harmonic: Vec<HarmonicImpedance>,
    /// The dominant ringing after an energizing: (Hz, damping ratio).
    pub ringing: Option<(f64, f64)>,
    pub before: Window,
    pub after: Window,
}

/// A recording analysed: its events and the steady windows between them.
#[derive(Debug, Clone, PartialEq)]
pub struct Analysis {
    /// Fundamental reactive power per cycle, kvar (3-phase), for plots.
    pub q_kvar: Vec<f64>,
    pub events: Vec<Event>,
    /// A steady window in each stretch between events (before the first, between each
    /// pair, after the last), in time order: (index of the stretch, window).
    pub steady: Vec<Window>,
    /// The current channels pointed toward the source and were reversed.
    pub reversed_current: bool,
}

/// Finds the switching events of `s` and measures each.
pub fn analyse(s: &Sampled, opt: &EventOptions) -> Analysis {
    let m = s.per_cycle;
    let orders = opt.orders.min(m / 2 - 1);
    let phasor = |chs: &[Vec<f64>], volts: bool| -> Vec<Complex64> {
        let per: Vec<Vec<Complex64>> = chs.iter().map(|c| cycle_phasors(c, m)).collect();
        let n = per.iter().map(Vec::len).min().unwrap_or(0);
        (0..n)
            .map(|k| {
                let ph: Vec<Complex64> = per.iter().map(|p| p[k]).collect();
                let x = sequence_component(1, &ph);
                if volts && s.line_to_line {
                    line_to_neutral(1, x)
                } else {
                    x
                }
            })
            .collect()
    };
    let v1 = phasor(&s.voltages, true);
    let mut i1 = phasor(&s.currents, false);
    let n = v1.len().min(i1.len());
    let p_mean: f64 = (0..n)
        .map(|k| (v1[k] * i1[k].conj()).re)
        .filter(|p| p.is_finite())
        .sum();
    let reversed_current = p_mean < 0.0;
    if reversed_current {
        i1.iter_mut().for_each(|x| *x = -*x);
    }
    let q_kvar: Vec<f64> = (0..n)
        .map(|k| 3.0 * (v1[k] * i1[k].conj()).im / 1e3)
        .collect();
    let found = step_cycles(&q_kvar, opt.threshold_var / 1e3);
    let instants: Vec<(usize, usize)> = found.iter().map(|&k| switching_sample(s, k)).collect();
    let w = opt.window_cycles.max(3);
    let mut events = Vec::new();
    let mut steady = Vec::new();
    let sign = if reversed_current { -1.0 } else { 1.0 };
    for (e, &(cycle, sample)) in instants.iter().enumerate() {
        let lo = if e == 0 {
            0
        } else {
            settled_cycle(s, instants[e - 1].1, opt.settle_cycles)
        };
        let hi = instants.get(e + 1).map_or(n, |x| x.0.saturating_sub(1));
        let b_end = cycle.saturating_sub(1);
        let a_start = settled_cycle(s, sample, opt.settle_cycles);
        let wb = w.min(b_end.saturating_sub(lo));
        let wa = w.min(hi.saturating_sub(a_start));
        if wb < 3 || wa < 3 {
            continue;
        }
        let ww = wb.min(wa);
        let drift = drift_per_cycle(&v1, &[(b_end - ww, b_end), (a_start, a_start + ww)]);
        let before = window(s, b_end - ww, ww, orders, drift, sign);
        let after = window(s, a_start, ww, orders, drift, sign);
        if steady
            .last()
            .is_none_or(|x: &Window| x.start_cycle != before.start_cycle)
        {
            steady.push(before.clone());
        }
        steady.push(after.clone());
        events.push(measure(s, opt, before, after, sample));
    }
    if events.is_empty() && n >= 3 {
        let ww = w.min(n);
        let drift = drift_per_cycle(&v1, &[(n - ww, n)]);
        steady.push(window(s, n - ww, ww, orders, drift, sign));
    }
    Analysis {
        q_kvar,
        events,
        steady,
        reversed_current,
    }
}

/// The event's fundamental and harmonic estimates from its two windows.
fn measure(s: &Sampled, opt: &EventOptions, before: Window, after: Window, sample: usize) -> Event {
    let dv = after.v[1] - before.v[1];
    let di = after.i[1] - before.i[1];
    let z1 = -dv / di;
    let kv2 = (opt.kv_nominal * 1e3).powi(2);
    let dq = (after.power_va() - before.power_va()).im;
    let (vb, va) = (before.v[1].norm(), after.v[1].norm());
    let x_approx = 3.0 * vb * (va - vb) / -dq;
    let i_ref = before.i[1].norm().max(after.i[1].norm());
    let harmonic = (2..before.v.len())
        .filter_map(|h| {
            let (dv, di) = (after.v[h] - before.v[h], after.i[h] - before.i[h]);
            (di.norm() > 2e-3 * i_ref && di.norm().is_finite()).then(|| HarmonicImpedance {
                order: h,
                z_ohm: -dv / di,
                delta_i_a: di.norm(),
            })
        })
        .collect();
    let ringing = (dq < 0.0).then(|| ringing(s, sample, &after)).flatten();
    Event {
        time_s: s.t0_s + sample as f64 * s.dt_s(),
        delta_q_kvar: dq / 1e3,
        v_before_v: vb,
        delta_v_percent: 100.0 * (va - vb) / vb,
        s_sc_approx_mva: kv2 / x_approx / 1e6,
        z1_ohm: z1,
        s_sc_mva: kv2 / z1.norm() / 1e6,
        x_over_r: z1.im / z1.re,
        harmonic,
        ringing,
        before,
        after,
    }
}

/// Cycles where the reactive power steps by more than `threshold_kvar`: the median of the
/// 6 cycles after (from 2 cycles on) against the median of the 6 before; one cycle per step,
/// where the change is largest.
fn step_cycles(q: &[f64], threshold_kvar: f64) -> Vec<usize> {
    const L: usize = 6;
    let median = |xs: &[f64]| {
        let mut v: Vec<f64> = xs.iter().copied().filter(|x| x.is_finite()).collect();
        v.sort_by(f64::total_cmp);
        v.get(v.len() / 2).copied().unwrap_or(f64::NAN)
    };
    let mut d = vec![0.0; q.len()];
    for k in L..q.len().saturating_sub(L + 2) {
        d[k] = median(&q[k + 2..k + 2 + L]) - median(&q[k - L..k]);
    }
    let mut out = Vec::new();
    let mut k = 0;
    while k < d.len() {
        if d[k].abs() > threshold_kvar.max(f64::MIN_POSITIVE) {
            let run_end = (k..d.len())
                .find(|&j| d[j].abs() <= threshold_kvar || d[j].signum() != d[k].signum())
                .unwrap_or(d.len());
            let best = (k..run_end)
                .max_by(|&a, &b| d[a].abs().total_cmp(&d[b].abs()))
                .unwrap_or(k);
            out.push(best);
            k = run_end.max(best + L);
        } else {
            k += 1;
        }
    }
    out
}

/// The first cycle of the steady state after a switching at `sample`: the first cycle,
/// at least `min_cycles` after it, from which two cycles in a row differ from the cycle
/// before them by less than 1 % of the largest such difference just after the switching,
/// or 3 × the difference before it (rms over the cycle, every voltage channel); at most 40
/// cycles after.
fn settled_cycle(s: &Sampled, sample: usize, min_cycles: usize) -> usize {
    let m = s.per_cycle;
    let first = sample / m + 1;
    let change = |c: usize| -> f64 {
        (s.voltages.iter())
            .map(|x| {
                let (a, b) = (c * m, ((c + 1) * m).min(x.len()));
                if a < m || a >= b {
                    return 0.0;
                }
                let ss: f64 = (a..b).map(|n| (x[n] - x[n - m]).powi(2)).sum();
                (ss / (b - a) as f64).sqrt()
            })
            .fold(0.0, f64::max)
    };
    let top = (first..first + 2).map(change).fold(0.0, f64::max);
    // A steady waveform still changes from cycle to cycle when the system frequency is off
    // nominal: three times the change before the switching counts as steady too.
    let mut before: Vec<f64> = (first.saturating_sub(8)..first.saturating_sub(2))
        .map(change)
        .collect();
    before.sort_by(f64::total_cmp);
    let floor = before.get(before.len() / 2).copied().unwrap_or(0.0);
    let steady = (0.01 * top).max(3.0 * floor);
    let limit = first + 40;
    let mut c = first + min_cycles.saturating_sub(1).max(1);
    while c < limit {
        if change(c) < steady && change(c + 1) < steady {
            return c;
        }
        c += 1;
    }
    limit
}

/// The cycle and sample where the switching begins near cycle `k`: the first sample in
/// cycles k−4 … k+2 where a voltage's change from one cycle earlier exceeds 20 % of its
/// largest there.
fn switching_sample(s: &Sampled, k: usize) -> (usize, usize) {
    let m = s.per_cycle;
    // The step detector's largest change falls up to a few cycles after the switching
    // (a long ring keeps the reactive power moving): search from 4 cycles before.
    let (from, to) = ((k.saturating_sub(4)).max(1) * m, (k + 3) * m);
    let mut best = (k, k * m);
    let mut top = 0.0;
    for x in &s.voltages {
        let to = to.min(x.len());
        let r: Vec<f64> = (from..to).map(|n| (x[n] - x[n - m]).abs()).collect();
        let peak = r.iter().copied().fold(0.0, f64::max);
        if peak > top
            && let Some(j) = r.iter().position(|&v| v > 0.2 * peak)
        {
            top = peak;
            best = ((from + j) / m, from + j);
        }
    }
    best
}

/// The steady drift of the voltage's angle, rad per cycle: the slope common to the
/// windows (each with its own intercept) fitted by least squares to the unwrapped angles.
fn drift_per_cycle(v1: &[Complex64], windows: &[(usize, usize)]) -> f64 {
    let (mut num, mut den) = (0.0, 0.0);
    for &(a, b) in windows {
        let mut th: Vec<f64> = Vec::new();
        for z in v1.get(a..b.min(v1.len())).unwrap_or(&[]) {
            let mut t = z.arg();
            if let Some(&last) = th.last() {
                t += ((last - t) / std::f64::consts::TAU).round() * std::f64::consts::TAU;
            }
            th.push(t);
        }
        let n = th.len() as f64;
        if n < 2.0 || th.iter().any(|t| !t.is_finite()) {
            continue;
        }
        let kbar = (n - 1.0) / 2.0;
        let tbar = th.iter().sum::<f64>() / n;
        for (k, t) in th.iter().enumerate() {
            num += (k as f64 - kbar) * (t - tbar);
            den += (k as f64 - kbar).powi(2);
        }
    }
    if den > 0.0 { num / den } else { 0.0 }
}

/// The phasors of a steady window of `cycles` cycles from `start`, each order's sequence
/// component, rotated by e^{−j·h·drift·(start + cycles/2)} so that windows at different
/// times share one reference; currents times `sign`.
fn window(
    s: &Sampled,
    start: usize,
    cycles: usize,
    orders: usize,
    drift: f64,
    sign: f64,
) -> Window {
    let m = s.per_cycle;
    let spectra = |chs: &[Vec<f64>]| -> Vec<Vec<Complex64>> {
        chs.iter()
            .map(|c| window_spectrum(c, start * m, cycles, m, orders))
            .collect()
    };
    let (vs, is) = (spectra(&s.voltages), spectra(&s.currents));
    let centre = start as f64 + cycles as f64 / 2.0;
    let mut v = vec![Complex64::default(); orders + 1];
    let mut i = vec![Complex64::default(); orders + 1];
    for h in 1..=orders {
        let rot = Complex64::from_polar(1.0, -(h as f64) * drift * centre);
        let ph: Vec<Complex64> = vs.iter().map(|x| x[h]).collect();
        let mut vh = sequence_component(h, &ph);
        if s.line_to_line {
            vh = line_to_neutral(h, vh);
        }
        let ph: Vec<Complex64> = is.iter().map(|x| x[h]).collect();
        v[h] = vh * rot;
        i[h] = sequence_component(h, &ph) * rot * sign;
    }
    Window {
        start_cycle: start,
        cycles,
        v,
        i,
    }
}

/// The dominant ringing of the voltage's transient part after the switching instant
/// `sample`: the waveform less the steady cycle of the after-window, over the time up to
/// the after-window, fitted by the matrix pencil ([`crate::study::switching::measure::ringing`]).
/// Modes below 1.5 × the fundamental are not ringing.
fn ringing(s: &Sampled, sample: usize, after: &Window) -> Option<(f64, f64)> {
    let m = s.per_cycle;
    let a0 = after.start_cycle * m;
    let end = a0.min(sample + 4 * m);
    let mut best: Option<(f64, f64, f64)> = None;
    for x in &s.voltages {
        let template: Vec<f64> = (0..m)
            .map(|p| {
                (0..after.cycles).map(|c| x[a0 + c * m + p]).sum::<f64>() / after.cycles as f64
            })
            .collect();
        let e: Vec<f64> = (sample..end)
            .map(|n| x[n] - template[(n + m * (a0 / m + 1) - a0) % m])
            .collect();
        let size = e.iter().map(|v| v.abs()).fold(0.0, f64::max);
        let (modes, _) = crate::study::switching::measure::ringing(&e, s.dt_s());
        if let Some(mode) = modes.iter().find(|md| md.frequency_hz > 1.5 * s.f1_hz)
            && best.is_none_or(|b| size > b.2)
        {
            best = Some((mode.frequency_hz, mode.zeta, size));
        }
    }
    best.map(|b| (b.0, b.1))
}
