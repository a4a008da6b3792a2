//! What each order injects, ready for the per-configuration sums: the loads' currents and
//! the background's Norton currents by column, the sources and branches of the order's
//! network, and under `phasor` summation the operating angles of every configuration.

use num_complex::Complex64;

use super::{Configuration, Injections, OperatingStudy, OrderInputs, SequenceEngines};

/// The background's Norton currents alone by column (the loads off), per unit.
pub(super) fn background_currents(inp: &OrderInputs, l: usize, out: &mut Vec<Complex64>) {
    out.clear();
    out.resize(l, Complex64::default());
    for &(c, i) in &inp.background {
        out[c] += i;
    }
}

/// The phasor injection of every column at `order` for the operating angles `theta`
/// (radians per column; empty = 0): I_c = A_c·e^{j·h·θ_c} plus the background's Norton
/// currents.
pub(super) fn phasor_currents(
    inp: &OrderInputs,
    order: f64,
    theta: &[f64],
    l: usize,
    out: &mut Vec<Complex64>,
) {
    load_phasors(inp, order, theta, l, out);
    for &(c, i) in &inp.background {
        out[c] += i;
    }
}

/// The loads' phasor injection alone by column at `order` for the operating angles
/// `theta` (as [`phasor_currents`], the background left out), per unit.
pub(super) fn load_phasors(
    inp: &OrderInputs,
    order: f64,
    theta: &[f64],
    l: usize,
    out: &mut Vec<Complex64>,
) {
    out.clear();
    out.resize(l, Complex64::default());
    for &(c, _, a) in &inp.loads {
        let t = theta.get(c).copied().unwrap_or(0.0);
        out[c] += a * Complex64::from_polar(1.0, order * t);
    }
}

/// What scenario `s` injects at order `o`, in the order's sequence network.
pub(super) fn order_inputs(
    engines: &SequenceEngines<'_, '_>,
    inj: &Injections,
    s: usize,
    o: usize,
) -> OrderInputs {
    let seq = inj.sequences[o];
    let net = engines.for_order(seq).network();
    let h = inj.orders[o];
    let rm = net.resistance;
    let loads = (0..inj.buses.len())
        .filter(|&c| inj.current_pu[o][c] > 0.0 && net.conducts_at(s, inj.buses[c]))
        .map(|c| (c, inj.current_pu[o][c], inj.phasor_pu[o][c]))
        .collect();
    let in_service = &net.scenarios[s].sources;
    let terms: Vec<_> = (inj.background.iter())
        .filter(|b| b.order == o && in_service.contains(&b.source))
        .collect();
    let (_, own) = net.pcc_flow(s, h);
    OrderInputs {
        loads,
        background: (terms.iter())
            .map(|b| (b.column, b.emf_pu * net.sources[b.source].model.y_pu(h, rm)))
            .collect(),
        background_own: terms.iter().map(|b| own.contains(&b.source)).collect(),
        background_angle_known: terms.iter().map(|b| b.angle_given).collect(),
        ..network_inputs(net, s, h)
    }
}

/// The PCC's flow functional and the branches' admittances of `net` at order `h` in
/// scenario `s` (no loads, no background).
fn network_inputs(net: &crate::network::Network, s: usize, h: f64) -> OrderInputs {
    let rm = net.resistance;
    OrderInputs {
        loads: Vec::new(),
        background: Vec::new(),
        background_own: Vec::new(),
        background_angle_known: Vec::new(),
        pcc: net.pcc_flow(s, h).0,
        branches: net
            .branches
            .iter()
            .map(|b| (b.from, b.to, b.index, b.z.at(h, rm).inv()))
            .collect(),
    }
}

/// What the 3-wire part (`current`, `phasor` per column) of order `h` injects in scenario
/// `s` in the positive-sequence network `net`: its loads, no background.
pub(super) fn part_inputs(
    net: &crate::network::Network,
    inj: &Injections,
    (current, phasor): (&[f64], &[Complex64]),
    s: usize,
    h: f64,
) -> OrderInputs {
    OrderInputs {
        loads: (0..inj.buses.len())
            .filter(|&c| current[c] > 0.0)
            .map(|c| (c, current[c], phasor[c]))
            .collect(),
        ..network_inputs(net, s, h)
    }
}

/// The operating voltage angle at each column per scenario × configuration; where the
/// load flow has no solution, the scenario's configuration without banks, else 0.
pub(super) fn phasor_angles(
    op: &OperatingStudy,
    configurations: &[Configuration],
    columns: &[usize],
    ns: usize,
) -> (Vec<Vec<f64>>, usize) {
    let nc = configurations.len();
    let none = configurations
        .iter()
        .position(|c| c.steps.iter().all(|&k| k == 0));
    let at = |s: usize, c: usize| {
        op.point_at(s, c, nc)
            .filter(|p| !p.angle_rad.is_empty())
            .map(|p| {
                columns
                    .iter()
                    .map(|&b| p.angle_rad[b])
                    .collect::<Vec<f64>>()
            })
    };
    let mut fallbacks = 0;
    let mut out = Vec::with_capacity(ns * nc);
    for s in 0..ns {
        let base = none.and_then(|c| at(s, c));
        for c in 0..nc {
            out.push(at(s, c).unwrap_or_else(|| {
                fallbacks += 1;
                base.clone().unwrap_or_else(|| vec![0.0; columns.len()])
            }));
        }
    }
    (out, fallbacks)
}
