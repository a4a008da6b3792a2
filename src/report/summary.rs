//! The terminal summary of a check: per scenario and configuration, each energized bank's
//! hand-check order beside the scanned peak, its |Z|, amplification, the nearest
//! characteristic order, the margin and the verdict; then the cautions.

use std::io::{self, Write};

use super::cautions::CAUTIONS;
use crate::check::CheckResults;
use crate::study::{ResonanceRow, Verdict};

/// Rows shown per scenario before the summary keeps only flagged rows.
pub const MAX_ROWS_PER_SCENARIO: usize = 60;

fn fmt_opt(v: Option<f64>, digits: usize) -> String {
    v.filter(|x| x.is_finite())
        .map_or_else(|| "-".to_string(), |x| format!("{x:.digits$}"))
}

fn cells(r: &ResonanceRow) -> Vec<String> {
    vec![
        r.configuration.clone(),
        r.bank.clone(),
        r.bus.clone(),
        r.steps.to_string(),
        format!("{:.0}", r.q_c_kvar),
        format!("{:.1}", r.s_sc_mva),
        format!("{:.2}", r.hand_order),
        fmt_opt(r.peak.map(|p| p.order), 3),
        fmt_opt(r.peak.map(|p| p.z_ohm), 4),
        fmt_opt(r.peak.map(|p| p.amplification), 2),
        fmt_opt(r.peak.and_then(|p| p.sharpness), 1),
        fmt_opt(r.nearest_characteristic, 0),
        fmt_opt(r.margin_percent, 1),
        r.verdict.word().to_string(),
    ]
}

const HEADERS: [&str; 14] = [
    "configuration",
    "bank",
    "bus",
    "steps",
    "Qc kvar",
    "Ssc MVA",
    "hand h",
    "scan h",
    "|Z| ohm",
    "ampl",
    "Q",
    "near h",
    "margin %",
    "verdict",
];

/// Writes a table with right-aligned numeric columns (all but the first three and last).
fn write_table(out: &mut dyn Write, rows: &[Vec<String>]) -> io::Result<()> {
    let mut widths: Vec<usize> = HEADERS.iter().map(|h| h.len()).collect();
    for r in rows {
        for (w, c) in widths.iter_mut().zip(r) {
            *w = (*w).max(c.chars().count());
        }
    }
    let line = |cells: &[String]| {
        cells
            .iter()
            .enumerate()
            .map(|(i, c)| {
                let w = widths[i];
                if i < 3 || i == cells.len() - 1 {
                    format!("{c:<w$}")
                } else {
                    format!("{c:>w$}")
                }
            })
            .collect::<Vec<_>>()
            .join("  ")
    };
    let head: Vec<String> = HEADERS.iter().map(|h| h.to_string()).collect();
    writeln!(out, "  {}", line(&head).trim_end())?;
    for r in rows {
        writeln!(out, "  {}", line(r).trim_end())?;
    }
    Ok(())
}

/// Writes the whole summary.
pub fn write_summary(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let p = &res.plant;
    let title = if p.study.title.is_empty() {
        "overtone check"
    } else {
        &p.study.title
    };
    writeln!(out, "{title}")?;
    if !p.study.plant.is_empty() {
        writeln!(out, "Plant: {}", p.study.plant)?;
    }
    let study = &res.resonance;
    writeln!(
        out,
        "{} buses, {} bank(s), {} scenario(s) x {} configuration(s); scan 1..{} step {} at {} Hz; PCC {}",
        p.buses.len(),
        p.banks.len(),
        res.scan.scenarios.len(),
        res.scan.configurations.len(),
        p.study.highest_order,
        p.study.scan_step_order,
        p.study.frequency_hz,
        res.network.buses[res.pcc].id,
    )?;
    let chars: Vec<String> = study
        .characteristic_orders
        .iter()
        .take(12)
        .map(|h| format!("{h}"))
        .collect();
    writeln!(
        out,
        "Characteristic orders of the loads: {}{}; resonance margin {} %",
        if chars.is_empty() {
            "none (no harmonic-producing load)".to_string()
        } else {
            chars.join(", ")
        },
        if study.characteristic_orders.len() > 12 {
            ", ..."
        } else {
            ""
        },
        study.margin_percent
    )?;
    writeln!(out)?;
    writeln!(
        out,
        "Resonance at each energized bank: hand check h = sqrt(Ssc/Qc) beside the scanned peak"
    )?;
    for scenario in &res.scan.scenarios {
        let rows: Vec<&ResonanceRow> = study
            .rows
            .iter()
            .filter(|r| &r.scenario == scenario)
            .collect();
        let flagged = rows
            .iter()
            .filter(|r| r.verdict == Verdict::Resonant)
            .count();
        writeln!(out)?;
        writeln!(
            out,
            "Scenario {scenario}: {} bank rows, {flagged} within the margin of a characteristic order",
            rows.len()
        )?;
        let shown: Vec<&ResonanceRow> = if rows.len() > MAX_ROWS_PER_SCENARIO {
            let mut f: Vec<&ResonanceRow> = rows
                .iter()
                .copied()
                .filter(|r| r.verdict == Verdict::Resonant)
                .collect();
            f.sort_by(|a, b| {
                let m = |r: &ResonanceRow| r.margin_percent.map_or(f64::INFINITY, f64::abs);
                m(a).total_cmp(&m(b))
            });
            f.truncate(MAX_ROWS_PER_SCENARIO);
            writeln!(
                out,
                "  (showing the {} flagged rows closest to a characteristic order; --json has all)",
                f.len()
            )?;
            f
        } else {
            rows
        };
        let table: Vec<Vec<String>> = shown.iter().map(|r| cells(r)).collect();
        if !table.is_empty() {
            write_table(out, &table)?;
        }
    }
    writeln!(out)?;
    writeln!(
        out,
        "hand h: sqrt(Ssc/Qc) (with a series reactor: sqrt(Xc/(Xth+XL))); scan h, |Z|: the scanned \
         parallel-resonance peak at the bank's bus nearest the hand check; ampl: |Z| / |Z| without \
         banks at that order; Q: peak sharpness h/bandwidth; margin: (scan h - near h)/near h."
    )?;
    writeln!(out)?;
    writeln!(out, "Cautions:")?;
    for c in CAUTIONS {
        writeln!(out, "- {c}")?;
    }
    Ok(())
}

/// Writes the peaks of every scanned series: the `scan` command's terminal output.
pub fn write_peaks(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    writeln!(
        out,
        "Parallel-resonance peaks (order, |Z| ohm, amplification) per scenario, configuration and bus"
    )?;
    for s in &res.scan.series {
        let peaks: Vec<String> = s
            .peaks
            .iter()
            .map(|p| {
                format!(
                    "{:.3} ({:.4} ohm, x{:.2})",
                    p.order, p.z_ohm, p.amplification
                )
            })
            .collect();
        writeln!(
            out,
            "  {:<8} {:<24} {:<10} {}",
            res.scan.scenarios[s.scenario],
            res.label(s.configuration),
            res.network.buses[res.scan.buses[s.bus]].id,
            if peaks.is_empty() {
                "no peak".to_string()
            } else {
                peaks.join(", ")
            }
        )?;
    }
    writeln!(out)?;
    for c in CAUTIONS {
        writeln!(out, "- {c}")?;
    }
    Ok(())
}
