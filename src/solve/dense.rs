//! A small dense complex LU with partial pivoting, for the k×k step-combination systems
//! (k = number of banks). Gaussian elimination, O(k³/3) to factor and O(k²) per solve.

use num_complex::Complex64;

/// LU factors of a k×k matrix, row-major, with the row permutation.
#[derive(Debug, Clone)]
pub struct DenseLu {
    k: usize,
    lu: Vec<Complex64>,
    piv: Vec<usize>,
}

impl DenseLu {
    /// Factors the row-major k×k matrix `a`; `None` when a pivot is exactly zero or not
    /// finite (a singular system).
    pub fn new(k: usize, mut a: Vec<Complex64>) -> Option<Self> {
        debug_assert_eq!(a.len(), k * k);
        let mut piv: Vec<usize> = (0..k).collect();
        for c in 0..k {
            let (mut best, mut best_norm) = (c, a[c * k + c].norm());
            for r in c + 1..k {
                let m = a[r * k + c].norm();
                if m > best_norm {
                    best = r;
                    best_norm = m;
                }
            }
            if !(best_norm.is_finite() && best_norm > 0.0) {
                return None;
            }
            if best != c {
                for j in 0..k {
                    a.swap(c * k + j, best * k + j);
                }
                piv.swap(c, best);
            }
            let inv = a[c * k + c].inv();
            for r in c + 1..k {
                let m = a[r * k + c] * inv;
                a[r * k + c] = m;
                for j in c + 1..k {
                    let u = a[c * k + j];
                    a[r * k + j] -= m * u;
                }
            }
        }
        Some(DenseLu { k, lu: a, piv })
    }

    /// Solves A·x = b, returning x.
    pub fn solve(&self, b: &[Complex64]) -> Vec<Complex64> {
        let k = self.k;
        let mut x: Vec<Complex64> = self.piv.iter().map(|&i| b[i]).collect();
        for r in 0..k {
            for j in 0..r {
                let l = self.lu[r * k + j];
                let xj = x[j];
                x[r] -= l * xj;
            }
        }
        for r in (0..k).rev() {
            for j in r + 1..k {
                let u = self.lu[r * k + j];
                let xj = x[j];
                x[r] -= u * xj;
            }
            x[r] /= self.lu[r * k + r];
        }
        x
    }
}
