//! The switching sheets: every simulated event beside its formula values, and the worst
//! event of each bank as waveforms (charts against time in ms; the data to the right of
//! the print area).

use rust_xlsxwriter::{
    Chart, ChartAxisLabelPosition, ChartFormat, ChartLine, ChartType, Worksheet, XlsxError,
};

use super::super::writer::{Cell, header, n, on, row, t};
use super::verdict_colours;
use crate::jobs::check::CheckResults;

/// Columns and widths of a table of `switching`.
const SWITCHING_HEADS: &[(&str, f64)] = &[
    ("Scenario", 9.0),
    ("Bank", 7.0),
    ("Step", 5.0),
    ("Case", 11.0),
    ("Before closing", 16.0),
    ("Trapped charge (pu)", 8.0),
    ("Peak inrush (A)", 9.0),
    ("Formula peak (A)", 9.0),
    ("Ringing (Hz)", 8.0),
    ("Formula ringing (Hz)", 9.0),
    ("Damping ratio", 8.0),
    ("Bus peak (pu)", 7.0),
    ("Capacitor peak (pu of bus)", 9.0),
    ("Capacitor peak (x rated peak)", 9.0),
    ("Largest remote peak (pu)", 9.0),
    ("Remote bank", 7.0),
    ("Ring-down (ms)", 8.0),
    ("Inrush limit (A)", 8.0),
    ("Inrush L to meet it (uH)", 9.0),
    ("Closing angle (deg)", 8.0),
    ("Verdict", 18.0),
];

pub(super) fn switching(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    header(ws, 0, SWITCHING_HEADS)?;
    // Wrapped headers need the room of four lines.
    ws.set_row_height(0, 60)?;
    let events = &res.switching.events;
    for (i, e) in events.iter().enumerate() {
        let remote = e
            .remote
            .iter()
            .max_by(|a, b| a.peak_pu.total_cmp(&b.peak_pu));
        row(
            ws,
            i as u32 + 1,
            &[
                t(&e.scenario),
                t(&e.bank),
                n(f64::from(e.step), "0"),
                t(e.case.label()),
                t(&e.before),
                n(e.trapped_charge_pu, "0.00"),
                n(e.peak_a, "0"),
                e.formula
                    .as_ref()
                    .map_or(t("not applicable"), |f| n(f.peak_a, "0")),
                on(e.frequency_hz, "0"),
                e.formula
                    .as_ref()
                    .map_or(t("not applicable"), |f| n(f.frequency_hz, "0")),
                on(e.zeta, "0.000"),
                n(e.bus_peak_pu, "0.00"),
                n(e.capacitor_peak_pu, "0.00"),
                n(e.capacitor_peak_rated, "0.00"),
                on(remote.map(|r| r.peak_pu), "0.00"),
                remote.map_or(Cell::Blank, |r| t(&r.bank)),
                match e.ring_down_ms {
                    Some(ms) => n(ms, "0"),
                    None => t(format!("> {:.0}", e.simulated_ms)),
                },
                on(e.inrush_limit_a, "0"),
                on(e.needed_inrush_uh, "0"),
                n(e.closing_deg, "0"),
                t(if e.inrush_exceeds {
                    "EXCEEDS inrush"
                } else if e.overvoltage_exceeds {
                    "EXCEEDS overvoltage"
                } else {
                    "meets"
                }),
            ],
        )?;
    }
    let last = events.len() as u32;
    let note = last + 2;
    let cap = crate::study::duty::transient_capability(res.plant.study.limits);
    for (k, line) in [
        format!(
            "Time-domain simulation (trapezoidal rule) of each step closing, the three poles at once, at the worst instant over a cycle for each figure; capacitor transient allowance {} x rated peak ({}).",
            cap.peak_multiple, cap.source
        ),
        "Formula columns: IEEE C37.012 closed formulas (from memory), undamped, closing at the voltage peak, scaled by 1 + |trapped charge|: the hand check, where they apply (a step energized alone; back-to-back between plain capacitors); \"not applicable\" where a detuned step takes part. Ringing frequency and damping: the largest mode of a matrix-pencil fit of the simulated inrush (every mode in the JSON).".to_string(),
    ]
    .iter()
    .enumerate()
    {
        ws.write_string(note + k as u32, 0, line)?;
    }
    verdict_colours(ws, 1, last, 20)
}

/// Rows of one bank's block of charts.
const BLOCK_ROWS: u32 = 22;
/// First column of the waveform data (outside the print area).
const DATA_COL: u16 = 20;

// Long: one chart's series and axes set up in order.
pub(super) fn waveforms(
    ws: &mut Worksheet,
    name: &str,
    res: &CheckResults,
) -> Result<(), XlsxError> {
    ws.write_string(
        0,
        0,
        "Worst switching event of each bank (largest simulated inrush): current and voltages against time",
    )?;
    if res.switching.waveforms.is_empty() {
        ws.write_string(1, 0, "No switching event was simulated.")?;
    }
    for (g, w) in res.switching.waveforms.iter().enumerate() {
        let col = DATA_COL + 6 * g as u16;
        let heads = [
            "Time (ms)",
            "Current (A)",
            "Bus voltage (pu)",
            "Capacitor voltage (pu)",
            "Formula peak time (ms)",
            "Formula peak (A)",
        ];
        ws.write_string(1, col, format!("Bank {}", w.bank))?;
        for (k, h) in heads.iter().enumerate() {
            ws.write_string(2, col + k as u16, *h)?;
        }
        for (k, ((tm, i), (v, c))) in w
            .time_ms
            .iter()
            .zip(&w.current_a)
            .zip(w.bus_pu.iter().zip(&w.capacitor_pu))
            .enumerate()
        {
            let r = 3 + k as u32;
            ws.write_number(r, col, *tm)?;
            ws.write_number(r, col + 1, *i)?;
            ws.write_number(r, col + 2, *v)?;
            ws.write_number(r, col + 3, *c)?;
        }
        let end = w.time_ms.last().copied().unwrap_or(0.0);
        let formula = w.formula_peak_a.filter(|a| a.is_finite());
        for (k, (tm, a)) in formula
            .map(|a| [(0.0, a), (end, a), (0.0, -a), (end, -a)])
            .iter()
            .flatten()
            .enumerate()
        {
            ws.write_number(3 + k as u32, col + 4, *tm)?;
            ws.write_number(3 + k as u32, col + 5, *a)?;
        }
        let last = 2 + w.time_ms.len() as u32;
        let title = format!(
            "Bank {}, step {} ({}), scenario {}",
            w.bank,
            w.step,
            w.case.label(),
            w.scenario
        );
        let mut ic = Chart::new(ChartType::ScatterStraight);
        ic.title().set_name(&format!("Inrush current: {title}"));
        ic.x_axis()
            .set_name("Time since closing (ms)")
            .set_label_position(ChartAxisLabelPosition::Low);
        ic.y_axis().set_name("Current (A)");
        ic.add_series()
            .set_name("simulated")
            .set_categories((name, 3, col, last, col))
            .set_values((name, 3, col + 1, last, col + 1));
        for pair in [3u32, 5].into_iter().filter(|_| formula.is_some()) {
            ic.add_series()
                .set_name(if pair == 3 {
                    "formula peak"
                } else {
                    "formula peak (negative)"
                })
                .set_categories((name, pair, col + 4, pair + 1, col + 4))
                .set_values((name, pair, col + 5, pair + 1, col + 5))
                .set_format(ChartFormat::new().set_line(
                    ChartLine::new().set_dash_type(rust_xlsxwriter::ChartLineDashType::Dash),
                ));
        }
        let mut vc = Chart::new(ChartType::ScatterStraight);
        vc.title().set_name(&format!("Voltages: {title}"));
        vc.x_axis()
            .set_name("Time since closing (ms)")
            .set_label_position(ChartAxisLabelPosition::Low);
        vc.y_axis().set_name("Per unit of nominal peak");
        vc.add_series()
            .set_name("bus")
            .set_categories((name, 3, col, last, col))
            .set_values((name, 3, col + 2, last, col + 2));
        vc.add_series()
            .set_name("capacitor")
            .set_categories((name, 3, col, last, col))
            .set_values((name, 3, col + 3, last, col + 3));
        let top = 2 + BLOCK_ROWS * g as u32;
        ic.set_width(560).set_height(380);
        vc.set_width(560).set_height(380);
        ws.insert_chart(top, 0, &ic)?;
        ws.insert_chart(top, 9, &vc)?;
    }
    let blocks = res.switching.waveforms.len().max(1) as u32;
    ws.set_print_area(0, 0, 2 + BLOCK_ROWS * blocks, 18)?;
    ws.set_landscape();
    ws.set_print_fit_to_pages(1, 0);
    Ok(())
}
