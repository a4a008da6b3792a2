//! The bounded evaluation of harmonic penetration against the direct one, on generated
//! plants with converters on two thirds of their buses: every reported figure equal to
//! 1e-9 relative (the limits, duty and penetration figures, and the terminal summary as
//! printed), the worst buses the same, whatever the bounds let through.

use crate::synthetic::{generated_plant, with_converters, with_two_scenarios};
use overtone::jobs::check::{CheckOptions, CheckResults, run_check};
use overtone::model::*;
use overtone::study::penetration::Evaluation;

fn run(p: &Plant, evaluation: Evaluation) -> CheckResults {
    let options = CheckOptions {
        remedies: Some(false),
        evaluation,
        ..Default::default()
    };
    run_check(p, &options).expect("valid plant")
}

fn close(a: f64, b: f64, what: &str) {
    let scale = a.abs().max(b.abs()).max(1e-12);
    assert!((a - b).abs() <= 1e-9 * scale, "{what}: {a} vs {b}");
}

fn close_opt(a: Option<f64>, b: Option<f64>, what: &str) {
    match (a, b) {
        (Some(a), Some(b)) => close(a, b, what),
        (None, None) => {}
        _ => panic!("{what}: {a:?} vs {b:?}"),
    }
}

/// Every figure the reports print from penetration, both ways; returns how many buses
/// the bounded evaluation summed beyond the PCC, bank and source buses (over all results).
fn agree(p: &Plant) -> usize {
    let direct = run(p, Evaluation::Direct);
    let bounded = run(p, Evaluation::Fast);
    assert_eq!(direct.limit_rows.len(), bounded.limit_rows.len());
    for (a, b) in direct.limit_rows.iter().zip(&bounded.limit_rows) {
        let at = format!("{} {}", a.scenario, a.configuration);
        close(
            a.worst_thd.value,
            b.worst_thd.value,
            &format!("{at} worst THD"),
        );
        assert_eq!(a.worst_thd_bus, b.worst_thd_bus, "{at}");
        close_opt(
            a.worst_individual.as_ref().map(|c| c.value),
            b.worst_individual.as_ref().map(|c| c.value),
            &format!("{at} worst individual"),
        );
        assert_eq!(a.worst_individual_bus, b.worst_individual_bus, "{at}");
        assert_eq!(a.worst_individual_order, b.worst_individual_order, "{at}");
        close(a.tdd.value, b.tdd.value, &format!("{at} TDD"));
        close(a.pcc_thd.value, b.pcc_thd.value, &format!("{at} PCC THD"));
        close_opt(
            a.worst_pcc_current.as_ref().map(|c| c.value),
            b.worst_pcc_current.as_ref().map(|c| c.value),
            &format!("{at} PCC current"),
        );
        assert_eq!(a.in_plant_above, b.in_plant_above, "{at}");
        assert_eq!(a.exceeds, b.exceeds, "{at}");
    }
    for (a, b) in direct.duty.iter().zip(&bounded.duty) {
        close(a.ratios.rms_voltage, b.ratios.rms_voltage, "duty V");
        close(a.ratios.peak_voltage, b.ratios.peak_voltage, "duty Vpk");
        close(a.ratios.rms_current, b.ratios.rms_current, "duty I");
        close(a.ratios.kvar, b.ratios.kvar, "duty kvar");
        assert_eq!(a.exceeds, b.exceeds);
    }
    let mut beyond = 0;
    let always = 1 + p.banks.len() + p.sources.len();
    for (a, b) in direct
        .penetration
        .results
        .iter()
        .zip(&bounded.penetration.results)
    {
        for (x, y) in a.pcc_current_a.iter().zip(&b.pcc_current_a) {
            close(*x, *y, "PCC current");
        }
        for (x, y) in a.pcc_plant_current_a.iter().zip(&b.pcc_plant_current_a) {
            close(*x, *y, "PCC plant current");
        }
        for (x, y) in a
            .pcc_background_current_a
            .iter()
            .zip(&b.pcc_background_current_a)
        {
            close(*x, *y, "PCC background current");
        }
        assert_eq!(a.pcc_bounds.len(), b.pcc_bounds.len());
        for (x, y) in a.pcc_bounds.iter().zip(&b.pcc_bounds) {
            close(
                x.v_arithmetic_percent,
                y.v_arithmetic_percent,
                "PCC arithmetic bound",
            );
            close(
                x.i_arithmetic_a,
                y.i_arithmetic_a,
                "PCC arithmetic current bound",
            );
            close_opt(
                x.v_worst_angle_percent,
                y.v_worst_angle_percent,
                "PCC worst angle",
            );
            close_opt(
                x.i_worst_angle_a,
                y.i_worst_angle_a,
                "PCC worst-angle current",
            );
        }
        for (bank, (x, y)) in a
            .bank_voltage_percent
            .iter()
            .zip(&b.bank_voltage_percent)
            .enumerate()
        {
            for (u, v) in x.iter().zip(y) {
                close(*u, *v, &format!("bank {bank} voltage"));
            }
        }
        for (x, y) in a.bank_current_a.iter().zip(&b.bank_current_a) {
            for (u, v) in x.iter().zip(y) {
                close(*u, *v, "bank current");
            }
        }
        for (x, y) in a.bank_background_rms_a.iter().zip(&b.bank_background_rms_a) {
            close(*x, *y, "bank background");
        }
        // Every bus the bounded evaluation summed equals the direct sum.
        for r in 0..a.thd_percent.len() {
            if b.evaluated.as_ref().is_none_or(|e| e[r]) {
                close(a.thd_percent[r], b.thd_percent[r], "bus THD");
            }
        }
        if let Some(e) = &b.evaluated {
            beyond += e.iter().filter(|&&x| x).count().saturating_sub(always);
        }
    }
    // A configuration's every-bus voltages and branch currents (the CSV's, on demand) from
    // the lean points of the bounded evaluation equal the direct ones.
    let steps = &direct.scan.configurations[direct.scan.configurations.len() - 1].steps;
    for s in 0..direct.scan.scenarios.len() {
        let (va, vb) = (
            direct.penetration.voltages(s, steps).expect("direct"),
            bounded.penetration.voltages(s, steps).expect("bounded"),
        );
        for (x, y) in va.iter().flatten().zip(vb.iter().flatten()) {
            close(*x, *y, "bus voltage on demand");
        }
        let (ba, bb) = (
            direct.penetration.branch_rms_a(&direct.network, s, steps),
            bounded.penetration.branch_rms_a(&bounded.network, s, steps),
        );
        for (x, y) in ba.iter().flatten().zip(bb.iter().flatten()) {
            close(*x, *y, "branch current on demand");
        }
    }
    let text = |res: &CheckResults| {
        let mut out = Vec::new();
        overtone::present::terminal::summary::write_summary(&mut out, res).unwrap();
        String::from_utf8(out).unwrap()
    };
    assert_eq!(text(&direct), text(&bounded), "terminal summary");
    beyond
}

fn converter_plant(n: usize, links: usize, seed: u64, reactor: Reactor, law: Summation) -> Plant {
    let mut p = with_converters(
        with_two_scenarios(generated_plant(n, links, 3, 3, seed)),
        seed,
    );
    for b in &mut p.banks {
        b.reactor = reactor;
    }
    p.study.summation = law;
    p
}

#[test]
fn bounded_and_direct_agree_on_generated_converter_plants() {
    let detuned = Reactor::Detuning { percent: 7.0 };
    let mut beyond = 0;
    for seed in [3, 11] {
        beyond += agree(&converter_plant(
            60,
            0,
            seed,
            detuned,
            Summation::Arithmetic,
        ));
        // Plain banks resonate: the bank-induced terms are large and the bounds loose.
        beyond += agree(&converter_plant(
            60,
            0,
            seed,
            Reactor::None,
            Summation::Arithmetic,
        ));
    }
    beyond += agree(&converter_plant(48, 4, 5, detuned, Summation::Iec61000_3_6));
    beyond += agree(&converter_plant(
        48,
        4,
        5,
        Reactor::None,
        Summation::Iec61000_3_6,
    ));
    // A utility background on the supply adds terms that every bus sees.
    let mut bg = converter_plant(40, 0, 7, Reactor::None, Summation::Arithmetic);
    for s in bg.sources.clone() {
        for (h, v) in [(5.0, 1.5), (7.0, 1.0), (11.0, 0.6)] {
            bg.background.push(BackgroundLine {
                source: s.id.clone(),
                order: h,
                voltage_percent: v,
                angle_deg: None,
            });
        }
    }
    beyond += agree(&bg);
    // The candidate search ran: some bus beyond the always-summed ones was summed whole.
    assert!(beyond > 0, "no candidate bus was ever summed");
}

/// Under phasor summation the fast evaluation is linear superposition (one solve per
/// order and configuration, then the Woodbury correction of the energized banks): every
/// bus of every configuration equals the direct sum of the full transfer matrix times the
/// currents at the configuration's operating angles, radial and meshed, plain banks near
/// resonance and detuned, with a utility background.
#[test]
fn linear_and_direct_agree_under_phasor_summation() {
    for (n, links, seed, reactor) in [
        (60, 0, 3, Reactor::Detuning { percent: 7.0 }),
        (60, 0, 11, Reactor::None),
        (48, 4, 5, Reactor::None),
    ] {
        let mut p = converter_plant(n, links, seed, reactor, Summation::Phasor);
        if seed == 11 {
            for s in p.sources.clone() {
                for (h, v, a) in [
                    (5.0, 1.5, Some(30.0)),
                    (7.0, 1.0, Some(-45.0)),
                    (11.0, 0.8, None),
                ] {
                    p.background.push(BackgroundLine {
                        source: s.id.clone(),
                        order: h,
                        voltage_percent: v,
                        angle_deg: a,
                    });
                }
            }
        }
        agree(&p);
        // Every bus is evaluated, so the per-bus tables are complete.
        let fast = run(&p, Evaluation::Fast);
        let direct = run(&p, Evaluation::Direct);
        for (a, b) in direct
            .penetration
            .results
            .iter()
            .zip(&fast.penetration.results)
        {
            assert!(b.evaluated.is_none());
            for (x, y) in a.thd_percent.iter().zip(&b.thd_percent) {
                close(*x, *y, "bus THD (phasor)");
            }
            for (x, y) in a.worst.iter().zip(&b.worst) {
                close_opt(x.map(|w| w.v_percent), y.map(|w| w.v_percent), "bus worst");
            }
        }
    }
}

/// The fast evaluations on the bundled cases (several sources and scenarios, transformer
/// vector groups, a utility background, detuned and plain banks), under each case's own
/// summation law and under `phasor`: every reported figure as the direct evaluation's.
#[test]
fn fast_and_direct_agree_on_the_bundled_cases() {
    for plant in [
        crate::cases::bottling_plant(),
        crate::cases::food_plant(),
        crate::cases::water_plant(),
        crate::cases::large_site(),
    ] {
        let plant = crate::cases::explicit(plant);
        agree(&plant);
        let mut phasor = plant.clone();
        phasor.study.summation = Summation::Phasor;
        agree(&phasor);
    }
}

/// The damping band's re-run sums only the PCC, bank and source buses under the fast
/// evaluation (`Evaluation::BankBuses`) and scans only the bank buses: every key figure
/// (peak, amplification, bank-bus THD, capacitor current, both damping models) equals the
/// re-run evaluated directly at every bus to 1e-9 relative.
#[test]
fn the_damping_band_read_at_the_bank_buses_equals_the_direct_one() {
    let mut compared = 0;
    for (seed, reactor) in [(3, Reactor::None), (11, Reactor::Detuning { percent: 7.0 })] {
        let mut p = converter_plant(60, 0, seed, reactor, Summation::Arithmetic);
        p.study.resistance_model = ResistanceModel::FrequencyDependent;
        let direct = run(&p, Evaluation::Direct);
        let fast = run(&p, Evaluation::Fast);
        assert_eq!(direct.damping.len(), fast.damping.len(), "seed {seed}");
        // The least-damped side was re-run (not the study's figures again).
        assert!(
            (fast.damping.iter()).any(|d| d.study.amplification != d.least_damped.amplification),
            "seed {seed}: no re-run"
        );
        for (a, b) in direct.damping.iter().zip(&fast.damping) {
            let at = format!("{} {} {}", a.scenario, a.configuration, a.bank);
            assert_eq!(
                (&a.scenario, &a.configuration, &a.bank),
                (&b.scenario, &b.configuration, &b.bank)
            );
            for (x, y, side) in [
                (&a.study, &b.study, "study"),
                (&a.least_damped, &b.least_damped, "least"),
            ] {
                close_opt(x.peak_order, y.peak_order, &format!("{at} {side} peak"));
                close_opt(
                    x.amplification,
                    y.amplification,
                    &format!("{at} {side} amplification"),
                );
                close_opt(
                    x.bus_thd_percent,
                    y.bus_thd_percent,
                    &format!("{at} {side} THD"),
                );
                close_opt(
                    x.capacitor_current_percent,
                    y.capacitor_current_percent,
                    &format!("{at} {side} current"),
                );
            }
            compared += 1;
        }
    }
    assert!(compared > 20, "only {compared} flagged resonances compared");
}
