//! The design's own sheets: the plans compared (`Design`) and the controller's choices at
//! each load level (`Load levels`), ahead of the recommended plan's study sheets.

use rust_xlsxwriter::{Format, Worksheet, XlsxError};

use super::super::writer::{Cell, LINE_POINTS, header, n, on, row, t, wrapped_lines};
use crate::jobs::design::{DesignResult, Plan, PlanResult};
use crate::model::CapacitorBank;
use crate::present::terminal::design::{baseline_words, level_words, plan_words, replaced_words};

fn title(ws: &mut Worksheet, r: u32, text: &str, size: f64) -> Result<(), XlsxError> {
    ws.write_string_with_format(r, 0, text, &Format::new().set_bold().set_font_size(size))?;
    Ok(())
}

/// A sentence across the table's width, its row as tall as its wrapped lines.
fn sentence(ws: &mut Worksheet, r: u32, text: &str, last_col: u16) -> Result<(), XlsxError> {
    let f = Format::new()
        .set_text_wrap()
        .set_align(rust_xlsxwriter::FormatAlign::Top);
    ws.merge_range(r, 0, r, last_col, text, &f)?;
    ws.set_row_height(r, LINE_POINTS * wrapped_lines(text, 190.0, false) + 3.0)?;
    Ok(())
}

/// Columns and widths of a table of `design`.
const DESIGN_HEADS: &[(&str, f64)] = &[
    ("Rank", 5.0),
    ("Pareto", 6.0),
    ("Bank", 9.0),
    ("Bus", 9.0),
    ("Steps", 5.0),
    ("Step kvar (rated)", 7.0),
    ("Rated kV", 6.0),
    ("Reactor", 7.0),
    ("kvar at bus kV", 7.0),
    ("Cost (relative)", 7.0),
    ("Lowest PF", 7.0),
    ("Weighted PF", 8.0),
    ("Resonance low (h)", 9.5),
    ("Resonance high (h)", 9.5),
    ("Hand check h", 7.0),
    ("Margin (%)", 7.0),
    ("Resonant rows", 8.0),
    ("Tolerance flagged", 9.0),
    ("Duty exceeded", 7.0),
    ("PCC THD (%)", 6.0),
    ("TDD (%)", 6.0),
    ("Step change (%)", 7.0),
    ("Verdict", 34.0),
];

/// The `Design` sheet: the answer, then every plan ranked with what it fails.
// Long: the Design sheet written top to bottom on one row counter.
pub fn design(ws: &mut Worksheet, d: &DesignResult) -> Result<(), XlsxError> {
    const LAST: u16 = 22;
    title(
        ws,
        0,
        "Design of the power-factor bank: the plans compared",
        14.0,
    )?;
    let c = &d.counts;
    let mut lines = vec![
        format!(
            "Target PF {} at the PCC {}; load levels {}. Without the bank: {}.",
            d.target_power_factor,
            d.plant.pcc_bus().unwrap_or_default(),
            d.levels
                .iter()
                .map(|(n, h)| format!("{n} ({h} h/year)"))
                .collect::<Vec<_>>()
                .join(", "),
            baseline_words(d)
        ),
        format!(
            "Searched {} plans ({} families of size, detuning and voltage class × step counts): {} after the power-factor bound, {} scanned over every configuration, {} through every check, {} pass.",
            c.enumerated, c.families, c.after_pf_bound, c.scanned, c.checked, c.passed
        ),
    ];
    lines.extend(replaced_words(d));
    match d.recommended.map(|i| &d.plans[i]) {
        Some(p) => {
            lines.push(format!(
                "Recommended: {}. PF at the PCC: {}. {}",
                plan_words(p),
                level_words(d, p),
                d.reason
            ));
            lines.push("The sheets after Load levels are the full study of the recommended plan, as `overtone check` writes it for the plant with this plan on its Capacitors sheet.".into());
        }
        None => lines.push(format!("No plan satisfies every check. {}", d.reason)),
    }
    lines.push("Duty, PCC THD, TDD and step change read – where the plan resonates: the scan stopped it before those checks. Pareto: on the set of cost, margin to the nearest characteristic order and hours-weighted PF.".into());
    lines.push("A PROPOSAL for a licensed engineer's review: verify the input, the costs and the ratings; local electrical codes and the utility's rules govern.".into());
    for (i, l) in lines.iter().enumerate() {
        sentence(ws, 1 + i as u32, l, LAST)?;
    }
    let head = 2 + lines.len() as u32;
    header(ws, head, DESIGN_HEADS)?;
    let wrap = Format::new().set_text_wrap();
    for (i, p) in d.plans.iter().enumerate() {
        let r = head + 1 + i as u32;
        let verdict = if p.passes() {
            "passes every check".to_string()
        } else {
            format!("fails: {}", p.fails.join("; "))
        };
        let checked = |v: f64| {
            if p.scan_only {
                Cell::Text("–".into())
            } else {
                n(v, "0.00")
            }
        };
        row(
            ws,
            r,
            &[
                n(p.rank as f64, "0"),
                t(if p.pareto { "yes" } else { "" }),
                per_line(p, |_, b| b.id.clone()),
                per_line(p, |plan, _| plan.bus.clone()),
                joint(p, |plan| f64::from(plan.steps), "0"),
                joint(p, |plan| plan.step_kvar, "0.0"),
                joint(p, |plan| plan.rated_kv, "0.000"),
                t(p.plan.reactor_label()),
                n(p.effective_kvar, "0"),
                n(p.cost, "0"),
                on(p.pf_lowest, "0.000"),
                on(p.pf_weighted, "0.000"),
                on(p.resonance.map(|r| r.0), "0.00"),
                on(p.resonance.map(|r| r.1), "0.00"),
                on(p.hand_order, "0.00"),
                on(p.outcome.margin_percent, "0.0"),
                n(p.outcome.resonant as f64, "0"),
                n(p.outcome.tolerance_flagged as f64, "0"),
                if p.scan_only {
                    Cell::Text("–".into())
                } else {
                    n(p.outcome.duty_exceeded as f64, "0")
                },
                checked(p.pcc_thd_percent),
                checked(p.tdd_percent),
                checked(p.step_change_percent),
                Cell::Blank,
            ],
        )?;
        ws.write_string_with_format(r, LAST, &verdict, &wrap)?;
        // A plan at several buses: each bank on its own line of its cells.
        for (c, cell) in [
            (2, per_line(p, |_, b| b.id.clone())),
            (3, per_line(p, |plan, _| plan.bus.clone())),
            (4, joint(p, |plan| f64::from(plan.steps), "0")),
            (5, joint(p, |plan| plan.step_kvar, "0.0")),
            (6, joint(p, |plan| plan.rated_kv, "0.000")),
        ] {
            if let (false, Cell::Text(text)) = (p.also.is_empty(), cell) {
                ws.write_string_with_format(r, c, &text, &wrap)?;
            }
        }
        let banks = (1 + p.also.len()) as f64;
        ws.set_row_height(
            r,
            LINE_POINTS * wrapped_lines(&verdict, 34.0, false).max(banks),
        )?;
    }
    super::verdict_colours(ws, head + 1, head + d.plans.len() as u32, LAST)?;
    ws.set_freeze_panes(head + 1, 0)?;
    ws.set_landscape();
    ws.set_print_fit_to_pages(1, 0);
    ws.set_repeat_rows(head, head)?;
    Ok(())
}

/// A plan's figure `f` as a number for a plan at one bus, else each bank's on its own line
/// as text (in design row order).
fn joint(p: &PlanResult, f: impl Fn(&Plan) -> f64, format: &'static str) -> Cell {
    if p.also.is_empty() {
        return n(f(&p.plan), format);
    }
    per_line(p, |plan, _| format!("{}", f(plan)))
}

/// `f` of each of a plan's banks, one per line.
fn per_line(p: &PlanResult, f: impl Fn(&Plan, &CapacitorBank) -> String) -> Cell {
    t(p.banks()
        .map(|(plan, b)| f(plan, b))
        .collect::<Vec<_>>()
        .join("\n"))
}

/// The `Load levels` sheet: per level and scenario, the controller's steps and the PCC
/// power factor without the bank and with the recommended plan.
pub fn load_levels(ws: &mut Worksheet, d: &DesignResult) -> Result<(), XlsxError> {
    title(ws, 0, "Load levels: what the controller switches", 14.0)?;
    let text = "At each level and scenario the plant's other banks switch first, then the designed bank (banks designed together at several buses take one step each in rotation); each adds steps while the PCC power factor is below the target and blocks a step that would lead beyond the limit (common practice). Steps are listed bank by bank in the Capacitors sheet's order, the designed bank(s) last.";
    sentence(ws, 1, text, 8)?;
    header(
        ws,
        3,
        &[
            ("Level", 12.0),
            ("Hours per year", 9.0),
            ("Scenario", 12.0),
            ("PF without the bank", 10.0),
            ("Steps without", 12.0),
            ("PF with the plan", 10.0),
            ("Steps with the plan", 12.0),
            ("Reaches target", 9.0),
            ("P at PCC (kW)", 10.0),
        ],
    )?;
    let plan = d.recommended.map(|i| &d.plans[i]);
    let mut r = 4;
    for (l, (name, hours)) in d.levels.iter().enumerate() {
        for (s, scen) in d.scenarios.iter().enumerate() {
            let base = &d.baseline().control[l][s];
            let with = plan.map(|p| &p.control[l][s]);
            let steps = |v: &[u32]| v.iter().map(u32::to_string).collect::<Vec<_>>().join(" ");
            row(
                ws,
                r,
                &[
                    t(name.clone()),
                    n(*hours, "0"),
                    t(scen.clone()),
                    on(base.pf, "0.000"),
                    t(steps(&base.steps)),
                    on(with.and_then(|c| c.pf), "0.000"),
                    t(with.map_or_else(String::new, |c| steps(&c.steps))),
                    t(with.map_or("", |c| {
                        if c.reaches {
                            "reaches"
                        } else if c.leading() {
                            "LEADING"
                        } else {
                            "below target"
                        }
                    })),
                    n(base.p_kw, "0"),
                ],
            )?;
            r += 1;
        }
    }
    super::verdict_colours(ws, 4, r.saturating_sub(1), 7)?;
    ws.set_landscape();
    ws.set_print_fit_to_pages(1, 0);
    Ok(())
}
