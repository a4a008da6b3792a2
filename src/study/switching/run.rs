//! The switching study over every event: simulation, hand check, limits, and the worst
//! event of each bank as waveforms.

use rayon::prelude::*;

use super::{
    Case, EventSpec, RemotePeak, Sim, SwitchingEvent, SwitchingStudy, Waveform, events, measure,
    setup, simulate,
};
use crate::model::Plant;
use crate::network::Network;
use crate::study::operating::{OperatingSolver, OperatingStudy};
use crate::study::transient::{Inrush, Regime, Rlc, back_to_back, energize, step_branch};

/// What the study reads.
pub struct Inputs<'a> {
    pub plant: &'a Plant,
    pub net: &'a Network,
    pub operating: &'a OperatingStudy,
    /// The load flow the operating study was solved with.
    pub load_flow: &'a OperatingSolver,
    /// Per scenario and bank: the supply's Thevenin R and X at the bank's bus, ohm at
    /// fundamental, without banks (for the formulas).
    pub z_th_ohm: &'a [Vec<(f64, f64)>],
}

/// Fundamental cycles shown in a waveform chart.
const CHART_CYCLES: f64 = 3.0;
/// Points of a waveform chart, about.
const CHART_POINTS: usize = 1_200;
/// Largest inrush inductance tried when a limit is exceeded, µH.
const MAX_INRUSH_UH: f64 = 10_000.0;

/// Simulates every event of the plant (in parallel) and captures each bank's worst.
pub fn run(inp: &Inputs<'_>) -> SwitchingStudy {
    let specs = events(inp.plant, inp.net);
    let done: Vec<Result<SwitchingEvent, String>> =
        specs.par_iter().map(|ev| one(inp, ev)).collect();
    let mut study = SwitchingStudy::default();
    let mut kept: Vec<&EventSpec> = Vec::new();
    for (r, ev) in done.into_iter().zip(&specs) {
        match r {
            Ok(e) => {
                study.events.push(e);
                kept.push(ev);
            }
            Err(why) => study.failures.push(why),
        }
    }
    // Each bank's worst event, simulated again with its waveforms kept (in parallel, in
    // the banks' order).
    let worst: Vec<(&SwitchingEvent, &EventSpec)> = (0..inp.plant.banks.len())
        .filter_map(|b| {
            (study.events.iter().zip(kept.iter().copied()))
                .filter(|(_, ev)| ev.bank == b)
                .max_by(|x, y| x.0.peak_a.total_cmp(&y.0.peak_a))
        })
        .collect();
    let waveforms: Vec<Waveform> = worst
        .par_iter()
        .filter_map(|&(e, ev)| {
            let v = inp
                .load_flow
                .shift_free_voltages(ev.scenario, &ev.before)
                .ok();
            let s = setup(inp.plant, inp.net, ev, v.as_deref(), None);
            let q = inp.plant.banks[ev.bank].trapped_charge_pu;
            let sim = simulate(&s, q, true).ok()?;
            waveform(&sim, s.i_base_a, inp.net.frequency_hz, e)
        })
        .collect();
    study.waveforms = waveforms;
    study
}

fn waveform(sim: &Sim, i_base_a: f64, hz: f64, e: &SwitchingEvent) -> Option<Waveform> {
    let [i, v, c] = sim.channels.as_ref()?;
    let len = ((CHART_CYCLES / hz / sim.dt).ceil() as usize).min(i.len());
    let idx = measure::thin(&[&i[..], &v[..], &c[..]], len, CHART_POINTS);
    let amp = 2f64.sqrt() * i_base_a;
    Some(Waveform {
        bank: e.bank.clone(),
        scenario: e.scenario.clone(),
        step: e.step,
        case: e.case,
        time_ms: idx.iter().map(|&n| (n + 1) as f64 * sim.dt * 1e3).collect(),
        current_a: idx.iter().map(|&n| i[n] * amp).collect(),
        bus_pu: idx.iter().map(|&n| v[n]).collect(),
        capacitor_pu: idx.iter().map(|&n| c[n]).collect(),
        formula_peak_a: e.formula.as_ref().map(|f| f.peak_a),
    })
}

/// The closed formulas for `ev` (hand check). A trapped charge q raises the voltage across
/// the switch at a peak closing to (1 + |q|)·V̂, and the formulas scale with it: the peak
/// inrush by (1 + |q|), the overshoot above 1 pu likewise (common practice).
pub fn formula(
    plant: &Plant,
    net: &Network,
    ev: &EventSpec,
    z_th_ohm: (f64, f64),
) -> Option<Inrush> {
    if !formula_applies(net, ev) {
        return None;
    }
    let mut f = formula_discharged(plant, net, ev, z_th_ohm);
    let k = 1.0 + plant.banks[ev.bank].trapped_charge_pu.abs();
    f.peak_a *= k;
    f.overvoltage_pu = f.overvoltage_pu.map(|v| 1.0 + (v - 1.0) * k);
    Some(f)
}

/// Whether the IEEE C37.012 closed formulas describe `ev`: a step energized alone against
/// the supply (isolated), or back-to-back where the closing step and every energized step
/// on its bus are plain capacitors (the formulas' circuit: capacitors discharging into each
/// other through their inrush inductance). A detuned neighbour rings through its reactor
/// at other frequencies; there the simulation alone answers.
pub fn formula_applies(net: &Network, ev: &EventSpec) -> bool {
    let bus = net.banks[ev.bank].bus;
    match ev.case {
        Case::Isolated => true,
        Case::BackToBack => {
            net.banks[ev.bank].p == 0.0
                && (ev.before.iter().enumerate())
                    .filter(|(o, n)| **n > 0 && net.banks[*o].bus == bus)
                    .all(|(o, _)| net.banks[o].p == 0.0)
        }
    }
}

fn formula_discharged(
    plant: &Plant,
    net: &Network,
    ev: &EventSpec,
    z_th_ohm: (f64, f64),
) -> Inrush {
    let model = &net.banks[ev.bank];
    let bank = &plant.banks[ev.bank];
    let kv = net.buses[model.bus].kv;
    match ev.case {
        Case::Isolated => energize(bank, model.p, 1, kv, net.frequency_hz, z_th_ohm),
        Case::BackToBack => {
            let w = 2.0 * std::f64::consts::PI * net.frequency_hz;
            let rlc = |b: usize, n: u32| {
                let (l, r) = step_branch(&plant.banks[b], net.banks[b].p, w);
                let c = 1.0 / (w * plant.banks[b].step_xc_ohm());
                let n = f64::from(n);
                Rlc {
                    r_ohm: r / n,
                    l_h: l / n,
                    c_f: c * n,
                }
            };
            let on: Vec<Rlc> = ev
                .before
                .iter()
                .enumerate()
                .filter(|(o, n)| **n > 0 && net.banks[*o].bus == model.bus)
                .map(|(o, &n)| rlc(o, n))
                .collect();
            back_to_back(kv * 1000.0 / 3f64.sqrt(), rlc(ev.bank, 1), &on)
        }
    }
}

/// One event: simulation, formulas and limits.
// Long: one event simulated, its formulas beside it and the inductance that meets its limit.
fn one(inp: &Inputs<'_>, ev: &EventSpec) -> Result<SwitchingEvent, String> {
    let (plant, net) = (inp.plant, inp.net);
    let bank = &plant.banks[ev.bank];
    let scenario = &net.scenarios[ev.scenario].name;
    let label = crate::study::Configuration {
        steps: ev.before.clone(),
    }
    .label(&plant.banks);
    let v = inp
        .load_flow
        .shift_free_voltages(ev.scenario, &ev.before)
        .ok();
    let s = setup(plant, net, ev, v.as_deref(), None);
    let q = bank.trapped_charge_pu;
    let sim = simulate(&s, q, false).map_err(|e| {
        format!(
            "switching: bank {} step {} in scenario {scenario} ({label}) could not be simulated: {e}",
            bank.id, ev.step
        )
    })?;
    let amp = 2f64.sqrt() * s.i_base_a;
    let peak_a = sim.peak_i_pu * amp;
    let figures = [peak_a, sim.bus_peak_pu, sim.cap_peak_pu];
    if figures
        .iter()
        .chain(&sim.remote_peak_pu)
        .any(|v| !v.is_finite())
    {
        return Err(format!(
            "switching: bank {} step {} in scenario {scenario} ({label}) has no finite solution (check the bank's and the network's data)",
            bank.id, ev.step
        ));
    }
    let (modes, under) = measure::ringing(&sim.transient, sim.dt);
    let regime = if under {
        Regime::UnderDamped
    } else {
        Regime::OverDamped
    };
    let dominant = modes.first().copied();
    let z_th = inp
        .z_th_ohm
        .get(ev.scenario)
        .and_then(|z| z.get(ev.bank))
        .copied()
        .unwrap_or((0.0, 0.0));
    let inrush_limit_a = bank.inrush_limit_ka.map(|ka| ka * 1000.0);
    let inrush_exceeds = inrush_limit_a.is_some_and(|lim| peak_a > lim);
    let needed_inrush_uh = match inrush_limit_a {
        Some(lim) if inrush_exceeds => needed_inrush(inp, ev, v.as_deref(), q, lim, peak_a),
        _ => None,
    };
    let rated_ratio = net.buses[s.bus].kv / bank.rated_kv;
    let capacitor_peak_rated = sim.cap_peak_pu * rated_ratio;
    Ok(SwitchingEvent {
        scenario: scenario.clone(),
        bank: bank.id.clone(),
        bus: net.buses[s.bus].id.clone(),
        step: ev.step,
        case: ev.case,
        before: label,
        trapped_charge_pu: q.abs(),
        peak_a,
        frequency_hz: dominant.map(|m| m.frequency_hz),
        zeta: dominant.map(|m| m.zeta),
        modes,
        regime,
        bus_peak_pu: sim.bus_peak_pu,
        capacitor_peak_pu: sim.cap_peak_pu,
        capacitor_peak_rated,
        remote: s
            .remote
            .iter()
            .zip(&sim.remote_peak_pu)
            .map(|(&(o, bus), &p)| RemotePeak {
                bank: plant.banks[o].id.clone(),
                bus: net.buses[bus].id.clone(),
                peak_pu: p,
            })
            .collect(),
        ring_down_ms: sim.ring_down_s.map(|t| t * 1e3),
        simulated_ms: sim.simulated_s * 1e3,
        step_us: sim.dt * 1e6,
        closing_deg: super::closing_deg(sim.phi),
        formula: formula(plant, net, ev, z_th),
        inrush_limit_a,
        inrush_exceeds,
        needed_inrush_uh,
        overvoltage_exceeds: capacitor_peak_rated
            > crate::study::duty::transient_capability(plant.study.limits).peak_multiple,
    })
}

/// The inrush inductance per step (µH, rounded up) that brings the simulated peak under
/// `limit_a`: the loop inductance scaled by (I/I_limit)² (the formula's I ∝ 1/√L) and
/// re-simulated, up to eight times; `None` when 10 mH does not.
fn needed_inrush(
    inp: &Inputs<'_>,
    ev: &EventSpec,
    v: Option<&[num_complex::Complex64]>,
    q: f64,
    limit_a: f64,
    mut peak_a: f64,
) -> Option<f64> {
    let (plant, net) = (inp.plant, inp.net);
    let bank = &plant.banks[ev.bank];
    let model = &net.banks[ev.bank];
    let w = 2.0 * std::f64::consts::PI * net.frequency_hz;
    let reactor_uh = model.p * bank.step_xc_ohm() / w * 1e6;
    let mut uh = bank.inrush_uh.unwrap_or(crate::model::DEFAULT_INRUSH_UH);
    for _ in 0..8 {
        let total = (reactor_uh + uh) * (peak_a / limit_a).powi(2) * 1.02;
        uh = (total - reactor_uh).max(uh * 1.1).ceil();
        if uh > MAX_INRUSH_UH {
            return None;
        }
        let s = setup(plant, net, ev, v, Some(uh));
        peak_a = simulate(&s, q, false).ok()?.peak_i_pu * 2f64.sqrt() * s.i_base_a;
        if peak_a <= limit_a {
            return Some(uh);
        }
    }
    None
}
