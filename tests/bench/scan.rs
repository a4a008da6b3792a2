//! Scan cost: per grid point against network size (generated radial networks of 30, 300,
//! 3,000 and 30,000 buses), and per configuration and point against the number of banks
//! (k = 1..8 one-step banks on a 300-bus network, all 2^k combinations).
//! Run: `cargo bench --bench scan`.

#[path = "../support/synthetic.rs"]
mod synthetic;

use overtone::network::Network;
use overtone::solve::{ComboPlan, Engine, Scratch};
use overtone::study::{ScanGrid, all_configurations};
use synthetic::generated_plant;

fn main() {
    divan::main();
}

/// Points per iteration: orders 1 to 50 at 0.1 (491 points); divide by 491 for the
/// per-point cost of factorizing Y₀(h) and solving the columns at the PCC and one bank bus.
#[divan::bench(args = [30, 300, 3000, 30000], sample_count = 5, sample_size = 1)]
fn points_491(bencher: divan::Bencher, buses: usize) {
    let plant = generated_plant(buses, 0, 1, 3, 7);
    let net = Network::build(&plant).expect("connected");
    let engine = Engine::new(&net, &[0, net.banks[0].bus]);
    let grid = ScanGrid::new(50.0, 0.1);
    bencher.bench_local(|| {
        grid.orders
            .iter()
            .map(|&h| engine.point(h, 0).expect("nonsingular").z0_pu(0).norm())
            .sum::<f64>()
    });
}

/// Every combination of k one-step banks (2^k) at 491 points, driving points at the PCC and
/// every bank bus; divide by 491·2^k for the cost per configuration and point.
#[divan::bench(args = [1, 2, 3, 4, 5, 6, 7, 8], sample_count = 5, sample_size = 1)]
fn combinations_491(bencher: divan::Bencher, banks: usize) {
    let plant = generated_plant(300, 0, banks, 1, 9);
    let net = Network::build(&plant).expect("connected");
    let mut interest = vec![0];
    interest.extend(net.banks.iter().map(|b| b.bus));
    let engine = Engine::new(&net, &interest);
    let grid = ScanGrid::new(50.0, 0.1);
    let points: Vec<_> = grid
        .orders
        .iter()
        .map(|&h| engine.point(h, 0).expect("point"))
        .collect();
    let configs = all_configurations(&plant.banks);
    let combos: Vec<&[u32]> = configs.iter().map(|c| &c.steps[..]).collect();
    let plan = ComboPlan::new(&combos);
    let mut out = vec![num_complex::Complex64::default(); combos.len() * interest.len()];
    let mut scratch = Scratch::default();
    bencher.bench_local(|| {
        let mut acc = 0.0;
        for p in &points {
            assert!(p.evaluate(&plan, &mut scratch, &mut out));
            acc += out[0].norm();
        }
        acc
    });
}
