//! The damping models (Study sheet `Resistance model`, `Load model`) against their published
//! formulas, a damped resonance known in closed form, and the least-damped band.

use num_complex::Complex64;
use overtone::jobs::check::{CheckOptions, CheckResults, run_check};
use overtone::model::*;
use overtone::network::damping::{Growth, cable_xs2, linear_load_y_pu, skin_effect_ys};
use overtone::network::{BASE_MVA, Network, ShuntModel};
use overtone::solve::Engine;
use overtone::study::Verdict;

use crate::common::*;

const FD: ResistanceModel = ResistanceModel::FrequencyDependent;

#[test]
fn transformer_and_motor_resistance_follow_the_published_law() {
    // Breuer et al., "HVDC-AC harmonic interaction, Part II", IEEE Trans. PAS-101(3), 1982
    // (from memory): R(h) = R·(1 + 0.1·h^1.5); divided by its value at h = 1 (1.1) so that the
    // workbook's fundamental R is kept. Hand values: h = 5: (1 + 0.1·11.1803)/1.1 = 1.925485;
    // h = 11: (1 + 0.1·36.4829)/1.1 = 4.225716.
    for growth in [Growth::Transformer, Growth::Motor] {
        assert_close(growth.factor(1.0, FD), 1.0, 1e-15);
        assert_close(growth.factor(5.0, FD), 1.925_485_4, 1e-7);
        assert_close(growth.factor(11.0, FD), 4.225_715_7, 1e-7);
        for h in [2.0, 7.3, 25.0, 49.9] {
            assert_close(growth.factor(h, FD), (1.0 + 0.1 * h.powf(1.5)) / 1.1, 1e-14);
        }
    }
    // The motor's R stays constant under `constant` and `skin` (the earlier models).
    assert_eq!(Growth::Motor.factor(11.0, ResistanceModel::Skin), 1.0);
    assert_eq!(Growth::Motor.factor(11.0, ResistanceModel::Constant), 1.0);
}

#[test]
fn sources_and_reactors_grow_as_root_h() {
    // IEEE Task Force on Harmonics Modeling and Simulation, IEEE Trans. Power Delivery
    // 11(1), 1996 (from memory): skin effect R·√h.
    for growth in [Growth::Source, Growth::Reactor] {
        for h in [1.0, 4.0, 11.0, 37.5] {
            assert_close(growth.factor(h, FD), h.sqrt(), 1e-15);
            assert_eq!(growth.factor(h, ResistanceModel::Constant), 1.0);
        }
    }
}

#[test]
fn cable_skin_effect_is_the_iec_60287_formula() {
    // IEC 60287-1-1, clause 2.1.2 (from memory), k_s = 1: x_s² = 8π·f/R'·1e-7 (R' in ohm/m),
    // y_s = x_s⁴/(192 + 0.8·x_s⁴) up to x_s = 2.8. A 240 mm² copper conductor, R' = 0.0754
    // ohm/km at 20 °C (IEC 60228, Table 1, from memory), at 50 Hz, by hand: x_s² = 1.66663,
    // y_s = 0.0143014.
    let xs2 = cable_xs2(0.0754, 50.0);
    assert_close(xs2, 1.666_627_4, 1e-7);
    assert_close(skin_effect_ys(xs2), 0.014_301_39, 1e-6);
    // The three published branches meet within 0.003 at x_s = 2.8 and 3.8 (by hand:
    // 0.25486 | 0.25583 at 2.8; 0.60971 | 0.61220 at 3.8).
    let at = |xs: f64| skin_effect_ys(xs * xs);
    assert_close(at(2.8), 0.254_861_6, 1e-6);
    assert_close(at(2.800_001), 0.255_832, 1e-5);
    assert_close(at(3.8), 0.609_712, 1e-6);
    assert_close(at(3.800_001), 0.612_2, 1e-5);
    // The cable's multiplier is the ratio of AC resistances at h·f and f.
    let k = Growth::Cable {
        xs2_fundamental: xs2,
    };
    assert_close(k.factor(1.0, FD), 1.0, 1e-15);
    let ys = |x: f64| skin_effect_ys(x);
    assert_close(
        k.factor(11.0, FD),
        (1.0 + ys(11.0 * xs2)) / (1.0 + ys(xs2)),
        1e-15,
    );
    // 11th at 50 Hz on 240 mm²: x_s = 4.2817, above 3.8, y_s = 0.354·4.2817 − 0.733 = 0.78473.
    assert_close(ys(11.0 * xs2), 0.354 * (11.0 * xs2).sqrt() - 0.733, 1e-12);
}

#[test]
fn cigre_load_is_the_published_model() {
    // CIGRE WG 36-05, Electra 77, 1981 (from memory): R_s = V²/P in series with
    // X_s = 0.073·h·R_s, in parallel with X_p = h·R_s/(6.7·Q/P − 0.74). A 500 kW load at
    // pf 0.85 (invented) on the 100 MVA base: P = 0.005 pu, Q/P = 0.619744; at h = 5 by hand:
    // R_s = 200, X_s = 73, X_p = 293.0586 pu, Y = 0.004412186 − j0.005022735 pu.
    let y = linear_load_y_pu(
        0.005,
        0.005 * 0.619_744_338_403_102_3,
        5.0,
        LoadModel::Cigre,
    );
    assert_close(y.re, 0.004_412_186_458_999_757, 1e-12);
    assert_close(y.im, -0.005_022_735_124_835_697, 1e-12);
    // Below Q/P = 0.74/6.7 the parallel branch is absent: a unity-pf load is R_s + jX_s.
    let y1 = linear_load_y_pu(0.005, 0.0, 7.0, LoadModel::Cigre);
    let z = Complex64::new(200.0, 0.073 * 7.0 * 200.0);
    assert_close(y1.re, z.inv().re, 1e-12);
    assert_close(y1.im, z.inv().im, 1e-12);
    // The parallel R-L model: Y = P − j·Q/h (input contract, Loads).
    let y2 = linear_load_y_pu(0.005, 0.003, 5.0, LoadModel::ParallelRl);
    assert_eq!((y2.re, y2.im), (0.005, -0.003 / 5.0));
    // Through the network builder: a Loads row becomes that admittance.
    let l = load("L", "B", LoadType::Linear, 500.0, 0.85);
    let Some(shunt) = ShuntModel::load(&l, LoadModel::Cigre) else {
        panic!("a linear load has a shunt");
    };
    let y3 = shunt.y_pu(5.0, FD);
    assert_close(y3.re, y.re, 1e-12);
    assert_close(y3.im, y.im, 1e-12);
    // Its conductance is below the parallel R-L's at every order (why CIGRE is the
    // least-damped load model).
    for h in [2.0, 5.0, 11.0, 25.0] {
        let g = linear_load_y_pu(0.005, 0.0031, h, LoadModel::Cigre).re;
        assert!(g < 0.005, "h {h}: {g}");
    }
}

/// A 13.8 kV source (50 MVA, X/R 10) and a 2,000 kVA 6 % transformer (X/R 8) to 0.48 kV, a
/// plain bank of `kvar` at 0.48 kV and nothing else (invented).
fn lossy_tank(model: ResistanceModel, kvar: f64) -> Plant {
    let mut p = service(("HV", 13.8), ("LV", 0.48), (50.0, 10.0), (2000.0, 6.0, 8.0));
    p.study.resistance_model = model;
    p.study.load_model = LoadModel::Cigre;
    p.banks = vec![bank("C", "LV", 0.48, kvar, 1, Reactor::None)];
    p
}

#[test]
fn damped_peak_of_a_series_rl_behind_a_bank_in_closed_form() {
    // The bank's bus sees Z_s(h) = r(h) + j·x(h) (source and transformer in series) in
    // parallel with the bank −j·X_C/h. At the lossless resonance h0 (x(h0)·h0 = X_C, i.e.
    // h0² = X_C/X_s) the parallel impedance is exactly Z = x·√(r² + x²)/r (circuit theory:
    // 1 + j·h0·B·Z_s = j·r/x there). With r(h) = R_src·√h + R_T·(1 + 0.1·h^1.5)/1.1 under
    // `frequency-dependent` (laws above), by hand in per unit on 100 MVA.
    let p = lossy_tank(FD, 600.0);
    let net = Network::build(&p).expect("network");
    let lv = net.bus_index("LV").expect("LV");
    let z_src = 100.0 / 50.0;
    let z_t = 0.06 * 100.0 / 2.0;
    let split = |z: f64, xr: f64| {
        let r = z / (1.0 + xr * xr).sqrt();
        (r, r * xr)
    };
    let (rs, xs) = split(z_src, 10.0);
    let (rt, xt) = split(z_t, 8.0);
    let xc = 100.0 / 0.6; // X_C = S_base / Q_c at rated voltage, per unit.
    let h0 = (xc / (xs + xt)).sqrt();
    let r = rs * h0.sqrt() + rt * (1.0 + 0.1 * h0.powf(1.5)) / 1.1;
    let x = h0 * (xs + xt);
    let expected = x * (r * r + x * x).sqrt() / r;
    let engine = Engine::new(&net, &[lv]);
    let got = engine.impedance_pu(h0, 0, &[1], lv, lv).expect("solvable");
    assert_close(got.norm(), expected, 1e-12);
    // The scanned peak lies within 1/Q² of h0 and of that |Z| (Q = x/r ≈ 9 here).
    let res = run_check(&p, &CheckOptions::default()).expect("runs");
    let row = (res.resonance.rows.iter())
        .find(|r| r.configuration == "C=1")
        .expect("row");
    let peak = row.peak.expect("a peak");
    let q = x / r;
    let z_base = 0.48 * 0.48 / BASE_MVA;
    assert!(
        (peak.order - h0).abs() / h0 < 1.0 / (q * q),
        "{} vs {h0}",
        peak.order
    );
    assert!(
        (peak.z_ohm - expected * z_base).abs() / (expected * z_base) < 1.0 / (q * q),
        "{} vs {}",
        peak.z_ohm,
        expected * z_base
    );
    // The least damping (constant R) gives the higher peak: x·√(r₁² + x²)/r₁, r₁ = R_src + R_T.
    let r1 = rs + rt;
    let constant = Network::build(&lossy_tank(ResistanceModel::Constant, 600.0)).expect("net");
    let z1 = Engine::new(&constant, &[lv])
        .impedance_pu(h0, 0, &[1], lv, lv)
        .expect("solvable");
    assert_close(z1.norm(), x * (r1 * r1 + x * x).sqrt() / r1, 1e-12);
    assert!(z1.norm() > got.norm() * 1.5);
}

/// A 480 V plant with a 6-pulse drive and a plain bank whose 3 steps resonate near the 7th
/// (invented): flagged under every model.
fn flagged_plant() -> Plant {
    let mut p = service(
        ("HV", 13.8),
        ("LV", 0.48),
        (250.0, 10.0),
        (1500.0, 5.75, 7.0),
    );
    p.study.max_demand_current_a = Some(1800.0);
    p.loads = vec![
        load("D", "LV", LoadType::SixPulseDrive, 300.0, 0.95),
        load("L", "LV", LoadType::Linear, 600.0, 0.85),
        load("M", "LV", LoadType::Motor, 200.0, 0.85),
    ];
    p.banks = vec![bank("C", "LV", 0.48, 150.0, 3, Reactor::None)];
    p.study.resistance_model = FD;
    p.study.load_model = LoadModel::Cigre;
    p
}

fn figures(res: &CheckResults, label: &str) -> (f64, f64, f64) {
    let k = overtone::jobs::damping::key_figures(res, "base", label, "C", Sequence::Positive)
        .expect("studied");
    (
        k.amplification.expect("peak"),
        k.bus_thd_percent.expect("thd"),
        k.capacitor_current_percent.expect("duty"),
    )
}

#[test]
fn flagged_resonances_carry_the_least_damped_figures() {
    let p = flagged_plant();
    let res = run_check(&p, &CheckOptions::default()).expect("runs");
    let flagged: Vec<_> = (res.resonance.rows.iter())
        .filter(|r| r.verdict == Verdict::Resonant)
        .collect();
    assert!(!flagged.is_empty(), "the plant is built to resonate");
    assert_eq!(res.damping.len(), flagged.len());
    // The least-damped side is the same plant studied under constant R and CIGRE loads.
    let mut least = p.clone();
    least.study.resistance_model = ResistanceModel::Constant;
    let least_res = run_check(&least, &CheckOptions::default()).expect("runs");
    for band in &res.damping {
        let (a, thd, i) = figures(&res, &band.configuration);
        let (la, lthd, li) = figures(&least_res, &band.configuration);
        assert_close(band.study.amplification.unwrap(), a, 1e-12);
        assert_close(band.study.bus_thd_percent.unwrap(), thd, 1e-12);
        assert_close(band.study.capacitor_current_percent.unwrap(), i, 1e-12);
        assert_close(band.least_damped.amplification.unwrap(), la, 1e-12);
        assert_close(band.least_damped.bus_thd_percent.unwrap(), lthd, 1e-12);
        assert_close(
            band.least_damped.capacitor_current_percent.unwrap(),
            li,
            1e-12,
        );
        // Less damping, a higher peak and more distortion.
        assert!(
            la > a && lthd > thd,
            "{}: x{a} -> x{la}",
            band.configuration
        );
    }
    // Under the least-damped models already, the two sides are one set of figures.
    assert!(least_res.damping.iter().all(|b| b.study == b.least_damped));
}

#[test]
fn a_workbook_naming_constant_and_parallel_rl_reads_the_earlier_models() {
    // Input contract: `Resistance model` constant and `Load model` parallel R-L select the
    // models of the versions before the damped default; written and read back, the plant
    // studies exactly as built in memory.
    let mut p = flagged_plant();
    p.study.resistance_model = ResistanceModel::Constant;
    p.study.load_model = LoadModel::ParallelRl;
    let bytes = overtone::io::template::plant_workbook(&p).expect("workbook");
    let read =
        overtone::io::workbook_in::read_workbook_bytes("p", "p.xlsx", &bytes).expect("reads");
    assert_eq!(read.plant.study.resistance_model, ResistanceModel::Constant);
    assert_eq!(read.plant.study.load_model, LoadModel::ParallelRl);
    let a = run_check(&p, &CheckOptions::default()).expect("runs");
    let b = run_check(&read.plant, &CheckOptions::default()).expect("runs");
    assert_eq!(a.resonance.rows, b.resonance.rows);
    assert_eq!(a.limit_rows, b.limit_rows);
}
