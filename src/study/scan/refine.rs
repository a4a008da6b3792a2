//! The peaks and dips of one curve on the grid, each refined by Brent's method on Z₀
//! interpolated between grid points, and its half-power sharpness.

use num_complex::Complex64;

use super::Extremum;
use crate::solve::SolveError;

pub(super) type Eval<'a> = dyn Fn(f64) -> Result<(Complex64, Complex64), SolveError> + 'a;

/// Tolerance of the refined order (the result is within it of the true extremum of the
/// evaluated curve, well inside the promised 0.001).
const REFINE_TOL: f64 = 1e-5;

/// Brent's method: the minimum of `f` on [a, b] to within `tol` (parabolic steps with a
/// golden-section fallback). Returns (x, f(x)).
fn brent(
    f: &mut dyn FnMut(f64) -> Result<f64, SolveError>,
    mut a: f64,
    mut b: f64,
    x0: f64,
    f0: f64,
    tol: f64,
) -> Result<(f64, f64), SolveError> {
    const CGOLD: f64 = 0.381_966_011_250_105;
    let (mut x, mut w, mut v) = (x0, x0, x0);
    let (mut fx, mut fw, mut fv) = (f0, f0, f0);
    let (mut d, mut e) = (0.0f64, 0.0f64);
    for _ in 0..60 {
        let xm = 0.5 * (a + b);
        let tol1 = tol;
        let tol2 = 2.0 * tol1;
        if (x - xm).abs() <= tol2 - 0.5 * (b - a) {
            break;
        }
        let mut golden = true;
        if e.abs() > tol1 {
            let r = (x - w) * (fx - fv);
            let mut q = (x - v) * (fx - fw);
            let mut p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            }
            q = q.abs();
            let etemp = e;
            e = d;
            if p.abs() < (0.5 * q * etemp).abs() && p > q * (a - x) && p < q * (b - x) {
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = tol1.copysign(xm - x);
                }
                golden = false;
            }
        }
        if golden {
            e = if x >= xm { a - x } else { b - x };
            d = CGOLD * e;
        }
        let u = if d.abs() >= tol1 {
            x + d
        } else {
            x + tol1.copysign(d)
        };
        let fu = f(u)?;
        if fu <= fx {
            if u >= x {
                a = x;
            } else {
                b = x;
            }
            (v, w, x) = (w, x, u);
            (fv, fw, fx) = (fw, fx, fu);
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                (v, w) = (w, u);
                (fv, fw) = (fw, fu);
            } else if fu <= fv || v == x || v == w {
                v = u;
                fv = fu;
            }
        }
    }
    Ok((x, fx))
}

/// The interior grid points of `mags` that are local maxima (above the point before, not
/// below the point after) and local minima (the reverse), in one pass: (maxima, minima).
#[cfg(test)]
pub(super) fn local_extrema(mags: &[f64]) -> (Vec<usize>, Vec<usize>) {
    let (mut maxima, mut minima) = (Vec::new(), Vec::new());
    local_extrema_in(
        mags,
        (1, mags.len().saturating_sub(1)),
        &mut maxima,
        &mut minima,
    );
    (maxima, minima)
}

/// [`local_extrema`] of the points `from..to` of `mags` (each with both neighbours in
/// `mags`; the range is cut to the interior), appended to `maxima` and `minima`: windows
/// that follow one another give the whole curve's extrema in order.
// The negated comparisons are meant: a NaN after the point does not stop it counting.
#[allow(clippy::neg_cmp_op_on_partial_ord)]
pub(super) fn local_extrema_in(
    mags: &[f64],
    (from, to): (usize, usize),
    maxima: &mut Vec<usize>,
    minima: &mut Vec<usize>,
) {
    let to = to.min(mags.len().saturating_sub(1));
    let from = from.max(1);
    if from >= to {
        return;
    }
    for (i, w) in (from..).zip(mags[from - 1..=to].windows(3)) {
        let (l, m, r) = (w[0], w[1], w[2]);
        // Non-short-circuit `&`: the comparisons are cheap and rarely true, and a branch per
        // comparison costs more than both.
        if (m > l) & !(r > m) {
            maxima.push(i);
        }
        if (m < l) & !(r < m) {
            minima.push(i);
        }
    }
}

/// Of `mags` (|Z| in ohm on the grid), the local maxima (`peaks`) or minima at the grid
/// points `at` (from [`local_extrema`]), each refined by Brent's method on
/// [h_{i−1}, h_{i+1}] with the evaluator `eval(h) = (Z, Z_none)`.
pub(super) fn extrema(
    orders: &[f64],
    mags: &[f64],
    peaks: bool,
    at: &[usize],
    eval: &Eval<'_>,
) -> Result<Vec<Extremum>, SolveError> {
    let sign = if peaks { -1.0 } else { 1.0 };
    let mut out = Vec::new();
    for &i in at {
        let m = mags[i];
        // The evaluation at the best order so far, kept: Brent's answer is one of the orders
        // it evaluated (or the grid point, not evaluated here), so its Z needs no second
        // evaluation (used only when the orders are equal bit for bit).
        let mut kept: Option<(f64, Complex64, Complex64, f64)> = None;
        let mut objective = |h: f64| -> Result<f64, SolveError> {
            let (z, z0) = eval(h)?;
            let v = sign * z.norm();
            if kept.is_none_or(|k| v <= k.3) {
                kept = Some((h, z, z0, v));
            }
            Ok(v)
        };
        let (h, best) = brent(
            &mut objective,
            orders[i - 1],
            orders[i + 1],
            orders[i],
            sign * m,
            REFINE_TOL,
        )?;
        let (z, z0) = match kept {
            Some((hk, z, z0, _)) if hk.to_bits() == h.to_bits() => (z, z0),
            _ => eval(h)?,
        };
        let zabs = (sign * best).abs();
        let (below, above) = (eval(orders[i - 1])?.0.im, eval(orders[i + 1])?.0.im);
        let phase_crosses_zero = if peaks {
            below > 0.0 && above < 0.0
        } else {
            below < 0.0 && above > 0.0
        };
        out.push(Extremum {
            order: h,
            z_ohm: zabs,
            angle_deg: z.arg().to_degrees(),
            amplification: z.norm() / z0.norm().max(f64::MIN_POSITIVE),
            sharpness: sharpness(orders, mags, h, zabs, peaks, eval)?,
            phase_crosses_zero,
        });
    }
    Ok(out)
}

/// Q = h / Δh at the half-power level (see [`Extremum::sharpness`]). A crossing three or
/// more grid steps from the extremum is placed by linear interpolation on the grid; a
/// nearer one (a peak the grid barely resolves) by bisection with the evaluator to 1e-5.
fn sharpness(
    orders: &[f64],
    mags: &[f64],
    h: f64,
    z: f64,
    peaks: bool,
    eval: &Eval<'_>,
) -> Result<Option<f64>, SolveError> {
    let level = if peaks {
        z / 2f64.sqrt()
    } else {
        z * 2f64.sqrt()
    };
    let inside = |v: f64| if peaks { v >= level } else { v <= level };
    let near = |a: f64, b: f64| (a - b).abs() < 3.0 * (orders[1] - orders[0]).abs();
    let cross = |j_out: usize, j_in: usize| -> Result<f64, SolveError> {
        let (o_out, o_in) = (orders[j_out], orders[j_in]);
        if !near(o_in, h) && inside(mags[j_in]) {
            let t = (mags[j_in] - level) / (mags[j_in] - mags[j_out]);
            return Ok(o_in + t * (o_out - o_in));
        }
        let (mut a_out, mut b_in) = (o_out, if inside(mags[j_in]) { o_in } else { h });
        while (b_in - a_out).abs() > 1e-5 {
            let mid = 0.5 * (a_out + b_in);
            if inside(eval(mid)?.0.norm()) {
                b_in = mid;
            } else {
                a_out = mid;
            }
        }
        Ok(0.5 * (a_out + b_in))
    };
    if orders.len() < 2 {
        return Ok(None);
    }
    // Left: the nearest grid point below h outside the level (the grid ascends: found by
    // bisection).
    let Some(mut a) = orders.partition_point(|&o| o <= h).checked_sub(1) else {
        return Ok(None);
    };
    while a > 0 && inside(mags[a]) {
        a -= 1;
    }
    if inside(mags[a]) {
        return Ok(None);
    }
    let left = cross(a, (a + 1).min(orders.len() - 1))?;
    let mut b = orders.partition_point(|&o| o < h);
    if b == orders.len() {
        return Ok(None);
    }
    while b + 1 < orders.len() && inside(mags[b]) {
        b += 1;
    }
    if inside(mags[b]) {
        return Ok(None);
    }
    let right = cross(b, b.saturating_sub(1))?;
    let width = right - left;
    Ok((width > 0.0).then(|| h / width))
}

#[cfg(test)]
mod tests {
    use super::{local_extrema, local_extrema_in};

    /// The plain pass: point by point over the whole curve.
    #[allow(clippy::neg_cmp_op_on_partial_ord)]
    fn point_by_point(mags: &[f64]) -> (Vec<usize>, Vec<usize>) {
        let (mut maxima, mut minima) = (Vec::new(), Vec::new());
        for (i, w) in mags.windows(3).enumerate() {
            let (l, m, r) = (w[0], w[1], w[2]);
            if m > l && !(r > m) {
                maxima.push(i + 1);
            }
            if m < l && !(r < m) {
                minima.push(i + 1);
            }
        }
        (maxima, minima)
    }

    #[test]
    fn windows_that_follow_one_another_find_the_whole_curves_extrema() {
        // Consistency: the scan finds the extrema window by window, 32 points at a time, as
        // the batches are written; curves of every length around the windows, with plateaus,
        // repeated values and NaN.
        let mut state = 12345u64;
        let mut next = || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 33) as f64 / (1u64 << 31) as f64
        };
        for len in (0..100).chain([4901]) {
            for kind in 0..4 {
                let mags: Vec<f64> = (0..len)
                    .map(|i| match kind {
                        0 => next(),
                        1 => (next() * 4.0).floor(),
                        2 if i % 17 == 5 => f64::NAN,
                        2 => next(),
                        _ => ((i as f64) * 0.3).sin() + 2.0,
                    })
                    .collect();
                let want = point_by_point(&mags);
                assert_eq!(local_extrema(&mags), want, "{len} {kind}");
                let (mut max, mut min) = (Vec::new(), Vec::new());
                for first in (0..len).step_by(32) {
                    let n = 32.min(len - first);
                    local_extrema_in(&mags, (first.max(1) - 1, first + n - 1), &mut max, &mut min);
                }
                assert_eq!((max, min), want, "{len} {kind} by windows");
            }
        }
    }
}
