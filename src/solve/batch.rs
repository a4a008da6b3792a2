//! A step-combination plan run over a batch of scan points at once: the same sequential
//! Sherman–Morrison updates as [`PointSolution::evaluate`], with every quantity held as
//! a row of the batch's points (real and imaginary parts apart), so that each update is a
//! loop over points the compiler turns into vector instructions, and each operation of the
//! plan is decoded once per batch instead of once per point.
//!
//! Every point's arithmetic is the one [`PointSolution::evaluate`] does, operation for
//! operation and in the same order (Rust never contracts or reorders floating-point
//! arithmetic), so the magnitudes are the same bit for bit: the tests compare them.

use num_complex::Complex64;

use super::engine::PointSolution;
use super::plan::{ComboPlan, Op};

/// Points per batch: the states of one bank level for 8 banks and 9 buses take
/// 145 × 32 × 16 B = 74 KB, so the levels of a plan stay within a core's second-level cache.
pub const BATCH_POINTS: usize = 32;

/// Complex rows of the batch's points: entry e, point t at `[e * n + t]`.
#[derive(Debug, Clone, Default)]
struct Rows {
    re: Vec<f64>,
    im: Vec<f64>,
}

impl Rows {
    fn resize(&mut self, entries: usize, n: usize) {
        self.re.resize(entries * n, 0.0);
        self.im.resize(entries * n, 0.0);
    }
}

/// One bank level's Z (as `State` in the engine): k×k among the bank buses, m×k between the
/// buses of interest and the bank buses, m at the buses of interest.
#[derive(Debug, Clone, Default)]
struct Level {
    zss: Rows,
    zis: Rows,
    zii: Rows,
}

/// The Z₀ of a batch of scan points of one scenario and the work of running plans on them.
#[derive(Debug, Clone, Default)]
pub struct PointBatch {
    k: usize,
    m: usize,
    /// Points held.
    n: usize,
    /// Each bank's one-step admittance, k rows.
    y_step: Rows,
    /// levels[0] is Z₀; levels[b + 1] the state after bank b (when it was applied).
    levels: Vec<Level>,
    /// Which level's buffer holds level l (a bank at 0 steps leaves the level below as it
    /// is, so the level points at that buffer instead of copying it).
    held: Vec<usize>,
    /// The update factor y / (1 + y·Z_aa) of the current operation, per point.
    f: Rows,
    /// Scratch row: Z_ia·f or Z_pa·f of the current row, per point.
    g: Rows,
    /// Per point: Σ x·0 over every denominator and output x, 0 while all are finite
    /// (NaN once one is not); kept in floating point so that the loops stay vector code.
    finite: Vec<f64>,
    /// Per point: the smallest max(|Re|, |Im|) of a denominator 1 + y·Z_aa (a point whose
    /// smallest is at most 1e-300 is singular, as `solve::admissible` says).
    smallest: Vec<f64>,
}

impl PointBatch {
    /// Takes the Z₀ of `points` (all of one network, scenario and buses of interest; at most
    /// [`BATCH_POINTS`] of them usefully) and the step admittances `y_steps` (one per point,
    /// each bank's, per unit: the plant's, which kept points of another plant do not hold).
    pub fn load(&mut self, points: &[PointSolution], y_steps: &[Vec<Complex64>]) {
        let Some(first) = points.first() else {
            self.n = 0;
            return;
        };
        let (k, m, n) = (first.state.k, first.state.m, points.len());
        (self.k, self.m, self.n) = (k, m, n);
        self.levels.resize_with(k + 1, Level::default);
        self.held.clear();
        self.held.extend(0..=k);
        for level in &mut self.levels {
            level.zss.resize(k * k, n);
            level.zis.resize(m * k, n);
            level.zii.resize(m, n);
        }
        for r in [&mut self.f, &mut self.g] {
            r.resize(1, n);
        }
        self.y_step.resize(k, n);
        self.finite.clear();
        self.finite.resize(n, 0.0);
        self.smallest.clear();
        self.smallest.resize(n, f64::INFINITY);
        let z0 = &mut self.levels[0];
        for (t, p) in points.iter().enumerate() {
            let s = &p.state;
            for (rows, values) in [(&mut z0.zss, &s.zss), (&mut z0.zis, &s.zis)] {
                for (e, v) in values.iter().enumerate() {
                    rows.re[e * n + t] = v.re;
                    rows.im[e * n + t] = v.im;
                }
            }
            for (e, v) in s.zii.iter().enumerate() {
                z0.zii.re[e * n + t] = v.re;
                z0.zii.im[e * n + t] = v.im;
            }
            for (e, v) in y_steps[t].iter().enumerate() {
                self.y_step.re[e * n + t] = v.re;
                self.y_step.im[e * n + t] = v.im;
            }
        }
    }

    /// Runs `plan` on the batch and writes |Z| × `scale[p]` of every slot and bus of
    /// interest p at `out[(slot · m + p) · stride + offset + t]` for point t (so a curve of
    /// `stride` points fills batch after batch). `Err(t)`: point t (the first) has a
    /// combination that is exactly singular or an output that is not finite, as
    /// [`PointSolution::evaluate`] returns false for it; the other points' values are
    /// written.
    pub fn magnitudes(
        &mut self,
        plan: &ComboPlan,
        scale: &[f64],
        out: &mut [f64],
        (stride, offset): (usize, usize),
    ) -> Result<(), usize> {
        let n = self.n;
        for op in &plan.ops {
            match *op {
                Op::Bare { slot } => self.write(0, slot, scale, out, (stride, offset)),
                Op::Apply { bank, n: 0 } => self.held[bank + 1] = self.held[bank],
                Op::Apply { bank, n: steps } => {
                    self.factor(bank, steps);
                    self.apply(bank);
                    self.held[bank + 1] = bank + 1;
                }
                Op::Leaf { bank, n: 0, slot } => {
                    self.write(self.held[bank], slot, scale, out, (stride, offset))
                }
                Op::Leaf {
                    bank,
                    n: steps,
                    slot,
                } => {
                    self.factor(bank, steps);
                    self.leaf(bank, slot, scale, out, (stride, offset));
                }
            }
        }
        let (finite, smallest) = (&self.finite[..n], &self.smallest[..n]);
        match (0..n).position(|t| !(finite[t] == 0.0 && smallest[t] > 1e-300)) {
            Some(t) => Err(t),
            None => Ok(()),
        }
    }

    /// f = y / (1 + y·Z_aa) per point, y = `steps` × bank a's step admittance, from the
    /// level bank a reads; marks the points where 1 + y·Z_aa cannot be divided by.
    fn factor(&mut self, a: usize, steps: u32) {
        let (k, n) = (self.k, self.n);
        let z = &self.levels[self.held[a]].zss;
        let times = f64::from(steps);
        let (yr, yi) = (&self.y_step.re[a * n..][..n], &self.y_step.im[a * n..][..n]);
        let (zr, zi) = (&z.re[(a * k + a) * n..][..n], &z.im[(a * k + a) * n..][..n]);
        let (fr, fi) = (&mut self.f.re[..n], &mut self.f.im[..n]);
        let (finite, smallest) = (&mut self.finite[..n], &mut self.smallest[..n]);
        for t in 0..n {
            // y = y_step · n; denom = 1 + y·Z_aa; f = y / denom (num-complex's formulas).
            let (y_re, y_im) = (yr[t] * times, yi[t] * times);
            let d_re = 1.0 + (y_re * zr[t] - y_im * zi[t]);
            let d_im = y_re * zi[t] + y_im * zr[t];
            finite[t] += nonfinite(d_re) + nonfinite(d_im);
            smallest[t] = smallest[t].min(d_re.abs().max(d_im.abs()));
            let ns = d_re * d_re + d_im * d_im;
            fr[t] = (y_re * d_re + y_im * d_im) / ns;
            fi[t] = (y_im * d_re - y_re * d_im) / ns;
        }
    }

    /// Level a + 1 = the level bank a reads with the update f at bank a: the entries that
    /// the banks after a and the buses of interest still need (as `State::add_into`).
    fn apply(&mut self, a: usize) {
        let (k, m, n) = (self.k, self.m, self.n);
        let (lo, hi) = self.levels.split_at_mut(a + 1);
        let from = &lo[self.held[a]];
        let to = &mut hi[0];
        let (f, g) = (&self.f, &mut self.g);
        for i in a + 1..k {
            mul_into(row(&from.zss, i * k + a, n), (&f.re[..n], &f.im[..n]), g, n);
            for j in a + 1..k {
                sub_product(
                    row(&from.zss, i * k + j, n),
                    (&g.re[..n], &g.im[..n]),
                    row(&from.zss, a * k + j, n),
                    row_mut(&mut to.zss, i * k + j, n),
                );
            }
        }
        for p in 0..m {
            let zpa = row(&from.zis, p * k + a, n);
            mul_into(zpa, (&f.re[..n], &f.im[..n]), g, n);
            for j in a + 1..k {
                sub_product(
                    row(&from.zis, p * k + j, n),
                    (&g.re[..n], &g.im[..n]),
                    row(&from.zss, a * k + j, n),
                    row_mut(&mut to.zis, p * k + j, n),
                );
            }
            sub_product(
                row(&from.zii, p, n),
                (&g.re[..n], &g.im[..n]),
                zpa,
                row_mut(&mut to.zii, p, n),
            );
        }
    }

    /// The driving points after the update f at bank a, Z_pp − (Z_pa·Z_pa)·f (as
    /// `State::leaf`), written as magnitudes.
    fn leaf(
        &mut self,
        a: usize,
        slot: usize,
        scale: &[f64],
        out: &mut [f64],
        (stride, offset): (usize, usize),
    ) {
        let (k, n) = (self.k, self.n);
        let from = &self.levels[self.held[a]];
        let (fr, fi) = (&self.f.re[..n], &self.f.im[..n]);
        for (p, base) in scale.iter().enumerate().take(self.m) {
            let (ar, ai) = row(&from.zis, p * k + a, n);
            let (zr, zi) = row(&from.zii, p, n);
            let dst = &mut out[(slot * self.m + p) * stride + offset..][..n];
            let finite = &mut self.finite[..n];
            for t in 0..n {
                let (sq_re, sq_im) = (ar[t] * ar[t] - ai[t] * ai[t], ar[t] * ai[t] + ai[t] * ar[t]);
                let o_re = zr[t] - (sq_re * fr[t] - sq_im * fi[t]);
                let o_im = zi[t] - (sq_re * fi[t] + sq_im * fr[t]);
                finite[t] += nonfinite(o_re) + nonfinite(o_im);
                dst[t] = (o_re * o_re + o_im * o_im).sqrt() * base;
            }
        }
    }

    /// The driving points of a level as they are, written as magnitudes.
    fn write(
        &mut self,
        level: usize,
        slot: usize,
        scale: &[f64],
        out: &mut [f64],
        (stride, offset): (usize, usize),
    ) {
        let n = self.n;
        let from = &self.levels[level];
        for (p, base) in scale.iter().enumerate().take(self.m) {
            let (zr, zi) = row(&from.zii, p, n);
            let dst = &mut out[(slot * self.m + p) * stride + offset..][..n];
            let finite = &mut self.finite[..n];
            for t in 0..n {
                finite[t] += nonfinite(zr[t]) + nonfinite(zi[t]);
                dst[t] = (zr[t] * zr[t] + zi[t] * zi[t]).sqrt() * base;
            }
        }
    }
}

/// 0 for a finite x, NaN for an infinite or NaN one (x·0): summed per point, the sum stays
/// 0 while every value is finite.
#[inline(always)]
fn nonfinite(x: f64) -> f64 {
    x * 0.0
}

/// Entry e's row of points (real, imaginary).
fn row(r: &Rows, e: usize, n: usize) -> (&[f64], &[f64]) {
    (&r.re[e * n..][..n], &r.im[e * n..][..n])
}

/// Entry e's row of points, to write.
fn row_mut(r: &mut Rows, e: usize, n: usize) -> (&mut [f64], &mut [f64]) {
    (&mut r.re[e * n..][..n], &mut r.im[e * n..][..n])
}

/// g = x·f per point (complex product).
fn mul_into((xr, xi): (&[f64], &[f64]), (fr, fi): (&[f64], &[f64]), g: &mut Rows, n: usize) {
    let (gr, gi) = (&mut g.re[..n], &mut g.im[..n]);
    for t in 0..n {
        gr[t] = xr[t] * fr[t] - xi[t] * fi[t];
        gi[t] = xr[t] * fi[t] + xi[t] * fr[t];
    }
}

/// to = s − g·z per point (complex).
fn sub_product(
    (sr, si): (&[f64], &[f64]),
    (gr, gi): (&[f64], &[f64]),
    (zr, zi): (&[f64], &[f64]),
    (tr, ti): (&mut [f64], &mut [f64]),
) {
    let n = tr.len();
    let (sr, si, gr, gi, zr, zi, ti) = (
        &sr[..n],
        &si[..n],
        &gr[..n],
        &gi[..n],
        &zr[..n],
        &zi[..n],
        &mut ti[..n],
    );
    for t in 0..n {
        tr[t] = sr[t] - (gr[t] * zr[t] - gi[t] * zi[t]);
        ti[t] = si[t] - (gr[t] * zi[t] + gi[t] * zr[t]);
    }
}

#[cfg(test)]
mod tests {
    use super::super::engine::State;
    use super::*;

    /// For `Complex64` rows in tests: the magnitudes of [`PointSolution::evaluate`] laid out as
    /// [`PointBatch::magnitudes`] lays them out.
    fn per_point(
        points: &[PointSolution],
        plan: &ComboPlan,
        scale: &[f64],
        out: &mut [f64],
    ) -> Result<(), usize> {
        let m = scale.len();
        let np = points.len();
        let mut z = vec![Complex64::default(); plan.len() * m];
        let mut scratch = crate::solve::Scratch::default();
        for (i, p) in points.iter().enumerate() {
            if !p.evaluate(plan, &mut scratch, &mut z) {
                return Err(i);
            }
            for (slot_p, v) in z.iter().enumerate() {
                out[slot_p * np + i] = (v.re * v.re + v.im * v.im).sqrt() * scale[slot_p % m];
            }
        }
        Ok(())
    }

    /// A symmetric k×k "Z₀" and m rows with varied entries per point, and step admittances
    /// alternating capacitive and (detuned) inductive.
    fn points(k: usize, m: usize, count: usize) -> Vec<PointSolution> {
        (0..count)
            .map(|t| {
                let h = 1.0 + 0.37 * t as f64;
                let c = |a: usize, b: usize| {
                    let (lo, hi) = (a.min(b) as f64, a.max(b) as f64);
                    Complex64::new(0.01 + 0.002 * lo + 0.001 * hi, 0.05 * h / (1.0 + lo + hi))
                };
                PointSolution {
                    order: h,
                    state: State {
                        k,
                        m,
                        zss: (0..k * k).map(|e| c(e / k, e % k)).collect(),
                        zis: (0..m * k).map(|e| c(e / k + 3, e % k) * 0.9).collect(),
                        zii: (0..m).map(|p| c(p + 3, p + 3) * 1.1).collect(),
                    },
                    y_step: (0..k)
                        .map(|b| {
                            let b_pu = if b % 2 == 0 { 0.3 * h } else { -2.0 / h };
                            Complex64::new(0.001, b_pu)
                        })
                        .collect(),
                }
            })
            .collect()
    }

    #[test]
    fn a_batch_gives_the_magnitudes_of_point_by_point_evaluation_bit_for_bit() {
        // Consistency: the batched plan against PointSolution::evaluate, which the engine's
        // tests check against full factorizations.
        for (k, m) in [(1, 1), (3, 2), (4, 5)] {
            let pts = points(k, m, 45);
            let combos: Vec<Vec<u32>> = (0..3u32.pow(k as u32))
                .map(|c| (0..k).map(|b| (c / 3u32.pow(b as u32)) % 3).collect())
                .collect();
            let refs: Vec<&[u32]> = combos.iter().map(|c| &c[..]).collect();
            let plan = ComboPlan::new(&refs);
            let scale: Vec<f64> = (0..m).map(|p| 1.0 + p as f64).collect();
            let np = pts.len();
            let mut want = vec![0.0; plan.len() * m * np];
            per_point(&pts, &plan, &scale, &mut want).expect("regular");
            let mut got = vec![0.0; plan.len() * m * np];
            let mut batch = PointBatch::default();
            let y: Vec<Vec<Complex64>> = pts.iter().map(|p| p.y_step.clone()).collect();
            for (b, (chunk, y)) in pts
                .chunks(BATCH_POINTS)
                .zip(y.chunks(BATCH_POINTS))
                .enumerate()
            {
                batch.load(chunk, y);
                batch
                    .magnitudes(&plan, &scale, &mut got, (np, b * BATCH_POINTS))
                    .expect("regular");
            }
            for (w, g) in want.iter().zip(&got) {
                assert_eq!(w.to_bits(), g.to_bits(), "k {k} m {m}: {w} against {g}");
            }
        }
    }

    #[test]
    fn a_singular_point_is_named_as_point_by_point_evaluation_names_it() {
        let mut pts = points(2, 1, 10);
        // Bank 0's admittance not a number at point 6: 1 + y·Z_aa cannot be divided by.
        pts[6].y_step_mut()[0] = Complex64::new(f64::NAN, 0.0);
        let plan = ComboPlan::new(&[&[0, 0][..], &[1, 0][..], &[1, 2][..]]);
        let mut out = vec![0.0; 3 * 10];
        assert_eq!(per_point(&pts, &plan, &[1.0], &mut out), Err(6));
        let mut batch = PointBatch::default();
        let y = |pts: &[PointSolution]| pts.iter().map(|p| p.y_step.clone()).collect::<Vec<_>>();
        batch.load(&pts, &y(&pts));
        assert_eq!(batch.magnitudes(&plan, &[1.0], &mut out, (10, 0)), Err(6));
        // And 1 + y·Z_aa exactly 0 at point 3 (Z_aa = 1, y = −1), the earlier point named.
        pts[3].state.zss[0] = Complex64::new(1.0, 0.0);
        pts[3].y_step_mut()[0] = Complex64::new(-1.0, 0.0);
        assert_eq!(per_point(&pts, &plan, &[1.0], &mut out), Err(3));
        batch.load(&pts, &y(&pts));
        assert_eq!(batch.magnitudes(&plan, &[1.0], &mut out, (10, 0)), Err(3));
    }
}
