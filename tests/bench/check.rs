//! The whole `overtone check` study (no CSV) of a generated 300-bus plant with 4 banks of 6
//! steps (2,401 configurations) × 2 supply scenarios × 4,901 scan points, peaks and dips at
//! every bank bus and the PCC. Prints the process's peak resident memory afterwards.
//! Run: `cargo bench --bench check`.

use overtone::check::run_check;
use overtone::synthetic::{generated_plant, with_two_scenarios};

fn main() {
    divan::main();
    if let Ok(status) = std::fs::read_to_string("/proc/self/status")
        && let Some(line) = status.lines().find(|l| l.starts_with("VmHWM"))
    {
        println!(
            "peak resident memory of the benchmark process: {}",
            line.trim_start_matches("VmHWM:").trim()
        );
    }
}

#[divan::bench(sample_count = 3, sample_size = 1)]
fn exhaustive_300_buses_2401_configurations(bencher: divan::Bencher) {
    let plant = with_two_scenarios(generated_plant(300, 0, 4, 6, 17));
    assert_eq!(
        overtone::study::all_configurations(&plant.banks).len(),
        2401
    );
    bencher.bench_local(|| {
        let res = run_check(&plant, &Default::default()).expect("runs");
        assert_eq!(res.scan.grid.orders.len(), 4901);
        assert_eq!(res.scan.series.len(), 2 * 2401 * 5);
        res.resonance.rows.len()
    });
}
