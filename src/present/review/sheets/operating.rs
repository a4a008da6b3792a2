//! The operating-point sheet: PF at the PCC and bus voltages per scenario and configuration
//! (PF as a live formula of the visible P and Q), the kvar the load needs (the hand estimate
//! P·(tan φ₀ − tan φ_target) live beside the load-flow figure), the voltage change per step
//! (live) and the configurations without a load-flow solution.

use rust_xlsxwriter::{Format, Worksheet, XlsxError, utility::row_col_to_cell};

use super::super::writer::{
    Cell, LINE_POINTS, header, header_width, n, on, print_digest, row, t, wrapped_lines,
};
use super::verdict_colours;
use crate::jobs::check::CheckResults;

/// The header row of a table below the first one: wrapped, shaded, a taller row (the
/// sheet's first header row is the one frozen and repeated on print).
fn sub_header(ws: &mut Worksheet, r: u32, heads: &[&str]) -> Result<(), XlsxError> {
    let head = Format::new()
        .set_bold()
        .set_text_wrap()
        .set_background_color("#DCE6F0");
    // As tall as the most wrapped header in the first table's column widths.
    let lines = (heads.iter().enumerate())
        .map(|(c, h)| {
            let w = POINT_HEADS.get(c).map_or(9.0, |p| header_width(p.0, p.1));
            wrapped_lines(h, w, true)
        })
        .fold(1.0, f64::max);
    ws.set_row_height(r, LINE_POINTS * lines + 2.0)?;
    for (c, h) in heads.iter().enumerate() {
        ws.write_string_with_format(r, c as u16, *h, &head)?;
    }
    Ok(())
}

/// The operating-point sheet: the points table, then the kvar needed and the step changes
/// below it.
pub(super) fn operating(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    let r = points(ws, res)?;
    let r = needs(ws, res, r)?;
    step_changes(ws, res, r)
}

/// Columns and widths of a table of `points`.
const POINT_HEADS: &[(&str, f64)] = &[
    ("Scenario", 9.0),
    ("Configuration", 24.0),
    ("P from supply (kW)", 11.0),
    ("Q from supply (kvar, + lagging)", 12.0),
    ("PF (formula)", 9.0),
    ("Lagging / leading", 9.0),
    ("Target PF (lagging)", 9.0),
    ("PCC V (pu)", 9.0),
    ("Min V (pu)", 9.0),
    ("Min V bus", 10.0),
    ("Max V (pu)", 9.0),
    ("Max V bus", 10.0),
    ("Buses outside range", 9.0),
    ("Verdict", 16.0),
];

/// The points table with its digest, the range line and the configurations without
/// solution; returns the last row written.
fn points(ws: &mut Worksheet, res: &CheckResults) -> Result<u32, XlsxError> {
    let op = &res.operating;
    let bold = Format::new().set_bold();
    header(ws, 0, POINT_HEADS)?;
    let mut r = 1u32;
    for p in &op.points {
        let cell = |c: u16| row_col_to_cell(r, c);
        let pf = match p.pcc_power_factor {
            Some(v) => Cell::Formula(
                format!("={}/SQRT({}^2+{}^2)", cell(2), cell(2), cell(3)),
                v,
                "0.0000",
            ),
            None => t("not defined (no load)"),
        };
        row(
            ws,
            r,
            &[
                t(&p.scenario),
                t(&p.configuration),
                n(p.pcc_p_kw, "0.0"),
                n(p.pcc_q_kvar, "0.0"),
                pf,
                t(if p.pcc_q_kvar < 0.0 {
                    "leading"
                } else {
                    "lagging"
                }),
                n(op.target_power_factor, "0.00"),
                n(p.pcc_v_pu, "0.0000"),
                n(p.min_v_pu, "0.0000"),
                t(&p.min_v_bus),
                n(p.max_v_pu, "0.0000"),
                t(&p.max_v_bus),
                n(p.buses_out_of_range as f64, "0"),
                t(crate::present::words::operating_verdict(p)),
            ],
        )?;
        r += 1;
    }
    let keys: Vec<(bool, f64)> = op
        .points
        .iter()
        .map(|p| {
            (
                p.flagged(),
                (p.max_v_pu - 1.0).abs().max((p.min_v_pu - 1.0).abs()),
            )
        })
        .collect();
    print_digest(ws, 1, 13, &keys, "Operating point")?;
    verdict_colours(ws, 1, r.saturating_sub(1), 13)?;
    r += 1;
    ws.write_string_with_format(
        r,
        0,
        format!(
            "Voltage range {}-{} pu; loads at constant power; sources at their Voltage (pu) behind their impedance.",
            op.low_pu, op.high_pu
        ),
        &bold,
    )?;
    for e in &op.collapsed {
        r += 1;
        ws.write_string(r, 0, format!("NO SOLUTION: {e}"))?;
    }
    Ok(r)
}

/// The kvar each bank alone needs, below row `r`; returns the last row written.
fn needs(ws: &mut Worksheet, res: &CheckResults, mut r: u32) -> Result<u32, XlsxError> {
    let op = &res.operating;
    let bold = Format::new().set_bold();
    r += 2;
    ws.write_string_with_format(
        r,
        0,
        "Reactive power needed to reach the target PF at the PCC (each bank alone)",
        &bold,
    )?;
    r += 1;
    let heads = [
        "Scenario",
        "Bank",
        "P no banks (kW)",
        "Q no banks (kvar)",
        "Target PF",
        "Hand estimate P(tan φ0 − tan φt) (kvar, formula)",
        "Steps needed (load flow)",
        "Rated kvar needed",
        "Installed kvar",
    ];
    sub_header(ws, r, &heads)?;
    for need in &op.needs {
        r += 1;
        let cell = |c: u16| row_col_to_cell(r, c);
        row(
            ws,
            r,
            &[
                t(&need.scenario),
                t(&need.bank),
                n(need.p_kw_without_banks, "0.0"),
                n(need.q_kvar_without_banks, "0.0"),
                n(op.target_power_factor, "0.00"),
                Cell::Formula(
                    format!(
                        "=MAX(0,{p}*({q}/{p}-TAN(ACOS({t}))))",
                        p = cell(2),
                        q = cell(3),
                        t = cell(4)
                    ),
                    need.hand_kvar,
                    "0.0",
                ),
                need.steps_needed
                    .map_or_else(|| t("more than 4 x the installed steps"), |s| n(s, "0.00")),
                on(need.rated_kvar_needed, "0.0"),
                n(need.installed_kvar, "0.0"),
            ],
        )?;
    }
    Ok(r)
}

/// The worst step voltage changes, below row `r`.
fn step_changes(ws: &mut Worksheet, res: &CheckResults, mut r: u32) -> Result<(), XlsxError> {
    let op = &res.operating;
    let bold = Format::new().set_bold();
    r += 2;
    ws.write_string_with_format(
        r,
        0,
        format!(
            "Voltage change at the bank's bus when one step switches in (worst case), limit {} %",
            op.step_limit_percent
        ),
        &bold,
    )?;
    r += 1;
    // The configuration in the first table's wide Configuration column.
    let heads = [
        "Bank",
        "Configuration after",
        "Bus",
        "Step",
        "Scenario",
        "V before (pu)",
        "V after (pu)",
        "Change (%) (formula)",
        "Limit (%)",
        "Verdict",
    ];
    sub_header(ws, r, &heads)?;
    let first = r + 1;
    for s in &op.step_changes {
        r += 1;
        let cell = |c: u16| row_col_to_cell(r, c);
        row(
            ws,
            r,
            &[
                t(&s.bank),
                t(&s.configuration),
                t(&s.bus),
                n(f64::from(s.step), "0"),
                t(&s.scenario),
                n(s.v_before_pu, "0.00000"),
                n(s.v_after_pu, "0.00000"),
                Cell::Formula(
                    format!("=({}-{})/{}*100", cell(6), cell(5), cell(5)),
                    s.change_percent,
                    "0.00",
                ),
                n(s.limit_percent, "0.0"),
                t(if s.exceeds { "EXCEEDS" } else { "meets" }),
            ],
        )?;
    }
    verdict_colours(ws, first, r, 9)?;
    Ok(())
}
