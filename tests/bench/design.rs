//! `overtone design` on the bundled cases: the whole search (power-factor bound, scan of
//! every plan over every configuration, every check of the plans clear of resonance), as
//! the binary runs it without writing. After the timings it prints, per case, the plans
//! searched and scanned and the rates per second of one run. Run: `cargo bench --bench
//! design`.

use std::time::Instant;

#[path = "../support/synthetic.rs"]
mod synthetic;

use overtone::io::workbook_in::read_workbook;
use overtone::jobs::design::{DesignOptions, run_design};
use overtone::model::Plant;

mod peak;

const CASES: [&str; 4] = ["bottling-plant", "food-plant", "water-plant", "large-site"];

fn plant(name: &str) -> Plant {
    let path = format!("{}/cases/{name}.xlsx", env!("CARGO_MANIFEST_DIR"));
    read_workbook(std::path::Path::new(&path))
        .expect("case reads")
        .plant
}

fn main() {
    divan::main();
    for name in CASES {
        let p = plant(name);
        let start = Instant::now();
        let d = run_design(&p, &DesignOptions::default()).expect("design runs");
        let s = start.elapsed().as_secs_f64();
        let c = d.counts;
        println!(
            "{name}: {} plans searched ({} families), {} scanned, {} checked, {} pass in {s:.2} s: {:.0} plans searched/s, {:.1} scanned/s",
            c.enumerated,
            c.families,
            c.scanned,
            c.checked,
            c.passed,
            c.enumerated as f64 / s,
            c.scanned as f64 / s
        );
    }
    peak::print_peak_memory();
}

#[divan::bench(sample_count = 3, sample_size = 1, args = CASES)]
fn design_case(bencher: divan::Bencher, name: &str) {
    let p = plant(name);
    bencher.bench_local(|| {
        run_design(&p, &DesignOptions::default())
            .expect("runs")
            .plans
            .len()
    });
}

/// Issue 28's design shape: the generated 300-bus plant with converters on two thirds of its
/// buses (the `converters` bench's plant), 4 proposed banks of 6 steps 7 % detuned, 2
/// scenarios: the Design rows derived from the proposed banks.
#[divan::bench(sample_count = 1, sample_size = 1)]
fn design_converter_plant_300_buses(bencher: divan::Bencher) {
    use overtone::model::Reactor;
    let mut p = synthetic::with_converters(
        synthetic::with_two_scenarios(synthetic::generated_plant(300, 0, 4, 6, 17)),
        17,
    );
    for b in &mut p.banks {
        b.reactor = Reactor::Detuning { percent: 7.0 };
    }
    bencher.bench_local(|| {
        let d = run_design(&p, &DesignOptions::default()).expect("runs");
        let c = d.counts;
        eprintln!(
            "{} plans searched, {} scanned, {} checked, {} pass",
            c.enumerated, c.scanned, c.checked, c.passed
        );
        d.plans.len()
    });
}
