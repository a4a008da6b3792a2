//! The PCC as IEEE 519-2014 clause 3 defines it (the point where the utility and the
//! customer exchange power and harmonic current): on a plant whose PCC sits on the LV side of
//! the utility's transformer, with an on-site generator at the PCC bus, the PCC's P, Q, power
//! factor and per-order harmonic currents are the flow through the utility's transformer,
//! checked against a dense load flow and dense nodal solves written here (nalgebra's LU).

use nalgebra::{DMatrix, DVector};
use num_complex::Complex64;
use overtone::jobs::check::CheckResults;
use overtone::model::*;

use crate::common::{
    assert_close, bank, bus, config_index, load, order_index, source, spectrum, textbook_plant,
    transformer,
};

const S_BASE_MVA: f64 = 100.0;

/// 34.5 kV utility (500 MVA, X/R 10) → 7.5 MVA 6 % Dyn1 → 4.16 kV MAIN (the PCC, with a
/// 20 MVA generator, a 2.5 MW motor-type linear load and a 3 × 400 kvar bank) → 2 MVA
/// 5.75 % → 480 V LV with an 800 kW drive (5th 20 %, 7th 14 %). Constant R and parallel R-L
/// loads, so that the dense model below is the contract's textbook one.
fn plant() -> Plant {
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("U", 34.5), bus("MAIN", 4.16), bus("LV", 0.48)];
    let mut genset = source("GEN", "MAIN", 20.0, 20.0);
    genset.voltage_pu = 1.01;
    genset.kind = SourceKind::Generator;
    p.sources = vec![source("UTIL", "U", 500.0, 10.0), genset];
    p.transformers = vec![
        transformer("T1", "U", "MAIN", 7500.0, 6.0, 12.0),
        transformer("T2", "MAIN", "LV", 2000.0, 5.75, 8.0),
    ];
    p.loads = vec![load("M1", "MAIN", LoadType::Linear, 2500.0, 0.82), {
        let mut d = load("D1", "LV", LoadType::SixPulseDrive, 800.0, 0.95);
        d.spectrum = Some("DRIVE".into());
        d
    }];
    p.spectra = vec![spectrum("DRIVE", &[(5.0, 20.0), (7.0, 14.0)])];
    p.banks = vec![bank("CAP", "MAIN", 4.16, 400.0, 3, Reactor::None)];
    p.study.pcc_bus = Some("MAIN".into());
    p
}

fn run(p: &Plant) -> CheckResults {
    crate::common::check_only(p)
}

/// Per-unit series impedance R + jhX of |Z| = z at X/R (constant R).
fn z_at(z: f64, x_over_r: f64, h: f64) -> Complex64 {
    let r = z / (1.0 + x_over_r * x_over_r).sqrt();
    Complex64::new(r, h * r * x_over_r)
}

/// The dense model: Y(h) with bank steps `k` (bus order U, MAIN, LV), the utility's
/// admittance at U and the transformer T1's series admittance.
struct Dense {
    y: DMatrix<Complex64>,
    y_util: Complex64,
    y_gen: Complex64,
    y_t1: Complex64,
}

fn dense(h: f64, k: u32, with_loads: bool) -> Dense {
    let y_util = z_at(S_BASE_MVA / 500.0, 10.0, h).inv();
    let y_gen = z_at(S_BASE_MVA / 20.0, 20.0, h).inv();
    let y_t1 = z_at(0.06 * S_BASE_MVA / 7.5, 12.0, h).inv();
    let y_t2 = z_at(0.0575 * S_BASE_MVA / 2.0, 8.0, h).inv();
    let mut y = DMatrix::from_element(3, 3, Complex64::default());
    let mut branch = |a: usize, b: usize, yb: Complex64| {
        y[(a, a)] += yb;
        y[(b, b)] += yb;
        y[(a, b)] -= yb;
        y[(b, a)] -= yb;
    };
    branch(0, 1, y_t1);
    branch(1, 2, y_t2);
    y[(0, 0)] += y_util;
    y[(1, 1)] += y_gen;
    // The bank: k steps of 400 kvar at rated 4.16 kV, B = k·Q/S_base per unit at h = 1.
    y[(1, 1)] += Complex64::new(0.0, h * f64::from(k) * 0.4 / S_BASE_MVA);
    if with_loads {
        // Parallel R-L (the contract's textbook model): y = P − jQ/h per unit.
        let (p, q) = (2.5 / S_BASE_MVA, 2.5 / S_BASE_MVA * 0.82f64.acos().tan());
        y[(1, 1)] += Complex64::new(p, -q / h);
    }
    Dense {
        y,
        y_util,
        y_gen,
        y_t1,
    }
}

/// The dense load flow: constant-power loads (M1 at MAIN, D1 at LV) and the source EMFs
/// behind their impedances, by the Z-bus fixed point V = Z·(I_N − conj(S/V)), iterated until
/// V stops changing (1e-15 pu). Returns the bus voltages (shift-free, per unit).
fn load_flow(k: u32) -> (Vec<Complex64>, Dense) {
    let d = dense(1.0, k, false);
    let lu = d.y.clone().lu();
    let s_load = [
        Complex64::default(),
        Complex64::new(2.5, 2.5 * 0.82f64.acos().tan()) / S_BASE_MVA,
        Complex64::new(0.8, 0.8 * 0.95f64.acos().tan()) / S_BASE_MVA,
    ];
    let i_n = [d.y_util * 1.0, d.y_gen * 1.01, Complex64::default()];
    let mut v = vec![Complex64::new(1.0, 0.0); 3];
    for _ in 0..500 {
        let rhs = DVector::from_iterator(3, (0..3).map(|i| i_n[i] - (s_load[i] / v[i]).conj()));
        let next = lu.solve(&rhs).expect("regular");
        let change = (0..3).map(|i| (next[i] - v[i]).norm()).fold(0.0, f64::max);
        v = next.iter().copied().collect();
        if change < 1e-15 {
            break;
        }
    }
    (v, d)
}

#[test]
fn pcc_power_is_the_flow_through_the_utility_transformer_not_the_sources() {
    let p = plant();
    let res = run(&p);
    for k in 0..=3u32 {
        let (v, d) = load_flow(k);
        // IEEE 519-2014 clause 3: the PCC exchanges power between the utility and the
        // customer; here that is T1's flow at its MAIN terminal, into MAIN.
        let i_in = d.y_t1 * (v[0] - v[1]);
        let s_kva = v[1] * i_in.conj() * S_BASE_MVA * 1000.0;
        let c = config_index(&res, &[k]);
        let op = res.operating.point_at(0, c, 4).expect("solved");
        assert!(
            (op.pcc_p_kw - s_kva.re).abs() < 1e-3,
            "P {k}: {} vs {}",
            op.pcc_p_kw,
            s_kva.re
        );
        assert!(
            (op.pcc_q_kvar - s_kva.im).abs() < 1e-3,
            "Q {k}: {} vs {}",
            op.pcc_q_kvar,
            s_kva.im
        );
        assert_close(op.pcc_v_pu, v[1].norm(), 1e-9);
        // The generator's output is not drawn from the utility: the sum of the sources
        // differs from the PCC flow by the generator's output.
        let genset = v[1] * (d.y_gen * (1.01 - v[1])).conj() * S_BASE_MVA * 1000.0;
        assert!(
            genset.re.abs() > 100.0,
            "the generator carries load ({:.0} kW)",
            genset.re
        );
        let pf = s_kva.re / s_kva.norm();
        assert_close(op.pcc_power_factor.expect("load"), pf, 1e-7);
    }
}

#[test]
fn operating_angles_are_against_the_first_utility_sources_emf() {
    let res = run(&plant());
    let (v, _) = load_flow(2);
    let got = res.load_flow.voltages(0, &[2]).expect("solves");
    // The utility's EMF is at 0° at U; MAIN and LV sit behind a Dyn1 (IEC 60076-1: the LV
    // side lags 30°) and LV's Dyn1 another 30° (common practice default at 60 Hz).
    for (i, shift) in [(0usize, 0.0), (1, -30.0), (2, -60.0)] {
        let want = v[i].arg().to_degrees() + shift;
        let diff = (got[i].arg().to_degrees() - want + 540.0).rem_euclid(360.0) - 180.0;
        assert!(
            diff.abs() < 1e-7,
            "bus {i}: {} vs {want}",
            got[i].arg().to_degrees()
        );
    }
}

#[test]
fn pcc_harmonic_currents_are_the_flow_through_the_utility_transformer() {
    let mut p = plant();
    p.background = vec![BackgroundLine {
        source: "UTIL".into(),
        order: 5.0,
        voltage_percent: 1.5,
        angle_deg: None,
    }];
    let res = run(&p);
    let i_base_main = S_BASE_MVA * 1e6 / (3f64.sqrt() * 4160.0);
    for k in 0..=3u32 {
        let c = config_index(&res, &[k]);
        let dist = &res.penetration.results[c];
        for (h, m) in [(5.0, 0.20), (7.0, 0.14)] {
            let d = dense(h, k, true);
            let lu = d.y.clone().lu();
            // The drive's current: I_h = I_1·m with I_1 = P / (√3 kV pf) (input contract),
            // in per unit of its bus's base: (P / S_base) / pf.
            let i_drive = 0.8 / S_BASE_MVA / 0.95 * m;
            let col = |i: usize, amps: Complex64| {
                let mut rhs = DVector::from_element(3, Complex64::default());
                rhs[i] = amps;
                let v = lu.solve(&rhs).expect("regular");
                // T1's current at MAIN toward the utility.
                (d.y_t1 * (v[1] - v[0])).norm()
            };
            let mut want = col(2, Complex64::new(i_drive, 0.0));
            if h == 5.0 {
                // The background EMF behind the utility's impedance: a Norton current at U
                // (its own current is not in T1's flow).
                want += col(0, d.y_util * 0.015);
            }
            let got = dist.pcc_current_a[order_index(&res, h)];
            assert_close(got, want * i_base_main, 1e-9);
        }
    }
}

#[test]
fn pcc_short_circuit_current_leaves_the_generator_and_loads_out() {
    let res = run(&plant());
    // IEEE 519-2014 clause 3 (I_SC: the available short-circuit current at the PCC, the
    // utility's): Z = Z_util + Z_T1 at h = 1, I = S_base / (|Z|·√3·kV).
    let z = z_at(S_BASE_MVA / 500.0, 10.0, 1.0) + z_at(0.06 * S_BASE_MVA / 7.5, 12.0, 1.0);
    let isc_ka = S_BASE_MVA / z.norm() / (3f64.sqrt() * 4.16);
    assert_close(res.limits.isc_ka, isc_ka, 1e-12);
}

#[test]
fn a_pcc_without_a_utility_side_is_a_located_error() {
    let mut p = plant();
    p.sources.retain(|s| s.kind == SourceKind::Generator);
    let err = overtone::network::Network::build(&p).expect_err("no utility");
    let text = err.to_string();
    assert!(
        text.contains("Sources") && text.contains("MAIN") && text.contains("Kind"),
        "{text}"
    );
}

fn with_background(mut p: Plant, angle_deg: Option<f64>) -> Plant {
    p.background = vec![BackgroundLine {
        source: "UTIL".into(),
        order: 5.0,
        voltage_percent: 1.5,
        angle_deg,
    }];
    p
}

#[test]
fn worst_background_angle_matches_a_brute_force_sweep() {
    // Under `phasor` summation a blank background angle is stated as 0°; the worst case
    // over it is |known| + |background term| (the triangle inequality, exact). Checked
    // against a sweep of the angle in 2° steps, each a whole check.
    let mut p = with_background(plant(), None);
    p.study.summation = Summation::Phasor;
    let res = run(&p);
    let o = order_index(&res, 5.0);
    for k in [0u32, 2, 3] {
        let c = config_index(&res, &[k]);
        let b = res.penetration.results[c].pcc_bounds[o];
        let (worst_i, worst_v) = (
            b.i_worst_angle_a.expect("blank"),
            b.v_worst_angle_percent.expect("blank"),
        );
        let (mut max_i, mut max_v): (f64, f64) = (0.0, 0.0);
        for step in 0..180 {
            let mut q = with_background(plant(), Some(f64::from(step) * 2.0));
            q.study.summation = Summation::Phasor;
            let r = run(&q);
            assert!(
                r.penetration.results[c].pcc_bounds[o]
                    .i_worst_angle_a
                    .is_none()
            );
            max_i = max_i.max(r.penetration.results[c].pcc_current_a[o]);
            let v = r.penetration.voltages(0, &[k]).expect("solves");
            max_v = max_v.max(v[1][o] * 100.0);
        }
        // A 2° grid is within 1 − cos(1°) = 1.5e-4 of the maximum.
        assert!(
            max_i <= worst_i * (1.0 + 1e-12) && max_i >= worst_i * (1.0 - 2e-4),
            "{k}: {max_i} vs {worst_i}"
        );
        assert!(
            max_v <= worst_v * (1.0 + 1e-12) && max_v >= worst_v * (1.0 - 2e-4),
            "{k}: {max_v} vs {worst_v}"
        );
        // The arithmetic bound is what arithmetic summation gives (one load per bus).
        let mut a = with_background(plant(), None);
        a.study.summation = Summation::Arithmetic;
        let ra = run(&a);
        assert_close(
            b.i_arithmetic_a,
            ra.penetration.results[c].pcc_current_a[o],
            1e-9,
        );
        assert!(b.i_arithmetic_a >= worst_i * (1.0 - 1e-12));
    }
}

#[test]
fn tdd_judges_the_plants_own_emission_and_reports_the_background_apart() {
    let p = with_background(plant(), Some(0.0));
    let res = run(&p);
    let without_bg = run(&plant());
    let mut no_drive = with_background(plant(), Some(0.0));
    no_drive.spectra[0]
        .lines
        .iter_mut()
        .for_each(|l| l.magnitude_percent = 0.0);
    let bg_alone = run(&no_drive);
    let o = order_index(&res, 5.0);
    for k in 0..=3u32 {
        let c = config_index(&res, &[k]);
        let d = &res.penetration.results[c];
        // The plant's own emission is the flow with the background off.
        assert_close(
            d.pcc_plant_current_a[o],
            without_bg.penetration.results[c].pcc_current_a[o],
            1e-9,
        );
        // The background's part is the flow with the plant's drive silent.
        assert_close(
            d.pcc_background_current_a[o],
            bg_alone.penetration.results[c].pcc_current_a[o],
            1e-9,
        );
        // Arithmetic summation (the default): the total is their sum.
        assert_close(
            d.pcc_current_a[o],
            d.pcc_plant_current_a[o] + d.pcc_background_current_a[o],
            1e-12,
        );
        // IEEE 519-2014 clause 5.2 judges the plant's TDD: the same with and without the
        // background; the whole flow's TDD is reported beside it, higher.
        let row = &res.limit_rows[c];
        assert_close(row.tdd.value, without_bg.limit_rows[c].tdd.value, 1e-9);
        assert!(row.tdd_with_background_percent > row.tdd.value);
    }
}

#[test]
fn a_utility_source_at_the_pcc_bus_takes_its_own_background_current_out() {
    // One bus: the utility (100 MVA, X/R 10) at the PCC, a 3 × 400 kvar bank and a 2 MW
    // linear load. The background EMF E behind y_s drives into the plant the current
    // I = E·y_s·y_p / (y_s + y_p), y_p = bank + load (Thevenin; textbook).
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("MAIN", 4.16)];
    p.sources = vec![source("UTIL", "MAIN", 100.0, 10.0)];
    p.loads = vec![load("M1", "MAIN", LoadType::Linear, 2000.0, 0.85)];
    p.banks = vec![bank("CAP", "MAIN", 4.16, 400.0, 3, Reactor::None)];
    p.background = vec![BackgroundLine {
        source: "UTIL".into(),
        order: 7.0,
        voltage_percent: 2.0,
        angle_deg: None,
    }];
    let res = run(&p);
    let o = order_index(&res, 7.0);
    let h = 7.0;
    let y_s = z_at(1.0, 10.0, h).inv();
    let i_base = S_BASE_MVA * 1e6 / (3f64.sqrt() * 4160.0);
    for k in 0..=3u32 {
        let y_p = Complex64::new(0.02, -0.02 * 0.85f64.acos().tan() / h)
            + Complex64::new(0.0, h * f64::from(k) * 0.004);
        let want = (0.02 * y_s * y_p / (y_s + y_p)).norm() * i_base;
        let c = config_index(&res, &[k]);
        assert_close(
            res.penetration.results[c].pcc_background_current_a[o],
            want,
            1e-9,
        );
        assert_close(res.penetration.results[c].pcc_current_a[o], want, 1e-9);
    }
}

#[test]
fn neutral_current_of_four_wire_loads_by_hand() {
    // Two 4-wire electronic loads of 40 kW (pf 0.9) on a 208 V bus, a spectrum of 3rd 80 %,
    // 5th 60 %, 9th 30 %. By hand (symmetrical components, textbook): I_1 = P/(√3·kV·pf),
    // the triplens are zero sequence and add in the neutral, I_N,h = 3·I_h; the loads add
    // arithmetically (the default summation): I_N = 3·2·I_1·√(0.8² + 0.3²).
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("LV", 0.208)];
    p.buses[0].neutral_rating_a = Some(500.0);
    p.sources = vec![source("U", "LV", 10.0, 5.0)];
    p.spectra = vec![spectrum("SMPS", &[(3.0, 80.0), (5.0, 60.0), (9.0, 30.0)])];
    p.loads = (0..2)
        .map(|i| {
            let mut l = load(&format!("E{i}"), "LV", LoadType::Electronic, 40.0, 0.9);
            l.spectrum = Some("SMPS".into());
            l
        })
        .collect();
    let res = run(&p);
    let i1 = 40.0 / (3f64.sqrt() * 0.208 * 0.9);
    let want = 3.0 * 2.0 * i1 * (0.8f64.powi(2) + 0.3f64.powi(2)).sqrt();
    let row = &res.neutral[0];
    assert_eq!(row.bus, "LV");
    assert_close(row.rms_a, want, 1e-9);
    assert_close(row.worst_a, 3.0 * 2.0 * i1 * 0.8, 1e-9);
    assert_eq!(row.worst_order, 3.0);
    assert!(row.exceeds, "{} A over 500 A", row.rms_a);
    // As 3-wire loads their triplens have no neutral to flow in.
    for l in &mut p.loads {
        l.wiring = Some(Wiring::ThreeWire);
    }
    assert!(run(&p).neutral.is_empty());
}

#[test]
fn the_new_columns_round_trip_through_the_workbook() {
    // Input contract: Sources `Kind`, Buses `Neutral rating (A)`, Cables `R0 (ohm/km)` and
    // `X0 (ohm/km)`, written by the template and read back.
    let mut p = plant();
    p.buses[1].neutral_rating_a = Some(400.0);
    p.cables = vec![overtone::model::Cable {
        r0_ohm_per_km: Some(0.9),
        x0_ohm_per_km: Some(0.4),
        ..crate::common::cable("K", "MAIN", "MAIN2", 50.0)
    }];
    p.buses.push(bus("MAIN2", 4.16));
    let bytes = overtone::io::template::plant_workbook(&p).expect("workbook");
    let read =
        overtone::io::workbook_in::read_workbook_bytes("p", "p.xlsx", &bytes).expect("reads");
    assert_eq!(read.plant.sources[1].kind, SourceKind::Generator);
    assert_eq!(read.plant.sources[0].kind, SourceKind::Utility);
    assert_eq!(read.plant.buses[1].neutral_rating_a, Some(400.0));
    assert_eq!(read.plant.cables[0].r0_ohm_per_km, Some(0.9));
    assert_eq!(read.plant.cables[0].x0_ohm_per_km, Some(0.4));
}

#[test]
fn estimated_demand_nets_out_on_site_generation() {
    // No "Max demand current (A)": I_L is estimated after correction (IEEE 519-2014 clause 3:
    // the maximum demand current at the PCC). With a generator at the PCC the utility
    // supplies only the PCC's draw: I_L = P_pcc / (PF_after·√3·kV), P_pcc the flow through
    // T1 without banks (the dense load flow above), PF_after the better of the target 0.95
    // and the loads' own PF (by hand from the Loads sheet).
    let res = run(&plant());
    let (v, d) = load_flow(0);
    let p_pcc_kw = (v[1] * (d.y_t1 * (v[0] - v[1])).conj()).re * S_BASE_MVA * 1000.0;
    let (p, q) = (
        2500.0 + 800.0,
        2500.0 * 0.82f64.acos().tan() + 800.0 * 0.95f64.acos().tan(),
    );
    let pf_after = (p / f64::hypot(p, q)).max(0.95);
    assert!(res.limits.i_l_estimated);
    assert_close(
        res.limits.i_l_a,
        p_pcc_kw / pf_after / (3f64.sqrt() * 4.16),
        1e-9,
    );
    assert!(
        p_pcc_kw < p - 100.0,
        "the generator carries part of the load"
    );
}
