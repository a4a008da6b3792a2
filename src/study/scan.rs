//! Frequency scan: driving-point impedance |Z(h)| and its angle at chosen buses over the
//! scan grid, for every scenario × configuration; parallel-resonance peaks (local maxima
//! of |Z|) and series-resonance dips (local minima) found on the grid and refined by
//! golden-section search to better than 0.001 order.

use num_complex::Complex64;
use serde::Serialize;

use super::Configuration;
use crate::solve::{Engine, PointSolution, Scratch, SolveError};

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
}

/// The scan of one bus in one scenario and configuration.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    pub scenario: usize,
    pub configuration: usize,
    /// Index into [`Scan::buses`].
    pub bus: usize,
    /// Z(h) in ohm at each grid order.
    pub z_ohm: Vec<Complex64>,
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
    /// Network bus indices scanned.
    pub buses: Vec<usize>,
    /// One series per scenario × configuration × bus, in that nesting order.
    pub series: Vec<Series>,
}

impl Scan {
    /// The series of scenario `s`, configuration `c`, scanned bus `b`.
    pub fn series(&self, s: usize, c: usize, b: usize) -> &Series {
        let nb = self.buses.len();
        &self.series[(s * self.configurations.len() + c) * nb + b]
    }

    /// Runs the scan of `buses` (network bus indices) for every scenario and configuration.
    pub fn run(
        engine: &Engine<'_>,
        grid: ScanGrid,
        configurations: Vec<Configuration>,
        buses: Vec<usize>,
    ) -> Result<Scan, SolveError> {
        let net = engine.network();
        let nb = buses.len();
        let nc = configurations.len();
        let ns = net.scenarios.len();
        let z_base: Vec<f64> = buses.iter().map(|&i| net.buses[i].z_base_ohm).collect();
        let pos: Vec<usize> = buses.iter().map(|&b| engine_interest(engine, b)).collect();
        let mut series = Vec::with_capacity(ns * nc * nb);
        for s in 0..ns {
            let mut curves = vec![Vec::with_capacity(grid.orders.len()); nc * nb];
            let mut points = Vec::with_capacity(grid.orders.len());
            let mut scratch = Scratch::default();
            let mut z = vec![Complex64::new(0.0, 0.0); engine.interest().len()];
            for &h in &grid.orders {
                let point = engine.point(h, s)?;
                for (c, cfg) in configurations.iter().enumerate() {
                    if !point.driving_point_into(&cfg.steps, &mut scratch, &mut z) {
                        return Err(singular(engine, s, h));
                    }
                    for b in 0..nb {
                        curves[c * nb + b].push(z[pos[b]] * z_base[b]);
                    }
                }
                points.push(point);
            }
            for (idx, z_ohm) in curves.into_iter().enumerate() {
                let (c, b) = (idx / nb, idx % nb);
                let eval = |h: f64| -> Result<(Complex64, Complex64), SolveError> {
                    let p = near(&grid.orders, &points, h, engine);
                    let z = checked(&p, &configurations[c].steps, h, s, engine)?;
                    let z0 = checked(&p, &[], h, s, engine)?;
                    Ok((z[pos[b]] * z_base[b], z0[pos[b]] * z_base[b]))
                };
                let mags: Vec<f64> = z_ohm.iter().map(|z| z.norm()).collect();
                let peaks = extrema(&grid.orders, &mags, true, &eval)?;
                let dips = extrema(&grid.orders, &mags, false, &eval)?;
                series.push(Series {
                    scenario: s,
                    configuration: c,
                    bus: b,
                    z_ohm,
                    peaks,
                    dips,
                });
            }
        }
        Ok(Scan {
            grid,
            scenarios: net.scenarios.iter().map(|s| s.name.clone()).collect(),
            configurations,
            buses,
            series,
        })
    }
}

/// The point solution at order `h` interpolated through the four grid solutions around it.
fn near(orders: &[f64], points: &[PointSolution], h: f64, engine: &Engine<'_>) -> PointSolution {
    let n = orders.len();
    if n < 4 {
        let idx: Vec<&PointSolution> = points.iter().collect();
        return PointSolution::interpolate(&idx, h, engine.y_steps(h));
    }
    let i = orders.partition_point(|&o| o <= h).saturating_sub(1);
    let start = i.saturating_sub(1).min(n - 4);
    let idx: Vec<&PointSolution> = points[start..start + 4].iter().collect();
    PointSolution::interpolate(&idx, h, engine.y_steps(h))
}

/// Index of network bus `bus` among the engine's buses of interest.
fn engine_interest(engine: &Engine<'_>, bus: usize) -> usize {
    engine
        .interest()
        .iter()
        .position(|&b| b == bus)
        .unwrap_or(0)
}

fn singular(engine: &Engine<'_>, scenario: usize, order: f64) -> SolveError {
    SolveError::Singular {
        scenario: engine.network().scenarios[scenario].name.clone(),
        order,
        bus: String::new(),
    }
}

fn checked(
    p: &PointSolution,
    steps: &[u32],
    order: f64,
    scenario: usize,
    engine: &Engine<'_>,
) -> Result<Vec<Complex64>, SolveError> {
    p.driving_point_pu(steps)
        .ok_or_else(|| singular(engine, scenario, order))
}

/// Width below which golden-section refinement stops, in harmonic order (the result is then
/// within half of it, well inside the promised 0.001).
const REFINE_WIDTH: f64 = 2e-4;

/// Local maxima (`peaks`) or minima of `mags` on the grid, each refined by golden-section
/// search on [h_{i−1}, h_{i+1}] with the exact evaluator `eval(h) = (Z, Z_none)` in ohm.
fn extrema(
    orders: &[f64],
    mags: &[f64],
    peaks: bool,
    eval: &dyn Fn(f64) -> Result<(Complex64, Complex64), SolveError>,
) -> Result<Vec<Extremum>, SolveError> {
    let better = |a: f64, b: f64| if peaks { a > b } else { a < b };
    let mut out = Vec::new();
    for i in 1..mags.len().saturating_sub(1) {
        let (l, m, r) = (mags[i - 1], mags[i], mags[i + 1]);
        if !better(m, l) || better(r, m) {
            continue;
        }
        let objective = |h: f64| -> Result<f64, SolveError> {
            let m = eval(h)?.0.norm();
            Ok(if peaks { m } else { -m })
        };
        let (mut a, mut b) = (orders[i - 1], orders[i + 1]);
        let g = (5f64.sqrt() - 1.0) / 2.0;
        let mut x1 = b - g * (b - a);
        let mut x2 = a + g * (b - a);
        let (mut f1, mut f2) = (objective(x1)?, objective(x2)?);
        while b - a > REFINE_WIDTH {
            if f1 >= f2 {
                b = x2;
                x2 = x1;
                f2 = f1;
                x1 = b - g * (b - a);
                f1 = objective(x1)?;
            } else {
                a = x1;
                x1 = x2;
                f1 = f2;
                x2 = a + g * (b - a);
                f2 = objective(x2)?;
            }
        }
        let (mut h, mut best) = if f1 >= f2 { (x1, f1) } else { (x2, f2) };
        let grid_value = if peaks { m } else { -m };
        if grid_value > best {
            h = orders[i];
            best = grid_value;
        }
        let (z, z0) = eval(h)?;
        let zabs = best.abs();
        out.push(Extremum {
            order: h,
            z_ohm: zabs,
            angle_deg: z.arg().to_degrees(),
            amplification: z.norm() / z0.norm().max(f64::MIN_POSITIVE),
            sharpness: sharpness(orders, mags, h, zabs, peaks, eval)?,
        });
    }
    Ok(out)
}

/// Q = h / Δh at the half-power level (see [`Extremum::sharpness`]). The grid brackets each
/// crossing (or the refined extremum does, for a peak narrower than the grid step) and
/// bisection with the exact evaluator places it to 1e-5 order.
fn sharpness(
    orders: &[f64],
    mags: &[f64],
    h: f64,
    z: f64,
    peaks: bool,
    eval: &dyn Fn(f64) -> Result<(Complex64, Complex64), SolveError>,
) -> Result<Option<f64>, SolveError> {
    let level = if peaks {
        z / 2f64.sqrt()
    } else {
        z * 2f64.sqrt()
    };
    let inside = |v: f64| if peaks { v >= level } else { v <= level };
    let bisect = |mut a_out: f64, mut b_in: f64| -> Result<f64, SolveError> {
        while (b_in - a_out).abs() > 1e-5 {
            let m = 0.5 * (a_out + b_in);
            if inside(eval(m)?.0.norm()) {
                b_in = m;
            } else {
                a_out = m;
            }
        }
        Ok(0.5 * (a_out + b_in))
    };
    // Left: the nearest grid point below h outside the level, going left.
    let mut a = match orders.iter().rposition(|&o| o <= h) {
        Some(a) => a,
        None => return Ok(None),
    };
    while a > 0 && inside(mags[a]) {
        a -= 1;
    }
    if inside(mags[a]) {
        return Ok(None);
    }
    let inner = if a + 1 < orders.len() && orders[a + 1] <= h && inside(mags[a + 1]) {
        orders[a + 1]
    } else {
        h
    };
    let left = bisect(orders[a], inner)?;
    let mut b = match orders.iter().position(|&o| o >= h) {
        Some(b) => b,
        None => return Ok(None),
    };
    while b + 1 < orders.len() && inside(mags[b]) {
        b += 1;
    }
    if inside(mags[b]) {
        return Ok(None);
    }
    let inner = if b > 0 && orders[b - 1] >= h && inside(mags[b - 1]) {
        orders[b - 1]
    } else {
        h
    };
    let right = bisect(orders[b], inner)?;
    let width = right - left;
    Ok((width > 0.0).then(|| h / width))
}
