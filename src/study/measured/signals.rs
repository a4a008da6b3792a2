//! Recorded waveforms made ready for phasor analysis: resampled to a whole number of
//! samples per nominal cycle, per-cycle fundamental phasors, and spectra over windows of
//! whole cycles.

use num_complex::Complex64;
use rustfft::FftPlanner;

/// Three-phase (or single-phase) voltage and current waveforms on one uniform time grid of
/// `per_cycle` samples per cycle of `f1_hz`.
#[derive(Debug, Clone)]
pub struct Sampled {
    pub f1_hz: f64,
    pub per_cycle: usize,
    /// Time of the first sample, s from the recording's first sample.
    pub t0_s: f64,
    /// Phase voltages, V (phase-to-neutral, or phase-to-phase when `line_to_line`).
    pub voltages: Vec<Vec<f64>>,
    /// Line currents, A, positive into the plant from the source side.
    pub currents: Vec<Vec<f64>>,
    pub line_to_line: bool,
}

impl Sampled {
    /// Seconds per sample.
    pub fn dt_s(&self) -> f64 {
        1.0 / (self.f1_hz * self.per_cycle as f64)
    }

    /// Whole cycles recorded.
    pub fn cycles(&self) -> usize {
        self.voltages
            .first()
            .map_or(0, |v| v.len() / self.per_cycle)
    }
}

/// The fewest samples per cycle the analysis resamples to (orders up to 25 with margin;
/// common practice).
pub const MIN_PER_CYCLE: usize = 128;

/// The most samples per cycle the analysis keeps (faster recordings are interpolated down
/// to this; orders to 50 need far fewer).
pub const MAX_PER_CYCLE: usize = 4096;

/// The most samples per channel analysed (about 36 min at 128 samples per 60 Hz cycle);
/// a longer recording is analysed from its start to there.
pub const MAX_SAMPLES: usize = 1 << 24;

/// Resamples `channels` (recorded at `time_s`) to a uniform grid with a whole number of
/// samples per cycle of `f1_hz`: the recorded grid itself when it is uniform and whole
/// (within 1e-6), else linear interpolation onto 2^k ≥ max(native, 128) samples per cycle.
/// Returns (samples per cycle, t0, channels). Missing samples (NaN) stay NaN.
pub fn resample(time_s: &[f64], channels: &[&[f64]], f1_hz: f64) -> (usize, f64, Vec<Vec<f64>>) {
    let n = time_s.len();
    let t0 = time_s.first().copied().unwrap_or(0.0);
    if n < 2 || f1_hz <= 0.0 {
        return (MIN_PER_CYCLE, t0, vec![Vec::new(); channels.len()]);
    }
    let span = time_s[n - 1] - t0;
    let dt = span / (n - 1) as f64;
    let uniform = time_s
        .iter()
        .enumerate()
        .all(|(k, &t)| (t - t0 - k as f64 * dt).abs() <= 1e-6 * dt.max(1e-12));
    let native = 1.0 / (f1_hz * dt);
    if uniform && (native - native.round()).abs() <= 1e-6 * native && native.round() >= 16.0 {
        let m = native.round() as usize;
        return (m, t0, channels.iter().map(|c| c.to_vec()).collect());
    }
    let m = (native.ceil() as usize)
        .max(MIN_PER_CYCLE)
        .next_power_of_two();
    let step = 1.0 / (f1_hz * m as f64);
    let count = (span / step).floor() as usize + 1;
    let mut out = vec![Vec::with_capacity(count); channels.len()];
    let mut j = 0;
    for k in 0..count {
        let t = t0 + k as f64 * step;
        while j + 2 < n && time_s[j + 1] <= t {
            j += 1;
        }
        let (ta, tb) = (time_s[j], time_s[j + 1]);
        let w = if tb > ta {
            ((t - ta) / (tb - ta)).clamp(0.0, 1.0)
        } else {
            0.0
        };
        for (o, c) in out.iter_mut().zip(channels) {
            o.push(c[j] + w * (c[j + 1] - c[j]));
        }
    }
    (m, t0, out)
}

/// The rms phasor of harmonic `order` over `cycles` whole cycles of `x` starting at sample
/// `start` (`per_cycle` samples per cycle), by one FFT: X_h = (√2/N)·Σ x[n]·e^{−j2π·h·n/M}
/// with N = cycles·M, angle referred to the window's first sample. NaN when the window
/// holds a missing sample or runs past the end.
pub fn window_spectrum(
    x: &[f64],
    start: usize,
    cycles: usize,
    per_cycle: usize,
    orders: usize,
) -> Vec<Complex64> {
    let n = cycles * per_cycle;
    let nan = vec![Complex64::new(f64::NAN, f64::NAN); orders + 1];
    let Some(w) = x.get(start..start + n) else {
        return nan;
    };
    if n == 0 || w.iter().any(|v| !v.is_finite()) {
        return nan;
    }
    let mut buf: Vec<Complex64> = w.iter().map(|&v| Complex64::new(v, 0.0)).collect();
    let fft = FftPlanner::<f64>::new().plan_fft_forward(n);
    fft.process(&mut buf);
    let k = 2f64.sqrt() / n as f64;
    (0..=orders)
        .map(|h| {
            buf.get(h * cycles)
                .map_or(Complex64::new(f64::NAN, f64::NAN), |b| b * k)
        })
        .collect()
}

/// The fundamental rms phasor of each whole cycle of `x` (a one-cycle DFT per cycle; NaN
/// for a cycle with a missing sample).
pub fn cycle_phasors(x: &[f64], per_cycle: usize) -> Vec<Complex64> {
    let m = per_cycle;
    let twiddle: Vec<Complex64> = (0..m)
        .map(|n| Complex64::from_polar(1.0, -2.0 * std::f64::consts::PI * n as f64 / m as f64))
        .collect();
    let k = 2f64.sqrt() / m as f64;
    x.chunks_exact(m)
        .map(|c| {
            if c.iter().any(|v| !v.is_finite()) {
                return Complex64::new(f64::NAN, f64::NAN);
            }
            c.iter()
                .zip(&twiddle)
                .map(|(&v, &t)| t * v)
                .sum::<Complex64>()
                * k
        })
        .collect()
}

/// The symmetrical component of a three-phase set (a, b, c) that a balanced set of harmonic
/// `order` occupies: h = 3k+1 positive, 3k−1 negative, 3k zero (Fortescue; common
/// practice). A single phase is returned as it is.
pub fn sequence_component(order: usize, phases: &[Complex64]) -> Complex64 {
    if phases.len() != 3 {
        return phases.first().copied().unwrap_or_default();
    }
    let a = Complex64::from_polar(1.0, 2.0 * std::f64::consts::PI / 3.0);
    let (xa, xb, xc) = (phases[0], phases[1], phases[2]);
    match order % 3 {
        1 => (xa + a * xb + a * a * xc) / 3.0,
        2 => (xa + a * a * xb + a * xc) / 3.0,
        _ => (xa + xb + xc) / 3.0,
    }
}

/// A phase-to-phase sequence phasor (ab of an ab, bc, ca set) as the phase-to-neutral one of
/// phase a: V_ab = √3·e^{±j30°}·V_a, + for the positive sequence, − for the negative
/// (common practice); a zero-sequence component does not appear phase to phase.
pub fn line_to_neutral(order: usize, v_ll: Complex64) -> Complex64 {
    let shift = match order % 3 {
        1 => std::f64::consts::PI / 6.0,
        2 => -std::f64::consts::PI / 6.0,
        _ => return Complex64::new(f64::NAN, f64::NAN),
    };
    v_ll / Complex64::from_polar(3f64.sqrt(), shift)
}

/// The system frequency the recording ran at, Hz: `nominal_hz` × (1 + the median turn of
/// the first voltage's fundamental phasor from one nominal cycle to the next, in cycles).
/// A window of whole *actual* cycles then leaves no leakage between the fundamental's
/// positive and negative frequency (what a synchronized measurement window does, IEC
/// 61000-4-7, from memory). `nominal_hz` when there is no voltage.
pub fn system_frequency(s: &Sampled) -> f64 {
    let Some(v) = s.voltages.first() else {
        return s.f1_hz;
    };
    let p = cycle_phasors(v, s.per_cycle);
    let mut turns: Vec<f64> = p
        .windows(2)
        .map(|w| (w[1] * w[0].conj()).arg() / std::f64::consts::TAU)
        .filter(|t| t.is_finite())
        .collect();
    if turns.is_empty() {
        return s.f1_hz;
    }
    turns.sort_by(f64::total_cmp);
    s.f1_hz * (1.0 + turns[turns.len() / 2])
}
