//! Harmonic penetration: the harmonic currents the plant's converters inject and the
//! background the supply carries, the harmonic voltage they cause at every bus, the
//! harmonic currents in every branch, bank and drawn from the supply, for every scenario ×
//! configuration.
//!
//! Each load injects I_h = I₁·m_h/100 with I₁ = P / (√3·kV·pf) (input contract); each
//! background line is an EMF E_h behind its source's impedance, i.e. a Norton current
//! E_h·y_s(h) at the source's bus. Every order is solved in its sequence network
//! (positive for h = 3k+1 and interharmonics, negative for 3k−1 with the same impedances,
//! zero for 3k). Contributions combine by the Study sheet's summation law: `arithmetic`
//! (magnitudes add, an upper bound), IEC 61000-3-6 (V = (Σ V_i^α)^(1/α)), or `phasor`
//! (complex superposition, with each load's angle from the configuration's operating
//! point).

use num_complex::Complex64;
use rayon::prelude::*;

mod bounded;
mod currents;
mod dense;
mod direct;
mod linear;
mod on_demand;
mod pcc;
use currents::{background_currents, load_phasors, order_inputs, phasor_angles, phasor_currents};
pub use pcc::PccBounds;
use serde::Serialize;

use super::Configuration;
pub use super::injections::{Injections, combine, summation_exponent};
use super::operating::OperatingStudy;
use crate::model::{Plant, Sequence, Summation};
use crate::network::{BASE_MVA, Network};
use crate::solve::{ComboPlan, Engine, HarmonicPoint, SolveError};

/// |z| by √(re² + im²): faster than `norm` (hypot), exact enough for impedances far from
/// overflow.
#[inline]
fn abs(z: Complex64) -> f64 {
    (z.re * z.re + z.im * z.im).sqrt()
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
    /// Harmonic current across the PCC (the flow from the PCC bus toward the utility side,
    /// `network::pcc`) at each injected order, A at the PCC's kV: the plant's emission and
    /// the background's part together.
    pub pcc_current_a: Vec<f64>,
    /// The plant's own emission across the PCC (its loads, the background off), A per
    /// injected order: what IEEE 519-2014's current limits and TDD judge.
    pub pcc_plant_current_a: Vec<f64>,
    /// The background's part across the PCC (the plant's loads off), A per injected order:
    /// reported, not judged.
    pub pcc_background_current_a: Vec<f64>,
    /// Under `phasor` summation, per injected order, the PCC's worst case over blank
    /// background angles and arithmetic bound (empty under the other laws).
    pub pcc_bounds: Vec<PccBounds>,
    /// Harmonic voltage at each bank's bus, % of nominal, per injected order.
    pub bank_voltage_percent: Vec<Vec<f64>>,
    /// Harmonic current in each bank, A per phase, per injected order.
    pub bank_current_a: Vec<Vec<f64>>,
    /// rms over the orders of each bank's harmonic current caused by the background alone,
    /// A per phase (0 without a Background sheet).
    pub bank_background_rms_a: Vec<f64>,
    /// The bus with the highest ratio of voltage THD to its limit (the last of equal ones).
    pub worst_thd_bus: usize,
    /// The bus whose worst individual harmonic has the highest [`individual_key`].
    pub worst_individual_bus: usize,
    /// A bus other than the PCC above its THD limit or an individual limit.
    pub in_plant_above: bool,
    /// Which buses' `thd_percent` and `worst` were evaluated (`None`: every bus). The
    /// bounded evaluation ([`Evaluation::Fast`] under magnitude summation) evaluates the PCC, the bank and source
    /// buses and every bus that its bounds could not rule out as the worst; the others hold
    /// NaN and `None`.
    pub evaluated: Option<Vec<bool>>,
}

impl Distortion {
    /// A result of scenario `s`, configuration `c` with every sum at zero: `n` buses, `no`
    /// injected orders, `nk` banks.
    fn zeroed(s: usize, c: usize, n: usize, no: usize, nk: usize) -> Distortion {
        Distortion {
            scenario: s,
            configuration: c,
            thd_percent: vec![0.0; n],
            worst: vec![None; n],
            pcc_current_a: vec![0.0; no],
            pcc_plant_current_a: vec![0.0; no],
            pcc_background_current_a: vec![0.0; no],
            pcc_bounds: Vec::new(),
            bank_voltage_percent: vec![vec![0.0; no]; nk],
            bank_current_a: vec![vec![0.0; no]; nk],
            bank_background_rms_a: vec![0.0; nk],
            worst_thd_bus: 0,
            worst_individual_bus: 0,
            in_plant_above: false,
            evaluated: None,
        }
    }
}

/// How the per-configuration sums are evaluated. Every figure reported is the same either
/// way (to rounding); the fast evaluations only skip work.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Evaluation {
    /// Fast where the plant is large (see [`BOUNDED_ABOVE`]), direct otherwise.
    #[default]
    Auto,
    /// Every bus of every configuration by the full transfer matrix (the reference).
    Direct,
    /// Under magnitude summation the bounded evaluation (`bounded/`): exact at the PCC, the
    /// bank and source buses and the worst buses, the rest ruled out by proven bounds.
    /// Under `phasor` summation the linear one (`linear.rs`): superposition, every bus
    /// exact.
    Fast,
    /// As [`Evaluation::Fast`], except that the bounded evaluation stops at the PCC, the
    /// bank and the source buses: no other bus is bounded or summed, so the worst buses
    /// and `in_plant_above` are among those alone. What a re-run that reads the banks'
    /// figures alone needs (the damping band).
    BankBuses,
}

/// Results × buses above which [`Evaluation::Auto`] is fast (the JSON's per-bus tables stop
/// at the same size, `present::json::MAX_BUS_ENTRIES`).
pub const BOUNDED_ABOVE: usize = 200_000;

/// Keeps in `worst` the harmonic with the highest ratio to its limit (0 without a limit),
/// ties going to the higher value.
#[inline]
fn update_worst(worst: &mut Option<Individual>, cand: Individual) {
    let ratio = |x: &Individual| match x.limit_percent {
        Some(lp) if lp > 0.0 => x.v_percent / lp,
        _ => 0.0,
    };
    let better = match worst {
        None => true,
        Some(w) => {
            let (a, b) = (ratio(&cand), ratio(w));
            a > b || (a == b && cand.v_percent > w.v_percent)
        }
    };
    if better {
        *worst = Some(cand);
    }
}

/// The key by which a configuration's worst individual harmonic is chosen among the buses:
/// its ratio to its limit, or a vanishing 1e-12 × its value where it has none.
pub fn individual_key(worst: Option<Individual>) -> f64 {
    worst.map_or(0.0, |w| match w.limit_percent {
        Some(l) if l > 0.0 => (w.v_percent / l).max(w.v_percent * 1e-12),
        _ => w.v_percent * 1e-12,
    })
}

/// Per-bus individual limits by order (`None` = no limit), used while the voltages of a
/// configuration are at hand.
pub type IndividualLimits = Vec<Vec<Option<f64>>>;

/// What one order of one scenario injects, ready for the per-configuration sums.
#[derive(Debug, Clone, Default)]
struct OrderInputs {
    /// Conducting load columns: (column, |I| per unit combined at the bus, fixed phasor).
    loads: Vec<(usize, f64, Complex64)>,
    /// Background of the scenario's sources: (column, Norton current E·y_s per unit).
    background: Vec<(usize, Complex64)>,
    /// Per background term: true where its source is a utility source at the PCC bus (its
    /// Norton current is part of the flow across the PCC).
    background_own: Vec<bool>,
    /// Per background term: whether its angle is given (else the worst case turns it).
    background_angle_known: Vec<bool>,
    /// The flow from the PCC bus toward the utility: I = Σ c·V over (bus, c)
    /// ([`crate::network::Network::pcc_flow`]), less the own background terms.
    pcc: Vec<(usize, Complex64)>,
    /// Branches of the order's network: (from, to, positive-network index, y(h)).
    branches: Vec<(usize, usize, usize, Complex64)>,
}

impl OrderInputs {
    /// The current from the PCC bus toward the utility for bus voltages `v` (per unit):
    /// Σ c·V less the Norton currents of the own background terms.
    fn pcc_current(&self, v: &[Complex64]) -> Complex64 {
        let flow: Complex64 = self.pcc.iter().map(|&(b, c)| c * v[b]).sum();
        let own: Complex64 = (self.background.iter().zip(&self.background_own))
            .filter(|(_, o)| **o)
            .map(|(&(_, i), _)| i)
            .sum();
        flow - own
    }

    /// The PCC current per unit current injected at a column, from the transfer impedance
    /// `z(bus)` of every bus to that column: Σ c·Z[bus, column].
    fn pcc_transfer(&self, z: impl Fn(usize) -> Complex64) -> Complex64 {
        self.pcc.iter().map(|&(b, c)| c * z(b)).sum()
    }
}

/// The whole penetration study.
#[derive(Debug, Clone)]
pub struct Penetration {
    pub injections: Injections,
    /// One per scenario × configuration, in that nesting order.
    pub results: Vec<Distortion>,
    /// Scenario × configuration pairs whose phasor angles fell back to the configuration
    /// without banks (or to 0) because the load flow has no solution there.
    pub angle_fallbacks: usize,
    /// Z per scenario and order, kept to recompute voltages on demand.
    points: Vec<Vec<HarmonicPoint>>,
    inputs: Vec<Vec<OrderInputs>>,
    /// Per scenario and order: the 3-wire part of a zero-sequence triplen order in the
    /// positive-sequence network (`None` for every other order).
    points_tw: Vec<Vec<Option<HarmonicPoint>>>,
    inputs_tw: Vec<Vec<Option<OrderInputs>>>,
    /// Per scenario × configuration: the operating voltage angle at each column, radians
    /// (`phasor` only, else empty).
    angles: Vec<Vec<f64>>,
    steps: Vec<Vec<u32>>,
    law: Summation,
}

/// Amperes per unit of current at a bus of `kv` kV: I_base = S_base / (√3·kV).
pub fn amps_per_pu(kv: f64) -> f64 {
    BASE_MVA * 1000.0 / (3f64.sqrt() * kv)
}

/// Bytes of transfer impedances one block of configurations may hold.
const BLOCK_BYTES: usize = 32 << 20;

/// The networks and engines of the two sequence networks.
pub struct SequenceEngines<'a, 'b> {
    /// Positive sequence (also negative).
    pub positive: &'a Engine<'b>,
    /// Zero sequence.
    pub zero: &'a Engine<'b>,
}

impl SequenceEngines<'_, '_> {
    fn for_order(&self, seq: Sequence) -> &Engine<'_> {
        if seq == Sequence::Zero {
            self.zero
        } else {
            self.positive
        }
    }
}

impl Penetration {
    /// Runs the study of `injections` for `configurations` in every scenario. `limits[b][o]`
    /// is the individual voltage limit of bus b at injected order o, `pcc` the PCC bus
    /// index, `operating` the load flow of the same configurations (its angles under
    /// `phasor` summation).
    // Long: sets up every evaluation path (direct, bounded, linear) on the same per-order points.
    #[allow(clippy::too_many_arguments)]
    pub fn run(
        plant: &Plant,
        engines: &SequenceEngines<'_, '_>,
        injections: Injections,
        configurations: &[Configuration],
        operating: &OperatingStudy,
        limits: &IndividualLimits,
        thd_limit: &[f64],
        pcc: usize,
        evaluation: Evaluation,
    ) -> Result<Penetration, SolveError> {
        let net = engines.positive.network();
        let law = plant.study.summation;
        let ns = net.scenarios.len();
        let nc = configurations.len();
        // Orders split between the zero- and the positive-sequence network are summed by
        // the direct evaluation only.
        let split = injections.three_wire.iter().any(Option::is_some);
        let fast = !split
            && match evaluation {
                Evaluation::Direct => false,
                Evaluation::Fast | Evaluation::BankBuses => true,
                Evaluation::Auto => ns * nc * net.buses.len() > BOUNDED_ABOVE,
            };
        let bounded = fast && law != Summation::Phasor;
        let linear = fast && law == Summation::Phasor;
        // Fast: lean points keep Z₀ to the injection buses only at the PCC, bank and source
        // buses (the rows always summed) and solve other rows on demand; the linear
        // evaluation solves with their factors.
        let keep = bounded::always_summed(net, pcc);
        let syms = [
            std::sync::Arc::new(engines.positive.symbolic().clone()),
            std::sync::Arc::new(engines.zero.symbolic().clone()),
        ];
        let points: Vec<Vec<HarmonicPoint>> = (0..ns)
            .map(|s| {
                injections
                    .orders
                    .par_iter()
                    .zip(&injections.sequences)
                    .map(|(&h, &q)| {
                        let engine = engines.for_order(q);
                        if fast {
                            let sym = &syms[usize::from(q == Sequence::Zero)];
                            engine.harmonic_point_lean(h, s, &injections.buses, &keep, sym)
                        } else {
                            engine.harmonic_point(h, s, &injections.buses)
                        }
                    })
                    .collect::<Result<Vec<_>, _>>()
            })
            .collect::<Result<_, _>>()?;
        let inputs: Vec<Vec<OrderInputs>> = (0..ns)
            .map(|s| {
                (0..injections.orders.len())
                    .map(|o| order_inputs(engines, &injections, s, o))
                    .collect()
            })
            .collect();
        let (points_tw, inputs_tw) = three_wire_parts(engines, &injections, ns)?;
        let (angles, angle_fallbacks) = if law == Summation::Phasor {
            phasor_angles(operating, configurations, &injections.buses, ns)
        } else {
            (Vec::new(), 0)
        };
        let n = net.buses.len();
        let l = injections.buses.len().max(1);
        let per_block = (BLOCK_BYTES / (n * l * 16).max(1)).clamp(1, 256);
        let mut order: Vec<usize> = (0..nc).collect();
        order.sort_by(|&a, &b| configurations[a].steps.cmp(&configurations[b].steps));
        let tasks: Vec<(usize, &[usize])> = (0..ns)
            .flat_map(|s| order.chunks(per_block).map(move |c| (s, c)))
            .collect();
        let ctx = Ctx {
            net,
            thd_limit,
            injections: &injections,
            points: &points,
            inputs: &inputs,
            points_tw: &points_tw,
            inputs_tw: &inputs_tw,
            angles: &angles,
            configurations,
            limits,
            law,
            pcc,
            always_only: bounded && evaluation == Evaluation::BankBuses,
        };
        let prepared = if bounded {
            Some(bounded::Prepared::new(&ctx))
        } else {
            None
        };
        let tasks: Vec<(usize, &[usize])> = if fast {
            // Fast blocks hold no transfer matrices: smaller blocks, more parallelism.
            (0..ns)
                .flat_map(|s| order.chunks(8).map(move |c| (s, c)))
                .collect()
        } else {
            tasks
        };
        let blocks: Vec<Distortion> = tasks
            .par_iter()
            .map(|&(s, chunk)| match &prepared {
                Some(p) => p.block(&ctx, s, chunk),
                None if linear => ctx.linear_block(s, chunk),
                None => ctx.block(s, chunk),
            })
            .collect::<Result<Vec<Vec<Distortion>>, _>>()?
            .into_iter()
            .flatten()
            .collect();
        let mut slots: Vec<Option<Distortion>> = vec![None; ns * nc];
        for d in blocks {
            let i = d.scenario * nc + d.configuration;
            slots[i] = Some(d);
        }
        Ok(Penetration {
            injections,
            results: slots.into_iter().flatten().collect(),
            angle_fallbacks,
            points,
            inputs,
            points_tw,
            inputs_tw,
            angles,
            steps: configurations.iter().map(|c| c.steps.clone()).collect(),
            law,
        })
    }

    /// The result of scenario `s`, configuration `c`.
    pub fn result(&self, s: usize, c: usize, configurations: usize) -> &Distortion {
        &self.results[s * configurations + c]
    }

    /// The plan, the points and the operating angles (`phasor` only) of one configuration
    /// evaluated on demand; `None` for an unknown scenario.
    fn one_configuration(
        &self,
        s: usize,
        steps: &[u32],
    ) -> Option<(ComboPlan, &[HarmonicPoint], &[f64])> {
        let pts = self.points.get(s)?;
        let nc = self.steps.len();
        let theta: &[f64] = self
            .steps
            .iter()
            .position(|c| c == steps)
            .and_then(|c| self.angles.get(s * nc + c))
            .map_or(&[], |a| &a[..]);
        Some((ComboPlan::new(&[steps]), pts, theta))
    }
}

/// The positive-sequence points and inputs of the 3-wire parts of zero-sequence triplen
/// orders, per scenario and order.
#[allow(clippy::type_complexity)]
fn three_wire_parts(
    engines: &SequenceEngines<'_, '_>,
    inj: &Injections,
    ns: usize,
) -> Result<
    (
        Vec<Vec<Option<HarmonicPoint>>>,
        Vec<Vec<Option<OrderInputs>>>,
    ),
    SolveError,
> {
    let mut points = Vec::with_capacity(ns);
    let mut inputs = Vec::with_capacity(ns);
    for s in 0..ns {
        let mut ps = Vec::new();
        let mut is = Vec::new();
        for (o, part) in inj.three_wire.iter().enumerate() {
            match part {
                Some((current, phasor)) => {
                    let h = inj.orders[o];
                    ps.push(Some(engines.positive.harmonic_point(h, s, &inj.buses)?));
                    is.push(Some(currents::part_inputs(
                        engines.positive.network(),
                        inj,
                        (current, phasor),
                        s,
                        h,
                    )));
                }
                None => {
                    ps.push(None);
                    is.push(None);
                }
            }
        }
        points.push(ps);
        inputs.push(is);
    }
    Ok((points, inputs))
}

/// Fills a result's worst buses and in-plant flag from its per-bus values (every bus
/// evaluated): the worst THD bus by THD/limit and the worst individual bus by
/// [`individual_key`], each the last of equal ones (as `Iterator::max_by`).
fn summarize(d: &mut Distortion, thd_limit: &[f64], pcc: usize) {
    let n = d.thd_percent.len();
    let thd_ratio = |b: usize| d.thd_percent[b] / thd_limit[b];
    let argmax =
        |f: &dyn Fn(usize) -> f64| (0..n).max_by(|&a, &b| f(a).total_cmp(&f(b))).unwrap_or(0);
    d.worst_thd_bus = argmax(&thd_ratio);
    d.worst_individual_bus = argmax(&|b| individual_key(d.worst[b]));
    d.in_plant_above = (0..n).any(|b| b != pcc && bus_above(d, b, thd_limit[b]));
}

/// Bus `b` above its THD limit (`thd_limit_percent`) or an individual limit (its worst
/// individual harmonic is the one with the highest ratio, so any order above shows there).
pub fn bus_above(d: &Distortion, b: usize, thd_limit_percent: f64) -> bool {
    d.thd_percent[b] / thd_limit_percent > 1.0
        || d.worst[b].is_some_and(|w| w.limit_percent.is_some_and(|l| w.v_percent > l))
}

/// Σ a_i·b_i.
#[inline]
fn dot(a: &[Complex64], b: &[Complex64]) -> Complex64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// The summation law over every contribution of `inp`, with `gain(column)` the transfer
/// magnitude from that column to the quantity.
#[inline]
fn magnitude_sum(
    law: Summation,
    order: f64,
    inp: &OrderInputs,
    gain: impl Fn(usize) -> f64,
) -> f64 {
    combine(
        law,
        order,
        inp.loads
            .iter()
            .map(|&(c, a, _)| gain(c) * a)
            .chain(inp.background.iter().map(|&(c, i)| gain(c) * abs(i))),
    )
}

struct Ctx<'a> {
    net: &'a Network,
    /// Voltage THD limit per bus, %.
    thd_limit: &'a [f64],
    injections: &'a Injections,
    points: &'a [Vec<HarmonicPoint>],
    inputs: &'a [Vec<OrderInputs>],
    points_tw: &'a [Vec<Option<HarmonicPoint>>],
    inputs_tw: &'a [Vec<Option<OrderInputs>>],
    angles: &'a [Vec<f64>],
    configurations: &'a [Configuration],
    limits: &'a IndividualLimits,
    law: Summation,
    pcc: usize,
    /// The bounded evaluation sums the always-summed buses alone ([`Evaluation::BankBuses`]).
    always_only: bool,
}

impl Ctx<'_> {
    /// The error of a network singular at order `h` in scenario `s`.
    fn singular(&self, s: usize, h: f64) -> SolveError {
        SolveError::Singular {
            scenario: self.net.scenarios[s].name.clone(),
            order: h,
            bus: String::new(),
        }
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
