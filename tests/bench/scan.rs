//! Frequency-scan cost against network size: generated radial networks of 30, 300 and 3,000
//! buses, 4,901 scan points (orders 1 to 50 at 0.01), one 3-step bank. Divide the time per
//! iteration by 4,901 for the per-point cost. Run: `cargo bench --bench scan`.

use overtone::network::Network;
use overtone::solve::Engine;
use overtone::study::{Scan, ScanGrid, all_configurations};
use overtone::synthetic::generated_plant;

fn main() {
    divan::main();
}

/// Factorization of Y₀(h) and the impedance columns at the PCC and the bank bus, at every
/// point of the grid (the per-point work of every scan).
#[divan::bench(args = [30, 300, 3000], sample_count = 5, sample_size = 1)]
fn points_4901(bencher: divan::Bencher, buses: usize) {
    let plant = generated_plant(buses, 0, 1, 3, 7);
    let net = Network::build(&plant).expect("connected");
    let interest = [0, net.banks[0].bus];
    let engine = Engine::new(&net, &interest);
    let grid = ScanGrid::new(50.0, 0.01);
    bencher.bench_local(|| {
        let mut acc = 0.0;
        for &h in &grid.orders {
            let p = engine.point(h, 0).expect("nonsingular");
            for n in 0..=3 {
                acc += p.driving_point_pu(&[n]).expect("finite")[0].norm();
            }
        }
        divan::black_box(acc)
    });
}

/// The whole scan: every configuration (0..3 steps) at the PCC and the bank bus, peaks and
/// dips refined.
#[divan::bench(args = [30, 300, 3000], sample_count = 3, sample_size = 1)]
fn full_scan_4901(bencher: divan::Bencher, buses: usize) {
    let plant = generated_plant(buses, 0, 1, 3, 7);
    let net = Network::build(&plant).expect("connected");
    let interest = vec![0, net.banks[0].bus];
    let engine = Engine::new(&net, &interest);
    let configs = all_configurations(&plant.banks);
    bencher.bench_local(|| {
        Scan::run(
            &engine,
            ScanGrid::new(50.0, 0.01),
            configs.clone(),
            interest.clone(),
        )
        .expect("scan")
    });
}
