//! Capacitor duty over the operating envelope: the study point's solved voltages and, per
//! scenario and configuration, one more load flow for the high-voltage case (the lightest
//! load level, every source EMF raised to at least the top of the Study sheet's voltage
//! range, the energized steps at the capacitance's upper tolerance). See `study::duty`.

use rayon::prelude::*;

use super::design::levels::levels;
use super::studies::Context;
use crate::model::Plant;
use crate::network::Network;
use crate::study::duty::{CaseVoltages, DutyEnvelope, DutyRow, duty_rows};
use crate::study::operating::{OperatingSolver, OperatingStudy};
use crate::study::penetration::Penetration;
use crate::study::scan::Scan;

/// Configurations solved one after the other from a warm start, per parallel task.
const BLOCK: usize = 64;

/// The plant of the high-voltage case: its lightest load level (least total kW) with every
/// source EMF at least `floor_pu`, and the level's name; `None` without levels.
fn high_voltage_plant(plant: &Plant, floor_pu: f64) -> Option<(Plant, String)> {
    let total = |p: &Plant| p.loads.iter().map(|l| l.p_kw()).sum::<f64>();
    let lightest = levels(plant)
        .ok()?
        .into_iter()
        .min_by(|a, b| total(&a.plant).total_cmp(&total(&b.plant)))?;
    let mut p = lightest.plant;
    for s in &mut p.sources {
        s.voltage_pu = s.voltage_pu.max(floor_pu);
    }
    Some((p, lightest.name))
}

/// Per scenario × configuration (the scan's order), each bank bus's voltage (pu) in the
/// high-voltage case with the energized steps scaled by `c_upper`; `None` where that load
/// flow has no solution. `None` as a whole when the case's network cannot be built.
fn high_voltages(
    plant: &Plant,
    scan: &Scan,
    c_upper: f64,
    floor_pu: f64,
) -> Option<(Vec<Option<Vec<f64>>>, String)> {
    let (p, level) = high_voltage_plant(plant, floor_pu)?;
    let net = Network::build(&p).ok()?;
    let solver = OperatingSolver::new(&net);
    let list: Vec<Vec<f64>> = (scan.configurations.iter())
        .map(|c| c.steps.iter().map(|&k| f64::from(k) * c_upper).collect())
        .collect();
    // Blocks of neighbouring configurations in parallel, each warm-started in turn.
    let tasks: Vec<(usize, &[Vec<f64>])> = (0..net.scenarios.len())
        .flat_map(|s| list.chunks(BLOCK).map(move |c| (s, c)))
        .collect();
    let out = tasks
        .par_iter()
        .map(|&(s, chunk)| solver.bank_bus_voltages(&net, s, chunk))
        .collect::<Vec<_>>()
        .concat();
    Some((out, level))
}

/// Capacitor duty of every energized bank in every scenario × configuration, governed by
/// the worst of the study point and the high-voltage cases, and the envelope studied.
pub(super) fn duty(
    ctx: &Context<'_>,
    scan: &Scan,
    operating: &OperatingStudy,
    penetration: &Penetration,
) -> (Vec<DutyRow>, Option<DutyEnvelope>) {
    let (plant, network) = (ctx.plant, &ctx.network);
    let nc = scan.configurations.len();
    let orders = &penetration.injections.orders;
    let c_upper = 1.0 + plant.study.capacitance_tolerance.plus_percent / 100.0;
    let floor_pu = plant.study.voltage_range.high_pu;
    let high = high_voltages(plant, scan, c_upper, floor_pu);
    // In parallel over the results, in their order.
    let rows = penetration
        .results
        .par_iter()
        .flat_map_iter(|d| {
            let cfg = &scan.configurations[d.configuration];
            let study_point = operating
                .point_at(d.scenario, d.configuration, nc)
                .map_or(&[][..], |p| &p.bank_bus_v_pu[..]);
            let hv = high
                .as_ref()
                .and_then(|(v, _)| v.get(d.scenario * nc + d.configuration))
                .and_then(|v| v.as_deref());
            duty_rows(
                d,
                &plant.banks,
                &cfg.steps,
                CaseVoltages {
                    study_point,
                    high: hv,
                    c_upper,
                },
                network,
                orders,
                plant.study.limits,
                &network.scenarios[d.scenario].name,
                &cfg.label(&plant.banks),
            )
        })
        .collect();
    let envelope = high.map(|(_, level)| DutyEnvelope {
        level,
        source_voltage_floor_pu: floor_pu,
        capacitance_plus_percent: plant.study.capacitance_tolerance.plus_percent,
    });
    (rows, envelope)
}
