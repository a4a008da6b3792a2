//! Frequency scan: driving-point impedance |Z(h)| and its angle at chosen buses over the
//! scan grid, for every scenario × configuration; parallel-resonance peaks (local maxima
//! of |Z|) and series-resonance dips (local minima) found on the grid and refined by
//! Brent's method to better than 0.001 order.
//!
//! Work and memory: Z₀ at the bank buses and buses of interest is solved once per grid point
//! and scenario (in parallel over points) and kept; configurations are then taken in blocks
//! (in parallel over blocks), each block's curves evaluated from the kept points by the
//! step-combination plan, analysed and dropped. Only peaks and dips stay; a curve asked for
//! (CSV, chart) is recomputed from the kept points by [`Scan::curve`]. Results do not depend
//! on the number of threads.

use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};

use num_complex::Complex64;
use rayon::prelude::*;
use serde::Serialize;

use super::Configuration;
use crate::solve::{
    BATCH_POINTS, ComboPlan, Engine, PointBatch, PointSolution, Scratch, SolveError,
};

mod known;
mod refine;
pub use known::KnownPoints;
use known::solve_points;
use refine::{extrema, local_extrema_in};

/// The scan grid: orders 1 + i·step up to the highest order, which is included even when
/// it is off the grid (input contract, "Outputs that other tools read").
#[derive(Debug, Clone, PartialEq)]
pub struct ScanGrid {
    pub orders: Vec<f64>,
}

impl ScanGrid {
    /// Orders 1 + i·step, each rounded to 1e-9 so that decimal steps print as written
    /// (1.15, not 1.1500000000000001), then `highest` itself.
    pub fn new(highest: f64, step: f64) -> Self {
        let mut orders = Vec::new();
        let mut i = 0u64;
        loop {
            let h = ((1.0 + i as f64 * step) * 1e9).round() / 1e9;
            if h > highest + 1e-9 {
                break;
            }
            orders.push(h);
            i += 1;
        }
        if orders
            .last()
            .is_none_or(|&last| (last - highest).abs() > 1e-9)
        {
            orders.push(highest);
        }
        ScanGrid { orders }
    }
}

/// A refined peak or dip of one impedance curve.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Extremum {
    /// Harmonic order, refined to better than 0.001.
    pub order: f64,
    /// |Z| at that order, ohm per phase at the bus's nominal kV.
    pub z_ohm: f64,
    /// Angle of Z, degrees.
    pub angle_deg: f64,
    /// |Z| with the configuration / |Z| of the same scenario with no banks, same order.
    pub amplification: f64,
    /// Sharpness Q = h / Δh, Δh the width between the orders where |Z| crosses |Z_peak|/√2
    /// (peaks) or √2·|Z_dip| (dips), the half-power bandwidth; `None` when the curve does not
    /// cross that level on both sides within the scan.
    pub sharpness: Option<f64>,
    /// Peaks: the angle of Z is positive (inductive) at the grid point below and negative
    /// (capacitive) at the grid point above, as across a parallel resonance, lossless ones
    /// included (whose angle jumps from +90° to −90°). Dips: the reverse.
    pub phase_crosses_zero: bool,
}

/// The peaks and dips of one bus in one scenario and configuration.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    pub scenario: usize,
    pub configuration: usize,
    /// Index into [`Scan::buses`].
    pub bus: usize,
    pub peaks: Vec<Extremum>,
    pub dips: Vec<Extremum>,
}

/// The whole scan.
#[derive(Debug, Clone)]
pub struct Scan {
    pub grid: ScanGrid,
    /// Scenario names.
    pub scenarios: Vec<String>,
    pub configurations: Vec<Configuration>,
    /// Network bus indices scanned (the engine's buses of interest).
    pub buses: Vec<usize>,
    /// One series per scenario × configuration × bus, in that nesting order.
    pub series: Vec<Series>,
    /// Z₀ per scenario and grid point (shared with the search's kept points: their step
    /// admittances may be another plant's; this plant's are `y_steps`).
    points: Arc<Vec<Vec<PointSolution>>>,
    /// Each bank's one-step admittance at every grid point, per unit.
    y_steps: Vec<Vec<Complex64>>,
    /// Impedance base of each scanned bus, ohm.
    z_base: Vec<f64>,
}

/// How a scan may save work ([`Scan::run_with`]).
#[derive(Clone, Copy)]
pub struct ScanOptions<'a> {
    /// Points of Y₀ kept from scans of the same network without banks, and its number.
    pub known: Option<(&'a KnownPoints, usize)>,
    /// Find and refine the series-resonance dips (`false`: a run that reads the peaks alone,
    /// such as a search's prescreen; every `dips` is then empty).
    pub dips: bool,
}

impl Default for ScanOptions<'_> {
    fn default() -> Self {
        ScanOptions {
            known: None,
            dips: true,
        }
    }
}

/// Bytes of curve magnitudes one block of configurations may hold while it is analysed.
const BLOCK_BYTES: usize = 16 << 20;

impl Scan {
    /// The series of scenario `s`, configuration `c`, scanned bus `b`.
    pub fn series(&self, s: usize, c: usize, b: usize) -> &Series {
        let nb = self.buses.len();
        &self.series[(s * self.configurations.len() + c) * nb + b]
    }

    /// Z₀ (no banks) of scenario `s` at the fundamental: the grid's first point (the grid
    /// starts at order 1), else solved afresh.
    pub fn fundamental(&self, engine: &Engine<'_>, s: usize) -> Result<PointSolution, SolveError> {
        match self.grid.orders.first() {
            Some(1.0) => {
                let mut p = self.points[s][0].clone();
                p.y_step_mut().clone_from(&self.y_steps[0]);
                Ok(p)
            }
            _ => engine.point(1.0, s),
        }
    }

    /// Z(h) in ohm at every grid order for scenario `s`, configuration `c`, scanned bus `b`,
    /// recomputed from the kept points; `None` if the configuration is singular somewhere.
    pub fn curve(&self, s: usize, c: usize, b: usize) -> Option<Vec<Complex64>> {
        let steps = &self.configurations[c].steps;
        let mut scratch = Scratch::default();
        (self.points[s].iter().zip(&self.y_steps))
            .map(|(p, y)| {
                let mut one = p.for_bus(b);
                one.y_step_mut().clone_from(y);
                let mut z = [Complex64::default()];
                one.driving_point_into(steps, &mut scratch, &mut z)
                    .then(|| z[0] * self.z_base[b])
            })
            .collect()
    }

    /// Runs the scan of the engine's buses of interest for every scenario and configuration.
    /// `progress(done, total)` is called as blocks of configurations finish.
    pub fn run(
        engine: &Engine<'_>,
        grid: ScanGrid,
        configurations: Vec<Configuration>,
        progress: &(dyn Fn(u64, u64) + Sync),
    ) -> Result<Scan, SolveError> {
        Scan::run_with(
            engine,
            grid,
            configurations,
            progress,
            ScanOptions::default(),
        )
    }

    /// [`Scan::run`] with `options`: the points of Y₀ taken from kept ones where they are
    /// the same network's (see [`KnownPoints`]), the dips left out when no one reads them.
    pub fn run_with(
        engine: &Engine<'_>,
        grid: ScanGrid,
        configurations: Vec<Configuration>,
        progress: &(dyn Fn(u64, u64) + Sync),
        options: ScanOptions<'_>,
    ) -> Result<Scan, SolveError> {
        let ScanOptions { known, dips } = options;
        let net = engine.network();
        let buses = engine.interest().to_vec();
        let nb = buses.len();
        let nc = configurations.len();
        let ns = net.scenarios.len();
        let z_base: Vec<f64> = buses.iter().map(|&i| net.buses[i].z_base_ohm).collect();
        let points = match known {
            Some((known, network)) => known.points(engine, &grid, network)?,
            None => Arc::new(solve_points(engine, &grid)?),
        };
        let y_steps: Vec<Vec<Complex64>> = grid.orders.iter().map(|&h| engine.y_steps(h)).collect();
        let mut order: Vec<usize> = (0..nc).collect();
        order.sort_by(|&a, &b| configurations[a].steps.cmp(&configurations[b].steps));
        let per_block = (BLOCK_BYTES / (grid.orders.len() * nb.max(1) * 8)).clamp(1, 256);
        let tasks: Vec<(usize, &[usize])> = (0..ns)
            .flat_map(|s| order.chunks(per_block).map(move |chunk| (s, chunk)))
            .collect();
        let total = tasks.len() as u64;
        let done = AtomicU64::new(0);
        let ctx = Ctx {
            engine,
            grid: &grid,
            configurations: &configurations,
            points: &points,
            y_steps: &y_steps,
            z_base: &z_base,
            dips,
        };
        let results: Vec<Vec<Series>> = tasks
            .par_iter()
            .map_init(BlockWork::default, |w, &(s, chunk)| {
                let r = ctx.block(s, chunk, w);
                progress(done.fetch_add(1, Ordering::Relaxed) + 1, total);
                r
            })
            .collect::<Result<_, _>>()?;
        let mut slots: Vec<Option<Series>> = vec![None; ns * nc * nb];
        for series in results.into_iter().flatten() {
            let idx = (series.scenario * nc + series.configuration) * nb + series.bus;
            slots[idx] = Some(series);
        }
        let series = slots.into_iter().flatten().collect();
        Ok(Scan {
            grid,
            scenarios: net.scenarios.iter().map(|s| s.name.clone()).collect(),
            configurations,
            buses,
            series,
            points,
            y_steps,
            z_base,
        })
    }
}

struct Ctx<'a, 'e> {
    engine: &'a Engine<'e>,
    grid: &'a ScanGrid,
    configurations: &'a [Configuration],
    points: &'a [Vec<PointSolution>],
    y_steps: &'a [Vec<Complex64>],
    z_base: &'a [f64],
    /// Refine the dips (else every series' `dips` stays empty).
    dips: bool,
}

impl Ctx<'_, '_> {
    fn singular(&self, scenario: usize, order: f64) -> SolveError {
        SolveError::Singular {
            scenario: self.engine.network().scenarios[scenario].name.clone(),
            order,
            bus: String::new(),
        }
    }

    /// Curves of the configurations `chunk` in scenario `s`, analysed.
    fn block(
        &self,
        s: usize,
        chunk: &[usize],
        w: &mut BlockWork,
    ) -> Result<Vec<Series>, SolveError> {
        let nb = self.z_base.len();
        let np = self.grid.orders.len();
        let combos: Vec<&[u32]> = chunk
            .iter()
            .map(|&c| &self.configurations[c].steps[..])
            .collect();
        let plan = ComboPlan::new(&combos);
        // Every magnitude of the block is written before it is read: the buffer of the last
        // block is reused as it is.
        let len = chunk.len() * nb * np;
        if w.mags.len() < len {
            w.mags.resize(len, 0.0);
        }
        let BlockWork {
            mags,
            batch,
            work,
            candidates,
        } = w;
        let mags = &mut mags[..len];
        let curves = chunk.len() * nb;
        candidates.resize_with(curves, Default::default);
        candidates.iter_mut().for_each(|(max, min)| {
            max.clear();
            min.clear();
        });
        // The curves' magnitudes batch of points after batch (the same values as point by
        // point, bit for bit; see `solve::batch`), and each curve's local extrema among the
        // points whose neighbours are written, while they are still in cache.
        let batches = (self.points[s].chunks(BATCH_POINTS)).zip(self.y_steps.chunks(BATCH_POINTS));
        for (first, (points, y_steps)) in (0..).step_by(BATCH_POINTS).zip(batches) {
            batch.load(points, y_steps);
            if let Err(t) = batch.magnitudes(&plan, self.z_base, mags, (np, first)) {
                return Err(self.singular(s, points[t].order));
            }
            let (from, to) = (first.max(1) - 1, first + points.len() - 1);
            for (curve, (max, min)) in mags.chunks_exact(np.max(1)).zip(candidates.iter_mut()) {
                local_extrema_in(curve, (from.max(1), to), max, min);
            }
        }
        let mut series = Vec::with_capacity(chunk.len() * nb);
        let work = std::cell::RefCell::new(work);
        for (slot, &c) in chunk.iter().enumerate() {
            let one = ComboPlan::new(&[&self.configurations[c].steps[..]]);
            for b in 0..nb {
                let curve = &mags[(slot * nb + b) * np..(slot * nb + b + 1) * np];
                let eval = |h: f64| self.exact(s, b, h, &one, &mut work.borrow_mut());
                let candidates = &candidates[slot * nb + b];
                series.push(Series {
                    scenario: s,
                    configuration: c,
                    bus: b,
                    peaks: extrema(&self.grid.orders, curve, true, &candidates.0, &eval)?,
                    dips: if self.dips {
                        extrema(&self.grid.orders, curve, false, &candidates.1, &eval)?
                    } else {
                        Vec::new()
                    },
                });
            }
        }
        Ok(series)
    }

    /// (Z, Z without banks) in ohm at order h for the configuration of `plan`, bus `b`, from
    /// Z₀ interpolated through the four grid points around h and the banks' exact admittances.
    fn exact(
        &self,
        s: usize,
        b: usize,
        h: f64,
        plan: &ComboPlan,
        work: &mut Work,
    ) -> Result<(Complex64, Complex64), SolveError> {
        let orders = &self.grid.orders;
        let n = orders.len();
        let start = if n < 4 {
            0
        } else {
            orders
                .partition_point(|&o| o <= h)
                .saturating_sub(2)
                .min(n - 4)
        };
        let near = &self.points[s][start..(start + 4).min(n)];
        let Work { point, scratch } = work;
        let point = point.get_or_insert_with(|| near[0].clone());
        point.interpolate_bus_from(near, h, b);
        self.engine.y_steps_into(h, point.y_step_mut());
        let mut z = [Complex64::default()];
        if !point.evaluate(plan, scratch, &mut z) {
            return Err(self.singular(s, h));
        }
        Ok((z[0] * self.z_base[b], point.z0_pu(0) * self.z_base[b]))
    }
}

/// What one task of the scan reuses from block to block: the curves' magnitudes, the batch
/// of points and the refinement's work.
#[derive(Default)]
struct BlockWork {
    mags: Vec<f64>,
    batch: PointBatch,
    work: Work,
    /// Per curve of the block: its local maxima and minima (grid indices, ascending).
    candidates: Vec<(Vec<usize>, Vec<usize>)>,
}

/// What refining the curves of one block reuses from one evaluation to the next: the
/// interpolated point and the plan's states (no allocation per evaluation).
#[derive(Default)]
struct Work {
    point: Option<PointSolution>,
    scratch: Scratch,
}
