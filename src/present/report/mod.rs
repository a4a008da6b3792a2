//! The study report a reviewer files (`--report FILE.pdf`): typeset by the tool itself into
//! a PDF with embedded fonts and vector figures. A cover with the verdict, the study basis,
//! each bank's resonance with its |Z(h)| figure, the limits at the PCC, duty, switching,
//! remedies, the cautions and a sign-off page; a header and footer on every page. Long
//! tables stop at a few rows and say so: every row is in the review workbook. The same
//! input and date give the same bytes.
//!
//! Fonts: Liberation Sans (SIL Open Font License 1.1, `fonts/OFL.txt`), embedded as
//! subsets by the PDF writer.

mod calibration;
mod figures;
mod layout;
mod render;
mod sections;

use crate::io::provenance::Provenance;
use crate::jobs::charts::ScanCharts;
use crate::jobs::check::CheckResults;
use crate::jobs::design::DesignResult;

pub use render::RenderError;

const REGULAR: &[u8] = include_bytes!("fonts/LiberationSans-Regular.ttf");
const BOLD: &[u8] = include_bytes!("fonts/LiberationSans-Bold.ttf");

/// The mark in a report's metadata by which `--force` knows a file as ours.
pub const REPORT_MARK: &str = "overtone study report";

/// True when `pdf` (a file's bytes) is a report this tool wrote: it carries the mark.
pub fn is_ours(pdf: &[u8]) -> bool {
    pdf.windows(REPORT_MARK.len())
        .any(|w| w == REPORT_MARK.as_bytes())
}

/// The page header's text: the title, and then the plant and date.
fn header(res: &CheckResults, prov: &Provenance) -> (String, String) {
    let s = &res.plant.study;
    let (y, m, d) = prov.date;
    let title = if s.title.is_empty() {
        "Capacitor bank harmonic study"
    } else {
        &s.title
    };
    (
        title.to_string(),
        format!(" | {} | {y:04}-{m:02}-{d:02}", s.plant),
    )
}

/// The cautions the report prints whole.
pub fn cautions() -> Vec<String> {
    crate::present::cautions::CAUTIONS
        .iter()
        .map(|c| c.split_whitespace().collect::<Vec<_>>().join(" "))
        .collect()
}

/// The report's bytes for the study `res` (and, for `design`, the plans compared before
/// the recommended plan's study).
pub fn report_bytes(
    res: &CheckResults,
    charts: &ScanCharts,
    prov: &Provenance,
    design: Option<&DesignResult>,
) -> Result<Vec<u8>, RenderError> {
    let kind = match design {
        Some(_) => {
            "Capacitor bank design study: the plans compared and the recommended plan studied"
        }
        None => "Capacitor bank harmonic study: resonance, distortion, duty and switching",
    };
    build(res, charts, prov, kind, |out| {
        if let Some(d) = design {
            design_section(out, d);
        }
    })
}

/// The report's bytes for a calibration: its section, then the calibrated plant's study
/// `res` (every scenario, `measured` among them).
pub fn calibration_report_bytes(
    c: &crate::jobs::calibrate::CalibrationResults,
    res: &CheckResults,
    charts: &ScanCharts,
    prov: &Provenance,
) -> Result<Vec<u8>, RenderError> {
    let kind = "Model calibration from measurements, and the calibrated plant's harmonic study";
    let chars = res.resonance.characteristic_orders.clone();
    let margin = res.plant.study.resonance_margin_percent;
    build(res, charts, prov, kind, |out| {
        calibration::section(out, c, &chars, margin)
    })
}

/// The cover, `front` (the design or calibration section), then every study section, the
/// cautions and the sign-off, typeset.
fn build(
    res: &CheckResults,
    charts: &ScanCharts,
    prov: &Provenance,
    kind: &str,
    front: impl FnOnce(&mut layout::Layout<'_>),
) -> Result<Vec<u8>, RenderError> {
    let metrics = layout::Metrics::new(REGULAR, BOLD).ok_or(RenderError::Font)?;
    let mut out = layout::Layout::new(&metrics);
    sections::cover(&mut out, res, prov, kind);
    front(&mut out);
    sections::basis(&mut out, res);
    sections::resonance(&mut out, res, charts);
    sections::limits(&mut out, res);
    sections::duty(&mut out, res);
    sections::switching(&mut out, res);
    sections::remedies(&mut out, res);
    sections::cautions(&mut out, &cautions());
    sections::sign_off(&mut out);
    let (title, tail) = header(res, prov);
    let furniture = render::Furniture {
        header: title.clone(),
        footer: "A proposal for a licensed engineer's review; see Cautions".into(),
        title: format!("{title}{tail}"),
        header_tail: tail,
    };
    render::render(&out.pages, &furniture, (REGULAR, BOLD), &metrics)
}

/// The first plans ranked, one row each.
fn plan_rows(d: &DesignResult) -> Vec<Vec<String>> {
    (d.plans.iter().take(sections::TABLE_ROWS))
        .map(|p| {
            vec![
                format!("{}", p.rank),
                p.joined(|plan, _| plan.bus.clone()),
                p.joined(|plan, _| format!("{} × {} kvar", plan.steps, plan.step_kvar)),
                p.plan.reactor_label(),
                format!("{:.0}", p.cost),
                p.outcome
                    .margin_percent
                    .map_or("–".into(), |m| format!("{m:.1}")),
                if p.passes() {
                    "passes".into()
                } else {
                    p.fails.join("; ")
                },
            ]
        })
        .collect()
}

/// The design's recommended plan, why, and the nearest plans.
fn design_section(out: &mut layout::Layout<'_>, d: &DesignResult) {
    use crate::present::terminal::design::{level_words, plan_words};
    out.heading("The plan recommended", 1);
    match d.recommended.map(|i| &d.plans[i]) {
        Some(p) => {
            out.paragraph(&format!(
                "Recommended: {}. PF at the PCC: {}.",
                plan_words(p),
                level_words(d, p)
            ));
            out.paragraph(&d.reason);
        }
        None => out.paragraph(&format!("No plan satisfies every check. {}", d.reason)),
    }
    for line in crate::present::terminal::design::replaced_words(d) {
        out.paragraph(&line);
    }
    let rows = plan_rows(d);
    out.table(
        &[
            layout::Column {
                head: "#",
                share: 0.3,
                numeric: true,
            },
            layout::Column {
                head: "Bus",
                share: 1.0,
                numeric: false,
            },
            layout::Column {
                head: "Steps",
                share: 1.4,
                numeric: false,
            },
            layout::Column {
                head: "Reactor",
                share: 0.7,
                numeric: false,
            },
            layout::Column {
                head: "Cost",
                share: 0.5,
                numeric: true,
            },
            layout::Column {
                head: "Margin %",
                share: 0.6,
                numeric: true,
            },
            layout::Column {
                head: "Verdict",
                share: 2.5,
                numeric: false,
            },
        ],
        &rows,
        7.5,
    );
    out.paragraph(&format!(
        "{} plans searched; the first {} are listed, every plan is in the design review workbook. The sections below study the {} plant.",
        d.counts.enumerated,
        d.plans.len().min(sections::TABLE_ROWS),
        if d.recommended.is_some() { "recommended plan's" } else { "" }
    ));
}
