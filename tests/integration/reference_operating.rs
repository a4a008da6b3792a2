//! The operating point (fundamental load flow) against values from outside the code: the
//! closed-form two-bus solution, a published textbook load-flow example, the rule of thumb
//! for the voltage rise of a capacitor step, and the duty at the solved voltage by hand.

use num_complex::Complex64;
use overtone::jobs::check::CheckResults;
use overtone::model::*;

use crate::common::{assert_close, bank, bus, load, source, textbook_plant};

fn run(p: &Plant) -> CheckResults {
    crate::common::check_only(p)
}

/// A cable of R, X ohm over 1 km (no charging).
fn line(id: &str, from: &str, to: &str, r_ohm: f64, x_ohm: f64) -> Cable {
    Cable {
        id: id.into(),
        from_bus: from.into(),
        to_bus: to.into(),
        length_m: 1000.0,
        r_ohm_per_km: r_ohm,
        x_ohm_per_km: x_ohm,
        c_uf_per_km: 0.0,
        runs: 1,
        r0_ohm_per_km: None,
        x0_ohm_per_km: None,
    }
}

/// A PQ load of `p_mw` + j`q_mvar` as a linear load (its power factor from P and Q).
fn pq(id: &str, at: &str, p_mw: f64, q_mvar: f64) -> Load {
    load(
        id,
        at,
        LoadType::Linear,
        p_mw * 1000.0,
        p_mw / p_mw.hypot(q_mvar),
    )
}

#[test]
fn two_bus_matches_the_closed_form() {
    // Textbook: a constant-power load S = P + jQ fed from an EMF E through Z = R + jX has
    // |V|⁴ + (2(RP + XQ) − E²)|V|² + |Z|²|S|² = 0, whose upper root is the operating point:
    // |V|² = (E² − 2(RP+XQ) + √((E² − 2(RP+XQ))² − 4|Z|²|S|²)) / 2 (all per unit).
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("B", 13.8)];
    let mut s = source("U", "B", 40.0, 6.0);
    s.voltage_pu = 1.03;
    p.sources = vec![s];
    p.loads = vec![load("L", "B", LoadType::Motor, 6000.0, 0.8)];
    let res = run(&p);
    let (e, zpu) = (1.03, 100.0 / 40.0);
    let r = zpu / (1.0f64 + 36.0).sqrt();
    let x = 6.0 * r;
    let (pl, ql) = (0.06, 0.06 * 0.8f64.acos().tan());
    let b = e * e - 2.0 * (r * pl + x * ql);
    let v2 = (b + (b * b - 4.0 * zpu * zpu * (pl * pl + ql * ql)).sqrt()) / 2.0;
    let op = &res.operating.points[0];
    assert_close(op.pcc_v_pu, v2.sqrt(), 1e-9);
    // The supply delivers the load's power into the bus exactly.
    assert_close(op.pcc_p_kw, 6000.0, 1e-9);
    assert_close(op.pcc_q_kvar, 6000.0 * 0.8f64.acos().tan(), 1e-9);
    assert_close(op.pcc_power_factor.expect("load"), 0.8, 1e-9);
}

#[test]
fn textbook_three_bus_example() {
    // Power System Analysis, 2nd edition (McGraw-Hill, 2002), Example 6.7: slack bus 1 at
    // 1.05∠0 pu; PQ loads 256.6 MW + j110.2 Mvar at bus 2 and 138.6 MW + j45.2 Mvar at bus 3;
    // lines z12 = 0.02 + j0.04, z13 = 0.01 + j0.03, z23 = 0.0125 + j0.025 pu on 100 MVA,
    // charging neglected. Published solution: V2 = 0.98 − j0.06, V3 = 1.00 − j0.05 pu,
    // slack power 409.5 MW + j189 Mvar (printed to 4 decimals / 0.1 MW; data from memory,
    // and these voltages reproduce the scheduled loads exactly). The slack bus is a source
    // of 1e8 MVA (z = 1e-6 pu), which shifts the voltages by about 5e-6 pu.
    let mut p = textbook_plant(60.0);
    // 100 kV buses: Z_base = 100 ohm, so a 1 km line of R, X ohm is R/100, X/100 pu.
    p.buses = vec![bus("B1", 100.0), bus("B2", 100.0), bus("B3", 100.0)];
    let mut s = source("SLACK", "B1", 1e8, 10.0);
    s.voltage_pu = 1.05;
    p.sources = vec![s];
    p.cables = vec![
        line("L12", "B1", "B2", 2.0, 4.0),
        line("L13", "B1", "B3", 1.0, 3.0),
        line("L23", "B2", "B3", 1.25, 2.5),
    ];
    p.loads = vec![pq("D2", "B2", 256.6, 110.2), pq("D3", "B3", 138.6, 45.2)];
    let res = run(&p);
    let v = res.load_flow.voltages(0, &[]).expect("solves");
    let (v2, v3) = (Complex64::new(0.98, -0.06), Complex64::new(1.0, -0.05));
    // Angles are referred to the slack bus.
    let rot = Complex64::from_polar(1.0, -v[0].arg());
    assert!(
        (v[1] * rot - v2).norm() < 5e-5,
        "V2 = {} expected {v2}",
        v[1] * rot
    );
    assert!(
        (v[2] * rot - v3).norm() < 5e-5,
        "V3 = {} expected {v3}",
        v[2] * rot
    );
    let op = &res.operating.points[0];
    assert!(
        (op.pcc_p_kw / 1000.0 - 409.5).abs() < 0.05,
        "{}",
        op.pcc_p_kw
    );
    assert!(
        (op.pcc_q_kvar / 1000.0 - 189.0).abs() < 0.05,
        "{}",
        op.pcc_q_kvar
    );
}

/// A stiff 13.8 kV bus with a load and one bank of `steps` × `kvar` at its rated kV.
fn stiff(steps: u32, kvar: f64) -> Plant {
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("B", 13.8)];
    p.sources = vec![source("U", "B", 500.0, 10.0)];
    p.loads = vec![load("L", "B", LoadType::Linear, 4000.0, 0.85)];
    p.banks = vec![bank("C", "B", 13.8, kvar, steps, Reactor::None)];
    p
}

#[test]
fn step_voltage_rise_is_q_over_ssc() {
    // Common practice (rule of thumb): switching Q_step on a bus of short-circuit power
    // S_sc raises its voltage by about Q_step / S_sc: 1,500 kvar on 500 MVA is 0.30 %.
    let res = run(&stiff(2, 1500.0));
    let first = res
        .operating
        .step_changes
        .iter()
        .find(|s| s.step == 1)
        .expect("step 1");
    assert_close(first.change_percent, 1500.0 / 500_000.0 * 100.0, 0.10);
    assert!(!first.exceeds, "0.3 % is within the default 3 %");
    assert_eq!(first.limit_percent, 3.0, "contract default");
}

#[test]
fn power_factor_verdicts_and_kvar_needed() {
    // 4 MW at pf 0.85 draws Q = P·tan(acos 0.85) = 2,479 kvar; reaching 0.95 lagging needs
    // P·(tan φ₀ − tan φ_t) = 4000·(0.6197 − 0.3287) = 1,164 kvar (textbook hand formula,
    // the load flow adds the small source losses). Steps of 600 kvar: 1 step is below the
    // target, 2 reach it, 5 (3,000 kvar) lead.
    let res = run(&stiff(5, 600.0));
    let op = &res.operating;
    let word = |n: usize| overtone::present::words::operating_verdict(&op.points[n]);
    assert_eq!(word(0), "below target");
    assert_eq!(word(1), "below target");
    assert_eq!(word(2), "reaches target");
    assert_eq!(word(5), "LEADING");
    assert!(res.flagged(), "a leading configuration is a finding");
    let need = &op.needs[0];
    let hand = 4000.0 * (0.85f64.acos().tan() - 0.95f64.acos().tan());
    assert_close(need.hand_kvar, hand, 1e-3);
    let kvar = need.rated_kvar_needed.expect("reachable");
    assert_close(kvar, hand, 0.02);
    // At that kvar the PCC sits at the target exactly (within the root tolerance).
    let steps = need.steps_needed.expect("reachable");
    assert!(steps > 1.0 && steps < 2.0, "{steps}");
}

#[test]
fn duty_uses_the_solved_voltage() {
    // Fundamental only (no harmonic loads): the capacitor's rms voltage is the bus voltage
    // through the reactor, U/(1 − p), over its rating (input contract; IEEE 18 duty):
    // V_c / V_rated = |V_bus|·kV_bus / ((1 − p)·kV_rated).
    let mut p = stiff(1, 300.0);
    p.sources[0].voltage_pu = 1.05;
    p.banks[0].reactor = Reactor::Detuning { percent: 7.0 };
    p.banks[0].rated_kv = 14.4;
    let res = run(&p);
    let row = res.duty.iter().find(|r| r.steps == 1).expect("duty row");
    let v = res.operating.points[1].bank_bus_v_pu[0];
    assert!(v > 1.04, "the source at 1.05 pu lifts the bus: {v}");
    // The study point's figures (the envelope's cases govern the row; see
    // reference_capacitors.rs).
    assert_close(row.study_point.rms_voltage, v * 13.8 / (0.93 * 14.4), 1e-9);
    assert!(row.bus_v_pu >= v);
}

#[test]
fn overloaded_feeder_has_no_solution_and_is_said() {
    // 1.2 MW at unity power factor over R = 0.5 ohm at 0.69 kV: the most a constant-power load
    // can draw through R is V²/(4R) = 0.238 MW (textbook maximum power transfer), so the load
    // flow has no solution; the report names scenario and configuration, the other studies
    // still run.
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("A", 0.69), bus("B", 0.69)];
    p.sources = vec![source("U", "A", 50.0, 10.0)];
    p.cables = vec![line("K", "A", "B", 0.5, 0.05)];
    p.loads = vec![load("L", "B", LoadType::Linear, 1200.0, 1.0)];
    let res = run(&p);
    assert!(res.operating.points.is_empty());
    let e = res.operating.collapsed.first().expect("collapse reported");
    assert_eq!(e.scenario, "base");
    assert_eq!(e.configuration, "none");
    assert!(e.to_string().contains("no solution"), "{e}");
    assert!(
        res.notes
            .iter()
            .any(|n| n.to_string().contains("voltage collapse"))
    );
    assert!(res.flagged());
}

#[test]
fn operating_csv_matches_the_study() {
    let res = run(&stiff(2, 1500.0));
    let mut out = Vec::new();
    let t = overtone::jobs::exports::BusTable::new(&res, &Default::default());
    overtone::present::csv::write_operating_csv(&mut out, &res, &t.buses, t.operating(&res))
        .expect("writes");
    let text = String::from_utf8(out).expect("utf-8");
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines[0], "scenario,configuration,bus,v_pu,angle_deg");
    assert_eq!(lines.len(), 1 + 3, "one bus, three configurations");
    let row: Vec<&str> = lines[3].split(',').collect();
    assert_eq!(&row[..3], &["base", "C=2", "B"]);
    let v: f64 = row[3].parse().expect("number");
    assert_close(v, res.operating.points[2].pcc_v_pu, 1e-12);
}

#[test]
fn a_transformer_far_below_its_load_collapses_and_the_verdict_says_why() {
    // 2 MW of linear load behind a 25 kVA transformer: the most a constant-power load can
    // draw through the transformer's 5 % impedance is about S_rated / (2·z) = 250 kVA
    // (textbook maximum power transfer through a reactance), so no configuration has a
    // load-flow solution. The verdict block says so with the scenario and the likely cause
    // (the transformer's load against its rating: 2000/0.85 = 2353 kVA on 25 kVA), and the
    // collapse note comes first among the notes (issue 31).
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("HV", 13.8), bus("LV", 0.48)];
    p.sources = vec![source("U", "HV", 250.0, 10.0)];
    p.transformers = vec![crate::common::transformer("T1", "HV", "LV", 25.0, 5.0, 8.0)];
    p.loads = vec![load("L", "LV", LoadType::Linear, 2000.0, 0.85)];
    let res = run(&p);
    assert!(res.operating.points.is_empty());
    let first = res.notes.first().expect("a note").to_string();
    assert!(
        first.starts_with("load flow: 1 scenario-configuration(s) have no solution"),
        "{first}"
    );
    assert!(
        first.contains(
            "likely cause: transformer T1 feeds 2353 kVA of load on its 25 kVA rating (9412 %)"
        ),
        "{first}"
    );
    let mut out = Vec::new();
    overtone::present::terminal::summary::write_summary(&mut out, &res).expect("writes");
    let text = String::from_utf8(out).expect("utf-8");
    let verdict: String = text
        .lines()
        .skip_while(|l| !l.starts_with("VERDICT"))
        .take_while(|l| !l.is_empty())
        .collect::<Vec<_>>()
        .join(" ");
    assert!(
        verdict.contains("Load flow: NO SOLUTION in 1 scenario-configuration(s) (voltage collapse), scenario(s) base"),
        "{verdict}"
    );
    assert!(
        verdict.contains("transformer T1 feeds 2353 kVA"),
        "{verdict}"
    );
}
