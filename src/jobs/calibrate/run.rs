//! The calibration itself: recordings analysed, events matched, the source fitted, the
//! calibrated plant built and checked.

use num_complex::Complex64;
use serde::Serialize;

use super::estimate::{self, BackgroundEstimate, OrderImpedance, Spread};
use super::matching::{Match, match_event, states};
use super::model::{self, OrderCompare, ResonanceCompare, VerdictCount};
use super::written::calibrated_plant;
use super::{CalibrateError, channels};
use crate::io::recordings::comtrade::Waveforms;
use crate::io::recordings::harmonic_log::HarmonicLog;
use crate::model::{Plant, ResistanceModel, ShortCircuit, Source, SourceKind};
use crate::study::measured::compliance::{Compliance, evaluate};
use crate::study::measured::events::{EventOptions, Window, analyse};

/// A recording given to the job.
#[derive(Debug, Clone)]
pub enum Recording {
    Waveforms(Box<Waveforms>),
    Log(HarmonicLog),
}

/// What the job is asked.
#[derive(Debug, Clone, Default)]
pub struct CalibrateOptions {
    /// The bus the recordings were taken at; `None` = the PCC.
    pub bus: Option<String>,
    /// The steps in service at the first recording's start (`C1=1 C2=0`); `None` = inferred
    /// from the events (the fewest steps consistent with them).
    pub start: Option<String>,
}

/// The name of the supply scenario the calibration adds.
pub const MEASURED: &str = "measured";

/// One waveform recording, described.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RecordingSummary {
    pub file: String,
    /// `COMTRADE 2013 ASCII`, ...
    pub kind: String,
    pub duration_s: f64,
    pub samples: usize,
    /// Samples per cycle the analysis used.
    pub per_cycle: usize,
    /// The system frequency measured, Hz (the analysis windows are whole cycles of it).
    pub frequency_hz: f64,
    pub events: usize,
    /// The current channels pointed toward the source and were reversed.
    pub reversed_current: bool,
}

/// One switching event, as the reports list it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EventRow {
    pub file: String,
    pub time_s: f64,
    pub delta_q_kvar: f64,
    pub delta_v_percent: f64,
    /// S_sc from ΔV/V ≈ ΔQ/S_sc, MVA.
    pub s_sc_approx_mva: f64,
    /// S_sc from the complex ratio kV²/|ΔV₁/ΔI₁|, MVA.
    pub s_sc_mva: f64,
    pub x_over_r: f64,
    pub matched: Option<Match>,
    /// The configuration in service after the event.
    pub configuration_after: String,
    /// The measured ringing after an energizing, Hz, and its damping ratio.
    pub ringing_hz: Option<f64>,
    pub ringing_zeta: Option<f64>,
    /// f₁·√(S_sc/Q) with the fitted S_sc and the kvar in service at the bus after the
    /// event, Hz.
    pub ringing_hand_hz: Option<f64>,
}

/// The source fitted to the events.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SourceFit {
    /// The utility source at the recording bus whose scenario rows give the bounds.
    pub source: String,
    /// Least-squares Z(1) over the events, ohm per phase.
    #[serde(serialize_with = "crate::study::measured::ser_complex")]
    pub z1_ohm: Complex64,
    /// kV²/|Z(1)|, MVA, and its spread over the events.
    pub s_sc_mva: f64,
    pub s_sc_spread: Spread,
    /// The ΔV/V ≈ ΔQ/S_sc estimate's spread, MVA.
    pub s_sc_approx_spread: Spread,
    pub x_over_r: f64,
    pub x_over_r_spread: Spread,
    /// The range the Sources sheet gives for this source: (S_sc min, max), (X/R min, max).
    pub bounds: ((f64, f64), (f64, f64)),
    /// The values the `measured` scenario holds (the estimate held within the bounds).
    pub fitted_s_sc_mva: f64,
    pub fitted_x_over_r: f64,
    /// The estimate lay outside the bounds and was held at them.
    pub held_at_bound: bool,
    /// The fundamental EMF behind the source, pu of nominal (mean over the windows).
    pub emf_pu: f64,
}

/// Everything a calibration finds.
#[derive(Debug, Clone)]
pub struct CalibrationResults {
    pub plant: Plant,
    /// The plant with the `measured` scenario and its background (`None` without events).
    pub calibrated: Option<Plant>,
    pub bus: String,
    pub kv: f64,
    pub recordings: Vec<RecordingSummary>,
    pub events: Vec<EventRow>,
    pub source: Option<SourceFit>,
    pub impedance: Vec<OrderImpedance>,
    pub background: Vec<BackgroundEstimate>,
    /// Which windows the background came from.
    pub background_basis: String,
    pub resonance: Vec<ResonanceCompare>,
    pub comparison: Vec<OrderCompare>,
    pub verdicts: Vec<VerdictCount>,
    /// The calibrated plant's whole check, as `check` runs it (every scenario); with a
    /// harmonic log alone, the plant's own check.
    pub study: Option<Box<crate::jobs::check::CheckResults>>,
    pub compliance: Vec<Compliance>,
    /// Per recording, the fundamental reactive power per cycle, kvar (for the plots).
    pub q_kvar: Vec<Vec<f64>>,
    pub notes: Vec<String>,
}

/// Runs the calibration of `plant` (validated) against `recordings`.
pub fn run_calibrate(
    plant: &Plant,
    recordings: &[Recording],
    options: &CalibrateOptions,
) -> Result<CalibrationResults, CalibrateError> {
    if recordings.is_empty() {
        return Err(CalibrateError::NoRecording);
    }
    let bus = match &options.bus {
        Some(b) => b.clone(),
        None => plant.pcc_bus().unwrap_or_default().to_string(),
    };
    let kv = plant
        .buses
        .iter()
        .find(|b| b.id == bus)
        .map(|b| b.nominal_kv)
        .ok_or_else(|| CalibrateError::UnknownBus(bus.clone()))?;
    let source = plant
        .sources
        .iter()
        .find(|s| s.bus == bus && s.kind == SourceKind::Utility)
        .ok_or_else(|| CalibrateError::NoSource(bus.clone()))?
        .clone();
    let start = match &options.start {
        Some(text) => Some(crate::study::parse_configuration(text, &plant.banks)?.steps),
        None => None,
    };
    let mut res = CalibrationResults::empty(plant, bus, kv);
    let f1 = plant.study.frequency_hz;
    let v_nominal = kv * 1e3 / 3f64.sqrt();
    let min_step = (plant.banks.iter())
        .map(|b| b.step_kvar)
        .fold(f64::INFINITY, f64::min);
    let threshold_var = if min_step.is_finite() {
        0.4 * min_step * 1e3
    } else {
        100e3
    };
    let opt = EventOptions {
        threshold_var,
        orders: 50,
        window_cycles: (0.2 * f1).round() as usize,
        settle_cycles: 6,
        kv_nominal: kv,
    };
    let mut gathered = Gathered::default();
    for rec in recordings {
        match rec {
            Recording::Log(log) => res
                .compliance
                .extend(evaluate(log, &model::limits_at(plant, kv))),
            Recording::Waveforms(w) => {
                waveform(&mut res, &mut gathered, plant, w, (&opt, start.clone()))?;
            }
        }
    }
    res.events = std::mem::take(&mut gathered.rows);
    let (events, windows) = (&gathered.events, &gathered.windows);
    fit(&mut res, plant, &source, events, windows, v_nominal);
    if res.study.is_none() && !res.compliance.is_empty() {
        // A harmonic log alone: the review and report carry the measured compliance beside
        // the plant's study as given.
        let options = crate::jobs::check::CheckOptions {
            switching: true,
            ..Default::default()
        };
        res.study = Some(Box::new(crate::jobs::check::run_check(plant, &options)?));
    }
    Ok(res)
}

impl CalibrationResults {
    /// Nothing found yet, at `bus` of `kv`.
    fn empty(plant: &Plant, bus: String, kv: f64) -> Self {
        CalibrationResults {
            plant: plant.clone(),
            calibrated: None,
            bus,
            kv,
            recordings: Vec::new(),
            events: Vec::new(),
            source: None,
            impedance: Vec::new(),
            background: Vec::new(),
            background_basis: String::new(),
            resonance: Vec::new(),
            comparison: Vec::new(),
            verdicts: Vec::new(),
            study: None,
            compliance: Vec::new(),
            q_kvar: Vec::new(),
            notes: Vec::new(),
        }
    }
}

/// What the waveform recordings give, together: every event, every steady window with the
/// steps in service during it, and the events as reported.
#[derive(Default)]
struct Gathered {
    events: Vec<crate::study::measured::events::Event>,
    windows: Vec<(Window, Vec<u32>)>,
    rows: Vec<EventRow>,
}

/// One waveform recording analysed: its events matched to the plant's banks, the steps in
/// service in each stretch, its summary and notes.
fn waveform(
    res: &mut CalibrationResults,
    acc: &mut Gathered,
    plant: &Plant,
    w: &Waveforms,
    (opt, start): (&EventOptions, Option<Vec<u32>>),
) -> Result<(), CalibrateError> {
    let f1 = plant.study.frequency_hz;
    let v_nominal = res.kv * 1e3 / 3f64.sqrt();
    if (w.config.line_frequency_hz - f1).abs() > 0.5 && w.config.line_frequency_hz > 0.0 {
        res.notes.push(format!(
            "{}: the recording says {} Hz; the plant is {f1} Hz, used for the analysis",
            w.file, w.config.line_frequency_hz
        ));
    }
    for ch in w.analog.iter().filter(|c| c.at_range_limit > 0) {
        res.notes.push(format!(
            "{}: channel {} reaches its declared range in {} samples: the waveform is clipped there, and an event whose windows hold clipped samples is not reliable",
            w.file, ch.spec.id, ch.at_range_limit
        ));
    }
    let s = channels::sampled(w, f1)?;
    let a = analyse(&s, opt);
    let matches: Vec<Option<Match>> = (a.events.iter())
        .map(|e| {
            let named = status_channel(w, plant, e.time_s, f1);
            match_event(
                plant,
                e.delta_q_kvar,
                e.v_before_v / v_nominal,
                named.as_deref(),
            )
        })
        .collect();
    let st = states(plant, &matches, start);
    for (k, e) in a.events.iter().enumerate() {
        acc.rows
            .push(event_row(w, e, &matches[k], &st[k + 1], plant));
    }
    // Each steady window gets the state of its stretch: the events before it, by time.
    for win in &a.steady {
        let stretch = (a.events.iter())
            .filter(|e| (e.time_s - s.t0_s) * s.f1_hz < win.start_cycle as f64)
            .count();
        acc.windows
            .push((win.clone(), st[stretch.min(st.len() - 1)].clone()));
    }
    res.recordings
        .push(summary(w, &s, a.events.len(), a.reversed_current));
    if a.reversed_current {
        res.notes.push(format!("{}: the current channels pointed toward the source; they were reversed so that the plant draws power", w.file));
    }
    res.q_kvar.push(a.q_kvar.clone());
    acc.events.extend(a.events);
    Ok(())
}

/// The source fit, the background, the calibrated plant and its checks.
fn fit(
    res: &mut CalibrationResults,
    plant: &Plant,
    source: &Source,
    events: &[crate::study::measured::events::Event],
    windows: &[(Window, Vec<u32>)],
    v_nominal: f64,
) {
    let kv = res.kv;
    let Some(z1) = estimate::least_squares_z(events, 1) else {
        if res.recordings.is_empty() {
            return;
        }
        res.notes.push(match events.len() {
            0 => "no capacitor switching event was found: the source and the background cannot be estimated from these recordings".into(),
            n => format!("{n} switching event(s) were found, but none had complete windows before and after it (missing samples): the source and the background cannot be estimated"),
        });
        return;
    };
    let s_sc = kv * kv / z1.norm();
    let xr = z1.im / z1.re;
    let bounds = source_bounds(plant, source, kv);
    let fitted_s = s_sc.clamp(bounds.0.0, bounds.0.1);
    let fitted_xr = if xr.is_finite() && xr > 0.0 {
        xr.clamp(bounds.1.0, bounds.1.1)
    } else {
        bounds.1.0
    };
    let held = fitted_s != s_sc || fitted_xr != xr;
    if held {
        res.notes.push(format!(
            "the measured S_sc {s_sc:.1} MVA and X/R {xr:.2} lie outside the Sources sheet's range ({:.1}–{:.1} MVA, X/R {:.2}–{:.2}); the `measured` scenario holds the nearest bound: ask the utility for current figures",
            bounds.0.0, bounds.0.1, bounds.1.0, bounds.1.1
        ));
    }
    let law = plant.study.resistance_model;
    let zf = model::source_z(kv, fitted_s, fitted_xr, law);
    res.impedance = estimate::impedances(events, &zf);
    let emf_pu = background_fit(res, windows, &zf, v_nominal);
    let fit = SourceFit {
        source: source.id.clone(),
        z1_ohm: z1,
        s_sc_mva: s_sc,
        s_sc_spread: spread(events.iter().map(|e| e.s_sc_mva), s_sc),
        s_sc_approx_spread: spread(events.iter().map(|e| e.s_sc_approx_mva), f64::NAN),
        x_over_r: xr,
        x_over_r_spread: spread(events.iter().map(|e| e.x_over_r), xr),
        bounds,
        fitted_s_sc_mva: fitted_s,
        fitted_x_over_r: fitted_xr,
        held_at_bound: held,
        emf_pu,
    };
    for row in res.events.iter_mut() {
        row.ringing_hand_hz = row.ringing_hz.and_then(|_| {
            let q = model::kvar_at_bus(plant, &res.bus, &row.configuration_after)?;
            (q > 0.0).then(|| plant.study.frequency_hz * (fitted_s * 1e3 / q).sqrt())
        });
    }
    let calibrated = calibrated_plant(plant, source, &fit, &res.background);
    let x1 = estimate::reactance_slope(&res.impedance, z1);
    let states: Vec<Vec<u32>> = windows.iter().map(|w| w.1.clone()).collect();
    match model::compare(plant, &calibrated, &res.bus, &states, windows, x1) {
        Ok(c) => {
            res.resonance = c.0;
            res.comparison = c.1;
            res.verdicts = c.2;
            res.study = Some(c.3);
        }
        Err(e) => res
            .notes
            .push(format!("the calibrated plant could not be checked: {e}")),
    }
    res.source = Some(fit);
    res.calibrated = Some(calibrated);
}

/// The spread of `xs`, or `at` alone when there are none.
fn spread(xs: impl IntoIterator<Item = f64>, at: f64) -> Spread {
    Spread::of(xs).unwrap_or(Spread {
        min: at,
        max: at,
        std: 0.0,
        events: 0,
    })
}

/// The background EMF per order over the windows with every bank off (else every window),
/// with Z(h) measured where an event measured it and the calibrated model's `zf` elsewhere;
/// returns the fundamental EMF, pu of `v_nominal`.
fn background_fit(
    res: &mut CalibrationResults,
    windows: &[(Window, Vec<u32>)],
    zf: &impl Fn(usize) -> Complex64,
    v_nominal: f64,
) -> f64 {
    let impedance = &res.impedance;
    let measured_z = |h: usize| -> Complex64 {
        match h {
            1 => zf(1),
            _ => (impedance.iter())
                .find(|o| o.order == h)
                .map_or_else(|| zf(h), |o| o.z_ohm),
        }
    };
    let off: Vec<&Window> = (windows.iter())
        .filter(|w| w.1.iter().all(|&n| n == 0))
        .map(|w| &w.0)
        .collect();
    let all: Vec<&Window> = windows.iter().map(|w| &w.0).collect();
    let (used, basis) = if off.is_empty() {
        (all, "every steady window (no window had every bank off)")
    } else {
        (off, "the windows with every bank off")
    };
    res.background = estimate::background(&used, measured_z, v_nominal);
    res.background_basis = format!("{basis}: {} of {}", used.len(), windows.len());
    (used.iter())
        .map(|w| (w.v[1] + zf(1) * w.i[1]).norm() / v_nominal)
        .sum::<f64>()
        / used.len().max(1) as f64
}

/// (S_sc range, X/R range) of the utility rows at `source`'s bus over the scenarios; a
/// single value v gives the range v/2 … 2v.
fn source_bounds(plant: &Plant, source: &Source, kv: f64) -> ((f64, f64), (f64, f64)) {
    let rows: Vec<&Source> = plant
        .sources
        .iter()
        .filter(|s| s.bus == source.bus && s.kind == SourceKind::Utility)
        .collect();
    let mva = |s: &Source| match s.short_circuit {
        ShortCircuit::Mva(m) => m,
        ShortCircuit::Ka(ka) => 3f64.sqrt() * kv * ka,
    };
    let lo = |f: &dyn Fn(&Source) -> f64| rows.iter().map(|s| f(s)).fold(f64::INFINITY, f64::min);
    let hi =
        |f: &dyn Fn(&Source) -> f64| rows.iter().map(|s| f(s)).fold(f64::NEG_INFINITY, f64::max);
    // One figure (a single letter value) bounds nothing: take half to twice it (common
    // practice: a utility's stated fault level is often that far from today's).
    let range = |a: f64, b: f64| {
        if b <= a * 1.0001 {
            (a / 2.0, b * 2.0)
        } else {
            (a, b)
        }
    };
    (
        range(lo(&mva), hi(&mva)),
        range(lo(&|s| s.x_over_r), hi(&|s| s.x_over_r)),
    )
}

/// The bank a digital channel names, when that channel changes within 2 cycles of `t`.
fn status_channel(w: &Waveforms, plant: &Plant, t: f64, f1: f64) -> Option<String> {
    for (spec, bits) in &w.digital {
        let Some(bank) = plant.banks.iter().find(|b| {
            spec.id.trim().eq_ignore_ascii_case(&b.id)
                || spec.circuit.trim().eq_ignore_ascii_case(&b.id)
        }) else {
            continue;
        };
        let changes = bits
            .windows(2)
            .enumerate()
            .filter(|(_, x)| x[0] != x[1])
            .map(|(k, _)| w.time_s.get(k + 1).copied().unwrap_or(f64::NAN));
        if changes.into_iter().any(|tc| (tc - t).abs() <= 2.0 / f1) {
            return Some(bank.id.clone());
        }
    }
    None
}

fn event_row(
    w: &Waveforms,
    e: &crate::study::measured::events::Event,
    m: &Option<Match>,
    after: &[u32],
    plant: &Plant,
) -> EventRow {
    let cfg = crate::study::Configuration {
        steps: after.to_vec(),
    };
    EventRow {
        file: w.file.clone(),
        time_s: e.time_s,
        delta_q_kvar: e.delta_q_kvar,
        delta_v_percent: e.delta_v_percent,
        s_sc_approx_mva: e.s_sc_approx_mva,
        s_sc_mva: e.s_sc_mva,
        x_over_r: e.x_over_r,
        matched: m.clone(),
        configuration_after: cfg.label(&plant.banks),
        ringing_hz: e.ringing.map(|r| r.0),
        ringing_zeta: e.ringing.map(|r| r.1),
        ringing_hand_hz: None,
    }
}

fn summary(
    w: &Waveforms,
    s: &crate::study::measured::signals::Sampled,
    events: usize,
    reversed: bool,
) -> RecordingSummary {
    let rev = match w.config.revision {
        crate::io::recordings::comtrade::Revision::Y1999 => "1999",
        crate::io::recordings::comtrade::Revision::Y2013 => "2013",
    };
    let fmt = serde_json::to_value(w.config.format)
        .ok()
        .and_then(|v| v.as_str().map(String::from))
        .unwrap_or_default();
    RecordingSummary {
        file: w.file.clone(),
        kind: format!("COMTRADE {rev} {fmt}"),
        duration_s: w.time_s.last().copied().unwrap_or(0.0),
        samples: w.time_s.len(),
        per_cycle: s.per_cycle,
        frequency_hz: s.f1_hz,
        events,
        reversed_current: reversed,
    }
}

/// The resistance law's factor for a source at order `h` (network::damping: √h except under
/// the constant model).
pub fn source_r_factor(law: ResistanceModel, h: f64) -> f64 {
    match law {
        ResistanceModel::Constant => 1.0,
        _ => crate::network::damping::skin_factor(h),
    }
}
