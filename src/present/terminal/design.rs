//! The terminal answer of `overtone design`: the recommended plan in a few lines, then the
//! ranked plans, every line within 100 columns.

use std::io::{self, Write};

use super::table::{write_hanging, write_table};
use crate::jobs::design::{DesignResult, PlanResult};
use crate::model::{BankStatus, CapacitorBank};

const WIDTH: usize = 100;

/// The controller's choice at each level as `full 0.951 (3)`: the lowest PF over the
/// scenarios and the most steps of the bank.
pub fn level_words(d: &DesignResult, p: &PlanResult) -> String {
    d.levels
        .iter()
        .zip(&p.control)
        .map(|((name, _), per)| {
            let pf = crate::jobs::design::levels::lowest_pf(per);
            let steps = per.iter().map(|c| p.steps_in(c)).max().unwrap_or(0);
            let lead = if per.iter().any(|c| c.leading()) {
                " leading"
            } else {
                ""
            };
            format!(
                "{name} {}{lead} ({steps} step{})",
                pf.map_or_else(|| "n/a".into(), |v| format!("{v:.3}")),
                if steps == 1 { "" } else { "s" }
            )
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// `3.31–3.62`, or `none` when no peak was found.
pub fn range_words(r: Option<(f64, f64)>) -> String {
    r.map_or_else(|| "none".into(), |(a, b)| format!("{a:.2}–{b:.2}"))
}

/// The plan in words with its bus and bank id.
pub fn plan_words(p: &PlanResult) -> String {
    let tuned = match p.plan.reactor {
        crate::model::Reactor::Detuning { percent } => {
            format!(" (tuned at {:.2})", 1.0 / (percent / 100.0).sqrt())
        }
        _ => String::new(),
    };
    let banks = p.joined(|plan, b| format!("{} at {}: {}", b.id, plan.bus, plan.label()));
    let total = if p.also.is_empty() { "" } else { " in all" };
    format!(
        "{banks}{tuned}, {:.0} kvar at bus voltage{total}",
        p.effective_kvar
    )
}

/// The sentences saying which banks of the Capacitors sheet the plans replace: per design
/// row whose plans replace an existing bank or one of another id, and the recommended
/// plan's (the proposed bank a plan stands in for goes without saying).
pub fn replaced_words(d: &DesignResult) -> Vec<String> {
    let gone = |base: &crate::model::Plant| -> Vec<&CapacitorBank> {
        (d.plant.banks.iter())
            .filter(|b| !base.banks.iter().any(|x| x.id == b.id))
            .collect()
    };
    let ids = |banks: &[&CapacitorBank]| {
        (banks.iter())
            .map(|b| match b.status {
                BankStatus::Existing => format!("{} (existing)", b.id),
                BankStatus::Proposed => format!("{} (proposed)", b.id),
            })
            .collect::<Vec<_>>()
            .join(", ")
    };
    let mut out = Vec::new();
    for (base, id) in d.bases.iter().zip(&d.bank_ids) {
        let gone = gone(base);
        // The proposed bank a plan stands in for goes without saying; an existing one not.
        if gone
            .iter()
            .any(|b| b.status == BankStatus::Existing || b.id != *id)
        {
            out.push(format!(
                "The designed bank {id} replaces {} (taken out of the plant while its plans are tried; the written plant has the plan in its place).",
                ids(&gone)
            ));
        }
    }
    if let Some(p) = d.recommended.map(|i| &d.plans[i]) {
        let gone = gone(&d.bases[p.row]);
        if !gone.is_empty() {
            out.push(format!(
                "The recommended plan replaces {} on the Capacitors sheet.",
                ids(&gone)
            ));
        }
    }
    out
}

/// Writes the design comparison: the search in figures, the recommended plan and why, the
/// plans ranked, what the listed plans fail, the notes and the caution.
pub fn write_design(out: &mut dyn Write, d: &DesignResult) -> io::Result<()> {
    write_search(out, d)?;
    write_recommended(out, d)?;
    write_plans(out, d)?;
    writeln!(out)?;
    for n in &d.notes {
        write_hanging(out, "note: ", "  ", &n.to_string(), WIDTH)?;
    }
    write_hanging(
        out,
        "",
        "",
        "The plan is a proposal for a licensed engineer's review; see SAFETY.md. Local electrical codes and the utility's rules govern.",
        WIDTH,
    )?;
    Ok(())
}

/// The search in figures, and what holds without the designed bank.
fn write_search(out: &mut dyn Write, d: &DesignResult) -> io::Result<()> {
    let c = &d.counts;
    let pcc = d.plant.pcc_bus().unwrap_or_default();
    write_hanging(
        out,
        "",
        "  ",
        &format!(
            "Design of the power-factor bank: target PF {} at the PCC {pcc}; levels {}.",
            d.target_power_factor,
            d.levels
                .iter()
                .map(|(n, h)| format!("{n} ({h} h)"))
                .collect::<Vec<_>>()
                .join(", ")
        ),
        WIDTH,
    )?;
    write_hanging(
        out,
        "",
        "  ",
        &format!(
            "Searched {} plans ({} families of size, detuning and class × step counts): {} after the power-factor bound, {} scanned over every configuration, {} through every check, {} pass.",
            c.enumerated, c.families, c.after_pf_bound, c.scanned, c.checked, c.passed
        ),
        WIDTH,
    )?;
    for line in replaced_words(d) {
        write_hanging(out, "", "  ", &line, WIDTH)?;
    }
    if d.baselines
        .iter()
        .all(|b| b.control.iter().flatten().all(|c| c.reaches))
    {
        write_hanging(
            out,
            "",
            "  ",
            "The plant already reaches the target power factor at every level without a designed step (its other banks or loads suffice): the plans below are the smallest allowed, for the record.",
            WIDTH,
        )?;
    }
    let b = d.baseline();
    if b.limits_exceeded > 0 {
        write_hanging(
            out,
            "",
            "  ",
            &format!(
                "Without the bank the plant already exceeds its harmonic limits (worst PCC voltage THD {:.2} %, TDD {:.2} %): no bank fixes that (the converters need their own mitigation), so a plan passes the limits check when it is no worse at the PCC than without the bank.",
                b.pcc_thd_percent, b.tdd_percent
            ),
            WIDTH,
        )?;
    }
    Ok(())
}

/// The recommended plan with its PF, resonance and cost, and why; or why none is.
fn write_recommended(out: &mut dyn Write, d: &DesignResult) -> io::Result<()> {
    writeln!(out)?;
    match d.recommended.map(|i| &d.plans[i]) {
        Some(p) => {
            write_hanging(out, "Recommended: ", "  ", &plan_words(p), WIDTH)?;
            write_hanging(
                out,
                "  PF at the PCC: ",
                "    ",
                &format!(
                    "{}; without the bank {}.",
                    level_words(d, p),
                    baseline_words(d)
                ),
                WIDTH,
            )?;
            write_hanging(
                out,
                "  ",
                "    ",
                &format!(
                    "Resonance {} (hand check {}), margin {} to the nearest characteristic order; worst PCC THD {:.2} %, TDD {:.2} %; largest step change {:.2} %; cost {:.0}.",
                    range_words(p.resonance),
                    p.hand_order
                        .map_or_else(|| "n/a".into(), |h| format!("{h:.2}")),
                    p.outcome
                        .margin_percent
                        .map_or_else(|| "n/a".into(), |m| format!("{m:.1} %")),
                    p.pcc_thd_percent,
                    p.tdd_percent,
                    p.step_change_percent,
                    p.cost
                ),
                WIDTH,
            )?;
            write_hanging(out, "  Why: ", "    ", &d.reason, WIDTH)?;
        }
        None => {
            write_hanging(
                out,
                "No plan satisfies every check. ",
                "  ",
                &d.reason,
                WIDTH,
            )?;
        }
    }
    Ok(())
}

/// The plans ranked (at most 15, 8 without a recommendation) and what those fail.
fn write_plans(out: &mut dyn Write, d: &DesignResult) -> io::Result<()> {
    writeln!(out)?;
    writeln!(
        out,
        "Plans, ranked (* on the Pareto set of cost, margin and PF):"
    )?;
    let shown = if d.recommended.is_some() { 15 } else { 8 };
    let rows: Vec<Vec<String>> = d
        .plans
        .iter()
        .take(shown)
        .map(|p| {
            vec![
                format!("{}{}", p.rank, if p.pareto { "*" } else { "" }),
                p.joined(|plan, _| plan.bus.clone()),
                p.joined(|plan, _| format!("{} × {}", plan.steps, plan.step_kvar)),
                p.joined(|plan, _| format!("{}", plan.rated_kv)),
                p.plan.reactor_label(),
                format!("{:.0}", p.effective_kvar),
                format!("{:.0}", p.cost),
                p.pf_lowest
                    .map_or_else(|| "n/a".into(), |v| format!("{v:.3}")),
                range_words(p.resonance),
                p.outcome
                    .margin_percent
                    .map_or_else(|| "n/a".into(), |m| format!("{m:.1}")),
                if p.passes() {
                    "passes".into()
                } else {
                    format!("fails {}", p.fails.len())
                },
            ]
        })
        .collect();
    write_table(
        out,
        &[
            "#",
            "bus",
            "steps×kvar",
            "kV",
            "reactor",
            "kvar@bus",
            "cost",
            "PF low",
            "h range",
            "margin %",
            "verdict",
        ],
        &[1, 4, 10],
        &rows,
    )?;
    if d.plans.len() > shown {
        writeln!(
            out,
            "  ... {} more plans in the workbook (-o) and --json",
            d.plans.len() - shown
        )?;
    }
    let failing: Vec<&PlanResult> = d.plans.iter().take(shown).filter(|p| !p.passes()).collect();
    if !failing.is_empty() {
        writeln!(out)?;
        writeln!(out, "What the listed plans fail:")?;
        for p in failing {
            write_hanging(
                out,
                &format!("  {}: ", p.rank),
                "     ",
                &p.fails.join("; "),
                WIDTH,
            )?;
        }
    }
    Ok(())
}

/// The PF without the bank per level: `full 0.905, light 0.902`.
pub fn baseline_words(d: &DesignResult) -> String {
    d.levels
        .iter()
        .zip(&d.baseline().control)
        .map(|((name, _), per)| {
            let pf = crate::jobs::design::levels::lowest_pf(per);
            format!(
                "{name} {}",
                pf.map_or_else(|| "n/a".into(), |v| format!("{v:.3}"))
            )
        })
        .collect::<Vec<_>>()
        .join(", ")
}
