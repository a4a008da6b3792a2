//! The Charts sheet: one chart per bank bus and scenario, with the configurations of that
//! bank alone step by step, no banks, and the worst configuration of that bus (the
//! resonance row nearest a characteristic order) plotted and named, and the scan data
//! behind them to the right, outside the print area: the reviewer prints the charts, not
//! 5,000 rows.

use rust_xlsxwriter::{
    Chart, ChartMarker, ChartMarkerType, ChartType, Format, Worksheet, XlsxError,
};

use super::super::writer::header_format;
use crate::jobs::charts::ScanCharts;
use crate::jobs::check::CheckResults;

/// The sheet's name, as the charts' series refer to it.
pub(super) const SHEET: &str = "Charts";

/// A chart's size, pixels: two charts to a portrait page.
const CHART_WIDTH_PX: u32 = 690;
const CHART_HEIGHT_PX: u32 = 440;
/// Rows of 20 px a chart and its gap take.
const CHART_ROWS: u32 = 23;

/// The first column of the scan data, right of the charts.
const DATA_COL: u16 = 14;

/// The charts at the sheet's left, two to a printed page, in the order given; the print
/// area is theirs alone.
fn place_charts(ws: &mut Worksheet, charts: &[Chart]) -> Result<(), XlsxError> {
    let mut breaks = Vec::new();
    for (i, chart) in charts.iter().enumerate() {
        let r = i as u32 * CHART_ROWS;
        if i > 0 && i % 2 == 0 {
            breaks.push(r);
        }
        ws.insert_chart(r, 0, chart)?;
    }
    ws.set_page_breaks(&breaks)?;
    let rows = (charts.len() as u32 * CHART_ROWS).max(1);
    ws.set_print_area(0, 0, rows - 1, DATA_COL - 3)?;
    ws.set_portrait();
    ws.set_print_fit_to_pages(1, 0);
    Ok(())
}

/// Rows above the table: the note and the header.
const FIRST_DATA_ROW: u32 = 2;

/// Writes the Charts sheet: the scan table of every charted curve (right of the charts)
/// and one chart per bank bus and scenario.
pub(super) fn charts(
    ws: &mut Worksheet,
    res: &CheckResults,
    charts_data: &ScanCharts,
) -> Result<(), XlsxError> {
    let orders = &res.scan.grid.orders;
    let (columns, groups) = (&charts_data.curves, &charts_data.groups);
    ws.write_string_with_format(
        0,
        DATA_COL,
        format!(
            "Scan data behind the charts ({} scan points x {} curves); not printed: the charts are.",
            orders.len(),
            columns.len()
        ),
        &Format::new().set_bold(),
    )?;
    let scenarios = res.scan.scenarios.len();
    let mut heads: Vec<(String, f64)> =
        vec![("Order".into(), 8.0), ("Frequency (Hz)".into(), 10.0)];
    heads.extend(columns.iter().map(|c| {
        let scenario = if scenarios > 1 {
            format!(" {}", res.scan.scenarios[c.scenario])
        } else {
            String::new()
        };
        (format!("|Z| {} {}{scenario} (ohm)", c.bus, c.label), 14.0)
    }));
    let head = header_format();
    for (i, (h, w)) in heads.iter().enumerate() {
        let c = DATA_COL + i as u16;
        ws.write_string_with_format(FIRST_DATA_ROW - 1, c, h, &head)?;
        ws.set_column_width(c, *w)?;
    }
    let f = res.plant.study.frequency_hz;
    let (order_fmt, hz_fmt, z_fmt) = (
        Format::new().set_num_format("0.00"),
        Format::new().set_num_format("0.0"),
        Format::new().set_num_format("0.00000"),
    );
    for (i, &h) in orders.iter().enumerate() {
        let r = i as u32 + FIRST_DATA_ROW;
        ws.write_number_with_format(r, DATA_COL, h, &order_fmt)?;
        ws.write_number_with_format(r, DATA_COL + 1, h * f, &hz_fmt)?;
        for (k, c) in columns.iter().enumerate() {
            ws.write_number_with_format(r, DATA_COL + 2 + k as u16, c.z_ohm[i], &z_fmt)?;
        }
    }
    let last = orders.len() as u32 + FIRST_DATA_ROW - 1;
    let mark_col = DATA_COL + (columns.len() + 3) as u16;
    let mut charts = Vec::new();
    for (g, group) in groups.iter().enumerate() {
        charts.push(chart(ws, res, columns, g, group, mark_col, last)?);
    }
    place_charts(ws, &charts)
}

/// Chart `g` of `group`: its curves from the data table (rows up to `last`), with its
/// characteristic-order markers written at column `mark_col + 2g`.
fn chart(
    ws: &mut Worksheet,
    res: &CheckResults,
    columns: &[crate::jobs::charts::ChartCurve],
    g: usize,
    group: &crate::jobs::charts::ChartGroup,
    mark_col: u16,
    last: u32,
) -> Result<Chart, XlsxError> {
    let chars = &res.resonance.characteristic_orders;
    let top = columns[group.columns.clone()]
        .iter()
        .flat_map(|c| c.z_ohm.iter().copied())
        .fold(0.0, f64::max);
    // The characteristic-order markers of this chart, at the right of the table.
    let mc = mark_col + 2 * g as u16;
    ws.write_string(FIRST_DATA_ROW - 1, mc, "Characteristic order")?;
    ws.write_string(FIRST_DATA_ROW - 1, mc + 1, "Marker height (ohm)")?;
    for (i, &h) in chars.iter().enumerate() {
        ws.write_number(i as u32 + FIRST_DATA_ROW, mc, h)?;
        ws.write_number(i as u32 + FIRST_DATA_ROW, mc + 1, top)?;
    }
    let scenario = &res.scan.scenarios[group.scenario];
    let mut chart = Chart::new(ChartType::ScatterStraight);
    chart.set_width(CHART_WIDTH_PX).set_height(CHART_HEIGHT_PX);
    let worst = group
        .worst
        .as_ref()
        .map(|(w, h)| match h {
            Some(h) => format!("; nearest a characteristic order: {w}, peak at h {h:.2}"),
            None => format!("; worst {w}"),
        })
        .unwrap_or_default();
    chart
        .title()
        .set_name(&format!(
            "Driving-point impedance at {}, scenario {scenario}{worst}",
            group.bus
        ))
        .set_font(rust_xlsxwriter::ChartFont::new().set_size(10).set_bold());
    chart.x_axis().set_name("Harmonic order");
    chart.y_axis().set_name("|Z| (ohm)");
    for col in group.columns.clone() {
        let c = DATA_COL + (col + 2) as u16;
        chart
            .add_series()
            .set_name(&columns[col].label)
            .set_categories((SHEET, FIRST_DATA_ROW, DATA_COL, last, DATA_COL))
            .set_values((SHEET, FIRST_DATA_ROW, c, last, c));
    }
    if !chars.is_empty() {
        let end = FIRST_DATA_ROW + chars.len() as u32 - 1;
        chart
            .add_series()
            .set_name("characteristic orders")
            .set_categories((SHEET, FIRST_DATA_ROW, mc, end, mc))
            .set_values((SHEET, FIRST_DATA_ROW, mc + 1, end, mc + 1))
            .set_marker(ChartMarker::new().set_type(ChartMarkerType::Triangle))
            .set_format(rust_xlsxwriter::ChartFormat::new().set_no_line());
    }
    Ok(chart)
}
