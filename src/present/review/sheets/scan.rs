//! The scan data sheet and its charts: one chart per bank bus and scenario, with the
//! configurations of that bank alone step by step, no banks, and the worst configuration
//! of that bus (the resonance row nearest a characteristic order) plotted and named. The
//! data sit outside the print area: the reviewer prints the charts, not 5,000 rows.

use rust_xlsxwriter::{
    Chart, ChartMarker, ChartMarkerType, ChartType, Format, Worksheet, XlsxError,
};

use super::super::writer::{header, n, row};
use crate::jobs::charts::ScanCharts;
use crate::jobs::check::CheckResults;

/// A chart's size, pixels: two charts to a portrait page.
const CHART_WIDTH_PX: u32 = 690;
const CHART_HEIGHT_PX: u32 = 440;
/// Rows of 20 px a chart and its gap take.
const CHART_ROWS: u32 = 23;

/// The charts on one sheet, two to a printed page, in the order given.
pub(super) fn charts_sheet(
    ws: &mut Worksheet,
    charts: Vec<(String, Chart)>,
) -> Result<(), XlsxError> {
    let mut breaks = Vec::new();
    for (i, (_, chart)) in charts.iter().enumerate() {
        let r = i as u32 * CHART_ROWS;
        if i > 0 && i % 2 == 0 {
            breaks.push(r);
        }
        ws.insert_chart(r, 0, chart)?;
    }
    ws.set_page_breaks(&breaks)?;
    ws.set_portrait();
    ws.set_print_fit_to_pages(1, 0);
    Ok(())
}

/// Rows above the table: the note (the only printed cell) and the header.
const FIRST_DATA_ROW: u32 = 2;

/// Writes the scan table for every scenario and returns one chart per bank bus and
/// scenario, named for its chart sheet.
pub(super) fn scan(
    ws: &mut Worksheet,
    res: &CheckResults,
    charts_data: &ScanCharts,
) -> Result<Vec<(String, Chart)>, XlsxError> {
    let orders = &res.scan.grid.orders;
    let (columns, groups) = (&charts_data.curves, &charts_data.groups);
    ws.write_string_with_format(
        0,
        0,
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
    let head_refs: Vec<(&str, f64)> = heads.iter().map(|(h, w)| (h.as_str(), *w)).collect();
    header(ws, FIRST_DATA_ROW - 1, &head_refs)?;
    let f = res.plant.study.frequency_hz;
    for (i, &h) in orders.iter().enumerate() {
        let mut cells = vec![n(h, "0.00"), n(h * f, "0.0")];
        cells.extend(columns.iter().map(|c| n(c.z_ohm[i], "0.00000")));
        row(ws, i as u32 + FIRST_DATA_ROW, &cells)?;
    }
    ws.set_print_area(0, 0, 0, 0)?;
    let last = orders.len() as u32 + FIRST_DATA_ROW - 1;
    let mark_col = (columns.len() + 3) as u16;
    let mut charts = Vec::new();
    for (g, group) in groups.iter().enumerate() {
        let chart = chart(ws, res, columns, g, group, mark_col, last)?;
        let scenario = &res.scan.scenarios[group.scenario];
        let title = if scenarios > 1 {
            format!("Chart {} {scenario}", group.bus)
        } else {
            format!("Chart {}", group.bus)
        };
        let mut name: String = title
            .chars()
            .filter(|c| !"[]:*?/\\'".contains(*c))
            .take(27)
            .collect();
        if charts.iter().any(|(n, _): &(String, Chart)| *n == name) {
            name = format!("{name} {g}");
        }
        charts.push((name, chart));
    }
    Ok(charts)
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
        let c = (col + 2) as u16;
        chart
            .add_series()
            .set_name(&columns[col].label)
            .set_categories(("Scan", FIRST_DATA_ROW, 0, last, 0))
            .set_values(("Scan", FIRST_DATA_ROW, c, last, c));
    }
    if !chars.is_empty() {
        let end = FIRST_DATA_ROW + chars.len() as u32 - 1;
        chart
            .add_series()
            .set_name("characteristic orders")
            .set_categories(("Scan", FIRST_DATA_ROW, mc, end, mc))
            .set_values(("Scan", FIRST_DATA_ROW, mc + 1, end, mc + 1))
            .set_marker(ChartMarker::new().set_type(ChartMarkerType::Triangle))
            .set_format(rust_xlsxwriter::ChartFormat::new().set_no_line());
    }
    Ok(chart)
}
