//! Harmonic penetration: the harmonic currents the plant's converters inject, the harmonic
//! voltage they cause at every bus, the harmonic currents in every branch, bank and drawn
//! from the supply, for every scenario × configuration.
//!
//! Each load injects I_h = I₁·m_h/100 with I₁ = P / (√3·kV·pf) (input contract). Loads are
//! solved one bus at a time and their contributions combined by magnitude with the Study
//! sheet's summation law: `arithmetic` (magnitudes add, an upper bound) or IEC 61000-3-6
//! (V = (Σ V_i^α)^(1/α) with α = 1 for h < 5, 1.4 for 5 ≤ h ≤ 10, 2 above).

use std::collections::HashMap;

use num_complex::Complex64;
use rayon::prelude::*;
use serde::Serialize;

use super::Configuration;
use super::spectra::{self, SpectrumChoice};
use crate::model::{Plant, Summation};
use crate::network::{BASE_MVA, Network};
use crate::solve::{ComboPlan, Engine, HarmonicPoint, SolveError, TransferScratch};

/// |z| by √(re² + im²): faster than `norm` (hypot), exact enough for impedances far from
/// overflow.
#[inline]
fn abs(z: Complex64) -> f64 {
    (z.re * z.re + z.im * z.im).sqrt()
}

/// IEC 61000-3-6 summation exponent α at order h: 1 for h < 5, 1.4 for 5 ≤ h ≤ 10, 2 for
/// h > 10.
pub fn summation_exponent(order: f64) -> f64 {
    if order < 5.0 {
        1.0
    } else if order <= 10.0 {
        1.4
    } else {
        2.0
    }
}

/// Combines contributions by the summation law at `order`.
pub fn combine(law: Summation, order: f64, values: impl Iterator<Item = f64>) -> f64 {
    match law {
        Summation::Arithmetic => values.sum(),
        Summation::Iec61000_3_6 => {
            let a = summation_exponent(order);
            values.map(|v| v.powf(a)).sum::<f64>().powf(1.0 / a)
        }
    }
}

/// The harmonic injections of the plant, grouped by bus.
#[derive(Debug, Clone, Serialize)]
pub struct Injections {
    /// Orders with a non-zero injection, ascending (orders within 1e-9 are one).
    pub orders: Vec<f64>,
    /// Network bus index of each injection bus.
    pub buses: Vec<usize>,
    /// Per order, per injection bus: the bus's combined current, per unit of S_base at the
    /// bus's voltage base.
    pub current_pu: Vec<Vec<f64>>,
    /// Which spectrum each harmonic-producing load used.
    pub spectra: Vec<SpectrumChoice>,
}

impl Injections {
    /// Collects every harmonic-producing load's spectrum and current. I₁ in per unit is
    /// (P / pf) / S_base, the same at any voltage level.
    pub fn new(plant: &Plant, net: &Network) -> Injections {
        let law = plant.study.summation;
        let mut chosen = Vec::new();
        // (bus, order) → currents of the loads at that bus, per unit.
        let mut per: HashMap<(usize, u64), Vec<f64>> = HashMap::new();
        let mut orders: Vec<f64> = Vec::new();
        let mut buses: Vec<usize> = Vec::new();
        for load in &plant.loads {
            let Some(choice) = spectra::choose(plant, load) else {
                continue;
            };
            let Some(bus) = net.bus_index(&load.bus) else {
                continue;
            };
            let i1 = load.p_kw() / 1000.0 / load.power_factor / BASE_MVA;
            for &(h, m) in &choice.lines {
                if m <= 0.0 || i1 <= 0.0 {
                    continue;
                }
                let h = orders
                    .iter()
                    .copied()
                    .find(|o| (o - h).abs() < 1e-9)
                    .unwrap_or_else(|| {
                        orders.push(h);
                        h
                    });
                if !buses.contains(&bus) {
                    buses.push(bus);
                }
                per.entry((bus, h.to_bits()))
                    .or_default()
                    .push(i1 * m / 100.0);
            }
            chosen.push(choice);
        }
        orders.sort_by(f64::total_cmp);
        let current_pu = orders
            .iter()
            .map(|&h| {
                buses
                    .iter()
                    .map(|&b| {
                        per.get(&(b, h.to_bits()))
                            .map_or(0.0, |v| combine(law, h, v.iter().copied()))
                    })
                    .collect()
            })
            .collect();
        Injections {
            orders,
            buses,
            current_pu,
            spectra: chosen,
        }
    }
}

/// The harmonic with the highest ratio to its limit at one bus (or the highest value where
/// no order has a limit).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Individual {
    pub order: f64,
    /// % of nominal line-to-neutral voltage.
    pub v_percent: f64,
    /// The limit at that order, %, if one applies.
    pub limit_percent: Option<f64>,
}

/// Penetration results of one scenario × configuration.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Distortion {
    pub scenario: usize,
    pub configuration: usize,
    /// Voltage THD at each bus, % of nominal: √(Σ V_h²) / V_nominal.
    pub thd_percent: Vec<f64>,
    /// The worst individual harmonic at each bus against `limits`.
    pub worst: Vec<Option<Individual>>,
    /// Harmonic current drawn from the supply at each injected order, A at the PCC's kV.
    pub pcc_current_a: Vec<f64>,
    /// Harmonic voltage at each bank's bus, % of nominal, per injected order.
    pub bank_voltage_percent: Vec<Vec<f64>>,
    /// Harmonic current in each bank, A per phase, per injected order.
    pub bank_current_a: Vec<Vec<f64>>,
    /// rms of the harmonic currents in each branch, A at the branch's from-bus kV.
    pub branch_rms_a: Vec<f64>,
}

/// Per-bus individual limits by order (`None` = no limit), used while the voltages of a
/// configuration are at hand.
pub type IndividualLimits = Vec<Vec<Option<f64>>>;

/// The whole penetration study.
#[derive(Debug, Clone)]
pub struct Penetration {
    pub injections: Injections,
    /// One per scenario × configuration, in that nesting order.
    pub results: Vec<Distortion>,
    /// Z per scenario and order, kept to recompute voltages on demand.
    points: Vec<Vec<HarmonicPoint>>,
    law: Summation,
}

/// Amperes per unit of current at a bus of `kv` kV: I_base = S_base / (√3·kV).
pub fn amps_per_pu(kv: f64) -> f64 {
    BASE_MVA * 1000.0 / (3f64.sqrt() * kv)
}

/// Bytes of transfer impedances one block of configurations may hold.
const BLOCK_BYTES: usize = 32 << 20;

impl Penetration {
    /// Runs the study of `injections` for `configurations` in every scenario. `limits[b][o]` is the
    /// individual voltage limit of bus b at injected order o, and `pcc` the PCC bus index.
    pub fn run(
        plant: &Plant,
        engine: &Engine<'_>,
        injections: Injections,
        configurations: &[Configuration],
        limits: &IndividualLimits,
        pcc: usize,
    ) -> Result<Penetration, SolveError> {
        let net = engine.network();
        let law = plant.study.summation;
        let ns = net.scenarios.len();
        let points: Vec<Vec<HarmonicPoint>> = (0..ns)
            .map(|s| {
                injections
                    .orders
                    .par_iter()
                    .map(|&h| engine.harmonic_point(h, s, &injections.buses))
                    .collect::<Result<Vec<_>, _>>()
            })
            .collect::<Result<_, _>>()?;
        let n = net.buses.len();
        let l = injections.buses.len().max(1);
        let per_block = (BLOCK_BYTES / (n * l * 16).max(1)).clamp(1, 256);
        let mut order: Vec<usize> = (0..configurations.len()).collect();
        order.sort_by(|&a, &b| configurations[a].steps.cmp(&configurations[b].steps));
        let tasks: Vec<(usize, &[usize])> = (0..ns)
            .flat_map(|s| order.chunks(per_block).map(move |c| (s, c)))
            .collect();
        let ctx = Ctx {
            net,
            injections: &injections,
            points: &points,
            configurations,
            limits,
            law,
            pcc,
        };
        let blocks: Vec<Vec<Distortion>> = tasks
            .par_iter()
            .map(|&(s, chunk)| ctx.block(s, chunk))
            .collect::<Result<_, _>>()?;
        let nc = configurations.len();
        let mut slots: Vec<Option<Distortion>> = vec![None; ns * nc];
        for d in blocks.into_iter().flatten() {
            let i = d.scenario * nc + d.configuration;
            slots[i] = Some(d);
        }
        Ok(Penetration {
            injections,
            results: slots.into_iter().flatten().collect(),
            points,
            law,
        })
    }

    /// The result of scenario `s`, configuration `c`.
    pub fn result(&self, s: usize, c: usize, configurations: usize) -> &Distortion {
        &self.results[s * configurations + c]
    }

    /// Harmonic voltage at every bus and injected order for scenario `s` with `steps`, per
    /// unit of nominal phase voltage: `v[bus][order]`. `None` if singular.
    pub fn voltages(&self, s: usize, steps: &[u32]) -> Option<Vec<Vec<f64>>> {
        let plan = ComboPlan::new(&[steps]);
        let mut scratch = TransferScratch::default();
        let pts = &self.points[s];
        let (n, l) = pts.first().map_or((0, 0), HarmonicPoint::shape);
        let mut v = vec![vec![0.0; pts.len()]; n];
        let mut z = vec![Complex64::default(); n * l];
        for (o, p) in pts.iter().enumerate() {
            if !p.evaluate(&plan, &mut scratch, &mut z) {
                return None;
            }
            let i = &self.injections.current_pu[o];
            for (r, row) in v.iter_mut().enumerate() {
                row[o] = combine(self.law, p.order, (0..l).map(|c| abs(z[r * l + c]) * i[c]));
            }
        }
        Some(v)
    }
}

struct Ctx<'a> {
    net: &'a Network,
    injections: &'a Injections,
    points: &'a [Vec<HarmonicPoint>],
    configurations: &'a [Configuration],
    limits: &'a IndividualLimits,
    law: Summation,
    pcc: usize,
}

impl Ctx<'_> {
    fn block(&self, s: usize, chunk: &[usize]) -> Result<Vec<Distortion>, SolveError> {
        let net = self.net;
        let n = net.buses.len();
        let no = self.injections.orders.len();
        let l = self.injections.buses.len();
        let nk = net.banks.len();
        let combos: Vec<&[u32]> = chunk
            .iter()
            .map(|&c| &self.configurations[c].steps[..])
            .collect();
        let plan = ComboPlan::new(&combos);
        let mut out: Vec<Distortion> = chunk
            .iter()
            .map(|&c| Distortion {
                scenario: s,
                configuration: c,
                thd_percent: vec![0.0; n],
                worst: vec![None; n],
                pcc_current_a: vec![0.0; no],
                bank_voltage_percent: vec![vec![0.0; no]; nk],
                bank_current_a: vec![vec![0.0; no]; nk],
                branch_rms_a: vec![0.0; net.branches.len()],
            })
            .collect();
        let mut z = vec![Complex64::default(); chunk.len() * n * l];
        let mut scratch = TransferScratch::default();
        let sources: Vec<(usize, usize)> = net.scenarios[s]
            .sources
            .iter()
            .map(|&i| (i, net.sources[i].bus))
            .collect();
        let pcc_amps = amps_per_pu(net.buses[self.pcc].kv);
        for (o, p) in self.points[s].iter().enumerate() {
            let h = p.order;
            if !p.evaluate(&plan, &mut scratch, &mut z) {
                return Err(SolveError::Singular {
                    scenario: net.scenarios[s].name.clone(),
                    order: h,
                    bus: String::new(),
                });
            }
            let cur = &self.injections.current_pu[o];
            let y_src: Vec<(usize, Complex64)> = sources
                .iter()
                .map(|&(i, bus)| (bus, net.sources[i].model.y_pu(h, net.resistance)))
                .collect();
            let y_br: Vec<Complex64> = net
                .branches
                .iter()
                .map(|b| b.z.at(h, net.resistance).inv())
                .collect();
            for (slot, d) in out.iter_mut().enumerate() {
                let zb = &z[slot * n * l..(slot + 1) * n * l];
                let steps = &self.configurations[d.configuration].steps;
                for r in 0..n {
                    let v = combine(self.law, h, (0..l).map(|c| abs(zb[r * l + c]) * cur[c]));
                    let v_pct = v * 100.0;
                    d.thd_percent[r] += v_pct * v_pct;
                    let lim = self.limits[r][o];
                    let ratio = |x: &Individual| match x.limit_percent {
                        Some(lp) if lp > 0.0 => x.v_percent / lp,
                        _ => 0.0,
                    };
                    let cand = Individual {
                        order: h,
                        v_percent: v_pct,
                        limit_percent: lim,
                    };
                    let better = match &d.worst[r] {
                        None => true,
                        Some(w) => {
                            let (a, b) = (ratio(&cand), ratio(w));
                            a > b || (a == b && cand.v_percent > w.v_percent)
                        }
                    };
                    if better {
                        d.worst[r] = Some(cand);
                    }
                }
                let supply = combine(
                    self.law,
                    h,
                    (0..l).map(|c| {
                        let i: Complex64 = y_src.iter().map(|&(bus, y)| zb[bus * l + c] * y).sum();
                        abs(i) * cur[c]
                    }),
                );
                d.pcc_current_a[o] = supply * pcc_amps;
                for (b, bank) in net.banks.iter().enumerate() {
                    let v = combine(
                        self.law,
                        h,
                        (0..l).map(|c| abs(zb[bank.bus * l + c]) * cur[c]),
                    );
                    d.bank_voltage_percent[b][o] = v * 100.0;
                    let n_steps = f64::from(steps.get(b).copied().unwrap_or(0));
                    let i_pu = v * (p.y_step(b) * n_steps).norm();
                    d.bank_current_a[b][o] = i_pu * amps_per_pu(net.buses[bank.bus].kv);
                }
                for (k, br) in net.branches.iter().enumerate() {
                    let i = combine(
                        self.law,
                        h,
                        (0..l).map(|c| {
                            abs((zb[br.from * l + c] - zb[br.to * l + c]) * y_br[k]) * cur[c]
                        }),
                    );
                    let a = i * amps_per_pu(net.buses[br.from].kv);
                    d.branch_rms_a[k] += a * a;
                }
            }
        }
        for d in &mut out {
            d.thd_percent.iter_mut().for_each(|t| *t = t.sqrt());
            d.branch_rms_a.iter_mut().for_each(|t| *t = t.sqrt());
        }
        Ok(out)
    }
}

/// How much a configuration amplifies the harmonic voltage at a bank's bus against the same
/// scenario with no banks.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct BankAmplification {
    /// THD at the bank's bus with the configuration / without banks.
    pub thd_ratio: f64,
    /// The largest ratio of a single order's voltage, and that order.
    pub max_ratio: f64,
    pub at_order: f64,
}

/// [`BankAmplification`] of each bank's bus in `config` against `none` (same scenario).
pub fn bank_amplification(
    config: &Distortion,
    none: &Distortion,
    orders: &[f64],
) -> Vec<BankAmplification> {
    config
        .bank_voltage_percent
        .iter()
        .zip(&none.bank_voltage_percent)
        .map(|(v, v0)| {
            let rss = |x: &[f64]| x.iter().map(|a| a * a).sum::<f64>().sqrt();
            let ratio = |a: f64, b: f64| if b > 0.0 { a / b } else { 1.0 };
            let (mut max_ratio, mut at_order) = (0.0, orders.first().copied().unwrap_or(0.0));
            for ((a, b), &h) in v.iter().zip(v0).zip(orders) {
                let r = ratio(*a, *b);
                if r > max_ratio {
                    max_ratio = r;
                    at_order = h;
                }
            }
            BankAmplification {
                thd_ratio: ratio(rss(v), rss(v0)),
                max_ratio,
                at_order,
            }
        })
        .collect()
}
