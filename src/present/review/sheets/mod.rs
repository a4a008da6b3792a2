//! The sheets of the review workbook.

mod calibration;
mod damping;
mod design;
mod front;
mod input;
mod operating;
mod remedies;
mod results;
mod scan;
mod switching;

use rust_xlsxwriter::{
    ConditionalFormatText, ConditionalFormatTextRule, Format, Workbook, Worksheet, XlsxError,
};

use super::Provenance;
use crate::jobs::charts::ScanCharts;
use crate::jobs::check::CheckResults;
use crate::present::cautions::CAUTIONS;
use crate::present::limit_set_name;

const BAD: [&str; 6] = [
    "RESONANT",
    "EXCEEDS",
    "fails",
    "LEADING",
    "OUT OF RANGE",
    "NO SOLUTION",
];
const GOOD: [&str; 4] = ["clear", "meets", "passes", "reaches"];

/// Colours every verdict cell of `col` in rows `first..=last`: flagged red, within green
/// (our palette).
pub(super) fn verdict_colours(
    ws: &mut Worksheet,
    first: u32,
    last: u32,
    col: u16,
) -> Result<(), XlsxError> {
    if last < first {
        return Ok(());
    }
    let red = Format::new()
        .set_background_color("#F4C7C3")
        .set_font_color("#9C0006");
    let green = Format::new()
        .set_background_color("#D5EAD8")
        .set_font_color("#1E5631");
    for (words, f) in [(&BAD[..], &red), (&GOOD[..], &green)] {
        for w in words.iter() {
            let cf = ConditionalFormatText::new()
                .set_rule(ConditionalFormatTextRule::Contains((*w).to_string()))
                .set_format(f);
            ws.add_conditional_format(first, col, last, col, &cf)?;
        }
    }
    Ok(())
}

/// Writes the design's sheets, then every sheet of the recommended plan's study.
pub fn write_design(
    wb: &mut Workbook,
    d: &crate::jobs::design::DesignResult,
    res: &CheckResults,
    charts: &ScanCharts,
    prov: &Provenance,
) -> Result<(), XlsxError> {
    let page = &Page::of(res, prov);
    design::design(sheet(wb, "Design", page)?, d)?;
    design::load_levels(sheet(wb, "Load levels", page)?, d)?;
    write_all(wb, res, charts, prov)
}

/// Writes the Calibration sheet, then every sheet of the calibrated plant's study.
pub fn write_calibration(
    wb: &mut Workbook,
    c: &crate::jobs::calibrate::CalibrationResults,
    res: &CheckResults,
    charts: &ScanCharts,
    prov: &Provenance,
) -> Result<(), XlsxError> {
    let page = &Page::of(res, prov);
    calibration::calibration(sheet(wb, calibration::SHEET, page)?, c)?;
    write_all(wb, res, charts, prov)
}

/// Writes every sheet (`charts`: the scan curves to chart, from
/// [`crate::jobs::charts::scan_charts`]).
pub fn write_all(
    wb: &mut Workbook,
    res: &CheckResults,
    charts: &ScanCharts,
    prov: &Provenance,
) -> Result<(), XlsxError> {
    let page = &Page::of(res, prov);
    front::summary(sheet(wb, "Summary", page)?, res, prov)?;
    let cells = input::input(sheet(wb, "Input", page)?, res, prov)?;
    operating::operating(sheet(wb, "Operating point", page)?, res)?;
    results::resonance(sheet(wb, "Resonance", page)?, res, &cells)?;
    scan::charts(sheet(wb, scan::SHEET, page)?, res, charts)?;
    results::distortion(sheet(wb, "Distortion", page)?, res)?;
    results::duty(sheet(wb, "Duty", page)?, res)?;
    damping::damping(sheet(wb, "Damping", page)?, res)?;
    remedies::remedies(sheet(wb, "Remedies", page)?, res)?;
    switching::switching(sheet(wb, "Switching", page)?, res)?;
    switching::waveforms(sheet(wb, "Waveforms", page)?, "Waveforms", res)?;
    text_sheet(
        sheet(wb, "Assumptions", page)?,
        "Assumptions and scope",
        &assumptions(res),
    )?;
    sources(sheet(wb, "Sources", page)?)?;
    let cautions: Vec<String> = CAUTIONS
        .iter()
        .map(|c| c.to_string())
        .chain(extra_cautions())
        .collect();
    text_sheet(sheet(wb, "Cautions", page)?, "Cautions", &cautions)?;
    Ok(())
}

/// What every printed page carries: the title, plant and date in the header (one section,
/// the page's full width); the sheet, the review caution and "Page x of y" in the footer.
pub(super) struct Page {
    header: String,
}

impl Page {
    fn of(res: &CheckResults, prov: &Provenance) -> Page {
        let study = &res.plant.study;
        let title = if study.title.is_empty() {
            "overtone review"
        } else {
            &study.title
        };
        let (y, m, d) = prov.date;
        Page {
            header: format!(
                "&C{} | {} | {y:04}-{m:02}-{d:02}",
                header_text(title),
                header_text(&study.plant)
            ),
        }
    }
}

/// The footer of every printed page: the sheet's name (and `note`, a long table's digest),
/// the caution, the page number.
pub(super) fn footer(note: Option<&str>) -> String {
    match note {
        Some(n) => format!("&L&A: {}&RPage &P of &N", header_text(n)),
        None => "&L&A&CA proposal for a licensed engineer's review (Cautions sheet)&RPage &P of &N"
            .to_string(),
    }
}

/// `text` for a page header or footer: `&` doubled (a literal ampersand there), cut to 80
/// characters (the header's three parts stay within its 255).
fn header_text(text: &str) -> String {
    let cut: String = text.chars().take(80).collect();
    cut.replace('&', "&&")
}

/// Adds the sheet `name` with the page furniture.
fn sheet<'w>(
    wb: &'w mut Workbook,
    name: &str,
    page: &Page,
) -> Result<&'w mut Worksheet, XlsxError> {
    let ws = wb.add_worksheet().set_name(name)?;
    ws.set_header(&page.header);
    ws.set_footer(footer(None));
    Ok(ws)
}

fn extra_cautions() -> Vec<String> {
    vec![
        "These are screening-level calculations. The final design, ratings and settings must be reviewed and sealed by a licensed professional engineer under the local electrical code and the utility's interconnection and power-quality rules, which govern where they differ from this workbook.".into(),
        "Verify harmonic levels by measurement before and after any change to the capacitor banks.".into(),
    ]
}

/// The study's assumptions and scope, one sentence or paragraph each (the Assumptions
/// sheet; the study report prints them too).
pub fn assumptions(res: &CheckResults) -> Vec<String> {
    let p = &res.plant.study;
    let mut a = vec![
        "Every built-in value (limit tables, spectra, defaults, formulas) is listed with its source and confidence on the Sources sheet; a licensed copy of a standard wins over any value here.".to_string(),
        crate::present::model_scope().to_string(),
        "Per-unit base 100 MVA, bus nominal kV. Sources and transformers: series R-L from the fault level or impedance and X/R; cables: pi model.".into(),
        crate::present::damping_meaning(p.resistance_model, p.load_model),
        "Capacitor steps: X_C = kV_rated²/Mvar per step; detuned: X_L = p·X_C, R = X_L/Q; tuned: p = 1/order².".into(),
        format!("Harmonic loads inject I_h = I₁·m_h/100, I₁ = P/(√3·kV·pf); {}", crate::present::summation_meaning(p.summation)),
        format!("Limits: {}; interharmonics and orders outside the stored tables have no individual limit (they count in THD/TDD). At the PCC (IEEE 519-2014 clause 3): P, Q, PF and harmonic currents are the flow between the PCC bus and the utility side (on-site generators are the plant's); TDD and Ih judge the plant's own emission, the background's part reported beside; under phasor, a blank background angle is 0° with the worst case over it and the arithmetic bound beside. Isc: from the utility sources, transformers and cables alone, the largest over the scenarios.", limit_set_name(p.limits)),
        format!("Capacitance tolerance {}/+{} % applied to the resonance band. Duty: the governing one of the study point, light load{} with every source EMF at least {} pu, and that at +{} % capacitance (harmonic currents of the study point). Neutral: 3·I₀ of 4-wire loads. Cable Z₀: R0, X0 as given, else 3 × Z₁ (common practice).", p.capacitance_tolerance.minus_percent, p.capacitance_tolerance.plus_percent, res.duty_envelope.as_ref().map_or(String::new(), |e| format!(" ({})", e.level)), p.voltage_range.high_pu, p.capacitance_tolerance.plus_percent),
        format!("Operating point: fundamental load flow by Newton's method to 1e-9 pu mismatch; sources as EMFs of Voltage (pu) at angle 0 behind their impedance; loads (linear, motor, converter) at constant power P = kW·Quantity·Load factor, Q = P·tan(acos pf) lagging; capacitor steps, reactors and cable charging as admittances at h = 1; transformers at the ratio of their buses' kV (no taps); target PF {} lagging, voltage range {}/{} pu, step voltage change {} %.", p.target_power_factor, p.voltage_range.low_pu, p.voltage_range.high_pu, p.step_voltage_change_percent),
        "Hand check (the engineer's independent number): S_sc at the bank's bus from the sources, transformers and cables in series (per-unit impedances added with their X/R; loads, motors and cable charging left out), a live formula of the Input sheet's cells on a radial plant; where several sources or a loop make the path not unique, from the fundamental Thevenin impedance of the network of sources, transformers and cables alone (value; loads, motors and cable charging left out, as for Isc at the PCC). Plain steps alone: h = √(S_sc/Q_c); detuned steps alone: √(X_C/(|Z_th| + X_L)); plain and detuned steps on one bus together: the zero of the lossless bus susceptance (value). Q_c counts every step energized on the bus.".into(),
        crate::present::switching_scope().to_string(),
        "Remedies: each option sized to keep the planned kvar at bus voltage, the next standard capacitor rating at or above U/(1−p); studies re-run over every configuration in which the bank is energized; ranked: an option that raises the worst THD or TDD after every one that does not, then the bank's own checks (resonance, tolerance band, duty, linearity), capacitor voltage class, margin across the tolerance band, linearity headroom, reactor size; the limits' exceedances shown, not ranked; the banks that form a flagged mode together (a share of at least 0.1 of its critical mode) also get whole-plant options (each detuning on all of them, one filter in place of the bank with the largest share), re-run over every configuration and ranked by the plant's outcome the same way; linearity current 1.8 × I₁ (common practice).".into(),
    ];
    // One line per spectrum, naming the loads that use it.
    let mut spectra: Vec<(String, String, Vec<String>)> = Vec::new();
    for s in &res.penetration.injections.spectra {
        match spectra
            .iter_mut()
            .find(|(name, source, _)| *name == s.name && *source == s.source)
        {
            Some(e) => e.2.push(s.load.clone()),
            None => spectra.push((s.name.clone(), s.source.to_string(), vec![s.load.clone()])),
        }
    }
    for (name, source, loads) in spectra {
        let which = if loads.len() == 1 { "Load" } else { "Loads" };
        a.push(format!(
            "Spectrum {name} ({source}): {which} {}.",
            loads.join(", ")
        ));
    }
    a.extend(res.notes.iter().map(ToString::to_string));
    a
}

/// The sources and confidence of every built-in value (present::sources).
fn sources(ws: &mut Worksheet) -> Result<(), XlsxError> {
    ws.write_string_with_format(
        0,
        0,
        "Sources of the built-in values and how sure they are",
        &Format::new().set_bold().set_font_size(14),
    )?;
    let head = super::writer::header_format();
    let wrap = Format::new().set_text_wrap();
    for (c, h) in ["Value", "Source", "Confidence"].iter().enumerate() {
        ws.write_string_with_format(2, c as u16, *h, &head)?;
    }
    for (i, (what, source, confidence)) in crate::present::sources::SOURCES.iter().enumerate() {
        let r = 3 + i as u32;
        ws.write_string_with_format(r, 0, *what, &wrap)?;
        ws.write_string_with_format(r, 1, *source, &wrap)?;
        ws.write_string_with_format(r, 2, *confidence, &wrap)?;
        // Wrapped text needs its lines' height (a spreadsheet does not grow a row written
        // this way): about one character per width unit, 15 points a line.
        let lines = [(*what, 60.0), (*source, 45.0), (*confidence, 25.0)]
            .iter()
            .map(|(t, w)| super::writer::wrapped_lines(t, *w, false))
            .fold(1.0, f64::max);
        ws.set_row_height(r, super::writer::LINE_POINTS * lines)?;
    }
    ws.set_column_width(0, 60)?;
    ws.set_column_width(1, 45)?;
    ws.set_column_width(2, 25)?;
    ws.set_landscape();
    // One page: the table is a little longer than a landscape page at full size.
    ws.set_print_fit_to_pages(1, 1);
    Ok(())
}

/// A numbered list of sentences, wrapped in a column that prints at full size.
fn text_sheet(ws: &mut Worksheet, title: &str, lines: &[String]) -> Result<(), XlsxError> {
    ws.write_string_with_format(0, 0, title, &Format::new().set_bold().set_font_size(14))?;
    let top = rust_xlsxwriter::FormatAlign::Top;
    let wrap = Format::new().set_text_wrap().set_align(top);
    let number = Format::new().set_align(top);
    const WIDTH: f64 = 100.0;
    for (i, l) in lines.iter().enumerate() {
        let r = i as u32 + 2;
        ws.write_string_with_format(r, 0, format!("{}.", i + 1), &number)?;
        ws.write_string_with_format(r, 1, l, &wrap)?;
        let h = super::writer::LINE_POINTS * super::writer::wrapped_lines(l, WIDTH, false) + 3.0;
        ws.set_row_height(r, h)?;
    }
    ws.set_column_width(0, 4)?;
    ws.set_column_width(1, WIDTH)?;
    ws.set_landscape();
    ws.set_print_fit_to_pages(1, 0);
    Ok(())
}
