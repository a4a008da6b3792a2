//! Fundamental load flow by Newton's method in rectangular current-injection form, on the
//! sparse pattern that [`Symbolic`] analysed for Y(h).
//!
//! Unknowns: the complex bus voltages V (per unit). At every bus i the current balance
//!
//! F_i(V) = Σ_j Y_ij·V_j − I_N,i + conj(S_i / V_i) = 0
//!
//! holds, with Y the fundamental admittance matrix (branches, cable charging, capacitor
//! steps and the source impedances), I_N,i = E·y_s the Norton current of a source EMF E behind
//! its admittance y_s, and S_i = P_i + jQ_i the constant power the loads draw. The power
//! mismatch is ΔS_i = V_i·conj(F_i), per unit of the 100 MVA base.
//!
//! conj(S/V) is not holomorphic, so the Jacobian is *widely linear*: dF_i = Σ_j Y_ij·dV_j +
//! D_i·conj(dV_i) with D_i = −conj(S_i / V_i²) (the current-injection formulation of
//! Newton's method, rectangular coordinates; textbook). Each entry is stored as the pair
//! (a, b) of the map z ↦ a·z + b·z̄, and the Jacobian is factored without pivoting as
//! L·U on the symmetric pattern of Y (its values are not symmetric). Convergence is
//! quadratic near the solution.

use num_complex::Complex64;

use super::Symbolic;

/// A widely linear map z ↦ a·z + b·conj(z) on the complex numbers (a 2×2 real matrix).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
struct Wide {
    a: Complex64,
    b: Complex64,
}

impl Wide {
    fn linear(a: Complex64) -> Self {
        Wide {
            a,
            b: Complex64::default(),
        }
    }

    /// The composition self ∘ o: (a₁a₂ + b₁·conj(b₂), a₁b₂ + b₁·conj(a₂)).
    #[inline]
    fn then(self, o: Wide) -> Wide {
        Wide {
            a: self.a * o.a + self.b * o.b.conj(),
            b: self.a * o.b + self.b * o.a.conj(),
        }
    }

    #[inline]
    fn apply(self, z: Complex64) -> Complex64 {
        self.a * z + self.b * z.conj()
    }

    /// The inverse map: (conj(a), −b) / (|a|² − |b|²); `None` when (nearly) singular.
    fn inverse(self) -> Option<Wide> {
        let (na, nb) = (self.a.norm_sqr(), self.b.norm_sqr());
        let det = na - nb;
        if !(det.is_finite() && det.abs() > 1e-13 * (na + nb) && det.abs() > f64::MIN_POSITIVE) {
            return None;
        }
        Some(Wide {
            a: self.a.conj() / det,
            b: -self.b / det,
        })
    }
}

impl std::ops::SubAssign for Wide {
    #[inline]
    fn sub_assign(&mut self, o: Wide) {
        self.a -= o.a;
        self.b -= o.b;
    }
}

/// Why a load flow found no solution.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LoadFlowFailure {
    /// The Jacobian became singular (the nose of the P-V curve, or a bus without a path).
    Singular,
    /// The mismatch did not fall below the tolerance within the iteration limit, or a
    /// voltage collapsed towards zero.
    NoConvergence,
}

/// Largest per-bus power mismatch accepted, per unit of the 100 MVA base (input contract,
/// version 2: exact to 1e-9 pu).
pub const MISMATCH_PU: f64 = 1e-9;

/// Newton iterations before a load flow is declared without solution.
pub const MAX_ITERATIONS: u32 = 40;

/// The fundamental system of one scenario, in elimination positions of a [`Symbolic`].
#[derive(Debug, Clone)]
pub struct LoadFlowSystem {
    /// Y in the symbolic layout (diagonal by position, then the lower entries of L's
    /// pattern, fill entries zero), per unit.
    y: Vec<Complex64>,
    /// Norton currents of the source EMFs, by position, per unit.
    i_n: Vec<Complex64>,
    /// Power drawn by the loads, by position, per unit.
    s: Vec<Complex64>,
}

/// Reusable buffers of one load flow.
#[derive(Debug, Clone, Default)]
pub struct LoadFlowScratch {
    f: Vec<Complex64>,
    tol: Vec<f64>,
    diag: Vec<Wide>,
    lower: Vec<Wide>,
    upper: Vec<Wide>,
    x: Vec<Complex64>,
    v_try: Vec<Complex64>,
    /// The largest |ΔS_i| of the last mismatch evaluated, per unit.
    max_ds: f64,
}

/// A mismatch below which the voltages are at rounding level already and the polishing
/// step is skipped, per unit.
const ROUNDING_PU: f64 = 1e-13;

impl LoadFlowSystem {
    /// The system with Y given by `stamp` (called with an `add(i, j, y)` for every entry,
    /// bus indices, each off-diagonal pair once), Norton currents `i_norton_pu` and load
    /// powers `s_load_pu` by bus. Entries outside `sym`'s pattern are ignored.
    pub fn new(
        sym: &Symbolic,
        stamp: impl FnOnce(&mut dyn FnMut(usize, usize, Complex64)),
        i_norton_pu: &[Complex64],
        s_load_pu: &[Complex64],
    ) -> Self {
        let mut y = sym.zeros();
        stamp(&mut |i, j, v| {
            if let Some(k) = sym.slot(i, j) {
                y[k] += v;
            }
        });
        let by_pos = |v: &[Complex64]| -> Vec<Complex64> {
            sym.perm
                .iter()
                .map(|&i| v.get(i).copied().unwrap_or_default())
                .collect()
        };
        LoadFlowSystem {
            y,
            i_n: by_pos(i_norton_pu),
            s: by_pos(s_load_pu),
        }
    }

    /// Solves for the bus voltages with the extra shunt admittances `shunts` (bus index,
    /// per-unit admittance: the energized capacitor steps) added to Y, starting from and
    /// returning in `v` (per unit, by bus). Returns the Newton iterations used; after the
    /// mismatch falls below [`MISMATCH_PU`] one more step brings V to rounding level (unless
    /// the mismatch is below 1e-13 pu already), so that any start gives the same voltages
    /// to about 1e-13.
    pub fn solve(
        &self,
        sym: &Symbolic,
        shunts: &[(usize, Complex64)],
        v: &mut [Complex64],
        w: &mut LoadFlowScratch,
    ) -> Result<u32, LoadFlowFailure> {
        let mut y = self.y.clone();
        for &(bus, ys) in shunts {
            if let Some(&k) = sym.pos.get(bus) {
                y[k] += ys;
            }
        }
        // Work in elimination positions.
        let mut vp: Vec<Complex64> = sym.perm.iter().map(|&i| v[i]).collect();
        let mut worst = self.mismatch(sym, &y, &vp, w);
        let mut converged_at = None;
        for it in 1..=MAX_ITERATIONS {
            if !worst.is_finite() {
                return Err(LoadFlowFailure::NoConvergence);
            }
            if worst <= 0.0 && w.max_ds <= ROUNDING_PU {
                converged_at = Some(it);
                break;
            }
            let done = worst <= 0.0;
            self.jacobian(sym, &y, &vp, w)?;
            // Newton step dV = −J⁻¹F.
            w.x.clear();
            w.x.extend(w.f.iter().map(|f| -f));
            solve_wide(sym, w);
            // Backtracking: halve the step while the mismatch grows tenfold or a voltage
            // collapses (far from the solution only; near it the full step is taken).
            let mut step = 1.0;
            let mut trial = std::mem::take(&mut w.v_try);
            loop {
                trial.clear();
                trial.extend(vp.iter().zip(&w.x).map(|(v, dv)| v + dv * step));
                let collapsed = trial
                    .iter()
                    .any(|v| v.norm_sqr().is_nan() || v.norm_sqr() <= 1e-6);
                let next = if collapsed {
                    f64::INFINITY
                } else {
                    self.mismatch(sym, &y, &trial, w)
                };
                let better = next.is_finite() && next <= 10.0 * worst.max(MISMATCH_PU);
                if done || better || step < 1.0 / 64.0 {
                    std::mem::swap(&mut vp, &mut trial);
                    worst = if next.is_finite() { next } else { f64::NAN };
                    break;
                }
                step *= 0.5;
            }
            w.v_try = trial;
            if done {
                converged_at = Some(it);
                break;
            }
        }
        let Some(it) = converged_at else {
            return Err(LoadFlowFailure::NoConvergence);
        };
        if vp.iter().any(|v| !(v.re.is_finite() && v.im.is_finite())) {
            return Err(LoadFlowFailure::NoConvergence);
        }
        for (k, &i) in sym.perm.iter().enumerate() {
            v[i] = vp[k];
        }
        Ok(it)
    }

    /// Fills `w.f` with F(V) and returns the largest excess of |ΔS_i| over its tolerance
    /// (≤ 0 when every bus is within [`MISMATCH_PU`] plus a rounding allowance of
    /// 1e-13·|V_i|·(Σ_j |Y_ij||V_j| + |I_N,i|), which matters only for near-ideal sources).
    fn mismatch(
        &self,
        sym: &Symbolic,
        y: &[Complex64],
        vp: &[Complex64],
        w: &mut LoadFlowScratch,
    ) -> f64 {
        let n = sym.n;
        let l1 = |z: Complex64| z.re.abs() + z.im.abs();
        w.f.clear();
        w.tol.clear();
        for k in 0..n {
            w.f.push(y[k] * vp[k] - self.i_n[k]);
            w.tol.push(l1(y[k]) * l1(vp[k]) + l1(self.i_n[k]));
        }
        for k in 0..n {
            for p in sym.col_ptr[k]..sym.col_ptr[k + 1] {
                let r = sym.rows[p];
                let yv = y[n + p];
                w.f[r] += yv * vp[k];
                w.f[k] += yv * vp[r];
                let a = l1(yv);
                w.tol[r] += a * l1(vp[k]);
                w.tol[k] += a * l1(vp[r]);
            }
        }
        let mut worst = f64::NEG_INFINITY;
        w.max_ds = 0.0;
        for (k, &v) in vp.iter().enumerate().take(n) {
            if self.s[k] != Complex64::default() {
                w.f[k] += (self.s[k] / v).conj();
            }
            // |ΔS| = |V|·|F|: square roots of squared magnitudes, no hypot (the mismatch is
            // the load flow's hottest loop and its values are far from overflow).
            let v2 = v.norm_sqr();
            let ds = (v2 * w.f[k].norm_sqr()).sqrt();
            let allowed = MISMATCH_PU + 1e-13 * v2.sqrt() * w.tol[k];
            if !ds.is_finite() {
                return f64::INFINITY;
            }
            worst = worst.max(ds - allowed);
            w.max_ds = w.max_ds.max(ds);
        }
        if n == 0 { 0.0 } else { worst }
    }

    /// Factors the Jacobian at `vp` into `w` (diag holds the inverse pivots after).
    fn jacobian(
        &self,
        sym: &Symbolic,
        y: &[Complex64],
        vp: &[Complex64],
        w: &mut LoadFlowScratch,
    ) -> Result<(), LoadFlowFailure> {
        let n = sym.n;
        let m = sym.rows.len();
        w.diag.clear();
        w.diag.extend((0..n).map(|k| {
            let d = if self.s[k] == Complex64::default() {
                Complex64::default()
            } else {
                -(self.s[k] / (vp[k] * vp[k])).conj()
            };
            Wide { a: y[k], b: d }
        }));
        w.lower.clear();
        w.lower.extend(y[n..n + m].iter().map(|&v| Wide::linear(v)));
        w.upper.clear();
        w.upper.extend_from_slice(&w.lower);
        for k in 0..n {
            let dinv = w.diag[k].inverse().ok_or(LoadFlowFailure::Singular)?;
            let (s, e) = (sym.col_ptr[k], sym.col_ptr[k + 1]);
            for p in s..e {
                w.lower[p] = w.lower[p].then(dinv);
            }
            let mut t = sym.upd_ptr[k];
            for p in s..e {
                for q in p..e {
                    let target = sym.upd_target[t];
                    if p == q {
                        let u = w.upper[p];
                        w.diag[target] -= w.lower[p].then(u);
                    } else {
                        let off = target - n;
                        let (lp, lq, up, uq) = (w.lower[p], w.lower[q], w.upper[p], w.upper[q]);
                        w.upper[off] -= lp.then(uq);
                        w.lower[off] -= lq.then(up);
                    }
                    t += 1;
                }
            }
            w.diag[k] = dinv;
        }
        Ok(())
    }
}

/// Solves L·U·x = b in place in `w.x` (positions) with the factors in `w`.
fn solve_wide(sym: &Symbolic, w: &mut LoadFlowScratch) {
    let n = sym.n;
    let x = &mut w.x;
    for k in 0..n {
        let xk = x[k];
        for p in sym.col_ptr[k]..sym.col_ptr[k + 1] {
            x[sym.rows[p]] -= w.lower[p].apply(xk);
        }
    }
    for k in (0..n).rev() {
        let mut acc = x[k];
        for p in sym.col_ptr[k]..sym.col_ptr[k + 1] {
            acc -= w.upper[p].apply(x[sym.rows[p]]);
        }
        x[k] = w.diag[k].apply(acc);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wide_inverse_composes_to_identity() {
        let w = Wide {
            a: Complex64::new(3.0, -1.0),
            b: Complex64::new(0.5, 0.7),
        };
        let i = w.inverse().map(|v| v.then(w));
        let z = Complex64::new(0.3, -2.0);
        let back = i.map(|m| m.apply(z)).unwrap_or_default();
        assert!((back - z).norm() < 1e-14, "{back}");
    }
}
