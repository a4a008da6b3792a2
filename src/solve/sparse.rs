//! Sparse LDLᵀ of a complex symmetric matrix: A = P·L·D·Lᵀ·Pᵀ, L unit lower triangular.
//!
//! Symbolic phase (once per pattern): a minimum-degree elimination order (lowest index first
//! among ties, so the result is deterministic), the column structure of L from the
//! elimination graph, and a flat plan of Schur-complement update targets. Numeric phase
//! (per matrix): right-looking elimination following that plan, no searching.
//!
//! Storage: `values[0..n]` are the diagonal entries by elimination position, `values[n..]`
//! the strictly lower entries of L column by column. Before [`Symbolic::factor`] they hold
//! A (lower triangle); after, D and L.

use std::cmp::Reverse;
use std::collections::{BTreeSet, BinaryHeap};

use num_complex::Complex64;

/// The pattern analysis of a symmetric matrix, reusable for any values on that pattern.
#[derive(Debug, Clone)]
pub struct Symbolic {
    pub(super) n: usize,
    /// `perm[k]` = original index eliminated at position k.
    pub(super) perm: Vec<usize>,
    /// `pos[i]` = elimination position of original index i.
    pub(super) pos: Vec<usize>,
    /// Column k of L holds rows `rows[col_ptr[k]..col_ptr[k+1]]` (positions, ascending).
    pub(super) col_ptr: Vec<usize>,
    pub(super) rows: Vec<usize>,
    /// Update plan: for column k, one target slot per pair (p ≤ q) of its entries.
    pub(super) upd_ptr: Vec<usize>,
    pub(super) upd_target: Vec<usize>,
}

/// A pivot that vanished: the matrix is singular (or numerically so) at that index.
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
#[error("zero pivot at index {index}: the network is singular at this frequency")]
pub struct SingularPivot {
    /// Original (bus) index of the pivot.
    pub index: usize,
}

/// The numeric factors D and L of one matrix on a [`Symbolic`] pattern.
#[derive(Debug, Clone)]
pub struct Factor {
    values: Vec<Complex64>,
    /// 1/d_k of each pivot, for [`Symbolic::solve_in_place_fast`].
    inv_d: Vec<Complex64>,
}

impl Factor {
    /// For a real matrix factored as complex (its factors' imaginary parts are then exactly
    /// zero): 1/D and the real parts of L, laid out as `values`, for
    /// [`Symbolic::solve_real_in_place`].
    pub fn real_parts(&self, n: usize) -> Vec<f64> {
        self.values
            .iter()
            .enumerate()
            .map(|(k, v)| if k < n { 1.0 / v.re } else { v.re })
            .collect()
    }
}

/// True when the pivot `d` is finite and above 1e-13 of its original magnitude `a` (and
/// above the smallest normal number): compared in squares (1e-26), with no square root,
/// where the squares can neither overflow nor underflow, else in magnitudes.
#[inline]
fn regular_pivot(d: Complex64, a: Complex64) -> bool {
    let (d2, a2) = (d.norm_sqr(), a.norm_sqr());
    if d2.is_finite() && a2.is_finite() && d2 > 1e-250 && a2 < 1e250 {
        return d2 > 1e-26 * a2;
    }
    let dn = d.norm();
    dn.is_finite() && dn > 1e-13 * a.norm() && dn > f64::MIN_POSITIVE
}

impl Symbolic {
    /// Analyses the n×n symmetric pattern with the given off-diagonal entries (pairs in any
    /// order; duplicates and self-pairs ignored). Cost O(Σ d²·log n) over the eliminated
    /// degrees d: O(n log n) for a radial network.
    pub fn new(n: usize, edges: &[(usize, usize)]) -> Self {
        let mut adj: Vec<BTreeSet<usize>> = vec![BTreeSet::new(); n];
        for &(a, b) in edges {
            if a != b && a < n && b < n {
                adj[a].insert(b);
                adj[b].insert(a);
            }
        }
        let mut heap: BinaryHeap<Reverse<(usize, usize)>> =
            (0..n).map(|i| Reverse((adj[i].len(), i))).collect();
        let mut done = vec![false; n];
        let mut perm = Vec::with_capacity(n);
        let mut structure: Vec<Vec<usize>> = Vec::with_capacity(n);
        while let Some(Reverse((deg, v))) = heap.pop() {
            if done[v] || deg != adj[v].len() {
                continue;
            }
            done[v] = true;
            perm.push(v);
            let nbrs: Vec<usize> = std::mem::take(&mut adj[v]).into_iter().collect();
            for &a in &nbrs {
                adj[a].remove(&v);
                for &b in &nbrs {
                    if a != b {
                        adj[a].insert(b);
                    }
                }
                heap.push(Reverse((adj[a].len(), a)));
            }
            structure.push(nbrs);
        }
        let mut pos = vec![0; n];
        for (k, &v) in perm.iter().enumerate() {
            pos[v] = k;
        }
        let mut col_ptr = Vec::with_capacity(n + 1);
        let mut rows = Vec::new();
        col_ptr.push(0);
        for s in &structure {
            let mut r: Vec<usize> = s.iter().map(|&i| pos[i]).collect();
            r.sort_unstable();
            rows.extend(r);
            col_ptr.push(rows.len());
        }
        let mut sym = Symbolic {
            n,
            perm,
            pos,
            col_ptr,
            rows,
            upd_ptr: Vec::with_capacity(n + 1),
            upd_target: Vec::new(),
        };
        sym.upd_ptr.push(0);
        for k in 0..n {
            let (s, e) = (sym.col_ptr[k], sym.col_ptr[k + 1]);
            for p in s..e {
                for q in p..e {
                    let t = sym.slot_by_position(sym.rows[p], sym.rows[q]);
                    sym.upd_target.push(t);
                }
            }
            sym.upd_ptr.push(sym.upd_target.len());
        }
        sym
    }

    /// Matrix order n.
    pub fn n(&self) -> usize {
        self.n
    }

    /// Number of stored values: n diagonal plus the strictly lower entries of L.
    pub fn len(&self) -> usize {
        self.n + self.rows.len()
    }

    /// True for a 0×0 matrix.
    pub fn is_empty(&self) -> bool {
        self.n == 0
    }

    /// Storage slot of entry (a, b) given by elimination positions, a ≤ b.
    fn slot_by_position(&self, a: usize, b: usize) -> usize {
        if a == b {
            return a;
        }
        let (s, e) = (self.col_ptr[a], self.col_ptr[a + 1]);
        match self.rows[s..e].binary_search(&b) {
            Ok(i) => self.n + s + i,
            // The elimination graph contains every fill entry; an absent one is a pattern
            // the caller did not declare, which is a programming error caught in tests.
            Err(_) => unreachable!("entry ({a}, {b}) is outside the analysed pattern"),
        }
    }

    /// Storage slot of entry (i, j) in original indices, or `None` when it is not in the
    /// pattern declared to [`Symbolic::new`].
    pub fn slot(&self, i: usize, j: usize) -> Option<usize> {
        if i >= self.n || j >= self.n {
            return None;
        }
        let (a, b) = {
            let (pi, pj) = (self.pos[i], self.pos[j]);
            (pi.min(pj), pi.max(pj))
        };
        if a == b {
            return Some(a);
        }
        let (s, e) = (self.col_ptr[a], self.col_ptr[a + 1]);
        self.rows[s..e]
            .binary_search(&b)
            .ok()
            .map(|k| self.n + s + k)
    }

    /// A zeroed value vector of this pattern, ready for stamping A.
    pub fn zeros(&self) -> Vec<Complex64> {
        vec![Complex64::new(0.0, 0.0); self.len()]
    }

    /// Factors the matrix held in `values` (as laid out by [`Symbolic::slot`]) in place:
    /// A = L·D·Lᵀ by right-looking elimination, d_k = a_kk, l_ik = a_ik / d_k,
    /// a_ij ← a_ij − a_ik·a_jk / d_k. A pivot smaller than 1e-13 of its original magnitude
    /// is reported as singular.
    pub fn factor(&self, mut values: Vec<Complex64>) -> Result<Factor, SingularPivot> {
        let n = self.n;
        let diagonal: Vec<Complex64> = values[..n].to_vec();
        let mut inv_d = Vec::with_capacity(n);
        for k in 0..n {
            let d = values[k];
            if !regular_pivot(d, diagonal[k]) {
                return Err(SingularPivot {
                    index: self.perm[k],
                });
            }
            let inv = d.inv();
            inv_d.push(inv);
            let (s, e) = (self.col_ptr[k], self.col_ptr[k + 1]);
            let mut t = self.upd_ptr[k];
            for p in s..e {
                let lp = values[n + p] * inv;
                for q in p..e {
                    let target = self.upd_target[t];
                    let aq = values[n + q];
                    values[target] -= lp * aq;
                    t += 1;
                }
            }
            for v in &mut values[n + s..n + e] {
                *v *= inv;
            }
        }
        Ok(Factor { values, inv_d })
    }

    /// Solves A·x = b in place (b and x in original indices) with the factors of A.
    pub fn solve_in_place(&self, f: &Factor, b: &mut [Complex64], work: &mut Vec<Complex64>) {
        self.solve_with(&f.values[self.n..], b, work, |w, k| *w /= f.values[k]);
    }

    /// Like [`Symbolic::solve_in_place`], multiplying by the inverse pivots instead of
    /// dividing by them: about twice as fast on a radial network, and different from it in
    /// the last bits only. For the many row solves of harmonic penetration; the scan keeps
    /// the dividing solve, whose refined extrema its reports were checked against.
    pub fn solve_in_place_fast(&self, f: &Factor, b: &mut [Complex64], work: &mut Vec<Complex64>) {
        self.solve_with(&f.values[self.n..], b, work, |w, k| *w *= f.inv_d[k]);
    }

    /// Forward substitution with L (strictly lower entries `l`, complex or real),
    /// `pivot(x_k, k)` applying D⁻¹, back substitution with Lᵀ.
    fn solve_with<T>(
        &self,
        l: &[T],
        b: &mut [Complex64],
        work: &mut Vec<Complex64>,
        pivot: impl Fn(&mut Complex64, usize),
    ) where
        T: Copy + std::ops::Mul<Complex64, Output = Complex64>,
    {
        let n = self.n;
        work.clear();
        work.extend(self.perm.iter().map(|&i| b[i]));
        for k in 0..n {
            let xk = work[k];
            if xk != Complex64::new(0.0, 0.0) {
                for p in self.col_ptr[k]..self.col_ptr[k + 1] {
                    work[self.rows[p]] -= l[p] * xk;
                }
            }
        }
        for (k, w) in work.iter_mut().enumerate() {
            pivot(w, k);
        }
        for k in (0..n).rev() {
            let mut acc = work[k];
            for p in self.col_ptr[k]..self.col_ptr[k + 1] {
                acc -= l[p] * work[self.rows[p]];
            }
            work[k] = acc;
        }
        for (k, &i) in self.perm.iter().enumerate() {
            b[i] = work[k];
        }
    }

    /// Solves A·x = b in place, like [`Symbolic::solve_in_place`], for a real matrix A
    /// whose factors are `values` ([`Factor::real_parts`]: 1/D, then L) and a complex b:
    /// each complex product of the complex solve becomes two real ones, each division by a
    /// pivot a product.
    pub fn solve_real_in_place(
        &self,
        values: &[f64],
        b: &mut [Complex64],
        work: &mut Vec<Complex64>,
    ) {
        let (d, l) = values.split_at(self.n);
        self.solve_with(l, b, work, |w, k| *w *= d[k]);
    }

    /// Off-diagonal entries of L (fill included): a measure of factorization cost.
    pub fn nnz_l(&self) -> usize {
        self.rows.len()
    }
}
