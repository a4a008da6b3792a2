//! Z₀ at the grid points, solved or kept from an earlier scan of a plant that differs in its
//! banks alone.

use rayon::prelude::*;

use super::ScanGrid;
use crate::solve::{Engine, PointSolution, SolveError};

/// Z₀ at every grid point of every scenario (in parallel over points).
pub(super) fn solve_points(
    engine: &Engine<'_>,
    grid: &ScanGrid,
) -> Result<Vec<Vec<PointSolution>>, SolveError> {
    (0..engine.network().scenarios.len())
        .map(|s| {
            grid.orders
                .par_iter()
                .map(|&h| engine.point(h, s))
                .collect::<Result<Vec<_>, _>>()
        })
        .collect()
}

/// The points of Y₀ (the network without banks) of earlier scans, for scans of plants that
/// differ only in their banks (the plans of a design search): Z₀ at the bank buses and the
/// buses of interest does not depend on the banks, only the step admittances do, and those
/// are evaluated afresh for each plant. Keyed by the caller's network number, the scenarios,
/// the grid and the buses; a hit is used only when the fundamental point solved afresh
/// equals the kept one in every scenario (a wrong number costs a miss, never a wrong scan).
#[derive(Default)]
pub struct KnownPoints {
    kept: std::sync::Mutex<
        std::collections::HashMap<PointsKey, std::sync::Arc<Vec<Vec<PointSolution>>>>,
    >,
}

/// (network number, scenarios, grid orders as bits, bank buses, buses of interest).
type PointsKey = (usize, usize, Vec<u64>, Vec<usize>, Vec<usize>);

impl KnownPoints {
    /// The points of `engine`'s network on `grid`: kept ones (whose step admittances are
    /// the first plant's: the scan holds its own), or solved and kept.
    pub(super) fn points(
        &self,
        engine: &Engine<'_>,
        grid: &ScanGrid,
        network: usize,
    ) -> Result<std::sync::Arc<Vec<Vec<PointSolution>>>, SolveError> {
        let net = engine.network();
        let key: PointsKey = (
            network,
            net.scenarios.len(),
            grid.orders.iter().map(|h| h.to_bits()).collect(),
            net.banks.iter().map(|b| b.bus).collect(),
            engine.interest().to_vec(),
        );
        let kept = self.kept.lock().ok().and_then(|m| m.get(&key).cloned());
        if let Some(kept) = kept {
            let same =
                (0..net.scenarios.len()).all(|s| match (kept[s].first(), grid.orders.first()) {
                    (Some(k), Some(&h)) => engine.point(h, s).is_ok_and(|p| p.same_z0(k)),
                    _ => false,
                });
            if same {
                // Shared as they are: the scan takes the step admittances from this plant.
                return Ok(kept);
            }
        }
        let points = std::sync::Arc::new(solve_points(engine, grid)?);
        if let Ok(mut m) = self.kept.lock() {
            m.insert(key, points.clone());
        }
        Ok(points)
    }
}
