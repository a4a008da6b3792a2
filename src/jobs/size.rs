//! The `size` job: one detuned step or tuned filter from a few numbers, no workbook. The
//! request is checked here (every number in range, the units the engineer most likely
//! meant), then sized by [`crate::study::detune`].

use crate::model::{MAX_MAGNITUDE, MIN_MAGNITUDE};
use crate::study::detune::{Sizing, next_standard_rating, p_for_order, size_for_output};

/// What the engineer gives on the command line.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SizeRequest {
    /// Bus voltage, kV line-to-line.
    pub kv: f64,
    /// Effective output wanted at bus voltage, kvar.
    pub kvar: f64,
    /// System frequency, Hz (50 or 60).
    pub hz: f64,
    /// Detuning factor, % of X_C.
    pub detuning: Option<f64>,
    /// Tuned order of a filter.
    pub order: Option<f64>,
    /// Reactor X/R at fundamental.
    pub q: f64,
    /// Capacitor rated voltage, kV.
    pub rated_kv: Option<f64>,
    /// Supply short-circuit power at the bus, MVA.
    pub ssc_mva: Option<f64>,
}

/// A sizing and the warnings to print before it.
#[derive(Debug, Clone, PartialEq)]
pub struct SizeOutcome {
    pub sizing: Sizing,
    /// True when the request gave a tuned order (the table words it as a filter).
    pub tuned: bool,
    pub warnings: Vec<String>,
}

/// A request that cannot be sized: the warnings found before the problem, then the
/// problem in one sentence.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{message}")]
pub struct SizeError {
    pub warnings: Vec<String>,
    pub message: String,
}

/// `--NAME` must be a positive number within the element magnitude range.
fn positive(v: f64, what: &str) -> Result<(), String> {
    if !(v.is_finite() && v > 0.0) {
        Err(format!("--{what} must be a positive number, found {v}"))
    } else if !(MIN_MAGNITUDE..=MAX_MAGNITUDE).contains(&v) {
        Err(format!(
            "--{what} must be between {MIN_MAGNITUDE:e} and {MAX_MAGNITUDE:e}, found {v:e}"
        ))
    } else {
        Ok(())
    }
}

/// Warnings for numbers that validate but look given in the wrong unit: a bus voltage in
/// volts, a detuning factor as a fraction.
fn unit_warnings(r: &SizeRequest) -> Vec<String> {
    let mut warnings = Vec::new();
    if r.kv >= 100.0 {
        warnings.push(format!(
            "warning: --kv is in kV: {} means {} kV; for {} V give --kv {}",
            r.kv,
            r.kv,
            r.kv,
            r.kv / 1000.0
        ));
    }
    if let Some(d) = r.detuning.filter(|&d| (MIN_MAGNITUDE..1.0).contains(&d)) {
        let percent = (d * 100.0 * 1e6).round() / 1e6;
        warnings.push(format!(
            "warning: --detuning is in percent: {d} means p = {d} % (tuned at {:.1}); for {percent} % give --detuning {percent}",
            1.0 / (d / 100.0).sqrt(),
        ));
    }
    warnings
}

/// The detuning factor p (per unit of X_C) the request asks for.
fn detuning_factor(r: &SizeRequest) -> Result<f64, String> {
    match (r.detuning, r.order) {
        (Some(d), _) if (MIN_MAGNITUDE..100.0).contains(&d) => Ok(d / 100.0),
        (Some(d), _) => Err(format!(
            "--detuning must be above 0 and below 100 (percent of X_C, e.g. 7), found {d}{}",
            if d == 0.0 {
                ": a plain capacitor has no reactor to size"
            } else {
                ""
            }
        )),
        (None, Some(h)) if h > 1.0 && h.is_finite() => Ok(p_for_order(h)),
        (None, Some(h)) => Err(format!("--order must be above 1, found {h}")),
        (None, None) => Err("give --detuning or --order".into()),
    }
}

/// Checks and sizes the request.
pub fn size(r: &SizeRequest) -> Result<SizeOutcome, SizeError> {
    let fail = |warnings: &[String], message: String| SizeError {
        warnings: warnings.to_vec(),
        message,
    };
    positive(r.kv, "kv").map_err(|m| fail(&[], m))?;
    positive(r.kvar, "kvar").map_err(|m| fail(&[], m))?;
    if r.hz != 50.0 && r.hz != 60.0 {
        return Err(fail(
            &[],
            format!(
                "--hz must be 50 or 60 (as the Study sheet's Frequency), found {}",
                r.hz
            ),
        ));
    }
    positive(r.q, "q").map_err(|m| fail(&[], m))?;
    let mut warnings = unit_warnings(r);
    for (v, what) in [
        (r.rated_kv, "rated-kv"),
        (r.ssc_mva, "ssc-mva"),
        (r.order, "order"),
    ] {
        if let Some(v) = v {
            positive(v, what).map_err(|m| fail(&warnings, m))?;
        }
    }
    let p = detuning_factor(r).map_err(|m| fail(&warnings, m))?;
    let x_sys = r.ssc_mva.map(|s| r.kv * r.kv / s);
    let s = size_for_output(r.hz, r.kv, r.kvar, p, r.q, r.rated_kv, x_sys).ok_or_else(|| {
        fail(
            &warnings,
            format!(
                "no standard capacitor rating at or above {:.0} V: give --rated-kv",
                r.kv / (1.0 - p) * 1000.0
            ),
        )
    })?;
    if let Some(rated) = r.rated_kv
        && s.capacitor_kv_needed > rated * (1.0 + 1e-9)
    {
        warnings.push(format!(
            "warning: the capacitor sees U/(1-p) = {:.0} V, {:.1} % over its {:.0} V rating (IEEE 18 allows 110 % of rated rms voltage continuously, with harmonics on top): choose --rated-kv {} or more",
            s.capacitor_kv_needed * 1000.0,
            (s.capacitor_kv_needed / rated - 1.0) * 100.0,
            rated * 1000.0,
            next_standard_rating(s.capacitor_kv_needed)
                .map_or_else(|| "higher".to_string(), |r| r.to_string())
        ));
    }
    Ok(SizeOutcome {
        sizing: s,
        tuned: r.order.is_some(),
        warnings,
    })
}
