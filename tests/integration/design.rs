//! `overtone design`: the plans it finds against textbook and published power-factor
//! sizing, a plant whose plain plans all resonate near the 5th, the written plant checked
//! again, and bad design input.

use overtone::io::template::plant_workbook;
use overtone::io::workbook_in::read_workbook_bytes;
use overtone::jobs::check::{CheckOptions, run_check};
use overtone::jobs::design::{DesignOptions, DesignResult, run_design};
use overtone::model::*;

use crate::common::{bus, load, service, source};

fn row(
    bus: &str,
    sizes: &[f64],
    steps: (u32, u32),
    reactors: &[Reactor],
    rated: &[f64],
) -> DesignRow {
    DesignRow {
        bus: bus.into(),
        step_kvar: sizes.to_vec(),
        steps_min: steps.0,
        steps_max: steps.1,
        reactors: reactors.to_vec(),
        rated_kv: rated.to_vec(),
        capacitor_cost_per_kvar: Vec::new(),
        reactor_cost_per_kvar: None,
        step_cost: None,
        leading_pf_limit: None,
        replaces: Vec::new(),
        cells: DesignCells {
            bus: "A2".into(),
            step_kvar: "B2".into(),
            steps: "C2".into(),
            ..Default::default()
        },
    }
}

/// One level at the Loads sheet's own load factors.
fn full_only() -> Vec<LoadLevelRow> {
    vec![LoadLevelRow {
        level: "full".into(),
        hours: Some(8760.0),
        load: None,
        load_factor: 1.0,
        cell: CellAt::default(),
        hours_cell: CellAt::default(),
        factor_cell: CellAt::default(),
    }]
}

/// A 480 V bus fed straight from a stiff source (10,000 MVA, so the bus stays at 1.0 pu
/// and the PCC's reactive power is the loads' less the bank's), with one linear load of
/// `kw` at `pf`.
fn stiff_bus(kw: f64, pf: f64) -> Plant {
    let mut p = Plant::new(60.0);
    p.buses = vec![bus("B", 0.48)];
    p.sources = vec![source("U", "B", 10_000.0, 10.0)];
    p.loads = vec![load("L", "B", LoadType::Linear, kw, pf)];
    p.load_levels = full_only();
    p
}

fn design(p: &Plant) -> DesignResult {
    run_design(p, &DesignOptions::default()).expect("design runs")
}

fn recommended(d: &DesignResult) -> &overtone::jobs::design::PlanResult {
    &d.plans[d.recommended.expect("a plan passes")]
}

#[test]
fn design_total_reaches_the_textbook_kvar_within_one_step() {
    // Q = P(tan φ1 − tan φ2) (textbook; IEEE Std 141-1993, chapter 8, power-factor
    // correction, from memory): 800 kW from 0.80 to 0.95 needs 800 × (0.75 − 0.328684) =
    // 337.05 kvar. With 10 kvar plain steps the design's total must be the first multiple
    // of 10 at or above it: 34 steps.
    let mut p = stiff_bus(800.0, 0.80);
    p.design = vec![row("B", &[10.0], (1, 64), &[Reactor::None], &[0.48])];
    let d = design(&p);
    let r = recommended(&d);
    let textbook = 800.0 * ((0.8f64.acos()).tan() - (0.95f64.acos()).tan());
    assert!((textbook - 337.05).abs() < 0.01, "{textbook}");
    assert_eq!(r.plan.steps, 34, "{:?}", r.plan);
    assert!(r.effective_kvar >= textbook && r.effective_kvar - 10.0 < textbook);
    let pf = r.control[0][0].pf.expect("pf");
    assert!((0.95..0.96).contains(&pf), "{pf}");
}

#[test]
fn design_matches_the_published_multiplier_for_0_70_to_0_90() {
    // Kvar multiplier table for power-factor correction (IEEE Std 141-1993, chapter 8;
    // value from memory): from 0.70 to 0.90 the multiplier is 0.536 kvar per kW. A 500 kW
    // load needs 0.536 × 500 = 268 kvar; in 25 kvar steps the design buys 11 (275 kvar).
    let mut p = stiff_bus(500.0, 0.70);
    p.study.target_power_factor = 0.90;
    p.design = vec![row("B", &[25.0], (1, 20), &[Reactor::None], &[0.48])];
    let d = design(&p);
    let r = recommended(&d);
    let exact = 500.0 * ((0.7f64.acos()).tan() - (0.9f64.acos()).tan());
    assert!(
        (exact / 500.0 - 0.536).abs() < 0.0005,
        "multiplier {}",
        exact / 500.0
    );
    assert_eq!(r.plan.steps, 11, "{:?}", r.plan);
    assert!((r.effective_kvar - 275.0).abs() < 1e-9);
}

/// A 480 V plant behind 2.5 MVA, 8 % on a 100 MVA service (about 24 MVA at the bus), with
/// motors, linear load and 6-pulse drives that need about 1 Mvar to reach 0.95: any plain
/// bank of that size resonates near the 5th (h = √(24/1.0) ≈ 4.9 by hand).
fn fifth_plant() -> Plant {
    let mut p = service(
        ("HV", 13.8),
        ("LV", 0.48),
        (100.0, 10.0),
        (2500.0, 8.0, 8.0),
    );
    p.loads = vec![
        load("M", "LV", LoadType::Motor, 800.0, 0.80),
        load("R", "LV", LoadType::Linear, 1000.0, 0.75),
        load("D", "LV", LoadType::SixPulseDrive, 400.0, 0.95),
    ];
    p.study.title = "fifth".into();
    p.study.max_demand_current_a = Some(100.0);
    p.load_levels = full_only();
    p.design = vec![row(
        "LV",
        &[250.0],
        (1, 8),
        &[
            Reactor::None,
            Reactor::Detuning { percent: 7.0 },
            Reactor::Detuning { percent: 14.0 },
        ],
        &[],
    )];
    p
}

#[test]
fn every_plain_plan_resonating_near_the_5th_gives_a_detuned_plan_tuned_below_it() {
    let p = fifth_plant();
    let d = design(&p);
    let plain: Vec<_> = d
        .plans
        .iter()
        .filter(|r| r.plan.reactor == Reactor::None)
        .collect();
    assert_eq!(plain.len(), 2, "two voltage classes of the plain step");
    for r in &plain {
        assert!(
            r.fails.iter().any(|f| f.starts_with("resonant near h 5")),
            "{:?} {:?}",
            r.plan,
            r.fails
        );
    }
    let r = recommended(&d);
    let p_det = r.plan.reactor.p();
    assert!(p_det > 0.0, "{:?}", r.plan);
    // The tuned order 1/√p must sit below the 5th by the study's margin (common practice:
    // detuning keeps the parallel resonance below the lowest characteristic order).
    let tuned = 1.0 / p_det.sqrt();
    let margin = p.study.resonance_margin_percent / 100.0;
    assert!(tuned <= 5.0 * (1.0 - margin), "tuned at {tuned}");
    let (_, high) = r.resonance.expect("a peak");
    assert!(high < 5.0 * (1.0 - margin), "resonance up to {high}");
}

#[test]
fn check_on_the_written_plant_reproduces_the_design_verdicts() {
    for p in [crate::cases::food_plant(), fifth_plant()] {
        let d = design(&p);
        let i = d.recommended.expect("a plan");
        let bytes = plant_workbook(&d.plant_with(i)).expect("writes");
        let read = read_workbook_bytes("designed.xlsx", "designed", &bytes).expect("reads");
        assert_eq!(
            read.plant,
            crate::cases::explicit(d.plant_with(i)),
            "the written plant reads back the same"
        );
        let options = CheckOptions {
            remedies: Some(false),
            switching: false,
            ..Default::default()
        };
        let res = run_check(&read.plant, &options).expect("check runs");
        let plan = &d.plans[i];
        let labels = res.energized_labels(res.plant.banks.len() - 1);
        assert_eq!(
            overtone::jobs::remedies::outcome(&res, &plan.bank.id, &labels),
            plan.outcome
        );
        let step = res
            .operating
            .step_changes
            .iter()
            .filter(|s| s.bank == plan.bank.id)
            .map(|s| s.change_percent)
            .fold(0.0, f64::max);
        assert_eq!(step, plan.step_change_percent);
        assert!(
            !res.resonance
                .rows
                .iter()
                .any(|r| r.bank == plan.bank.id && r.verdict == overtone::study::Verdict::Resonant)
        );
    }
}

#[test]
fn the_recommended_plan_is_the_cheapest_passing_and_the_pareto_set_is_undominated() {
    let d = design(&crate::cases::food_plant());
    let passing: Vec<_> = d.plans.iter().filter(|p| p.passes()).collect();
    assert!(passing.len() > 3);
    let r = recommended(&d);
    assert!(passing.iter().all(|p| p.cost >= r.cost));
    let m = |p: &overtone::jobs::design::PlanResult| p.outcome.margin_percent.unwrap_or(100.0);
    let f = |p: &overtone::jobs::design::PlanResult| p.pf_weighted.unwrap_or(0.0);
    for a in &passing {
        let dominated = passing.iter().any(|b| {
            b.cost <= a.cost
                && m(b) >= m(a)
                && f(b) >= f(a)
                && (b.cost < a.cost || m(b) > m(a) || f(b) > f(a))
        });
        assert_eq!(a.pareto, !dominated, "{:?}", a.plan);
    }
    // The proposal on the Capacitors sheet (4 × 225 kvar plain) is not what the design
    // recommends: its 4th step resonates near the 5th.
    assert!(!(r.plan.steps == 4 && r.plan.step_kvar == 225.0 && r.plan.reactor == Reactor::None));
}

#[test]
fn design_input_errors_name_the_sheet_and_cell() {
    let mut p = stiff_bus(800.0, 0.8);
    p.design = vec![row("NOPE", &[10.0], (1, 8), &[Reactor::None], &[])];
    let e = run_design(&p, &DesignOptions::default()).expect_err("unknown bus");
    assert!(
        e.to_string()
            .starts_with("Design!A2: \"Bus\" names \"NOPE\""),
        "{e}"
    );
    p.design = vec![row("B", &[], (1, 8), &[Reactor::None], &[])];
    let e = run_design(&p, &DesignOptions::default()).expect_err("no sizes");
    assert!(
        e.to_string()
            .starts_with("Design!B2: \"Step kvar\" lists no step size"),
        "{e}"
    );
    // 8 steps of 5 kvar (40 kvar) cannot bring 800 kW at 0.80 to 0.95 (337 kvar).
    p.design = vec![row("B", &[5.0], (1, 8), &[Reactor::None], &[0.48])];
    let e = run_design(&p, &DesignOptions::default()).expect_err("unreachable");
    assert!(
        e.to_string()
            .starts_with("Design!C2: no allowed plan reaches the target power factor 0.95"),
        "{e}"
    );
}

#[test]
fn no_plan_passing_is_a_result_with_the_nearest_plans_and_what_each_fails() {
    let mut p = fifth_plant();
    p.design[0].reactors = vec![Reactor::None];
    let d = design(&p);
    assert_eq!(d.recommended, None);
    assert_eq!(d.counts.passed, 0);
    assert!(!d.plans.is_empty());
    assert!(d.plans.iter().all(|r| !r.fails.is_empty()));
    assert!(d.reason.starts_with("No plan passes every check"));
    // Ranked by the number of failures, fewest first.
    assert!(
        d.plans
            .windows(2)
            .all(|w| w[0].fails.len() <= w[1].fails.len())
    );
}

#[test]
fn a_plan_the_controller_never_switches_in_is_not_recommended() {
    // A stiff 480 V bus with 400 kW at pf 0.8 (Q = 300 kvar, textbook) and an existing plain
    // 300 kvar bank: the existing bank alone brings the PCC to unity, and one 50 kvar step
    // more would lead, so the controller never switches the designed step in. Such a plan
    // reaches the target only through the other bank's states: it fails, saying so.
    let mut p = stiff_bus(400.0, 0.8);
    p.banks = vec![CapacitorBank {
        status: BankStatus::Existing,
        ..crate::common::bank("EX", "B", 0.48, 300.0, 1, Reactor::None)
    }];
    p.design = vec![row("B", &[50.0], (1, 1), &[Reactor::None], &[0.48])];
    let d = design(&p);
    assert!(!d.plans.is_empty());
    for plan in &d.plans {
        let never = plan
            .control
            .iter()
            .flatten()
            .all(|c| c.steps.last() == Some(&0));
        assert!(never, "{:?}", plan.control);
        assert!(
            plan.fails
                .iter()
                .any(|f| f.contains("never switches it in")),
            "{:?}",
            plan.fails
        );
    }
    assert_eq!(d.recommended, None);
}

#[test]
fn an_existing_bank_named_in_replaces_is_redesigned() {
    // The 5th-harmonic plant (above) with an existing plain 2 × 250 kvar bank EX on the LV
    // bus: EX alone sits on the 5th (h = √(S_sc/Q) near 5 for this bus; textbook), so every
    // plan added beside it inherits its resonant states and none can pass. Naming EX in
    // the Design row's `Replaces` takes it out while the plans are tried: a detuned plan
    // passes, and the written plant has the plan in EX's place.
    let mut p = fifth_plant();
    p.banks = vec![CapacitorBank {
        status: BankStatus::Existing,
        ..crate::common::bank("EX", "LV", 0.48, 250.0, 2, Reactor::None)
    }];
    let res = run_check(
        &p,
        &CheckOptions {
            remedies: Some(false),
            ..Default::default()
        },
    )
    .expect("check runs");
    assert!(
        res.resonance
            .rows
            .iter()
            .any(|r| r.verdict == overtone::study::Verdict::Resonant),
        "EX resonates on its own"
    );
    let beside = design(&p);
    assert!(
        beside.recommended.is_none(),
        "no plan passes beside the resonant bank"
    );
    p.design[0].replaces = vec!["EX".into()];
    let replaced = design(&p);
    let i = replaced
        .recommended
        .expect("a plan passes once EX is replaced");
    assert!(
        replaced.plans[i].plan.reactor.p() > 0.0,
        "{:?}",
        replaced.plans[i].plan
    );
    // The plan takes EX's place (and its id), as a proposed bank of the plan's make-up.
    let written = replaced.plant_with(i);
    let on_lv: Vec<_> = written.banks.iter().filter(|b| b.bus == "LV").collect();
    assert_eq!(on_lv.len(), 1, "EX replaced, not kept beside the plan");
    assert_eq!(on_lv[0].reactor, replaced.plans[i].plan.reactor);
    assert_eq!(on_lv[0].status, BankStatus::Proposed);
    // A Replaces cell naming no bank is a located input error.
    p.design[0].replaces = vec!["NOPE".into()];
    p.design[0].cells.replaces = "M2".into();
    let err = run_design(&p, &DesignOptions::default()).expect_err("bad id");
    let text = err.to_string();
    assert!(
        text.contains("Design") && text.contains("M2") && text.contains("NOPE"),
        "{text}"
    );
}

#[test]
fn when_only_another_bank_reaches_the_target_that_bank_is_designed_too() {
    // The stiff bus above: the existing plain 300 kvar bank EX alone brings 400 kW at pf 0.8
    // (Q = 300 kvar, textbook) to unity, so the controller never switches a designed step
    // in. The search says so and designs EX too: its row now replaces EX, and a plan of the
    // allowed sizes reaches the target by itself (Q = P·(tan φ₁ − tan φ₂) = 168.5 kvar at
    // 0.95, IEEE Std 141-1993 chapter 8, from memory).
    let mut p = stiff_bus(400.0, 0.8);
    p.banks = vec![CapacitorBank {
        status: BankStatus::Existing,
        ..crate::common::bank("EX", "B", 0.48, 300.0, 1, Reactor::None)
    }];
    p.design = vec![row("B", &[50.0, 100.0], (1, 4), &[Reactor::None], &[0.48])];
    let d = design(&p);
    let i = d
        .recommended
        .expect("a plan passes once EX is designed too");
    let first = d.notes.first().map(ToString::to_string).unwrap_or_default();
    assert!(
        first.contains("EX") && first.contains("designed too"),
        "{first}"
    );
    let written = d.plant_with(i);
    assert_eq!(written.banks.len(), 1, "the plan stands in for EX");
    let kvar = f64::from(d.plans[i].plan.steps) * d.plans[i].plan.step_kvar;
    assert!((168.5..=300.0).contains(&kvar), "{kvar} kvar");
}

#[test]
fn several_design_buses_split_the_textbook_kvar_between_them() {
    // Two 480 V buses a metre apart on a stiff source, 400 kW at pf 0.80 on each: from 0.80
    // to 0.95 the plant needs Q = P(tan φ1 − tan φ2) = 800 × (0.75 − 0.328684) = 337.05
    // kvar (IEEE Std 141-1993, chapter 8, from memory). Each bus allows at most 4 × 50 kvar,
    // so no plan at one bus reaches it: only a bank at both does, and the controller,
    // rotating between them, switches in the first multiple of 50 at or above it, 7 steps:
    // 4 at A (first in the rotation) and 3 at B.
    let mut p = Plant::new(60.0);
    p.buses = vec![bus("A", 0.48), bus("B", 0.48)];
    p.sources = vec![source("U", "A", 10_000.0, 10.0)];
    p.cables = vec![crate::common::cable("K", "A", "B", 1.0)];
    p.loads = vec![
        load("LA", "A", LoadType::Linear, 400.0, 0.80),
        load("LB", "B", LoadType::Linear, 400.0, 0.80),
    ];
    p.load_levels = full_only();
    p.design = vec![
        row("A", &[50.0], (1, 4), &[Reactor::None], &[0.48]),
        row("B", &[50.0], (1, 4), &[Reactor::None], &[0.48]),
    ];
    let d = design(&p);
    let r = recommended(&d);
    assert_eq!(r.also.len(), 1, "a bank at both buses: {}", r.plan.label());
    let steps: Vec<(String, u32)> = r
        .banks()
        .map(|(pl, _)| (pl.bus.clone(), pl.steps))
        .collect();
    assert_eq!(steps, vec![("A".to_string(), 4), ("B".to_string(), 3)]);
    let textbook = 800.0 * ((0.8f64.acos()).tan() - (0.95f64.acos()).tan());
    assert!((textbook - 337.05).abs() < 0.01, "{textbook}");
    assert!(r.effective_kvar >= textbook && r.effective_kvar - 50.0 < textbook);
    assert_eq!(r.control[0][0].steps, vec![4, 3]);
    // Every plan at one bus misses the target, and says so.
    for q in d.plans.iter().filter(|q| q.also.is_empty()) {
        assert!(
            q.fails.iter().any(|f| f.starts_with("PF ")),
            "{}: {:?}",
            q.plan.label(),
            q.fails
        );
    }
}

/// The two switchboards of `two_bank_modes` loaded with converters on both: SWB1 with an
/// existing plain 300 kvar bank, 400 kW linear and a 600 kW six-pulse drive; SWB2 with the
/// proposed plain 6 × 100 kvar bank, 300 kW linear and a 200 kW drive (invented).
fn two_loaded_switchboards() -> Plant {
    let mut p = crate::two_bank_modes::two_switchboards();
    p.banks[0] = CapacitorBank {
        status: BankStatus::Existing,
        ..crate::common::bank("CAP-EX", "SWB1", 0.48, 300.0, 1, Reactor::None)
    };
    p.loads = vec![
        load("L1", "SWB1", LoadType::Linear, 400.0, 0.85),
        load("VFD1", "SWB1", LoadType::SixPulseDrive, 600.0, 0.95),
        load("L2", "SWB2", LoadType::Linear, 300.0, 0.85),
        load("VFD", "SWB2", LoadType::SixPulseDrive, 200.0, 0.95),
    ];
    p
}

#[test]
fn only_a_plan_at_both_switchboards_passes_and_check_agrees() {
    // One bus at a time nothing passes: at SWB2 the existing plain bank stays and the
    // controller reaches its resonant states; at SWB1 the proposed plain bank stays. The
    // design bus rows name the banks they replace, so a plan at both replaces both.
    let mut p = two_loaded_switchboards();
    let sizes = [50.0, 100.0];
    let reactors = [Reactor::None, Reactor::Detuning { percent: 7.0 }];
    p.design = vec![
        row("SWB1", &sizes, (1, 6), &reactors, &[0.525]),
        row("SWB2", &sizes, (1, 6), &reactors, &[0.525]),
    ];
    p.design[0].replaces = vec!["CAP-EX".into()];
    p.design[1].replaces = vec!["CAP-A".into()];
    let d = design(&p);
    for q in d.plans.iter().filter(|q| q.also.is_empty()) {
        assert!(
            !q.passes(),
            "{} at {} passes alone",
            q.plan.label(),
            q.plan.bus
        );
    }
    let i = d.recommended.expect("a plan at both switchboards passes");
    let r = &d.plans[i];
    assert_eq!(r.also.len(), 1);
    assert_eq!(r.plan.reactor, Reactor::Detuning { percent: 7.0 });
    // The controller switches both banks in at some level.
    for b in 0..2 {
        let used = (r.control.iter().flatten()).any(|c| c.steps[c.steps.len() - 2 + b] > 0);
        assert!(used, "bank {b} never switched in: {:?}", r.control);
    }
    // `check` on the written plant: both banks clear in every configuration and across the
    // tolerance band, and their duty within limits.
    let written = d.plant_with(i);
    assert_eq!(written.banks.len(), 2, "both banks replaced");
    let res = run_check(&written, &CheckOptions::default()).expect("check runs");
    assert!(!res.resonance.rows.is_empty());
    for row in &res.resonance.rows {
        assert_ne!(row.verdict, overtone::study::Verdict::Resonant, "{row:?}");
    }
    assert!(res.tolerance.iter().all(|t| !t.flagged));
    assert!(res.duty.iter().all(|d| !d.exceeds));
}
