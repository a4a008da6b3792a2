//! The terminal answer of `calibrate`: what the measurements say first (the source, the
//! background, the resonance, the verdicts, the measured compliance), then the tables.

use std::io::{self, Write};

use super::table::{write_hanging, write_table, write_wrapped};
use crate::jobs::calibrate::{CalibrationResults, MEASURED};
use crate::present::cautions::CAUTIONS;

/// The answer's sentences, in the order the terminal prints them (the review and the
/// report reuse them).
pub fn verdict_items(c: &CalibrationResults) -> Vec<String> {
    let mut items = Vec::new();
    let events: usize = c.recordings.iter().map(|r| r.events).sum();
    let files: Vec<&str> = c.recordings.iter().map(|r| r.file.as_str()).collect();
    if !files.is_empty() {
        items.push(format!(
            "Recordings at bus {} ({} kV): {} switching event{} found in {}.",
            c.bus,
            c.kv,
            events,
            if events == 1 { "" } else { "s" },
            files.join(", ")
        ));
    }
    if let Some(f) = &c.source {
        items.push(source_item(f));
    }
    if !c.background.is_empty() {
        let orders: Vec<String> = c
            .background
            .iter()
            .take(6)
            .map(|b| format!("{} {:.2} %", b.order, b.percent))
            .collect();
        items.push(format!(
            "Background behind the source (% of nominal, by order): {}; from {}.",
            orders.join(", "),
            c.background_basis
        ));
    }
    for r in &c.resonance {
        let model: Vec<String> = r
            .model_orders
            .iter()
            .map(|(s, h)| format!("{} {}", h.map_or("none".into(), |h| format!("{h:.2}")), s))
            .collect();
        let measured = r
            .measured_order
            .map_or("not measured".into(), |h| format!("{h:.2}"));
        items.push(format!(
            "Resonance of {} at {} with {} ({:.0} kvar): measured order {measured}; model {}.",
            r.bank,
            r.bus,
            r.configuration,
            r.q_kvar,
            model.join(", ")
        ));
    }
    if !c.verdicts.is_empty() {
        let parts: Vec<String> = c
            .verdicts
            .iter()
            .map(|v| {
                format!(
                    "{} {} RESONANT, {} of {} limit rows exceeded, {} duty rows exceeded",
                    v.scenario, v.resonant, v.limits_exceeded, v.rows, v.duty_exceeded
                )
            })
            .collect();
        items.push(format!(
            "Check of the calibrated plant, by scenario: {}.",
            parts.join("; ")
        ));
    }
    items.extend(c.compliance.iter().map(compliance_item));
    items
}

/// The source fit in a sentence.
fn source_item(f: &crate::jobs::calibrate::SourceFit) -> String {
    let within = if f.held_at_bound {
        format!(
            "outside the Sources sheet's {:.1}–{:.1} MVA, X/R {:.2}–{:.2}: the `{MEASURED}` scenario holds {:.1} MVA, X/R {:.2}",
            f.bounds.0.0,
            f.bounds.0.1,
            f.bounds.1.0,
            f.bounds.1.1,
            f.fitted_s_sc_mva,
            f.fitted_x_over_r
        )
    } else {
        format!(
            "within the Sources sheet's {:.1}–{:.1} MVA, X/R {:.2}–{:.2}",
            f.bounds.0.0, f.bounds.0.1, f.bounds.1.0, f.bounds.1.1
        )
    };
    format!(
        "Source strength measured: S_sc {:.1} MVA (events {:.1}–{:.1}; ΔV/V ≈ ΔQ/S_sc gives {:.1}–{:.1}), X/R {:.2} (events {:.2}–{:.2}); {within}.",
        f.s_sc_mva,
        f.s_sc_spread.min,
        f.s_sc_spread.max,
        f.s_sc_approx_spread.min,
        f.s_sc_approx_spread.max,
        f.x_over_r,
        f.x_over_r_spread.min,
        f.x_over_r_spread.max
    )
}

/// One channel's measured compliance in a sentence.
fn compliance_item(comp: &crate::study::measured::compliance::Compliance) -> String {
    let worst = comp.rows.iter().filter(|r| r.exceeds).max_by(|a, b| {
        (a.value_percent / a.limit_percent).total_cmp(&(b.value_percent / b.limit_percent))
    });
    let what = match worst {
        Some(r) => format!(
            "EXCEEDS: {} {} {:.2} % > {:.2} % ({}, IEEE 519-2014 clause {})",
            r.test,
            r.order
                .map_or_else(|| "total".to_string(), |h| format!("order {h}")),
            r.value_percent,
            r.limit_percent,
            r.period,
            r.clause
        ),
        None if comp.rows.is_empty() => {
            let why = comp
                .notes
                .first()
                .map_or("no values to judge", String::as_str);
            return format!(
                "Measured compliance of {} channel {}: not judged: {why}.",
                comp.file, comp.channel
            );
        }
        None => format!(
            "within every test of IEEE 519-2014 clause 5 ({} rows)",
            comp.rows.len()
        ),
    };
    let basis = match comp.quantity {
        crate::io::recordings::Quantity::Current => format!(
            "; % of I_L {:.0} A, Isc/IL {:.1}",
            comp.basis.i_l_a, comp.basis.isc_over_il
        ),
        _ => "; % of the fundamental".to_string(),
    };
    format!(
        "Measured compliance of {} channel {} ({} to {}, {:.2} days{basis}): {what}.",
        comp.file, comp.channel, comp.first, comp.last, comp.days
    )
}

/// Writes the calibration summary.
pub fn write_calibration(out: &mut dyn Write, c: &CalibrationResults) -> io::Result<()> {
    writeln!(out, "Calibration of {}", c.plant.study.title)?;
    for item in verdict_items(c) {
        write_hanging(out, "- ", "  ", &item, 100)?;
    }
    write_events(out, c)?;
    write_impedance(out, c)?;
    write_comparison(out, c)?;
    write_compliance(out, c)?;
    if !c.notes.is_empty() {
        writeln!(out, "\nNotes:")?;
        for n in &c.notes {
            write_wrapped(out, &format!("- {n}"), 100)?;
        }
    }
    writeln!(out, "\nCautions:")?;
    for cn in CAUTIONS {
        write_wrapped(out, &format!("- {cn}"), 100)?;
    }
    Ok(())
}

/// The switching events, one row each.
fn write_events(out: &mut dyn Write, c: &CalibrationResults) -> io::Result<()> {
    if !c.events.is_empty() {
        writeln!(out, "\nSwitching events:")?;
        let rows: Vec<Vec<String>> = c
            .events
            .iter()
            .map(|e| {
                vec![
                    format!("{:.4}", e.time_s),
                    format!("{:.1}", e.delta_q_kvar),
                    e.matched
                        .as_ref()
                        .map_or("-".into(), |m| format!("{} {:+}", m.bank, m.steps)),
                    format!("{:.3}", e.delta_v_percent),
                    format!("{:.2}", e.s_sc_approx_mva),
                    format!("{:.2}", e.s_sc_mva),
                    format!("{:.2}", e.x_over_r),
                    e.ringing_hz.map_or("-".into(), |f| format!("{f:.0}")),
                    e.ringing_hand_hz.map_or("-".into(), |f| format!("{f:.0}")),
                ]
            })
            .collect();
        write_table(
            out,
            &[
                "t (s)",
                "dQ kvar",
                "step",
                "dV %",
                "S_sc approx MVA",
                "S_sc MVA",
                "X/R",
                "ring Hz",
                "f1 sqrt(S/Q) Hz",
            ],
            &[2],
            &rows,
        )?;
    }
    Ok(())
}

/// The source impedance per order, measured beside the calibrated model.
fn write_impedance(out: &mut dyn Write, c: &CalibrationResults) -> io::Result<()> {
    if !c.impedance.is_empty() {
        writeln!(out, "\nSource impedance by order (ohm per phase):")?;
        let rows: Vec<Vec<String>> = c
            .impedance
            .iter()
            .map(|z| {
                vec![
                    z.order.to_string(),
                    format!("{:.4}", z.z_ohm.re),
                    format!("{:.4}", z.z_ohm.im),
                    format!("{:.4}", z.z_ohm.norm()),
                    format!("{:.4}", z.model_z_ohm.norm()),
                    z.spread.events.to_string(),
                ]
            })
            .collect();
        write_table(
            out,
            &[
                "order",
                "R",
                "X",
                "|Z| measured",
                "|Z| calibrated model",
                "events",
            ],
            &[],
            &rows,
        )?;
    }
    Ok(())
}

/// The measured harmonics against the calibrated model's, per configuration seen.
fn write_comparison(out: &mut dyn Write, c: &CalibrationResults) -> io::Result<()> {
    let measured: Vec<&crate::jobs::calibrate::OrderCompare> = c
        .comparison
        .iter()
        .filter(|o| o.scenario == MEASURED)
        .collect();
    if !measured.is_empty() {
        writeln!(
            out,
            "\nMeasured against the calibrated model (scenario {MEASURED}):"
        )?;
        let rows: Vec<Vec<String>> = measured
            .iter()
            .map(|o| {
                vec![
                    o.configuration.clone(),
                    o.order.to_string(),
                    format!("{:.3}", o.measured_v_percent),
                    format!("{:.3}", o.model_v_percent),
                    format!("{:.2}", o.measured_i_a),
                    format!("{:.2}", o.model_i_a),
                ]
            })
            .collect();
        write_table(
            out,
            &[
                "configuration",
                "order",
                "V_h % meas",
                "V_h % model",
                "I_h A meas",
                "I_h A model",
            ],
            &[0],
            &rows,
        )?;
    }
    Ok(())
}

/// Per channel and test, the row nearest its limit (the review has every row).
fn write_compliance(out: &mut dyn Write, c: &CalibrationResults) -> io::Result<()> {
    if c.compliance.is_empty() {
        return Ok(());
    }
    writeln!(
        out,
        "\nMeasured compliance, IEEE 519-2014 clause 5 (per test, the row nearest its limit):"
    )?;
    let mut rows = Vec::new();
    for comp in &c.compliance {
        let mut tests: Vec<&str> = comp.rows.iter().map(|r| r.test).collect();
        tests.dedup();
        for test in tests {
            let worst = comp.rows.iter().filter(|r| r.test == test).max_by(|a, b| {
                (a.value_percent / a.limit_percent).total_cmp(&(b.value_percent / b.limit_percent))
            });
            if let Some(r) = worst {
                let test = format!("{} ({})", short_test(r.test), r.clause);
                rows.push(compliance_cells(&comp.channel, r, test, 2));
            }
        }
    }
    write_table(
        out,
        &[
            "channel", "test", "period", "order", "value %", "limit %", "verdict",
        ],
        &[0, 1, 2, 3, 6],
        &rows,
    )?;
    for comp in &c.compliance {
        for n in &comp.notes {
            write_wrapped(out, &format!("- {n}"), 100)?;
        }
    }
    Ok(())
}

/// A test's name shortened for the table: `weekly 95th pct, 10 min`.
fn short_test(test: &str) -> String {
    test.replace(" percentile of ", " pct, ")
        .replace(" values", "")
}

/// One measured-compliance row as text: channel, test, period, order (`total` for THD or
/// TDD), value and limit with `decimals`, verdict (the terminal and the report share it).
pub fn compliance_cells(
    channel: &str,
    r: &crate::study::measured::compliance::StatRow,
    test: String,
    decimals: usize,
) -> Vec<String> {
    vec![
        channel.to_string(),
        test,
        r.period.clone(),
        r.order
            .map_or_else(|| "total".to_string(), |h| h.to_string()),
        format!("{:.*}", decimals, r.value_percent),
        format!("{:.*}", decimals, r.limit_percent),
        if r.exceeds { "EXCEEDS" } else { "meets" }.to_string(),
    ]
}
