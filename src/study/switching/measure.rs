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

/// How the transient component rings, from a matrix-pencil fit of the waveform
/// ([`crate::solve::matrix_pencil`]) on the first stage thinned to about 300 samples: every
/// oscillating mode with at least 5 % of the largest mode's amplitude (a conjugate pair's
/// amplitude 2|a|, a real pole's |a|), largest first, and whether the largest is an
/// oscillation (under-damped) or a real pole (over-damped). Empty when nothing was fitted.
pub fn ringing(transient: &[f64], dt: f64) -> (Vec<RingingMode>, bool) {
    let stride = (transient.len() / FIT_SAMPLES).max(1);
    let y: Vec<f64> = transient.iter().step_by(stride).copied().collect();
    let poles = crate::solve::matrix_pencil(&y, dt * stride as f64);
    // (frequency, ζ, amplitude, oscillating): pairs once (Im s > 0), real poles alone.
    let comps: Vec<(f64, f64, f64, bool)> = poles
        .iter()
        .filter(|p| p.s.re.is_finite() && p.s.im.is_finite())
        .filter_map(|p| {
            let w = p.s.im.abs();
            let nyquist = std::f64::consts::PI / (dt * stride as f64);
            // Poles near the sampling's Nyquist frequency are the integration's own
            // (the trapezoidal rule's alternating mode), not the circuit's.
            if w > 0.8 * nyquist {
                None
            } else if w < 1e-6 * nyquist {
                Some((0.0, 1.0, p.amplitude.norm(), false))
            } else if p.s.im > 0.0 {
                // A lossless mode fits with ζ of rounding size either side of 0.
                let zeta = (-p.s.re / p.s.norm()).max(0.0);
                Some((
                    w / (2.0 * std::f64::consts::PI),
                    zeta,
                    2.0 * p.amplitude.norm(),
                    true,
                ))
            } else {
                None
            }
        })
        .collect();
    let top = comps.iter().map(|c| c.2).fold(0.0, f64::max);
    if top.is_nan() || top <= 0.0 {
        return (Vec::new(), false);
    }
    let under = comps
        .iter()
        .max_by(|a, b| a.2.total_cmp(&b.2))
        .is_some_and(|c| c.3 && c.1 < 1.0);
    let mut modes: Vec<RingingMode> = comps
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
