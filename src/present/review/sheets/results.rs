//! The study sheets: resonance (hand checks as live formulas), distortion, duty and
//! remedies.

use rust_xlsxwriter::{Worksheet, XlsxError, utility::row_col_to_cell};

use super::super::writer::{Cell, header, n, on, print_digest, row, t};
use super::verdict_colours;
use crate::jobs::check::CheckResults;

/// The engineer's S_sc as a formula of the Input sheet's cells: S_base / |Σ Z| over the
/// path's elements, each in per unit on 100 MVA (source 100/MVA, transformer
/// Z%/100·100/(kVA/1000), cable (R, X)·ℓ/1000/runs over kV²/100), its R and X from the
/// given X/R ([`crate::study::hand::element_z_pu`]).
fn s_sc_formula(
    res: &CheckResults,
    cells: &super::input::InputCells,
    path: &[crate::study::hand::PathElement],
) -> String {
    use crate::study::hand::PathElement;
    let at = |row: u32, col: u16| format!("Input!{}", row_col_to_cell(row, col));
    let bus_kv = |id: &str| {
        let i = res.plant.buses.iter().position(|b| b.id == id).unwrap_or(0) as u32;
        at(cells.buses + i, 1)
    };
    let mut r_terms = Vec::new();
    let mut x_terms = Vec::new();
    for e in path {
        match *e {
            PathElement::Source(i) => {
                let row = cells.sources + i as u32;
                let z = format!("100/{}", at(row, 3));
                r_terms.push(format!("{z}*COS(ATAN({}))", at(row, 4)));
                x_terms.push(format!("{z}*SIN(ATAN({}))", at(row, 4)));
            }
            PathElement::Transformer(i) => {
                let row = cells.transformers + i as u32;
                let z = format!("{}/100*100/({}/1000)", at(row, 4), at(row, 3));
                r_terms.push(format!("{z}*COS(ATAN({}))", at(row, 5)));
                x_terms.push(format!("{z}*SIN(ATAN({}))", at(row, 5)));
            }
            PathElement::Cable(i) => {
                let row = cells.cables + i as u32;
                let kv = bus_kv(&res.plant.cables[i].from_bus);
                let per = format!("{}/1000/{}/({kv}^2/100)", at(row, 3), at(row, 7));
                r_terms.push(format!("{}*{per}", at(row, 4)));
                x_terms.push(format!("{}*{per}", at(row, 5)));
            }
        }
    }
    format!(
        "=100/SQRT(({})^2+({})^2)",
        r_terms.join("+"),
        x_terms.join("+")
    )
}

/// The Resonance sheet's columns and widths.
const RESONANCE_HEADS: &[(&str, f64)] = &[
    ("Scenario", 9.0),
    ("Configuration", 24.0),
    ("Bank", 8.0),
    ("Bus", 10.0),
    ("Steps", 6.0),
    (
        "Ssc at bus, sources and branches (MVA) (formula of Input)",
        13.0,
    ),
    ("Qc on the bus at bus voltage (kvar)", 12.0),
    ("Xc of this detuning (ohm)", 10.0),
    ("XL reactor (ohm)", 10.0),
    ("|Zth| (ohm) (formula)", 10.0),
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
    ("Peak the hand check explains (h)", 11.0),
    (
        "Every resonance peak at the bus: h (x amplification) verdict",
        30.0,
    ),
];

/// Every screened peak of a row in words: `9.617 (x5.5) clear; 11.301 (x32.2) RESONANT`.
pub(super) fn peaks_words(peaks: &[crate::study::resonance::ScreenedPeak]) -> String {
    peaks
        .iter()
        .map(|p| {
            format!(
                "{:.3} (x{:.1}) {}",
                p.peak.order,
                p.peak.amplification,
                if p.resonant { "RESONANT" } else { "clear" }
            )
        })
        .collect::<Vec<_>>()
        .join("; ")
}

/// The cells of resonance row `r`, written at sheet row `rr` (its formulas refer to that
/// row and to the Input sheet's cells).
// Long: one row's cells per column, in the sheet's column order.
fn resonance_cells(
    res: &CheckResults,
    cells: &super::input::InputCells,
    rr: u32,
    r: &crate::study::ResonanceRow,
) -> Vec<Cell> {
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
    // Plain or detuned steps alone: the closed form, live. Plain and detuned together:
    // the susceptance zero (a root, not a closed form), as a value.
    let hand = if r.mixed {
        n(r.hand_order, "0.000")
    } else if bank.is_some_and(|b| b.p == 0.0) {
        Cell::Formula(
            format!("=SQRT({}*1000/{})", cell(5), cell(6)),
            r.hand_order,
            "0.000",
        )
    } else {
        Cell::Formula(
            format!("=SQRT({}/({}+{}))", cell(7), cell(9), cell(8)),
            r.hand_order,
            "0.000",
        )
    };
    let s_sc = match &r.s_sc_basis {
        crate::study::hand::SscBasis::Path(p) => {
            Cell::Formula(s_sc_formula(res, cells, p), r.s_sc_mva, "0.000")
        }
        crate::study::hand::SscBasis::Network => n(r.s_sc_mva, "0.000"),
    };
    let bus_row = res
        .plant
        .buses
        .iter()
        .position(|b| b.id == r.bus)
        .unwrap_or(0) as u32;
    let zth_cell = Cell::Formula(
        format!(
            "=Input!{}^2/{}",
            row_col_to_cell(cells.buses + bus_row, 1),
            cell(5)
        ),
        zth,
        "0.000000",
    );
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
    vec![
        t(&r.scenario),
        t(&r.configuration),
        t(&r.bank),
        t(&r.bus),
        n(f64::from(r.steps), "0"),
        s_sc,
        n(r.q_c_kvar, "0.0"),
        n(xc, "0.00000"),
        n(xl, "0.00000"),
        zth_cell,
        hand,
        on(r.peak.map(|p| p.order), "0.000"),
        on(r.peak.map(|p| p.z_ohm), "0.0000"),
        on(r.peak.map(|p| p.amplification), "0.00"),
        on(r.peak.and_then(|p| p.sharpness), "0.0"),
        on(r.nearest_characteristic, "0"),
        margin,
        on(band.map(|b| b.low_order), "0.000"),
        on(band.map(|b| b.high_order), "0.000"),
        t(crate::present::words::resonance_verdict(r)),
        on(r.hand_peak_order, "0.000"),
        t(peaks_words(&r.peaks)),
        t(r.mode.as_ref().map_or_else(String::new, |m| {
            let banks: Vec<String> = (m.banks.iter())
                .map(|(id, share)| format!("{id} {share:.2}"))
                .collect();
            format!(
                "{}; {:.4}{}",
                banks.join(", "),
                m.modal_impedance_pu,
                if m.converged { "" } else { " (not separated)" }
            )
        })),
    ]
}

pub(super) fn resonance(
    ws: &mut Worksheet,
    res: &CheckResults,
    cells: &super::input::InputCells,
) -> Result<(), XlsxError> {
    header(ws, 0, RESONANCE_HEADS)?;
    for (i, r) in res.resonance.rows.iter().enumerate() {
        let rr = i as u32 + 1;
        row(ws, rr, &resonance_cells(res, cells, rr, r))?;
    }
    let keys: Vec<(bool, f64)> = res
        .resonance
        .rows
        .iter()
        .map(|r| {
            (
                r.verdict == crate::study::resonance::Verdict::Resonant,
                -r.margin_percent.map_or(f64::INFINITY, f64::abs),
            )
        })
        .collect();
    print_digest(ws, 1, 22, &keys, "Resonance")?;
    verdict_colours(ws, 1, res.resonance.rows.len() as u32, 19)
}

// Long: one row's cells per column, in the sheet's column order.
pub(super) fn distortion(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    let ieee = res.limits.set == crate::model::LimitSet::Ieee519_2014;
    let in_plant_head = if ieee {
        "In-plant bus above the IEEE 519 values (informational: limits at the PCC)"
    } else {
        "In-plant bus above its limit (IEC 61000-2-4: counts)"
    };
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
            ("PCC THD (%)", 9.0),
            ("PCC THD limit (%)", 9.0),
            ("PCC worst voltage order", 8.0),
            ("PCC Vh (%)", 9.0),
            ("PCC Vh limit (%)", 9.0),
            (in_plant_head, 12.0),
            ("Verdict", 10.0),
            ("TDD with background (%, reported)", 11.0),
            ("PCC THD, worst background angle (%)", 11.0),
            ("PCC THD, arithmetic bound (%)", 11.0),
            ("PCC TDD, arithmetic bound (%)", 11.0),
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
                n(r.pcc_thd.value, "0.00"),
                on(r.pcc_thd.limit, "0.00"),
                on(r.pcc_individual_order, "0.##"),
                on(r.pcc_individual.as_ref().map(|c| c.value), "0.00"),
                on(r.pcc_individual.as_ref().and_then(|c| c.limit), "0.00"),
                t(if r.in_plant_above { "yes" } else { "no" }),
                t(if r.exceeds { "EXCEEDS" } else { "meets" }),
                n(r.tdd_with_background_percent, "0.00"),
                on(r.pcc_phasor.and_then(|p| p.thd_worst_angle_percent), "0.00"),
                on(r.pcc_phasor.map(|p| p.thd_arithmetic_percent), "0.00"),
                on(r.pcc_phasor.map(|p| p.tdd_arithmetic_percent), "0.00"),
            ],
        )?;
    }
    let ratio = |c: &crate::study::limits::Checked| c.limit.map_or(0.0, |l| c.value / l);
    let keys: Vec<(bool, f64)> = res
        .limit_rows
        .iter()
        .map(|r| {
            let worst = [
                Some(&r.worst_thd),
                r.worst_individual.as_ref(),
                Some(&r.tdd),
                r.worst_pcc_current.as_ref(),
            ]
            .into_iter()
            .flatten()
            .map(ratio)
            .fold(0.0, f64::max);
            (r.exceeds, worst)
        })
        .collect();
    print_digest(ws, 1, 23, &keys, "Distortion")?;
    verdict_colours(ws, 1, res.limit_rows.len() as u32, 23)
}

/// Columns and widths of a table of `duty`.
const DUTY_HEADS: &[(&str, f64)] = &[
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
    ("Governing case", 22.0),
    ("Bus V (pu)", 8.0),
];

// Long: the Duty sheet's table and the background table below it, on one row counter.
pub(super) fn duty(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    header(ws, 0, DUTY_HEADS)?;
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
                t(r.case.label()),
                n(r.bus_v_pu, "0.000"),
            ],
        )?;
    }
    let keys: Vec<(bool, f64)> = res
        .duty
        .iter()
        .map(|d| {
            let l = &d.limits;
            let worst = [
                Some(d.ratios.rms_voltage / l.rms_voltage),
                l.peak_voltage.map(|x| d.ratios.peak_voltage / x),
                Some(d.ratios.rms_current / l.rms_current),
                l.kvar.map(|x| d.ratios.kvar / x),
            ]
            .into_iter()
            .flatten()
            .fold(0.0, f64::max);
            (d.exceeds, worst)
        })
        .collect();
    print_digest(ws, 1, 13, &keys, "Duty")?;
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
