//! The Calibration sheet: what the recordings measured, how the model was calibrated and
//! how the model compares, as stacked tables, with two charts (|Z(h)| of the source,
//! measured against the calibrated model; the harmonic voltage spectrum, measured against
//! the model) whose data are the tables themselves.

use rust_xlsxwriter::{
    Chart, ChartFormat, ChartMarker, ChartMarkerType, ChartType, Format, Worksheet, XlsxError,
};

use super::super::writer::{Cell, header_format, n, on, row, shared_widths, t};
use crate::jobs::calibrate::{CalibrationResults, MEASURED};

/// The sheet's name, as the charts refer to it.
pub(super) const SHEET: &str = "Calibration";

const EVENTS: &[(&str, f64)] = &[
    ("Time (s)", 10.0),
    ("dQ (kvar)", 10.0),
    ("Step", 10.0),
    ("dV (%)", 9.0),
    ("S_sc by dV/V (MVA)", 11.0),
    ("S_sc by Z(1) (MVA)", 11.0),
    ("X/R", 8.0),
    ("Ringing (Hz)", 9.0),
    ("f1·√(S_sc/Q) (Hz)", 11.0),
    ("Configuration after", 16.0),
];
const IMPEDANCE: &[(&str, f64)] = &[
    ("Order", 10.0),
    ("R measured (ohm)", 10.0),
    ("X measured (ohm)", 10.0),
    ("|Z| measured (ohm)", 9.0),
    ("|Z| calibrated model (ohm)", 11.0),
    ("|Z| spread min (ohm)", 11.0),
    ("|Z| spread max (ohm)", 8.0),
    ("Events", 9.0),
];
const BACKGROUND: &[(&str, f64)] = &[
    ("Order", 10.0),
    ("E_h (% of nominal)", 10.0),
    ("Angle (deg)", 10.0),
    ("V_h measured (%)", 9.0),
    ("Spread min (%)", 11.0),
    ("Spread max (%)", 11.0),
    ("Windows", 8.0),
];
const COMPARE: &[(&str, f64)] = &[
    ("Order", 10.0),
    ("Configuration", 10.0),
    ("Scenario", 10.0),
    ("V_h measured (%)", 9.0),
    ("V_h model (%)", 11.0),
    ("I_h measured (A)", 11.0),
    ("I_h model (A)", 8.0),
];
const COMPLIANCE: &[(&str, f64)] = &[
    ("Channel", 10.0),
    ("Test", 10.0),
    ("Clause", 10.0),
    ("Period", 9.0),
    ("Order", 11.0),
    ("Value (%)", 11.0),
    ("Limit (%)", 8.0),
    ("Verdict", 9.0),
    ("Coverage (%)", 10.0),
];

/// Writes `heads` as a header row at `r` (widths are set once for the sheet).
fn head(ws: &mut Worksheet, r: u32, heads: &[(&str, f64)]) -> Result<(), XlsxError> {
    let f = header_format();
    for (c, (h, _)) in heads.iter().enumerate() {
        ws.write_string_with_format(r, c as u16, *h, &f)?;
    }
    ws.set_row_height(r, 45.0)?;
    Ok(())
}

/// A bold title line at `r`.
fn title(ws: &mut Worksheet, r: u32, text: &str) -> Result<(), XlsxError> {
    ws.write_string_with_format(r, 0, text, &Format::new().set_bold())?;
    Ok(())
}

/// Writes `title` at `r`, the header under it and `rows` below; returns (first data row,
/// the row after the table and a blank one).
fn table(
    ws: &mut Worksheet,
    r: u32,
    (name, heads): (&str, &[(&str, f64)]),
    rows: Vec<Vec<Cell>>,
) -> Result<(u32, u32), XlsxError> {
    title(ws, r, name)?;
    head(ws, r + 1, heads)?;
    for (i, cells) in rows.iter().enumerate() {
        row(ws, r + 2 + i as u32, cells)?;
    }
    Ok((r + 2, r + 3 + rows.len() as u32))
}

fn event_rows(c: &CalibrationResults) -> Vec<Vec<Cell>> {
    (c.events.iter())
        .map(|e| {
            let step = e.matched.as_ref().map_or("not matched".into(), |m| {
                format!("{} {:+} ({})", m.bank, m.steps, m.basis)
            });
            vec![
                n(e.time_s, "0.0000"),
                n(e.delta_q_kvar, "0.0"),
                t(step),
                n(e.delta_v_percent, "0.000"),
                n(e.s_sc_approx_mva, "0.00"),
                n(e.s_sc_mva, "0.00"),
                n(e.x_over_r, "0.00"),
                on(e.ringing_hz, "0"),
                on(e.ringing_hand_hz, "0"),
                t(&e.configuration_after),
            ]
        })
        .collect()
}

fn impedance_rows(c: &CalibrationResults) -> Vec<Vec<Cell>> {
    (c.impedance.iter())
        .map(|z| {
            vec![
                n(z.order as f64, "0"),
                n(z.z_ohm.re, "0.0000"),
                n(z.z_ohm.im, "0.0000"),
                n(z.z_ohm.norm(), "0.0000"),
                n(z.model_z_ohm.norm(), "0.0000"),
                n(z.spread.min, "0.0000"),
                n(z.spread.max, "0.0000"),
                n(z.spread.events as f64, "0"),
            ]
        })
        .collect()
}

fn background_rows(c: &CalibrationResults) -> Vec<Vec<Cell>> {
    (c.background.iter())
        .map(|b| {
            vec![
                n(b.order as f64, "0"),
                n(b.percent, "0.000"),
                n(b.angle_deg, "0.0"),
                n(b.measured_v_percent, "0.000"),
                n(b.spread.min, "0.000"),
                n(b.spread.max, "0.000"),
                n(b.spread.events as f64, "0"),
            ]
        })
        .collect()
}

fn compare_rows(c: &CalibrationResults) -> Vec<Vec<Cell>> {
    (c.comparison.iter())
        .map(|o| {
            vec![
                n(o.order as f64, "0"),
                t(&o.configuration),
                t(&o.scenario),
                n(o.measured_v_percent, "0.000"),
                n(o.model_v_percent, "0.000"),
                n(o.measured_i_a, "0.00"),
                n(o.model_i_a, "0.00"),
            ]
        })
        .collect()
}

/// Writes the sheet: the answer's sentences, the tables, the charts below them.
pub(super) fn calibration(ws: &mut Worksheet, c: &CalibrationResults) -> Result<(), XlsxError> {
    // The tables share the columns: each column as wide as its widest header needs, and
    // the text columns (step, configuration, test, period) wider for their contents.
    let widths = shared_widths(&[EVENTS, IMPEDANCE, BACKGROUND, COMPARE, COMPLIANCE]);
    let text_min = [10.0, 14.0, 26.0, 16.0, 11.0, 11.0, 9.0, 9.0, 11.0, 18.0];
    for (k, (_, w)) in widths[0].iter().enumerate() {
        ws.set_column_width(k as u16, w.max(text_min[k]))?;
    }
    let heading = format!(
        "Calibration at bus {} ({} kV) from the recordings",
        c.bus, c.kv
    );
    ws.write_string_with_format(0, 0, heading, &Format::new().set_bold().set_font_size(14))?;
    let wrap = (Format::new().set_text_wrap()).set_align(rust_xlsxwriter::FormatAlign::Top);
    let mut r = 2;
    for item in crate::present::terminal::calibrate::verdict_items(c) {
        ws.merge_range(r, 0, r, 9, &item, &wrap)?;
        let lines = super::super::writer::wrapped_lines(&item, 120.0, false);
        ws.set_row_height(r, 15.0 * lines + 3.0)?;
        r += 1;
    }
    let events = "Switching events (each: the source measured by −ΔV/ΔI across it)";
    let (_, r) = table(ws, r + 1, (events, EVENTS), event_rows(c))?;
    let z = "Source impedance by order: measured (least squares over the events) and the calibrated model R·k(h) + j·h·X";
    let (z_first, r) = table(ws, r, (z, IMPEDANCE), impedance_rows(c))?;
    let bg = format!(
        "Background EMF behind the source: E = V + Z(h)·I over {}",
        c.background_basis
    );
    let (_, r) = table(ws, r, (&bg, BACKGROUND), background_rows(c))?;
    let cmp = format!(
        "Measured against the model: harmonic voltage at {} and current into the plant, per configuration seen",
        c.bus
    );
    let (cmp_first, r) = table(ws, r, (&cmp, COMPARE), compare_rows(c))?;
    // The spectrum chart: the last configuration's rows under `measured` (one block).
    let last = c.comparison.iter().rposition(|o| o.scenario == MEASURED);
    let block = last.map(|l| {
        let same = |o: &crate::jobs::calibrate::OrderCompare| {
            o.scenario == MEASURED && o.configuration == c.comparison[l].configuration
        };
        let first = (0..=l)
            .rev()
            .take_while(|&i| same(&c.comparison[i]))
            .last()
            .unwrap_or(l);
        (cmp_first + first as u32, cmp_first + l as u32)
    });
    let r = compliance(ws, r, c)?;
    let mut charts = Vec::new();
    if !c.impedance.is_empty() {
        charts.push(impedance_chart(
            z_first,
            z_first + c.impedance.len() as u32 - 1,
        ));
    }
    if let Some((a, b)) = block {
        charts.push(spectrum_chart(a, b));
    }
    // Each chart starts a printed page of its own, so none is cut by a page break.
    let mut breaks = Vec::new();
    for (i, ch) in charts.iter().enumerate() {
        let at = r + 1 + 24 * i as u32;
        breaks.push(at);
        ws.insert_chart(at, 0, ch)?;
    }
    ws.set_page_breaks(&breaks)?;
    ws.set_landscape();
    ws.set_print_fit_to_pages(1, 0);
    Ok(())
}

/// The measured-compliance rows (every row, flagged first); returns the next free row.
fn compliance(ws: &mut Worksheet, mut r: u32, c: &CalibrationResults) -> Result<u32, XlsxError> {
    if c.compliance.is_empty() {
        return Ok(r);
    }
    title(
        ws,
        r,
        "Measured compliance: IEEE 519-2014 statistical evaluation (clause 5.1 voltage, 5.2 current; nearest-rank percentiles)",
    )?;
    head(ws, r + 1, COMPLIANCE)?;
    r += 2;
    let first = r;
    for comp in &c.compliance {
        let mut rows: Vec<&crate::study::measured::compliance::StatRow> =
            comp.rows.iter().collect();
        rows.sort_by_key(|x| !x.exceeds);
        for s in rows {
            let cells: Vec<Cell> = vec![
                t(&comp.channel),
                t(s.test),
                t(s.clause),
                t(&s.period),
                t(s.order.map_or_else(
                    || {
                        if comp.quantity == crate::io::recordings::Quantity::Voltage {
                            "THD".to_string()
                        } else {
                            "TDD".to_string()
                        }
                    },
                    |h| h.to_string(),
                )),
                n(s.value_percent, "0.000"),
                n(s.limit_percent, "0.000"),
                t(if s.exceeds { "EXCEEDS" } else { "meets" }),
                n(s.coverage_percent, "0.0"),
            ];
            row(ws, r, &cells)?;
            r += 1;
        }
    }
    super::verdict_colours(ws, first, r.saturating_sub(1), 7)?;
    Ok(r + 1)
}

/// |Z(h)| of the source: measured points against the calibrated model's line.
fn impedance_chart(first: u32, last: u32) -> Chart {
    let mut chart = Chart::new(ChartType::ScatterStraightWithMarkers);
    chart.set_width(690).set_height(420);
    chart
        .title()
        .set_name("Source |Z(h)| at the recording point: measured and calibrated model");
    chart.x_axis().set_name("Harmonic order");
    chart.y_axis().set_name("|Z| (ohm per phase)");
    chart
        .add_series()
        .set_name("measured (events)")
        .set_categories((SHEET, first, 0, last, 0))
        .set_values((SHEET, first, 3, last, 3))
        .set_marker(ChartMarker::new().set_type(ChartMarkerType::Circle))
        .set_format(ChartFormat::new().set_no_line());
    chart
        .add_series()
        .set_name("calibrated model")
        .set_categories((SHEET, first, 0, last, 0))
        .set_values((SHEET, first, 4, last, 4));
    chart
}

/// The harmonic voltage spectrum at the recording bus: measured against the model under
/// the `measured` scenario, in the last configuration seen.
fn spectrum_chart(first: u32, last: u32) -> Chart {
    let mut chart = Chart::new(ChartType::ScatterStraightWithMarkers);
    chart.set_width(690).set_height(420);
    chart
        .title()
        .set_name("Harmonic voltage (% of nominal): measured and model (scenario measured)");
    chart.x_axis().set_name("Harmonic order");
    chart.y_axis().set_name("V_h (%)");
    for (name, col) in [("measured", 3u16), ("model", 4u16)] {
        chart
            .add_series()
            .set_name(name)
            .set_categories((SHEET, first, 0, last, 0))
            .set_values((SHEET, first, col, last, col))
            .set_marker(ChartMarker::new().set_type(ChartMarkerType::Circle))
            .set_format(ChartFormat::new().set_no_line());
    }
    chart
}
