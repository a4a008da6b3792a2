//! The switching simulation against outside references: the textbook solution of a series
//! R-L-C energized from a DC source (under-, critically and over-damped), the IEEE C37.012
//! formulas where their assumptions hold, the textbook trapped-charge overshoot, and an
//! independent circuit simulator (ngspice `.tran`, Debian package `ngspice`) on a bundled
//! case; plus the integration step halved, and the state before closing against the load
//! flow.

use num_complex::Complex64;
use overtone::jobs::check::{CheckOptions, CheckResults, run_check};
use overtone::model::*;
use overtone::study::switching::{
    Circuit, Element, EventSpec, Kind, Stepper, events, setup, simulate,
};

use super::common::*;

fn check(p: &Plant) -> CheckResults {
    run_check(
        p,
        &CheckOptions {
            remedies: Some(false),
            switching: true,
            ..Default::default()
        },
    )
    .expect("check runs")
}

fn case(name: &str) -> Plant {
    let path = format!("{}/cases/{name}", env!("CARGO_MANIFEST_DIR"));
    overtone::io::workbook_in::read_workbook(std::path::Path::new(&path))
        .expect("case reads")
        .plant
}

/// A series R-L-C closed onto a DC source E at t = 0, capacitor discharged. Textbook
/// solution with α = R/2L, ω₀ = 1/√(LC):
/// - under-damped (α < ω₀): i = E/(L·ω_d)·e^{−αt}·sin ω_d t, ω_d = √(ω₀² − α²);
/// - critically damped: i = (E/L)·t·e^{−αt};
/// - over-damped: i = E/(L·(s₁ − s₂))·(e^{s₁t} − e^{s₂t}), s₁,₂ = −α ± √(α² − ω₀²).
fn textbook_current(e: f64, r: f64, l: f64, c: f64, t: f64) -> f64 {
    let a = r / (2.0 * l);
    let w0 = 1.0 / (l * c).sqrt();
    if (a - w0).abs() < 1e-12 * w0 {
        e / l * t * (-a * t).exp()
    } else if a < w0 {
        let wd = (w0 * w0 - a * a).sqrt();
        e / (l * wd) * (-a * t).exp() * (wd * t).sin()
    } else {
        let d = (a * a - w0 * w0).sqrt();
        let (s1, s2) = (-a + d, -a - d);
        e / (l * (s1 - s2)) * ((s1 * t).exp() - (s2 * t).exp())
    }
}

#[test]
fn series_rlc_from_dc_source_matches_textbook_solution() {
    let (e, l, c): (f64, f64, f64) = (1.0, 1e-3, 1e-5);
    let critical = 2.0 * (l / c).sqrt();
    for (regime, r) in [
        ("under-damped", 0.1 * critical),
        ("critically damped", critical),
        ("over-damped", 3.0 * critical),
    ] {
        // ω = 0: the analytic source E·e^{jωt} is the constant E.
        let circuit = Circuit {
            nodes: 1,
            elements: vec![
                Element {
                    a: 0,
                    b: None,
                    kind: Kind::Rl {
                        r,
                        l,
                        emf: Complex64::new(e, 0.0),
                    },
                    closing: false,
                },
                Element {
                    a: 0,
                    b: None,
                    kind: Kind::C { c },
                    closing: true,
                },
            ],
            w: 0.0,
        };
        let period = 2.0 * std::f64::consts::PI * (l * c).sqrt();
        let dt = period / 2000.0;
        let stepper = Stepper::new(&circuit, dt).unwrap();
        let pre = circuit.steady_state(false).unwrap();
        let peak = e * (c / l).sqrt();
        let mut worst: f64 = 0.0;
        stepper.run(pre, 0.0, true, true, |n, st| {
            // The source branch carries the loop current, from the bus into the source.
            let got = -st.i[0].re;
            let expected = textbook_current(e, r, l, c, n as f64 * dt);
            worst = worst.max((got - expected).abs() / peak);
            n < 6000
        });
        // Trapezoidal rule, 2000 steps per undamped period: error O((ω₀Δt)²) ≈ 1e-6.
        assert!(worst < 1e-4, "{regime}: worst error {worst:e} of E·√(C/L)");
    }
}

/// One 480 V bus behind a source of `mva` MVA (X/R 50), one plain bank of `steps` steps
/// of 100 kvar with `inrush_uh` per step, no load.
fn one_bus(mva: f64, steps: u32, inrush_uh: f64) -> Plant {
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("B", 0.48)];
    p.sources = vec![source("U", "B", mva, 50.0)];
    let mut b = bank("C1", "B", 0.48, 100.0, steps, Reactor::None);
    b.inrush_uh = Some(inrush_uh);
    p.banks = vec![b];
    p
}

#[test]
fn isolated_and_back_to_back_formulas_hold_where_their_assumptions_do() {
    // Isolated: S_sc/Q_c = 900 (ringing at 30 × 60 Hz, ≫ fundamental) and X/R 50 (light
    // damping): IEEE C37.012's I_pk = √2·U·√(C/L) (from memory) within 5 %.
    let p = one_bus(90.0, 1, 0.001);
    let res = check(&p);
    let e = &res.switching.events[0];
    assert_eq!(e.case.label(), "isolated");
    assert_close(e.peak_a, e.formula.as_ref().expect("applies").peak_a, 0.05);
    assert_close(
        e.frequency_hz.unwrap(),
        e.formula.as_ref().expect("applies").frequency_hz,
        0.05,
    );
    // Back-to-back: step 2 against step 1 through 2 × 0.005 µH, the supply's 6.8 µH far
    // larger (the supply's share of the closing step's current is about √(L_s/2L_th) =
    // 2 %): L_eq = L_s + L_s, C_eq = C/2, within 5 %.
    let p = one_bus(90.0, 2, 0.005);
    let res = check(&p);
    let e = res
        .switching
        .events
        .iter()
        .find(|e| e.step == 2)
        .expect("step 2");
    assert_eq!(e.case.label(), "back-to-back");
    assert_close(e.peak_a, e.formula.as_ref().expect("applies").peak_a, 0.05);
    assert_close(
        e.frequency_hz.unwrap(),
        e.formula.as_ref().expect("applies").frequency_hz,
        0.05,
    );
}

#[test]
fn trapped_charge_gives_the_textbook_three_per_unit_overshoot() {
    // A discharged capacitor closed at the voltage peak through a loss-free inductance
    // rings to 2 pu; one holding −1 pu rings to 3 pu (textbook: v_C = V − (V − v₀)·cos ω_r t).
    // Stiff source (ringing at 30 × fundamental), X/R 50: within 3 %.
    let mut p = one_bus(90.0, 1, 0.001);
    let res = check(&p);
    assert_close(res.switching.events[0].capacitor_peak_pu, 2.0, 0.03);
    p.banks[0].trapped_charge_pu = -1.0;
    let res = check(&p);
    let e = &res.switching.events[0];
    assert_close(e.capacitor_peak_pu, 3.0, 0.03);
    // The hand check scales with the voltage across the switch, (1 + |q|)·V̂ (common
    // practice): an overshoot to 3 pu, and twice the discharged peak inrush.
    assert_close(
        e.formula.as_ref().expect("applies").overvoltage_pu.unwrap(),
        3.0,
        0.01,
    );
    assert_eq!(e.trapped_charge_pu, 1.0);
    // 3 pu on a 480 V capacitor exceeds the 2 × rated peak allowance.
    assert!(e.overvoltage_exceeds);
    assert!(res.flagged());
}

#[test]
fn halving_the_time_step_changes_no_peak_by_half_a_percent() {
    for name in ["bottling-plant.xlsx", "water-plant.xlsx"] {
        let p = case(name);
        let res = check(&p);
        for ev in events(&res.plant, &res.network) {
            let v = res
                .load_flow
                .shift_free_voltages(ev.scenario, &ev.before)
                .ok();
            let mut s = setup(&res.plant, &res.network, &ev, v.as_deref(), None);
            let a = simulate(&s, 0.5, false).unwrap();
            s.dt /= 2.0;
            s.dt_fine /= 2.0;
            let b = simulate(&s, 0.5, false).unwrap();
            for (x, y, what) in [
                (a.peak_i_pu, b.peak_i_pu, "inrush"),
                (a.bus_peak_pu, b.bus_peak_pu, "bus"),
                (a.cap_peak_pu, b.cap_peak_pu, "capacitor"),
            ] {
                assert!(
                    (x - y).abs() <= 0.005 * y,
                    "{name} {ev:?}: {what} {x} with Δt, {y} with Δt/2"
                );
            }
        }
    }
}

#[test]
fn state_before_closing_is_the_operating_point() {
    // Loads as impedances, motors as EMFs and converters as currents, all taken at the load
    // flow's voltages: the circuit's steady state before closing reproduces the load flow
    // (inrush inductances made negligible, as the load flow has none), to 1e-9 pu.
    for name in [
        "bottling-plant.xlsx",
        "water-plant.xlsx",
        "food-plant.xlsx",
        "large-site.xlsx",
    ] {
        let mut p = case(name);
        for b in &mut p.banks {
            b.inrush_uh = Some(1e-3);
        }
        let res = check(&p);
        let evs: Vec<EventSpec> = events(&res.plant, &res.network);
        assert!(!evs.is_empty());
        for ev in evs.iter().step_by(3) {
            let Ok(v) = res.load_flow.shift_free_voltages(ev.scenario, &ev.before) else {
                continue;
            };
            let s = setup(&res.plant, &res.network, ev, Some(&v), None);
            let st = s.circuit.steady_state(false).unwrap();
            for (b, want) in v.iter().enumerate() {
                assert!(
                    (st.v[b] - want).norm() < 1e-6,
                    "{name} bus {b}: {} against the load flow's {want}",
                    st.v[b]
                );
            }
        }
    }
}

/// The event's circuit as a SPICE netlist in per unit (node k + 1 for node k), started
/// from the state before closing at source phase `phi` (.tran with UIC and the initial
/// currents and voltages of every inductance and capacitance), an ammeter in the closing
/// step.
fn netlist(c: &Circuit, pre: &overtone::study::switching::State, phi: f64, s_rl: usize) -> String {
    let f = c.w / (2.0 * std::f64::consts::PI);
    let rot = Complex64::from_polar(1.0, phi);
    let node = |k: usize| format!("n{}", k + 1);
    let sin = |x: Complex64| {
        let x = x * rot;
        format!(
            "SIN(0 {:e} {f:e} 0 0 {:e})",
            x.norm(),
            x.arg().to_degrees() + 90.0
        )
    };
    let mut n = String::from("event\n");
    for (k, e) in c.elements.iter().enumerate() {
        let a = node(e.a);
        let b = e.b.map_or("0".to_string(), node);
        let i0 = if e.closing { 0.0 } else { (pre.i[k] * rot).re };
        let u0 = if e.closing { 0.0 } else { (pre.u[k] * rot).re };
        match e.kind {
            Kind::Rl { r, l, emf } => {
                let mut from = a.clone();
                if k == s_rl {
                    n += &format!("vam {from} m{k} 0\n");
                    from = format!("m{k}");
                }
                if r > 0.0 {
                    n += &format!("r{k} {from} x{k} {r:e}\n");
                    from = format!("x{k}");
                }
                if emf.norm() > 0.0 {
                    n += &format!("l{k} {from} y{k} {l:e} ic={i0:e}\n");
                    n += &format!("v{k} y{k} {b} {}\n", sin(emf));
                } else {
                    n += &format!("l{k} {from} {b} {l:e} ic={i0:e}\n");
                }
            }
            Kind::C { c } => n += &format!("c{k} {a} {b} {c:e} ic={u0:e}\n"),
            Kind::G { g } => n += &format!("r{k} {a} {b} {:e}\n", 1.0 / g),
            Kind::Current { i } => n += &format!("i{k} {a} {b} {}\n", sin(i)),
        }
    }
    n
}

#[test]
fn bundled_case_peaks_match_circuit_simulator() {
    if !external_tool(
        "ngspice",
        "the switching simulation against a circuit simulator",
    ) {
        return;
    }
    let p = case("bottling-plant.xlsx");
    let res = check(&p);
    let evs = events(&res.plant, &res.network);
    // The detuned bank's first step (isolated) and the plain bank's third (back-to-back).
    let pick: Vec<&EventSpec> = evs
        .iter()
        .filter(|e| e.scenario == 0 && [(1, 1), (0, 3)].contains(&(e.bank, e.step)))
        .collect();
    assert_eq!(pick.len(), 2);
    for ev in pick {
        let v = res
            .load_flow
            .shift_free_voltages(ev.scenario, &ev.before)
            .ok();
        let s = setup(&res.plant, &res.network, ev, v.as_deref(), None);
        let sim = simulate(&s, 0.0, true).unwrap();
        let [i, vb, vc] = sim.channels.as_ref().unwrap();
        // The worst closing instant's source phase (without the bus angle added).
        let pre = s.circuit.steady_state(false).unwrap();
        let phi = sim.phi - pre.v[s.bus].arg();
        // The chart's waveforms cover the first stage: one cycle at the fine step.
        let len = i.len();
        let stop = len as f64 * s.dt_fine;
        let top = |x: &[f64]| x[..len].iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let mut net = netlist(&s.circuit, &pre, phi, s.closing_rl);
        let cap_node = format!("n{}", s.circuit.elements[s.closing_c].a + 1);
        n_control(&mut net, s.dt_fine, stop, s.bus + 1, &cap_node);
        let got = run_ngspice(&net);
        // ngspice 39 .tran (its own trapezoidal/Gear integration, 1/8 of our step at most):
        // peaks within 1 %.
        assert_close(top(i), got[0], 0.01);
        assert_close(top(vb), got[1], 0.01);
        assert_close(top(vc), got[2], 0.01);
    }
}

fn n_control(net: &mut String, dt: f64, stop: f64, bus: usize, cap: &str) {
    *net += &format!(
        ".control\nset numdgt=12\ntran {:e} {stop:e} 0 {:e} uic\n\
         meas tran imax max i(vam)\nmeas tran imin min i(vam)\n\
         meas tran vmax max v(n{bus})\nmeas tran vmin min v(n{bus})\n\
         meas tran cmax max v({cap})\nmeas tran cmin min v({cap})\n.endc\n.end\n",
        dt / 8.0,
        dt / 8.0
    );
}

/// Runs ngspice in batch mode: (max |i|, max |v_bus|, max |v_cap|).
fn run_ngspice(netlist: &str) -> [f64; 3] {
    let dir = std::env::temp_dir().join(format!("overtone-tran-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("event.cir");
    std::fs::write(&path, netlist).unwrap();
    let out = output_within(
        std::process::Command::new("ngspice").arg("-b").arg(&path),
        120,
    );
    let text = String::from_utf8_lossy(&out.stdout);
    let value = |k: &str| -> f64 {
        text.lines()
            .find_map(|l| {
                let l = l.trim();
                l.strip_prefix(k)
                    .and_then(|r| r.trim_start().strip_prefix('='))
                    .and_then(|r| r.split_whitespace().next())
                    .and_then(|v| v.parse().ok())
            })
            .unwrap_or_else(|| panic!("no {k} in ngspice output:\n{text}"))
    };
    [
        value("imax").abs().max(value("imin").abs()),
        value("vmax").abs().max(value("vmin").abs()),
        value("cmax").abs().max(value("cmin").abs()),
    ]
}

#[test]
fn three_phase_delta_bank_matches_circuit_simulator_over_closing_angles() {
    // The Clarke reduction checked against a three-phase circuit: a 480 V bus behind a
    // 20 MVA, X/R 50 source with a discharged 300 kvar delta bank (10 µH per phase of its
    // wye equivalent), no load (invented). ngspice 39 `.tran` simulates the three phases
    // (wye EMFs, the bank as three delta legs of C/3 behind 3·L, the per-phase equivalent's
    // values), closing all poles at 36 source angles over half a cycle (phases b and c cover
    // the rest); its largest line current and largest capacitor voltage (line to line, per
    // unit of √2·480 V) must equal the tool's worst over every closing angle within 1 %.
    if !external_tool("ngspice", "the three-phase switching check") {
        return;
    }
    let mut p = one_bus(20.0, 1, 10.0);
    p.banks[0].step_kvar = 300.0;
    p.banks[0].connection = Some(BankConnection::Delta);
    let res = check(&p);
    let e = &res.switching.events[0];
    let w = 2.0 * std::f64::consts::PI * 60.0;
    let z = 0.48f64 * 0.48 / 20.0;
    // The source of `one_bus`: X/R 50.
    let r = z / 2501f64.sqrt();
    let l = 50.0 * r / w;
    let c_y = 1.0 / (w * 0.48 * 0.48 / 0.3);
    let (c_d, l_d) = (c_y / 3.0, 3.0 * 10e-6);
    let e_pk = 2f64.sqrt() * 480.0 / 3f64.sqrt();
    let mut net = String::from("three-phase energizing\n");
    let angles: Vec<f64> = (0..36).map(|k| f64::from(k) * 5.0).collect();
    for (k, a) in angles.iter().enumerate() {
        for (ph, shift) in [("a", 0.0), ("b", -120.0), ("c", 120.0)] {
            net += &format!(
                "v{ph}{k} s{ph}{k} 0 SIN(0 {e_pk:e} 60 0 0 {:e})\nr{ph}{k} s{ph}{k} x{ph}{k} {r:e}\nl{ph}{k} x{ph}{k} b{ph}{k} {l:e} ic=0\n",
                a + shift
            );
        }
        for (leg, from, to) in [("ab", "a", "b"), ("bc", "b", "c"), ("ca", "c", "a")] {
            net += &format!(
                "vm{leg}{k} b{from}{k} m{leg}{k} 0\nll{leg}{k} m{leg}{k} n{leg}{k} {l_d:e} ic=0\ncc{leg}{k} n{leg}{k} b{to}{k} {c_d:e} ic=0\ne{leg}{k} d{leg}{k} 0 n{leg}{k} b{to}{k} 1\n"
            );
        }
    }
    net += &format!(
        ".control\nset numdgt=12\ntran 1e-6 {:e} 0 5e-7 uic\n",
        1.0 / 60.0
    );
    for k in 0..angles.len() {
        for ph in ["a", "b", "c"] {
            net += &format!(
                "meas tran ix{ph}{k} max i(v{ph}{k})\nmeas tran iy{ph}{k} min i(v{ph}{k})\n"
            );
        }
        for leg in ["ab", "bc", "ca"] {
            net += &format!(
                "meas tran vc{leg}{k} max v(d{leg}{k})\nmeas tran vd{leg}{k} min v(d{leg}{k})\n"
            );
        }
    }
    net += ".endc\n.end\n";
    let dir = std::env::temp_dir().join(format!("overtone-3ph-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("three.cir");
    std::fs::write(&path, &net).unwrap();
    let out = output_within(
        std::process::Command::new("ngspice").arg("-b").arg(&path),
        300,
    );
    let text = String::from_utf8_lossy(&out.stdout);
    let top = |prefix: &str| -> f64 {
        text.lines()
            .filter_map(|l| {
                let l = l.trim();
                let (name, rest) = l.split_once('=')?;
                name.trim()
                    .starts_with(prefix)
                    .then(|| rest.split_whitespace().next()?.parse::<f64>().ok())
                    .flatten()
            })
            .fold(0.0, |m: f64, v| m.max(v.abs()))
    };
    let i_max = top("ix").max(top("iy"));
    let v_max = top("vc").max(top("vd")) / (2f64.sqrt() * 480.0);
    assert!(i_max > 0.0 && v_max > 0.0, "no measurements:\n{text}");
    // Over a 5° grid the worst angle is missed by at most 2.5°: a fraction of a percent.
    assert_close(e.peak_a, i_max, 0.01);
    assert_close(e.capacitor_peak_pu, v_max, 0.01);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn ringing_modes_of_a_two_mode_network_match_its_eigenvalues() {
    // One 4.16 kV bus: a 10 MVA X/R 15 source, an energized 7 % detuned bank (2 × 600 kvar)
    // and a plain 1200 kvar step (500 µH inrush reactor) closing beside it (back-to-back with a detuned neighbour:
    // the C37.012 formulas do not apply). After closing, the network is linear with states
    // (i_a, i_b, v_a, v_b): M·di/dt = −R·i − v + e with M = [[L_a+L_s, L_s], [L_s, L_b+L_s]],
    // R = [[R_s+R_a, R_s], [R_s, R_s+R_b]], and C·dv/dt = i. Its eigenvalues (nalgebra,
    // textbook state-space analysis) are the natural modes the fit must find.
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("B", 4.16)];
    p.sources = vec![source("U", "B", 10.0, 15.0)];
    let mut a = bank("A", "B", 4.16, 600.0, 2, Reactor::Detuning { percent: 7.0 });
    a.studied_steps = vec![2];
    a.status = BankStatus::Existing;
    let mut b = bank("C", "B", 4.16, 1200.0, 1, Reactor::None);
    b.inrush_uh = Some(500.0);
    p.banks = vec![a, b];
    let res = check(&p);
    let e = (res.switching.events.iter())
        .find(|e| e.bank == "C" && e.case == overtone::study::switching::Case::BackToBack)
        .expect("back-to-back event");
    assert!(
        e.formula.is_none(),
        "C37.012 does not apply beside a detuned step"
    );
    let net = &res.network;
    let w = 2.0 * std::f64::consts::PI * 60.0;
    let (ra, la, ca) = overtone::study::switching::step_values(net, &p, 0, 2, None);
    let (rb, lb, cb) = overtone::study::switching::step_values(net, &p, 1, 1, None);
    let overtone::network::ShuntModel::SeriesRl(zs) = net.sources[0].model else {
        panic!("source model")
    };
    let (rs, ls) = (zs.r_pu, zs.x_pu / w);
    let m = nalgebra::Matrix2::new(la + ls, ls, ls, lb + ls);
    let r = nalgebra::Matrix2::new(rs + ra, rs, rs, rs + rb);
    let mi = m.try_inverse().expect("regular");
    let (mr, mv) = (-mi * r, -mi);
    let mut sys = nalgebra::Matrix4::<f64>::zeros();
    for i in 0..2 {
        for j in 0..2 {
            sys[(i, j)] = mr[(i, j)];
            sys[(i, j + 2)] = mv[(i, j)];
        }
    }
    sys[(2, 0)] = 1.0 / ca;
    sys[(3, 1)] = 1.0 / cb;
    let eig: Vec<(f64, f64)> = (sys.complex_eigenvalues().iter())
        .filter(|s| s.im > 0.0)
        .map(|s| (s.im / (2.0 * std::f64::consts::PI), -s.re / s.norm()))
        .collect();
    assert_eq!(eig.len(), 2, "two oscillating modes: {eig:?}");
    assert!(
        e.modes.len() >= 2,
        "both modes listed: {:?} vs {eig:?}",
        e.modes
    );
    for m in &e.modes {
        let (f, z) = eig
            .iter()
            .copied()
            .min_by(|x, y| {
                (x.0 - m.frequency_hz)
                    .abs()
                    .total_cmp(&(y.0 - m.frequency_hz).abs())
            })
            .expect("modes");
        // The trapezoidal rule warps frequencies by about (ωΔt)²/12 (well under 0.5 % at the
        // simulation's step); the damping ratio within 0.002.
        assert_close(m.frequency_hz, f, 5e-3);
        assert!((m.zeta - z).abs() < 2e-3, "ζ {} vs {z}", m.zeta);
    }
    assert_close(
        e.frequency_hz.expect("rings"),
        e.modes[0].frequency_hz,
        1e-12,
    );
    assert_eq!(e.regime, overtone::study::transient::Regime::UnderDamped);
}
