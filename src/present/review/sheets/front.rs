//! The front sheet: the summary with its verdict rows and sign-off.

use rust_xlsxwriter::{Format, Worksheet, XlsxError};

use super::super::Provenance;
use super::super::writer::{Cell, LINE_POINTS, header, n, on, row, t, wrapped_lines};
use super::verdict_colours;
use crate::jobs::check::CheckResults;
use crate::model::Summation;
use crate::present::limit_set_name;
use crate::study::Verdict;

/// The study's provenance and basis, item by item, for the top of the front sheet.
fn provenance_items(res: &CheckResults, prov: &Provenance) -> Vec<(&'static str, String)> {
    let p = &res.plant.study;
    let (y, m, d) = prov.date;
    vec![
        ("Plant", p.plant.clone()),
        ("Prepared by", p.prepared_by.clone()),
        ("Date", format!("{y:04}-{m:02}-{d:02}")),
        ("Input file", prov.input.clone()),
        ("Input SHA-256", prov.sha256.clone()),
        ("Tool", format!("overtone {}", env!("CARGO_PKG_VERSION"))),
        ("Frequency (Hz)", format!("{}", p.frequency_hz)),
        ("PCC bus", res.network.buses[res.pcc].id.clone()),
        ("Limits", limit_set_name(p.limits).into()),
        (
            "Summation",
            match p.summation {
                Summation::Arithmetic => "arithmetic",
                Summation::Iec61000_3_6 => "IEC 61000-3-6",
                Summation::Phasor => "phasor",
            }
            .into(),
        ),
        ("Resistance model", p.resistance_model.word().into()),
        ("Load model", p.load_model.word().into()),
        (
            "Scan",
            format!("orders 1 to {} at {}", p.highest_order, p.scan_step_order),
        ),
        (
            "Resonance margin (%)",
            format!("{}", p.resonance_margin_percent),
        ),
        (
            "Capacitance tolerance (%)",
            format!(
                "{}/+{}",
                p.capacitance_tolerance.minus_percent, p.capacitance_tolerance.plus_percent
            ),
        ),
        (
            "I_L at the PCC (A)",
            format!(
                "{:.1}{}",
                res.limits.i_l_a,
                if res.limits.i_l_estimated {
                    " (estimated)"
                } else {
                    ""
                }
            ),
        ),
        (
            "Isc at the PCC (kA), Isc/IL",
            match res.limits.isc_over_il {
                Some(r) => format!("{:.2}, {r:.1}", res.limits.isc_ka),
                None => format!("{:.2}, not defined (no demand current)", res.limits.isc_ka),
            },
        ),
        (
            "Scenarios x configurations",
            format!(
                "{} x {}",
                res.scan.scenarios.len(),
                res.scan.configurations.len()
            ),
        ),
    ]
}

/// Columns and widths of a table of `summary`.
const VERDICT_HEADS: &[(&str, f64)] = &[
    ("Check", 50.0),
    ("Element", 16.0),
    ("Scenario", 10.0),
    ("Configuration", 26.0),
    ("Value", 12.0),
    ("Limit", 12.0),
    ("Unit", 24.0),
    ("Verdict", 12.0),
];

pub(super) fn summary(
    ws: &mut Worksheet,
    res: &CheckResults,
    prov: &Provenance,
) -> Result<(), XlsxError> {
    let p = &res.plant.study;
    let big = Format::new().set_bold().set_font_size(14);
    ws.write_string_with_format(
        0,
        0,
        if p.title.is_empty() {
            "overtone review"
        } else {
            &p.title
        },
        &big,
    )?;
    // The verdict in sentences first, each across the page.
    let wrap = Format::new()
        .set_text_wrap()
        .set_align(rust_xlsxwriter::FormatAlign::Top);
    let width: f64 = VERDICT_HEADS.iter().map(|h| h.1).sum();
    let sentences = crate::present::terminal::verdict::verdict_items(res);
    for (i, text) in sentences.iter().enumerate() {
        let r = 2 + i as u32;
        ws.merge_range(r, 0, r, 7, &format!("• {text}"), &wrap)?;
        ws.set_row_height(r, LINE_POINTS * wrapped_lines(text, width, false) + 2.0)?;
    }
    let first = 3 + sentences.len() as u32;
    let items = provenance_items(res, prov);
    let bold = Format::new().set_bold();
    for (i, (k, v)) in items.iter().enumerate() {
        ws.write_string_with_format(first + i as u32, 0, *k, &bold)?;
        ws.write_string(first + i as u32, 1, v)?;
    }
    let top = first + items.len() as u32 + 1;
    header(ws, top, VERDICT_HEADS)?;
    let mut rows = verdict_rows(res);
    // Flagged rows first, then the informational, then the rest; by severity within.
    let rank = |cells: &[Cell]| match cells.last() {
        Some(Cell::Text(v)) if v.contains("info") => 1,
        Some(Cell::Text(v)) if v.chars().any(char::is_lowercase) => 2,
        _ => 0,
    };
    rows.sort_by(|a, b| rank(&a.1).cmp(&rank(&b.1)).then(b.0.total_cmp(&a.0)));
    for (i, (_, cells)) in rows.iter().enumerate() {
        row(ws, top + 1 + i as u32, cells)?;
    }
    let last = top + rows.len() as u32;
    verdict_colours(ws, top + 1, last, 7)?;
    let sign = last + 3;
    ws.write_string_with_format(sign, 0, "Reviewer sign-off", &big)?;
    // A line to write on beside each label, and room for the seal.
    let line = Format::new().set_border_bottom(rust_xlsxwriter::FormatBorder::Thin);
    for (i, k) in [
        "Reviewed by",
        "Licence / registration no.",
        "Date",
        "Signature and seal",
        "Comments",
    ]
    .iter()
    .enumerate()
    {
        let r = sign + 1 + i as u32;
        ws.write_string_with_format(r, 0, *k, &bold)?;
        ws.merge_range(r, 1, r, 4, "", &line)?;
        ws.set_row_height(
            r,
            if *k == "Signature and seal" {
                60.0
            } else {
                26.0
            },
        )?;
    }
    // The verdict table's widths stand (its check names are the longest texts in column
    // A); the provenance values run on into the empty cells to their right.
    Ok(())
}

/// A verdict row: its severity for ordering (flagged first) and its cells.
type VerdictRow = (f64, Vec<Cell>);

/// `good` or `bad_word` as a cell.
fn verdict(bad: bool, good: &str, bad_word: &str) -> Cell {
    t(if bad { bad_word } else { good })
}

/// One verdict row per check and element, with a severity for ordering (flagged first).
pub(super) fn verdict_rows(res: &CheckResults) -> Vec<VerdictRow> {
    let mut out = Vec::new();
    for bank in &res.plant.banks {
        bank_rows(res, bank, &mut out);
    }
    // The buses reported: the PCC and the bank buses (every configuration), and each bus that
    // is some configuration's worst (over the configurations where it is the worst: the
    // figures every evaluation of penetration gives exactly).
    let mut always: Vec<usize> = std::iter::once(res.pcc)
        .chain(res.network.banks.iter().map(|b| b.bus))
        .collect();
    always.sort_unstable();
    always.dedup();
    let mut reported = always.clone();
    for d in &res.penetration.results {
        reported.push(d.worst_thd_bus);
        reported.push(d.worst_individual_bus);
    }
    reported.sort_unstable();
    reported.dedup();
    thd_rows(res, &reported, &always, &mut out);
    individual_rows(res, &reported, &always, &mut out);
    tdd_row(res, &mut out);
    operating_rows(res, &mut out);
    out
}

/// A bank's worst resonance row, its worst duty (rms current) and its largest simulated
/// inrush.
fn bank_rows(res: &CheckResults, bank: &crate::model::CapacitorBank, out: &mut Vec<VerdictRow>) {
    let rows: Vec<_> = res
        .resonance
        .rows
        .iter()
        .filter(|r| r.bank == bank.id)
        .collect();
    if let Some(w) = rows.iter().min_by(|a, b| {
        let m = |r: &&&crate::study::ResonanceRow| r.margin_percent.map_or(f64::INFINITY, f64::abs);
        m(a).total_cmp(&m(b))
    }) {
        let bad = w.verdict == Verdict::Resonant;
        out.push((
            if bad { 3.0 } else { 0.0 } + 1.0 / (1.0 + w.margin_percent.map_or(99.0, f64::abs)),
            vec![
                t("Resonance"),
                t(&bank.id),
                t(&w.scenario),
                t(&w.configuration),
                on(w.peak.map(|p| p.order), "0.000"),
                on(w.nearest_characteristic, "0"),
                t(match (w.peak, w.margin_percent) {
                    (_, Some(m)) => format!("order (margin {m:.1} %)"),
                    (None, _) => "no parallel resonance peak in the scanned range".into(),
                    (Some(_), None) => "order (no characteristic order to compare)".into(),
                }),
                verdict(bad, "clear", "RESONANT"),
            ],
        ));
    }
    if let Some(w) = res
        .duty
        .iter()
        .filter(|r| r.bank == bank.id)
        .max_by(|a, b| {
            (a.ratios.rms_current / a.limits.rms_current)
                .total_cmp(&(b.ratios.rms_current / b.limits.rms_current))
        })
    {
        out.push((
            if w.exceeds { 3.0 } else { 0.0 } + w.ratios.rms_current / w.limits.rms_current,
            vec![
                t("Capacitor duty (rms current)"),
                t(&bank.id),
                t(&w.scenario),
                t(&w.configuration),
                n(w.ratios.rms_current * 100.0, "0.0"),
                n(w.limits.rms_current * 100.0, "0"),
                t("% of rated"),
                verdict(w.exceeds, "meets", "EXCEEDS"),
            ],
        ));
    }
    if let Some(w) = res
        .switching
        .events
        .iter()
        .filter(|r| r.bank == bank.id)
        .max_by(|a, b| a.peak_a.total_cmp(&b.peak_a))
    {
        let bad = w.flagged();
        out.push((
            if bad { 2.0 } else { 0.0 },
            vec![
                t("Switching (simulated peak inrush)"),
                t(&bank.id),
                t(&w.scenario),
                t(format!("step {} {}", w.step, w.case.label())),
                n(w.peak_a, "0"),
                on(w.inrush_limit_a, "0"),
                t(if w.inrush_limit_a.is_some() {
                    "A peak"
                } else {
                    "A (no switch limit given)"
                }),
                verdict(bad, "meets", "EXCEEDS"),
            ],
        ));
    }
}

/// Per reported bus, the voltage THD of the configuration where it is highest (in-plant
/// buses informational under IEEE 519).
fn thd_rows(res: &CheckResults, reported: &[usize], always: &[usize], out: &mut Vec<VerdictRow>) {
    let ieee = res.limits.set == crate::model::LimitSet::Ieee519_2014;
    for &b in reported {
        let bus = &res.network.buses[b];
        let lim = res.limits.thd_limit[b].value;
        if let Some(d) = res
            .penetration
            .results
            .iter()
            .filter(|d| always.contains(&b) || d.worst_thd_bus == b)
            .max_by(|x, y| x.thd_percent[b].total_cmp(&y.thd_percent[b]))
        {
            let v = d.thd_percent[b];
            let info = ieee && b != res.pcc;
            out.push((
                if v > lim && !info { 3.0 } else { 0.0 } + v / lim,
                vec![
                    t(if info {
                        "Voltage THD (in-plant, informational)"
                    } else {
                        "Voltage THD"
                    }),
                    t(&bus.id),
                    t(&res.scan.scenarios[d.scenario]),
                    t(res.label(d.configuration)),
                    n(v, "0.00"),
                    n(lim, "0.00"),
                    t("% of nominal"),
                    if info {
                        t(if v > lim { "above (info)" } else { "within" })
                    } else {
                        verdict(v > lim, "meets", "EXCEEDS")
                    },
                ],
            ));
        }
    }
}

/// Per reported bus, the individual harmonic voltage nearest (or farthest over) its limit.
fn individual_rows(
    res: &CheckResults,
    reported: &[usize],
    always: &[usize],
    out: &mut Vec<VerdictRow>,
) {
    let ieee = res.limits.set == crate::model::LimitSet::Ieee519_2014;
    for &b in reported {
        let bus = &res.network.buses[b];
        let ratio = |d: &crate::study::penetration::Distortion| {
            d.worst[b]
                .and_then(|w| w.limit_percent.map(|l| w.v_percent / l))
                .unwrap_or(0.0)
        };
        if let Some(d) = res
            .penetration
            .results
            .iter()
            .filter(|d| always.contains(&b) || d.worst_individual_bus == b)
            .max_by(|x, y| ratio(x).total_cmp(&ratio(y)))
            && let Some(w) = d.worst[b]
            && let Some(l) = w.limit_percent
        {
            let info = ieee && b != res.pcc;
            let bad = w.v_percent > l;
            out.push((
                if bad && !info { 3.0 } else { 0.0 } + w.v_percent / l,
                vec![
                    t(if info {
                        format!("Harmonic voltage (h {}, in-plant, informational)", w.order)
                    } else {
                        format!("Harmonic voltage (h {})", w.order)
                    }),
                    t(&bus.id),
                    t(&res.scan.scenarios[d.scenario]),
                    t(res.label(d.configuration)),
                    n(w.v_percent, "0.00"),
                    n(l, "0.00"),
                    t("% of nominal"),
                    if info {
                        t(if bad { "above (info)" } else { "within" })
                    } else {
                        verdict(bad, "meets", "EXCEEDS")
                    },
                ],
            ));
        }
    }
}

/// The largest TDD at the PCC.
fn tdd_row(res: &CheckResults, out: &mut Vec<VerdictRow>) {
    if let Some(w) = res
        .limit_rows
        .iter()
        .max_by(|a, b| a.tdd.value.total_cmp(&b.tdd.value))
    {
        let bad = w.tdd.exceeds();
        out.push((
            if bad { 3.0 } else { 0.0 } + w.tdd.value / w.tdd.limit.unwrap_or(f64::INFINITY),
            vec![
                t("PCC current TDD"),
                t(&res.network.buses[res.pcc].id),
                t(&w.scenario),
                t(&w.configuration),
                n(w.tdd.value, "0.00"),
                on(w.tdd.limit, "0.00"),
                t("% of I_L"),
                verdict(bad, "meets", "EXCEEDS"),
            ],
        ));
    }
}

/// The operating point's verdict rows: the most leading (or lowest) PF at the PCC, the bus
/// voltage farthest outside (or nearest) its range, the largest step voltage change per
/// bank, and configurations without a load-flow solution.
// Long: one verdict row per operating-point check.
fn operating_rows(res: &CheckResults, out: &mut Vec<(f64, Vec<Cell>)>) {
    let op = &res.operating;
    if let Some(p) = op
        .points
        .iter()
        .min_by(|a, b| a.pcc_q_kvar.total_cmp(&b.pcc_q_kvar))
    {
        let leading = p.pcc_q_kvar < 0.0;
        out.push((
            if leading { 3.0 } else { 0.0 },
            vec![
                t("Power factor at the PCC (most compensated)"),
                t("PCC"),
                t(&p.scenario),
                t(&p.configuration),
                on(p.pcc_power_factor, "0.000"),
                n(op.target_power_factor, "0.00"),
                t(if leading {
                    "PF, leading"
                } else {
                    "PF, lagging"
                }),
                t(if leading { "LEADING" } else { "meets" }),
            ],
        ));
    }
    let excess = |p: &crate::study::operating::OperatingPoint| {
        (p.max_v_pu - op.high_pu).max(op.low_pu - p.min_v_pu)
    };
    if let Some(p) = op
        .points
        .iter()
        .max_by(|a, b| excess(a).total_cmp(&excess(b)))
    {
        let high = p.max_v_pu - op.high_pu >= op.low_pu - p.min_v_pu;
        let bad = p.buses_out_of_range > 0;
        out.push((
            if bad { 3.0 } else { 0.0 } + excess(p).max(-1.0),
            vec![
                t("Bus voltage (farthest toward a limit)"),
                t(if high { &p.max_v_bus } else { &p.min_v_bus }),
                t(&p.scenario),
                t(&p.configuration),
                n(if high { p.max_v_pu } else { p.min_v_pu }, "0.0000"),
                n(if high { op.high_pu } else { op.low_pu }, "0.00"),
                t("pu"),
                t(if bad { "OUT OF RANGE" } else { "meets" }),
            ],
        ));
    }
    for bank in &res.plant.banks {
        if let Some(s) = op
            .step_changes
            .iter()
            .filter(|s| s.bank == bank.id)
            .max_by(|a, b| a.change_percent.abs().total_cmp(&b.change_percent.abs()))
        {
            out.push((
                if s.exceeds { 3.0 } else { 0.0 } + s.change_percent.abs() / s.limit_percent,
                vec![
                    t("Step voltage change"),
                    t(&bank.id),
                    t(&s.scenario),
                    t(&s.configuration),
                    n(s.change_percent, "0.00"),
                    n(s.limit_percent, "0.0"),
                    t(format!("% at {} (step {})", s.bus, s.step)),
                    t(if s.exceeds { "EXCEEDS" } else { "meets" }),
                ],
            ));
        }
    }
    if let Some(e) = op.collapsed.first() {
        out.push((
            4.0,
            vec![
                t("Load flow"),
                t("network"),
                t(&e.scenario),
                t(&e.configuration),
                n(op.collapsed.len() as f64, "0"),
                Cell::Blank,
                t("configurations without solution (voltage collapse)"),
                t("NO SOLUTION"),
            ],
        ));
    }
}
