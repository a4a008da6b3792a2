//! The study sheets: resonance (hand checks as live formulas), scan table and charts,
//! distortion, duty, remedies and switching.

use rust_xlsxwriter::{
    Chart, ChartMarker, ChartMarkerType, ChartType, Worksheet, XlsxError, utility::row_col_to_cell,
};

use super::super::writer::{Cell, header, n, on, row, t};
use super::verdict_colours;
use crate::check::CheckResults;

pub(super) fn resonance(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
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
                let xc = r.x_c_ohm;
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
                t(r.verdict_text()),
            ],
        )?;
    }
    verdict_colours(ws, 1, res.resonance.rows.len() as u32, 19)
}

/// Most curves drawn per bank bus.
pub(super) const MAX_CURVES: usize = 12;

/// The scan table (first scenario) and one chart per bank bus: the configurations with
/// only that bank energized, step by step, and no banks, characteristic orders marked.
pub(super) fn scan(
    ws: &mut Worksheet,
    res: &CheckResults,
) -> Result<Vec<(String, Chart)>, XlsxError> {
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
        for &c in &picks {
            if let Some(curve) = res.scan.curve(scenario, c, sb) {
                columns.push((
                    bus.clone(),
                    res.label(c),
                    curve.iter().map(|z| z.norm()).collect(),
                ));
            }
        }
        // Where the bank has a zero-sequence path, its zero-sequence scan beside.
        if let Some(z) = &res.zero_scan
            && bank.connection.has_zero_path()
            && let Some(zb) = z.buses.iter().position(|&x| x == bank.bus)
        {
            for &c in &picks {
                if let Some(curve) = res
                    .zero_map
                    .get(c)
                    .and_then(|&zc| z.curve(scenario, zc, zb))
                {
                    columns.push((
                        bus.clone(),
                        format!("{} zero seq", res.label(c)),
                        curve.iter().map(|z| z.norm()).collect(),
                    ));
                }
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

pub(super) fn distortion(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
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

pub(super) fn duty(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
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
    verdict_colours(ws, 1, res.duty.len() as u32, 13)?;
    if !res.background.is_empty() {
        let top = res.duty.len() as u32 + 2;
        ws.write_string(
            top,
            0,
            "Harmonic current from the utility's background distortion (Background sheet): per bank and scenario, the configuration drawing the most",
        )?;
        // Header cells only: the sheet keeps the duty table's frozen and repeated header.
        let f = super::super::writer::header_format();
        for (c, h) in [
            "Scenario",
            "Configuration",
            "Bank",
            "Ih rms from background (A)",
            "Ih rms total (A)",
            "background share (%)",
        ]
        .iter()
        .enumerate()
        {
            ws.write_string_with_format(top + 1, c as u16, *h, &f)?;
        }
        for (i, b) in res.background.iter().enumerate() {
            row(
                ws,
                top + 2 + i as u32,
                &[
                    t(&b.scenario),
                    t(&b.configuration),
                    t(&b.bank),
                    n(b.background_rms_a, "0.0"),
                    n(b.total_rms_a, "0.0"),
                    on(b.share_percent, "0"),
                ],
            )?;
        }
    }
    Ok(())
}

pub(super) fn remedies(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
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
            ("Peak current / linearity peak after", 10.0),
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
            ("Margin across tolerance after (%)", 9.0),
            ("Tolerance bands flagged after", 8.0),
            ("Result", 12.0),
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
                    on(x.linearity_ratio, "0.00"),
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
                    on(x.after.margin_percent, "0.0"),
                    n(x.after.tolerance_flagged as f64, "0"),
                    t(x.verdict()),
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
    verdict_colours(ws, 1, r.saturating_sub(1), 29)
}
