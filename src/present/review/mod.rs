//! The review workbook for the licensed reviewer: every study's results as sheets that can
//! be audited without the tool (hand checks as live formulas beside the computed values, a
//! native scatter chart of the scans), with the input echoed, the assumptions and the
//! cautions. Deterministic: the same input and date give byte-identical files.

mod sheets;
mod writer;

pub use sheets::assumptions;
pub use writer::NOT_COMPUTED;

use rust_xlsxwriter::{DocProperties, ExcelDateTime, Workbook, XlsxError};

use crate::io::provenance::Provenance;
use crate::jobs::charts::ScanCharts;
use crate::jobs::check::CheckResults;

/// The custom document property that marks a review workbook as this tool's (name, value).
pub const REVIEW_MARK: (&str, &str) = ("overtone", "review workbook");

/// The review workbook's bytes.
pub fn review_bytes(
    res: &CheckResults,
    charts: &ScanCharts,
    prov: &Provenance,
) -> Result<Vec<u8>, XlsxError> {
    let title = if res.plant.study.title.is_empty() {
        "overtone review".to_string()
    } else {
        res.plant.study.title.clone()
    };
    let mut wb = review_workbook(&title, res, prov)?;
    sheets::write_all(&mut wb, res, charts, prov)?;
    wb.save_to_buffer()
}

/// The design review's bytes: the plans compared and the load levels, then the full study
/// `res` of the recommended plan ([`crate::jobs::design::recommended_study`]).
pub fn design_review_bytes(
    d: &crate::jobs::design::DesignResult,
    res: &CheckResults,
    charts: &ScanCharts,
    prov: &Provenance,
) -> Result<Vec<u8>, XlsxError> {
    let mut wb = review_workbook("overtone design review", res, prov)?;
    sheets::write_design(&mut wb, d, res, charts, prov)?;
    wb.save_to_buffer()
}

/// The calibration review's bytes: the Calibration sheet (what the recordings measured and
/// the model beside them), then the full study `res` of the calibrated plant.
pub fn calibration_review_bytes(
    c: &crate::jobs::calibrate::CalibrationResults,
    res: &CheckResults,
    charts: &ScanCharts,
    prov: &Provenance,
) -> Result<Vec<u8>, XlsxError> {
    let mut wb = review_workbook("overtone calibration review", res, prov)?;
    sheets::write_calibration(&mut wb, c, res, charts, prov)?;
    wb.save_to_buffer()
}

/// A workbook with the review's properties: `title`, the preparer, the mark that tells
/// `--force` it is ours, and the report date (fixed, so the bytes repeat).
fn review_workbook(
    title: &str,
    res: &CheckResults,
    prov: &Provenance,
) -> Result<Workbook, XlsxError> {
    let mut wb = Workbook::new();
    let (y, m, d) = prov.date;
    wb.set_properties(
        &DocProperties::new()
            .set_title(title)
            .set_author(&res.plant.study.prepared_by)
            .set_custom_property(REVIEW_MARK.0, REVIEW_MARK.1)
            .set_creation_datetime(&ExcelDateTime::from_ymd(y, m, d)?),
    );
    Ok(wb)
}
