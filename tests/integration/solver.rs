//! The sparse LDLᵀ and the step-combination engine against an independent dense solve
//! (nalgebra's LU with partial pivoting, a general-purpose linear-algebra crate).

use nalgebra::{DMatrix, DVector};
use num_complex::Complex64;
use overtone::network::Network;
use overtone::solve::Engine;

use crate::synthetic::generated_plant;

/// Dense Y(h) of `net` in `scenario` with `steps` bank steps, from the network's own stamps.
fn dense_y(net: &Network, order: f64, scenario: usize, steps: &[u32]) -> DMatrix<Complex64> {
    let n = net.buses.len();
    let mut y = DMatrix::<Complex64>::zeros(n, n);
    net.stamp(order, scenario, |i, j, v| {
        y[(i, j)] += v;
        if i != j {
            y[(j, i)] += v;
        }
    });
    for (b, &k) in net.banks.iter().zip(steps) {
        y[(b.bus, b.bus)] += b.y_step_pu(order, net.resistance) * f64::from(k);
    }
    y
}

fn max_rel_err(a: &[Complex64], b: &[Complex64]) -> f64 {
    let scale = b.iter().map(|z| z.norm()).fold(0.0, f64::max);
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y).norm() / scale)
        .fold(0.0, f64::max)
}

/// The sparse solve of unit column `col` and its relative error against the dense LU `lu`.
fn error_against_dense(
    engine: &Engine,
    f: &overtone::solve::Factor,
    lu: &nalgebra::LU<Complex64, nalgebra::Dyn, nalgebra::Dyn>,
    n: usize,
    col: usize,
) -> (f64, Vec<Complex64>) {
    let mut b = vec![Complex64::new(0.0, 0.0); n];
    b[col] = Complex64::new(1.0, 0.0);
    let mut x = b.clone();
    engine.solve(f, &mut x);
    let expected = lu.solve(&DVector::from_vec(b)).expect("dense solve");
    (max_rel_err(&x, expected.as_slice()), x)
}

fn check_network(n: usize, extra: usize, seed: u64) {
    let plant = generated_plant(n, extra, 3, 3, seed);
    plant.validate().expect("generated plant is valid");
    let net = Network::build(&plant).expect("connected");
    let engine = Engine::new(&net, &[0]);
    for &order in &[1.0, 4.73, 13.0, 37.5] {
        let steps = [2u32, 1, 3];
        let f = engine.factor(order, 0, &steps).expect("nonsingular");
        let y = dense_y(&net, order, 0, &steps);
        let lu = y.clone().lu();
        for col in [0, n / 2, n - 1] {
            let (err, x) = error_against_dense(&engine, &f, &lu, n, col);
            // Relative error below 1e-9 against the dense LU.
            assert!(
                err < 1e-9,
                "n={n} extra={extra} h={order} col={col}: {err:e}"
            );
            // Reciprocity: Z_ij = Z_ji (Y is symmetric).
            let mut e0 = vec![Complex64::new(0.0, 0.0); n];
            e0[0] = Complex64::new(1.0, 0.0);
            engine.solve(&f, &mut e0);
            let zij = x[0];
            let zji = e0[col];
            assert!(
                (zij - zji).norm() <= 1e-12 * zij.norm().max(1e-300),
                "reciprocity {zij} {zji}"
            );
            // Passivity: Re Z_kk ≥ 0 for a network of positive resistances.
            assert!(x[col].re >= 0.0, "Re Z = {}", x[col].re);
        }
    }
}

#[test]
fn sparse_equals_dense_radial() {
    for (n, seed) in [(5, 1), (30, 2), (120, 3), (300, 4)] {
        check_network(n, 0, seed);
    }
}

#[test]
fn sparse_equals_dense_meshed() {
    for (n, extra, seed) in [(6, 2, 5), (40, 8, 6), (150, 20, 7), (300, 30, 8)] {
        check_network(n, extra, seed);
    }
}

#[test]
fn combination_engine_equals_refactorization() {
    for (n, extra, seed) in [(12, 0, 11), (80, 6, 12), (300, 15, 13)] {
        let plant = generated_plant(n, extra, 3, 3, seed);
        let net = Network::build(&plant).expect("connected");
        let interest: Vec<usize> = net.banks.iter().map(|b| b.bus).chain([0, n / 3]).collect();
        let engine = Engine::new(&net, &interest);
        for &order in &[1.0, 5.0, 6.37, 11.0, 49.9] {
            let point = engine.point(order, 0).expect("point");
            for steps in [[0u32, 0, 0], [1, 0, 0], [3, 2, 1], [0, 3, 3], [2, 2, 2]] {
                let got = point.driving_point_pu(&steps).expect("nonsingular");
                let f = engine.factor(order, 0, &steps).expect("factor");
                let expected: Vec<Complex64> = interest
                    .iter()
                    .map(|&i| {
                        let mut e = vec![Complex64::new(0.0, 0.0); n];
                        e[i] = Complex64::new(1.0, 0.0);
                        engine.solve(&f, &mut e);
                        e[i]
                    })
                    .collect();
                for (g, e) in got.iter().zip(&expected) {
                    let rel = (g - e).norm() / e.norm();
                    // The compensation result equals a full re-factorization to 1e-9.
                    assert!(rel < 1e-9, "n={n} h={order} steps={steps:?}: {rel:e}");
                }
            }
        }
    }
}

#[test]
fn radial_factor_has_no_fill() {
    // A tree eliminated leaves first fills nothing: L has exactly n − 1 off-diagonals.
    let plant = generated_plant(300, 0, 0, 1, 21);
    let net = Network::build(&plant).expect("connected");
    let engine = Engine::new(&net, &[0]);
    assert_eq!(engine.symbolic().nnz_l(), net.branches.len());
    assert_eq!(net.branches.len(), 299);
}

#[test]
fn skin_resistance_model_scales_r_by_root_h() {
    // Input contract, Sources: Z(h) = R·k(h) + j·h·X with k(h) = √h for `skin` (IEEE task
    // force on harmonic modelling, 1996, from memory) and 1 for `constant`.
    use overtone::model::ResistanceModel;
    use overtone::network::SeriesImpedance;
    use overtone::network::damping::Growth;
    let z = SeriesImpedance::from_magnitude(0.05, 8.0, Growth::Source);
    crate::common::assert_close(z.r_pu, 0.05 / 65f64.sqrt(), 1e-12);
    for h in [1.0, 5.0, 13.7] {
        let skin = z.at(h, ResistanceModel::Skin);
        let constant = z.at(h, ResistanceModel::Constant);
        crate::common::assert_close(skin.re, z.r_pu * h.sqrt(), 1e-12);
        crate::common::assert_close(constant.re, z.r_pu, 1e-12);
        crate::common::assert_close(skin.im, h * z.x_pu, 1e-12);
    }
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig { cases: 24, ..Default::default() })]

    /// Property: the sparse LDLᵀ solve equals nalgebra's dense LU (a general-purpose
    /// linear-algebra crate) to 1e-9 relative on generated radial and meshed networks, at any
    /// order and any step counts.
    #[test]
    fn sparse_equals_dense_on_generated_networks(
        n in 5usize..150,
        extra in 0usize..12,
        seed in 0u64..100_000,
        order in 1.0f64..50.0,
        steps in proptest::collection::vec(0u32..4, 3),
    ) {
        let plant = generated_plant(n, extra, 3, 3, seed);
        let net = Network::build(&plant).expect("connected");
        let engine = Engine::new(&net, &[0]);
        let f = engine.factor(order, 0, &steps).expect("nonsingular");
        let lu = dense_y(&net, order, 0, &steps).lu();
        let col = (seed as usize) % n;
        let (err, _) = error_against_dense(&engine, &f, &lu, n, col);
        proptest::prop_assert!(err < 1e-9, "n={} extra={} h={} col={}: {:e}", n, extra, order, col, err);
    }
}
