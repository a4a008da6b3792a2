//! Terminal sections for the capacitors themselves: duty against IEEE 18 (or IEC), the
//! resonance band across capacitance tolerance, and switching transients.

use std::io::{self, Write};

use super::table::{MAX_ROWS_PER_SCENARIO, write_table};
use crate::jobs::check::CheckResults;
use crate::study::duty::DutyRow;

fn ratio(v: f64, limit: Option<f64>) -> String {
    match limit {
        Some(l) => format!("{:.1}/{:.0}", v * 100.0, l * 100.0),
        None => format!("{:.1}/-", v * 100.0),
    }
}

/// The duty table: energized banks whose duty exceeds a limit (every row when few).
pub fn write_duty(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let source = res.duty.first().map_or("IEEE 18-2012", |r| r.limits.source);
    let exceeding: Vec<&DutyRow> = res.duty.iter().filter(|r| r.exceeds).collect();
    super::table::write_hanging(
        out,
        "",
        "  ",
        &format!(
            "Capacitor duty at the capacitor terminals ({source}), % of rated / limit: {} of {} bank rows exceed",
            exceeding.len(),
            res.duty.len()
        ),
        100,
    )?;
    if let Some(e) = &res.duty_envelope {
        super::table::write_hanging(
            out,
            "  ",
            "  ",
            &format!(
                "each row at its governing case: the study point (study); light load (level {}) with every source EMF at least {:.3} pu (Vmax); the same with the capacitance at +{:.0} % (Vmax+C; IEEE 18-2012 allows 0/+10 %). Harmonic currents are the study point's.",
                e.level, e.source_voltage_floor_pu, e.capacitance_plus_percent
            ),
            100,
        )?;
    }
    let shown: Vec<&DutyRow> = if res.duty.len() <= MAX_ROWS_PER_SCENARIO {
        res.duty.iter().collect()
    } else {
        let mut e = exceeding.clone();
        e.sort_by(|a, b| b.ratios.rms_current.total_cmp(&a.ratios.rms_current));
        e.truncate(MAX_ROWS_PER_SCENARIO);
        if !e.is_empty() {
            writeln!(
                out,
                "  (showing the {} exceeding rows with the highest current; --json has all)",
                e.len()
            )?;
        }
        e
    };
    let rows: Vec<Vec<String>> = shown
        .iter()
        .map(|r| {
            vec![
                r.scenario.clone(),
                r.configuration.clone(),
                r.bank.clone(),
                r.steps.to_string(),
                ratio(r.ratios.rms_voltage, Some(r.limits.rms_voltage)),
                ratio(r.ratios.peak_voltage, r.limits.peak_voltage),
                ratio(r.ratios.rms_current, Some(r.limits.rms_current)),
                ratio(r.ratios.kvar, r.limits.kvar),
                r.case.short().to_string(),
                if r.exceeds { "EXCEEDS" } else { "meets" }.to_string(),
            ]
        })
        .collect();
    if !rows.is_empty() {
        write_table(
            out,
            &[
                "scenario",
                "configuration",
                "bank",
                "steps",
                "Vrms %",
                "Vpeak %",
                "Irms %",
                "kvar %",
                "case",
                "verdict",
            ],
            &[0, 1, 2, 8, 9],
            &rows,
        )?;
    }
    Ok(())
}

/// The neutral current of 4-wire loads (3·I₀ over the triplen orders), per bus, against
/// `Neutral rating (A)` where given; nothing without 4-wire triplen injection.
pub fn write_neutral(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    if res.neutral.is_empty() {
        return Ok(());
    }
    writeln!(out)?;
    writeln!(
        out,
        "Neutral current of 4-wire loads (3 I0 over the triplen orders, A rms):"
    )?;
    for r in &res.neutral {
        let against = match r.rating_a {
            Some(lim) if r.exceeds => format!("against {lim:.0} A: EXCEEDS"),
            Some(lim) => format!("against {lim:.0} A: meets"),
            None => "no Neutral rating (A) given: not checked".to_string(),
        };
        writeln!(
            out,
            "  {}: {:.1} A (h {} {:.1} A), {against}",
            r.bus, r.rms_a, r.worst_order, r.worst_a
        )?;
    }
    Ok(())
}

/// Tolerance bands that reach a characteristic order although the nominal value does not.
pub fn write_tolerance(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let t = res.plant.study.capacitance_tolerance;
    let flagged: Vec<_> = res.tolerance.iter().filter(|b| b.flagged).collect();
    super::table::write_hanging(
        out,
        "",
        "  ",
        &format!(
            "Resonance across capacitance tolerance {}/+{} % and the scenarios: {} band(s) reach the margin of a characteristic order that the nominal value clears",
            t.minus_percent,
            t.plus_percent,
            flagged.len()
        ),
        100,
    )?;
    for b in flagged.iter().take(MAX_ROWS_PER_SCENARIO) {
        writeln!(
            out,
            "  {} {}: {:.3} to {:.3}, reaches {}",
            b.configuration,
            b.bank,
            b.low_order,
            b.high_order,
            b.reaches.map_or_else(String::new, |h| format!("h {h}"))
        )?;
    }
    Ok(())
}

/// The switching table's columns.
const TRANSIENT_HEADERS: [&str; 12] = [
    "scenario",
    "bank",
    "step",
    "case",
    "peak A",
    "formula",
    "Hz",
    "bus pu",
    "cap pu",
    "remote pu",
    "ring ms",
    "verdict",
];

/// Energizing each step, simulated: one line per event with the formula's peak beside the
/// simulated one, the bus, capacitor and largest remote-bank peaks, and the verdict.
pub fn write_transients(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let sw = &res.switching;
    if sw.events.is_empty() {
        return Ok(());
    }
    writeln!(
        out,
        "Switching (time-domain simulation, worst closing instant; formula = IEEE C37.012 hand check)"
    )?;
    let rows: Vec<Vec<String>> = (sw.events.iter())
        .take(4 * MAX_ROWS_PER_SCENARIO)
        .map(transient_cells)
        .collect();
    write_table(out, &TRANSIENT_HEADERS, &[0, 1, 3, 9, 11], &rows)?;
    if sw.events.len() > rows.len() {
        writeln!(
            out,
            "  ({} more events in --json, --transients-csv and the review)",
            sw.events.len() - rows.len()
        )?;
    }
    for e in sw.events.iter().filter(|e| e.inrush_exceeds) {
        super::table::write_hanging(
            out,
            "  ",
            "    ",
            &format!(
                "{} step {} ({}): {:.0} A over the switch's {:.0} A; {}",
                e.bank,
                e.step,
                e.scenario,
                e.peak_a,
                e.inrush_limit_a.unwrap_or(0.0),
                e.needed_inrush_uh.map_or_else(
                    || "no inrush inductance up to 10 mH brings it under".to_string(),
                    |uh| format!("an inrush inductance of {uh:.0} uH per step brings it under"),
                )
            ),
            100,
        )?;
    }
    Ok(())
}

/// The summary row of one switching event.
fn transient_cells(e: &crate::study::switching::SwitchingEvent) -> Vec<String> {
    let remote = e
        .remote
        .iter()
        .max_by(|a, b| a.peak_pu.total_cmp(&b.peak_pu))
        .map_or_else(
            || "-".to_string(),
            |r| format!("{:.2} {}", r.peak_pu, r.bank),
        );
    vec![
        e.scenario.clone(),
        e.bank.clone(),
        e.step.to_string(),
        if e.case == crate::study::switching::Case::Isolated {
            "isol".to_string()
        } else {
            "b2b".to_string()
        },
        format!("{:.0}", e.peak_a),
        e.formula
            .as_ref()
            .map_or_else(|| "n/a".to_string(), |f| format!("{:.0}", f.peak_a)),
        e.frequency_hz
            .map_or_else(|| "-".to_string(), |f| format!("{f:.0}")),
        format!("{:.2}", e.bus_peak_pu),
        format!("{:.2}", e.capacitor_peak_pu),
        remote,
        e.ring_down_ms
            .map_or_else(|| format!(">{:.0}", e.simulated_ms), |t| format!("{t:.0}")),
        if e.inrush_exceeds {
            "INRUSH".to_string()
        } else if e.overvoltage_exceeds {
            "OVERVOLT".to_string()
        } else {
            "ok".to_string()
        },
    ]
}

/// Remedies for each flagged bank, ranked, with the studies before and after: one table
/// of what each option is (what to buy) and one of what it does (the re-run).
pub fn write_remedies(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    if res.remedies.is_empty() {
        return Ok(());
    }
    super::table::write_hanging(
        out,
        "",
        "  ",
        "Remedies, re-run over every configuration with the bank on. Ranked: an option that raises the worst THD or TDD after every one that does not, then the bank's own checks pass (resonance, tolerance band, duty, reactor linearity), the lowest capacitor voltage class, the widest margin to a characteristic order across the tolerance band, linearity headroom, reactor size; the limits' exceedances are shown, not ranked. pk/lin: step peak current (background included) over the reactor's linearity peak; margin % across the band; res, duty: rows flagged after.",
        100,
    )?;
    for br in &res.remedies {
        write_bank_remedies(out, br)?;
    }
    Ok(())
}

/// One flagged bank's remedies: why, before, the options sized and what each does.
/// The remedy options' table: what each option is.
const REMEDY_OPTION_HEADERS: [&str; 7] = [
    "rank",
    "option",
    "L mH/step",
    "Uc V",
    "capacitor/step",
    "kvar",
    "I1/lin A",
];

/// The remedy options' table: what each option does.
const REMEDY_AFTER_HEADERS: [&str; 10] = [
    "rank",
    "Irms A",
    "pk/lin",
    "resonance after",
    "res",
    "duty",
    "margin %",
    "THD %",
    "TDD %",
    "after",
];

fn write_bank_remedies(
    out: &mut dyn Write,
    br: &crate::jobs::check::BankRemedies,
) -> io::Result<()> {
    let dash = || "-".to_string();
    writeln!(out)?;
    let n = br.configurations.len();
    let head = format!(
        "Bank {}: {}; {n} configuration(s) compared",
        br.bank, br.reason
    );
    super::table::write_hanging(out, "", "  ", &head, 100)?;
    if let Some(first) = br.results.first() {
        let b = &first.before;
        super::table::write_hanging(
            out,
            "  before: ",
            "    ",
            &format!(
                "{} resonant row(s), {} scenario-configuration row(s) over a harmonic limit, {} duty row(s) over, worst THD {:.2} %, worst TDD {:.2} %",
                b.resonant,
                b.limits_exceeded,
                b.duty_exceeded,
                b.worst_thd_percent,
                b.worst_tdd_percent
            ),
            100,
        )?;
    }
    let what: Vec<Vec<String>> = br
        .results
        .iter()
        .map(|r| {
            let s = &r.option.step;
            vec![
                r.rank.to_string(),
                r.option.name.clone(),
                format!("{:.3}", s.l_mh),
                format!("{:.0}", s.capacitor_kv_needed * 1000.0),
                format!(
                    "{:.0} V {:.1} kvar",
                    s.capacitor_rated_kv * 1000.0,
                    s.capacitor_kvar
                ),
                format!("{:.0}", r.option.effective_kvar),
                format!("{:.1}/{:.1}", s.i1_a, s.linearity_a),
            ]
        })
        .collect();
    write_table(out, &REMEDY_OPTION_HEADERS, &[1, 4], &what)?;
    let does: Vec<Vec<String>> = br
        .results
        .iter()
        .map(|r| {
            vec![
                r.rank.to_string(),
                r.step_rms_a.map_or_else(dash, |v| format!("{v:.1}")),
                r.linearity_ratio.map_or_else(dash, |v| format!("{v:.2}")),
                r.resonance_after
                    .map_or_else(dash, |(lo, hi)| format!("{lo:.2}-{hi:.2}")),
                format!("{}", r.after.resonant),
                format!("{}", r.after.duty_exceeded),
                r.after
                    .margin_percent
                    .map_or_else(dash, |m| format!("{m:.1}")),
                format!("{:.2}", r.after.worst_thd_percent),
                format!("{:.2}", r.after.worst_tdd_percent),
                crate::present::words::remedy_verdict(r).to_string(),
            ]
        })
        .collect();
    writeln!(out)?;
    write_table(out, &REMEDY_AFTER_HEADERS, &[3, 9], &does)?;
    Ok(())
}
