//! The whole `overtone check` study (no CSV) of a generated 300-bus plant with 4 banks of 6
//! steps (2,401 configurations) × 2 supply scenarios × 4,901 scan points, peaks and dips at
//! every bank bus and the PCC, and harmonic penetration (16 orders, drives on 10 buses) with
//! the limit checks at every bus; the same under phasor summation with background
//! distortion; and the operating point alone. Prints the process's peak resident memory afterwards.
//! Run: `cargo bench --bench check`.

#[path = "../support/synthetic.rs"]
mod synthetic;

use overtone::jobs::check::run_check;
use synthetic::{generated_plant, with_two_scenarios};

mod peak;

fn main() {
    divan::main();
    peak::print_peak_memory();
}

/// The generated plant with 6-pulse drives (built-in spectrum) on ten 480 V buses.
pub fn bench_plant() -> overtone::model::Plant {
    let mut plant = with_two_scenarios(generated_plant(300, 0, 4, 6, 17));
    let lv: Vec<String> = plant
        .buses
        .iter()
        .filter(|b| b.nominal_kv < 1.0)
        .map(|b| b.id.clone())
        .collect();
    for (i, bus) in lv.iter().step_by(lv.len().div_ceil(10)).enumerate() {
        plant.loads.push(overtone::model::Load {
            id: format!("VFD{i}"),
            bus: bus.clone(),
            kind: overtone::model::LoadType::SixPulseDrive,
            kw: 75.0,
            power_factor: 0.95,
            quantity: 2.0,
            load_factor: 0.8,
            spectrum: None,
            wiring: None,
        });
    }
    plant
}

#[divan::bench(sample_count = 3, sample_size = 1)]
fn exhaustive_300_buses_2401_configurations(bencher: divan::Bencher) {
    let plant = bench_plant();
    assert_eq!(
        overtone::study::all_configurations(&plant.banks).len(),
        2401
    );
    bencher.bench_local(|| {
        let res = run_check(&plant, &Default::default()).expect("runs");
        assert_eq!(res.scan.grid.orders.len(), 4901);
        assert_eq!(res.scan.series.len(), 2 * 2401 * 5);
        assert_eq!(res.penetration.injections.buses.len(), 10);
        assert_eq!(res.limit_rows.len(), 2 * 2401);
        res.resonance.rows.len()
    });
}

/// The same study under `phasor` summation with a background 5th and 7th behind both
/// supply scenarios' sources: complex superposition with the operating point's angles of
/// every configuration, and one more injection column per source.
#[divan::bench(sample_count = 3, sample_size = 1)]
fn phasor_with_background_300_buses_2401_configurations(bencher: divan::Bencher) {
    let mut plant = bench_plant();
    plant.study.summation = overtone::model::Summation::Phasor;
    for s in plant.sources.clone() {
        for (order, v) in [(5.0, 1.5), (7.0, 1.0)] {
            plant.background.push(overtone::model::BackgroundLine {
                source: s.id.clone(),
                order,
                voltage_percent: v,
                angle_deg: Some(20.0),
            });
        }
    }
    bencher.bench_local(|| {
        let res = run_check(&plant, &Default::default()).expect("runs");
        assert_eq!(res.penetration.injections.buses.len(), 11);
        assert_eq!(res.penetration.injections.background.len(), 4);
        assert_eq!(res.limit_rows.len(), 2 * 2401);
        res.resonance.rows.len()
    });
}

/// The operating point alone on the same plant: 2 scenarios × 2,401 configurations of
/// Newton load flows (warm-started), the step changes and the kvar needed per bank.
#[divan::bench(sample_count = 5, sample_size = 1)]
fn operating_point_300_buses_2401_configurations(bencher: divan::Bencher) {
    let plant = bench_plant();
    let net = overtone::network::Network::build(&plant).expect("network");
    let configs = overtone::study::all_configurations(&plant.banks);
    bencher.bench_local(|| {
        use overtone::study::operating::{OperatingSolver, OperatingStudy};
        let solver = OperatingSolver::new(&net);
        let op = OperatingStudy::run(&plant, &net, &solver, &configs);
        assert_eq!(op.points.len(), 2 * 2401);
        op.points.len()
    });
}
