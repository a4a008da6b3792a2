//! What is read off a simulated waveform: the peak (refined between samples), the ringing
//! frequency from zero crossings, the damping ratio from the logarithmic decrement, and a
//! thinned copy for a chart.

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

/// Times (s) at which `x` (sampled every `dt` from τ = dt) swings through zero from one
/// side to the other, a swing counting only once it reaches `band` on the far side (a
/// Schmitt trigger: ripple of a faster, smaller mode riding on the dominant one does not
/// count); linearly interpolated at the last zero before the band; at most `most`.
fn zero_crossings(x: &[f64], dt: f64, band: f64, most: usize) -> Vec<f64> {
    let mut out = Vec::new();
    let mut side = 0.0f64;
    let mut zero_at = 0.0;
    for n in 0..x.len() {
        if n > 0 && (x[n - 1] < 0.0) != (x[n] < 0.0) {
            let (a, b) = (x[n - 1], x[n]);
            zero_at = (n as f64 + a / (a - b)) * dt;
        }
        let now = if x[n] >= band {
            1.0
        } else if x[n] <= -band {
            -1.0
        } else {
            continue;
        };
        if side != 0.0 && now != side {
            out.push(zero_at);
            if out.len() >= most {
                break;
            }
        }
        side = now;
    }
    out
}

/// How the transient component rings: the dominant frequency (Hz) from the mean spacing
/// of its first zero crossings (half periods; swings under a fifth of its largest value
/// ignored), and the damping ratio ζ = δ/√(4π² + δ²) from the logarithmic decrement
/// δ = ln(A₁/A₃) of the extremes of the first and the third half-cycle (one period apart;
/// textbook). `None` when it swings through zero fewer than four times (over-damped or
/// too slow for the window).
pub fn ringing(transient: &[f64], dt: f64) -> Option<(f64, f64)> {
    let top = transient.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let z = zero_crossings(transient, dt, 0.2 * top, 9);
    if z.len() < 4 {
        return None;
    }
    let half = (z[z.len() - 1] - z[0]) / (z.len() - 1) as f64;
    let f = 1.0 / (2.0 * half);
    // Extremes of |x| between the first crossings: half-cycles 1 and 3.
    let extreme = |from: f64, to: f64| {
        let (s, e) = (
            (from / dt) as usize,
            ((to / dt) as usize + 1).min(transient.len()),
        );
        transient[s.min(e)..e]
            .iter()
            .fold(0.0f64, |m, v| m.max(v.abs()))
    };
    let a1 = extreme(z[0], z[1]);
    let a3 = extreme(z[2], z[3]);
    let zeta = if a1 > 0.0 && a3 > 0.0 && a3 < a1 {
        let d = (a1 / a3).ln();
        d / (4.0 * std::f64::consts::PI * std::f64::consts::PI + d * d).sqrt()
    } else {
        0.0
    };
    Some((f, zeta))
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
