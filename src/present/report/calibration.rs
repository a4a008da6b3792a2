//! The report's calibration section: what the recordings measured, the fit, the model
//! beside the measurement (tables and two figures), the measured compliance.

use super::figures::{self, Curve, CurveKind};
use super::layout::{Column, Layout};
use crate::jobs::calibrate::{CalibrationResults, MEASURED};

fn col(head: &'static str, share: f32, numeric: bool) -> Column<'static> {
    Column {
        head,
        share,
        numeric,
    }
}

/// The section, before the calibrated plant's study.
pub fn section(out: &mut Layout<'_>, c: &CalibrationResults, characteristic: &[f64], margin: f64) {
    out.heading("Calibration from measurements", 1);
    for item in crate::present::terminal::calibrate::verdict_items(c) {
        out.bullet(&item);
    }
    if !c.events.is_empty() {
        out.paragraph("Method: each capacitor step switching in the recordings changes the current into the plant while the source's EMF stays; the source impedance is then Z(h) = −ΔV_h/ΔI_h at every order whose current moved (windows of whole cycles before and after the event), S_sc = kV²/|Z(1)| with ΔV/V ≈ ΔQ/S_sc beside it, and the background EMF E_h = V_h + Z(h)·I_h. The fit is held within the range the Sources sheet gives and becomes the supply scenario `measured`, studied below with the others.");
    }
    events_table(out, c);
    impedance_figure(out, c, characteristic, margin);
    spectra(out, c, characteristic, margin);
    compliance(out, c);
}

/// The switching events, one row each.
fn events_table(out: &mut Layout<'_>, c: &CalibrationResults) {
    if !c.events.is_empty() {
        out.heading("Switching events", 2);
        let rows: Vec<Vec<String>> = c
            .events
            .iter()
            .map(|e| {
                vec![
                    format!("{:.4}", e.time_s),
                    format!("{:.1}", e.delta_q_kvar),
                    e.matched.as_ref().map_or("not matched".into(), |m| {
                        format!("{} {:+}", m.bank, m.steps)
                    }),
                    format!("{:.2}", e.s_sc_approx_mva),
                    format!("{:.2}", e.s_sc_mva),
                    format!("{:.2}", e.x_over_r),
                    e.ringing_hz.map_or("–".into(), |f| format!("{f:.0}")),
                    e.ringing_hand_hz.map_or("–".into(), |f| format!("{f:.0}")),
                ]
            })
            .collect();
        out.table(
            &[
                col("t (s)", 0.7, true),
                col("ΔQ (kvar)", 0.8, true),
                col("Step", 0.8, false),
                col("S_sc ΔV/V (MVA)", 1.0, true),
                col("S_sc Z(1) (MVA)", 1.0, true),
                col("X/R", 0.6, true),
                col("Ringing (Hz)", 0.8, true),
                col("f₁√(S/Q) (Hz)", 0.9, true),
            ],
            &rows,
            7.5,
        );
    }
}

/// |Z(h)| of the source: the events' points against the calibrated model's curve.
fn impedance_figure(
    out: &mut Layout<'_>,
    c: &CalibrationResults,
    characteristic: &[f64],
    margin: f64,
) {
    if !c.impedance.is_empty() {
        let measured: Vec<(f64, f64)> = c
            .impedance
            .iter()
            .map(|z| (z.order as f64, z.z_ohm.norm()))
            .collect();
        let highest = c
            .impedance
            .iter()
            .map(|z| z.order)
            .max()
            .unwrap_or(13)
            .max(13) as f64
            + 2.0;
        let model: Vec<(f64, f64)> = (0..=((highest - 1.0) * 4.0) as usize)
            .map(|k| 1.0 + k as f64 / 4.0)
            .filter_map(|h| {
                let z = c.impedance.first()?;
                // The calibrated model is R·k(h) + j·h·X: scale the first measured order's model value.
                let x1 = z.model_z_ohm.im / z.order as f64;
                let r = z.model_z_ohm.re
                    / crate::jobs::calibrate::source_r_factor(
                        c.plant.study.resistance_model,
                        z.order as f64,
                    );
                Some((
                    h,
                    (r * crate::jobs::calibrate::source_r_factor(
                        c.plant.study.resistance_model,
                        h,
                    ))
                    .hypot(h * x1),
                ))
            })
            .collect();
        figures::impedance(
            out,
            &format!(
                "Source |Z(h)| at {}: measured (events) against the calibrated model",
                c.bus
            ),
            &[
                Curve {
                    label: "calibrated model".into(),
                    points: model,
                    kind: CurveKind::Step(0),
                },
                Curve {
                    label: "measured".into(),
                    points: measured,
                    kind: CurveKind::Worst,
                },
            ],
            (characteristic, margin, highest),
        );
    }
}

/// The harmonic voltage spectrum of the last configuration seen: measured against the
/// model under `measured`, figure and table.
fn spectra(out: &mut Layout<'_>, c: &CalibrationResults, characteristic: &[f64], margin: f64) {
    let Some(last) = c
        .comparison
        .iter()
        .rev()
        .find(|o| o.scenario == MEASURED)
        .map(|o| o.configuration.clone())
    else {
        return;
    };
    let rows: Vec<&crate::jobs::calibrate::OrderCompare> = c
        .comparison
        .iter()
        .filter(|o| o.scenario == MEASURED && o.configuration == last)
        .collect();
    let highest = rows.iter().map(|o| o.order).max().unwrap_or(13) as f64 + 1.0;
    // Orders below 0.001 % are not drawn (on the log axis they would read as a value).
    let pick = |f: fn(&crate::jobs::calibrate::OrderCompare) -> f64| -> Vec<(f64, f64)> {
        rows.iter()
            .filter(|o| f(o) >= 1e-3)
            .map(|o| (o.order as f64, f(o)))
            .collect()
    };
    figures::impedance(
        out,
        &format!(
            "Harmonic voltage at {} with {last} (% of nominal): measured against the model, scenario {MEASURED} (values below 0.001 % not drawn)",
            c.bus
        ),
        &[
            Curve {
                label: "model".into(),
                points: pick(|o| o.model_v_percent),
                kind: CurveKind::Step(0),
            },
            Curve {
                label: "measured".into(),
                points: pick(|o| o.measured_v_percent),
                kind: CurveKind::Worst,
            },
        ],
        (characteristic, margin, highest),
    );
    let table: Vec<Vec<String>> = rows
        .iter()
        .map(|o| {
            vec![
                o.order.to_string(),
                format!("{:.3}", o.measured_v_percent),
                format!("{:.3}", o.model_v_percent),
                format!("{:.2}", o.measured_i_a),
                format!("{:.2}", o.model_i_a),
            ]
        })
        .collect();
    out.table(
        &[
            col("Order", 0.5, true),
            col("V_h measured (%)", 1.0, true),
            col("V_h model (%)", 1.0, true),
            col("I_h measured (A)", 1.0, true),
            col("I_h model (A)", 1.0, true),
        ],
        &table,
        7.5,
    );
}

/// The measured compliance: every flagged row, then the THD/TDD rows (the review has all).
fn compliance(out: &mut Layout<'_>, c: &CalibrationResults) {
    if c.compliance.is_empty() {
        return;
    }
    out.heading("Measured compliance (IEEE 519-2014 clause 5)", 2);
    let mut rows = Vec::new();
    for comp in &c.compliance {
        for note in &comp.notes {
            out.paragraph(note);
        }
        for s in comp
            .rows
            .iter()
            .filter(|s| s.exceeds || s.order.is_none())
            .take(super::sections::TABLE_ROWS)
        {
            let test = format!("{} (clause {})", s.test, s.clause);
            let mut cells =
                crate::present::terminal::calibrate::compliance_cells(&comp.channel, s, test, 3);
            cells.push(format!("{:.0}", s.coverage_percent));
            rows.push(cells);
        }
    }
    out.table(
        &[
            col("Channel", 0.6, false),
            col("Test", 2.0, false),
            col("Period", 1.1, false),
            col("Order", 0.5, false),
            col("Value (%)", 0.7, true),
            col("Limit (%)", 0.7, true),
            col("Verdict", 0.7, false),
            col("Coverage (%)", 0.7, true),
        ],
        &rows,
        7.5,
    );
}
