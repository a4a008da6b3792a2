//! The direct evaluation of harmonic penetration: the full transfer matrix from every bus
//! to every injection bus for each configuration (rank-1 updates), then every sum. The
//! reference the fast evaluations are tested against; and how every evaluation records an
//! order's figures.

use num_complex::Complex64;

use super::pcc::{self, PartAtPcc};
use super::{
    Ctx, Distortion, Individual, OrderInputs, abs, amps_per_pu, background_currents, combine, dot,
    load_phasors, magnitude_sum, phasor_currents, summarize, update_worst,
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
        let mut z_tw = Vec::new();
        let mut part = ThreeWirePart::default();
        for (o, p) in self.points[s].iter().enumerate() {
            let h = p.order;
            if !p.evaluate(&plan, &mut scratch, &mut z) {
                return Err(self.singular(s, h));
            }
            // The 3-wire part of a zero-sequence triplen order, in the positive network.
            let tw = self.three_wire_part(s, o);
            if let Some((p2, _)) = tw {
                z_tw.resize(chunk.len() * n * l, Complex64::default());
                if !p2.evaluate(&plan, &mut scratch, &mut z_tw) {
                    return Err(self.singular(s, h));
                }
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
                let theta = self
                    .angles
                    .get(s * nc + d.configuration)
                    .map_or(&[][..], |a| a);
                if let Some((p2, inp2)) = tw {
                    let zb2 = &z_tw[slot * n * l..(slot + 1) * n * l];
                    part.solve(self.law, (p2, inp2, zb2), theta, steps, net);
                }
                let supply;
                let mut bank_bg = vec![0.0; nk];
                if self.law == Summation::Phasor {
                    phasor_currents(inp, h, theta, l, &mut inj);
                    for r in 0..n {
                        v[r] = dot(&zb[r * l..(r + 1) * l], &inj);
                    }
                    let drawn = inp.pcc_current(&v);
                    if tw.is_some() {
                        part.keep_primary(net, |r| abs(v[r]));
                        // Phase a carries the sum of the sequence components.
                        for (vr, v2) in v.iter_mut().zip(&part.v) {
                            *vr += v2;
                        }
                        supply = abs(drawn + part.drawn);
                    } else {
                        supply = abs(drawn);
                    }
                    for r in 0..n {
                        v_mag[r] = abs(v[r]);
                    }
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
                    let into = |c: usize| inp.pcc_transfer(|b| zb[b * l + c]);
                    supply = combine(
                        self.law,
                        h,
                        inp.loads
                            .iter()
                            .map(|&(c, a, _)| abs(into(c)) * a)
                            .chain((inp.background.iter().zip(&inp.background_own)).map(
                                |(&(c, i), &own)| {
                                    abs(into(c) - if own { 1.0 } else { 0.0 }) * abs(i)
                                },
                            ))
                            .chain(tw.map(|_| part.supply)),
                    );
                    if tw.is_some() {
                        part.keep_primary(net, |r| v_mag[r]);
                        // Nested combinations equal one over every contribution (the law
                        // is a power sum).
                        for (vm, v2) in v_mag.iter_mut().zip(&part.v_mag) {
                            *vm = combine(self.law, h, [*vm, *v2].into_iter());
                        }
                    }
                    if !inp.background.is_empty() {
                        for (b, bank) in net.banks.iter().enumerate() {
                            let r = bank.bus;
                            bank_bg[b] =
                                magnitude_sum(self.law, h, &bg_only, |c| abs(zb[r * l + c]))
                                    * y_bank(b);
                        }
                    }
                }
                if self.law == Summation::Phasor {
                    load_phasors(inp, h, theta, l, &mut inj);
                }
                let at_pcc = tw.map(|_| PartAtPcc {
                    i: part.drawn,
                    i_law: part.supply,
                    v: part.v.get(self.pcc).copied().unwrap_or_default(),
                });
                let split = pcc::split(
                    inp,
                    self.law,
                    h,
                    self.pcc,
                    |b, c| zb[b * l + c],
                    &inj,
                    at_pcc,
                    self.pcc_units(),
                );
                self.record_pcc(d, o, split);
                let bank_i: Vec<f64> = (net.banks.iter().enumerate())
                    .map(|(b, bank)| match tw {
                        // Each sequence's current in the bank, combined by the law.
                        Some(_) => {
                            let own = part.primary_bank_v[b] * y_bank(b);
                            combine(self.law, h, [own, part.bank_i[b]].into_iter())
                        }
                        None => v_mag[bank.bus] * y_bank(b),
                    })
                    .collect();
                self.record(d, o, h, &v_mag, supply, &bank_bg, &bank_i);
            }
        }
        for d in &mut out {
            self.conclude(d);
        }
        Ok(out)
    }

    /// Per unit to A at the PCC and to % of nominal voltage.
    pub(super) fn pcc_units(&self) -> (f64, f64) {
        (amps_per_pu(self.net.buses[self.pcc].kv), 100.0)
    }

    /// Records order `o`'s PCC split and bounds (per unit) into `d`.
    pub(super) fn record_pcc(&self, d: &mut Distortion, o: usize, split: pcc::PccSplit) {
        let (amps, _) = self.pcc_units();
        d.pcc_plant_current_a[o] = split.plant * amps;
        d.pcc_background_current_a[o] = split.background * amps;
        if let Some(b) = split.bounds {
            let no = d.pcc_current_a.len();
            d.pcc_bounds.resize(no, pcc::PccBounds::default());
            d.pcc_bounds[o] = b;
        }
    }

    /// The positive-sequence point and inputs of the 3-wire part of order `o` in scenario
    /// `s`, when that order is zero sequence and 3-wire loads inject it too.
    pub(super) fn three_wire_part(
        &self,
        s: usize,
        o: usize,
    ) -> Option<(&crate::solve::HarmonicPoint, &OrderInputs)> {
        let p = self.points_tw.get(s)?.get(o)?.as_ref()?;
        let i = self.inputs_tw.get(s)?.get(o)?.as_ref()?;
        Some((p, i))
    }

    /// Records order `o` (`h`) of result `d` from the harmonic voltage magnitude at every
    /// bus (per unit), the current drawn from the supply (per unit), each bank's current
    /// from the background alone (per unit) and each bank's current (per unit): THD sums,
    /// worst individual harmonics, the PCC current (A) and the banks' voltages (%) and
    /// currents (A).
    #[allow(clippy::too_many_arguments)]
    pub(super) fn record(
        &self,
        d: &mut Distortion,
        o: usize,
        h: f64,
        v_mag: &[f64],
        supply: f64,
        bank_bg: &[f64],
        bank_i: &[f64],
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
            d.bank_current_a[b][o] = bank_i[b] * amps;
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

/// The 3-wire part of a zero-sequence triplen order in one configuration, solved in the
/// positive-sequence network: its bus voltages, the current it draws from the supply and
/// its current in each bank; and the primary (zero-sequence) voltage at each bank's bus.
#[derive(Default)]
pub(super) struct ThreeWirePart {
    /// Phasor voltages (`phasor` summation), per unit.
    pub v: Vec<Complex64>,
    /// Voltage magnitudes by the summation law, per unit.
    pub v_mag: Vec<f64>,
    /// The current from the PCC toward the utility (`phasor`), per unit.
    pub drawn: Complex64,
    /// The supply current by the law (magnitude summation), per unit.
    pub supply: f64,
    /// Each bank's current from this part, per unit.
    pub bank_i: Vec<f64>,
    /// The primary part's voltage magnitude at each bank's bus, per unit.
    pub primary_bank_v: Vec<f64>,
    inj: Vec<Complex64>,
}

impl ThreeWirePart {
    /// Solves the part from its point's transfer impedances `zb` (n × l of this
    /// configuration), operating angles `theta` (`phasor`) and bank `steps`.
    pub fn solve(
        &mut self,
        law: Summation,
        (p, inp, zb): (&crate::solve::HarmonicPoint, &OrderInputs, &[Complex64]),
        theta: &[f64],
        steps: &[u32],
        net: &crate::network::Network,
    ) {
        let (n, h) = (net.buses.len(), p.order);
        let l = zb.len() / n.max(1);
        self.v.resize(n, Complex64::default());
        self.v_mag.resize(n, 0.0);
        if law == Summation::Phasor {
            phasor_currents(inp, h, theta, l, &mut self.inj);
            for r in 0..n {
                self.v[r] = dot(&zb[r * l..(r + 1) * l], &self.inj);
                self.v_mag[r] = abs(self.v[r]);
            }
            self.drawn = inp.pcc_current(&self.v);
        } else {
            for r in 0..n {
                self.v_mag[r] = magnitude_sum(law, h, inp, |c| abs(zb[r * l + c]));
            }
            let into = |c: usize| inp.pcc_transfer(|b| zb[b * l + c]);
            self.supply = combine(law, h, inp.loads.iter().map(|&(c, a, _)| abs(into(c)) * a));
        }
        self.bank_i = (net.banks.iter().enumerate())
            .map(|(b, bank)| {
                let k = f64::from(steps.get(b).copied().unwrap_or(0));
                self.v_mag[bank.bus] * abs(p.y_step(b) * k)
            })
            .collect();
    }

    /// Keeps the primary part's voltage magnitude at each bank's bus (`mag(bus)`).
    pub fn keep_primary(&mut self, net: &crate::network::Network, mag: impl Fn(usize) -> f64) {
        self.primary_bank_v = net.banks.iter().map(|b| mag(b.bus)).collect();
    }
}
