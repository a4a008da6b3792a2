//! Limits: every bus's harmonic voltages and the PCC's harmonic currents held against the
//! limit set of the Study sheet (IEEE 519-2014 Tables 1–4, or IEC 61000-2-4 class 1, 2 or 3
//! compatibility levels, which set no current limits), with the margin of each value.

use serde::Serialize;

use super::penetration::{Distortion, IndividualLimits, Injections};
use crate::model::{LimitSet, Plant};
use crate::network::Network;
use crate::standards::{Limit, iec61000_2_4, ieee519};

/// Everything the limits depend on, fixed for the study.
#[derive(Debug, Clone, Serialize)]
pub struct LimitContext {
    pub set: LimitSet,
    /// The PCC's network bus index.
    pub pcc: usize,
    /// Maximum demand current at the PCC, A.
    pub i_l_a: f64,
    /// True when I_L was estimated from the Loads sheet (no `Max demand current (A)`).
    pub i_l_estimated: bool,
    /// Maximum three-phase short-circuit current at the PCC over the scenarios, kA.
    pub isc_ka: f64,
    /// Isc/I_L at the PCC; `None` when there is no demand current (I_L = 0), where the ratio
    /// is not defined and the current limits are taken from the table's last row.
    pub isc_over_il: Option<f64>,
    /// Voltage THD limit at each bus.
    pub thd_limit: Vec<Limit>,
    /// Individual voltage limit at each bus and injected order, %.
    #[serde(skip)]
    pub individual: IndividualLimits,
    /// Individual current limit at the PCC per injected order, % of I_L (IEEE 519 only).
    pub pcc_limit: Vec<Option<f64>>,
    /// TDD limit at the PCC, % (IEEE 519 only).
    pub tdd_limit: Option<Limit>,
}

fn iec_class(set: LimitSet) -> Option<u8> {
    match set {
        LimitSet::Ieee519_2014 => None,
        LimitSet::Iec61000_2_4Class1 => Some(1),
        LimitSet::Iec61000_2_4Class2 => Some(2),
        LimitSet::Iec61000_2_4Class3 => Some(3),
    }
}

/// The individual voltage limit of `set` at a bus of `kv` kV and harmonic `order`, %:
/// IEEE 519-2014 Table 1 applies to integer orders; IEC 61000-2-4 as stored.
pub fn voltage_limit(set: LimitSet, kv: f64, order: f64) -> Option<Limit> {
    match iec_class(set) {
        None => (order.fract() == 0.0).then(|| ieee519::voltage_limits(kv).0),
        Some(c) => iec61000_2_4::voltage_limit(c, order),
    }
}

/// The voltage THD limit of `set` at a bus of `kv` kV, %.
pub fn thd_limit(set: LimitSet, kv: f64) -> Limit {
    match iec_class(set) {
        None => ieee519::voltage_limits(kv).1,
        Some(c) => iec61000_2_4::thd_limit(c),
    }
}

/// Estimated maximum demand current at the PCC after power-factor correction, A: the
/// loads' real power at the study point, P = Σ P_load (kW), at the better of the target PF
/// and the loads' own PF √(P² + Q²) (Q = Σ P·tan φ), over √3·kV of the PCC:
/// I_L = P / (PF_after·√3·kV). IEEE 519-2014 (clause 3.1, "maximum demand load current")
/// takes I_L at normal operation, which after correction is the corrected demand; diversity
/// is ignored (an upper estimate of P). With on-site generation (`pcc_p_kw` given) P is the
/// active power the PCC draws from the utility instead, the generators' output netted out.
/// Returns (I_L A, kVA before, kVA after).
pub fn estimated_demand_a(plant: &Plant, pcc_kv: f64, pcc_p_kw: Option<f64>) -> (f64, f64, f64) {
    // `+ 0.0` turns the −0.0 of an empty sum into 0.
    let loads_kw: f64 = plant.loads.iter().map(|l| l.p_kw()).sum::<f64>() + 0.0;
    let q_kvar: f64 = plant
        .loads
        .iter()
        .map(|l| {
            l.p_kw()
                * (1.0 / (l.power_factor * l.power_factor) - 1.0)
                    .max(0.0)
                    .sqrt()
        })
        .sum::<f64>()
        + 0.0;
    let own_pf = if loads_kw.hypot(q_kvar) > 0.0 {
        loads_kw / loads_kw.hypot(q_kvar)
    } else {
        1.0
    };
    // With on-site generation the utility supplies the PCC's P, not the loads'.
    let p_kw = pcc_p_kw.map_or(loads_kw, |p| p.max(0.0));
    let before_kva = p_kw / own_pf;
    let pf_after = own_pf.max(plant.study.target_power_factor.clamp(0.01, 1.0));
    let after_kva = p_kw / pf_after;
    (after_kva / (3f64.sqrt() * pcc_kv), before_kva, after_kva)
}

impl LimitContext {
    /// The limits of `plant` at the network's buses for the injected orders; `isc_ka` is
    /// the maximum short-circuit current at the PCC over the scenarios.
    pub fn new(
        plant: &Plant,
        net: &Network,
        inj: &Injections,
        (pcc, pcc_p_kw): (usize, Option<f64>),
        isc_ka: f64,
    ) -> Self {
        let set = plant.study.limits;
        let pcc_kv = net.buses[pcc].kv;
        let (i_l_a, i_l_estimated) = match plant.study.max_demand_current_a {
            Some(i) => (i, false),
            None => (estimated_demand_a(plant, pcc_kv, pcc_p_kw).0, true),
        };
        let isc_over_il = (i_l_a > 0.0).then(|| isc_ka * 1000.0 / i_l_a);
        let ratio_for_row = isc_over_il.unwrap_or(f64::INFINITY);
        let ieee = iec_class(set).is_none();
        LimitContext {
            set,
            pcc,
            i_l_a,
            i_l_estimated,
            isc_ka,
            isc_over_il,
            thd_limit: net.buses.iter().map(|b| thd_limit(set, b.kv)).collect(),
            individual: net
                .buses
                .iter()
                .map(|b| {
                    inj.orders
                        .iter()
                        .map(|&h| voltage_limit(set, b.kv, h).map(|l| l.value))
                        .collect()
                })
                .collect(),
            pcc_limit: inj
                .orders
                .iter()
                .map(|&h| {
                    if ieee {
                        ieee519::current_limit(pcc_kv, ratio_for_row, h).map(|l| l.value)
                    } else {
                        None
                    }
                })
                .collect(),
            tdd_limit: ieee.then(|| ieee519::tdd_limit(pcc_kv, ratio_for_row)),
        }
    }
}

/// A value against its limit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Checked {
    pub value: f64,
    pub limit: Option<f64>,
    /// limit − value (positive = within the limit).
    pub margin: Option<f64>,
}

impl Checked {
    fn new(value: f64, limit: Option<f64>) -> Self {
        Checked {
            value,
            limit,
            margin: limit.map(|l| l - value),
        }
    }

    /// True when the value is above its limit.
    pub fn exceeds(&self) -> bool {
        self.margin.is_some_and(|m| m < 0.0)
    }

    fn ratio(&self) -> f64 {
        match self.limit {
            Some(l) if l > 0.0 => self.value / l,
            _ => 0.0,
        }
    }
}

/// One bus's voltage distortion against its limits.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BusCheck {
    pub bus: String,
    pub thd_percent: Checked,
    /// Order of the worst individual harmonic.
    pub worst_order: Option<f64>,
    pub worst_percent: Option<Checked>,
}

/// The limits summary of one scenario × configuration.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LimitRow {
    pub scenario: String,
    pub configuration: String,
    pub worst_thd_bus: String,
    pub worst_thd: Checked,
    pub worst_individual_bus: String,
    pub worst_individual_order: Option<f64>,
    pub worst_individual: Option<Checked>,
    /// TDD at the PCC, % of I_L, of the plant's own emission (the background off): what
    /// IEEE 519-2014 clause 5.2 judges.
    pub tdd: Checked,
    /// TDD of the whole flow across the PCC, the background-driven part included, % of
    /// I_L: reported, not judged.
    pub tdd_with_background_percent: f64,
    /// Under `phasor` summation, the PCC's figures beside the stated-angle ones.
    pub pcc_phasor: Option<PccPhasor>,
    pub worst_pcc_order: Option<f64>,
    /// The plant's own PCC harmonic current with the highest ratio to its limit, % of I_L.
    pub worst_pcc_current: Option<Checked>,
    /// Voltage THD at the PCC, %.
    pub pcc_thd: Checked,
    /// The PCC's worst individual voltage harmonic (order, % of nominal).
    pub pcc_individual_order: Option<f64>,
    pub pcc_individual: Option<Checked>,
    /// An in-plant bus (not the PCC) above the voltage values of the limit set: a verdict
    /// under IEC 61000-2-4 (in-plant compatibility levels), informational under IEEE 519
    /// (whose limits apply at the PCC only, IEEE 519-2014 clause 1.1 and 5).
    pub in_plant_above: bool,
    /// Any value above its limit where the limit set applies: under IEEE 519 the PCC's
    /// voltage, TDD and current; under IEC 61000-2-4 every bus's voltage.
    pub exceeds: bool,
}

/// Under `phasor` summation, the PCC's THD and TDD beside the stated-angle figures: the
/// worst case over blank background angles (`None` without one; each order's angle free)
/// and the arithmetic bound (every term's magnitude added), %.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PccPhasor {
    pub thd_worst_angle_percent: Option<f64>,
    pub thd_arithmetic_percent: f64,
    /// The whole flow's TDD (background included) at the worst angles.
    pub tdd_with_background_worst_angle_percent: Option<f64>,
    /// The plant's own TDD, arithmetic bound.
    pub tdd_arithmetic_percent: f64,
}

/// The PCC's phasor bounds of result `d` over its orders (`None` unless `phasor`).
fn pcc_phasor(d: &Distortion, orders: &[f64], i_l_a: f64) -> Option<PccPhasor> {
    if d.pcc_bounds.is_empty() {
        return None;
    }
    let rss = |f: &dyn Fn(usize) -> f64| -> f64 {
        (0..d.pcc_bounds.len())
            .map(|o| f(o).powi(2))
            .sum::<f64>()
            .sqrt()
    };
    let b = &d.pcc_bounds;
    let free = b.iter().any(|x| x.v_worst_angle_percent.is_some());
    let worst_i: Vec<f64> = (b.iter().zip(&d.pcc_current_a))
        .map(|(x, i)| x.i_worst_angle_a.unwrap_or(*i))
        .collect();
    let plant_arith: Vec<f64> = b.iter().map(|x| x.i_plant_arithmetic_a).collect();
    let tdd = |i: &[f64]| {
        if i_l_a > 0.0 {
            tdd_percent(i, orders, i_l_a)
        } else {
            0.0
        }
    };
    Some(PccPhasor {
        thd_worst_angle_percent: free
            .then(|| rss(&|o| b[o].v_worst_angle_percent.unwrap_or(b[o].v_stated_percent))),
        thd_arithmetic_percent: rss(&|o| b[o].v_arithmetic_percent),
        tdd_with_background_worst_angle_percent: free.then(|| tdd(&worst_i)),
        tdd_arithmetic_percent: tdd(&plant_arith),
    })
}

/// Every bus of one result against its limits.
pub fn bus_checks(d: &Distortion, ctx: &LimitContext, net: &Network) -> Vec<BusCheck> {
    net.buses
        .iter()
        .enumerate()
        .map(|(b, bus)| BusCheck {
            bus: bus.id.clone(),
            thd_percent: Checked::new(d.thd_percent[b], Some(ctx.thd_limit[b].value)),
            worst_order: d.worst[b].map(|w| w.order),
            worst_percent: d.worst[b].map(|w| Checked::new(w.v_percent, w.limit_percent)),
        })
        .collect()
}

/// TDD = √(Σ I_h²) / I_L × 100 over the injected orders up to the 50th (IEEE 519-2014);
/// 0 when no harmonic current flows.
pub fn tdd_percent(pcc_current_a: &[f64], orders: &[f64], i_l_a: f64) -> f64 {
    let sum: f64 = pcc_current_a
        .iter()
        .zip(orders)
        .filter(|(_, h)| **h <= 50.0)
        .map(|(i, _)| i * i)
        .sum();
    if sum == 0.0 {
        // No harmonic current (with no demand, I_L = 0, there is none either).
        return 0.0;
    }
    sum.sqrt() / i_l_a * 100.0
}

/// The summary row of one result.
pub fn limit_row(
    d: &Distortion,
    ctx: &LimitContext,
    net: &Network,
    orders: &[f64],
    scenario: &str,
    configuration: String,
) -> LimitRow {
    let check = |b: usize| BusCheck {
        bus: net.buses[b].id.clone(),
        thd_percent: Checked::new(d.thd_percent[b], Some(ctx.thd_limit[b].value)),
        worst_order: d.worst[b].map(|w| w.order),
        worst_percent: d.worst[b].map(|w| Checked::new(w.v_percent, w.limit_percent)),
    };
    // The worst buses and the in-plant flag come with the result (every bus summed, or
    // the bounded evaluation's exact decision).
    let thd = check(d.worst_thd_bus);
    let ind = check(d.worst_individual_bus);
    let bus_exceeds = |b: usize| crate::study::penetration::bus_above(d, b, ctx.thd_limit[b].value);
    let ieee = iec_class(ctx.set).is_none();
    let in_plant_above = d.in_plant_above;
    let voltage_exceeds = bus_exceeds(ctx.pcc) || (!ieee && in_plant_above);
    let at_pcc = check(ctx.pcc.min(net.buses.len().saturating_sub(1)));
    // Without demand (I_L = 0: no load, only background) TDD has no base: not evaluated.
    let demand = ctx.i_l_a > 0.0;
    let tdd = Checked::new(
        if demand {
            tdd_percent(&d.pcc_plant_current_a, orders, ctx.i_l_a)
        } else {
            0.0
        },
        ctx.tdd_limit.filter(|_| demand).map(|l| l.value),
    );
    let tdd_with_background_percent = if demand {
        tdd_percent(&d.pcc_current_a, orders, ctx.i_l_a)
    } else {
        0.0
    };
    let pcc: Vec<(f64, Checked)> = d
        .pcc_plant_current_a
        .iter()
        .zip(orders)
        .zip(&ctx.pcc_limit)
        .filter(|_| demand)
        .map(|((i, &h), lim)| (h, Checked::new(i / ctx.i_l_a * 100.0, *lim)))
        .collect();
    let worst_pcc = pcc
        .iter()
        .max_by(|a, b| {
            a.1.ratio()
                .total_cmp(&b.1.ratio())
                .then(a.1.value.total_cmp(&b.1.value))
        })
        .cloned();
    let exceeds = voltage_exceeds || tdd.exceeds() || pcc.iter().any(|(_, c)| c.exceeds());
    LimitRow {
        scenario: scenario.to_string(),
        configuration,
        worst_thd_bus: thd.bus.clone(),
        worst_thd: thd.thd_percent,
        worst_individual_bus: ind.bus.clone(),
        worst_individual_order: ind.worst_order,
        worst_individual: ind.worst_percent,
        tdd,
        tdd_with_background_percent,
        pcc_phasor: pcc_phasor(d, orders, ctx.i_l_a),
        worst_pcc_order: worst_pcc.as_ref().map(|p| p.0),
        worst_pcc_current: worst_pcc.map(|p| p.1),
        pcc_thd: at_pcc.thd_percent,
        pcc_individual_order: at_pcc.worst_order,
        pcc_individual: at_pcc.worst_percent,
        in_plant_above,
        exceeds,
    }
}
