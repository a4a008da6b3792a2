//! The `Design` and `Load levels` sheets (input contract, design section): cells checked
//! for their type and form here, at their cells; what they mean for the plant (a bus that
//! exists, a plan that can reach the target) is checked by [`crate::jobs::design`].

use super::table::{Diagnostics, Row, Table};
use crate::model::*;

/// A list of positive numbers in one cell: a number, or text like `25, 50, 100` (commas or
/// semicolons); `None` when blank. A bad item is reported at the cell.
fn numbers(t: &Table, r: &Row, header: &str, d: &mut Diagnostics) -> Option<Vec<f64>> {
    let text = t.text(r, header, d)?;
    let mut out = Vec::new();
    for item in text
        .split([',', ';'])
        .map(str::trim)
        .filter(|s| !s.is_empty())
    {
        match item.parse::<f64>() {
            Ok(v) if v.is_finite() && v > 0.0 && v <= MAX_MAGNITUDE => out.push(v),
            _ => {
                d.error(
                    &t.sheet,
                    t.cell(r, header),
                    format!(
                        "\"{header}\" must be positive numbers separated by commas (e.g. 25, 50, 100), found \"{text}\""
                    ),
                );
                return Some(Vec::new());
            }
        }
    }
    if out.is_empty() {
        d.error(
            &t.sheet,
            t.cell(r, header),
            format!("\"{header}\" lists no number, found \"{text}\": give at least one, e.g. 25, 50, 100"),
        );
    }
    out.sort_by(f64::total_cmp);
    out.dedup();
    Some(out)
}

/// One detuning choice: `plain` (or 0), a detuning factor in % (`7`, `7 %`), or a tuned
/// order (`tuned 4.7`, `h4.7`).
pub fn reactor_choice(text: &str) -> Option<Reactor> {
    let s = text.trim().to_ascii_lowercase();
    if s == "plain" || s == "none" || s == "0" {
        return Some(Reactor::None);
    }
    let tuned = s
        .strip_prefix("tuned")
        .or_else(|| s.strip_prefix('h'))
        .map(str::trim);
    if let Some(order) = tuned {
        return order
            .parse::<f64>()
            .ok()
            .filter(|h| h.is_finite() && *h > 1.0 && *h <= 100.0)
            .map(|order| Reactor::Tuned { order });
    }
    s.trim_end_matches('%')
        .trim()
        .parse::<f64>()
        .ok()
        .filter(|p| p.is_finite() && *p > 0.0 && *p < 100.0)
        .map(|percent| Reactor::Detuning { percent })
}

fn steps_range(text: &str) -> Option<(u32, u32)> {
    let parse = |s: &str| s.trim().parse::<u32>().ok();
    let (a, b) = match text.split_once('-') {
        Some((a, b)) => (parse(a)?, parse(b)?),
        None => (parse(text)?, parse(text)?),
    };
    (1 <= a && a <= b && b <= 64).then_some((a, b))
}

// Long: one Design column per line, each checked at its cell.
pub fn design(t: &Table, d: &mut Diagnostics) -> Vec<DesignRow> {
    t.rows
        .iter()
        .map(|r| {
            let steps = match t.text(r, "Steps", d) {
                None => DEFAULT_STEPS,
                Some(text) => steps_range(&text).unwrap_or_else(|| {
                    d.error(
                        &t.sheet,
                        t.cell(r, "Steps"),
                        format!(
                            "\"Steps\" must be a count from 1 to 64 or a range like 2-8, found \"{text}\""
                        ),
                    );
                    DEFAULT_STEPS
                }),
            };
            let reactors = match t.text(r, "Detuning", d) {
                None => DEFAULT_REACTORS.to_vec(),
                Some(text) => {
                    let mut out: Vec<Reactor> = Vec::new();
                    for item in text.split([',', ';']).map(str::trim).filter(|s| !s.is_empty()) {
                        match reactor_choice(item) {
                            Some(x) if !out.contains(&x) => out.push(x),
                            Some(_) => {}
                            None => {
                                d.error(
                                    &t.sheet,
                                    t.cell(r, "Detuning"),
                                    format!(
                                        "\"Detuning\" must list plain, detuning factors in % (5.67, 7, 14) or tuned orders (tuned 4.7), found \"{item}\" in \"{text}\""
                                    ),
                                );
                                out.clear();
                                break;
                            }
                        }
                    }
                    if out.is_empty() {
                        out = DEFAULT_REACTORS.to_vec();
                    }
                    out
                }
            };
            let positive = |v: Option<f64>, header: &str, d: &mut Diagnostics| {
                v.filter(|x| {
                    let ok = x.is_finite() && *x >= 0.0 && *x <= MAX_MAGNITUDE;
                    if !ok {
                        d.error(
                            &t.sheet,
                            t.cell(r, header),
                            format!("\"{header}\" must be a number of 0 or more, found {x}"),
                        );
                    }
                    ok
                })
            };
            let reactor_cost = t.number(r, "Reactor cost (per kvar)", "a number of 0 or more", d);
            let step_cost = t.number(r, "Step cost", "a number of 0 or more", d);
            let leading = t
                .number(r, "Leading PF limit", "a power factor above 0.5 and at most 1", d)
                .filter(|v| {
                    let ok = (0.5..=1.0).contains(v) && *v > 0.5;
                    if !ok && !v.is_nan() {
                        d.error(
                            &t.sheet,
                            t.cell(r, "Leading PF limit"),
                            format!(
                                "\"Leading PF limit\" must be a power factor above 0.5 and at most 1, found {v}"
                            ),
                        );
                    }
                    ok
                });
            DesignRow {
                bus: t.id(r, "Bus", d),
                step_kvar: numbers(t, r, "Step kvar", d).unwrap_or_else(|| {
                    if !t.is_missing("Step kvar") {
                        d.error(
                            &t.sheet,
                            t.cell(r, "Step kvar"),
                            "\"Step kvar\" is required: the allowed step sizes, kvar at rated voltage, e.g. 25, 50, 100; found a blank cell".into(),
                        );
                    }
                    Vec::new()
                }),
                steps_min: steps.0,
                steps_max: steps.1,
                reactors,
                rated_kv: numbers(t, r, "Rated kV", d).unwrap_or_default(),
                capacitor_cost_per_kvar: numbers(t, r, "Capacitor cost (per kvar)", d)
                    .unwrap_or_default(),
                reactor_cost_per_kvar: positive(reactor_cost, "Reactor cost (per kvar)", d),
                step_cost: positive(step_cost, "Step cost", d),
                leading_pf_limit: leading,
                replaces: t
                    .text(r, "Replaces", d)
                    .map(|s| {
                        s.split([',', ';'])
                            .map(|x| x.trim().to_string())
                            .filter(|x| !x.is_empty())
                            .collect()
                    })
                    .unwrap_or_default(),
                cells: DesignCells {
                    bus: t.cell(r, "Bus"),
                    step_kvar: t.cell(r, "Step kvar"),
                    steps: t.cell(r, "Steps"),
                    detuning: t.cell(r, "Detuning"),
                    rated_kv: t.cell(r, "Rated kV"),
                    capacitor_cost: t.cell(r, "Capacitor cost (per kvar)"),
                    leading_pf_limit: t.cell(r, "Leading PF limit"),
                    replaces: t.cell(r, "Replaces"),
                },
            }
        })
        .collect()
}

pub fn load_levels(t: &Table, d: &mut Diagnostics) -> Vec<LoadLevelRow> {
    t.rows
        .iter()
        .map(|r| {
            let hours = t
                .number(r, "Hours per year", "a number of hours from 0 to 8784", d)
                .filter(|h| {
                    let ok = (0.0..=8784.0).contains(h);
                    if !ok && !h.is_nan() {
                        d.error(
                            &t.sheet,
                            t.cell(r, "Hours per year"),
                            format!("\"Hours per year\" must be from 0 to 8784, found {h}"),
                        );
                    }
                    ok
                });
            let load = t.text(r, "Load", d);
            let cell = if load.is_some() {
                t.cell(r, "Load")
            } else {
                t.cell(r, "Level")
            };
            let factor = t.required_number(r, "Load factor", "a number from 0 to 1", d);
            if !factor.is_nan() && !(0.0..=1.0).contains(&factor) {
                d.error(
                    &t.sheet,
                    t.cell(r, "Load factor"),
                    format!("\"Load factor\" must be a number from 0 to 1, found {factor}"),
                );
            }
            LoadLevelRow {
                level: t.id(r, "Level", d),
                hours,
                load,
                load_factor: factor,
                cell: CellAt(cell),
                hours_cell: CellAt(t.cell(r, "Hours per year")),
                factor_cell: CellAt(t.cell(r, "Load factor")),
            }
        })
        .collect()
}
