//! Degenerate physics: each case gives a correct result or a clear error naming the
//! element, never a panic, a NaN or an infinity in the results.

use overtone::jobs::check::{CheckError, CheckOptions, run_check};
use overtone::model::*;

use crate::common::*;

fn base() -> Plant {
    let mut p = service(
        ("HV", 13.8),
        ("LV", 0.48),
        (200.0, 10.0),
        (1500.0, 5.75, 6.0),
    );
    p.banks = vec![bank("C", "LV", 0.48, 200.0, 3, Reactor::None)];
    p.loads = vec![load("D", "LV", LoadType::SixPulseDrive, 300.0, 0.95)];
    p
}

/// Every number of the results is finite and every report (summary, JSON, CSVs, review
/// workbook) is free of non-finite numbers and of values without their reason.
fn all_finite(p: &Plant) -> Result<(), CheckError> {
    let res = run_check(
        p,
        &CheckOptions {
            remedies: Some(true),
            ..Default::default()
        },
    )?;
    crate::fuzz_bodies::audit_reports(&res);
    let json = overtone::present::json::to_json(&res);
    assert!(
        !json.contains("NaN") && !json.contains("inf"),
        "non-finite value in the JSON"
    );
    for d in &res.penetration.results {
        assert!(d.thd_percent.iter().all(|v| v.is_finite()));
    }
    for r in &res.resonance.rows {
        assert!(r.hand_order.is_finite() && r.s_sc_mva.is_finite());
        if let Some(pk) = r.peak {
            assert!(pk.order.is_finite() && pk.z_ohm.is_finite() && pk.amplification.is_finite());
        }
    }
    Ok(())
}

#[test]
fn huge_x_over_r_and_tiny_resistance() {
    let mut p = base();
    p.sources[0].x_over_r = 1e9;
    p.transformers[0].x_over_r = 1e9;
    p.banks[0].reactor_q = 1e9;
    all_finite(&p).expect("runs");
    // By hand: with R → 0, |Z_th| at LV = 100/200 + 0.0575·100/1.5 = 4.33333 pu, so
    // S_sc = 23.0769 MVA and h = √(S_sc/Q_c) = 10.7417, 7.5955, 6.2017 for 1, 2, 3 steps
    // of 200 kvar; the network is lossless, so the scanned peak sits at the same order
    // (parallel L-C, textbook).
    let res = run_check(&p, &Default::default()).unwrap();
    for (steps, h) in [(1, 10.7417), (2, 7.5955), (3, 6.2017)] {
        let row = res
            .resonance
            .rows
            .iter()
            .find(|r| r.steps == steps)
            .expect("row");
        assert_close(row.s_sc_mva, 23.0769, 1e-5);
        assert_close(row.hand_order, h, 1e-5);
        assert_close(row.peak.expect("peak").order, h, 1e-3);
    }
}

#[test]
fn tiny_and_huge_ratings() {
    for kvar in [1e-6, 1e9] {
        let mut p = base();
        p.banks[0].step_kvar = kvar;
        all_finite(&p).unwrap_or_else(|e| panic!("{kvar} kvar: {e}"));
    }
}

#[test]
fn bank_on_the_pcc_and_parallel_transformers() {
    let mut p = base();
    p.banks.push(bank(
        "CP",
        "HV",
        13.8,
        600.0,
        2,
        Reactor::Detuning { percent: 7.0 },
    ));
    p.transformers
        .push(transformer("T2", "HV", "LV", 1500.0, 5.75, 6.0));
    all_finite(&p).expect("runs");
}

#[test]
fn a_thousand_steps() {
    let mut p = base();
    p.banks[0].steps = 1000;
    p.banks[0].step_kvar = 1.0;
    p.banks[0].studied_steps = vec![0, 1, 500, 1000];
    all_finite(&p).expect("runs");
}

#[test]
fn no_source_in_a_scenario_and_islands_are_errors_naming_buses() {
    let mut p = base();
    p.sources[0].scenario = Some("max".into());
    p.transformers[0].in_service = false;
    let err = run_check(&p, &Default::default()).unwrap_err().to_string();
    assert!(
        err.contains("scenario \"max\"") && err.contains("\"LV\""),
        "{err}"
    );
}

#[test]
fn lossless_network_resonance_on_a_scan_point() {
    // Source and transformer without resistance (X/R very large) and a plain bank whose
    // resonance falls on a grid point: the result is finite or a clear singular error.
    let mut p = base();
    p.loads.clear();
    p.loads
        .push(load("D", "LV", LoadType::SixPulseDrive, 50.0, 0.95));
    p.sources[0].x_over_r = 1e12;
    p.transformers[0].x_over_r = 1e12;
    match all_finite(&p) {
        Ok(()) => {}
        Err(e) => assert!(e.to_string().contains("singular"), "{e}"),
    }
}

#[test]
fn no_loads_at_all() {
    // No harmonic source and no demand: I_L cannot be estimated; nothing may turn into NaN.
    let mut p = base();
    p.loads.clear();
    all_finite(&p).expect("runs");
    let res = run_check(&p, &Default::default()).unwrap();
    let mut out = Vec::new();
    overtone::present::terminal::summary::write_summary(&mut out, &res).unwrap();
    let text = String::from_utf8(out).unwrap();
    assert!(!text.contains("NaN") && !text.contains("inf "), "{text}");
}

#[test]
fn zero_x_over_r_is_an_error_naming_the_element() {
    // X/R = 0 (a purely resistive source or transformer) is outside the contract (X/R > 0):
    // refused with the element and field named, not studied with a zero reactance.
    let mut p = base();
    p.sources[0].x_over_r = 0.0;
    p.transformers[0].x_over_r = 0.0;
    let err = run_check(&p, &CheckOptions::default())
        .expect_err("refused")
        .to_string();
    assert!(
        err.contains("Sources \"U\", \"X/R\": must be a positive number, found 0")
            && err.contains("Transformers \"T\", \"X/R\": must be a positive number, found 0"),
        "{err}"
    );
}

#[test]
fn meshed_cables_and_no_energized_steps() {
    // Three LV buses in a ring of cables (a mesh), the bank studied only at 0 steps: the
    // study runs, every report is clean, and no bank row is energized.
    let mut p = base();
    p.buses.push(bus("LV2", 0.48));
    p.buses.push(bus("LV3", 0.48));
    p.cables = vec![
        cable("K1", "LV", "LV2", 40.0),
        cable("K2", "LV2", "LV3", 60.0),
        cable("K3", "LV3", "LV", 80.0),
    ];
    p.loads
        .push(load("D2", "LV3", LoadType::SixPulseDrive, 150.0, 0.95));
    all_finite(&p).expect("meshed plant runs");
    p.banks[0].studied_steps = vec![0];
    all_finite(&p).expect("0 steps runs");
    let res = run_check(&p, &CheckOptions::default()).unwrap();
    assert_eq!(res.scan.configurations.len(), 1);
    assert!(res.resonance.rows.is_empty(), "{:?}", res.resonance.rows);
}
