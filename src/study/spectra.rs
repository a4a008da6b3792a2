//! Harmonic current spectra: the built-in spectrum of each load type and the choice of
//! spectrum for each load (its `Spectrum` from the Spectra sheet, else its type's).
//!
//! Magnitudes are in % of the load's fundamental current. Angles, in degrees, are referred
//! to h times the angle of the load's fundamental current; they are used by `phasor`
//! summation only (the magnitude laws ignore them).

use serde::Serialize;

use crate::model::{Load, LoadType, Plant, SpectrumLine};

/// Where a load's spectrum comes from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SpectrumChoice {
    pub load: String,
    /// Name shown in reports: the Spectra sheet's name, or `built-in: <type>`.
    pub name: String,
    /// The source of the numbers.
    pub source: &'static str,
    /// (order, % of fundamental), orders above the highest studied order removed.
    pub lines: Vec<(f64, f64)>,
    /// Angle of each line, degrees, referred to h × the fundamental current's angle
    /// (0 where a Spectra-sheet line has none; such a line is refused under `phasor`).
    pub angles_deg: Vec<f64>,
}

/// Typical angle of a built-in spectrum's line, degrees, referred to h × the fundamental
/// current's angle. Converters (6-, 12-, 18-pulse, active front end): the Fourier series
/// of the ideal six-pulse line current, i = (2√3/π)·I_d·(cos ωt − cos 5ωt/5 + cos 7ωt/7 −
/// cos 11ωt/11 + cos 13ωt/13 − …), i.e. 180° at h = 6k − 1 and 0° at h = 6k + 1 (power
/// electronics textbooks, from memory). Single-phase electronic loads: a narrow current
/// pulse at the voltage peak, every odd order at 0° (from memory). Real drives with DC-bus
/// capacitors deviate by tens of degrees: give measured angles on the Spectra sheet when
/// cancellation matters.
pub fn built_in_angle_deg(kind: LoadType, order: f64) -> f64 {
    if kind == LoadType::Electronic {
        return 0.0;
    }
    let r = order.round();
    if (order - r).abs() < 1e-9 && (r as i64).rem_euclid(6) == 5 {
        180.0
    } else {
        0.0
    }
}

/// Typical 6-pulse PWM drive with a DC-bus capacitor and no line reactor or DC choke:
/// current THD about 77 %. Individual values from memory of typical published spectra
/// (references.md: 6-pulse without reactor about 70–120 %, about 70 % seen once).
const SIX_PULSE: &[(f64, f64)] = &[
    (5.0, 65.0),
    (7.0, 40.0),
    (11.0, 8.0),
    (13.0, 5.0),
    (17.0, 4.0),
    (19.0, 3.0),
    (23.0, 2.0),
    (25.0, 2.0),
];

/// Typical 6-pulse drive with a 3 % line reactor or DC choke: current THD about 38 %.
/// From memory of typical published spectra (references.md: 35–45 %, about 40 % seen once).
const SIX_PULSE_REACTOR: &[(f64, f64)] = &[
    (5.0, 35.0),
    (7.0, 12.0),
    (11.0, 7.0),
    (13.0, 5.0),
    (17.0, 3.0),
    (19.0, 2.5),
    (23.0, 2.0),
    (25.0, 1.5),
];

/// Typical 12-pulse drive: the characteristic 12k ± 1 orders somewhat below the ideal
/// I₁/h, with residual 5th and 7th from transformer imbalance; current THD about 10 %.
/// From memory (references.md: 12-pulse 8–12 %).
const TWELVE_PULSE: &[(f64, f64)] = &[
    (5.0, 2.6),
    (7.0, 1.6),
    (11.0, 7.3),
    (13.0, 5.7),
    (17.0, 0.5),
    (19.0, 0.4),
    (23.0, 2.1),
    (25.0, 1.8),
    (35.0, 0.9),
    (37.0, 0.8),
];

/// Typical 18-pulse drive: current THD about 4.7 %. From memory (references.md: 4–6 %).
const EIGHTEEN_PULSE: &[(f64, f64)] = &[
    (5.0, 1.5),
    (7.0, 1.0),
    (11.0, 1.0),
    (13.0, 0.8),
    (17.0, 3.0),
    (19.0, 2.5),
    (35.0, 1.0),
    (37.0, 0.9),
];

/// Typical active front end: current THD about 2.2 %. From memory (references.md: < 5 %).
const ACTIVE_FRONT_END: &[(f64, f64)] = &[
    (5.0, 1.5),
    (7.0, 1.0),
    (11.0, 0.8),
    (13.0, 0.6),
    (17.0, 0.4),
    (19.0, 0.3),
    (23.0, 0.3),
    (25.0, 0.2),
];

/// Typical single-phase switch-mode power supplies (SMPS, LED drivers, IT) seen from the
/// three-phase feeder: strong triplen and low odd orders, current THD about 109 %. From
/// memory of typical published spectra. The triplens are zero sequence: they reach only the
/// buses the zero-sequence network connects to a grounded neutral.
const ELECTRONIC: &[(f64, f64)] = &[
    (3.0, 80.0),
    (5.0, 60.0),
    (7.0, 38.0),
    (9.0, 17.0),
    (11.0, 5.0),
    (13.0, 6.0),
    (15.0, 5.0),
    (17.0, 3.0),
    (19.0, 2.0),
];

/// The built-in spectrum of a load type, with its source; `None` for linear loads, motors
/// and custom loads (which need a spectrum of their own).
pub fn built_in(kind: LoadType) -> Option<(&'static [(f64, f64)], &'static str)> {
    const TYPICAL: &str = "typical values, from memory (see the review's Sources sheet)";
    match kind {
        LoadType::SixPulseDrive => Some((SIX_PULSE, TYPICAL)),
        LoadType::SixPulseDriveWithReactor => Some((SIX_PULSE_REACTOR, TYPICAL)),
        LoadType::TwelvePulseDrive => Some((TWELVE_PULSE, TYPICAL)),
        LoadType::EighteenPulseDrive => Some((EIGHTEEN_PULSE, TYPICAL)),
        LoadType::ActiveFrontEnd => Some((ACTIVE_FRONT_END, TYPICAL)),
        LoadType::Electronic => Some((ELECTRONIC, TYPICAL)),
        LoadType::Linear | LoadType::Motor | LoadType::Custom => None,
    }
}

/// Current THD of a spectrum in % of the fundamental: √(Σ m_h²).
pub fn thd_percent(lines: &[(f64, f64)]) -> f64 {
    lines.iter().map(|(_, m)| m * m).sum::<f64>().sqrt()
}

/// The spectrum of `load`: its Spectra-sheet spectrum if named, else its type's built-in
/// one; `None` for loads that inject no harmonics.
pub fn choose(plant: &Plant, load: &Load) -> Option<SpectrumChoice> {
    if !load.kind.is_harmonic_source() {
        return None;
    }
    let highest = plant.study.highest_order;
    let keep = |lines: &mut Vec<(f64, f64)>| lines.retain(|&(h, _)| h <= highest + 1e-9);
    if let Some(name) = &load.spectrum {
        let sp = plant.spectrum(name)?;
        let kept: Vec<&SpectrumLine> = sp
            .lines
            .iter()
            .filter(|l| l.order <= highest + 1e-9)
            .collect();
        return Some(SpectrumChoice {
            load: load.id.clone(),
            name: name.clone(),
            source: "Spectra sheet of the input workbook",
            lines: kept
                .iter()
                .map(|l| (l.order, l.magnitude_percent))
                .collect(),
            angles_deg: kept.iter().map(|l| l.angle_deg.unwrap_or(0.0)).collect(),
        });
    }
    let (table, source) = built_in(load.kind)?;
    let mut lines = table.to_vec();
    keep(&mut lines);
    Some(SpectrumChoice {
        load: load.id.clone(),
        name: format!("built-in: {}", load.kind.label()),
        source,
        angles_deg: lines
            .iter()
            .map(|&(h, _)| built_in_angle_deg(load.kind, h))
            .collect(),
        lines,
    })
}
