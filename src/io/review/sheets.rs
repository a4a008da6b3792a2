//! The sheets of the review workbook.

use rust_xlsxwriter::{
    Chart, ChartMarker, ChartMarkerType, ChartType, ConditionalFormatText,
    ConditionalFormatTextRule, Format, Workbook, Worksheet, XlsxError, utility::row_col_to_cell,
};

use super::Provenance;
use super::writer::{Cell, header, n, on, row, t};
use crate::check::CheckResults;
use crate::model::{LimitSet, Reactor, ResistanceModel, Summation};
use crate::report::cautions::CAUTIONS;
use crate::study::Verdict;

const BAD: [&str; 3] = ["RESONANT", "EXCEEDS", "fails"];
const GOOD: [&str; 3] = ["clear", "meets", "passes"];

/// Colours every verdict cell of `col` in rows `first..=last`: flagged red, within green
/// (our palette).
fn verdict_colours(ws: &mut Worksheet, first: u32, last: u32, col: u16) -> Result<(), XlsxError> {
    if last < first {
        return Ok(());
    }
    let red = Format::new()
        .set_background_color("#F4C7C3")
        .set_font_color("#9C0006");
    let green = Format::new()
        .set_background_color("#D5EAD8")
        .set_font_color("#1E5631");
    for (words, f) in [(&BAD, &red), (&GOOD, &green)] {
        for w in words.iter() {
            let cf = ConditionalFormatText::new()
                .set_rule(ConditionalFormatTextRule::Contains((*w).to_string()))
                .set_format(f);
            ws.add_conditional_format(first, col, last, col, &cf)?;
        }
    }
    Ok(())
}

fn limit_set_name(l: LimitSet) -> &'static str {
    match l {
        LimitSet::Ieee519_2014 => "IEEE 519-2014",
        LimitSet::Iec61000_2_4Class1 => "IEC 61000-2-4 class 1",
        LimitSet::Iec61000_2_4Class2 => "IEC 61000-2-4 class 2",
        LimitSet::Iec61000_2_4Class3 => "IEC 61000-2-4 class 3",
    }
}

/// Writes every sheet.
pub fn write_all(
    wb: &mut Workbook,
    res: &CheckResults,
    prov: &Provenance,
) -> Result<(), XlsxError> {
    summary(wb.add_worksheet().set_name("Summary")?, res, prov)?;
    input(wb.add_worksheet().set_name("Input")?, res, prov)?;
    resonance(wb.add_worksheet().set_name("Resonance")?, res)?;
    let charts = scan(wb.add_worksheet().set_name("Scan")?, res)?;
    distortion(wb.add_worksheet().set_name("Distortion")?, res)?;
    duty(wb.add_worksheet().set_name("Duty")?, res)?;
    remedies(wb.add_worksheet().set_name("Remedies")?, res)?;
    switching(wb.add_worksheet().set_name("Switching")?, res)?;
    text_sheet(
        wb.add_worksheet().set_name("Assumptions")?,
        "Assumptions and scope",
        &assumptions(res),
    )?;
    let cautions: Vec<String> = CAUTIONS
        .iter()
        .map(|c| c.to_string())
        .chain(extra_cautions())
        .collect();
    text_sheet(
        wb.add_worksheet().set_name("Cautions")?,
        "Cautions",
        &cautions,
    )?;
    for (name, chart) in charts {
        let cs = wb.add_chartsheet().set_name(&name)?;
        cs.insert_chart(0, 0, &chart)?;
    }
    Ok(())
}

fn extra_cautions() -> Vec<String> {
    vec![
        "These are screening-level calculations. The final design, ratings and settings must be reviewed and sealed by a licensed professional engineer under the local electrical code and the utility's interconnection and power-quality rules, which govern where they differ from this workbook.".into(),
        "Verify harmonic levels by measurement before and after any change to the capacitor banks.".into(),
    ]
}

fn summary(ws: &mut Worksheet, res: &CheckResults, prov: &Provenance) -> Result<(), XlsxError> {
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
    let (y, m, d) = prov.date;
    let items: Vec<(&str, String)> = vec![
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
            }
            .into(),
        ),
        (
            "Resistance model",
            match p.resistance_model {
                ResistanceModel::Constant => "constant",
                ResistanceModel::Skin => "skin",
            }
            .into(),
        ),
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
            format!("{:.2}, {:.1}", res.limits.isc_ka, res.limits.isc_over_il),
        ),
        (
            "Scenarios x configurations",
            format!(
                "{} x {}",
                res.scan.scenarios.len(),
                res.scan.configurations.len()
            ),
        ),
    ];
    let bold = Format::new().set_bold();
    for (i, (k, v)) in items.iter().enumerate() {
        ws.write_string_with_format(i as u32 + 2, 0, *k, &bold)?;
        ws.write_string(i as u32 + 2, 1, v)?;
    }
    let top = items.len() as u32 + 3;
    header(
        ws,
        top,
        &[
            ("Check", 22.0),
            ("Element", 16.0),
            ("Scenario", 10.0),
            ("Configuration", 26.0),
            ("Value", 12.0),
            ("Limit", 12.0),
            ("Unit", 18.0),
            ("Verdict", 12.0),
        ],
    )?;
    let mut rows = verdict_rows(res);
    rows.sort_by(|a, b| b.0.total_cmp(&a.0));
    for (i, (_, cells)) in rows.iter().enumerate() {
        row(ws, top + 1 + i as u32, cells)?;
    }
    let last = top + rows.len() as u32;
    verdict_colours(ws, top + 1, last, 7)?;
    let sign = last + 3;
    ws.write_string_with_format(sign, 0, "Reviewer sign-off", &big)?;
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
        ws.write_string_with_format(sign + 1 + i as u32, 0, *k, &bold)?;
    }
    ws.set_column_width(0, 28)?;
    ws.set_column_width(1, 40)?;
    Ok(())
}

/// One verdict row per check and element, with a severity for ordering (flagged first).
fn verdict_rows(res: &CheckResults) -> Vec<(f64, Vec<Cell>)> {
    let mut out = Vec::new();
    let verdict = |bad: bool, good: &str, badw: &str| t(if bad { badw } else { good });
    for bank in &res.plant.banks {
        let rows: Vec<_> = res
            .resonance
            .rows
            .iter()
            .filter(|r| r.bank == bank.id)
            .collect();
        if let Some(w) = rows.iter().min_by(|a, b| {
            let m =
                |r: &&&crate::study::ResonanceRow| r.margin_percent.map_or(f64::INFINITY, f64::abs);
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
                    t(format!(
                        "order (margin {:.1} %)",
                        w.margin_percent.unwrap_or(f64::NAN)
                    )),
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
            .transients
            .iter()
            .filter(|r| r.bank == bank.id)
            .max_by(|a, b| a.inrush.peak_a.total_cmp(&b.inrush.peak_a))
        {
            out.push((
                0.0,
                vec![
                    t("Switching (peak inrush)"),
                    t(&bank.id),
                    t(&w.scenario),
                    t(format!("step {} {}", w.step, w.inrush.case)),
                    n(w.inrush.peak_a, "0"),
                    Cell::Blank,
                    t("A (no limit applied)"),
                    t("info"),
                ],
            ));
        }
    }
    for (b, bus) in res.network.buses.iter().enumerate() {
        let lim = res.limits.thd_limit[b].value;
        if let Some(d) = res
            .penetration
            .results
            .iter()
            .max_by(|x, y| x.thd_percent[b].total_cmp(&y.thd_percent[b]))
        {
            let v = d.thd_percent[b];
            out.push((
                if v > lim { 3.0 } else { 0.0 } + v / lim,
                vec![
                    t("Voltage THD"),
                    t(&bus.id),
                    t(&res.scan.scenarios[d.scenario]),
                    t(res.label(d.configuration)),
                    n(v, "0.00"),
                    n(lim, "0.00"),
                    t("% of nominal"),
                    verdict(v > lim, "meets", "EXCEEDS"),
                ],
            ));
        }
    }
    for (b, bus) in res.network.buses.iter().enumerate() {
        let ratio = |d: &crate::study::penetration::Distortion| {
            d.worst[b]
                .and_then(|w| w.limit_percent.map(|l| w.v_percent / l))
                .unwrap_or(0.0)
        };
        if let Some(d) = res
            .penetration
            .results
            .iter()
            .max_by(|x, y| ratio(x).total_cmp(&ratio(y)))
            && let Some(w) = d.worst[b]
            && let Some(l) = w.limit_percent
        {
            let bad = w.v_percent > l;
            out.push((
                if bad { 3.0 } else { 0.0 } + w.v_percent / l,
                vec![
                    t(format!("Harmonic voltage (h {})", w.order)),
                    t(&bus.id),
                    t(&res.scan.scenarios[d.scenario]),
                    t(res.label(d.configuration)),
                    n(w.v_percent, "0.00"),
                    n(l, "0.00"),
                    t("% of nominal"),
                    verdict(bad, "meets", "EXCEEDS"),
                ],
            ));
        }
    }
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
    out
}

fn input(ws: &mut Worksheet, res: &CheckResults, prov: &Provenance) -> Result<(), XlsxError> {
    let p = &res.plant;
    let bold = Format::new().set_bold();
    let mut r = 0u32;
    let section = |ws: &mut Worksheet,
                   r: &mut u32,
                   title: &str,
                   heads: &[&str],
                   rows: Vec<Vec<Cell>>|
     -> Result<(), XlsxError> {
        ws.write_string_with_format(*r, 0, title, &Format::new().set_bold().set_font_size(12))?;
        *r += 1;
        let f = super::writer::header_format();
        for (c, h) in heads.iter().enumerate() {
            ws.write_string_with_format(*r, c as u16, *h, &f)?;
        }
        *r += 1;
        for cells in rows {
            row(ws, *r, &cells)?;
            *r += 1;
        }
        *r += 1;
        Ok(())
    };
    section(
        ws,
        &mut r,
        "Buses",
        &["Bus", "Nominal kV", "Description"],
        p.buses
            .iter()
            .map(|b| vec![t(&b.id), n(b.nominal_kv, "0.###"), t(&b.description)])
            .collect(),
    )?;
    section(
        ws,
        &mut r,
        "Sources",
        &[
            "Source",
            "Bus",
            "Scenario",
            "Short-circuit MVA (normalized)",
            "X/R",
        ],
        p.sources
            .iter()
            .map(|s| {
                let kv = p
                    .buses
                    .iter()
                    .find(|b| b.id == s.bus)
                    .map_or(f64::NAN, |b| b.nominal_kv);
                vec![
                    t(&s.id),
                    t(&s.bus),
                    t(s.scenario.as_deref().unwrap_or("(every scenario)")),
                    n(s.short_circuit_mva(kv), "0.0"),
                    n(s.x_over_r, "0.0"),
                ]
            })
            .collect(),
    )?;
    section(
        ws,
        &mut r,
        "Transformers",
        &[
            "Transformer",
            "HV bus",
            "LV bus",
            "kVA",
            "Impedance (%)",
            "X/R",
            "In service",
        ],
        p.transformers
            .iter()
            .map(|x| {
                vec![
                    t(&x.id),
                    t(&x.hv_bus),
                    t(&x.lv_bus),
                    n(x.kva, "0"),
                    n(x.impedance_percent, "0.00"),
                    n(x.x_over_r, "0.0"),
                    t(if x.in_service { "yes" } else { "no" }),
                ]
            })
            .collect(),
    )?;
    section(
        ws,
        &mut r,
        "Cables",
        &[
            "Cable",
            "From bus",
            "To bus",
            "Length (m)",
            "R (ohm/km)",
            "X (ohm/km)",
            "C (uF/km)",
            "Runs",
        ],
        p.cables
            .iter()
            .map(|c| {
                vec![
                    t(&c.id),
                    t(&c.from_bus),
                    t(&c.to_bus),
                    n(c.length_m, "0.0"),
                    n(c.r_ohm_per_km, "0.0000"),
                    n(c.x_ohm_per_km, "0.0000"),
                    n(c.c_uf_per_km, "0.000"),
                    n(f64::from(c.runs), "0"),
                ]
            })
            .collect(),
    )?;
    section(
        ws,
        &mut r,
        "Capacitors",
        &[
            "Bank",
            "Bus",
            "Rated kV",
            "Step kvar",
            "Steps",
            "Reactor",
            "Reactor Q",
            "Status",
            "Studied steps",
            "Inrush inductance (uH)",
        ],
        p.banks
            .iter()
            .map(|b| {
                vec![
                    t(&b.id),
                    t(&b.bus),
                    n(b.rated_kv, "0.000"),
                    n(b.step_kvar, "0.0"),
                    n(f64::from(b.steps), "0"),
                    t(match b.reactor {
                        Reactor::None => "plain".to_string(),
                        Reactor::Detuning { percent } => format!("detuned {percent} %"),
                        Reactor::Tuned { order } => format!("tuned at {order}"),
                    }),
                    n(b.reactor_q, "0"),
                    t(format!("{:?}", b.status).to_lowercase()),
                    t(b.studied_steps
                        .iter()
                        .map(u32::to_string)
                        .collect::<Vec<_>>()
                        .join(",")),
                    on(b.inrush_uh, "0.0"),
                ]
            })
            .collect(),
    )?;
    section(
        ws,
        &mut r,
        "Loads",
        &[
            "Load",
            "Bus",
            "Type",
            "kW",
            "Power factor",
            "Quantity",
            "Load factor",
            "Spectrum used",
        ],
        p.loads
            .iter()
            .map(|l| {
                let used = res
                    .penetration
                    .injections
                    .spectra
                    .iter()
                    .find(|s| s.load == l.id)
                    .map_or_else(|| "-".to_string(), |s| s.name.clone());
                vec![
                    t(&l.id),
                    t(&l.bus),
                    t(l.kind.label()),
                    n(l.kw, "0.0"),
                    n(l.power_factor, "0.00"),
                    n(l.quantity, "0.##"),
                    n(l.load_factor, "0.00"),
                    t(used),
                ]
            })
            .collect(),
    )?;
    section(
        ws,
        &mut r,
        "Spectra (Spectra sheet)",
        &["Spectrum", "Order", "Magnitude (%)", "Angle (deg)"],
        p.spectra
            .iter()
            .flat_map(|s| {
                s.lines.iter().map(move |l| {
                    vec![
                        t(&s.name),
                        n(l.order, "0.##"),
                        n(l.magnitude_percent, "0.00"),
                        n(l.angle_deg, "0.0"),
                    ]
                })
            })
            .collect(),
    )?;
    ws.write_string_with_format(
        r,
        0,
        "Reader warnings (defaults applied, unknown columns)",
        &bold,
    )?;
    r += 1;
    if prov.warnings.is_empty() {
        ws.write_string(r, 0, "none")?;
    }
    for w in &prov.warnings {
        ws.write_string(r, 0, w.to_string())?;
        r += 1;
    }
    for c in 0..10 {
        ws.set_column_width(c, 16)?;
    }
    ws.set_landscape();
    ws.set_print_fit_to_pages(1, 0);
    Ok(())
}

fn resonance(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    header(
        ws,
        0,
        &[
            ("Scenario", 9.0),
            ("Configuration", 24.0),
            ("Bank", 8.0),
            ("Bus", 10.0),
            ("Steps", 6.0),
            ("Ssc at bus, no banks (MVA)", 12.0),
            ("Qc at bus voltage (kvar)", 12.0),
            ("Xc (ohm)", 10.0),
            ("XL reactor (ohm)", 10.0),
            ("|Zth| (ohm)", 10.0),
            ("Hand check h (formula)", 11.0),
            ("Scanned h", 10.0),
            ("|Z| at peak (ohm)", 11.0),
            ("Amplification", 11.0),
            ("Sharpness Q", 10.0),
            ("Nearest characteristic h", 11.0),
            ("Margin (%) (formula)", 11.0),
            ("Band low h", 10.0),
            ("Band high h", 10.0),
            ("Verdict", 11.0),
        ],
    )?;
    for (i, r) in res.resonance.rows.iter().enumerate() {
        let rr = i as u32 + 1;
        let bank = res.network.banks.iter().find(|b| b.id == r.bank);
        let bus = res.network.buses.iter().find(|b| b.id == r.bus);
        let (xc, xl, zth) = match (bank, bus) {
            (Some(b), Some(bus)) => {
                let xc = b.xc_step_pu * bus.z_base_ohm / f64::from(r.steps);
                (xc, b.p * xc, bus.kv * bus.kv / r.s_sc_mva)
            }
            _ => (f64::NAN, f64::NAN, f64::NAN),
        };
        let cell = |c: u16| row_col_to_cell(rr, c);
        let hand = if bank.is_some_and(|b| b.p == 0.0) {
            format!("=SQRT({}*1000/{})", cell(5), cell(6))
        } else {
            format!("=SQRT({}/({}+{}))", cell(7), cell(9), cell(8))
        };
        let band = res
            .tolerance
            .iter()
            .find(|b| b.bank == r.bank && b.configuration == r.configuration);
        let margin = match (r.peak, r.nearest_characteristic) {
            (Some(_), Some(_)) => Cell::Formula(
                format!("=({}-{})/{}*100", cell(11), cell(15), cell(15)),
                r.margin_percent.unwrap_or(f64::NAN),
                "0.0",
            ),
            _ => Cell::Blank,
        };
        row(
            ws,
            rr,
            &[
                t(&r.scenario),
                t(&r.configuration),
                t(&r.bank),
                t(&r.bus),
                n(f64::from(r.steps), "0"),
                n(r.s_sc_mva, "0.000"),
                n(r.q_c_kvar, "0.0"),
                n(xc, "0.00000"),
                n(xl, "0.00000"),
                n(zth, "0.000000"),
                Cell::Formula(hand, r.hand_order, "0.000"),
                on(r.peak.map(|p| p.order), "0.000"),
                on(r.peak.map(|p| p.z_ohm), "0.0000"),
                on(r.peak.map(|p| p.amplification), "0.00"),
                on(r.peak.and_then(|p| p.sharpness), "0.0"),
                on(r.nearest_characteristic, "0"),
                margin,
                on(band.map(|b| b.low_order), "0.000"),
                on(band.map(|b| b.high_order), "0.000"),
                t(r.verdict.word()),
            ],
        )?;
    }
    verdict_colours(ws, 1, res.resonance.rows.len() as u32, 19)
}

/// Most curves drawn per bank bus.
const MAX_CURVES: usize = 12;

/// The scan table (first scenario) and one chart per bank bus: the configurations with
/// only that bank energized, step by step, and no banks, characteristic orders marked.
fn scan(ws: &mut Worksheet, res: &CheckResults) -> Result<Vec<(String, Chart)>, XlsxError> {
    let orders = &res.scan.grid.orders;
    let scenario = 0;
    let mut columns: Vec<(String, String, Vec<f64>)> = Vec::new();
    let mut groups: Vec<(String, std::ops::Range<usize>)> = Vec::new();
    let none = res.scan.configurations.iter().position(|c| c.is_none());
    for (b, bank) in res.network.banks.iter().enumerate() {
        let Some(sb) = res.scan.buses.iter().position(|&x| x == bank.bus) else {
            continue;
        };
        let bus = res.network.buses[bank.bus].id.clone();
        if groups.iter().any(|g| g.0 == bus) {
            continue;
        }
        let mut picks: Vec<usize> = none.into_iter().collect();
        for (c, cfg) in res.scan.configurations.iter().enumerate() {
            let only = cfg.steps.iter().enumerate().all(|(j, &s)| j == b || s == 0);
            if only && cfg.steps[b] > 0 && picks.len() < MAX_CURVES {
                picks.push(c);
            }
        }
        let start = columns.len();
        for c in picks {
            if let Some(curve) = res.scan.curve(scenario, c, sb) {
                columns.push((
                    bus.clone(),
                    res.label(c),
                    curve.iter().map(|z| z.norm()).collect(),
                ));
            }
        }
        groups.push((bus, start..columns.len()));
    }
    let mut heads: Vec<(String, f64)> =
        vec![("Order".into(), 8.0), ("Frequency (Hz)".into(), 10.0)];
    heads.extend(
        columns
            .iter()
            .map(|(bus, label, _)| (format!("|Z| {bus} {label} (ohm)"), 14.0)),
    );
    let head_refs: Vec<(&str, f64)> = heads.iter().map(|(h, w)| (h.as_str(), *w)).collect();
    header(ws, 0, &head_refs)?;
    let f = res.plant.study.frequency_hz;
    for (i, &h) in orders.iter().enumerate() {
        let mut cells = vec![n(h, "0.00"), n(h * f, "0.0")];
        cells.extend(columns.iter().map(|c| n(c.2[i], "0.00000")));
        row(ws, i as u32 + 1, &cells)?;
    }
    // Characteristic orders for the marker series, at the right of the table.
    let mark_col = (columns.len() + 3) as u16;
    ws.write_string(0, mark_col, "Characteristic order")?;
    ws.write_string(0, mark_col + 1, "Marker height (ohm)")?;
    let chars: Vec<f64> = res.resonance.characteristic_orders.clone();
    let last = orders.len() as u32;
    let mut charts = Vec::new();
    for (g, (bus, range)) in groups.iter().enumerate() {
        let top = columns[range.clone()]
            .iter()
            .flat_map(|c| c.2.iter().copied())
            .fold(0.0, f64::max);
        let mc = mark_col + 2 * g as u16;
        if g > 0 {
            ws.write_string(0, mc, "Characteristic order")?;
            ws.write_string(0, mc + 1, "Marker height (ohm)")?;
        }
        for (i, &h) in chars.iter().enumerate() {
            ws.write_number(i as u32 + 1, mc, h)?;
            ws.write_number(i as u32 + 1, mc + 1, top)?;
        }
        let mut chart = Chart::new(ChartType::ScatterStraight);
        chart.title().set_name(&format!(
            "Driving-point impedance at {bus}, scenario {}",
            res.scan.scenarios[scenario]
        ));
        chart.x_axis().set_name("Harmonic order");
        chart.y_axis().set_name("|Z| (ohm)");
        for (k, col) in range.clone().enumerate() {
            let c = (col + 2) as u16;
            chart
                .add_series()
                .set_name(&columns[col].1)
                .set_categories(("Scan", 1, 0, last, 0))
                .set_values(("Scan", 1, c, last, c));
            let _ = k;
        }
        if !chars.is_empty() {
            chart
                .add_series()
                .set_name("characteristic orders")
                .set_categories(("Scan", 1, mc, chars.len() as u32, mc))
                .set_values(("Scan", 1, mc + 1, chars.len() as u32, mc + 1))
                .set_marker(ChartMarker::new().set_type(ChartMarkerType::Triangle))
                .set_format(rust_xlsxwriter::ChartFormat::new().set_no_line());
        }
        let name: String = format!("Chart {bus}")
            .chars()
            .filter(|c| !"[]:*?/\\".contains(*c))
            .take(31)
            .collect();
        charts.push((name, chart));
    }
    Ok(charts)
}

fn distortion(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    header(
        ws,
        0,
        &[
            ("Scenario", 9.0),
            ("Configuration", 24.0),
            ("Worst THD bus", 11.0),
            ("THD (%)", 9.0),
            ("THD limit (%)", 9.0),
            ("THD margin (formula)", 10.0),
            ("Worst harmonic bus", 11.0),
            ("Order", 7.0),
            ("Vh (%)", 9.0),
            ("Vh limit (%)", 9.0),
            ("Vh margin (formula)", 10.0),
            ("PCC TDD (% of I_L)", 10.0),
            ("TDD limit (%)", 9.0),
            ("TDD margin (formula)", 10.0),
            ("PCC worst order", 8.0),
            ("PCC Ih (% of I_L)", 10.0),
            ("Ih limit (%)", 9.0),
            ("Verdict", 10.0),
        ],
    )?;
    for (i, r) in res.limit_rows.iter().enumerate() {
        let rr = i as u32 + 1;
        let cell = |c: u16| row_col_to_cell(rr, c);
        let margin = |v: f64, l: Option<f64>, a: u16, b: u16| match l {
            Some(l) => Cell::Formula(format!("={}-{}", cell(b), cell(a)), l - v, "0.00"),
            None => Cell::Blank,
        };
        let wi = r.worst_individual.as_ref();
        row(
            ws,
            rr,
            &[
                t(&r.scenario),
                t(&r.configuration),
                t(&r.worst_thd_bus),
                n(r.worst_thd.value, "0.00"),
                on(r.worst_thd.limit, "0.00"),
                margin(r.worst_thd.value, r.worst_thd.limit, 3, 4),
                t(&r.worst_individual_bus),
                on(r.worst_individual_order, "0.##"),
                on(wi.map(|w| w.value), "0.00"),
                on(wi.and_then(|w| w.limit), "0.00"),
                wi.map_or(Cell::Blank, |w| margin(w.value, w.limit, 8, 9)),
                n(r.tdd.value, "0.00"),
                on(r.tdd.limit, "0.00"),
                margin(r.tdd.value, r.tdd.limit, 11, 12),
                on(r.worst_pcc_order, "0.##"),
                on(r.worst_pcc_current.as_ref().map(|c| c.value), "0.00"),
                on(r.worst_pcc_current.as_ref().and_then(|c| c.limit), "0.00"),
                t(if r.exceeds { "EXCEEDS" } else { "meets" }),
            ],
        )?;
    }
    verdict_colours(ws, 1, res.limit_rows.len() as u32, 17)
}

fn duty(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    header(
        ws,
        0,
        &[
            ("Scenario", 9.0),
            ("Configuration", 24.0),
            ("Bank", 8.0),
            ("Steps", 6.0),
            ("Vrms (% rated)", 10.0),
            ("limit", 7.0),
            ("Vpeak (% rated)", 10.0),
            ("limit", 7.0),
            ("Irms (% nominal)", 10.0),
            ("limit", 7.0),
            ("kvar (% rated)", 10.0),
            ("limit", 7.0),
            ("Standard", 24.0),
            ("Verdict", 10.0),
        ],
    )?;
    for (i, r) in res.duty.iter().enumerate() {
        let pct = |v: f64| n(v * 100.0, "0.0");
        let opct = |v: Option<f64>| on(v.map(|x| x * 100.0), "0");
        row(
            ws,
            i as u32 + 1,
            &[
                t(&r.scenario),
                t(&r.configuration),
                t(&r.bank),
                n(f64::from(r.steps), "0"),
                pct(r.ratios.rms_voltage),
                n(r.limits.rms_voltage * 100.0, "0"),
                pct(r.ratios.peak_voltage),
                opct(r.limits.peak_voltage),
                pct(r.ratios.rms_current),
                n(r.limits.rms_current * 100.0, "0"),
                pct(r.ratios.kvar),
                opct(r.limits.kvar),
                t(r.limits.source),
                t(if r.exceeds { "EXCEEDS" } else { "meets" }),
            ],
        )?;
    }
    verdict_colours(ws, 1, res.duty.len() as u32, 13)
}

fn remedies(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    header(
        ws,
        0,
        &[
            ("Bank", 8.0),
            ("Rank", 5.0),
            ("Option", 26.0),
            ("p (%)", 7.0),
            ("Tuning order", 8.0),
            ("L per step (mH)", 9.0),
            ("XL (ohm)", 9.0),
            ("Capacitor voltage needed (V)", 10.0),
            ("Capacitor rating (V)", 9.0),
            ("kvar to buy per step", 10.0),
            ("Effective kvar (bank)", 10.0),
            ("I1 per step (A)", 9.0),
            ("Linearity current (A)", 9.0),
            ("Irms per step after (A)", 9.0),
            ("Resonance after low h", 9.0),
            ("Resonance after high h", 9.0),
            ("Resonant rows before", 9.0),
            ("after", 7.0),
            ("Limit rows over before", 9.0),
            ("after", 7.0),
            ("Duty rows over before", 9.0),
            ("after", 7.0),
            ("Worst THD before (%)", 9.0),
            ("after", 7.0),
            ("Worst TDD before (%)", 9.0),
            ("after", 7.0),
            ("Result", 9.0),
        ],
    )?;
    let mut r = 1;
    for br in &res.remedies {
        for x in &br.results {
            let s = &x.option.step;
            row(
                ws,
                r,
                &[
                    t(&br.bank),
                    n(x.rank as f64, "0"),
                    t(&x.option.name),
                    n(s.p * 100.0, "0.00"),
                    n(s.tuning_order, "0.00"),
                    n(s.l_mh, "0.0000"),
                    n(s.xl_ohm, "0.00000"),
                    n(s.capacitor_kv_needed * 1000.0, "0.0"),
                    n(s.capacitor_rated_kv * 1000.0, "0"),
                    n(s.capacitor_kvar, "0.0"),
                    n(x.option.effective_kvar, "0.0"),
                    n(s.i1_a, "0.0"),
                    n(s.linearity_a, "0.0"),
                    on(x.step_rms_a, "0.0"),
                    on(x.resonance_after.map(|r| r.0), "0.000"),
                    on(x.resonance_after.map(|r| r.1), "0.000"),
                    n(x.before.resonant as f64, "0"),
                    n(x.after.resonant as f64, "0"),
                    n(x.before.limits_exceeded as f64, "0"),
                    n(x.after.limits_exceeded as f64, "0"),
                    n(x.before.duty_exceeded as f64, "0"),
                    n(x.after.duty_exceeded as f64, "0"),
                    n(x.before.worst_thd_percent, "0.00"),
                    n(x.after.worst_thd_percent, "0.00"),
                    n(x.before.worst_tdd_percent, "0.00"),
                    n(x.after.worst_tdd_percent, "0.00"),
                    t(if x.passes { "passes" } else { "fails" }),
                ],
            )?;
            r += 1;
        }
    }
    if res.remedies.is_empty() {
        ws.write_string(
            1,
            0,
            "No remedy studied (no bank flagged, or remedies not asked for: see Assumptions).",
        )?;
    }
    verdict_colours(ws, 1, r.saturating_sub(1), 26)
}

fn switching(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    header(
        ws,
        0,
        &[
            ("Scenario", 9.0),
            ("Bank", 8.0),
            ("Step energized", 8.0),
            ("Case", 12.0),
            ("Peak inrush (A)", 10.0),
            ("Ringing frequency (Hz)", 10.0),
            ("Damping ratio zeta", 9.0),
            ("Regime", 14.0),
            ("Bus peak voltage (pu)", 10.0),
        ],
    )?;
    for (i, r) in res.transients.iter().enumerate() {
        row(
            ws,
            i as u32 + 1,
            &[
                t(&r.scenario),
                t(&r.bank),
                n(f64::from(r.step), "0"),
                t(r.inrush.case),
                n(r.inrush.peak_a, "0"),
                n(r.inrush.frequency_hz, "0"),
                n(r.inrush.zeta, "0.0000"),
                t(format!("{:?}", r.inrush.regime)
                    .to_lowercase()
                    .replace("damped", "-damped")),
                on(r.inrush.overvoltage_pu, "0.00"),
            ],
        )?;
    }
    Ok(())
}

fn assumptions(res: &CheckResults) -> Vec<String> {
    let p = &res.plant.study;
    let mut a = vec![
        "Balanced, positive-sequence, per-phase model; triplen harmonics pass transformers as a series impedance (no zero-sequence blocking by delta windings, no winding phase shifts); interharmonics only where a spectrum gives them; transients only by the simple formulas stated.".to_string(),
        format!("Per-unit base 100 MVA, bus nominal kV; resistance model {} (R·√h with skin).", match p.resistance_model { ResistanceModel::Constant => "constant", ResistanceModel::Skin => "skin" }),
        "Sources and transformers: series R-L from the fault level or impedance and X/R; cables: pi model; linear loads: parallel R-L (R = V²/P, X = V²/Q); motors: R + jhX'' with X'' = 0.17 pu on kW·qty/pf and X''/R = 10 (defaults of the input contract).".into(),
        "Capacitor steps: X_C = kV_rated²/Mvar per step; detuned: X_L = p·X_C, R = X_L/Q; tuned: p = 1/order².".into(),
        format!("Harmonic loads inject I_h = I₁·m_h/100, I₁ = P/(√3·kV·pf); contributions combine by magnitude ({}); spectrum angles are not used.", match p.summation { Summation::Arithmetic => "arithmetic summation, an upper bound", Summation::Iec61000_3_6 => "IEC 61000-3-6 summation exponents" }),
        format!("Limits: {}; interharmonics and orders outside the stored tables have no individual limit (they count in THD/TDD). The PCC current is the current into the scenario's supply equivalents.", limit_set_name(p.limits)),
        format!("Capacitance tolerance {}/+{} % applied to the resonance band; capacitor duty at nominal capacitance and nominal bus voltage.", p.capacitance_tolerance.minus_percent, p.capacitance_tolerance.plus_percent),
        "Hand check h = √(S_sc/Q_c) with S_sc from the fundamental Thevenin impedance at the bank's bus without banks (loads and motors included); with a series reactor √(X_C/(|Z_th| + X_L)).".into(),
        "Switching: IEEE C37.012 formulas (from memory), undamped peaks, closing at the voltage peak, no trapped charge; plain banks use the Inrush inductance per step (default 10 µH, common practice).".into(),
        "Remedies: each option sized to keep the planned kvar at bus voltage, the next standard capacitor rating at or above U/(1−p); studies re-run over at most 50 flagged configurations per bank; linearity current 1.8 × I₁ (common practice).".into(),
    ];
    for s in &res.penetration.injections.spectra {
        a.push(format!(
            "Load {}: spectrum {} ({}).",
            s.load, s.name, s.source
        ));
    }
    a.extend(res.notes.iter().cloned());
    a
}

fn text_sheet(ws: &mut Worksheet, title: &str, lines: &[String]) -> Result<(), XlsxError> {
    ws.write_string_with_format(0, 0, title, &Format::new().set_bold().set_font_size(14))?;
    let wrap = Format::new().set_text_wrap();
    for (i, l) in lines.iter().enumerate() {
        ws.write_string_with_format(i as u32 + 2, 0, l, &wrap)?;
    }
    ws.set_column_width(0, 120)?;
    ws.set_landscape();
    ws.set_print_fit_to_pages(1, 0);
    Ok(())
}
