//! Resonance checks against published and textbook values, each with its source beside it.

use overtone::jobs::check::{CheckOptions, CheckResults, run_check};
use overtone::model::*;
use overtone::study::Series;

use crate::common::*;

fn run(p: &Plant) -> CheckResults {
    run_check(p, &CheckOptions::default()).expect("valid plant")
}

/// The scanned series at `bus` in the configuration labelled `label`, first scenario.
fn series<'a>(res: &'a CheckResults, bus: &str, label: &str) -> &'a Series {
    let b = res.network.bus_index(bus).expect("bus");
    let sb = res
        .scan
        .buses
        .iter()
        .position(|&x| x == b)
        .expect("scanned bus");
    let c = (0..res.scan.configurations.len())
        .find(|&c| res.label(c) == label)
        .expect("configuration");
    res.scan.series(0, c, sb)
}

/// f0 = 1/(2π√(LC)) for L = 67 mH, C = 100 nF: 1944 Hz (common practice; the formula is
/// textbook). Built from the tool's own element models at 60 Hz on a 1 kV bus.
const L_HENRY: f64 = 0.067;
const C_FARAD: f64 = 100e-9;

fn x_l_ohm() -> f64 {
    2.0 * std::f64::consts::PI * 60.0 * L_HENRY
}

fn x_c_ohm() -> f64 {
    1.0 / (2.0 * std::f64::consts::PI * 60.0 * C_FARAD)
}

#[test]
fn series_lc_dip_at_the_textbook_ring_frequency() {
    // common practice: a 67 mH inductor in series with a 100 nF capacitor rings at
    // 1944 Hz. Driven through the tool: one 1 kV bus, a weak source (|Z| = 10 kΩ at 60 Hz,
    // far above the L-C branch near its resonance) and a detuned step whose reactor is the
    // 67 mH (p = X_L/X_C at 60 Hz) and whose capacitor is the 100 nF; the scan's deepest
    // dip must sit at 1944 Hz within 1 Hz.
    let mut p = textbook_plant(60.0);
    p.study.highest_order = 40.0;
    p.buses.push(bus("B", 1.0));
    p.sources.push(source("S", "B", 1.0 / 10_000.0, 50.0));
    let p_percent = x_l_ohm() / x_c_ohm() * 100.0;
    let mut b = bank(
        "C",
        "B",
        1.0,
        1000.0 / x_c_ohm(),
        1,
        Reactor::Detuning { percent: p_percent },
    );
    b.reactor_q = 200.0;
    p.banks.push(b);
    let res = run(&p);
    let dip = deepest_dip(series(&res, "B", "C=1"));
    assert!(
        (dip.order * 60.0 - 1944.0).abs() < 1.0,
        "dip at {} Hz",
        dip.order * 60.0
    );
}

#[test]
fn parallel_rlc_peak_is_r_at_f0() {
    // Parallel R-L-C at one bus: the source is the inductor (X/R huge), a unity-pf linear
    // load the resistor, a plain bank the capacitor. Textbook: |Z| is maximum, equal to R,
    // at f0 = 1/(2π√(LC)).
    let r_ohm = 1000.0;
    let mut p = textbook_plant(60.0);
    p.buses.push(bus("B", 1.0));
    p.sources.push(source("L", "B", 1.0 / x_l_ohm(), 1e6));
    p.loads
        .push(load("R", "B", LoadType::Linear, 1000.0 / r_ohm, 1.0));
    p.banks
        .push(bank("C", "B", 1.0, 1000.0 / x_c_ohm(), 1, Reactor::None));
    let res = run(&p);
    let s = series(&res, "B", "C=1");
    assert_eq!(s.peaks.len(), 1, "{:?}", s.peaks);
    let peak = s.peaks[0];
    // common practice: 1944 Hz within 1 Hz.
    assert!(
        (peak.order * 60.0 - 1944.0).abs() < 1.0,
        "f0 = {} Hz",
        peak.order * 60.0
    );
    let expected_order = 1.0 / (2.0 * std::f64::consts::PI * (L_HENRY * C_FARAD).sqrt()) / 60.0;
    assert!(
        (peak.order - expected_order).abs() < 1e-3,
        "{} vs {expected_order}",
        peak.order
    );
    assert_close(peak.z_ohm, r_ohm, 1e-6);
    // Textbook: a parallel R-L-C has Q = R / X0 with X0 = √(L/C) the characteristic
    // reactance; as h/Δh at the half-power points, to 1e-3.
    let q_expected = r_ohm / (L_HENRY / C_FARAD).sqrt();
    assert_close(peak.sharpness.expect("sharpness"), q_expected, 1e-3);
}

#[test]
fn series_rlc_dip_is_r_at_f0() {
    // Series R-L-C: a detuned step is R_L + j(h·X_L − X_C/h). Textbook: |Z| is minimum,
    // equal to R, at f0. The source is made very weak so the bus sees the step alone.
    let r_ohm = 10.0;
    let mut p = textbook_plant(60.0);
    p.buses.push(bus("B", 1.0));
    p.sources.push(source("S", "B", 1e-9, 1.0));
    let mut c = bank(
        "C",
        "B",
        1.0,
        1000.0 / x_c_ohm(),
        1,
        Reactor::Detuning {
            percent: 100.0 * x_l_ohm() / x_c_ohm(),
        },
    );
    c.reactor_q = x_l_ohm() / r_ohm;
    p.banks.push(c);
    let res = run(&p);
    let s = series(&res, "B", "C=1");
    let dip = deepest_dip(s);
    assert!(
        (dip.order * 60.0 - 1944.0).abs() < 1.0,
        "f0 = {} Hz",
        dip.order * 60.0
    );
    assert_close(dip.z_ohm, r_ohm, 1e-6);
    // Textbook: a series R-L-C has Q = X0 / R, X0 = √(L/C), at the half-power points
    // (|Z| = √2·R), to 1e-3.
    let q_expected = (L_HENRY / C_FARAD).sqrt() / r_ohm;
    assert_close(dip.sharpness.expect("sharpness"), q_expected, 1e-3);
}

/// Hand check and scan for a plain bank behind a transformer.
fn bank_behind_transformer(utility_mva: f64, kva: f64, z_percent: f64, kvar: f64) -> CheckResults {
    let mut p = textbook_plant(60.0);
    p.buses.push(bus("HV", 13.8));
    p.buses.push(bus("LV", 0.48));
    p.sources.push(source("U", "HV", utility_mva, 200.0));
    p.transformers
        .push(transformer("T", "HV", "LV", kva, z_percent, 200.0));
    p.banks.push(bank("C", "LV", 0.48, kvar, 1, Reactor::None));
    run(&p)
}

#[test]
fn worked_example_7_05() {
    // tests/references.md: 1500 kVA, 5.5 % transformer, utility 48,000 kVA short-circuit; system
    // 17,391 kVA; 350 kvar gives h = 7.05 (published worked example, seen once). Within 1 %.
    let res = bank_behind_transformer(48.0, 1500.0, 5.5, 350.0);
    let row = &res.resonance.rows[0];
    assert_close(row.s_sc_mva * 1000.0, 17_391.0, 0.01);
    assert_close(row.hand_order, 7.05, 0.01);
    assert_close(row.peak.expect("peak").order, 7.05, 0.01);
}

#[test]
fn worked_example_13_7() {
    // tests/references.md: 1000 kVA, 5.3 %, 480 V, 100 kvar: h = 13.7 (published worked example,
    // seen once); the utility is taken as an infinite bus. Within 1 %.
    let res = bank_behind_transformer(1e6, 1000.0, 5.3, 100.0);
    let row = &res.resonance.rows[0];
    assert_close(row.hand_order, 13.7, 0.01);
    assert_close(row.peak.expect("peak").order, 13.7, 0.01);
}

#[test]
fn detuning_table_orders() {
    // tests/references.md detuning table (common practice): p = 5.67 % -> 4.200, 7 % -> 3.780,
    // 14 % -> 2.673; tuning order 1/√p. The series-resonance dip of a single detuned step
    // at its bus (weak source, constant resistance) within 0.001 order.
    for (percent, expected) in [(5.67, 4.200), (7.0, 3.780), (14.0, 2.673)] {
        let mut p = textbook_plant(50.0);
        p.buses.push(bus("B", 0.4));
        p.sources.push(source("S", "B", 0.01, 5.0));
        p.banks
            .push(bank("C", "B", 0.4, 50.0, 1, Reactor::Detuning { percent }));
        let res = run(&p);
        let s = series(&res, "B", "C=1");
        let dip = deepest_dip(s);
        assert!(
            (dip.order - expected).abs() < 1e-3,
            "p = {percent} %: dip at {}, expected {expected}",
            dip.order
        );
    }
}

#[test]
fn tuned_order_is_where_the_dip_lands() {
    // Single-tuned filter (tests/references.md): X_L = X_C / h_t², so the step's series resonance
    // is at h_t; here h_t = 4.7 (common practice for the 5th).
    let mut p = textbook_plant(60.0);
    p.buses.push(bus("B", 0.48));
    p.sources.push(source("S", "B", 0.01, 5.0));
    p.banks
        .push(bank("F", "B", 0.6, 100.0, 1, Reactor::Tuned { order: 4.7 }));
    let res = run(&p);
    let s = series(&res, "B", "F=1");
    let dip = deepest_dip(s);
    assert!((dip.order - 4.7).abs() < 1e-3, "{}", dip.order);
}

#[test]
fn detuned_hand_order_by_hand() {
    // 480 V bus behind 20 MVA (X/R 10): |Z_th| = 100/20 = 5 pu on 100 MVA; a 300 kvar 7 %
    // detuned step: X_C = 100/0.3 = 333.33 pu, X_L = 0.07·X_C = 23.333 pu. Hand order
    // √(X_C/(|Z_th| + X_L)) = 3.4300 (the plain law with the reactor's inductance added,
    // textbook); the lossless parallel resonance with X_th = 5/√1.01 is 3.4315, and the
    // scanned peak lies within 0.2 % of it.
    let mut p = textbook_plant(60.0);
    p.buses.push(bus("B", 0.48));
    p.sources.push(source("U", "B", 20.0, 10.0));
    p.banks.push(bank(
        "C",
        "B",
        0.48,
        300.0,
        1,
        Reactor::Detuning { percent: 7.0 },
    ));
    p.loads
        .push(load("D", "B", LoadType::SixPulseDrive, 50.0, 0.95));
    let res = run(&p);
    let row = &res.resonance.rows[0];
    assert_close(row.hand_order, 3.4300, 1e-4);
    assert_close(row.s_sc_mva, 20.0, 1e-9);
    assert_close(row.peak.expect("peak").order, 3.4315, 2e-3);
}

#[test]
fn hand_check_counts_every_step_on_the_bus() {
    // Two plain 400 kvar banks on one 480 V bus behind 20 MVA (X/R 10), no load (invented).
    // With both on, the hand check is h = √(S_sc/Q_c) with Q_c = 800 kvar, the capacitance
    // the supply resonates with: √(20/0.8) = 5.00 (common practice); with one, √(20/0.4)
    // = 7.07. The scanned peak agrees within 1 %.
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("B", 0.48)];
    p.sources = vec![source("U", "B", 20.0, 10.0)];
    p.banks = vec![
        bank("C1", "B", 0.48, 400.0, 1, Reactor::None),
        bank("C2", "B", 0.48, 400.0, 1, Reactor::None),
    ];
    let res = run_check(&p, &Default::default()).unwrap();
    for (cfg, q_c, h) in [
        ("C1=1 C2=1", 800.0, 5.0),
        ("C1=1 C2=0", 400.0, 50f64.sqrt()),
    ] {
        let r = res
            .resonance
            .rows
            .iter()
            .find(|r| r.bank == "C1" && r.configuration == cfg)
            .unwrap();
        assert_close(r.s_sc_mva, 20.0, 1e-9);
        assert_close(r.q_c_kvar, q_c, 1e-9);
        assert_close(r.hand_order, h, 1e-9);
        assert_close(r.peak.unwrap().order, h, 0.01);
    }
}

#[test]
fn engineer_hand_check_from_the_path_and_with_plain_and_detuned_steps_together() {
    // S_sc by the hand method: per-unit impedances of the source and the transformer added
    // in series (IEEE Std 141-1993 short-circuit hand method, common practice). With the
    // same X/R the magnitudes add: S_sc = 1/(1/500 + 0.0575/2) MVA = 32.520 MVA at 480 V,
    // loads and motors left out (a 500 kW motor load here must not change it).
    let mut p = service(
        ("MV", 13.8),
        ("LV", 0.48),
        (500.0, 10.0),
        (2000.0, 5.75, 10.0),
    );
    p.loads = vec![
        load("M", "LV", LoadType::Motor, 500.0, 0.85),
        load("D", "LV", LoadType::SixPulseDrive, 300.0, 0.95),
    ];
    let x_c1 = 0.48f64 * 0.48 / 0.2; // plain, 200 kvar a step at 480 V, ohm
    let x_c2 = 0.48f64 * 0.48 / 0.1; // 7 % detuned, 100 kvar a step at 480 V, ohm
    p.banks = vec![
        bank("P", "LV", 0.48, 200.0, 1, Reactor::None),
        bank(
            "D7",
            "LV",
            0.48,
            100.0,
            1,
            Reactor::Detuning { percent: 7.0 },
        ),
    ];
    let res = run(&p);
    let expected_mva = 1.0 / (1.0 / 500.0 + 0.0575 / 2.0);
    for r in &res.resonance.rows {
        assert_close(r.s_sc_mva, expected_mva, 1e-12);
        assert!(matches!(
            r.s_sc_basis,
            overtone::study::hand::SscBasis::Path(_)
        ));
    }
    // Both energized: the lossless parallel resonance of X_s with the plain C ∥ the detuned
    // branch solves X_s·X_L·u² − (X_C1·X_L + X_s·X_C2 + X_s·X_C1)·u + X_C1·X_C2 = 0 for
    // u = h² (the zero of the bus susceptance, circuit theory): the lower root belongs to
    // the detuned steps (below their tuning order 1/√0.07 = 3.78), the upper to the plain.
    let x_s = 0.48 * 0.48 / expected_mva;
    let x_l = 0.07 * x_c2;
    let (a, b, c) = (
        x_s * x_l,
        -(x_c1 * x_l + x_s * x_c2 + x_s * x_c1),
        x_c1 * x_c2,
    );
    let disc = (b * b - 4.0 * a * c).sqrt();
    let (u_low, u_high) = ((-b - disc) / (2.0 * a), (-b + disc) / (2.0 * a));
    let row = |bank: &str| {
        res.resonance
            .rows
            .iter()
            .find(|r| r.configuration == "P=1 D7=1" && r.bank == bank)
            .expect("row")
    };
    assert!(row("P").mixed && row("D7").mixed);
    assert_close(row("P").hand_order, u_high.sqrt(), 1e-9);
    assert_close(row("D7").hand_order, u_low.sqrt(), 1e-9);
    assert!(row("D7").hand_order < 1.0 / 0.07f64.sqrt());
    // Every step on the bus counts: 200 + 100 kvar.
    assert_close(row("P").q_c_kvar, 300.0, 1e-12);
    // Alone, each is its closed form: √(S_sc/Q_c) and √(X_C/(X_s + X_L)).
    let alone = |label: &str, bank: &str| {
        res.resonance
            .rows
            .iter()
            .find(|r| r.configuration == label && r.bank == bank)
            .expect("row")
            .hand_order
    };
    assert_close(alone("P=1 D7=0", "P"), (expected_mva / 0.2).sqrt(), 1e-12);
    assert_close(alone("P=0 D7=1", "D7"), (x_c2 / (x_s + x_l)).sqrt(), 1e-12);
}
