//! The network estimates combined over a recording's events: the source impedance at the
//! fundamental by least squares over the events, the harmonic impedance per order, the
//! background EMF per order, the implied resonance.

use num_complex::Complex64;
use serde::Serialize;

use crate::study::measured::events::{Event, Window};

/// The spread of one estimate over the events.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Spread {
    pub min: f64,
    pub max: f64,
    /// Sample standard deviation (0 with one event).
    pub std: f64,
    pub events: usize,
}

impl Spread {
    /// The spread of `xs` (finite values only); `None` when there are none.
    pub fn of(xs: impl IntoIterator<Item = f64>) -> Option<Spread> {
        let v: Vec<f64> = xs.into_iter().filter(|x| x.is_finite()).collect();
        if v.is_empty() {
            return None;
        }
        let n = v.len() as f64;
        let mean = v.iter().sum::<f64>() / n;
        let var = if v.len() > 1 {
            v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)
        } else {
            0.0
        };
        Some(Spread {
            min: v.iter().copied().fold(f64::INFINITY, f64::min),
            max: v.iter().copied().fold(f64::NEG_INFINITY, f64::max),
            std: var.sqrt(),
            events: v.len(),
        })
    }
}

/// The least-squares source impedance over the events: Z = −Σ ΔV·ΔI* / Σ |ΔI|² at order
/// `h` (the minimizer of Σ |ΔV + Z·ΔI|²), ohm per phase; `None` without usable events.
pub fn least_squares_z(events: &[Event], h: usize) -> Option<Complex64> {
    let (mut num, mut den) = (Complex64::default(), 0.0);
    for e in events {
        let dv = e.after.v.get(h).copied()? - e.before.v.get(h).copied()?;
        let di = e.after.i[h] - e.before.i[h];
        if dv.is_nan() || di.is_nan() {
            continue;
        }
        num += dv * di.conj();
        den += di.norm_sqr();
    }
    (den > 0.0).then(|| -num / den)
}

/// The measured source impedance at one order, over the events that moved its current.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct OrderImpedance {
    pub order: usize,
    /// Least-squares Z(h) over the events, ohm per phase.
    #[serde(serialize_with = "crate::study::measured::ser_complex")]
    pub z_ohm: Complex64,
    /// The spread of |Z(h)| over the events.
    pub spread: Spread,
    /// The calibrated source model's Z(h) = R·k(h) + j·h·X, ohm per phase.
    #[serde(serialize_with = "crate::study::measured::ser_complex")]
    pub model_z_ohm: Complex64,
}

/// Z(h) per order measured by at least one event, with the calibrated model's beside it
/// (`model(h)`).
pub fn impedances(events: &[Event], model: impl Fn(usize) -> Complex64) -> Vec<OrderImpedance> {
    let mut orders: Vec<usize> = events
        .iter()
        .flat_map(|e| e.harmonic.iter().map(|h| h.order))
        .collect();
    orders.sort_unstable();
    orders.dedup();
    orders
        .into_iter()
        .filter_map(|h| {
            let used: Vec<Event> = events
                .iter()
                .filter(|e| e.harmonic.iter().any(|x| x.order == h))
                .cloned()
                .collect();
            let z = least_squares_z(&used, h)?;
            let spread = Spread::of(events.iter().flat_map(|e| {
                e.harmonic
                    .iter()
                    .filter(|x| x.order == h)
                    .map(|x| x.z_ohm.norm())
            }))?;
            Some(OrderImpedance {
                order: h,
                z_ohm: z,
                spread,
                model_z_ohm: model(h),
            })
        })
        .collect()
}

/// The background EMF behind the source at one order.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct BackgroundEstimate {
    pub order: usize,
    /// |E_h|, % of nominal phase voltage (mean over the windows).
    pub percent: f64,
    /// arg E_h − h·arg E₁, degrees (the Background sheet's angle convention).
    pub angle_deg: f64,
    /// The spread of the % over the windows.
    pub spread: Spread,
    /// The measured harmonic voltage at the recording point in the same windows, %.
    pub measured_v_percent: f64,
}

/// The background EMF per order from steady `windows`: E_h = V_h + Z(h)·I_h (the
/// Thevenin source behind the source impedance, `z(h)`), % of `v_nominal` (V, phase to
/// neutral); orders whose estimate is below 0.05 % are left out.
pub fn background(
    windows: &[&Window],
    z: impl Fn(usize) -> Complex64,
    v_nominal: f64,
) -> Vec<BackgroundEstimate> {
    let Some(first) = windows.first() else {
        return Vec::new();
    };
    let orders = first.v.len();
    (2..orders)
        .filter_map(|h| {
            let mut pct = Vec::new();
            let (mut sum, mut vm) = (Complex64::default(), 0.0);
            for w in windows {
                let e1 = w.v[1] + z(1) * w.i[1];
                let eh = w.v[h] + z(h) * w.i[h];
                if !eh.is_finite() || !e1.is_finite() {
                    continue;
                }
                // Referred to the fundamental EMF's angle, h times.
                let rotated = eh * Complex64::from_polar(1.0, -(h as f64) * e1.arg());
                sum += rotated;
                pct.push(100.0 * eh.norm() / v_nominal);
                vm += 100.0 * w.v[h].norm() / v_nominal;
            }
            let spread = Spread::of(pct.iter().copied())?;
            let n = pct.len() as f64;
            let mean = sum / n;
            let percent = 100.0 * mean.norm() / v_nominal;
            (percent >= 0.05).then(|| BackgroundEstimate {
                order: h,
                percent,
                angle_deg: mean.arg().to_degrees(),
                spread,
                measured_v_percent: vm / n,
            })
        })
        .collect()
}

/// The source's reactance at the fundamental from the measured Z(h): the least-squares
/// slope of Im Z(h) against h through the origin (X(h) = h·X₁ for an inductive source),
/// ohm; `None` without orders.
pub fn reactance_slope(z: &[OrderImpedance], z1: Complex64) -> Option<f64> {
    let (mut num, mut den) = (z1.im, 1.0);
    for o in z {
        let h = o.order as f64;
        num += h * o.z_ohm.im;
        den += h * h;
    }
    (den > 0.0 && num.is_finite()).then_some(num / den)
}
