//! The Damping sheet: every flagged resonance's key figures under the study's damping models
//! beside the same figures under the least-damped ones.

use rust_xlsxwriter::{Format, Worksheet, XlsxError};

use super::super::writer::{header, on, print_digest_of, row, t};
use crate::jobs::check::CheckResults;

const HEADS: &[(&str, f64)] = &[
    ("Scenario", 9.0),
    ("Configuration", 24.0),
    ("Bank", 8.0),
    ("Sequence", 9.0),
    ("Peak h", 8.0),
    ("least damped", 8.0),
    ("Amplification (x)", 10.0),
    ("least damped", 8.0),
    ("Bus THD (%)", 9.0),
    ("least damped", 8.0),
    ("Irms (% rated)", 9.0),
    ("least damped", 8.0),
];

/// The sheet: a line naming both models, then one row per flagged resonance.
pub(super) fn damping(ws: &mut Worksheet, res: &CheckResults) -> Result<(), XlsxError> {
    let study = &res.plant.study;
    let (rm, lm) = crate::model::LEAST_DAMPED;
    ws.write_string_with_format(
        0,
        0,
        format!(
            "Flagged resonances under the study's damping ({}) and the least-damped models ({}){}",
            crate::present::damping_words(study.resistance_model, study.load_model),
            crate::present::damping_words(rm, lm),
            if res.damping.is_empty() {
                ": no resonance is flagged."
            } else {
                "."
            }
        ),
        &Format::new().set_bold(),
    )?;
    header(ws, 2, HEADS)?;
    for (i, d) in res.damping.iter().enumerate() {
        let (a, b) = (&d.study, &d.least_damped);
        row(
            ws,
            i as u32 + 3,
            &[
                t(&d.scenario),
                t(&d.configuration),
                t(&d.bank),
                t(match d.sequence {
                    crate::model::Sequence::Zero => "zero",
                    _ => "positive",
                }),
                on(a.peak_order, "0.000"),
                on(b.peak_order, "0.000"),
                on(a.amplification, "0.0"),
                on(b.amplification, "0.0"),
                on(a.bus_thd_percent, "0.00"),
                on(b.bus_thd_percent, "0.00"),
                on(a.capacitor_current_percent, "0"),
                on(b.capacitor_current_percent, "0"),
            ],
        )?;
    }
    // Printed on one page: the 20 rows with the highest least-damped amplification.
    let keys: Vec<(bool, f64)> = (res.damping.iter())
        .map(|d| (true, d.least_damped.amplification.unwrap_or(0.0)))
        .collect();
    print_digest_of(ws, 3, 11, &keys, "Damping", 20)?;
    ws.set_landscape();
    ws.set_print_fit_to_pages(1, 0);
    Ok(())
}
