//! The direct evaluation of harmonic penetration: the full transfer matrix from every bus
//! to every injection bus for each configuration (rank-1 updates), then every sum. The
//! reference the fast evaluations are tested against; and how every evaluation records an
//! order's figures.

use num_complex::Complex64;

use super::{
    Ctx, Distortion, Individual, OrderInputs, abs, amps_per_pu, background_currents, combine, dot,
    magnitude_sum, phasor_currents, summarize, update_worst,
};
use crate::model::Summation;
use crate::solve::{ComboPlan, SolveError, TransferScratch};

impl Ctx<'_> {
    // Long: the direct sums of one block of configurations share the per-order transfer points.
    pub(super) fn block(&self, s: usize, chunk: &[usize]) -> Result<Vec<Distortion>, SolveError> {
        let net = self.net;
        let n = net.buses.len();
        let no = self.injections.orders.len();
        let l = self.injections.buses.len();
        let nk = net.banks.len();
        let nc = self.configurations.len();
        let combos: Vec<&[u32]> = chunk
            .iter()
            .map(|&c| &self.configurations[c].steps[..])
            .collect();
        let plan = ComboPlan::new(&combos);
        let mut out: Vec<Distortion> = chunk
            .iter()
            .map(|&c| Distortion::zeroed(s, c, n, no, nk))
            .collect();
        let mut z = vec![Complex64::default(); chunk.len() * n * l];
        let mut scratch = TransferScratch::default();
        let mut inj = Vec::new();
        let mut inj_bg = Vec::new();
        let mut v = vec![Complex64::default(); n];
        let mut v_mag = vec![0.0; n];
        for (o, p) in self.points[s].iter().enumerate() {
            let h = p.order;
            if !p.evaluate(&plan, &mut scratch, &mut z) {
                return Err(self.singular(s, h));
            }
            let inp = &self.inputs[s][o];
            let bg_only = OrderInputs {
                loads: Vec::new(),
                background: inp.background.clone(),
                ..OrderInputs::default()
            };
            for (slot, d) in out.iter_mut().enumerate() {
                let zb = &z[slot * n * l..(slot + 1) * n * l];
                let steps = &self.configurations[d.configuration].steps;
                let y_bank = |b: usize| {
                    let k = f64::from(steps.get(b).copied().unwrap_or(0));
                    abs(p.y_step(b) * k)
                };
                let supply;
                let mut bank_bg = vec![0.0; nk];
                if self.law == Summation::Phasor {
                    let theta = &self.angles[s * nc + d.configuration];
                    phasor_currents(inp, h, theta, l, &mut inj);
                    for r in 0..n {
                        v[r] = dot(&zb[r * l..(r + 1) * l], &inj);
                        v_mag[r] = abs(v[r]);
                    }
                    let drawn: Complex64 = inp.sources.iter().map(|&(b, y)| y * v[b]).sum();
                    let own: Complex64 = inp.background.iter().map(|&(_, i)| i).sum();
                    supply = abs(drawn - own);
                    if !inp.background.is_empty() {
                        background_currents(inp, l, &mut inj_bg);
                        for (b, bank) in net.banks.iter().enumerate() {
                            let r = bank.bus;
                            bank_bg[b] = abs(dot(&zb[r * l..(r + 1) * l], &inj_bg)) * y_bank(b);
                        }
                    }
                } else {
                    for (r, vm) in v_mag.iter_mut().enumerate() {
                        *vm = magnitude_sum(self.law, h, inp, |c| abs(zb[r * l + c]));
                    }
                    let into = |c: usize| -> Complex64 {
                        inp.sources.iter().map(|&(b, y)| zb[b * l + c] * y).sum()
                    };
                    supply = combine(
                        self.law,
                        h,
                        inp.loads.iter().map(|&(c, a, _)| abs(into(c)) * a).chain(
                            inp.background
                                .iter()
                                .map(|&(c, i)| abs(into(c) - 1.0) * abs(i)),
                        ),
                    );
                    if !inp.background.is_empty() {
                        for (b, bank) in net.banks.iter().enumerate() {
                            let r = bank.bus;
                            bank_bg[b] =
                                magnitude_sum(self.law, h, &bg_only, |c| abs(zb[r * l + c]))
                                    * y_bank(b);
                        }
                    }
                }
                let y_abs: Vec<f64> = (0..nk).map(y_bank).collect();
                self.record(d, o, h, &v_mag, supply, &bank_bg, &y_abs);
            }
        }
        for d in &mut out {
            self.conclude(d);
        }
        Ok(out)
    }

    /// Records order `o` (`h`) of result `d` from the harmonic voltage magnitude at every
    /// bus (per unit), the current drawn from the supply (per unit), each bank's current
    /// from the background alone (per unit) and each bank's admittance magnitude (per
    /// unit): THD sums, worst individual harmonics, the PCC current (A) and the banks'
    /// voltages (%) and currents (A).
    #[allow(clippy::too_many_arguments)]
    pub(super) fn record(
        &self,
        d: &mut Distortion,
        o: usize,
        h: f64,
        v_mag: &[f64],
        supply: f64,
        bank_bg: &[f64],
        y_abs: &[f64],
    ) {
        let net = self.net;
        d.pcc_current_a[o] = supply * amps_per_pu(net.buses[self.pcc].kv);
        for (r, &vm) in v_mag.iter().enumerate() {
            let v_pct = vm * 100.0;
            d.thd_percent[r] += v_pct * v_pct;
            update_worst(
                &mut d.worst[r],
                Individual {
                    order: h,
                    v_percent: v_pct,
                    limit_percent: self.limits[r][o],
                },
            );
        }
        for (b, bank) in net.banks.iter().enumerate() {
            let amps = amps_per_pu(net.buses[bank.bus].kv);
            let vb = v_mag[bank.bus];
            d.bank_voltage_percent[b][o] = vb * 100.0;
            d.bank_current_a[b][o] = vb * y_abs[b] * amps;
            let a = bank_bg[b] * amps;
            d.bank_background_rms_a[b] += a * a;
        }
    }

    /// Finishes a result whose every order is recorded: the rss of the THD sums and the
    /// background currents, the worst buses.
    pub(super) fn conclude(&self, d: &mut Distortion) {
        d.thd_percent.iter_mut().for_each(|t| *t = t.sqrt());
        summarize(d, self.thd_limit, self.pcc);
        d.bank_background_rms_a
            .iter_mut()
            .for_each(|t| *t = t.sqrt());
    }
}
