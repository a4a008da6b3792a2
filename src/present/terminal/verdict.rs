//! The verdict block that opens the terminal summary: per bank, what its steps do
//! (resonant near which order, in which configurations and scenarios), whether duty and
//! switching hold, and the recommended remedy with its before and after; then the plant's
//! limits at the PCC and its power factor, in about ten lines of at most 100 columns.

use crate::jobs::notes::Note;
use std::io::{self, Write};

use super::table::write_hanging;
use crate::jobs::check::CheckResults;
use crate::study::Verdict;

/// Terminal width the block is wrapped to.
const WIDTH: usize = 100;

/// Sorted distinct values, joined: `1, 3, 4`.
fn list<T: PartialOrd + Copy + std::fmt::Display>(mut v: Vec<T>) -> String {
    v.sort_by(|a, b| a.partial_cmp(b).unwrap_or(std::cmp::Ordering::Equal));
    v.dedup_by(|a, b| a == b);
    v.iter()
        .map(|x| x.to_string())
        .collect::<Vec<_>>()
        .join(", ")
}

/// One bank's sentence: resonance, tolerance band, duty, switching.
fn bank_line(res: &CheckResults, bank: &str) -> String {
    let resonance = resonance_words(res, bank);
    let band = res
        .tolerance
        .iter()
        .filter(|b| b.bank == bank && b.flagged)
        .count();
    let band = if band > 0 {
        format!("; {band} tolerance band(s) reach a characteristic order")
    } else {
        String::new()
    };
    let duty_over = res
        .duty
        .iter()
        .filter(|d| d.bank == bank && d.exceeds)
        .count();
    let duty_all = res.duty.iter().filter(|d| d.bank == bank).count();
    let duty = if duty_all == 0 {
        String::new()
    } else if duty_over == 0 {
        "; duty within IEEE 18".to_string()
    } else {
        format!("; duty EXCEEDS in {duty_over} of {duty_all} rows")
    };
    let events: Vec<_> = res
        .switching
        .events
        .iter()
        .filter(|e| e.bank == bank)
        .collect();
    let switching = if events.is_empty() {
        String::new()
    } else {
        let over = events.iter().filter(|e| e.flagged()).count();
        let worst = events.iter().map(|e| e.peak_a).fold(0.0, f64::max);
        if over == 0 {
            format!("; switching ok (inrush up to {worst:.0} A)")
        } else {
            format!("; switching FLAGGED in {over} event(s) (inrush up to {worst:.0} A)")
        }
    };
    format!("{resonance}{band}{duty}{switching}")
}

/// A bank's resonance in words: clear, or the steps resonant with the orders they are
/// near, how many configurations and which scenarios.
fn resonance_words(res: &CheckResults, bank: &str) -> String {
    let rows: Vec<_> = res
        .resonance
        .rows
        .iter()
        .filter(|r| r.bank == bank && r.verdict == Verdict::Resonant)
        .collect();
    if rows.is_empty() {
        "clear of resonance in every configuration and scenario".to_string()
    } else {
        let mut steps: Vec<u32> = rows.iter().map(|r| r.steps).collect();
        steps.sort_unstable();
        steps.dedup();
        let per_step: Vec<String> = steps
            .iter()
            .map(|&k| {
                let near = list(
                    rows.iter()
                        .filter(|r| r.steps == k)
                        .filter_map(|r| r.nearest_characteristic)
                        .collect(),
                );
                format!("{k} (h {near})")
            })
            .collect();
        let mut scenarios: Vec<&str> = rows.iter().map(|r| r.scenario.as_str()).collect();
        scenarios.dedup();
        scenarios.sort_unstable();
        scenarios.dedup();
        let configs = {
            let mut c: Vec<&str> = rows.iter().map(|r| r.configuration.as_str()).collect();
            c.sort_unstable();
            c.dedup();
            c.len()
        };
        let worst = rows
            .iter()
            .filter_map(|r| Some((r.peak?, r.nearest_characteristic?, r.mode.as_ref())))
            .max_by(|a, b| a.0.amplification.total_cmp(&b.0.amplification));
        let worst = worst.map_or_else(String::new, |(p, h, mode)| {
            let formed = mode.map_or_else(String::new, |m| {
                let banks: Vec<String> = (m.banks.iter())
                    .filter(|b| b.1 >= 0.01)
                    .map(|(id, share)| format!("{id} {share:.2}"))
                    .collect();
                if banks.is_empty() {
                    String::new()
                } else {
                    format!(", mode formed by {}", banks.join(" and "))
                }
            });
            format!(
                "; worst peak h {:.2} x{:.1} near h {h}{formed}",
                p.order, p.amplification
            )
        });
        format!(
            "RESONANT at {}step(s) {} in {configs} configuration(s), scenario {}{worst}",
            bank_word(res, bank),
            per_step.join(", "),
            scenarios.join(", ")
        )
    }
}

/// True when the bank resonates or exceeds its duty.
fn bank_flagged(res: &CheckResults, bank: &str) -> bool {
    res.resonance
        .rows
        .iter()
        .any(|r| r.bank == bank && r.verdict == Verdict::Resonant)
        || res.duty.iter().any(|d| d.bank == bank && d.exceeds)
}

/// "steps" of a plain bank, "detuned steps" of a bank with a reactor.
fn bank_word(res: &CheckResults, bank: &str) -> &'static str {
    match res
        .plant
        .banks
        .iter()
        .find(|b| b.id == bank)
        .map(|b| b.reactor)
    {
        Some(crate::model::Reactor::None) | None => "",
        Some(_) => "detuned ",
    }
}

/// Writes the verdict block: a sentence per bank (and its recommended remedy), one for the
/// plant, and the plant-level limits note.
pub fn write_verdict(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let study = &res.plant.study;
    let models = (study.resistance_model, study.load_model);
    writeln!(
        out,
        "VERDICT (the tables below give every figure; damping: {}{})",
        crate::present::damping_words(models.0, models.1),
        if models == crate::model::LEAST_DAMPED {
            ", the least damped"
        } else {
            ""
        }
    )?;
    let not_studied = res
        .notes
        .iter()
        .find(|n| matches!(n, Note::RemediesNotStudied { .. }));
    for (b, m) in res.plant.banks.iter().zip(&res.network.banks) {
        write_bank_verdict(out, res, b, m, not_studied)?;
    }
    write_plant_remedies(out, res)?;
    if let Some(line) = pcc_line(res) {
        write_hanging(out, "- ", "    ", &line, WIDTH)?;
    }
    if let Some(line) = plant_line(res) {
        write_hanging(out, "- ", "    ", &line, WIDTH)?;
    }
    if let Some(Note::Collapse {
        count,
        scenarios,
        tightest,
        ..
    }) = res
        .notes
        .iter()
        .find(|n| matches!(n, Note::Collapse { .. }))
    {
        let cause = tightest.as_ref().map_or_else(String::new, |t| {
            format!("; likely cause: {}", crate::jobs::notes::cause_words(t))
        });
        write_hanging(
            out,
            "- ",
            "    ",
            &format!(
                "Load flow: NO SOLUTION in {count} scenario-configuration(s) (voltage collapse), scenario(s) {}{cause}. Their figures are missing from the tables below.",
                scenarios.join(", ")
            ),
            WIDTH,
        )?;
    }
    if let Some(note) = res
        .notes
        .iter()
        .find(|n| matches!(n, Note::PlantLevelLimits { .. }))
    {
        write_hanging(out, "- ", "    ", &note.to_string(), WIDTH)?;
    }
    Ok(())
}

/// The first-ranked whole-plant option of every set of banks forming a flagged mode.
fn write_plant_remedies(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    for pr in &res.plant_remedies {
        if let Some(x) = pr.results.first() {
            write_hanging(
                out,
                "- ",
                "    ",
                &format!(
                    "Mode of {} together: recommended {} ({}{}); resonant rows {} -> {}, duty rows over {} -> {}, worst THD {:.1} -> {:.1} %.",
                    pr.banks.join(" and "),
                    x.option.name,
                    if x.passes { "passes" } else { "still flagged" },
                    if x.worsens {
                        ", worsens the worst figure"
                    } else {
                        ""
                    },
                    x.before.resonant,
                    x.after.resonant,
                    x.before.duty_exceeded,
                    x.after.duty_exceeded,
                    x.before.worst_thd_percent,
                    x.after.worst_thd_percent
                ),
                WIDTH,
            )?;
        }
    }
    Ok(())
}

/// A bank's sentence, then its rank-1 remedy (or why remedies were not studied).
fn write_bank_verdict(
    out: &mut dyn Write,
    res: &CheckResults,
    b: &crate::model::CapacitorBank,
    m: &crate::network::BankModel,
    not_studied: Option<&Note>,
) -> io::Result<()> {
    let reactor = crate::present::reactor_words(b.reactor).unwrap_or_else(|| "plain".to_string());
    let head = format!(
        "{} ({}, {} x {} kvar, {reactor}): ",
        b.id, res.network.buses[m.bus].id, b.steps, b.step_kvar
    );
    write_hanging(
        out,
        "- ",
        "    ",
        &format!("{head}{}.", bank_line(res, &b.id)),
        WIDTH,
    )?;
    if let Some(line) = damping_line(res, &b.id) {
        write_hanging(out, "  ~ ", "    ", &line, WIDTH)?;
    }
    if let Some(br) = res.remedies.iter().find(|r| r.bank == b.id)
        && let Some(x) = br.results.first()
    {
        let s = &x.option.step;
        let reactor = if s.l_mh > 0.0 {
            format!(", {:.3} mH per step", s.l_mh)
        } else {
            String::new()
        };
        write_hanging(
            out,
            "  > ",
            "    ",
            &format!(
                "recommended: {} ({:.0} V {:.1} kvar per step{reactor}): {}; resonant rows {} -> {}, duty rows over {} -> {}",
                x.option.name,
                s.capacitor_rated_kv * 1000.0,
                s.capacitor_kvar,
                crate::present::words::remedy_verdict(x),
                x.before.resonant,
                x.after.resonant,
                x.before.duty_exceeded,
                x.after.duty_exceeded
            ),
            WIDTH,
        )?;
    } else if let Some(why) = not_studied
        && bank_flagged(res, &b.id)
    {
        write_hanging(out, "  > ", "    ", &why.to_string(), WIDTH)?;
    }
    Ok(())
}

/// A flagged bank's key figures at its flagged resonances under the least-damped models,
/// each the worst over those rows, with the study's own in brackets; `None` when the bank
/// has no flagged resonance.
fn damping_line(res: &CheckResults, bank: &str) -> Option<String> {
    let rows: Vec<_> = res.damping.iter().filter(|d| d.bank == bank).collect();
    let study = &res.plant.study;
    if rows.is_empty() || (study.resistance_model, study.load_model) == crate::model::LEAST_DAMPED {
        return None;
    }
    let worst = |f: &dyn Fn(&crate::jobs::damping::DampingBand) -> Option<f64>| {
        rows.iter()
            .filter_map(|d| f(d))
            .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))))
    };
    let fig = |name: &str, least: Option<f64>, study: Option<f64>, fmt: &dyn Fn(f64) -> String| {
        least.map(|l| (format!("{name}{}", fmt(l)), study.map_or("-".into(), fmt)))
    };
    let figures: Vec<(String, String)> = [
        fig(
            "",
            worst(&|d| d.least_damped.amplification),
            worst(&|d| d.study.amplification),
            &|v| format!("x{v:.1}"),
        ),
        fig(
            "THD ",
            worst(&|d| d.least_damped.bus_thd_percent),
            worst(&|d| d.study.bus_thd_percent),
            &|v| format!("{v:.1} %"),
        ),
        fig(
            "cap. current ",
            worst(&|d| d.least_damped.capacitor_current_percent),
            worst(&|d| d.study.capacitor_current_percent),
            &|v| format!("{v:.0} %"),
        ),
    ]
    .into_iter()
    .flatten()
    .collect();
    let least: Vec<&str> = figures.iter().map(|f| f.0.as_str()).collect();
    let study: Vec<&str> = figures.iter().map(|f| f.1.as_str()).collect();
    Some(format!(
        "least damped {} (as studied {})",
        least.join(", "),
        study.join(", ")
    ))
}

/// The PCC's resonance when a peak there is within the margin of a characteristic order:
/// how many configurations and the worst peak; `None` when every PCC peak is clear.
fn pcc_line(res: &CheckResults) -> Option<String> {
    let rows: Vec<_> = (res.resonance.pcc_rows.iter())
        .filter(|r| r.verdict == Verdict::Resonant)
        .collect();
    let worst = rows
        .iter()
        .filter_map(|r| r.peak)
        .max_by(|a, b| a.peak.amplification.total_cmp(&b.peak.amplification))?;
    Some(format!(
        "PCC {}: RESONANT in {} scenario-configuration(s); worst peak h {:.2} x{:.1} near h {}.",
        rows[0].bus,
        rows.len(),
        worst.peak.order,
        worst.peak.amplification,
        worst.nearest_characteristic.unwrap_or(f64::NAN)
    ))
}

/// The plant in one line: configurations over the harmonic limits (where the limit set
/// applies) and configurations reaching the target PF (lagging, every bus in range), per
/// scenario; `None` when neither was studied.
fn plant_line(res: &CheckResults) -> Option<String> {
    let nc = res.scan.configurations.len();
    let mut parts = Vec::new();
    if !res.limit_rows.is_empty() {
        let set = match res.limits.set {
            crate::model::LimitSet::Ieee519_2014 => {
                format!("IEEE 519-2014 at the PCC {}", res.network.buses[res.pcc].id)
            }
            other => format!("{} at every bus", crate::present::limit_set_name(other)),
        };
        let over: Vec<String> = res
            .scan
            .scenarios
            .iter()
            .enumerate()
            .filter_map(|(s, name)| {
                let rows = res.limit_rows.get(s * nc..(s + 1) * nc)?;
                let n = rows.iter().filter(|r| r.exceeds).count();
                Some(format!("{n}/{nc} {name}"))
            })
            .collect();
        parts.push(format!("{set} exceeded in {}", over.join(", ")));
    }
    if !res.operating.points.is_empty() {
        let reach: Vec<String> = res
            .scan
            .scenarios
            .iter()
            .map(|name| {
                let pts: Vec<_> = res
                    .operating
                    .points
                    .iter()
                    .filter(|p| &p.scenario == name)
                    .collect();
                let ok = pts
                    .iter()
                    .filter(|p| {
                        p.pf_verdict == crate::study::operating::PfVerdict::Reaches
                            && p.buses_out_of_range == 0
                    })
                    .count();
                format!("{ok}/{} {name}", pts.len())
            })
            .collect();
        parts.push(format!(
            "PF {} lagging reached, no bus out of range, in {}",
            res.operating.target_power_factor,
            reach.join(", ")
        ));
    }
    (!parts.is_empty()).then(|| format!("Plant (configurations): {}.", parts.join("; ")))
}

/// The verdict block of the terminal answer as sentences for the documents (report,
/// review): each `- ` line with its hanging lines joined; a bank's `~` and `>` lines as
/// their own items, said in words.
pub fn verdict_items(res: &CheckResults) -> Vec<String> {
    let mut buf: Vec<u8> = Vec::new();
    if write_verdict(&mut buf, res).is_err() {
        return Vec::new();
    }
    let text = String::from_utf8_lossy(&buf);
    let mut items: Vec<String> = Vec::new();
    for line in text.lines().skip(1) {
        let t = line.trim();
        let starts = line.starts_with("- ") || t.starts_with("~ ") || t.starts_with("> ");
        match items.last_mut() {
            Some(last) if !starts && !t.is_empty() => {
                last.push(' ');
                last.push_str(t);
            }
            _ if !t.is_empty() => {
                let t = t.trim_start_matches("- ");
                let t = if let Some(r) = t.strip_prefix("> ") {
                    format!("Remedy: {r}")
                } else if let Some(r) = t.strip_prefix("~ ") {
                    format!("Under the least-damped models: {r}")
                } else {
                    t.to_string()
                };
                items.push(t);
            }
            _ => {}
        }
    }
    items
}
