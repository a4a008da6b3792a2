//! Resonance mode analysis (Xu, Huang, Cui and Wang, "Harmonic resonance mode analysis",
//! IEEE Trans. Power Delivery 20(2), 2005): at a resonance order h the nodal admittance
//! matrix Y(h) has one eigenvalue λ_c much smaller than the others (the critical mode);
//! its eigenvector says which buses take part. Y(h) of a reciprocal network is complex
//! symmetric, so the left eigenvector is the right one transposed (L = Tᵀ) and the
//! participation factor of bus k, L_k·T_k, is T_k² over Tᵀ·T; it is reported here in
//! magnitude, |T_k|² / Σ|T_j|², which sums to 1.
//!
//! λ_c is found as the dominant eigenvalue of Z(h) = Y(h)⁻¹ by power iteration on the
//! sparse factor of Y(h) (inverse iteration), with the symmetric quotient
//! μ = xᵀ·Z·x / xᵀ·x, then refined by Rayleigh-quotient iteration (the shift at the
//! estimate of λ_c); a mode the power iteration cannot separate from the next (their |μ|
//! within a few percent) is reported as not converged.

use num_complex::Complex64;
use serde::Serialize;

use crate::solve::{Engine, SolveError};

/// Iterations of the power method at most.
const MAX_ITERATIONS: usize = 300;
/// Change of the unit eigenvector between iterations (its phase aligned) below which the
/// mode has converged.
const TOLERANCE: f64 = 1e-12;
/// The change at which the power method hands over to Rayleigh-quotient iteration.
const HANDOVER: f64 = 1e-5;
/// Rayleigh-quotient iterations at most (each converges quadratically or better).
const RQI_ITERATIONS: usize = 8;

/// The critical mode of Y(h) at one order, scenario and configuration.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CriticalMode {
    /// The order analysed (the peak's).
    pub order: f64,
    /// The modal impedance 1/|λ_c|, per unit on the 100 MVA base.
    pub modal_impedance_pu: f64,
    /// The critical eigenvalue λ_c of Y(h), per unit.
    #[serde(skip)]
    pub eigenvalue_pu: Complex64,
    /// Buses by participation factor, descending; those below 1 % left out.
    pub buses: Vec<(String, f64)>,
    /// Each energized bank's share: its bus's participation factor, split among the banks
    /// energized on that bus by their admittance at h; descending.
    pub banks: Vec<(String, f64)>,
    /// False when the power iteration did not settle (two modes of nearly equal |λ|): the
    /// participation is then a mixture and only indicative.
    pub converged: bool,
}

/// The participation factors |T_k|² / Σ|T_j|² of eigenvector `t`.
pub fn participation(t: &[Complex64]) -> Vec<f64> {
    let total: f64 = t.iter().map(|x| x.norm_sqr()).sum();
    t.iter()
        .map(|x| {
            if total > 0.0 {
                x.norm_sqr() / total
            } else {
                0.0
            }
        })
        .collect()
}

/// Scales `x` to unit norm (a zero vector stays as it is).
fn normalize(x: &mut [Complex64]) {
    let norm = x.iter().map(|v| v.norm_sqr()).sum::<f64>().sqrt();
    if norm > 0.0 {
        x.iter_mut().for_each(|v| *v /= norm);
    }
}

/// How far the unit iterate `y` is from the unit `x` once the turn between them is taken
/// out (an eigenvector is defined up to a phase, and the iterate turns by arg(μ) each
/// step): (the phase of xᴴ·y, ‖y − x·phase‖).
fn aligned_change(x: &[Complex64], y: &[Complex64]) -> (Complex64, f64) {
    let turn: Complex64 = x.iter().zip(y).map(|(a, b)| a.conj() * b).sum();
    let phase = if turn.norm() > 0.0 {
        turn / turn.norm()
    } else {
        Complex64::new(1.0, 0.0)
    };
    let change = (x.iter().zip(y))
        .map(|(a, b)| (b - a * phase).norm_sqr())
        .sum::<f64>()
        .sqrt();
    (phase, change)
}

/// The dominant eigenpair of Z = Y⁻¹ by power iteration, `solve(x)` replacing x by Z·x:
/// (μ, eigenvector scaled to ‖x‖ = 1, converged).
pub fn dominant(
    n: usize,
    solve: impl FnMut(&mut [Complex64]),
) -> (Complex64, Vec<Complex64>, bool) {
    dominant_to(n, solve, TOLERANCE)
}

/// [`dominant`] to the eigenvector change `tolerance`.
fn dominant_to(
    n: usize,
    mut solve: impl FnMut(&mut [Complex64]),
    tolerance: f64,
) -> (Complex64, Vec<Complex64>, bool) {
    // A start with a component on every mode: 1 + small distinct parts.
    let mut x: Vec<Complex64> = (0..n)
        .map(|k| Complex64::new(1.0 + 0.01 * (k % 7) as f64, 0.001 * (k % 5) as f64))
        .collect();
    normalize(&mut x);
    let mut mu = Complex64::default();
    let mut converged = false;
    let mut y = x.clone();
    for _ in 0..MAX_ITERATIONS {
        y.copy_from_slice(&x);
        solve(&mut y);
        let num: Complex64 = x.iter().zip(&y).map(|(a, b)| a * b).sum();
        let den: Complex64 = x.iter().map(|a| a * a).sum();
        let next = if den.norm() > 0.0 { num / den } else { num };
        normalize(&mut y);
        let (_, change) = aligned_change(&x, &y);
        std::mem::swap(&mut x, &mut y);
        mu = next;
        if change <= tolerance {
            converged = true;
            break;
        }
    }
    (mu, x, converged)
}

/// Rayleigh-quotient iteration from the power method's (μ, unit eigenvector t): with the
/// shift σ = 1/μ (the estimate of λ_c), x ← (Y − σI)⁻¹·x normalized and λ ← σ + 1/ν with
/// ν = xᵀ(Y − σI)⁻¹x / xᵀx, until the eigenvector changes by at most [`TOLERANCE`]
/// (Parlett, "The Symmetric Eigenvalue Problem", chapter 4; here for the complex-symmetric
/// Y(h) with the unconjugated quotient). The second iteration keeps the first one's shift
/// and factor: the power method's quotient is already within about the square of its
/// eigenvector's error (1e-5) of λ_c, so one solve leaves the eigenvector converged and
/// the second only confirms it; later iterations (a mode the first shift does not
/// separate) are factored at the newest estimate. Returns (μ = 1/λ, t, converged); a shift
/// the factorization finds singular is an eigenvalue to working precision, so the iterate
/// stands. `y_stamped` is Y(h) as [`Engine::stamped`] gives it.
fn refine(
    engine: &Engine<'_>,
    (order, scenario, y_stamped): (f64, usize, &[Complex64]),
    mu: Complex64,
    mut x: Vec<Complex64>,
) -> (Complex64, Vec<Complex64>, bool) {
    if mu.norm() == 0.0 {
        return (mu, x, false);
    }
    let mut lambda = mu.inv();
    let mut y = x.clone();
    let mut work = Vec::with_capacity(x.len());
    let mut change = f64::INFINITY;
    let mut held: Option<(crate::solve::Factor, Complex64)> = None;
    for iteration in 0..RQI_ITERATIONS {
        if iteration != 1 || held.is_none() {
            let shifted = engine.factor_stamped(y_stamped.to_vec(), order, scenario, lambda);
            let Ok(f) = shifted else {
                return (lambda.inv(), x, true);
            };
            held = Some((f, lambda));
        }
        let Some((f, sigma)) = &held else {
            break;
        };
        y.copy_from_slice(&x);
        engine.solve_fast_with(f, &mut y, &mut work);
        let num: Complex64 = x.iter().zip(&y).map(|(a, b)| a * b).sum();
        let den: Complex64 = x.iter().map(|a| a * a).sum();
        if num.norm() == 0.0 || den.norm() == 0.0 {
            break;
        }
        let next = sigma + den / num;
        normalize(&mut y);
        let phase;
        (phase, change) = aligned_change(&x, &y);
        // Keep the eigenvector's phase: the next iterate aligned with the last.
        x.iter_mut()
            .zip(&y)
            .for_each(|(a, b)| *a = b * phase.conj());
        lambda = next;
        if change <= TOLERANCE {
            return (lambda.inv(), x, true);
        }
    }
    // Rounding can hold the change a little above the tolerance at convergence.
    (lambda.inv(), x, change <= 1e3 * TOLERANCE)
}

/// The critical mode of `engine`'s network at `order` in `scenario` with `steps` of each
/// bank energized.
pub fn critical_mode(
    engine: &Engine<'_>,
    order: f64,
    scenario: usize,
    steps: &[u32],
) -> Result<CriticalMode, SolveError> {
    let net = engine.network();
    let stamped = engine.stamped(order, scenario, steps);
    let f = engine.factor_stamped(stamped.clone(), order, scenario, Complex64::default())?;
    let n = net.buses.len();
    let mut work = Vec::with_capacity(n);
    let power = dominant_to(n, |x| engine.solve_fast_with(&f, x, &mut work), HANDOVER);
    let (mu, t, converged) = match power {
        (mu, t, true) => refine(engine, (order, scenario, &stamped), mu, t),
        unsettled => unsettled,
    };
    let pf = participation(&t);
    let mut buses: Vec<(String, f64)> = (net.buses.iter().zip(&pf))
        .filter(|(_, p)| **p >= 0.01)
        .map(|(b, p)| (b.id.clone(), *p))
        .collect();
    buses.sort_by(|a, b| b.1.total_cmp(&a.1));
    let y = engine.y_steps(order);
    let y_bank = |b: usize| y[b].norm() * f64::from(steps.get(b).copied().unwrap_or(0));
    let mut banks: Vec<(String, f64)> = (net.banks.iter().enumerate())
        .filter(|(b, _)| steps.get(*b).is_some_and(|&k| k > 0))
        .map(|(b, bank)| {
            let on_bus: f64 = (0..net.banks.len())
                .filter(|&o| net.banks[o].bus == bank.bus)
                .map(y_bank)
                .sum();
            let share = if on_bus > 0.0 {
                pf[bank.bus] * y_bank(b) / on_bus
            } else {
                0.0
            };
            (bank.id.clone(), share)
        })
        .collect();
    banks.sort_by(|a, b| b.1.total_cmp(&a.1));
    let lambda = if mu.norm() > 0.0 {
        mu.inv()
    } else {
        Complex64::default()
    };
    Ok(CriticalMode {
        order,
        modal_impedance_pu: mu.norm(),
        eigenvalue_pu: lambda,
        buses,
        banks,
        converged,
    })
}
