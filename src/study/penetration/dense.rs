//! The small dense systems of the rank-|E| corrections shared by the bounded and the
//! linear evaluations.

use num_complex::Complex64;

use crate::solve::HarmonicPoint;

/// Each bank's admittance at the point's order with `steps` energized, y_b = n_b·y_step
/// (per unit), and the energized banks E (y_b ≠ 0), ascending.
pub(super) fn bank_admittances(p: &HarmonicPoint, steps: &[u32]) -> (Vec<Complex64>, Vec<usize>) {
    let k = p.z0_blocks().k;
    let y: Vec<Complex64> = (0..k)
        .map(|b| p.y_step(b) * f64::from(steps.get(b).copied().unwrap_or(0)))
        .collect();
    let energized = (0..k).filter(|&b| y[b] != Complex64::default()).collect();
    (y, energized)
}

/// Solves A·X = B in place for a small dense complex A (m×m) and B (m×l), Gaussian
/// elimination with partial pivoting. False when a pivot vanishes (a singular network).
fn solve_small(a: &mut [Complex64], b: &mut [Complex64], m: usize, l: usize) -> bool {
    for col in 0..m {
        let piv = (col..m)
            .max_by(|&x, &y| {
                a[x * m + col]
                    .norm_sqr()
                    .total_cmp(&a[y * m + col].norm_sqr())
            })
            .unwrap_or(col);
        let pv = a[piv * m + col];
        if pv.norm().partial_cmp(&1e-300) != Some(std::cmp::Ordering::Greater)
            || !pv.re.is_finite()
            || !pv.im.is_finite()
        {
            return false;
        }
        if piv != col {
            for c in 0..m {
                a.swap(piv * m + c, col * m + c);
            }
            for c in 0..l {
                b.swap(piv * l + c, col * l + c);
            }
        }
        let inv = 1.0 / a[col * m + col];
        for row in 0..m {
            if row == col {
                continue;
            }
            let f = a[row * m + col] * inv;
            if f == Complex64::default() {
                continue;
            }
            for c in col..m {
                let t = a[col * m + c];
                a[row * m + c] -= f * t;
            }
            for c in 0..l {
                let t = b[col * l + c];
                b[row * l + c] -= f * t;
            }
        }
    }
    for row in 0..m {
        let inv = 1.0 / a[row * m + row];
        for c in 0..l {
            b[row * l + c] *= inv;
        }
    }
    true
}

/// Solves (D⁻¹ + Z₀[E,E])·X = B in place for the energized banks E (`energized`, indices
/// into the k banks), D = diag(y) their admittances (per unit) and `z_bank_bank` Z₀ among
/// the bank buses (k×k): the Woodbury identity's small system (textbook), so that
/// Z = Z₀ − Z₀[:,E]·X with B = Z₀[E,:]. `b` is |E|×l row-major. False when singular;
/// nothing to do without energized banks.
pub(super) fn woodbury_solve(
    z_bank_bank: &[Complex64],
    k: usize,
    y: &[Complex64],
    energized: &[usize],
    b: &mut [Complex64],
    l: usize,
) -> bool {
    let m = energized.len();
    if m == 0 {
        return true;
    }
    let mut a = vec![Complex64::default(); m * m];
    for (i, &bi) in energized.iter().enumerate() {
        for (j, &bj) in energized.iter().enumerate() {
            a[i * m + j] = z_bank_bank[bi * k + bj];
        }
        a[i * m + i] += 1.0 / y[bi];
    }
    solve_small(&mut a, b, m, l)
}
