//! Reading the input workbook: a generated plant of 300 buses with 10,000, 100,000 and
//! 1,000,000 loads, written by the project's own writer and read back (calamine, cell
//! checks, plant validation). Time per read shows whether the reader is linear in rows.
//! Before the timings, each size is read once in a child process that reports its peak
//! resident memory (VmHWM), the figure the reader's bound of 1 GB is held to.
//! Run: `cargo bench --bench reader` (writing the 1,000,000-row workbook takes about 15 s
//! and 1.5 GB once; the files are kept under target/bench-data).

#[path = "../support/synthetic.rs"]
mod synthetic;

use std::path::PathBuf;

use overtone::io::template::plant_workbook;
use overtone::io::workbook_in::read_workbook_bytes;
use overtone::model::{Load, LoadType};
use synthetic::generated_plant;

const SIZES: [usize; 3] = [10_000, 100_000, 1_000_000];

fn main() {
    if let Some(path) = std::env::var_os("OVERTONE_BENCH_READ_ONCE") {
        let bytes = std::fs::read(&path).expect("bench workbook");
        let read = read_workbook_bytes("bench.xlsx", "bench", &bytes).expect("reads");
        let loads = read.plant.loads.len();
        drop(read);
        println!("{loads} loads: peak resident memory {} MB", peak_mb());
        return;
    }
    for n in SIZES {
        let path = workbook_file(n);
        let out = std::process::Command::new(std::env::current_exe().expect("bench binary"))
            .env("OVERTONE_BENCH_READ_ONCE", &path)
            .output()
            .expect("child read");
        print!("{}", String::from_utf8_lossy(&out.stdout));
    }
    divan::main();
}

/// Peak resident set size of this process in MB (Linux /proc; 0 elsewhere).
fn peak_mb() -> u64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("VmHWM:"))
                .and_then(|l| l.split_whitespace().nth(1))
                .and_then(|kb| kb.parse::<u64>().ok())
        })
        .map_or(0, |kb| kb / 1024)
}

/// The workbook of `loads` loads, written once under target/bench-data.
fn workbook_file(loads: usize) -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-data");
    let path = dir.join(format!("loads-{loads}.xlsx"));
    if !path.exists() {
        std::fs::create_dir_all(&dir).expect("bench-data folder");
        std::fs::write(&path, workbook(loads)).expect("bench workbook");
    }
    path
}

fn workbook(loads: usize) -> Vec<u8> {
    let mut plant = generated_plant(300, 0, 4, 6, 3);
    plant.loads = (0..loads)
        .map(|i| Load {
            id: format!("L{i}"),
            bus: plant.buses[i % plant.buses.len()].id.clone(),
            kind: if i % 3 == 0 {
                LoadType::SixPulseDrive
            } else {
                LoadType::Motor
            },
            kw: 10.0 + (i % 50) as f64,
            power_factor: 0.9,
            quantity: 1.0,
            load_factor: 0.8,
            spectrum: None,
            wiring: None,
        })
        .collect();
    plant_workbook(&plant).expect("workbook")
}

#[divan::bench(args = SIZES, sample_count = 3, sample_size = 1)]
fn read_loads(bencher: divan::Bencher, loads: usize) {
    let bytes = std::fs::read(workbook_file(loads)).expect("bench workbook");
    bencher.bench_local(|| read_workbook_bytes("bench.xlsx", "bench", &bytes).expect("reads"));
}
