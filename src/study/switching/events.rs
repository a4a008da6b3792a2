//! Which events are simulated, and the circuit of each.
//!
//! For every scenario, bank and step k (1..Steps): the bank stands at k − 1 steps and
//! every other bank at its highest studied step count (the plant running, capacitors on,
//! when a step switches). Step 1 is `isolated` with the other banks on its bus off and,
//! when another bank on the same bus can be on, also `back-to-back` against it; later
//! steps are back-to-back.

use num_complex::Complex64;

use super::{Case, Circuit, Element, Kind};
use crate::model::{DEFAULT_INRUSH_UH, LoadType, Plant};
use crate::network::{BASE_MVA, Network, ShuntModel};

/// One event to simulate.
#[derive(Debug, Clone, PartialEq)]
pub struct EventSpec {
    pub scenario: usize,
    pub bank: usize,
    pub step: u32,
    pub case: Case,
    /// Energized steps of every bank before closing.
    pub before: Vec<u32>,
}

/// Every event of `plant` (see the module's rule).
pub fn events(plant: &Plant, net: &Network) -> Vec<EventSpec> {
    let highest: Vec<u32> = plant
        .banks
        .iter()
        .map(|b| b.studied_steps.iter().copied().max().unwrap_or(0))
        .collect();
    let mut out = Vec::new();
    for s in 0..net.scenarios.len() {
        for (b, bank) in net.banks.iter().enumerate() {
            for k in simulated_steps(bank.steps) {
                let mut before = highest.clone();
                before[b] = k - 1;
                let same_bus_on = net
                    .banks
                    .iter()
                    .enumerate()
                    .any(|(o, ob)| o != b && ob.bus == bank.bus && before[o] > 0);
                if k == 1 {
                    let mut alone = before.clone();
                    for (o, ob) in net.banks.iter().enumerate() {
                        if o != b && ob.bus == bank.bus {
                            alone[o] = 0;
                        }
                    }
                    out.push(EventSpec {
                        scenario: s,
                        bank: b,
                        step: 1,
                        case: Case::Isolated,
                        before: alone,
                    });
                    if same_bus_on {
                        out.push(EventSpec {
                            scenario: s,
                            bank: b,
                            step: 1,
                            case: Case::BackToBack,
                            before,
                        });
                    }
                } else {
                    out.push(EventSpec {
                        scenario: s,
                        bank: b,
                        step: k,
                        case: Case::BackToBack,
                        before,
                    });
                }
            }
        }
    }
    out
}

/// Most steps of one bank simulated; a bank with more has its first two, its last and
/// evenly spaced steps between simulated (back-to-back inrush grows with the steps already
/// on, so the last is the worst).
pub const MAX_SIMULATED_STEPS: u32 = 12;

/// The steps of a bank of `steps` that are energized in the study (1-based, ascending).
pub fn simulated_steps(steps: u32) -> Vec<u32> {
    if steps <= MAX_SIMULATED_STEPS {
        return (1..=steps).collect();
    }
    let span = f64::from(steps - 2);
    let mut out: Vec<u32> = (0..MAX_SIMULATED_STEPS - 1)
        .map(|i| 2 + (span * f64::from(i) / f64::from(MAX_SIMULATED_STEPS - 2)).round() as u32)
        .collect();
    out.insert(0, 1);
    out.dedup();
    out
}

/// The circuit of one event and where to read it.
#[derive(Debug, Clone)]
pub struct Setup {
    pub circuit: Circuit,
    /// Elements of the closing step: its series R-L and its capacitance.
    pub closing_rl: usize,
    pub closing_c: usize,
    /// The bank's bus (node).
    pub bus: usize,
    /// Every other bank on another bus: (bank, bus node), one per bus.
    pub remote: Vec<(usize, usize)>,
    /// Time step of the ring-down stage, s: 1/20 of the period of the fastest capacitor
    /// loop of the bank's bus (the closing step's own L-C and the energized steps there),
    /// and at most 1/100 of the fundamental period.
    pub dt: f64,
    /// Time step of the peak stage, s: 1/60 of that period and of the period of every
    /// capacitance at the bus (cable charging) against the smallest inductance there, and
    /// at most
    /// [`super::MAX_FINE_STEPS`] steps over [`super::PEAK_CYCLES`] cycles.
    pub dt_fine: f64,
    /// Base current at the bank's bus, A rms: S_base / (√3·kV).
    pub i_base_a: f64,
    /// The load flow of the configuration before closing had no solution: loads at
    /// nominal voltage.
    pub nominal_fallback: bool,
}

/// One step of a bank as circuit values (per unit): series R and L, capacitance C, with
/// `n` steps in parallel: R/n, L/n, n·C. L holds the reactor and the inrush inductance
/// (`inrush_uh` per step, or the bank's own).
pub fn step_values(
    net: &Network,
    plant: &Plant,
    b: usize,
    n: u32,
    inrush_uh: Option<f64>,
) -> (f64, f64, f64) {
    let model = &net.banks[b];
    let w = 2.0 * std::f64::consts::PI * net.frequency_hz;
    let zb = net.buses[model.bus].z_base_ohm;
    let xl = model.p * model.xc_step_pu;
    let r = if model.p > 0.0 {
        xl / model.reactor_q
    } else {
        0.0
    };
    let uh = inrush_uh
        .or(plant.banks[b].inrush_uh)
        .unwrap_or(DEFAULT_INRUSH_UH);
    let l = xl / w + uh * 1e-6 / zb;
    let c = 1.0 / (w * model.xc_step_pu);
    let n = f64::from(n.max(1));
    (r / n, l / n, c * n)
}

/// Builds the circuit of `ev`, with `v_before` the shift-free bus voltages of the load flow
/// before closing (`None`: 1 pu at angle 0, stated). `inrush_uh` overrides the closing
/// bank's inrush inductance (the search for the one that meets a limit).
// Long: one event's circuit assembled element by element on one node map.
pub fn setup(
    plant: &Plant,
    net: &Network,
    ev: &EventSpec,
    v_before: Option<&[Complex64]>,
    inrush_uh: Option<f64>,
) -> Setup {
    let w = 2.0 * std::f64::consts::PI * net.frequency_hz;
    let mut el = Vec::new();
    let mut push = |a: usize, b: Option<usize>, kind: Kind, closing: bool| {
        el.push(Element {
            a,
            b,
            kind,
            closing,
        });
        el.len() - 1
    };
    let none = Complex64::default();
    for br in &net.branches {
        push(
            br.from,
            Some(br.to),
            Kind::Rl {
                r: br.z.r_pu,
                l: br.z.x_pu / w,
                emf: none,
            },
            false,
        );
    }
    // Cable charging: C/2 at each end (pi model), each behind the cable's surge impedance
    // Z_c = √(L/C). Far below the cable's quarter-wave frequency the resistance is
    // negligible against 1/(ωC) and this is the pi model of the scan and the load flow;
    // above it, where a pi section stops describing a cable, the end of a line looks like
    // its surge impedance (travelling-wave theory, textbook), which damps the lumped
    // section's spurious high-frequency ringing with the closing step's inrush inductance.
    let mut extra = net.buses.len();
    let mut charging = Vec::new();
    for sh in &net.shunts {
        if let ShuntModel::Capacitance { b_pu } = sh.model {
            let cable = sh.id.strip_suffix(" charging").unwrap_or(&sh.id);
            let z_c = net
                .branches
                .iter()
                .find(|b| b.id == cable)
                .map(|b| (b.z.x_pu / (2.0 * b_pu)).sqrt())
                .filter(|z| z.is_finite() && *z > 0.0);
            charging.push((sh.bus, b_pu / w, z_c));
        }
    }
    // Charging straight at a bus (a cable without series reactance to give a surge
    // impedance) rings undamped with the smallest inductance there: the first stage's step
    // resolves it. Behind its surge impedance it is damped within a few of its periods, and
    // the first step's backward-Euler half steps keep it from ringing numerically.
    let charging_at: Vec<(usize, f64)> = charging
        .iter()
        .filter(|(_, _, z)| z.is_none())
        .map(|&(b, c, _)| (b, c))
        .collect();
    for (bus, c, z_c) in charging {
        match z_c {
            Some(z) => {
                let m = extra;
                extra += 1;
                push(bus, Some(m), Kind::G { g: 1.0 / z }, false);
                push(m, None, Kind::C { c }, false);
            }
            None => {
                push(bus, None, Kind::C { c }, false);
            }
        }
    }
    if let Some(sc) = net.scenarios.get(ev.scenario) {
        for &k in &sc.sources {
            if let ShuntModel::SeriesRl(z) = net.sources[k].model {
                push(
                    net.sources[k].bus,
                    None,
                    Kind::Rl {
                        r: z.r_pu,
                        l: z.x_pu / w,
                        emf: Complex64::new(net.source_emf_pu[k], 0.0),
                    },
                    false,
                );
            }
        }
    }
    let one = Complex64::new(1.0, 0.0);
    for l in &plant.loads {
        let Some(bus) = net.bus_index(&l.bus) else {
            continue;
        };
        let p = l.p_kw() / 1000.0 / BASE_MVA;
        if p <= 0.0 {
            continue;
        }
        let q = p * l.power_factor.acos().tan();
        let v = v_before.and_then(|v| v.get(bus).copied()).unwrap_or(one);
        let v2 = v.norm_sqr();
        // Current drawn at the operating point: I = conj(S / V).
        let i = (Complex64::new(p, q) / v).conj();
        match l.kind {
            LoadType::Linear => {
                push(bus, None, Kind::G { g: p / v2 }, false);
                if q > 0.0 {
                    push(
                        bus,
                        None,
                        Kind::Rl {
                            r: 0.0,
                            l: v2 / (q * w),
                            emf: none,
                        },
                        false,
                    );
                }
            }
            LoadType::Motor => {
                if let Some(ShuntModel::Motor { r_pu, x_pu }) = ShuntModel::load(l, net.load_model)
                {
                    let e = v - Complex64::new(r_pu, x_pu) * i;
                    push(
                        bus,
                        None,
                        Kind::Rl {
                            r: r_pu,
                            l: x_pu / w,
                            emf: e,
                        },
                        false,
                    );
                }
            }
            _ => {
                push(bus, None, Kind::Current { i }, false);
            }
        }
    }
    let mut nodes = extra;
    let mut branch = |push: &mut dyn FnMut(usize, Option<usize>, Kind, bool) -> usize,
                      bus: usize,
                      (r, l, c): (f64, f64, f64),
                      closing: bool| {
        let m = nodes;
        nodes += 1;
        let rl = push(bus, Some(m), Kind::Rl { r, l, emf: none }, closing);
        let cap = push(m, None, Kind::C { c }, closing);
        (rl, cap)
    };
    let bank_bus = net.banks[ev.bank].bus;
    let mut f_max: f64 = 0.0;
    let self_f = |(_, l, c): (f64, f64, f64)| 1.0 / (2.0 * std::f64::consts::PI * (l * c).sqrt());
    for (o, &n) in ev.before.iter().enumerate() {
        if n == 0 {
            continue;
        }
        let uh = (o == ev.bank).then_some(inrush_uh).flatten();
        let vals = step_values(net, plant, o, n, uh);
        if net.banks[o].bus == bank_bus {
            f_max = f_max.max(self_f(vals));
        }
        branch(&mut push, net.banks[o].bus, vals, false);
    }
    let vals = step_values(net, plant, ev.bank, 1, inrush_uh);
    f_max = f_max.max(self_f(vals));
    let (closing_rl, closing_c) = branch(&mut push, bank_bus, vals, true);
    let mut remote: Vec<(usize, usize)> = Vec::new();
    for (o, b) in net.banks.iter().enumerate() {
        if b.bus != bank_bus && !remote.iter().any(|r| r.1 == b.bus) {
            remote.push((o, b.bus));
        }
    }
    let dt_peak = (1.0 / (super::STEPS_PER_PERIOD * f_max)).min(1.0 / (400.0 * net.frequency_hz));
    let dt = (1.0 / (super::RING_DOWN_STEPS_PER_PERIOD * f_max))
        .min(1.0 / (100.0 * net.frequency_hz))
        .max(dt_peak);
    // Capacitance at the bus itself rings against the smallest inductance reaching it.
    let l_min = el
        .iter()
        .filter(|e| e.a == bank_bus || e.b == Some(bank_bus))
        .filter_map(|e| match e.kind {
            Kind::Rl { l, .. } if l > 0.0 => Some(l),
            _ => None,
        })
        .fold(f64::INFINITY, f64::min);
    let c_bus: f64 = charging_at
        .iter()
        .filter(|(bus, _)| *bus == bank_bus)
        .map(|(_, c)| c)
        .sum();
    let f_bus = if c_bus > 0.0 && l_min.is_finite() {
        1.0 / (2.0 * std::f64::consts::PI * (l_min * c_bus).sqrt())
    } else {
        0.0
    };
    let shortest = super::PEAK_CYCLES / net.frequency_hz / super::MAX_FINE_STEPS as f64;
    // Never more than MAX_FINE_STEPS in the first stage, nor MAX_STEPS over the shortest
    // window of the second (a step of a few nanoseconds from extreme data would otherwise
    // ask for billions).
    let dt_fine = (1.0 / (super::STEPS_PER_PERIOD * f_bus))
        .min(dt_peak)
        .max(shortest);
    let longest_needed = super::MIN_CYCLES / net.frequency_hz / super::MAX_STEPS as f64;
    let dt = dt.max(dt_fine).max(longest_needed);
    let (dt, dt_fine) = if dt.is_finite() && dt_fine.is_finite() && dt_fine > 0.0 {
        (dt, dt_fine)
    } else {
        (longest_needed, shortest)
    };
    let kv = net.buses[bank_bus].kv;
    Setup {
        circuit: Circuit {
            nodes,
            elements: el,
            w,
        },
        closing_rl,
        closing_c,
        bus: bank_bus,
        remote,
        dt,
        dt_fine,
        i_base_a: BASE_MVA * 1e6 / (3f64.sqrt() * kv * 1e3),
        nominal_fallback: v_before.is_none(),
    }
}
