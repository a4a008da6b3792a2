//! Reading the input workbook: a generated plant of 300 buses with 10,000 loads, written by
//! the project's own writer and read back (calamine, cell checks, plant validation).
//! Run: `cargo bench --bench reader`.

use overtone::io::template::plant_workbook;
use overtone::io::workbook_in::read_workbook_bytes;
use overtone::model::{Load, LoadType};
use overtone::synthetic::generated_plant;

fn main() {
    divan::main();
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
        })
        .collect();
    plant_workbook(&plant).expect("workbook")
}

#[divan::bench(args = [10_000], sample_count = 5, sample_size = 1)]
fn read_loads(bencher: divan::Bencher, loads: usize) {
    let bytes = workbook(loads);
    bencher.bench_local(|| read_workbook_bytes("bench.xlsx", "bench", &bytes).expect("reads"));
}
