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

use std::sync::atomic::{AtomicU64, Ordering};

use num_complex::Complex64;
use rayon::prelude::*;
use serde::Serialize;

use super::Configuration;
use crate::solve::{ComboPlan, Engine, PointSolution, Scratch, SolveError};

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
    /// Z₀ per scenario and grid point.
    points: Vec<Vec<PointSolution>>,
    /// Impedance base of each scanned bus, ohm.
    z_base: Vec<f64>,
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
            Some(1.0) => Ok(self.points[s][0].clone()),
            _ => engine.point(1.0, s),
        }
    }

    /// Z₀ (no banks) of scenario `s` at grid point `i`.
    pub fn point(&self, s: usize, i: usize) -> &PointSolution {
        &self.points[s][i]
    }

    /// Z(h) in ohm at every grid order for scenario `s`, configuration `c`, scanned bus `b`,
    /// recomputed from the kept points; `None` if the configuration is singular somewhere.
    pub fn curve(&self, s: usize, c: usize, b: usize) -> Option<Vec<Complex64>> {
        let steps = &self.configurations[c].steps;
        let mut scratch = Scratch::default();
        self.points[s]
            .iter()
            .map(|p| {
                let one = p.for_bus(b);
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
        Scan::run_with(engine, grid, configurations, progress, None)
    }

    /// [`Scan::run`], taking the points of Y₀ from `known` where it holds them for the same
    /// network (see [`KnownPoints`]).
    pub fn run_with(
        engine: &Engine<'_>,
        grid: ScanGrid,
        configurations: Vec<Configuration>,
        progress: &(dyn Fn(u64, u64) + Sync),
        known: Option<(&KnownPoints, usize)>,
    ) -> Result<Scan, SolveError> {
        let net = engine.network();
        let buses = engine.interest().to_vec();
        let nb = buses.len();
        let nc = configurations.len();
        let ns = net.scenarios.len();
        let z_base: Vec<f64> = buses.iter().map(|&i| net.buses[i].z_base_ohm).collect();
        let points = match known {
            Some((known, network)) => known.points(engine, &grid, network)?,
            None => solve_points(engine, &grid)?,
        };
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
            z_base: &z_base,
        };
        let results: Vec<Vec<Series>> = tasks
            .par_iter()
            .map(|&(s, chunk)| {
                let r = ctx.block(s, chunk);
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
            z_base,
        })
    }
}

/// Z₀ at every grid point of every scenario (in parallel over points).
fn solve_points(
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
    /// The points of `engine`'s network on `grid`: kept ones with this plant's step
    /// admittances, or solved and kept.
    fn points(
        &self,
        engine: &Engine<'_>,
        grid: &ScanGrid,
        network: usize,
    ) -> Result<Vec<Vec<PointSolution>>, SolveError> {
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
                let mut points = (*kept).clone();
                for p in points.iter_mut().flatten() {
                    let h = p.order;
                    engine.y_steps_into(h, p.y_step_mut());
                }
                return Ok(points);
            }
        }
        let points = solve_points(engine, grid)?;
        if let Ok(mut m) = self.kept.lock() {
            m.insert(key, std::sync::Arc::new(points.clone()));
        }
        Ok(points)
    }
}

struct Ctx<'a, 'e> {
    engine: &'a Engine<'e>,
    grid: &'a ScanGrid,
    configurations: &'a [Configuration],
    points: &'a [Vec<PointSolution>],
    z_base: &'a [f64],
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
    fn block(&self, s: usize, chunk: &[usize]) -> Result<Vec<Series>, SolveError> {
        let nb = self.z_base.len();
        let np = self.grid.orders.len();
        let combos: Vec<&[u32]> = chunk
            .iter()
            .map(|&c| &self.configurations[c].steps[..])
            .collect();
        let plan = ComboPlan::new(&combos);
        let mut mags = vec![0.0f64; chunk.len() * nb * np];
        let mut out = vec![Complex64::default(); chunk.len() * nb];
        let mut scratch = Scratch::default();
        for (i, p) in self.points[s].iter().enumerate() {
            if !p.evaluate(&plan, &mut scratch, &mut out) {
                return Err(self.singular(s, p.order));
            }
            // out is slot-major, bus-minor.
            for (j0, zs) in (0..).step_by(nb).zip(out.chunks_exact(nb)) {
                for (b, (z, base)) in zs.iter().zip(self.z_base).enumerate() {
                    mags[(j0 + b) * np + i] = (z.re * z.re + z.im * z.im).sqrt() * base;
                }
            }
        }
        let mut series = Vec::with_capacity(chunk.len() * nb);
        let work = std::cell::RefCell::new(Work::default());
        for (slot, &c) in chunk.iter().enumerate() {
            let one = ComboPlan::new(&[&self.configurations[c].steps[..]]);
            for b in 0..nb {
                let curve = &mags[(slot * nb + b) * np..(slot * nb + b + 1) * np];
                let eval = |h: f64| self.exact(s, b, h, &one, &mut work.borrow_mut());
                let candidates = local_extrema(curve);
                series.push(Series {
                    scenario: s,
                    configuration: c,
                    bus: b,
                    peaks: extrema(&self.grid.orders, curve, true, &candidates.0, &eval)?,
                    dips: extrema(&self.grid.orders, curve, false, &candidates.1, &eval)?,
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

/// What refining the curves of one block reuses from one evaluation to the next: the
/// interpolated point and the plan's states (no allocation per evaluation).
#[derive(Default)]
struct Work {
    point: Option<PointSolution>,
    scratch: Scratch,
}

type Eval<'a> = dyn Fn(f64) -> Result<(Complex64, Complex64), SolveError> + 'a;

/// Tolerance of the refined order (the result is within it of the true extremum of the
/// evaluated curve, well inside the promised 0.001).
const REFINE_TOL: f64 = 1e-5;

/// Brent's method: the minimum of `f` on [a, b] to within `tol` (parabolic steps with a
/// golden-section fallback). Returns (x, f(x)).
fn brent(
    f: &mut dyn FnMut(f64) -> Result<f64, SolveError>,
    mut a: f64,
    mut b: f64,
    x0: f64,
    f0: f64,
    tol: f64,
) -> Result<(f64, f64), SolveError> {
    const CGOLD: f64 = 0.381_966_011_250_105;
    let (mut x, mut w, mut v) = (x0, x0, x0);
    let (mut fx, mut fw, mut fv) = (f0, f0, f0);
    let (mut d, mut e) = (0.0f64, 0.0f64);
    for _ in 0..60 {
        let xm = 0.5 * (a + b);
        let tol1 = tol;
        let tol2 = 2.0 * tol1;
        if (x - xm).abs() <= tol2 - 0.5 * (b - a) {
            break;
        }
        let mut golden = true;
        if e.abs() > tol1 {
            let r = (x - w) * (fx - fv);
            let mut q = (x - v) * (fx - fw);
            let mut p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            }
            q = q.abs();
            let etemp = e;
            e = d;
            if p.abs() < (0.5 * q * etemp).abs() && p > q * (a - x) && p < q * (b - x) {
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = tol1.copysign(xm - x);
                }
                golden = false;
            }
        }
        if golden {
            e = if x >= xm { a - x } else { b - x };
            d = CGOLD * e;
        }
        let u = if d.abs() >= tol1 {
            x + d
        } else {
            x + tol1.copysign(d)
        };
        let fu = f(u)?;
        if fu <= fx {
            if u >= x {
                a = x;
            } else {
                b = x;
            }
            (v, w, x) = (w, x, u);
            (fv, fw, fx) = (fw, fx, fu);
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                (v, w) = (w, u);
                (fv, fw) = (fw, fu);
            } else if fu <= fv || v == x || v == w {
                v = u;
                fv = fu;
            }
        }
    }
    Ok((x, fx))
}

/// The interior grid points of `mags` that are local maxima (above the point before, not
/// below the point after) and local minima (the reverse), in one pass: (maxima, minima).
// The negated comparisons are meant: a NaN after the point does not stop it counting.
#[allow(clippy::neg_cmp_op_on_partial_ord)]
fn local_extrema(mags: &[f64]) -> (Vec<usize>, Vec<usize>) {
    let (mut maxima, mut minima) = (Vec::new(), Vec::new());
    for (i, w) in mags.windows(3).enumerate() {
        let (l, m, r) = (w[0], w[1], w[2]);
        // Non-short-circuit `&`: the comparisons are cheap and rarely true, and a branch per
        // comparison costs more than both.
        if (m > l) & !(r > m) {
            maxima.push(i + 1);
        }
        if (m < l) & !(r < m) {
            minima.push(i + 1);
        }
    }
    (maxima, minima)
}

/// Of `mags` (|Z| in ohm on the grid), the local maxima (`peaks`) or minima at the grid
/// points `at` (from [`local_extrema`]), each refined by Brent's method on
/// [h_{i−1}, h_{i+1}] with the evaluator `eval(h) = (Z, Z_none)`.
fn extrema(
    orders: &[f64],
    mags: &[f64],
    peaks: bool,
    at: &[usize],
    eval: &Eval<'_>,
) -> Result<Vec<Extremum>, SolveError> {
    let sign = if peaks { -1.0 } else { 1.0 };
    let mut out = Vec::new();
    for &i in at {
        let m = mags[i];
        // The evaluation at the best order so far, kept: Brent's answer is one of the orders
        // it evaluated (or the grid point, not evaluated here), so its Z needs no second
        // evaluation (used only when the orders are equal bit for bit).
        let mut kept: Option<(f64, Complex64, Complex64, f64)> = None;
        let mut objective = |h: f64| -> Result<f64, SolveError> {
            let (z, z0) = eval(h)?;
            let v = sign * z.norm();
            if kept.is_none_or(|k| v <= k.3) {
                kept = Some((h, z, z0, v));
            }
            Ok(v)
        };
        let (h, best) = brent(
            &mut objective,
            orders[i - 1],
            orders[i + 1],
            orders[i],
            sign * m,
            REFINE_TOL,
        )?;
        let (z, z0) = match kept {
            Some((hk, z, z0, _)) if hk.to_bits() == h.to_bits() => (z, z0),
            _ => eval(h)?,
        };
        let zabs = (sign * best).abs();
        let (below, above) = (eval(orders[i - 1])?.0.im, eval(orders[i + 1])?.0.im);
        let phase_crosses_zero = if peaks {
            below > 0.0 && above < 0.0
        } else {
            below < 0.0 && above > 0.0
        };
        out.push(Extremum {
            order: h,
            z_ohm: zabs,
            angle_deg: z.arg().to_degrees(),
            amplification: z.norm() / z0.norm().max(f64::MIN_POSITIVE),
            sharpness: sharpness(orders, mags, h, zabs, peaks, eval)?,
            phase_crosses_zero,
        });
    }
    Ok(out)
}

/// Q = h / Δh at the half-power level (see [`Extremum::sharpness`]). A crossing three or
/// more grid steps from the extremum is placed by linear interpolation on the grid; a
/// nearer one (a peak the grid barely resolves) by bisection with the evaluator to 1e-5.
fn sharpness(
    orders: &[f64],
    mags: &[f64],
    h: f64,
    z: f64,
    peaks: bool,
    eval: &Eval<'_>,
) -> Result<Option<f64>, SolveError> {
    let level = if peaks {
        z / 2f64.sqrt()
    } else {
        z * 2f64.sqrt()
    };
    let inside = |v: f64| if peaks { v >= level } else { v <= level };
    let near = |a: f64, b: f64| (a - b).abs() < 3.0 * (orders[1] - orders[0]).abs();
    let cross = |j_out: usize, j_in: usize| -> Result<f64, SolveError> {
        let (o_out, o_in) = (orders[j_out], orders[j_in]);
        if !near(o_in, h) && inside(mags[j_in]) {
            let t = (mags[j_in] - level) / (mags[j_in] - mags[j_out]);
            return Ok(o_in + t * (o_out - o_in));
        }
        let (mut a_out, mut b_in) = (o_out, if inside(mags[j_in]) { o_in } else { h });
        while (b_in - a_out).abs() > 1e-5 {
            let mid = 0.5 * (a_out + b_in);
            if inside(eval(mid)?.0.norm()) {
                b_in = mid;
            } else {
                a_out = mid;
            }
        }
        Ok(0.5 * (a_out + b_in))
    };
    if orders.len() < 2 {
        return Ok(None);
    }
    // Left: the nearest grid point below h outside the level (the grid ascends: found by
    // bisection).
    let Some(mut a) = orders.partition_point(|&o| o <= h).checked_sub(1) else {
        return Ok(None);
    };
    while a > 0 && inside(mags[a]) {
        a -= 1;
    }
    if inside(mags[a]) {
        return Ok(None);
    }
    let left = cross(a, (a + 1).min(orders.len() - 1))?;
    let mut b = orders.partition_point(|&o| o < h);
    if b == orders.len() {
        return Ok(None);
    }
    while b + 1 < orders.len() && inside(mags[b]) {
        b += 1;
    }
    if inside(mags[b]) {
        return Ok(None);
    }
    let right = cross(b, b.saturating_sub(1))?;
    let width = right - left;
    Ok((width > 0.0).then(|| h / width))
}
