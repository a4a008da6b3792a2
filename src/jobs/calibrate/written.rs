//! The calibrated plant: the `measured` scenario's source row and its Background rows
//! added to the plant, and the notes that say where each came from.

use super::estimate::BackgroundEstimate;
use super::run::{CalibrationResults, MEASURED, SourceFit};
use crate::model::{BackgroundLine, Plant, ShortCircuit, Source, SourceKind};

/// The plant with a `measured` utility source at the recording bus (the fitted S_sc, X/R and
/// EMF) and its background rows. A source row that named no scenario is given `base`, so
/// that it does not stand in parallel with the measured one.
pub fn calibrated_plant(
    plant: &Plant,
    source: &Source,
    fit: &SourceFit,
    background: &[BackgroundEstimate],
) -> Plant {
    let mut p = plant.clone();
    for s in p.sources.iter_mut() {
        if s.bus == source.bus && s.kind == SourceKind::Utility && s.scenario.is_none() {
            s.scenario = Some(crate::model::DEFAULT_SCENARIO.to_string());
        }
    }
    let id = unique_id(&p, &format!("{}-{MEASURED}", source.id));
    p.sources.push(Source {
        id: id.clone(),
        bus: source.bus.clone(),
        scenario: Some(MEASURED.to_string()),
        // Rounded as an engineer would enter them (the estimates' spread is far wider).
        short_circuit: ShortCircuit::Mva(round_to(fit.fitted_s_sc_mva, 0.01)),
        x_over_r: round_to(fit.fitted_x_over_r, 0.01),
        voltage_pu: round_to(fit.emf_pu, 1e-4),
        zero_short_circuit_mva: source.zero_short_circuit_mva,
        zero_x_over_r: source.zero_x_over_r,
        kind: SourceKind::Utility,
    });
    for b in background {
        p.background.push(BackgroundLine {
            source: id.clone(),
            order: b.order as f64,
            voltage_percent: round_to(b.percent, 1e-4),
            angle_deg: Some(round_to(b.angle_deg, 0.01)),
        });
    }
    p
}

/// `x` rounded to a multiple of `step`.
fn round_to(x: f64, step: f64) -> f64 {
    (x / step).round() * step
}

/// `base`, or `base-2`, `base-3` ... whichever no source has.
fn unique_id(p: &Plant, base: &str) -> String {
    let mut id = base.to_string();
    let mut k = 2;
    while p.sources.iter().any(|s| s.id == id) {
        id = format!("{base}-{k}");
        k += 1;
    }
    id
}

/// Notes for the rows the calibration added to the plant workbook: the `measured` source
/// row and its Background rows, each saying where its values came from.
pub fn provenance_notes(
    c: &CalibrationResults,
    provenance: &str,
) -> Vec<crate::io::template::RowNote> {
    let (Some(p), Some(fit)) = (&c.calibrated, &c.source) else {
        return Vec::new();
    };
    let files: Vec<&str> = c.recordings.iter().map(|r| r.file.as_str()).collect();
    let mut notes = Vec::new();
    if let Some(row) = p
        .sources
        .iter()
        .position(|s| s.scenario.as_deref() == Some(MEASURED))
    {
        notes.push(crate::io::template::RowNote {
            sheet: "Sources",
            row,
            text: format!(
                "Calibrated by overtone from {} switching events in {} ({provenance}). S_sc {:.1} MVA (events {:.1}–{:.1}), X/R {:.2} (events {:.2}–{:.2}); the Sources sheet gave {:.1}–{:.1} MVA{}.",
                fit.s_sc_spread.events,
                files.join(", "),
                fit.fitted_s_sc_mva,
                fit.s_sc_spread.min,
                fit.s_sc_spread.max,
                fit.fitted_x_over_r,
                fit.x_over_r_spread.min,
                fit.x_over_r_spread.max,
                fit.bounds.0.0,
                fit.bounds.0.1,
                if fit.held_at_bound { "; the estimate was held at that range" } else { "" }
            ),
        });
    }
    let id = p
        .sources
        .iter()
        .find(|s| s.scenario.as_deref() == Some(MEASURED))
        .map(|s| s.id.clone())
        .unwrap_or_default();
    for (row, b) in p
        .background
        .iter()
        .enumerate()
        .filter(|(_, b)| b.source == id)
    {
        notes.push(crate::io::template::RowNote {
            sheet: "Background",
            row,
            text: format!("Estimated by overtone: E = V + Z(h)·I at the recording point over {}, from {} ({provenance}).", c.background_basis, files.join(", ")),
        });
        let _ = b;
    }
    notes
}
