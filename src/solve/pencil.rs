//! The matrix pencil method: a sum of damped complex exponentials fitted to uniformly
//! sampled data, y_k = Σ a_i·z_i^k with z_i = e^{s_i·Δ} (Hua and Sarkar, IEEE Trans. ASSP
//! 38(5), 1990; Sarkar and Pereira, IEEE Antennas and Propagation Magazine 37(1), 1995).
//!
//! With N samples and the pencil parameter L (N/3 here, between N/3 and N/2 as the method
//! recommends), the Hankel matrix Y[i][j] = y[i+j] ((N−L) × (L+1)) is reduced by its SVD to
//! the M singular vectors above a relative threshold (the model order); the poles z_i are the
//! eigenvalues of V₁⁺·V₂, V₁ and V₂ the right singular vectors without their last and first
//! row; the amplitudes a_i the least-squares solution of the Vandermonde system. Dense
//! linear algebra from nalgebra (SVD of the Hankel matrix, Householder QR for the least
//! squares, real Schur eigenvalues).

use nalgebra::DMatrix;
use num_complex::Complex64;

/// One fitted component: its continuous-time pole s (1/s; frequency Im(s)/2π Hz, decay
/// −Re(s)) and its complex amplitude at the first sample.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pole {
    pub s: Complex64,
    pub amplitude: Complex64,
}

/// Singular values below this fraction of the largest are noise (the model order).
const ORDER_THRESHOLD: f64 = 1e-7;

/// The most components fitted.
const MAX_ORDER: usize = 24;

/// The poles and amplitudes of `y` sampled every `dt` seconds; empty when `y` is too short
/// (fewer than 8 samples), flat or not finite.
pub fn matrix_pencil(y: &[f64], dt: f64) -> Vec<Pole> {
    let n = y.len();
    if n < 8
        || dt.is_nan()
        || dt <= 0.0
        || y.iter().any(|v| !v.is_finite())
        || y.iter().all(|&v| v == 0.0)
    {
        return Vec::new();
    }
    let l = n / 3;
    let rows = n - l;
    let hankel = DMatrix::from_fn(rows, l + 1, |i, j| y[i + j]);
    let svd = hankel.svd(false, true);
    let Some(v_t) = svd.v_t else {
        return Vec::new();
    };
    let top = svd.singular_values.iter().copied().fold(0.0, f64::max);
    if top.is_nan() || top <= 0.0 {
        return Vec::new();
    }
    // The right singular vectors of the M largest singular values, in decreasing order.
    let mut order: Vec<usize> = (0..svd.singular_values.len()).collect();
    order.sort_by(|&a, &b| svd.singular_values[b].total_cmp(&svd.singular_values[a]));
    let m = (order.iter())
        .take_while(|&&i| svd.singular_values[i] > ORDER_THRESHOLD * top)
        .count()
        .clamp(1, MAX_ORDER.min(l));
    let v = DMatrix::from_fn(l + 1, m, |r, c| v_t[(order[c], r)]); // (L+1) × M
    let v1 = v.rows(0, l).into_owned();
    let v2 = v.rows(1, l).into_owned();
    let Some(a) = least_squares(v1, &v2) else {
        return Vec::new();
    };
    let z: Vec<Complex64> = a
        .complex_eigenvalues()
        .iter()
        .map(|c| Complex64::new(c.re, c.im))
        .collect();
    amplitudes(y, &z)
        .into_iter()
        .zip(&z)
        .filter(|(_, zi)| zi.norm() > 0.0 && zi.is_finite())
        .map(|(a, zi)| Pole {
            s: zi.ln() / dt,
            amplitude: a,
        })
        .collect()
}

/// The least-squares solution X of A·X ≈ B (A tall, full column rank) by Householder QR:
/// R·X = Qᴴ·B (stable where the normal equations square the condition number); `None` when
/// R is singular.
fn least_squares<T: nalgebra::ComplexField>(a: DMatrix<T>, b: &DMatrix<T>) -> Option<DMatrix<T>> {
    let qr = a.qr();
    let rhs = qr.q().adjoint() * b;
    qr.r().solve_upper_triangular(&rhs)
}

/// The least-squares amplitudes of poles `z` for samples `y`: the Vandermonde system
/// Z·a = y, Z[k][i] = z_i^k (close poles make it ill-conditioned, so QR, not the normal
/// equations); zeros when it fails.
fn amplitudes(y: &[f64], z: &[Complex64]) -> Vec<Complex64> {
    let (n, m) = (y.len(), z.len());
    let vander = DMatrix::from_fn(n, m, |k, i| z[i].powu(k as u32));
    let rhs = DMatrix::from_iterator(n, 1, y.iter().map(|&v| Complex64::new(v, 0.0)));
    match least_squares(vander, &rhs) {
        Some(a) => a.iter().copied().collect(),
        None => vec![Complex64::default(); m],
    }
}
