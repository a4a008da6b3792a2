//! The terminal summary of a check: per scenario and configuration, each energized bank's
//! hand-check order beside the scanned peak, its |Z|, amplification, the nearest
//! characteristic order, the margin and the verdict; then the cautions.

use std::io::{self, Write};

use crate::jobs::check::CheckResults;
use crate::model::LimitSet;
use crate::present::cautions::CAUTIONS;
use crate::study::limits::{Checked, LimitRow};
use crate::study::{ResonanceRow, Verdict};

pub use super::table::{MAX_ROWS_PER_SCENARIO, write_table};

fn fmt_opt(v: Option<f64>, digits: usize) -> String {
    v.filter(|x| x.is_finite())
        .map_or_else(|| "-".to_string(), |x| format!("{x:.digits$}"))
}

fn cells(r: &ResonanceRow) -> Vec<String> {
    vec![
        r.configuration.clone(),
        r.bank.clone(),
        format!("{:.0}", r.q_c_kvar),
        format!("{:.1}", r.s_sc_mva),
        format!(
            "{:.2}{}",
            r.hand_order,
            if explains_another(r) { "*" } else { "" }
        ),
        fmt_opt(r.peak.map(|p| p.order), 3),
        fmt_opt(r.peak.map(|p| p.z_ohm), 4),
        fmt_opt(r.peak.map(|p| p.amplification), 2),
        fmt_opt(r.nearest_characteristic, 0),
        fmt_opt(r.margin_percent, 1),
        crate::present::words::resonance_verdict(r),
    ]
}

/// True when the hand check explains a peak other than the one the row names (the bus has
/// several resonance peaks and another is worse).
fn explains_another(r: &ResonanceRow) -> bool {
    match (r.hand_peak_order, r.peak) {
        (Some(h), Some(p)) => (h - p.order).abs() > 1e-9,
        _ => false,
    }
}

const HEADERS: [&str; 11] = [
    "configuration",
    "bank",
    "Qc kvar",
    "Ssc MVA",
    "hand h",
    "scan h",
    "|Z| ohm",
    "ampl",
    "near h",
    "margin %",
    "verdict",
];

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
    super::verdict::write_verdict(out, res)?;
    writeln!(out)?;
    write_basis(out, res)?;
    write_resonance(out, res)?;
    writeln!(out)?;
    super::operating::write_operating(out, res)?;
    writeln!(out)?;
    write_limits(out, res)?;
    writeln!(out)?;
    super::capacitors::write_duty(out, res)?;
    super::capacitors::write_neutral(out, res)?;
    writeln!(out)?;
    super::capacitors::write_tolerance(out, res)?;
    writeln!(out)?;
    super::capacitors::write_transients(out, res)?;
    if !res.remedies.is_empty() {
        writeln!(out)?;
        super::capacitors::write_remedies(out, res)?;
    }
    if !res.notes.is_empty() {
        writeln!(out)?;
        writeln!(out, "Assumptions:")?;
        for n in &res.notes {
            super::table::write_wrapped(out, &format!("- {n}"), 100)?;
        }
    }
    writeln!(out)?;
    writeln!(out, "Cautions:")?;
    for c in CAUTIONS {
        super::table::write_wrapped(out, &format!("- {c}"), 100)?;
    }
    Ok(())
}

/// The study basis in a few lines: sizes, scan grid, PCC, characteristic orders, model and
/// each bank's nameplate against its output at bus voltage.
fn write_basis(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let p = &res.plant;
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
    let chars_line = format!(
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
    );
    super::table::write_wrapped(out, &chars_line, 100)?;
    writeln!(
        out,
        "Model: sequence networks (3k+1 pos., 3k-1 neg., 3k zero), vector-group shifts; summation {}",
        summation_word(p.study.summation)
    )?;
    // Each bank's nameplate beside what a step delivers at its bus voltage:
    // Q = kV_bus² / (X_C·(1 − p)), X_C = kV_rated² / Mvar_step (textbook).
    let banks: Vec<String> = p
        .banks
        .iter()
        .zip(&res.network.banks)
        .map(|(b, m)| {
            let bus_kv = res.network.buses[m.bus].kv;
            let out_kvar = bus_kv * bus_kv / (b.step_xc_ohm() * (1.0 - m.p)) * 1000.0;
            let reactor = crate::present::reactor_words(b.reactor)
                .map_or_else(String::new, |w| format!(", {w}"));
            format!(
                "{} {} x {} kvar at {} kV{reactor} -> {:.1} kvar per step at {} kV",
                b.id, b.steps, b.step_kvar, b.rated_kv, out_kvar, bus_kv
            )
        })
        .collect();
    if !banks.is_empty() {
        super::table::write_wrapped(
            out,
            &format!(
                "Banks (nameplate -> output at bus voltage): {}",
                banks.join("; ")
            ),
            100,
        )?;
    }
    Ok(())
}

/// The resonance tables: per scenario, each energized bank's hand check beside its scanned
/// peak (the flagged rows closest to an order when there are many), and their legend.
fn write_resonance(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let study = &res.resonance;
    writeln!(out)?;
    writeln!(
        out,
        "Resonance at each energized bank: hand check h = sqrt(Ssc/Qc) beside the scanned peak"
    )?;
    if let Some(z) = &res.zero_scan {
        writeln!(
            out,
            "Zero-sequence scan too at grounded-wye banks ({} configuration(s)): rows marked (zero seq)",
            z.configurations.len()
        )?;
    }
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
            write_table(out, &HEADERS, &[0, 1, 10], &table)?;
        }
    }
    writeln!(out)?;
    super::table::write_wrapped(
        out,
        "Ssc: sources, transformers and cables in series (loads and motors left out; with several \
         sources or a loop, the Thevenin impedance of the sources, transformers and cables); Qc: every \
         step on the bus; \
         hand h: sqrt(Ssc/Qc) (with a series reactor: sqrt(Xc/(Xth+XL)); plain and detuned steps \
         together: the zero of the bus susceptance); scan h, |Z|: the worst of every \
         parallel-resonance peak at the bank's bus (a maximum of |Z| the banks raise, amplification \
         above 1, whose phase passes through zero within its half-power band, |angle| < 45 deg), \
         each screened against the characteristic orders: a resonant peak before a clear one, then \
         the higher amplification, else the nearer a characteristic order; hand h*: the hand check \
         explains another of the bus's peaks; ampl: |Z| / |Z| without banks at that order; margin: \
         (scan h - near h)/near h; every peak, the bank's bus and steps are in --json and the review.",
        100,
    )?;
    Ok(())
}

/// "value/limit" with the order: `7.28/10.0 h5`; `-` without a value.
fn of_limit(c: Option<&Checked>, order: Option<f64>) -> String {
    let Some(c) = c else {
        return "-".to_string();
    };
    let limit = c
        .limit
        .map_or_else(|| "-".to_string(), |l| format!("{l:.1}"));
    match order {
        Some(h) => format!("{:.2}/{limit} h{h}", c.value),
        None => format!("{:.2}/{limit}", c.value),
    }
}

const LIMIT_HEADERS: [&str; 8] = [
    "configuration",
    "PCC THD %",
    "PCC Vh %",
    "TDD %",
    "PCC Ih % IL",
    "in-plant THD %",
    "ampl",
    "verdict",
];

/// The summation law's name as the Study sheet spells it.
pub fn summation_word(law: crate::model::Summation) -> &'static str {
    match law {
        crate::model::Summation::Arithmetic => "arithmetic",
        crate::model::Summation::Iec61000_3_6 => "IEC 61000-3-6",
        crate::model::Summation::Phasor => "phasor",
    }
}

/// The Background sheet's lines and, per bank, the most harmonic current the background
/// drives into it.
fn write_background(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let bg = &res.plant.background;
    if bg.is_empty() {
        return Ok(());
    }
    let lines: Vec<String> = bg
        .iter()
        .map(|b| format!("{} h{} {} %", b.source, b.order, b.voltage_percent))
        .collect();
    writeln!(out, "  background (utility side): {}", lines.join(", "))?;
    for b in &res.background {
        super::table::write_hanging(
            out,
            "  ",
            "    ",
            &format!(
                "bank {} ({}, {}): {:.1} A rms of its {:.1} A harmonic current from the background{}",
                b.bank,
                b.scenario,
                b.configuration,
                b.background_rms_a,
                b.total_rms_a,
                b.share_percent
                    .map_or_else(String::new, |p| format!(" ({p:.0} %)"))
            ),
            100,
        )?;
    }
    Ok(())
}

/// The harmonic-limits table: per scenario and configuration, the worst THD bus, the worst
/// individual harmonic, the PCC TDD and worst harmonic current, each with its limit.
pub fn write_limits(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    let ctx = &res.limits;
    let set = crate::present::limit_set_name(ctx.set);
    let at = if ctx.set == LimitSet::Ieee519_2014 {
        format!(
            "at the PCC {}; in-plant buses informational",
            res.network.buses[res.pcc].id
        )
    } else {
        "at every bus (in-plant compatibility levels)".to_string()
    };
    super::table::write_wrapped(
        out,
        &format!(
            "Harmonic limits ({set}, {at}): I_L {:.1} A{}, Isc {:.2} kA, Isc/IL {}; {} harmonic load(s), {} injected order(s)",
            ctx.i_l_a,
            if ctx.i_l_estimated {
                " (ESTIMATED after correction, see the note)"
            } else {
                ""
            },
            ctx.isc_ka,
            ctx.isc_over_il.map_or_else(
                || "not defined (no demand current)".to_string(),
                |r| format!("{r:.1}")
            ),
            res.penetration.injections.spectra.len(),
            res.penetration.injections.orders.len(),
        ),
        100,
    )?;
    let mut used: Vec<(String, usize, f64)> = Vec::new();
    for s in &res.penetration.injections.spectra {
        match used.iter_mut().find(|u| u.0 == s.name) {
            Some(u) => u.1 += 1,
            None => used.push((
                s.name.clone(),
                1,
                crate::study::spectra::thd_percent(&s.lines),
            )),
        }
    }
    for (name, count, thd) in &used {
        writeln!(
            out,
            "  spectrum {name}: {count} load(s), current THD {thd:.1} %"
        )?;
    }
    write_background(out, res)?;
    for (s, scenario) in res.scan.scenarios.iter().enumerate() {
        write_limit_table(out, res, s, scenario)?;
    }
    writeln!(out)?;
    super::table::write_wrapped(
        out,
        if ctx.set == LimitSet::Ieee519_2014 {
            "value/limit; THD and Vh in % of nominal voltage, Vh the worst individual order; TDD and Ih in % of I_L (the plant's own emission across the PCC toward the utility); in-plant THD: the worst other bus; * an in-plant bus above the IEEE 519 voltage values (THD or an individual order; informational: IEEE 519 applies at the PCC); ampl: the largest ratio over the banks of the voltage THD at the bank's bus to that without banks."
        } else {
            "value/limit; THD and Vh in % of nominal voltage at the PCC; in-plant THD: the worst other bus (IEC 61000-2-4 limits apply there too and count in the verdict); ampl: the largest ratio over the banks of the voltage THD at the bank's bus to that without banks."
        },
        100,
    )
}

/// One scenario's limits table: every configuration, or the ones exceeding most when
/// there are many.
fn write_limit_table(
    out: &mut dyn Write,
    res: &CheckResults,
    s: usize,
    scenario: &str,
) -> io::Result<()> {
    let nc = res.scan.configurations.len();
    let rows: Vec<(usize, &LimitRow)> = (0..nc).map(|c| (c, &res.limit_rows[s * nc + c])).collect();
    let exceeding = rows.iter().filter(|(_, r)| r.exceeds).count();
    writeln!(out)?;
    writeln!(
        out,
        "Scenario {scenario}: {exceeding} of {nc} configuration(s) exceed a limit"
    )?;
    let shown: Vec<(usize, &LimitRow)> = if rows.len() > MAX_ROWS_PER_SCENARIO {
        let mut r: Vec<(usize, &LimitRow)> =
            rows.iter().copied().filter(|(_, r)| r.exceeds).collect();
        r.sort_by(|a, b| {
            a.1.worst_thd
                .margin
                .unwrap_or(0.0)
                .total_cmp(&b.1.worst_thd.margin.unwrap_or(0.0))
        });
        r.truncate(MAX_ROWS_PER_SCENARIO);
        writeln!(
            out,
            "  (showing the {} configurations exceeding most; --json has all)",
            r.len()
        )?;
        r
    } else {
        rows
    };
    let table: Vec<Vec<String>> = shown
        .iter()
        .map(|&(c, r)| limit_cells(res, s * nc + c, r))
        .collect();
    if !table.is_empty() {
        write_table(out, &LIMIT_HEADERS, &[0, 5, 7], &table)?;
    }
    super::pcc::write_pcc_lines(out, res, s)
}

/// The cells of a limits row: PCC THD, Vh, TDD and Ih against their limits, the in-plant
/// THD, the banks' amplification (of penetration result `i`) and the verdict.
fn limit_cells(res: &CheckResults, i: usize, r: &LimitRow) -> Vec<String> {
    let ctx = &res.limits;
    let ampl = res.amplification[i]
        .iter()
        .map(|x| x.thd_ratio)
        .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))))
        .map_or_else(|| "-".to_string(), |v| format!("{v:.2}"));
    let ieee = ctx.set == LimitSet::Ieee519_2014;
    let in_plant = if r.worst_thd_bus == res.network.buses[res.pcc].id {
        "-".to_string()
    } else {
        let mark = if r.in_plant_above && ieee { " *" } else { "" };
        format!("{:.2} {}{mark}", r.worst_thd.value, r.worst_thd_bus)
    };
    vec![
        r.configuration.clone(),
        of_limit(Some(&r.pcc_thd), None),
        of_limit(r.pcc_individual.as_ref(), r.pcc_individual_order),
        of_limit(Some(&r.tdd), None),
        of_limit(r.worst_pcc_current.as_ref(), r.worst_pcc_order),
        in_plant,
        ampl,
        if r.exceeds { "EXCEEDS" } else { "meets" }.to_string(),
    ]
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
        let head = format!(
            "  {:<8} {:<24} {:<10} ",
            res.scan.scenarios[s.scenario],
            res.label(s.configuration),
            res.network.buses[res.scan.buses[s.bus]].id,
        );
        if peaks.is_empty() {
            writeln!(out, "{head}no peak")?;
            continue;
        }
        // The peaks fill 100 columns, further ones on lines indented under the first (or
        // less, where a long label leaves no room).
        let pieces: Vec<String> = peaks
            .iter()
            .enumerate()
            .map(|(i, p)| {
                if i + 1 < peaks.len() {
                    format!("{p},")
                } else {
                    p.clone()
                }
            })
            .collect();
        let widest = pieces.iter().map(|p| p.chars().count()).max().unwrap_or(0);
        let indent = " ".repeat(head.chars().count().min(100usize.saturating_sub(widest)));
        let mut line = head;
        let mut empty = true; // no peak on the line yet
        for piece in &pieces {
            let sep = if empty { "" } else { " " };
            if line.chars().count() + sep.len() + piece.chars().count() > 100 {
                writeln!(out, "{}", line.trim_end())?;
                line = format!("{indent}{piece}");
            } else {
                line.push_str(sep);
                line.push_str(piece);
            }
            empty = false;
        }
        writeln!(out, "{line}")?;
    }
    writeln!(out)?;
    for c in CAUTIONS {
        super::table::write_wrapped(out, &format!("- {c}"), 100)?;
    }
    Ok(())
}

/// Writes the `size` command's result.
pub fn write_sizing(
    out: &mut dyn Write,
    s: &crate::study::detune::Sizing,
    tuned: bool,
) -> io::Result<()> {
    let kind = if tuned {
        "tuned filter"
    } else {
        "detuned step"
    };
    writeln!(
        out,
        "Sizing of a {kind} at {} kV, {} Hz",
        s.bus_kv, s.frequency_hz
    )?;
    let rows: Vec<(&str, String)> = vec![
        (
            "detuning factor p",
            format!("{:.4} ({:.2} %)", s.p, s.p * 100.0),
        ),
        (
            "tuning order 1/sqrt(p)",
            format!(
                "{:.3} ({:.1} Hz)",
                s.tuning_order,
                s.tuning_order * s.frequency_hz
            ),
        ),
        (
            "capacitor voltage U/(1-p)",
            format!("{:.1} V", s.capacitor_kv_needed * 1000.0),
        ),
        (
            "capacitor to order (nameplate, per step)",
            format!(
                "{:.0} V, {:.1} kvar",
                s.capacitor_rated_kv * 1000.0,
                s.capacitor_kvar
            ),
        ),
        ("X_C", format!("{:.4} ohm", s.xc_ohm)),
        ("C per phase", format!("{:.1} uF", s.c_uf)),
        ("X_L = p X_C", format!("{:.4} ohm", s.xl_ohm)),
        ("L per phase", format!("{:.4} mH", s.l_mh)),
        ("reactor R = X_L/Q", format!("{:.5} ohm", s.r_ohm)),
        (
            "output at bus voltage (what the step delivers)",
            format!("{:.1} kvar", s.effective_kvar),
        ),
        ("fundamental current", format!("{:.1} A", s.i1_a)),
        (
            "reactor linearity current (1.8 x I1, common practice)",
            format!("{:.1} A", s.linearity_a),
        ),
    ];
    for (k, v) in rows {
        writeln!(out, "  {k:<56} {v}")?;
    }
    if let Some(h) = s.parallel_order {
        writeln!(
            out,
            "  {:<56} {h:.3}",
            "parallel resonance with the supply below the tuning"
        )?;
    }
    writeln!(out)?;
    for c in CAUTIONS {
        super::table::write_wrapped(out, &format!("- {c}"), 100)?;
    }
    Ok(())
}
