//! The Remedies sheet: every bank's options with their sizing and outcomes, then the
//! whole-plant options for the banks that form a flagged mode together.

use rust_xlsxwriter::{Worksheet, XlsxError};

use super::super::writer::{header, n, on, row, shared_widths, t};
use super::verdict_colours;
use crate::jobs::check::CheckResults;

/// The width of the remedy tables' narrow columns.
const W: f64 = 8.5;

/// Columns and widths of a table of `remedies`.
const REMEDY_HEADS: &[(&str, f64)] = &[
    ("Bank", 7.0),
    ("Rank", 5.0),
    ("Option", 24.0),
    ("p (%)", W),
    ("Tuning order", W),
    ("L per step (mH)", W),
    ("XL (ohm)", W),
    ("Capacitor voltage needed (V)", W),
    ("Capacitor rating (V)", W),
    ("kvar to buy per step", W),
    ("Effective kvar (bank)", W),
    ("I1 per step (A)", W),
    ("Linearity current (A)", W),
];

/// Columns and widths of a table of `remedies`.
const REMEDY_HEADS_2: &[(&str, f64)] = &[
    ("Bank", 7.0),
    ("Rank", 5.0),
    ("Option", 24.0),
    ("Irms per step after (A)", W),
    ("Peak current / linearity peak after", W),
    ("Resonance after low h", W),
    ("Resonance after high h", W),
    ("Resonant rows after", W),
    ("Limit rows over after", W),
    ("Duty rows over after", W),
    ("Worst THD after (%)", W),
    ("Worst TDD after (%)", W),
    ("Margin across tolerance after (%)", W),
    ("Tolerance bands flagged after", W),
    ("Result", 9.0),
];

/// The remedies in two tables that print at full width: what each option is (sizing, one
/// row per option) and, below, what it does (the studies re-run with it in place); the
/// bank's figures before any remedy on a line of their own.
// Long: the two remedy tables written on one row counter.
/// The headers of the sheet's three tables (`i`: options, after, whole plant), each column
/// as wide as any of them needs it.
fn heads(i: usize) -> Vec<(&'static str, f64)> {
    shared_widths(&[REMEDY_HEADS, REMEDY_HEADS_2, PLANT_REMEDY_HEADS]).swap_remove(i)
}

pub(super) fn remedies(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    header(ws, 0, &heads(0))?;
    if res.remedies.is_empty() {
        ws.write_string(
            1,
            0,
            "No remedy studied (no bank flagged, or remedies not asked for: see Assumptions).",
        )?;
        return Ok(());
    }
    let mut r = 1;
    for br in &res.remedies {
        for x in &br.results {
            let s = &x.option.step;
            row(
                ws,
                r,
                &[
                    t(&br.bank),
                    n(x.rank as f64, "0"),
                    t(&x.option.name),
                    n(s.p * 100.0, "0.00"),
                    n(s.tuning_order, "0.00"),
                    n(s.l_mh, "0.0000"),
                    n(s.xl_ohm, "0.00000"),
                    n(s.capacitor_kv_needed * 1000.0, "0.0"),
                    n(s.capacitor_rated_kv * 1000.0, "0"),
                    n(s.capacitor_kvar, "0.0"),
                    n(x.option.effective_kvar, "0.0"),
                    n(s.i1_a, "0.0"),
                    n(s.linearity_a, "0.0"),
                ],
            )?;
            r += 1;
        }
    }
    r += 1;
    let bold = rust_xlsxwriter::Format::new().set_bold();
    for br in &res.remedies {
        if let Some(b) = br.results.first().map(|x| &x.before) {
            ws.write_string_with_format(
                r,
                0,
                format!(
                    "Bank {} before any remedy: {} resonant row(s), {} scenario-configuration row(s) over a harmonic limit, {} duty row(s) over, worst THD {:.2} %, worst TDD {:.2} %.",
                    br.bank, b.resonant, b.limits_exceeded, b.duty_exceeded, b.worst_thd_percent, b.worst_tdd_percent
                ),
                &bold,
            )?;
            r += 1;
        }
    }
    r += 1;
    header(ws, r, &heads(1))?;
    // The sizing table's header repeats on every printed page; the outcome table is short.
    ws.set_repeat_rows(0, 0)?;
    ws.set_freeze_panes(1, 0)?;
    let first = r + 1;
    r += 1;
    for br in &res.remedies {
        for x in &br.results {
            row(
                ws,
                r,
                &[
                    t(&br.bank),
                    n(x.rank as f64, "0"),
                    t(&x.option.name),
                    on(x.step_rms_a, "0.0"),
                    on(x.linearity_ratio, "0.00"),
                    on(x.resonance_after.map(|r| r.0), "0.000"),
                    on(x.resonance_after.map(|r| r.1), "0.000"),
                    n(x.after.resonant as f64, "0"),
                    n(x.after.limits_exceeded as f64, "0"),
                    n(x.after.duty_exceeded as f64, "0"),
                    n(x.after.worst_thd_percent, "0.00"),
                    n(x.after.worst_tdd_percent, "0.00"),
                    on(x.after.margin_percent, "0.0"),
                    n(x.after.tolerance_flagged as f64, "0"),
                    t(crate::present::words::remedy_verdict(x)),
                ],
            )?;
            r += 1;
        }
    }
    verdict_colours(ws, first, r.saturating_sub(1), 14)?;
    plant_remedies(ws, res, r + 1)
}

const PLANT_REMEDY_HEADS: &[(&str, f64)] = &[
    ("Banks forming the mode", 16.0),
    ("Rank", 6.0),
    ("Whole-plant option", 40.0),
    ("Resonant rows before", 10.0),
    ("after", 8.0),
    ("Duty rows over before", 10.0),
    ("after", 8.0),
    ("Configurations over a limit after", 12.0),
    ("Worst THD before (%)", 10.0),
    ("after (%)", 9.0),
    ("Worst TDD after (%)", 10.0),
    ("Verdict", 24.0),
];

/// The whole-plant options (every bank of a flagged mode changed together), from row `r`.
fn plant_remedies(ws: &mut Worksheet, res: &CheckResults, r: u32) -> Result<(), XlsxError> {
    if res.plant_remedies.is_empty() {
        return Ok(());
    }
    header(ws, r, &heads(2))?;
    let first = r + 1;
    let mut r = first;
    for pr in &res.plant_remedies {
        for x in &pr.results {
            let verdict = match (x.passes, x.worsens) {
                (true, false) => "passes",
                (true, true) => "passes; worsens the worst figure",
                (false, false) => "fails",
                (false, true) => "fails; worsens the worst figure",
            };
            row(
                ws,
                r,
                &[
                    t(pr.banks.join(", ")),
                    n(x.rank as f64, "0"),
                    t(&x.option.name),
                    n(x.before.resonant as f64, "0"),
                    n(x.after.resonant as f64, "0"),
                    n(x.before.duty_exceeded as f64, "0"),
                    n(x.after.duty_exceeded as f64, "0"),
                    n(x.after.limits_exceeded as f64, "0"),
                    n(x.before.worst_thd_percent, "0.00"),
                    n(x.after.worst_thd_percent, "0.00"),
                    n(x.after.worst_tdd_percent, "0.00"),
                    t(verdict),
                ],
            )?;
            r += 1;
        }
    }
    verdict_colours(ws, first, r.saturating_sub(1), 11)
}
