//! The terminal section of the operating point: power factor at the PCC and bus voltages
//! per scenario and configuration, the kvar the load needs, and the voltage change per step.

use std::io::{self, Write};

use super::table::{MAX_ROWS_PER_SCENARIO, write_table};
use crate::jobs::check::CheckResults;
use crate::study::operating::{OperatingPoint, PfVerdict};

/// `0.948 lead`, `0.999 lag` or `-` without load.
pub fn pf_text(p: &OperatingPoint) -> String {
    match p.pcc_power_factor {
        None => "-".to_string(),
        Some(pf) => format!(
            "{pf:.3} {}",
            if p.pcc_q_kvar < 0.0 { "lead" } else { "lag" }
        ),
    }
}

const HEADERS: [&str; 8] = [
    "configuration",
    "P kW",
    "Q kvar",
    "PF",
    "PCC V pu",
    "min V pu, bus",
    "max V pu, bus",
    "verdict",
];

fn cells(p: &OperatingPoint) -> Vec<String> {
    vec![
        p.configuration.clone(),
        format!("{:.0}", p.pcc_p_kw),
        format!("{:.0}", p.pcc_q_kvar),
        pf_text(p),
        format!("{:.4}", p.pcc_v_pu),
        format!("{:.4} {}", p.min_v_pu, p.min_v_bus),
        format!("{:.4} {}", p.max_v_pu, p.max_v_bus),
        crate::present::words::operating_verdict(p),
    ]
}

/// Names shown in a list line before "...".
const LIST_NAMES: usize = 8;

/// Writes `head` and up to [`LIST_NAMES`] names, wrapped to 100 columns.
fn write_list(out: &mut dyn Write, head: &str, names: &[&str]) -> io::Result<()> {
    let mut line = format!("  {head}");
    let shown = names.len().min(LIST_NAMES);
    for (i, name) in names[..shown].iter().enumerate() {
        let more = i + 1 < shown || names.len() > shown;
        let item = format!(" {name}{}", if more { "," } else { "" });
        if line.len() + item.len() > 100 {
            writeln!(out, "{line}")?;
            line = "   ".to_string();
        }
        line.push_str(&item);
    }
    if names.len() > shown {
        line.push_str(if line.len() + 4 > 100 {
            "\n    ..."
        } else {
            " ..."
        });
    }
    writeln!(out, "{line}")
}

/// Writes the operating-point section.
pub fn write_operating(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let op = &res.operating;
    writeln!(
        out,
        "Operating point (fundamental load flow, loads at constant power)\n  target PF {} lagging at the PCC; bus voltage {}-{} pu",
        op.target_power_factor, op.low_pu, op.high_pu
    )?;
    for scenario in &res.scan.scenarios {
        let rows: Vec<&OperatingPoint> = op
            .points
            .iter()
            .filter(|p| &p.scenario == scenario)
            .collect();
        let reach: Vec<&OperatingPoint> = rows
            .iter()
            .copied()
            .filter(|p| p.pf_verdict == PfVerdict::Reaches && p.buses_out_of_range == 0)
            .collect();
        let leading = rows
            .iter()
            .filter(|p| p.pf_verdict == PfVerdict::Leading)
            .count();
        let out_of_range = rows.iter().filter(|p| p.buses_out_of_range > 0).count();
        let studied = rows.len()
            + op.collapsed
                .iter()
                .filter(|e| &e.scenario == scenario)
                .count();
        writeln!(out)?;
        writeln!(
            out,
            "Scenario {scenario}: {} of {} configurations reach the target, not leading; {leading} LEADING; {out_of_range} OUT OF RANGE",
            reach.len(),
            studied
        )?;
        let shown: Vec<&OperatingPoint> = if rows.len() > MAX_ROWS_PER_SCENARIO {
            let mut f: Vec<&OperatingPoint> =
                rows.iter().copied().filter(|p| p.flagged()).collect();
            f.sort_by(|a, b| {
                a.pcc_q_kvar
                    .total_cmp(&b.pcc_q_kvar)
                    .then(b.buses_out_of_range.cmp(&a.buses_out_of_range))
            });
            f.truncate(MAX_ROWS_PER_SCENARIO);
            writeln!(
                out,
                "  (showing the {} flagged configurations, most leading first; --json has all)",
                f.len()
            )?;
            f
        } else {
            rows.clone()
        };
        let table: Vec<Vec<String>> = shown.iter().map(|p| cells(p)).collect();
        if !table.is_empty() {
            write_table(out, &HEADERS, &[0, 5, 6, 7], &table)?;
        }
        let collapsed: Vec<&str> = op
            .collapsed
            .iter()
            .filter(|e| &e.scenario == scenario)
            .map(|e| e.configuration.as_str())
            .collect();
        if !collapsed.is_empty() {
            let head = format!(
                "NO SOLUTION (voltage collapse: the load flow does not converge) in {} configuration(s):",
                collapsed.len()
            );
            write_list(out, &head, &collapsed)?;
        }
        if !reach.is_empty() {
            let names: Vec<&str> = reach.iter().map(|p| p.configuration.as_str()).collect();
            write_list(out, "reach the target without leading:", &names)?;
        }
    }
    write_needs(out, res)?;
    write_step_changes(out, res)?;
    Ok(())
}

/// The kvar each bank alone needs to reach the target, beside the hand estimate.
fn write_needs(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let op = &res.operating;
    if !op.needs.is_empty() {
        writeln!(out)?;
        writeln!(
            out,
            "kvar the load needs to reach PF {} lagging at the PCC (each bank alone, others off)",
            op.target_power_factor
        )?;
        let table: Vec<Vec<String>> = op
            .needs
            .iter()
            .map(|n| {
                let ratio = match n.rated_kvar_needed {
                    Some(k) if k > 0.0 => format!("{:.1}", n.installed_kvar / k),
                    Some(_) => "no need".to_string(),
                    None => "too small".to_string(),
                };
                vec![
                    n.scenario.clone(),
                    n.bank.clone(),
                    n.pf_without_banks
                        .map_or_else(|| "-".to_string(), |p| format!("{p:.3}")),
                    format!("{:.0}", n.hand_kvar),
                    n.steps_needed
                        .map_or_else(|| "> 4x installed".to_string(), |s| format!("{s:.2}")),
                    n.rated_kvar_needed
                        .map_or_else(|| "-".to_string(), |k| format!("{k:.0}")),
                    format!("{:.0}", n.installed_kvar),
                    ratio,
                ]
            })
            .collect();
        write_table(
            out,
            &[
                "scenario",
                "bank",
                "PF no banks",
                "hand kvar",
                "steps needed",
                "kvar needed",
                "installed",
                "ratio",
            ],
            &[0, 1],
            &table,
        )?;
        writeln!(
            out,
            "hand kvar: P(tan phi0 - tan phi_target) at the PCC without banks; steps and kvar needed (rated):\nthe load flow with that bank's steps varied continuously; ratio: installed / needed."
        )?;
    }
    Ok(())
}

/// The worst voltage change at each bank's bus per step switched in.
fn write_step_changes(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let op = &res.operating;
    if !op.step_changes.is_empty() {
        writeln!(out)?;
        writeln!(
            out,
            "Voltage change at the bank's bus when one step switches in (worst case), limit {} %",
            op.step_limit_percent
        )?;
        let table: Vec<Vec<String>> = op
            .step_changes
            .iter()
            .map(|s| {
                vec![
                    s.bank.clone(),
                    s.bus.clone(),
                    s.step.to_string(),
                    s.scenario.clone(),
                    s.configuration.clone(),
                    format!("{:.4}", s.v_before_pu),
                    format!("{:.4}", s.v_after_pu),
                    format!("{:+.2}", s.change_percent),
                    if s.exceeds { "EXCEEDS" } else { "meets" }.to_string(),
                ]
            })
            .collect();
        write_table(
            out,
            &[
                "bank",
                "bus",
                "step",
                "scenario",
                "configuration",
                "V before",
                "V after",
                "change %",
                "verdict",
            ],
            &[0, 1, 3, 4, 8],
            &table,
        )?;
    }
    Ok(())
}
