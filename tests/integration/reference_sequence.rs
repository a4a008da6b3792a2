//! The harmonic load flow of input contract version 2 against values computed outside the
//! code: twelve-pulse cancellation through a Dd0/Dyn1 pair, triplen blocking by a delta
//! winding, zero-sequence resonance of a grounded-wye bank, the background divider, and
//! phasor summation with the operating point's angles, each by hand from the contract's
//! element formulas.

use num_complex::Complex64;
use overtone::jobs::check::{CheckResults, run_check};
use overtone::model::*;
use overtone::study::Verdict;

use crate::common::*;

fn bus_index(res: &CheckResults, id: &str) -> usize {
    res.network.bus_index(id).expect("bus")
}

/// A 13.8 kV service feeding two identical 480 V drive buses through 1500 kVA
/// transformers of groups `a` and `b`, one 500 kW 6-pulse drive on each.
fn drive_pair(a: &str, b: &str, law: Summation) -> Plant {
    let mut p = textbook_plant(60.0);
    p.study.pcc_bus = Some("MV".into());
    p.study.summation = law;
    p.study.max_demand_current_a = Some(100.0);
    p.buses = vec![bus("MV", 13.8), bus("LA", 0.48), bus("LB", 0.48)];
    p.sources = vec![source("U", "MV", 250.0, 10.0)];
    for (id, lv, group) in [("TA", "LA", a), ("TB", "LB", b)] {
        p.transformers.push(Transformer {
            connection: VectorGroup::parse(group),
            ..transformer(id, "MV", lv, 1500.0, 5.75, 7.0)
        });
        p.loads.push(load(
            &format!("D-{lv}"),
            lv,
            LoadType::SixPulseDrive,
            500.0,
            0.95,
        ));
    }
    p
}

#[test]
fn twelve_pulse_pair_cancels_the_5th_and_7th_at_the_common_bus() {
    // Two identical six-pulse converters fed 30° apart (Dd0 and Dyn1) form a twelve-pulse
    // pair: at the common bus the orders 6k ± 1 with k odd (5, 7, 17, 19) cancel and those
    // with k even (11, 13, 23, 25) add (twelve-pulse converter theory, textbook, from
    // memory). The
    // built-in spectrum's angles are the ideal six-pulse ones, and both drives see the
    // same fundamental angle in their own zone, so the cancellation is exact to rounding.
    let phasor = run_check(
        &drive_pair("Dd0", "Dyn1", Summation::Phasor),
        &Default::default(),
    )
    .unwrap();
    let arith = run_check(
        &drive_pair("Dd0", "Dyn1", Summation::Arithmetic),
        &Default::default(),
    )
    .unwrap();
    let mv = bus_index(&phasor, "MV");
    let vp = phasor.penetration.voltages(0, &[]).unwrap();
    let va = arith.penetration.voltages(0, &[]).unwrap();
    let d_p = phasor.penetration.result(0, 0, 1);
    let d_a = arith.penetration.result(0, 0, 1);
    for h in [5.0, 7.0, 17.0, 19.0] {
        let o = order_index(&phasor, h);
        assert!(va[mv][o] > 1e-4, "arithmetic V{h} is not negligible");
        assert!(
            vp[mv][o] <= 1e-9 * va[mv][o],
            "V{h} at MV: phasor {} vs arithmetic {}",
            vp[mv][o],
            va[mv][o]
        );
        assert!(d_p.pcc_current_a[o] <= 1e-9 * d_a.pcc_current_a[o]);
    }
    for h in [11.0, 13.0, 23.0, 25.0] {
        let o = order_index(&phasor, h);
        assert_close(vp[mv][o], va[mv][o], 1e-9);
        assert_close(d_p.pcc_current_a[o], d_a.pcc_current_a[o], 1e-9);
    }
    // Two Dd0 transformers (no shift) add every order: phasor equals arithmetic.
    let same = run_check(
        &drive_pair("Dd0", "Dd0", Summation::Phasor),
        &Default::default(),
    )
    .unwrap();
    let vs = same.penetration.voltages(0, &[]).unwrap();
    for h in [5.0, 7.0, 11.0, 13.0] {
        let o = order_index(&same, h);
        assert_close(vs[mv][o], va[mv][o], 1e-9);
    }
}

/// 13.8 kV service (250 MVA, X/R 10), a Dyn1 2000 kVA 5.75 % X/R 8 transformer and a
/// 480 V bus with 300 kW of single-phase electronic load; optionally a 375 kvar bank.
fn electronic_behind_dyn(connection: Option<BankConnection>) -> Plant {
    let mut p = textbook_plant(60.0);
    p.study.pcc_bus = Some("HV".into());
    p.study.max_demand_current_a = Some(50.0);
    p.buses = vec![bus("HV", 13.8), bus("LV", 0.48)];
    p.sources = vec![source("U", "HV", 250.0, 10.0)];
    p.transformers = vec![Transformer {
        connection: VectorGroup::parse("Dyn1"),
        ..transformer("T", "HV", "LV", 2000.0, 5.75, 8.0)
    }];
    p.loads = vec![load("SMPS", "LV", LoadType::Electronic, 300.0, 0.95)];
    if let Some(c) = connection {
        p.banks = vec![CapacitorBank {
            connection: Some(c),
            ..bank("C", "LV", 0.48, 375.0, 1, Reactor::None)
        }];
    }
    p
}

#[test]
fn triplen_on_the_wye_side_of_a_delta_wye_transformer_stays_there() {
    // A zero-sequence current injected on the grounded-wye side of a Dyn transformer
    // circulates in the delta: none reaches the HV side (symmetrical components,
    // textbook, from memory). On the LV
    // side the only zero-sequence path is the transformer's own Z0 to the neutral (the
    // loads have none), so by hand V_h = |Z_T0(h)|·I_h with Z_T0 = Z1 (default):
    //   Z_T = 0.0575 · 0.48² / 2.0 = 0.006624 ohm, R = Z/√(1+8²), X = 8R;
    //   I1 = 300 / (√3 · 0.48 · 0.95) A; I3 = 0.80·I1, I9 = 0.17·I1 (built-in spectrum).
    let res = run_check(&electronic_behind_dyn(None), &Default::default()).unwrap();
    let (hv, lv) = (bus_index(&res, "HV"), bus_index(&res, "LV"));
    let v = res.penetration.voltages(0, &[]).unwrap();
    let d = res.penetration.result(0, 0, 1);
    let z = 0.0575 * 0.48 * 0.48 / 2.0;
    let r = z / (1.0f64 + 64.0).sqrt();
    let i1 = 300.0 / (3f64.sqrt() * 0.48 * 0.95);
    let v_ln = 480.0 / 3f64.sqrt();
    for (h, m) in [(3.0, 80.0), (9.0, 17.0), (15.0, 5.0)] {
        let o = order_index(&res, h);
        assert_eq!(v[hv][o], 0.0, "V{h} on the delta side");
        assert_eq!(d.pcc_current_a[o], 0.0, "I{h} at the PCC");
        let z_t0 = Complex64::new(r, h * 8.0 * r).norm();
        assert_close(v[lv][o], z_t0 * i1 * m / 100.0 / v_ln, 1e-9);
    }
    // The 5th (negative sequence) passes to the HV side.
    let o5 = order_index(&res, 5.0);
    assert!(v[hv][o5] > 0.0 && d.pcc_current_a[o5] > 0.0);
}

#[test]
fn a_delta_bank_is_not_resonant_at_a_zero_sequence_order_a_grounded_wye_bank_is() {
    // The 375 kvar bank resonates near the 9th in the positive sequence:
    // S_sc = 100 MVA / (100/250 + 0.0575·100/2) pu = 30.5 MVA, h = √(30.5/0.375) ≈ 9.0.
    // The 9th is zero sequence: a delta bank has no zero-sequence path, so its rows are
    // positive-sequence only and their nearest characteristic orders are 7 and 11 (clear).
    let delta = run_check(
        &electronic_behind_dyn(Some(BankConnection::Delta)),
        &Default::default(),
    )
    .unwrap();
    assert!(delta.zero_scan.is_none());
    let rows: Vec<_> = delta.resonance.rows.iter().collect();
    assert_eq!(rows.len(), 1);
    let row = rows[0];
    assert_eq!(row.sequence, Sequence::Positive);
    let peak = row.peak.expect("a peak").order;
    assert!((peak - 9.0).abs() < 0.3, "positive-sequence peak {peak}");
    assert_eq!(row.nearest_characteristic, Some(11.0));
    assert_eq!(row.verdict, Verdict::Clear);
    // Grounded wye: the zero-sequence network at LV is the transformer's Z0 (X = 8R,
    // |Z| = 0.006624 ohm) in parallel with the bank, resonant at h = √(X_C / X_T0) with
    // X_C = 0.48²/0.375 ohm (hand calculation; R shifts the |Z| peak by far less than the
    // 0.2 % asserted).
    let grounded = run_check(
        &electronic_behind_dyn(Some(BankConnection::WyeGrounded)),
        &Default::default(),
    )
    .unwrap();
    let zero: Vec<_> = grounded
        .resonance
        .rows
        .iter()
        .filter(|r| r.sequence == Sequence::Zero)
        .collect();
    assert_eq!(zero.len(), 1);
    let x_t0 = 0.0575 * 0.48 * 0.48 / 2.0 * 8.0 / 65f64.sqrt();
    let x_c = 0.48 * 0.48 / 0.375;
    let expected = (x_c / x_t0).sqrt();
    assert_close(
        zero[0].peak.expect("zero-sequence peak").order,
        expected,
        2e-3,
    );
    assert_eq!(zero[0].nearest_characteristic, Some(9.0));
    assert_eq!(zero[0].verdict, Verdict::Resonant);
    assert!(overtone::present::words::resonance_verdict(zero[0]).contains("zero seq"));
}

#[test]
fn a_grounded_wye_bank_behind_a_delta_winding_has_no_zero_sequence_result() {
    // Behind a YNd1 transformer the 480 V side has no grounded neutral: its zero-sequence
    // network is the bank's own neutral and nothing else (symmetrical components,
    // textbook, from memory), so the zero sequence has no resonance to screen there and
    // the report says so instead of solving through the conductance that keeps the matrix
    // regular (issue 32, item 3). The positive-sequence row stays as it was.
    let mut p = electronic_behind_dyn(Some(BankConnection::WyeGrounded));
    p.transformers[0].connection = VectorGroup::parse("YNd1");
    let res = run_check(&p, &Default::default()).unwrap();
    assert!(
        res.zero_scan.is_some(),
        "triplens are characteristic and the bank is grounded"
    );
    assert!(
        res.resonance
            .rows
            .iter()
            .all(|r| r.sequence == Sequence::Positive),
        "{:?}",
        res.resonance
            .rows
            .iter()
            .map(|r| r.sequence)
            .collect::<Vec<_>>()
    );
    let note = res
        .notes
        .iter()
        .map(ToString::to_string)
        .find(|n| n.starts_with("no zero-sequence path: C at LV (scenario base)"));
    assert!(note.is_some(), "{:?}", res.notes);
    // With a grounded LV winding (Dyn1) the zero-sequence row is there, as before.
    let grounded = run_check(
        &electronic_behind_dyn(Some(BankConnection::WyeGrounded)),
        &Default::default(),
    )
    .unwrap();
    assert_eq!(
        (grounded.resonance.rows.iter())
            .filter(|r| r.sequence == Sequence::Zero)
            .count(),
        1
    );
    assert!(
        !grounded
            .notes
            .iter()
            .any(|n| n.to_string().starts_with("no zero-sequence path"))
    );
}

/// A 13.8 kV service with a 2 % 5th behind it (angle 30°), a 500 m cable and a 1200 kvar
/// plain wye bank; no loads.
fn background_only(law: Summation) -> Plant {
    let mut p = textbook_plant(60.0);
    p.study.pcc_bus = Some("PCC".into());
    p.study.summation = law;
    p.study.max_demand_current_a = Some(100.0);
    p.buses = vec![bus("PCC", 13.8), bus("B", 13.8)];
    p.sources = vec![source("U", "PCC", 200.0, 10.0)];
    p.cables = vec![Cable {
        c_uf_per_km: 0.0,
        ..cable("K", "PCC", "B", 500.0)
    }];
    p.banks = vec![CapacitorBank {
        connection: Some(BankConnection::Wye),
        ..bank("C", "B", 13.8, 1200.0, 1, Reactor::None)
    }];
    p.background = vec![BackgroundLine {
        source: "U".into(),
        order: 5.0,
        voltage_percent: 2.0,
        angle_deg: Some(30.0),
    }];
    p
}

#[test]
fn background_alone_divides_between_source_and_plant() {
    // By hand, in ohm and ampere at 13.8 kV (input contract, element models):
    //   Z_s(h) = R + j·h·X, |Z1| = 13.8²/200, X/R = 10;
    //   Z_plant(h) = (0.2 + j·h·0.1)·0.5 − j·X_C/h, X_C = 13.8²/1.2;
    //   V_PCC = E·Z_plant / (Z_s + Z_plant), E = 0.02·13800/√3 V (the divider);
    //   the bank's and the supply's current: E / (Z_s + Z_plant).
    // With the bank off the plant draws nothing at the 5th: V_PCC = E.
    for law in [Summation::Arithmetic, Summation::Phasor] {
        let res = run_check(&background_only(law), &Default::default()).unwrap();
        let pcc = bus_index(&res, "PCC");
        let o = order_index(&res, 5.0);
        let h = 5.0;
        let z1 = 13.8f64 * 13.8 / 200.0;
        let rs = z1 / 101f64.sqrt();
        let zs = Complex64::new(rs, h * 10.0 * rs);
        let xc = 13.8 * 13.8 / 1.2;
        let zp = Complex64::new(0.2 * 0.5, h * 0.1 * 0.5) + Complex64::new(0.0, -xc / h);
        let e = 0.02 * 13800.0 / 3f64.sqrt();
        let v_ln = 13800.0 / 3f64.sqrt();
        let on = config_index(&res, &[1]);
        let v_on = res.penetration.voltages(0, &[1]).unwrap();
        assert_close(v_on[pcc][o] * v_ln, (e * zp / (zs + zp)).norm(), 1e-9);
        let d = res.penetration.result(0, on, res.scan.configurations.len());
        let i = (e / (zs + zp)).norm();
        assert_close(d.bank_current_a[0][o], i, 1e-9);
        assert_close(d.pcc_current_a[o], i, 1e-9);
        // All of the bank's harmonic current comes from the background.
        assert_close(d.bank_background_rms_a[0], i, 1e-9);
        let v_off = res.penetration.voltages(0, &[0]).unwrap();
        assert_close(v_off[pcc][o] * v_ln, e, 1e-12);
        // The 5th is a characteristic order of the supply: the resonance screen sees it.
        assert!(res.resonance.characteristic_orders.contains(&5.0));
    }
}

#[test]
fn phasor_sum_of_two_drives_on_one_bus_by_hand() {
    // Two converters at one 480 V bus with different displacement power factors: each
    // injects I_h·e^{j(φ_h + h·θ1)} with θ1 = θ_V − acos(pf) the angle of its fundamental
    // current at the operating point (input contract, version 2), so at the bus
    // V_h = |Z(h)·Σ I_h,k·e^{j(φ_h,k + h·θ1,k)}|. Z(h) by hand: the source R + j·h·X at
    // 480 V (20 MVA, X/R 10) in parallel with a 300 kvar plain bank. θ_V is the load
    // flow's (checked against closed forms in reference_operating).
    let mut p = textbook_plant(60.0);
    p.study.summation = Summation::Phasor;
    p.study.max_demand_current_a = Some(400.0);
    p.buses = vec![bus("B", 0.48)];
    p.sources = vec![source("S", "B", 20.0, 10.0)];
    p.banks = vec![bank("C", "B", 0.48, 300.0, 1, Reactor::None)];
    p.spectra = vec![Spectrum {
        name: "A".into(),
        lines: vec![
            SpectrumLine {
                order: 5.0,
                magnitude_percent: 30.0,
                angle_deg: Some(-40.0),
            },
            SpectrumLine {
                order: 7.0,
                magnitude_percent: 12.0,
                angle_deg: Some(100.0),
            },
        ],
    }];
    for (id, kw, pf) in [("D1", 200.0, 0.95), ("D2", 150.0, 0.80)] {
        let mut d = load(id, "B", LoadType::SixPulseDrive, kw, pf);
        d.spectrum = Some("A".into());
        p.loads.push(d);
    }
    let res = run_check(&p, &Default::default()).unwrap();
    let on = config_index(&res, &[1]);
    let theta_v = res.load_flow.voltages(0, &[1]).unwrap()[0].arg();
    let v = res.penetration.voltages(0, &[1]).unwrap();
    let z1 = 0.48f64 * 0.48 / 20.0;
    let r = z1 / 101f64.sqrt();
    let xc = 0.48 * 0.48 / 0.3;
    let v_ln = 480.0 / 3f64.sqrt();
    for (h, m, phi) in [(5.0, 30.0, -40.0f64), (7.0, 12.0, 100.0)] {
        let z = (Complex64::new(r, h * 10.0 * r).inv() + Complex64::new(0.0, h / xc)).inv();
        let i: Complex64 = [(200.0, 0.95f64), (150.0, 0.80)]
            .iter()
            .map(|&(kw, pf)| {
                let i1 = kw / (3f64.sqrt() * 0.48 * pf);
                let theta1 = theta_v - pf.acos();
                Complex64::from_polar(i1 * m / 100.0, phi.to_radians() + h * theta1)
            })
            .sum();
        let o = order_index(&res, h);
        assert_close(v[0][o] * v_ln, (z * i).norm(), 1e-9);
        let d = res.penetration.result(0, on, res.scan.configurations.len());
        assert_close(
            d.bank_voltage_percent[0][o],
            (z * i).norm() / v_ln * 100.0,
            1e-9,
        );
    }
}

#[test]
fn vector_groups_and_their_zero_sequence_paths() {
    // IEC 60076-1 vector groups: clock × 30° lag of the LV side; the zero-sequence
    // equivalents by winding connection (textbook, from memory).
    let g = VectorGroup::parse("Dyn11").unwrap();
    assert_eq!(g.positive_shift_deg(), -330.0);
    assert_eq!(g.zero_path(), ZeroPath::ShuntLv);
    assert_eq!(
        VectorGroup::parse("YNd1").unwrap().zero_path(),
        ZeroPath::ShuntHv
    );
    assert_eq!(
        VectorGroup::parse("YNyn0").unwrap().zero_path(),
        ZeroPath::Series
    );
    assert_eq!(
        VectorGroup::parse("Yyn0").unwrap().zero_path(),
        ZeroPath::Open
    );
    assert_eq!(
        VectorGroup::parse("Dd0").unwrap().zero_path(),
        ZeroPath::Open
    );
    assert_eq!(
        VectorGroup::parse("Dzn0").unwrap().zero_path(),
        ZeroPath::ShuntLv
    );
    assert_eq!(VectorGroup::parse("dyn1").unwrap().label(), "Dyn1");
    // A delta-wye group needs an odd clock number, a wye-wye or delta-delta an even one.
    assert!(VectorGroup::parse("Dyn0").is_none());
    assert!(VectorGroup::parse("Yy1").is_none());
    assert!(VectorGroup::parse("Dyn13").is_none());
    assert!(VectorGroup::parse("Dx1").is_none());
    // Sequence of a balanced order: 3k+1 positive, 3k−1 negative, 3k zero.
    assert_eq!(Sequence::of(7.0), Sequence::Positive);
    assert_eq!(Sequence::of(5.0), Sequence::Negative);
    assert_eq!(Sequence::of(9.0), Sequence::Zero);
    assert_eq!(Sequence::of(4.5), Sequence::Positive);
}

#[test]
fn transformers_of_different_shift_in_parallel_are_refused() {
    // Parallel transformers must have the same phase shift (common practice): a Dyn1 in
    // parallel with a Dd0 closes a loop with 30° around it.
    let mut p = drive_pair("Dd0", "Dyn1", Summation::Arithmetic);
    p.cables.push(cable("TIE", "LA", "LB", 10.0));
    let err = run_check(&p, &Default::default()).unwrap_err().to_string();
    assert!(
        err.contains("closes a loop whose phase shifts do not agree (30.0°"),
        "{err}"
    );
}
