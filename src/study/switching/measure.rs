//! What is read off a simulated waveform: the peak (refined between samples), the ringing
//! modes (frequency and damping) from a matrix-pencil fit, and a thinned copy for a chart.

use serde::Serialize;

/// The largest of `env` refined by the parabola through the largest sample and its two
/// neighbours (vertex e_n − (e_{n+1} − e_{n−1})² / (8·(e_{n+1} − 2e_n + e_{n−1}))), with
/// the sample index. A parabola's error is third order in the step, which makes the peak
/// nearly independent of Δt.
pub fn refined_peak(env: &[f64]) -> (f64, usize) {
    let Some((n, &top)) = env.iter().enumerate().max_by(|a, b| a.1.total_cmp(b.1)) else {
        return (0.0, 0);
    };
    if n == 0 || n + 1 >= env.len() {
        return (top, n);
    }
    let (a, c) = (env[n - 1], env[n + 1]);
    let curvature = c - 2.0 * top + a;
    if curvature < 0.0 {
        (top - (c - a) * (c - a) / (8.0 * curvature), n)
    } else {
        (top, n)
    }
}

/// One mode of a ringing transient: its frequency (Hz), damping ratio ζ = −Re(s)/|s| and
/// amplitude as a share of the largest mode's.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RingingMode {
    pub frequency_hz: f64,
    pub zeta: f64,
    pub share: f64,
}

/// Samples the fit works on: the transient thinned to about this many.
const FIT_SAMPLES: usize = 300;

/// Modes below this share of the largest are not listed.
const MODE_SHARE: f64 = 0.05;

/// How the transient component rings, from matrix-pencil fits of the waveform
/// ([`crate::solve::matrix_pencil`]): every oscillating mode with at least 5 % of the
/// largest mode's amplitude (a conjugate pair's amplitude 2|a|, a real pole's |a|), largest
/// first, and whether the largest is an oscillation (under-damped) or a real pole
/// (over-damped). Empty when nothing was fitted.
///
/// Modes far apart in frequency (a back-to-back ring at tens of kHz over a system mode of a
/// few hundred Hz) cannot both be resolved by one sampling, so the fit runs over a ladder of
/// windows from the closing instant: 300 samples at strides 1, 4, 16, … up to the whole
/// first stage. Each window answers for the band it resolves, from two periods in the
/// window up to 0.4 of its sampling rate (the longest window also for the slowest modes and
/// the real poles); a mode found in two windows within 1 % is kept once, from the longer.
pub fn ringing(transient: &[f64], dt: f64) -> (Vec<RingingMode>, bool) {
    let n = transient.len();
    let mut strides = vec![1usize];
    while strides.last().is_some_and(|&s| FIT_SAMPLES * s * 4 <= n) {
        let next = strides.last().map_or(1, |s| s * 4);
        strides.push(next);
    }
    let longest = (n / FIT_SAMPLES).max(1);
    if strides.last().is_some_and(|&s| s < longest) {
        strides.push(longest);
    }
    // (frequency, ζ, amplitude, oscillating, window length in s)
    let mut comps: Vec<(f64, f64, f64, bool, f64)> = Vec::new();
    let last = strides.len() - 1;
    for (k, &stride) in strides.iter().enumerate() {
        let y: Vec<f64> = transient
            .iter()
            .step_by(stride)
            .take(FIT_SAMPLES)
            .copied()
            .collect();
        let step = dt * stride as f64;
        let window = step * y.len() as f64;
        let f_lo = if k == last { 0.0 } else { 2.0 / window };
        let f_hi = 0.4 / step;
        for p in crate::solve::matrix_pencil(&y, step) {
            if !(p.s.re.is_finite() && p.s.im.is_finite()) {
                continue;
            }
            let f = p.s.im.abs() / (2.0 * std::f64::consts::PI);
            if f < 1e-6 / step {
                if k == last {
                    comps.push((0.0, 1.0, p.amplitude.norm(), false, window));
                }
            } else if p.s.im > 0.0 && f >= f_lo && f <= f_hi {
                // A lossless mode fits with ζ of rounding size either side of 0.
                let zeta = (-p.s.re / p.s.norm()).max(0.0);
                comps.push((f, zeta, 2.0 * p.amplitude.norm(), true, window));
            }
        }
    }
    // One entry per mode: a mode another window found within 1 % is kept from the longer
    // window (modes of one window are distinct however close).
    comps.sort_by(|a, b| b.4.total_cmp(&a.4));
    let mut kept: Vec<(f64, f64, f64, bool, f64)> = Vec::new();
    for c in comps {
        let seen =
            |k: &(f64, f64, f64, bool, f64)| k.3 && k.4 != c.4 && (k.0 - c.0).abs() <= 0.01 * c.0;
        if !c.3 || !kept.iter().any(seen) {
            kept.push(c);
        }
    }
    let top = kept.iter().map(|c| c.2).fold(0.0, f64::max);
    if top.is_nan() || top <= 0.0 {
        return (Vec::new(), false);
    }
    let under = kept
        .iter()
        .max_by(|a, b| a.2.total_cmp(&b.2))
        .is_some_and(|c| c.3 && c.1 < 1.0);
    let mut modes: Vec<RingingMode> = kept
        .iter()
        .filter(|c| c.3 && c.2 >= MODE_SHARE * top)
        .map(|c| RingingMode {
            frequency_hz: c.0,
            zeta: c.1,
            share: c.2 / top,
        })
        .collect();
    modes.sort_by(|a, b| b.share.total_cmp(&a.share));
    (modes, under)
}

/// Sample indices for a chart of at most about `points` points over the first `len`
/// samples: an even stride, plus the largest |x| of each channel so no peak is lost.
pub fn thin(channels: &[&[f64]], len: usize, points: usize) -> Vec<usize> {
    let stride = (len / points.max(1)).max(1);
    let mut idx: Vec<usize> = (0..len).step_by(stride).collect();
    for ch in channels {
        if let Some((n, _)) = ch[..len.min(ch.len())]
            .iter()
            .enumerate()
            .max_by(|a, b| a.1.abs().total_cmp(&b.1.abs()))
        {
            idx.push(n);
        }
    }
    idx.sort_unstable();
    idx.dedup();
    idx
}
