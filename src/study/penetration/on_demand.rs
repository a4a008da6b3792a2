//! One configuration's harmonic voltages and branch currents recomputed on demand from the
//! kept per-order points (the voltages CSV, branch rms), the 3-wire parts of split triplen
//! orders added.

use num_complex::Complex64;

use super::{
    OrderInputs, Penetration, abs, amps_per_pu, combine, dot, magnitude_sum, phasor_currents,
};
use crate::model::Summation;
use crate::network::Network;
use crate::solve::{HarmonicPoint, TransferScratch};

impl Penetration {
    /// The parts of order `o` (point `p`) in scenario `s`: its own network's, then the
    /// 3-wire part of a split triplen order in the positive network.
    fn parts<'a>(
        &'a self,
        s: usize,
        o: usize,
        p: &'a HarmonicPoint,
    ) -> Vec<(&'a HarmonicPoint, &'a OrderInputs)> {
        let mut parts = vec![(p, &self.inputs[s][o])];
        if let (Some(Some(p2)), Some(Some(i2))) = (
            self.points_tw.get(s).and_then(|x| x.get(o)),
            self.inputs_tw.get(s).and_then(|x| x.get(o)),
        ) {
            parts.push((p2, i2));
        }
        parts
    }

    /// Harmonic voltage at every bus and injected order for scenario `s` with `steps`, per
    /// unit of nominal phase voltage: `v[bus][order]`. `None` if singular.
    pub fn voltages(&self, s: usize, steps: &[u32]) -> Option<Vec<Vec<f64>>> {
        let mut out: Option<Vec<Vec<f64>>> = None;
        self.each_order(s, steps, |o, v| {
            let n = v.len();
            let no = self.points[s].len();
            let rows = out.get_or_insert_with(|| vec![vec![0.0; no]; n]);
            for (r, row) in rows.iter_mut().enumerate() {
                row[o] = v[r].0;
            }
        })?;
        Some(out.unwrap_or_default())
    }

    /// Calls `f(order index, per-bus (magnitude, phasor))` for every injected order
    /// of scenario `s` with `steps`: the primary network's voltages, with the 3-wire part of
    /// a split triplen order added (phasors under `phasor` summation, else by the law).
    /// `None` if singular.
    fn each_order(
        &self,
        s: usize,
        steps: &[u32],
        mut f: impl FnMut(usize, &[(f64, Complex64)]),
    ) -> Option<()> {
        let (plan, pts, theta) = self.one_configuration(s, steps)?;
        let mut scratch = TransferScratch::default();
        let (n, l) = pts.first().map_or((0, 0), HarmonicPoint::shape);
        let mut z = vec![Complex64::default(); n * l];
        let mut inj = Vec::new();
        let mut v: Vec<(f64, Complex64)> = vec![(0.0, Complex64::default()); n];
        for (o, p) in pts.iter().enumerate() {
            let parts = self.parts(s, o, p);
            for (k, &(pt, inp)) in parts.iter().enumerate() {
                if !pt.evaluate(&plan, &mut scratch, &mut z) {
                    return None;
                }
                for (r, slot) in v.iter_mut().enumerate() {
                    let (mag, ph) = if self.law == Summation::Phasor {
                        phasor_currents(inp, pt.order, theta, l, &mut inj);
                        let ph = dot(&z[r * l..(r + 1) * l], &inj);
                        (0.0, ph)
                    } else {
                        let m = magnitude_sum(self.law, pt.order, inp, |c| abs(z[r * l + c]));
                        (m, Complex64::default())
                    };
                    *slot = if k == 0 {
                        (mag, ph)
                    } else {
                        (
                            combine(self.law, pt.order, [slot.0, mag].into_iter()),
                            slot.1 + ph,
                        )
                    };
                }
            }
            if self.law == Summation::Phasor {
                v.iter_mut().for_each(|x| x.0 = abs(x.1));
            }
            f(o, &v);
        }
        Some(())
    }
}

impl Penetration {
    /// rms of the harmonic currents in each branch for scenario `s` with `steps`, A at the
    /// branch's from-bus kV (every contribution by the summation law, as the bus voltages;
    /// the two parts of a split triplen order as the voltages); `None` if singular.
    pub fn branch_rms_a(&self, net: &Network, s: usize, steps: &[u32]) -> Option<Vec<f64>> {
        let (plan, pts, theta) = self.one_configuration(s, steps)?;
        let mut scratch = TransferScratch::default();
        let (n, l) = pts.first().map_or((0, 0), HarmonicPoint::shape);
        let amps: Vec<f64> = net
            .branches
            .iter()
            .map(|b| amps_per_pu(net.buses[b.from].kv))
            .collect();
        let nb = net.branches.len();
        let mut rms = vec![0.0; nb];
        let mut z = vec![Complex64::default(); n * l];
        let mut inj = Vec::new();
        let mut v = vec![Complex64::default(); n];
        for (o, p) in pts.iter().enumerate() {
            let parts = self.parts(s, o, p);
            // Per branch: the phasor (`phasor`) or the magnitude by the law.
            let mut i_ph = vec![Complex64::default(); nb];
            let mut i_mag = vec![0.0; nb];
            for (part, &(pt, inp)) in parts.iter().enumerate() {
                if !pt.evaluate(&plan, &mut scratch, &mut z) {
                    return None;
                }
                let h = pt.order;
                if self.law == Summation::Phasor {
                    phasor_currents(inp, h, theta, l, &mut inj);
                    for (r, vr) in v.iter_mut().enumerate() {
                        *vr = dot(&z[r * l..(r + 1) * l], &inj);
                    }
                    for &(from, to, k, y) in &inp.branches {
                        i_ph[k] += (v[from] - v[to]) * y;
                    }
                } else {
                    for &(from, to, k, y) in &inp.branches {
                        let i = magnitude_sum(self.law, h, inp, |c| {
                            abs((z[from * l + c] - z[to * l + c]) * y)
                        });
                        i_mag[k] = if part == 0 {
                            i
                        } else {
                            combine(self.law, h, [i_mag[k], i].into_iter())
                        };
                    }
                }
            }
            for k in 0..nb {
                let i = if self.law == Summation::Phasor {
                    abs(i_ph[k])
                } else {
                    i_mag[k]
                };
                let a = i * amps[k];
                rms[k] += a * a;
            }
        }
        Some(rms.into_iter().map(f64::sqrt).collect())
    }
}
