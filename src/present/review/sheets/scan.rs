//! The scan data sheet and its charts: one chart per bank bus and scenario, with the
//! configurations of that bank alone step by step, no banks, and the worst configuration
//! of that bus (the resonance row nearest a characteristic order) plotted and named. The
//! data sit outside the print area: the reviewer prints the charts, not 5,000 rows.

use rust_xlsxwriter::{
    Chart, ChartMarker, ChartMarkerType, ChartType, Format, Worksheet, XlsxError,
};

use super::super::writer::{header, n, row};
use crate::jobs::check::CheckResults;
use crate::model::Sequence;
use crate::study::resonance::{ResonanceRow, Verdict};

/// Most curves drawn per chart.
pub(super) const MAX_CURVES: usize = 12;

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

/// One column of the data table.
struct Column {
    bus: String,
    scenario: usize,
    label: String,
    z_ohm: Vec<f64>,
}

/// One chart: a bank bus in one scenario, its columns and the worst configuration's label.
struct Group {
    bus: String,
    scenario: usize,
    columns: std::ops::Range<usize>,
    /// The worst configuration's label and the order of its peak.
    worst: Option<(String, Option<f64>)>,
}

/// How close a resonance row comes to a characteristic order: flagged rows first, then the
/// smallest |margin|, then the larger amplification.
fn closeness(r: &ResonanceRow) -> (bool, f64, f64) {
    (
        r.verdict != Verdict::Resonant,
        r.margin_percent.map_or(f64::INFINITY, f64::abs),
        -r.peak.as_ref().map_or(0.0, |p| p.amplification),
    )
}

/// The worst positive-sequence resonance row at `bus` in `scenario`.
fn worst_row<'a>(res: &'a CheckResults, bus: &str, scenario: &str) -> Option<&'a ResonanceRow> {
    res.resonance
        .rows
        .iter()
        .filter(|r| r.bus == bus && r.scenario == scenario && r.sequence != Sequence::Zero)
        .min_by(|a, b| {
            closeness(a)
                .partial_cmp(&closeness(b))
                .unwrap_or(std::cmp::Ordering::Equal)
        })
}

/// Writes the scan table for every scenario and returns one chart per bank bus and
/// scenario, named for its chart sheet.
pub(super) fn scan(
    ws: &mut Worksheet,
    res: &CheckResults,
) -> Result<Vec<(String, Chart)>, XlsxError> {
    let orders = &res.scan.grid.orders;
    let mut columns: Vec<Column> = Vec::new();
    let mut groups: Vec<Group> = Vec::new();
    let none = res.scan.configurations.iter().position(|c| c.is_none());
    for (scenario, scenario_name) in res.scan.scenarios.iter().enumerate() {
        let mut seen: Vec<String> = Vec::new();
        for (b, bank) in res.network.banks.iter().enumerate() {
            let Some(sb) = res.scan.buses.iter().position(|&x| x == bank.bus) else {
                continue;
            };
            let bus = res.network.buses[bank.bus].id.clone();
            if seen.contains(&bus) {
                continue;
            }
            seen.push(bus.clone());
            let mut picks: Vec<usize> = none.into_iter().collect();
            for (c, cfg) in res.scan.configurations.iter().enumerate() {
                let only = cfg.steps.iter().enumerate().all(|(j, &s)| j == b || s == 0);
                if only && cfg.steps[b] > 0 && picks.len() < MAX_CURVES {
                    picks.push(c);
                }
            }
            let worst_row = worst_row(res, &bus, scenario_name);
            let worst = worst_row.and_then(|w| {
                (0..res.scan.configurations.len()).find(|&c| res.label(c) == w.configuration)
            });
            if let Some(w) = worst
                && !picks.contains(&w)
            {
                picks.push(w);
            }
            let start = columns.len();
            for &c in &picks {
                if let Some(curve) = res.scan.curve(scenario, c, sb) {
                    let mut label = res.label(c);
                    if Some(c) == worst {
                        label = format!("{label} (worst)");
                    }
                    columns.push(Column {
                        bus: bus.clone(),
                        scenario,
                        label,
                        z_ohm: curve.iter().map(|z| z.norm()).collect(),
                    });
                }
            }
            // Where the bank has a zero-sequence path, its zero-sequence scan beside.
            if let Some(z) = &res.zero_scan
                && bank.connection.has_zero_path()
                && let Some(zb) = z.buses.iter().position(|&x| x == bank.bus)
            {
                for &c in &picks {
                    if let Some(curve) = res
                        .zero_map
                        .get(c)
                        .and_then(|&zc| z.curve(scenario, zc, zb))
                    {
                        columns.push(Column {
                            bus: bus.clone(),
                            scenario,
                            label: format!("{} zero seq", res.label(c)),
                            z_ohm: curve.iter().map(|z| z.norm()).collect(),
                        });
                    }
                }
            }
            groups.push(Group {
                bus,
                scenario,
                columns: start..columns.len(),
                worst: worst.map(|c| {
                    (
                        res.label(c),
                        worst_row.and_then(|w| w.peak.as_ref().map(|p| p.order)),
                    )
                }),
            });
        }
    }
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
    let chars: Vec<f64> = res.resonance.characteristic_orders.clone();
    let mark_col = (columns.len() + 3) as u16;
    let mut charts = Vec::new();
    for (g, group) in groups.iter().enumerate() {
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
