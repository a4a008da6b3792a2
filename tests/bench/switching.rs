//! The switching simulation: every energizing event of each bundled case, and of the
//! generated 300-bus plant with 4 banks of 6 steps (54 events in each of 2 scenarios), as
//! the whole check with the simulation against the same check without it (the difference
//! is the simulation's cost). Run: `cargo bench --bench switching`.

#[path = "../support/synthetic.rs"]
mod synthetic;

use overtone::jobs::check::{CheckOptions, run_check};
use overtone::model::Plant;
use synthetic::{generated_plant, with_two_scenarios};

fn main() {
    divan::main();
}

fn case(name: &str) -> Plant {
    let path = format!("{}/cases/{name}", env!("CARGO_MANIFEST_DIR"));
    overtone::io::workbook_in::read_workbook(std::path::Path::new(&path))
        .expect("case reads")
        .plant
}

fn options(switching: bool) -> CheckOptions {
    CheckOptions {
        remedies: Some(false),
        switching,
        ..Default::default()
    }
}

const CASES: [&str; 4] = [
    "bottling-plant.xlsx",
    "food-plant.xlsx",
    "water-plant.xlsx",
    "large-site.xlsx",
];

#[divan::bench(args = CASES, sample_count = 5, sample_size = 1)]
fn case_with_switching(bencher: divan::Bencher, name: &str) {
    let plant = case(name);
    bencher.bench_local(|| {
        let res = run_check(&plant, &options(true)).expect("runs");
        assert!(!res.switching.events.is_empty());
        res.switching.events.len()
    });
}

#[divan::bench(args = CASES, sample_count = 5, sample_size = 1)]
fn case_without_switching(bencher: divan::Bencher, name: &str) {
    let plant = case(name);
    bencher.bench_local(|| {
        run_check(&plant, &options(false))
            .expect("runs")
            .limit_rows
            .len()
    });
}

#[divan::bench(args = [true, false], sample_count = 3, sample_size = 1)]
fn generated_300_buses(bencher: divan::Bencher, switching: bool) {
    let plant = with_two_scenarios(generated_plant(300, 0, 4, 6, 17));
    bencher.bench_local(|| {
        let res = run_check(&plant, &options(switching)).expect("runs");
        res.switching.events.len()
    });
}
