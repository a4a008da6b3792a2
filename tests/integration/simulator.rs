//! Phasor summation with background distortion against an independent circuit simulator:
//! ngspice (Debian package `ngspice`; `.ci/run` installs it) solves the plant's per-phase
//! circuit in ohm, henry and farad by AC analysis at each order, with every converter a
//! current source at its phasor and the background an EMF behind the source impedance.
//! The test says so and returns when ngspice is not installed.

use std::f64::consts::PI;
use std::process::Command;

use overtone::jobs::check::run_check;
use overtone::model::*;

use crate::common::*;

const KV: f64 = 4.16;

/// One 4.16 kV plant without transformers (no phase shifts): a source with background,
/// two cables (one with charging), a plain bank, a linear load, a motor and two converters
/// with custom spectra.
fn plant() -> Plant {
    let mut p = textbook_plant(60.0);
    p.study.pcc_bus = Some("S".into());
    p.study.summation = Summation::Phasor;
    p.study.max_demand_current_a = Some(300.0);
    p.buses = vec![bus("S", KV), bus("B1", KV), bus("B2", KV)];
    p.sources = vec![source("U", "S", 80.0, 12.0)];
    p.cables = vec![
        Cable {
            r_ohm_per_km: 0.15,
            x_ohm_per_km: 0.12,
            c_uf_per_km: 0.0,
            ..cable("K1", "S", "B1", 300.0)
        },
        Cable {
            r_ohm_per_km: 0.2,
            x_ohm_per_km: 0.1,
            c_uf_per_km: 0.3,
            ..cable("K2", "B1", "B2", 200.0)
        },
    ];
    p.banks = vec![bank("C1", "B1", KV, 600.0, 1, Reactor::None)];
    p.loads = vec![
        load("LIN", "B2", LoadType::Linear, 800.0, 0.85),
        load("MOT", "B1", LoadType::Motor, 500.0, 0.88),
    ];
    let line = |order: f64, m: f64, a: f64| SpectrumLine {
        order,
        magnitude_percent: m,
        angle_deg: Some(a),
    };
    p.spectra = vec![
        Spectrum {
            name: "VFD-A".into(),
            lines: vec![
                line(5.0, 25.0, -30.0),
                line(7.0, 10.0, 75.0),
                line(11.0, 6.0, 160.0),
                line(13.0, 4.0, -110.0),
            ],
        },
        Spectrum {
            name: "VFD-B".into(),
            lines: vec![
                line(5.0, 32.0, 190.0),
                line(7.0, 14.0, 20.0),
                line(11.0, 5.0, -80.0),
                line(13.0, 3.0, 45.0),
            ],
        },
    ];
    for (id, bus, kw, pf, sp) in [
        ("DA", "B1", 600.0, 0.95, "VFD-A"),
        ("DB", "B2", 400.0, 0.90, "VFD-B"),
    ] {
        let mut d = load(id, bus, LoadType::Custom, kw, pf);
        d.spectrum = Some(sp.into());
        p.loads.push(d);
    }
    p.background = vec![
        BackgroundLine {
            source: "U".into(),
            order: 5.0,
            voltage_percent: 1.0,
            angle_deg: Some(45.0),
        },
        BackgroundLine {
            source: "U".into(),
            order: 7.0,
            voltage_percent: 0.5,
            angle_deg: Some(-60.0),
        },
    ];
    p
}

/// The netlist of `p` at order `h` (per phase, line-to-neutral), the converters' current
/// phasors given by (bus node, amperes, degrees).
fn netlist(p: &Plant, h: f64, drives: &[(&str, f64, f64)]) -> String {
    let w1 = 2.0 * PI * 60.0;
    let f = 60.0 * h;
    let mut n = format!("order {h}\n");
    // Source: EMF (background at this order, else 0) behind R + L; |Z1| = kV²/S.
    let z1 = KV * KV / 80.0;
    let rs = z1 / (1.0f64 + 144.0).sqrt();
    let (e, a) = p
        .background
        .iter()
        .find(|b| b.order == h)
        .map_or((0.0, 0.0), |b| {
            (
                b.voltage_percent / 100.0 * KV * 1000.0 / 3f64.sqrt(),
                b.angle_deg.unwrap_or(0.0),
            )
        });
    n += &format!(
        "VS ne 0 AC {e:e} {a:e}\nRS ne nr {rs:e}\nLS nr s {:e}\n",
        12.0 * rs / w1
    );
    // Cables: series R-L; charging C/2 at each end.
    for (i, c) in p.cables.iter().enumerate() {
        let km = c.length_m / 1000.0;
        let (from, to) = (c.from_bus.to_lowercase(), c.to_bus.to_lowercase());
        n += &format!(
            "RK{i} {from} k{i} {:e}\nLK{i} k{i} {to} {:e}\n",
            c.r_ohm_per_km * km,
            c.x_ohm_per_km * km / w1
        );
        if c.c_uf_per_km > 0.0 {
            let half = c.c_uf_per_km * 1e-6 * km / 2.0;
            n += &format!("CA{i} {from} 0 {half:e}\nCB{i} {to} 0 {half:e}\n");
        }
    }
    // Bank: X_C = kV²/Mvar.
    let xc = KV * KV / 0.6;
    n += &format!("CB b1 0 {:e}\n", 1.0 / (w1 * xc));
    // Linear load: parallel R = kV²/P, X = kV²/Q.
    let (p_mw, pf) = (0.8, 0.85f64);
    let q = p_mw * pf.acos().tan();
    n += &format!(
        "RL b2 0 {:e}\nLL b2 0 {:e}\n",
        KV * KV / p_mw,
        KV * KV / q / w1
    );
    // Motor: X'' = 0.17 on kW/pf, X''/R = 10.
    let x2 = 0.17 * KV * KV / (0.5 / 0.88);
    n += &format!("RM b1 m {:e}\nLM m 0 {:e}\n", x2 / 10.0, x2 / w1);
    for (i, (node, amps, deg)) in drives.iter().enumerate() {
        n += &format!("ID{i} 0 {node} AC {amps:e} {deg:e}\n");
    }
    n += &format!(
        ".control\nset numdgt=15\nac lin 1 {f:e} {f:e}\nprint vm(s) vm(b1) vm(b2)\n.endc\n.end\n"
    );
    n
}

fn ngspice(netlist: &str) -> Vec<f64> {
    let dir = std::env::temp_dir().join(format!("overtone-spice-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("plant.cir");
    std::fs::write(&path, netlist).unwrap();
    let out = Command::new("ngspice")
        .arg("-b")
        .arg(&path)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    ["vm(s)", "vm(b1)", "vm(b2)"]
        .iter()
        .map(|k| {
            text.lines()
                .find_map(|l| l.trim().strip_prefix(&format!("{k} = ")))
                .unwrap_or_else(|| panic!("no {k} in ngspice output:\n{text}"))
                .trim()
                .parse()
                .unwrap()
        })
        .collect()
}

#[test]
fn phasor_summation_with_background_matches_circuit_simulator() {
    if Command::new("ngspice").arg("--version").output().is_err() {
        eprintln!(
            "ngspice not on PATH: circuit-simulator comparison not checked here (.ci/run installs it)"
        );
        return;
    }
    let p = plant();
    let res = run_check(&p, &Default::default()).unwrap();
    let v_op = res.load_flow.voltages(0, &[1]).unwrap();
    let v = res.penetration.voltages(0, &[1]).unwrap();
    let v_ln = KV * 1000.0 / 3f64.sqrt();
    let index = |id: &str| res.network.bus_index(id).unwrap();
    for (o, &h) in res.penetration.injections.orders.iter().enumerate() {
        // Converter phasors: I_h = I1·m/100 at φ_h + h·θ1, θ1 = θ_V − acos(pf)
        // (input contract, version 2), θ_V from the operating point of C1=1.
        let drives: Vec<(&str, f64, f64)> = p
            .loads
            .iter()
            .filter(|l| l.kind == LoadType::Custom)
            .map(|l| {
                let sp = p.spectrum(l.spectrum.as_deref().unwrap()).unwrap();
                let line = sp.lines.iter().find(|x| x.order == h).unwrap();
                let i1 = l.kw / (3f64.sqrt() * KV * l.power_factor);
                let theta1 = v_op[index(&l.bus)].arg() - l.power_factor.acos();
                let deg = line.angle_deg.unwrap() + h * theta1.to_degrees();
                (
                    if l.bus == "B1" { "b1" } else { "b2" },
                    i1 * line.magnitude_percent / 100.0,
                    deg,
                )
            })
            .collect();
        let sim = ngspice(&netlist(&p, h, &drives));
        for (k, id) in ["S", "B1", "B2"].iter().enumerate() {
            // ngspice 39 AC analysis, printed to 15 digits: agreement to 1e-12 relative (measured
            // 1.6e-14).
            assert_close(v[index(id)][o] * v_ln, sim[k], 1e-12);
        }
    }
}
