//! The report's sections, each laid out from the check results: the cover with the verdict,
//! the study basis, the resonance of each bank with its |Z(h)| figure, the limits at the
//! PCC, capacitor duty, switching, remedies, cautions and the sign-off.

use super::figures::{self, Curve, CurveKind};
use super::layout::{BODY, Column, Layout};
use crate::io::provenance::Provenance;
use crate::jobs::charts::ScanCharts;
use crate::jobs::check::CheckResults;
use crate::model::{ShortCircuit, SourceKind};
use crate::present::terminal::summary::summation_word;

/// Rows a report table shows at most; the rest are in the review workbook.
pub const TABLE_ROWS: usize = 12;

fn col(head: &str, share: f32, numeric: bool) -> Column<'_> {
    Column {
        head,
        share,
        numeric,
    }
}

/// The cover: title, plant, who and when, the input's SHA-256, then the verdict.
pub fn cover(out: &mut Layout<'_>, res: &CheckResults, prov: &Provenance, kind: &str) {
    let study = &res.plant.study;
    let title = if study.title.is_empty() {
        "Capacitor bank harmonic study"
    } else {
        &study.title
    };
    out.y += 20.0;
    out.lines(
        title,
        (super::layout::MARGIN, super::layout::WIDTH),
        20.0,
        true,
        super::layout::BLACK,
    );
    out.y += 6.0;
    out.lines(
        kind,
        (super::layout::MARGIN, super::layout::WIDTH),
        12.0,
        false,
        super::layout::GREY,
    );
    out.y += 10.0;
    let (y, m, d) = prov.date;
    let rows = vec![
        vec!["Plant".to_string(), study.plant.clone()],
        vec!["Prepared by".into(), study.prepared_by.clone()],
        vec!["Date".into(), format!("{y:04}-{m:02}-{d:02}")],
        vec!["Input workbook".into(), prov.input.clone()],
        vec!["Input SHA-256".into(), prov.sha256.clone()],
        vec![
            "Program".into(),
            format!("overtone {}", env!("CARGO_PKG_VERSION")),
        ],
    ];
    out.table(
        &[col("Item", 1.0, false), col("Value", 3.2, false)],
        &rows,
        8.5,
    );
    out.heading("Verdict", 1);
    for item in crate::present::terminal::verdict::verdict_items(res) {
        out.bullet(&item);
    }
    out.paragraph("Each figure behind these sentences is in the sections that follow and, row by row, in the review workbook (`-o`), which recalculates its hand checks.");
}

/// The study basis: supply, models and limits in prose, the sources and banks in tables.
pub fn basis(out: &mut Layout<'_>, res: &CheckResults) {
    let p = &res.plant;
    let s = &p.study;
    out.heading("Study basis", 1);
    out.paragraph(&format!(
        "The plant is studied at {} Hz with the point of common coupling (PCC) at bus {}. Harmonic limits: {}; harmonic currents summed {}. Damping: {}. The frequency scan runs from order 1 to {} in steps of {}; a parallel resonance within {} % of a characteristic order is RESONANT, and capacitance is varied by {} / +{} % for the tolerance band. Target power factor {}; bus voltages are judged against {}–{} pu.",
        s.frequency_hz,
        res.network.buses[res.network.pcc].id,
        crate::present::limit_set_name(s.limits),
        summation_word(s.summation),
        crate::present::words::damping_words(s.resistance_model, s.load_model),
        s.highest_order,
        s.scan_step_order,
        s.resonance_margin_percent,
        -s.capacitance_tolerance.minus_percent.abs(),
        s.capacitance_tolerance.plus_percent,
        s.target_power_factor,
        s.voltage_range.low_pu,
        s.voltage_range.high_pu,
    ));
    sources_table(out, p);
    banks_table(out, p);
    let kw: f64 = p.loads.iter().map(|l| l.p_kw()).sum();
    out.paragraph(&format!(
        "{} loads, {:.0} kW in all at their load factors; {} buses, {} transformers, {} cables. The review workbook's Input sheet echoes every input row.",
        p.loads.len(),
        kw,
        p.buses.len(),
        p.transformers.len(),
        p.cables.len()
    ));
    out.heading("Assumptions and scope", 2);
    for a in crate::present::review::assumptions(res) {
        out.bullet(&a);
    }
    if !res.notes.is_empty() {
        out.heading("Notes of this study", 2);
        for n in &res.notes {
            out.bullet(&n.to_string());
        }
    }
}

/// The supply sources and their scenarios, as given.
fn sources_table(out: &mut Layout<'_>, p: &crate::model::Plant) {
    out.heading("Supply scenarios", 2);
    let rows: Vec<Vec<String>> = (p.sources.iter())
        .map(|src| {
            let sc = match src.short_circuit {
                ShortCircuit::Mva(m) => format!("{m} MVA"),
                ShortCircuit::Ka(k) => format!("{k} kA"),
            };
            vec![
                src.id.clone(),
                src.bus.clone(),
                src.scenario.clone().unwrap_or_else(|| "(all)".into()),
                match src.kind {
                    SourceKind::Utility => "utility".into(),
                    SourceKind::Generator => "generator".into(),
                },
                sc,
                format!("{}", src.x_over_r),
                format!("{}", src.voltage_pu),
            ]
        })
        .collect();
    out.table(
        &[
            col("Source", 1.2, false),
            col("Bus", 1.0, false),
            col("Scenario", 1.2, false),
            col("Kind", 1.0, false),
            col("Short circuit", 1.2, true),
            col("X/R", 0.7, true),
            col("Voltage (pu)", 1.0, true),
        ],
        &rows,
        8.0,
    );
}

/// The banks as given.
fn banks_table(out: &mut Layout<'_>, p: &crate::model::Plant) {
    out.heading("Capacitor banks", 2);
    let rows: Vec<Vec<String>> = (p.banks.iter())
        .map(|b| {
            vec![
                b.id.clone(),
                b.bus.clone(),
                format!("{} × {} kvar", b.steps, b.step_kvar),
                format!("{}", b.rated_kv),
                crate::present::reactor_words(b.reactor).unwrap_or_else(|| "plain".into()),
                match b.status {
                    crate::model::BankStatus::Existing => "existing".into(),
                    crate::model::BankStatus::Proposed => "proposed".into(),
                },
            ]
        })
        .collect();
    out.table(
        &[
            col("Bank", 1.0, false),
            col("Bus", 1.0, false),
            col("Steps", 1.3, false),
            col("Rated kV", 0.8, true),
            col("Reactor", 1.4, false),
            col("Status", 0.9, false),
        ],
        &rows,
        8.0,
    );
}

/// Per bank bus and scenario: the |Z(h)| figure and the bus's resonance rows nearest a
/// characteristic order.
pub fn resonance(out: &mut Layout<'_>, res: &CheckResults, charts: &ScanCharts) {
    out.page_break();
    out.heading("Resonance at each bank", 1);
    out.paragraph("Each figure shows the driving-point impedance |Z| at the bank's bus against harmonic order: the bank's step configurations, no banks (grey) and the plant's worst configuration for that bus (red, the resonance nearest a characteristic order). Shaded: each characteristic order ± the resonance margin.");
    let orders = &res.resonance.positive_orders;
    let margin = res.resonance.margin_percent;
    let highest = res.plant.study.highest_order;
    let grid = &res.scan.grid.orders;
    for g in &charts.groups {
        let scenario = res
            .scan
            .scenarios
            .get(g.scenario)
            .cloned()
            .unwrap_or_default();
        let mut steps = 0;
        let curves: Vec<Curve> = (charts.curves[g.columns.clone()].iter())
            .filter(|c| !c.label.ends_with("zero seq"))
            .map(|c| {
                let kind = if c.label.contains("(worst)") {
                    CurveKind::Worst
                } else if c.label == "none" {
                    CurveKind::NoBanks
                } else {
                    steps += 1;
                    CurveKind::Step(steps - 1)
                };
                Curve {
                    label: c.label.clone(),
                    points: grid.iter().copied().zip(c.z_ohm.iter().copied()).collect(),
                    kind,
                }
            })
            .collect();
        let caption = format!("Bus {}, scenario {scenario}", g.bus);
        figures::impedance(out, &caption, &curves, (orders, margin, highest));
        let mut rows: Vec<&crate::study::ResonanceRow> = (res.resonance.rows.iter())
            .filter(|r| r.bus == g.bus && r.scenario == scenario)
            .collect();
        rows.sort_by(|a, b| {
            (b.verdict == crate::study::Verdict::Resonant)
                .cmp(&(a.verdict == crate::study::Verdict::Resonant))
                .then(abs_margin(a).total_cmp(&abs_margin(b)))
        });
        let shown: Vec<Vec<String>> = rows
            .iter()
            .take(6)
            .map(|r| {
                vec![
                    r.configuration.clone(),
                    r.bank.clone(),
                    r.peak.map_or("–".into(), |p| format!("{:.2}", p.order)),
                    r.peak
                        .map_or("–".into(), |p| format!("×{:.1}", p.amplification)),
                    r.nearest_characteristic
                        .map_or("–".into(), |h| format!("{h}")),
                    r.margin_percent.map_or("–".into(), |m| format!("{m:.1}")),
                    format!("{:.2}", r.hand_order),
                    crate::present::words::verdict_word(r.verdict).to_string(),
                ]
            })
            .collect();
        out.table(
            &[
                col("Configuration", 2.2, false),
                col("Bank", 0.9, false),
                col("Peak h", 0.7, true),
                col("Ampl.", 0.7, true),
                col("Near h", 0.6, true),
                col("Margin %", 0.8, true),
                col("Hand h", 0.7, true),
                col("Verdict", 1.1, false),
            ],
            &shown,
            7.5,
        );
    }
}

fn abs_margin(r: &crate::study::ResonanceRow) -> f64 {
    r.margin_percent.map_or(f64::INFINITY, f64::abs)
}

/// The limits at the PCC: the configurations that exceed first, then the highest TDD.
pub fn limits(out: &mut Layout<'_>, res: &CheckResults) {
    out.heading("Harmonic limits at the PCC", 1);
    let pcc = &res.network.buses[res.network.pcc].id;
    let over = res.limit_rows.iter().filter(|r| r.exceeds).count();
    out.paragraph(&format!(
        "At the PCC {pcc}: {over} of {} scenario-configurations exceed a limit ({}). TDD is the plant's own emission against I_L = {:.1} A{}; the background's share is reported in the workbook, not judged. The {TABLE_ROWS} most severe rows:",
        res.limit_rows.len(),
        crate::present::limit_set_name(res.plant.study.limits),
        res.limits.i_l_a,
        if res.limits.i_l_estimated { " (estimated: see the notes)" } else { "" },
    ));
    let mut rows: Vec<&crate::study::limits::LimitRow> = res.limit_rows.iter().collect();
    rows.sort_by(|a, b| {
        b.exceeds
            .cmp(&a.exceeds)
            .then(b.tdd.value.total_cmp(&a.tdd.value))
    });
    let lim =
        |c: &crate::study::limits::Checked| c.limit.map_or("–".into(), |l| format!("{l:.1}"));
    let shown: Vec<Vec<String>> = rows
        .iter()
        .take(TABLE_ROWS)
        .map(|r| {
            vec![
                r.scenario.clone(),
                r.configuration.clone(),
                format!("{:.2}", r.pcc_thd.value),
                lim(&r.pcc_thd),
                format!("{:.2}", r.tdd.value),
                lim(&r.tdd),
                if r.exceeds {
                    "EXCEEDS".into()
                } else {
                    "within".into()
                },
            ]
        })
        .collect();
    out.table(
        &[
            col("Scenario", 1.0, false),
            col("Configuration", 2.4, false),
            col("PCC THD %", 0.9, true),
            col("limit", 0.6, true),
            col("TDD %", 0.8, true),
            col("limit", 0.6, true),
            col("Verdict", 0.9, false),
        ],
        &shown,
        7.5,
    );
}

/// Capacitor duty: each bank's worst row over the operating envelope.
pub fn duty(out: &mut Layout<'_>, res: &CheckResults) {
    out.heading("Capacitor duty", 1);
    out.paragraph("Per bank the row nearest its limits over every configuration and scenario, governed by the worst of the study point and the high-voltage cases (lightest load, source at the top of its voltage range, capacitance at its upper tolerance). Ratios in % of rated; limits as the limit set gives them.");
    let mut shown = Vec::new();
    for b in &res.plant.banks {
        let worst = (res.duty.iter())
            .filter(|d| d.bank == b.id)
            .max_by(|x, y| worst_ratio(x).total_cmp(&worst_ratio(y)));
        if let Some(d) = worst {
            shown.push(vec![
                d.bank.clone(),
                format!("{} / {}", d.scenario, d.configuration),
                format!("{:?}", d.case),
                format!("{:.0}", d.ratios.rms_voltage * 100.0),
                format!("{:.0}", d.ratios.peak_voltage * 100.0),
                format!("{:.0}", d.ratios.rms_current * 100.0),
                format!("{:.0}", d.ratios.kvar * 100.0),
                if d.exceeds {
                    "EXCEEDS".into()
                } else {
                    "within".into()
                },
            ]);
        }
    }
    out.table(
        &[
            col("Bank", 0.8, false),
            col("Scenario / configuration", 2.2, false),
            col("Case", 1.2, false),
            col("V rms", 0.6, true),
            col("V peak", 0.6, true),
            col("I rms", 0.6, true),
            col("kvar", 0.6, true),
            col("Verdict", 0.8, false),
        ],
        &shown,
        7.5,
    );
}

fn worst_ratio(d: &crate::study::duty::DutyRow) -> f64 {
    let r = &d.ratios;
    let l = &d.limits;
    let over = |v: f64, limit: Option<f64>| limit.map_or(0.0, |l| v / l);
    (r.rms_voltage / l.rms_voltage)
        .max(over(r.peak_voltage, l.peak_voltage))
        .max(r.rms_current / l.rms_current)
        .max(over(r.kvar, l.kvar))
}

/// Switching: each bank's largest inrush, and the worst event's current waveform.
pub fn switching(out: &mut Layout<'_>, res: &CheckResults) {
    let sw = &res.switching;
    if sw.events.is_empty() {
        return;
    }
    out.heading("Switching a step", 1);
    let mut shown = Vec::new();
    for b in &res.plant.banks {
        if let Some(e) = (sw.events.iter())
            .filter(|e| e.bank == b.id)
            .max_by(|x, y| x.peak_a.total_cmp(&y.peak_a))
        {
            shown.push(vec![
                e.bank.clone(),
                format!("{} step {}", e.scenario, e.step),
                format!("{:.0}", e.peak_a),
                e.frequency_hz.map_or("–".into(), |f| format!("{f:.0}")),
                format!("{:.2}", e.capacitor_peak_pu),
                if e.flagged() {
                    "EXCEEDS".into()
                } else {
                    "ok".into()
                },
            ]);
        }
    }
    out.table(
        &[
            col("Bank", 0.8, false),
            col("Event", 1.6, false),
            col("Inrush peak A", 1.0, true),
            col("Ringing Hz", 0.9, true),
            col("Cap. peak pu", 0.9, true),
            col("Verdict", 0.8, false),
        ],
        &shown,
        7.5,
    );
    if let Some(w) =
        (sw.waveforms.iter()).max_by(|a, b| peak(&a.current_a).total_cmp(&peak(&b.current_a)))
    {
        let caption = format!(
            "Largest inrush: bank {}, step {}, scenario {}",
            w.bank, w.step, w.scenario
        );
        figures::inrush(out, &caption, &w.time_ms, &w.current_a);
    }
}

fn peak(v: &[f64]) -> f64 {
    v.iter().map(|x| x.abs()).fold(0.0, f64::max)
}

/// Remedies: per flagged bank, the options before and after, best first.
pub fn remedies(out: &mut Layout<'_>, res: &CheckResults) {
    if res.remedies.is_empty() && res.plant_remedies.is_empty() {
        return;
    }
    out.heading("Remedies, before and after", 1);
    for r in &res.remedies {
        out.heading(&format!("Bank {}: {}", r.bank, r.reason), 2);
        let shown: Vec<Vec<String>> = (r.results.iter().take(6))
            .map(|o| {
                vec![
                    o.option.name.clone(),
                    format!("{} → {}", o.before.resonant, o.after.resonant),
                    format!("{} → {}", o.before.duty_exceeded, o.after.duty_exceeded),
                    format!(
                        "{:.1} → {:.1}",
                        o.before.worst_thd_percent, o.after.worst_thd_percent
                    ),
                    if o.passes {
                        "passes".into()
                    } else {
                        "fails".into()
                    },
                ]
            })
            .collect();
        out.table(
            &[
                col("Option", 1.8, false),
                col("Resonant rows", 1.0, false),
                col("Duty rows over", 1.0, false),
                col("Worst THD %", 1.0, false),
                col("Verdict", 0.7, false),
            ],
            &shown,
            7.5,
        );
    }
}

/// The cautions, whole, and the deferral to codes, the utility and a licensed engineer.
pub fn cautions(out: &mut Layout<'_>, cautions: &[String]) {
    out.heading("Cautions", 1);
    for c in cautions {
        out.bullet(c);
    }
}

/// The sign-off page: lines to sign and a box for the seal.
pub fn sign_off(out: &mut Layout<'_>) {
    use super::layout::{BLACK, MARGIN, Op, RULE, WIDTH};
    out.page_break();
    out.heading("Review and sign-off", 1);
    out.paragraph("This study is a proposal until a licensed professional engineer has reviewed it, verified its input against the plant and the utility's data, and sealed it. Local electrical codes and the utility's rules govern where they differ from it.");
    for label in [
        "Prepared by (name, signature, date)",
        "Reviewed by, licensed professional engineer (name, signature, date)",
        "License number and jurisdiction",
    ] {
        out.y += 34.0;
        out.push(Op::Line {
            from: (MARGIN, out.y),
            to: (MARGIN + 0.7 * WIDTH, out.y),
            width: 0.6,
            color: BLACK,
            dashed: false,
        });
        out.push(Op::Text {
            x: MARGIN,
            y: out.y + 10.0,
            size: BODY - 1.0,
            bold: false,
            color: BLACK,
            text: label.into(),
        });
        out.y += 12.0;
    }
    out.y += 20.0;
    let top = out.figure_box(150.0);
    for (from, to) in [
        ((MARGIN, top), (MARGIN + 150.0, top)),
        ((MARGIN + 150.0, top), (MARGIN + 150.0, top + 150.0)),
        ((MARGIN + 150.0, top + 150.0), (MARGIN, top + 150.0)),
        ((MARGIN, top + 150.0), (MARGIN, top)),
    ] {
        out.push(Op::Line {
            from,
            to,
            width: 0.6,
            color: RULE,
            dashed: false,
        });
    }
    out.push(Op::Text {
        x: MARGIN + 6.0,
        y: top + 14.0,
        size: BODY - 1.0,
        bold: false,
        color: BLACK,
        text: "Seal".into(),
    });
}
