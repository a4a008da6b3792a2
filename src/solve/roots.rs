//! A safeguarded root finder for a decreasing function whose evaluations may fail (each a
//! load flow, for example).

/// The root of a decreasing g on [0, `hi`]: 0 when g(0) = `g0` ≤ 0, `None` when g stays
/// positive up to `hi`. The secant method kept inside the bracket, bisection when it stalls
/// at an end (the regula falsi safeguard, common practice). An evaluation that fails
/// (`None`) counts as beyond the root: the upper end is halved (up to 40 times) until one
/// succeeds, and a failure inside the bracket moves the upper end there. Converged when
/// |g| < 1e-6 or the bracket is below 1e-9 of `hi`; at most 100 iterations.
pub fn decreasing_root(g: &mut dyn FnMut(f64) -> Option<f64>, g0: f64, hi: f64) -> Option<f64> {
    if g0 <= 0.0 {
        return Some(0.0);
    }
    let mut hi_x = hi;
    let mut g_hi = None;
    for _ in 0..40 {
        g_hi = g(hi_x);
        if g_hi.is_some() {
            break;
        }
        hi_x *= 0.5;
    }
    let g_hi = g_hi?;
    if g_hi > 0.0 {
        return None;
    }
    let (mut a, mut ga, mut c, mut gc) = (0.0, g0, hi_x, g_hi);
    for _ in 0..100 {
        // Secant point, kept inside the bracket; bisection when it stalls at an end.
        let mut x = a - ga * (c - a) / (gc - ga);
        if !(x > a + 1e-3 * (c - a) && x < c - 1e-3 * (c - a)) {
            x = 0.5 * (a + c);
        }
        let gx = g(x).unwrap_or(f64::NEG_INFINITY);
        if gx.abs() < 1e-6 || (c - a) < 1e-9 * hi_x {
            return Some(x);
        }
        if gx > 0.0 {
            (a, ga) = (x, gx);
        } else if gx.is_finite() {
            (c, gc) = (x, gx);
        } else {
            // No value at x: bisect towards the end that has one.
            c = x;
            gc = ga - (ga - gc).abs().max(1.0);
        }
    }
    Some(0.5 * (a + c))
}
