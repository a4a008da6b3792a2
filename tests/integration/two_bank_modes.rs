//! Several banks, several modes: every parallel-resonance peak at a bank's bus screened,
//! against an independent circuit simulator's AC analysis.

use overtone::jobs::check::run_check;
use overtone::model::*;

use crate::common::*;

/// 12.47 kV supply (200 MVA, X/R 10), two 480 V switchboards: SWB1 behind a 1,500 kVA
/// 5.75 % transformer (X/R 7) with an existing plain 300 kvar bank and 400 kW of linear load
/// (pf 0.85); SWB2 behind a 1,000 kVA 5.75 % transformer (X/R 6) with a proposed plain
/// 6 × 100 kvar bank, 300 kW of linear load (pf 0.85) and a 200 kW six-pulse drive
/// (invented).
pub fn two_switchboards() -> Plant {
    let mut p = textbook_plant(60.0);
    p.study.max_demand_current_a = Some(100.0);
    p.buses = vec![bus("MAIN", 12.47), bus("SWB1", 0.48), bus("SWB2", 0.48)];
    p.sources = vec![source("U", "MAIN", 60.0, 10.0)];
    p.transformers = vec![
        transformer("T1", "MAIN", "SWB1", 1500.0, 5.75, 7.0),
        transformer("T2", "MAIN", "SWB2", 1000.0, 5.75, 6.0),
    ];
    p.banks = vec![
        bank("CAP-EX", "SWB1", 0.48, 200.0, 1, Reactor::None),
        bank("CAP-A", "SWB2", 0.48, 100.0, 6, Reactor::None),
    ];
    p.loads = vec![
        load("L1", "SWB1", LoadType::Linear, 100.0, 0.85),
        load("L2", "SWB2", LoadType::Linear, 50.0, 0.85),
        load("VFD", "SWB2", LoadType::SixPulseDrive, 200.0, 0.95),
    ];
    p
}

/// The plant's per-phase circuit in ohm, henry and farad referred to 480 V (the
/// transformers' ratio is that of their buses): source and transformers as R-L split by
/// their X/R, banks as C from X_C = kV²/Mvar, linear loads as R = kV²/P parallel with
/// L from X = kV²/Q, a 1 A AC current injected at `at`; ngspice's AC analysis over orders
/// `from`..`to` in steps of 0.0005.
fn netlist(p: &Plant, steps: &[u32], at: &str, from: f64, to: f64, out: &str) -> String {
    let w1 = 2.0 * std::f64::consts::PI * 60.0;
    let kv: f64 = 0.48;
    let split = |z: f64, xr: f64| {
        let r = z / (1.0 + xr * xr).sqrt();
        (r, r * xr)
    };
    let mut n = String::from("two switchboards\n");
    let (rs, xs) = split(kv * kv / 60.0, 10.0);
    n += &format!("RU main u {rs:e}\nLU u 0 {:e}\n", xs / w1);
    for t in &p.transformers {
        let (r, x) = split(
            t.impedance_percent / 100.0 * kv * kv / (t.kva / 1000.0),
            t.x_over_r,
        );
        let to = t.lv_bus.to_lowercase().replace('-', "");
        n += &format!("R{0} main m{0} {r:e}\nL{0} m{0} {to} {1:e}\n", t.id, x / w1);
    }
    for (b, &k) in p.banks.iter().zip(steps) {
        if k > 0 {
            let xc = kv * kv / (b.step_kvar * f64::from(k) / 1000.0);
            let node = b.bus.to_lowercase();
            n += &format!(
                "C{} {node} 0 {:e}\n",
                b.id.replace('-', ""),
                1.0 / (w1 * xc)
            );
        }
    }
    for l in p.loads.iter().filter(|l| l.kind == LoadType::Linear) {
        let p_mw = l.kw / 1000.0;
        let q = p_mw * l.power_factor.acos().tan();
        let node = l.bus.to_lowercase();
        n += &format!(
            "R{0} {node} 0 {1:e}\nL{0} {node} 0 {2:e}\n",
            l.id,
            kv * kv / p_mw,
            kv * kv / q / w1
        );
    }
    let points = ((to - from) / 0.0005).round() as usize + 1;
    n += &format!(
        "I1 0 {} DC 0 AC 1\n.control\nset wr_singlescale\nset wr_vecnames\noption numdgt=15\nac lin {points} {:e} {:e}\nwrdata {out} vm({})\n.endc\n.end\n",
        at.to_lowercase(),
        from * 60.0,
        to * 60.0,
        at.to_lowercase()
    );
    n
}

/// The local maxima of ngspice's |Z| curve at `at`: (order, ohm).
fn simulator_peaks(p: &Plant, steps: &[u32], at: &str) -> Vec<(f64, f64)> {
    let dir = std::env::temp_dir().join(format!("overtone-modes-{}-{at}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let out = dir.join("z.txt");
    let cir = dir.join("z.cir");
    std::fs::write(
        &cir,
        netlist(p, steps, at, 4.0, 14.0, out.to_str().unwrap()),
    )
    .unwrap();
    let run = std::process::Command::new("ngspice")
        .arg("-b")
        .arg(&cir)
        .output()
        .expect("ngspice runs");
    let curve: Vec<(f64, f64)> = std::fs::read_to_string(&out)
        .unwrap_or_else(|e| panic!("{e}: {}", String::from_utf8_lossy(&run.stderr)))
        .lines()
        .skip(1)
        .filter_map(|l| {
            let f: Vec<f64> = l
                .split_whitespace()
                .filter_map(|x| x.parse().ok())
                .collect();
            (f.len() >= 2).then(|| (f[0] / 60.0, f[1]))
        })
        .collect();
    (1..curve.len() - 1)
        .filter(|&i| curve[i].1 > curve[i - 1].1 && curve[i].1 >= curve[i + 1].1)
        .map(|i| curve[i])
        .collect()
}

#[test]
fn the_second_mode_on_the_11th_is_screened_and_matches_the_circuit_simulator() {
    // With CAP-EX = 1 and CAP-A = 2 steps, SWB2 sees two parallel-resonance modes: one near
    // h 7.8 (the one the hand check √(S_sc/Q_c) = 8.21 of CAP-A explains, 11 % above the 7th:
    // clear) and one near h 10.65, 3 % below the 11th: the bank is RESONANT by that second
    // peak. Reference: ngspice 39's AC analysis of the same circuit (a program from outside
    // the project), its peaks on a 0.0005-order grid.
    if !external_tool(
        "ngspice",
        "the two-bank modes against the circuit simulator",
    ) {
        return;
    }
    let p = two_switchboards();
    let res = run_check(&p, &Default::default()).expect("runs");
    for (bank, bus) in [("CAP-A", "SWB2"), ("CAP-EX", "SWB1")] {
        let row = (res.resonance.rows.iter())
            .find(|r| r.configuration == "CAP-EX=1 CAP-A=2" && r.bank == bank)
            .expect("row");
        let spice = simulator_peaks(&p, &[1, 2], bus);
        assert_eq!(row.peaks.len(), 2, "{bank}: {:?}", row.peaks);
        assert_eq!(spice.len(), 2, "{bus}: {spice:?}");
        for (ours, theirs) in row.peaks.iter().zip(&spice) {
            assert!(
                (ours.peak.order - theirs.0).abs() <= 0.001,
                "{bank}: h {} vs {}",
                ours.peak.order,
                theirs.0
            );
            assert!(
                (ours.peak.z_ohm - theirs.1).abs() <= 1e-4 * theirs.1,
                "{bank}: |Z| {} vs {}",
                ours.peak.z_ohm,
                theirs.1
            );
        }
        // The verdict is the second peak's, near the 11th; the first is clear.
        assert_eq!(row.verdict, overtone::study::Verdict::Resonant, "{bank}");
        assert!(!row.peaks[0].resonant && row.peaks[1].resonant, "{bank}");
        assert_eq!(row.nearest_characteristic, Some(11.0), "{bank}");
        assert_close(row.peak.unwrap().order, row.peaks[1].peak.order, 1e-15);
    }
    // The hand check of CAP-A explains the lower mode, and stays beside it.
    let row = (res.resonance.rows.iter())
        .find(|r| r.configuration == "CAP-EX=1 CAP-A=2" && r.bank == "CAP-A")
        .expect("row");
    assert_close(row.hand_peak_order.unwrap(), row.peaks[0].peak.order, 1e-15);
}

#[test]
fn a_shoulder_is_not_a_resonance() {
    // Near one mode Z = R / (1 + jQ(h/h0 - h0/h)) (circuit theory): the angle is 0 at the
    // mode and ±45° at the half-power orders. A maximum whose angle stays at 52° with no
    // sign change of the reactance (an inductive shoulder between two modes, x1.35) is not a
    // parallel resonance; a lossless peak (+90° to -90° across it) is.
    use overtone::study::Extremum;
    use overtone::study::resonance::is_parallel_resonance;
    let peak = |amplification: f64, angle_deg: f64, phase_crosses_zero: bool| Extremum {
        order: 8.4,
        z_ohm: 0.1,
        angle_deg,
        amplification,
        sharpness: None,
        phase_crosses_zero,
    };
    assert!(!is_parallel_resonance(&peak(1.35, 52.0, false)));
    assert!(is_parallel_resonance(&peak(5.0, -3.0, true)));
    assert!(is_parallel_resonance(&peak(5.0, 44.0, false)));
    assert!(is_parallel_resonance(&peak(40.0, 89.9, true)));
    // The banks must raise |Z|: a maximum already there without them is not theirs.
    assert!(!is_parallel_resonance(&peak(0.98, 0.0, true)));
}

#[test]
fn every_row_names_its_worst_peak() {
    // Consistency on the two-switchboard plant: each row's verdict is RESONANT exactly when
    // one of its screened peaks is, and its named peak is the worst by the stated rule.
    let res = run_check(&two_switchboards(), &Default::default()).expect("runs");
    let mut multi = 0;
    for r in &res.resonance.rows {
        let any = r.peaks.iter().any(|p| p.resonant);
        assert_eq!(
            r.verdict == overtone::study::Verdict::Resonant,
            any,
            "{r:?}"
        );
        let worst = overtone::study::resonance::worst_peak(&r.peaks);
        assert_eq!(r.peak, worst.map(|w| w.peak));
        if r.peaks.len() > 1 {
            multi += 1;
        }
        // Resonance mode analysis at every flagged row: the row's own bank takes part,
        // and the banks' shares are parts of the bus participation (which sums to 1).
        if let Some(m) = &r.mode {
            assert!(m.converged, "{r:?}");
            let total: f64 = m.banks.iter().map(|b| b.1).sum();
            assert!(total <= 1.0 + 1e-12 && total > 0.0, "{total}");
            assert!(m.banks.iter().any(|b| b.0 == r.bank && b.1 > 0.0));
        } else {
            assert_ne!(r.verdict, overtone::study::Verdict::Resonant);
        }
    }
    assert!(multi >= 8, "{multi} rows with two modes");
}

/// A 400 V bus behind an 11 kV / 400 V 1,000 kVA 6 % Dyn11 transformer (X/R 8; source
/// 250 MVA, X/R 10, 50 Hz) with 300 kW of line-to-line welders (custom spectrum: 3rd at
/// 20 %, pf 0.7) and a plain delta bank of 6 × 250 kvar (invented).
fn welders(wiring: Option<Wiring>) -> Plant {
    let mut p = textbook_plant(50.0);
    p.study.max_demand_current_a = Some(60.0);
    p.buses = vec![bus("HV", 11.0), bus("LV", 0.4)];
    p.sources = vec![source("U", "HV", 250.0, 10.0)];
    p.transformers = vec![Transformer {
        connection: Some(VectorGroup {
            hv: Winding::Delta,
            lv: Winding::WyeGrounded,
            clock: 11,
        }),
        ..transformer("T", "HV", "LV", 1000.0, 6.0, 8.0)
    }];
    p.banks = vec![CapacitorBank {
        connection: Some(BankConnection::Delta),
        ..bank("C", "LV", 0.4, 250.0, 6, Reactor::None)
    }];
    p.spectra = vec![spectrum("WELD", &[(3.0, 20.0)])];
    let mut w = load("W", "LV", LoadType::Custom, 300.0, 0.7);
    w.spectrum = Some("WELD".into());
    w.wiring = wiring;
    p.loads = vec![w];
    p
}

/// The welders' supply in ohm at 400 V: the source's and the transformer's (R, X), each
/// split by its X/R (input contract, Sources and Transformers).
fn welders_supply_ohm() -> ((f64, f64), (f64, f64)) {
    let split = |z: f64, xr: f64| {
        let r = z / (1.0 + xr * xr).sqrt();
        (r, r * xr)
    };
    (
        split(0.4 * 0.4 / 250.0, 10.0),
        split(0.06 * 0.4 * 0.4 / 1.0, 8.0),
    )
}

/// The index of order `h` among the injected orders.
fn order_of(res: &overtone::jobs::check::CheckResults, h: f64) -> usize {
    (res.penetration.injections.orders.iter())
        .position(|&o| o == h)
        .expect("injected")
}

#[test]
fn a_three_wire_third_flows_in_the_positive_sequence_network() {
    // Line-to-line loads have no neutral: their 3rd flows as positive/negative sequence,
    // whose passive impedances are equal (symmetrical components, textbook), so the 3rd
    // at the 400 V bus is a dense solve of the positive-sequence network: one bus, the
    // supply Z(h) = (R_s + R_T) + j·h·(X_s + X_T) in parallel with the bank −j·X_C/h, ohm at
    // 400 V; I₃ = 0.2·P/(√3·0.4·pf) A; V₃ % = I₃·|Z(3)|/(400/√3)·100.
    let ((rs, xs), (rt, xt)) = welders_supply_ohm();
    let i3 = 0.2 * 300.0 / (3f64.sqrt() * 0.4 * 0.7);
    for wiring in [None, Some(Wiring::ThreeWire)] {
        let p = welders(wiring);
        let res = run_check(&p, &Default::default()).expect("runs");
        let o = order_of(&res, 3.0);
        assert_eq!(res.penetration.injections.sequences[o], Sequence::Positive);
        for steps in [0u32, 3, 6] {
            let xc = 0.4 * 0.4 / (0.25 * f64::from(steps));
            let zsys = num_complex::Complex64::new(rs + rt, 3.0 * (xs + xt));
            let y = zsys.inv()
                + num_complex::Complex64::new(0.0, if steps > 0 { 3.0 / xc } else { 0.0 });
            let expected = i3 * y.inv().norm() / (400.0 / 3f64.sqrt()) * 100.0;
            let v = res.penetration.voltages(0, &[steps]).expect("solvable");
            assert_close(v[1][o] * 100.0, expected, 1e-9);
            let c = (0..res.scan.configurations.len())
                .find(|&c| res.scan.configurations[c].steps == [steps])
                .unwrap();
            let d = res.penetration.result(0, c, res.scan.configurations.len());
            assert_close(d.bank_voltage_percent[0][o], expected, 1e-9);
        }
        // The delta bank is screened against the 3rd in the positive-sequence scan: with 6
        // steps its peak sits near h 3 (hand check: S_sc = 0.4²/(0.4²/250 + 0.06·0.4²) =
        // 15.6 MVA, √(15.6/1.5) = 3.23, within 10 % of the 3rd).
        assert!(res.resonance.positive_orders.contains(&3.0));
        let row = (res.resonance.rows.iter())
            .find(|r| r.configuration == "C=6")
            .expect("row");
        assert_eq!(row.nearest_characteristic, Some(3.0));
        assert_eq!(row.verdict, overtone::study::Verdict::Resonant);
    }
    // As a 4-wire load its 3rd stays zero sequence: the delta bank has no zero-sequence
    // path, so the 3rd sees the transformer's grounded-wye winding alone and the bank is
    // not screened against it.
    let res = run_check(&welders(Some(Wiring::FourWire)), &Default::default()).expect("runs");
    let o = order_of(&res, 3.0);
    assert_eq!(res.penetration.injections.sequences[o], Sequence::Zero);
    assert!(!res.resonance.positive_orders.contains(&3.0));
}

#[test]
fn a_third_from_both_wirings_adds_its_sequence_parts() {
    // The welders (3-wire) beside 40 kW of single-phase electronic load (4-wire, 3rd at 80 %,
    // pf 0.9) on the same bus: the 3rd is zero sequence for the electronic load, which sees
    // the transformer's grounded-wye winding alone (Z_T0 = Z_T, the delta bank has no
    // zero-sequence path), and positive sequence for the welders, which see the supply in
    // parallel with the bank (dense solves above). Phase a carries the sum of the sequence
    // components; under arithmetic summation their magnitudes add (an upper bound). The
    // bank carries the positive-sequence part only.
    let mut p = welders(None);
    p.spectra.push(spectrum("ELEC", &[(3.0, 80.0)]));
    let mut e = load("E", "LV", LoadType::Electronic, 40.0, 0.9);
    e.spectrum = Some("ELEC".into());
    p.loads.push(e);
    let res = run_check(&p, &Default::default()).expect("runs");
    let o = order_of(&res, 3.0);
    assert_eq!(res.penetration.injections.sequences[o], Sequence::Zero);
    let ((rs, xs), (rt, xt)) = welders_supply_ohm();
    let v_base = 400.0 / 3f64.sqrt();
    let i_weld = 0.2 * 300.0 / (3f64.sqrt() * 0.4 * 0.7);
    let i_elec = 0.8 * 40.0 / (3f64.sqrt() * 0.4 * 0.9);
    let z0 = num_complex::Complex64::new(rt, 3.0 * xt).norm();
    let steps = 3u32;
    let xc = 0.4 * 0.4 / (0.25 * f64::from(steps));
    let zsys = num_complex::Complex64::new(rs + rt, 3.0 * (xs + xt));
    let z1 = (zsys.inv() + num_complex::Complex64::new(0.0, 3.0 / xc))
        .inv()
        .norm();
    let v1 = i_weld * z1 / v_base * 100.0;
    let v0 = i_elec * z0 / v_base * 100.0;
    let v = res.penetration.voltages(0, &[steps]).expect("solvable");
    assert_close(v[1][o] * 100.0, v1 + v0, 1e-9);
    let c = (0..res.scan.configurations.len())
        .find(|&c| res.scan.configurations[c].steps == [steps])
        .unwrap();
    let d = res.penetration.result(0, c, res.scan.configurations.len());
    assert_close(d.bank_voltage_percent[0][o], v1 + v0, 1e-9);
    // Bank current: V₁ across X_C/3, A.
    assert_close(d.bank_current_a[0][o], v1 / 100.0 * v_base * 3.0 / xc, 1e-9);
}

#[test]
fn the_connection_column_round_trips_through_the_workbook() {
    // Input contract: Loads `Connection`, written by the template and read back; a blank
    // cell is the type's default (3-wire for a custom load, 4-wire for electronic), noted.
    let mut p = welders(Some(Wiring::FourWire));
    p.loads
        .push(load("E", "LV", LoadType::Electronic, 10.0, 0.9));
    let bytes = overtone::io::template::plant_workbook(&p).expect("workbook");
    let read =
        overtone::io::workbook_in::read_workbook_bytes("p", "p.xlsx", &bytes).expect("reads");
    assert_eq!(read.plant.loads[0].wiring, Some(Wiring::FourWire));
    assert_eq!(read.plant.loads[1].wiring, None);
    assert_eq!(read.plant.loads[1].wiring(), Wiring::FourWire);
    assert!(
        read.warnings
            .iter()
            .any(|w| w.to_string().contains("Connection")),
        "{:?}",
        read.warnings
    );
}

#[test]
fn modal_participation_of_a_two_bus_two_bank_network_by_hand() {
    // Two 480 V buses: A fed by a 10 MVA source (X/R 10), a 100 m cable (0.1 + j0.08 ohm/km,
    // no charging) to B; a plain 300 kvar bank at A and 100 kvar at B (invented). By hand,
    // per unit on 100 MVA: y_s = 1/(z_s·(1/√101)(1 + j10)·1), z_s = 100/10;
    // y_l = 1/((0.1 + j·h·0.08)·0.1/Z_b), Z_b = 0.48²/100; y_A = j·h·0.003, y_B = j·h·0.001;
    // Y = [[y_s + y_l + y_A, −y_l], [−y_l, y_l + y_B]]. A 2 × 2 symmetric matrix has the
    // eigenvalues λ = (a + d)/2 ± √(((a − d)/2)² + b²) and the eigenvector (b, λ − a)
    // (the quadratic formula); the critical one is the smaller |λ|; participation
    // |T_k|²/Σ|T|² (Xu et al., IEEE Trans. Power Delivery 20(2), 2005, in magnitude).
    use num_complex::Complex64 as C64;
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus("A", 0.48), bus("B", 0.48)];
    p.sources = vec![source("U", "A", 10.0, 10.0)];
    p.cables = vec![Cable {
        r_ohm_per_km: 0.1,
        x_ohm_per_km: 0.08,
        c_uf_per_km: 0.0,
        ..cable("K", "A", "B", 100.0)
    }];
    p.banks = vec![
        bank("CA", "A", 0.48, 300.0, 1, Reactor::None),
        bank("CB", "B", 0.48, 100.0, 1, Reactor::None),
    ];
    let net = overtone::network::Network::build(&p).expect("network");
    let engine = overtone::solve::Engine::new(&net, &[0, 1]);
    let zb = 0.48 * 0.48 / 100.0;
    for h in [5.0, 9.7, 23.0] {
        let zs = 10.0 / 101f64.sqrt() * C64::new(1.0, 10.0 * h);
        let yl = (C64::new(0.1, h * 0.08) * 0.1 / zb).inv();
        let (ya, yb) = (C64::new(0.0, h * 0.003), C64::new(0.0, h * 0.001));
        let (a, b, d) = (zs.inv() + yl + ya, -yl, yl + yb);
        let root = (((a - d) / 2.0).powi(2) + b * b).sqrt();
        let (l1, l2) = ((a + d) / 2.0 + root, (a + d) / 2.0 - root);
        let lc = if l1.norm() < l2.norm() { l1 } else { l2 };
        let t = [b, lc - a];
        let total = t[0].norm_sqr() + t[1].norm_sqr();
        let pf = [t[0].norm_sqr() / total, t[1].norm_sqr() / total];
        let mode = overtone::study::modal::critical_mode(&engine, h, 0, &[1, 1]).expect("mode");
        assert!(mode.converged, "h {h}");
        assert_close(mode.eigenvalue_pu.re, lc.re, 1e-8);
        assert_close(mode.eigenvalue_pu.im, lc.im, 1e-8);
        assert_close(mode.modal_impedance_pu, 1.0 / lc.norm(), 1e-8);
        let share = |id: &str| mode.banks.iter().find(|x| x.0 == id).map_or(0.0, |x| x.1);
        // One bank per bus: each bank's share is its bus's participation.
        assert_close(share("CA"), pf[0], 1e-8);
        assert_close(share("CB"), pf[1], 1e-8);
    }
}

#[test]
fn the_banks_forming_a_mode_are_remedied_together() {
    // Consistency: on the two-switchboard plant the flagged modes are formed by CAP-EX and
    // CAP-A together; the whole-plant options change both (or put one filter in place of
    // the bank with the largest share), each is re-run over every configuration, and an
    // option that makes the plant's worst THD or TDD worse never ranks above one that
    // does not. The first option's outcome is that of the changed plant checked afresh.
    let p = two_switchboards();
    let options = overtone::jobs::check::CheckOptions {
        remedies: Some(true),
        ..Default::default()
    };
    let res = run_check(&p, &options).expect("runs");
    let pr = res
        .plant_remedies
        .iter()
        .find(|r| r.banks == ["CAP-EX", "CAP-A"])
        .expect("the two banks form a mode together");
    assert!(pr.results.len() >= 3, "{:?}", pr.results.len());
    let first_worse = pr.results.iter().position(|r| r.worsens);
    if let Some(k) = first_worse {
        assert!(pr.results[k..].iter().all(|r| r.worsens));
    }
    let best = &pr.results[0];
    let mut changed = p.clone();
    for (id, o) in &best.option.banks {
        let b = changed.banks.iter().position(|x| &x.id == id).unwrap();
        changed.banks[b] = overtone::study::remedy::apply(&changed.banks[b], o);
    }
    let after = run_check(&changed, &Default::default()).expect("runs");
    let resonant = (after.resonance.rows.iter())
        .filter(|r| r.verdict == overtone::study::Verdict::Resonant)
        .count();
    assert_eq!(best.after.resonant, resonant);
    assert!(best.before.resonant > 0);
    // Detuning both banks clears every mode of this plant.
    assert!(best.passes, "{:?}", best.option.name);
    assert_eq!(best.after.resonant, 0);
}
