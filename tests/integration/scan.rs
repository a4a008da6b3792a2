//! Scan grid, configurations and their labels.

use overtone::model::Reactor;
use overtone::study::config::configuration_count;
use overtone::study::{ScanGrid, all_configurations, parse_configuration};

use crate::common::*;

#[test]
fn grid_includes_the_highest_order() {
    // input contract: orders 1 + i·step up to the highest, which is included off the grid.
    let g = ScanGrid::new(50.0, 0.01);
    assert_eq!(g.orders.len(), 4901);
    assert_eq!(g.orders[0], 1.0);
    assert_eq!(g.orders[15], 1.15);
    assert_eq!(*g.orders.last().unwrap(), 50.0);
    let g = ScanGrid::new(2.0, 0.3);
    assert_eq!(g.orders, vec![1.0, 1.3, 1.6, 1.9, 2.0]);
}

#[test]
fn configurations_and_labels() {
    let mut a = bank("C1", "B", 0.48, 100.0, 2, Reactor::None);
    let mut b = bank("C2", "B", 0.48, 100.0, 4, Reactor::None);
    a.studied_steps = vec![0, 2];
    b.studied_steps = vec![1, 2, 3];
    let banks = vec![a, b];
    let all = all_configurations(&banks);
    assert_eq!(all.len(), 6);
    assert_eq!(configuration_count(&banks), 6);
    let labels: Vec<String> = all.iter().map(|c| c.label(&banks)).collect();
    assert_eq!(
        labels,
        [
            "C1=0 C2=1",
            "C1=0 C2=2",
            "C1=0 C2=3",
            "C1=2 C2=1",
            "C1=2 C2=2",
            "C1=2 C2=3"
        ]
    );
    let c = parse_configuration("C2=3 C1=2", &banks).unwrap();
    assert_eq!(c.steps, vec![2, 3]);
    assert_eq!(
        parse_configuration("C2=4", &banks).unwrap_err().to_string(),
        "configuration \"C2=4\": 4 steps of bank \"C2\" is not among its studied steps (1,2,3)"
    );
    assert_eq!(
        parse_configuration("none", &banks).unwrap_err().to_string(),
        "configuration \"none\": 0 steps of bank \"C2\" is not among its studied steps (1,2,3)"
    );
    assert_eq!(
        parse_configuration("C3=1", &banks).unwrap_err().to_string(),
        "configuration \"C3=1\": there is no bank \"C3\" on the Capacitors sheet"
    );
    assert_eq!(
        parse_configuration("C1:1", &banks).unwrap_err().to_string(),
        "configuration \"C1:1\": \"C1:1\" is not of the form BANK=STEPS"
    );
}

fn demo_results() -> overtone::jobs::check::CheckResults {
    let plant = overtone::demo::demo_plant().expect("demo");
    overtone::jobs::check::run_check(&plant, &Default::default()).expect("runs")
}

#[test]
fn refined_peaks_agree_with_full_factorizations() {
    // The refinement evaluates Z₀ interpolated between grid points; check each peak of the
    // demo against exact solutions (a full factorization with the banks in place): |Z| to
    // 1e-6 relative, and no larger |Z| 0.001 order to either side.
    let res = demo_results();
    let net = &res.network;
    let engine = overtone::solve::Engine::new(net, &res.scan.buses);
    let mut checked = 0;
    for s in res.scan.series.iter().filter(|s| s.configuration % 5 == 0) {
        let steps = &res.scan.configurations[s.configuration].steps;
        let bus = res.scan.buses[s.bus];
        let zb = net.buses[bus].z_base_ohm;
        let exact = |h: f64| {
            engine
                .impedance_pu(h, s.scenario, steps, bus, bus)
                .unwrap()
                .norm()
                * zb
        };
        for p in &s.peaks {
            let z = exact(p.order);
            assert!((z - p.z_ohm).abs() <= 1e-6 * z, "{} vs {}", p.z_ohm, z);
            assert!(
                exact(p.order - 1e-3) <= z && exact(p.order + 1e-3) <= z,
                "peak at {}",
                p.order
            );
            checked += 1;
        }
    }
    assert!(checked > 20, "{checked}");
}

#[test]
fn results_do_not_depend_on_thread_count() {
    let run = |threads| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(demo_results)
    };
    let (one, two) = (run(1), run(2));
    assert_eq!(one.scan.series, two.scan.series);
    assert_eq!(one.resonance, two.resonance);
}

#[test]
fn too_many_combinations_are_refused_with_a_sentence() {
    let mut plant = crate::synthetic::generated_plant(40, 0, 6, 10, 3);
    assert_eq!(configuration_count(&plant.banks), 11u64.pow(6));
    let err = overtone::jobs::check::run_check(&plant, &Default::default()).unwrap_err();
    assert_eq!(
        err.to_string(),
        "1771561 step combinations exceed the limit of 100000: narrow \"Studied steps\" on the Capacitors sheet (for example 0,2,4 or 1-3)"
    );
    plant
        .banks
        .iter_mut()
        .for_each(|b| b.studied_steps = vec![0, 5, 10]);
    assert_eq!(configuration_count(&plant.banks), 729);
}

#[test]
fn scan_only_runs_the_scan_and_nothing_else() {
    // The `scan` command's study: the same scan and resonance rows as a full check, with no
    // operating point, penetration, duty or remedies (a generated plant with converters on
    // two thirds of its buses, where penetration is the expensive part).
    use crate::synthetic::{generated_plant, with_converters, with_two_scenarios};
    let plant = with_converters(with_two_scenarios(generated_plant(30, 0, 2, 3, 9)), 9);
    let full = overtone::jobs::check::run_check(&plant, &Default::default()).unwrap();
    let only = overtone::jobs::check::run_check(
        &plant,
        &overtone::jobs::check::CheckOptions {
            scan_only: true,
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(only.scan.series, full.scan.series);
    assert_eq!(only.resonance, full.resonance);
    assert!(
        full.penetration.injections.orders.len() >= 50,
        "51 orders injected"
    );
    assert!(only.penetration.injections.orders.is_empty());
    assert!(only.operating.points.is_empty());
    assert!(only.duty.is_empty() && only.remedies.is_empty());
}

/// Points of Y₀ kept from the scan of one plant serve another that differs in its banks
/// alone (a design search's plans): the scan equals a fresh one exactly (its banks' step
/// admittances evaluated afresh); a plant whose network differs under the same number is
/// detected by its fundamental point and solved afresh.
#[test]
fn kept_points_serve_a_plant_that_differs_in_its_banks_alone() {
    use overtone::study::scan::KnownPoints;
    use overtone::study::{Scan, ScanGrid};
    let plant = overtone::demo::demo_plant().expect("demo");
    let grid = ScanGrid::new(plant.study.highest_order, plant.study.scan_step_order);
    let scan_of = |p: &overtone::model::Plant, known: Option<(&KnownPoints, usize)>| {
        let net = overtone::network::Network::build(p).expect("builds");
        let buses: Vec<usize> = net.banks.iter().map(|b| b.bus).collect();
        let engine = overtone::solve::Engine::new(&net, &buses);
        let configurations = all_configurations(&p.banks);
        let with = overtone::study::scan::ScanOptions { known, dips: true };
        Scan::run_with(&engine, grid.clone(), configurations, &|_, _| {}, with)
            .expect("scans")
            .series
    };
    let known = KnownPoints::default();
    let first = scan_of(&plant, Some((&known, 7)));
    assert_eq!(first, scan_of(&plant, None));
    // Other banks on the same buses: another detuning, another step size.
    let mut other = plant.clone();
    for b in &mut other.banks {
        b.reactor = Reactor::Detuning { percent: 14.0 };
        b.step_kvar *= 1.5;
    }
    let kept = scan_of(&other, Some((&known, 7)));
    assert_eq!(kept, scan_of(&other, None));
    assert_ne!(kept, first, "the banks changed the scan");
    // Another network under the same number: a stiffer supply.
    let mut stiffer = plant.clone();
    for s in &mut stiffer.sources {
        if let overtone::model::ShortCircuit::Mva(m) = &mut s.short_circuit {
            *m *= 2.0;
        }
    }
    let stiff = scan_of(&stiffer, Some((&known, 7)));
    assert_ne!(stiff, first, "the supply changed the scan");
    assert_eq!(stiff, scan_of(&stiffer, None));
}
