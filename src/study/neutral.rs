//! The neutral current of 4-wire loads: at a bus where phase-to-neutral loads inject
//! triplen (zero-sequence) orders, the three phases' triplen currents add in the neutral,
//! I_N,h = 3·I₀,h (symmetrical components, textbook), so the neutral can carry more than a
//! phase conductor. Per bus: the rms over the zero-sequence orders, √(Σ I_N,h²), of the
//! loads' own triplen currents (combined at the bus by the summation law, as injected),
//! against the Buses sheet's `Neutral rating (A)` when given. The fundamental neutral
//! current of unbalanced loading is not modelled (balanced study).

use serde::Serialize;

use super::injections::Injections;
use super::penetration::amps_per_pu;
use crate::model::{Plant, Sequence};
use crate::network::Network;

/// One bus's neutral current.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NeutralRow {
    pub bus: String,
    /// Neutral rms current of the bus's 4-wire loads, A: √(Σ (3·I₀,h)²).
    pub rms_a: f64,
    /// Its largest order and that order's neutral current, A.
    pub worst_order: f64,
    pub worst_a: f64,
    /// `Neutral rating (A)`, when given.
    pub rating_a: Option<f64>,
    /// rms above the rating.
    pub exceeds: bool,
}

/// The neutral current of every bus whose 4-wire loads inject zero-sequence orders.
pub fn neutral_rows(plant: &Plant, net: &Network, inj: &Injections) -> Vec<NeutralRow> {
    let mut out = Vec::new();
    for (c, &bus) in inj.buses.iter().enumerate() {
        let amps = amps_per_pu(net.buses[bus].kv);
        let mut sum = 0.0;
        let (mut worst_order, mut worst_a) = (0.0, 0.0);
        for (o, &h) in inj.orders.iter().enumerate() {
            if inj.sequences.get(o) != Some(&Sequence::Zero) {
                continue;
            }
            let i_n = 3.0 * inj.current_pu[o][c] * amps;
            sum += i_n * i_n;
            if i_n > worst_a {
                (worst_order, worst_a) = (h, i_n);
            }
        }
        if worst_a <= 0.0 {
            continue;
        }
        let rms_a = sum.sqrt();
        let id = &net.buses[bus].id;
        let rating_a = (plant.buses.iter())
            .find(|b| &b.id == id)
            .and_then(|b| b.neutral_rating_a);
        out.push(NeutralRow {
            bus: id.clone(),
            rms_a,
            worst_order,
            worst_a,
            rating_a,
            exceeds: rating_a.is_some_and(|r| rms_a > r),
        });
    }
    out
}
