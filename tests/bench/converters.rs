//! Every configuration on plants where most buses carry converters: a generated radial
//! plant (one 13.8 kV feeder tree, a 0.48 kV bus under every fourth bus), converters with a
//! custom 51-order spectrum (characteristic, even and interharmonic orders) on two thirds
//! of the buses, 4 banks of 6 steps 7 % detuned (2,401 configurations), 2 supply scenarios.
//! The whole check as the binary runs it without remedies (switching simulation included),
//! the same without the switching simulation, and penetration evaluated directly (every
//! bus of every configuration, the reference the bounded evaluation is tested against) for
//! the ratio; the 300-bus plant with the converters on fewer buses (scaling with injection
//! buses); and the whole check under `phasor` summation (linear superposition). Prints the
//! peak resident memory afterwards. Run: `cargo bench --bench converters`.

#[path = "../support/synthetic.rs"]
mod synthetic;

use overtone::jobs::check::{CheckOptions, run_check};
use overtone::model::{LoadType, Reactor, Summation};
use overtone::study::penetration::Evaluation;
use synthetic::{generated_plant, with_converters, with_two_scenarios};

mod peak;

fn main() {
    divan::main();
    peak::print_peak_memory();
}

fn plant(n: usize) -> overtone::model::Plant {
    let mut p = with_converters(with_two_scenarios(generated_plant(n, 0, 4, 6, 17)), 17);
    for b in &mut p.banks {
        b.reactor = Reactor::Detuning { percent: 7.0 };
    }
    p
}

fn options(switching: bool, evaluation: Evaluation) -> CheckOptions {
    CheckOptions {
        remedies: Some(false),
        switching,
        evaluation,
        ..Default::default()
    }
}

/// The shape: 300 buses, 200 converter buses, 51 orders.
#[divan::bench(sample_count = 3, sample_size = 1, args = [100, 300, 600])]
fn whole_check(bencher: divan::Bencher, n: usize) {
    let p = plant(n);
    bencher.bench_local(|| {
        let res = run_check(&p, &options(true, Evaluation::Auto)).expect("runs");
        assert_eq!(res.penetration.injections.orders.len(), 51);
        res.limit_rows.len()
    });
}

#[divan::bench(sample_count = 3, sample_size = 1, args = [100, 300, 600, 1000])]
fn check_without_switching(bencher: divan::Bencher, n: usize) {
    let p = plant(n);
    bencher.bench_local(|| {
        run_check(&p, &options(false, Evaluation::Auto))
            .expect("runs")
            .limit_rows
            .len()
    });
}

#[divan::bench(sample_count = 2, sample_size = 1, args = [300])]
fn check_without_switching_direct(bencher: divan::Bencher, n: usize) {
    let p = plant(n);
    bencher.bench_local(|| {
        run_check(&p, &options(false, Evaluation::Direct))
            .expect("runs")
            .limit_rows
            .len()
    });
}

/// The 300-bus plant with its converter loads on the first `buses` converter buses only
/// (0 = none, 200 = all): how the check scales with injection buses.
#[divan::bench(sample_count = 3, sample_size = 1, args = [0, 10, 50, 100, 200])]
fn by_injection_buses(bencher: divan::Bencher, buses: usize) {
    let mut p = plant(300);
    let mut kept = 0;
    p.loads.retain(|l| {
        if l.kind != LoadType::Custom {
            return true;
        }
        kept += 1;
        kept <= buses
    });
    bencher.bench_local(|| {
        let res = run_check(&p, &options(false, Evaluation::Auto)).expect("runs");
        assert_eq!(res.penetration.injections.buses.len(), buses);
        res.limit_rows.len()
    });
}

/// The whole check under `phasor` summation (every bus exact by superposition).
#[divan::bench(sample_count = 3, sample_size = 1, args = [300])]
fn whole_check_phasor(bencher: divan::Bencher, n: usize) {
    let mut p = plant(n);
    p.study.summation = Summation::Phasor;
    bencher.bench_local(|| {
        run_check(&p, &options(true, Evaluation::Auto))
            .expect("runs")
            .limit_rows
            .len()
    });
}

/// The 300-bus converter plant with every load scaled to 92 MW in all, the supply scaled
/// with it and the transformers by `transformers` times as much (1: sized for the load).
fn heavy_plant(transformers: f64) -> overtone::model::Plant {
    let mut p = plant(300);
    let total: f64 = p.loads.iter().map(|l| l.p_kw()).sum();
    let f = 92_000.0 / total;
    for l in &mut p.loads {
        l.kw *= f;
    }
    for t in &mut p.transformers {
        t.kva *= f * transformers;
    }
    for s in &mut p.sources {
        if let overtone::model::ShortCircuit::Mva(m) = &mut s.short_circuit {
            *m *= f;
        }
    }
    p
}

/// Issue 28's heavy shape: the 300-bus converter plant with every load scaled to 92 MW in
/// all, its transformers and the supply scaled with it (so the plant stays sized for its
/// load), 2,401 configurations × 2 scenarios, the whole check with the switching simulation.
#[divan::bench(sample_count = 3, sample_size = 1)]
fn heavy_92_mw_whole_check(bencher: divan::Bencher) {
    let p = heavy_plant(1.0);
    bencher.bench_local(|| {
        let res = run_check(&p, &options(true, Evaluation::Auto)).expect("runs");
        assert!(res.operating.collapsed.is_empty(), "sized for its load");
        res.limit_rows.len()
    });
}

/// Issue 28's second heavy shape: the same load on transformers of `percent` % of the
/// sized plant's rating, so that some configurations come near voltage collapse.
#[divan::bench(sample_count = 1, sample_size = 1, args = [50, 30])]
fn heavy_92_mw_tight_whole_check(bencher: divan::Bencher, percent: u32) {
    let p = heavy_plant(f64::from(percent) / 100.0);
    bencher.bench_local(|| {
        let res = run_check(&p, &options(true, Evaluation::Auto)).expect("runs");
        eprintln!(
            "transformers at {percent} %: {} of {} operating points collapsed",
            res.operating.collapsed.len(),
            res.operating.points.len()
        );
        res.limit_rows.len()
    });
}

/// Issue 28's many-bank shape: 120 buses with converters on two thirds, 8 banks of `steps`
/// steps 7 % detuned (1 step: 256 configurations; 2: 6,561), 2 supply scenarios, the whole
/// check with the switching simulation. (3 steps, 65,536 configurations, ran over 10 min
/// and 7 GB before it was stopped; 4 steps exceed the configuration limit.)
#[divan::bench(sample_count = 1, sample_size = 1, args = [1, 2])]
fn eight_banks_whole_check(bencher: divan::Bencher, steps: u32) {
    let mut p = with_converters(
        with_two_scenarios(generated_plant(120, 0, 8, steps, 17)),
        17,
    );
    for b in &mut p.banks {
        b.reactor = Reactor::Detuning { percent: 7.0 };
    }
    bencher.bench_local(|| {
        run_check(&p, &options(true, Evaluation::Auto))
            .expect("runs")
            .limit_rows
            .len()
    });
}
