//! The review workbook for the licensed reviewer: every study's results as sheets that can
//! be audited without the tool (hand checks as live formulas beside the computed values, a
//! native scatter chart of the scans), with the input echoed, the assumptions and the
//! cautions. Deterministic: the same input and date give byte-identical files.

mod sheets;
mod writer;

pub use writer::NOT_COMPUTED;

use std::path::Path;

use rust_xlsxwriter::{DocProperties, ExcelDateTime, Workbook, XlsxError};

use crate::io::workbook_in::Warning;
use crate::jobs::check::CheckResults;

/// The custom document property that marks a review workbook as this tool's (name, value).
pub const REVIEW_MARK: (&str, &str) = ("overtone", "review workbook");

/// Where the studied plant came from, for the summary sheet.
#[derive(Debug, Clone)]
pub struct Provenance {
    /// Input file name (or `built-in demo`).
    pub input: String,
    /// SHA-256 of the input bytes, lower-case hex.
    pub sha256: String,
    /// The report date (year, month, day): the input file's modification date unless given.
    pub date: (u16, u8, u8),
    /// The reader's warnings (defaults applied, unknown columns).
    pub warnings: Vec<Warning>,
}

/// SHA-256 of `bytes` as lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::Digest;
    sha2::Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// A review workbook that could not be written.
#[derive(Debug, thiserror::Error)]
pub enum ReviewError {
    #[error("{path}: the review workbook cannot be written ({source})")]
    Write { path: String, source: XlsxError },
    #[error("the study of the recommended plan could not run: {0}")]
    Study(String),
}

/// The review workbook's bytes.
pub fn review_bytes(res: &CheckResults, prov: &Provenance) -> Result<Vec<u8>, XlsxError> {
    let mut wb = Workbook::new();
    let (y, m, d) = prov.date;
    let title = if res.plant.study.title.is_empty() {
        "overtone review".to_string()
    } else {
        res.plant.study.title.clone()
    };
    wb.set_properties(
        &DocProperties::new()
            .set_title(&title)
            .set_author(&res.plant.study.prepared_by)
            .set_custom_property(REVIEW_MARK.0, REVIEW_MARK.1)
            .set_creation_datetime(&ExcelDateTime::from_ymd(y, m, d)?),
    );
    sheets::write_all(&mut wb, res, prov)?;
    wb.save_to_buffer()
}

/// The design review's bytes: the plans compared and the load levels, then the full study
/// of the recommended plan (of the plant without a bank when no plan passes).
pub fn design_review_bytes(
    d: &crate::jobs::design::DesignResult,
    prov: &Provenance,
) -> Result<Vec<u8>, ReviewError> {
    let err = |source: XlsxError| ReviewError::Write {
        path: prov.input.clone(),
        source,
    };
    let plant = d
        .recommended
        .map_or_else(|| d.base().clone(), |i| d.plant_with(i));
    let options = crate::jobs::check::CheckOptions {
        remedies: Some(false),
        switching: true,
        ..Default::default()
    };
    let mut res = crate::jobs::check::run_check(&plant, &options)
        .map_err(|e| ReviewError::Study(e.to_string()))?;
    res.notes.extend(d.notes.iter().cloned());
    let mut wb = Workbook::new();
    let (y, m, day) = prov.date;
    wb.set_properties(
        &DocProperties::new()
            .set_title("overtone design review")
            .set_author(&plant.study.prepared_by)
            .set_custom_property(REVIEW_MARK.0, REVIEW_MARK.1)
            .set_creation_datetime(&ExcelDateTime::from_ymd(y, m, day).map_err(err)?),
    );
    sheets::write_design(&mut wb, d, &res, prov).map_err(err)?;
    wb.save_to_buffer().map_err(err)
}

/// Writes the design review workbook to `path`, whole or not at all.
pub fn write_design_review(
    path: &Path,
    d: &crate::jobs::design::DesignResult,
    prov: &Provenance,
) -> Result<(), ReviewError> {
    let bytes = design_review_bytes(d, prov).map_err(|e| match e {
        ReviewError::Write { source, .. } => ReviewError::Write {
            path: path.display().to_string(),
            source,
        },
        other => other,
    })?;
    crate::export::write_bytes(path, &bytes).map_err(|e| ReviewError::Write {
        path: path.display().to_string(),
        source: XlsxError::IoError(e),
    })
}

/// Writes the review workbook to `path` through a temporary file in the same folder, renamed
/// into place, so that no partial workbook is ever left under `path`
/// ([`crate::export::write_file`]).
pub fn write_review(path: &Path, res: &CheckResults, prov: &Provenance) -> Result<(), ReviewError> {
    let err = |source: XlsxError| ReviewError::Write {
        path: path.display().to_string(),
        source,
    };
    let bytes = review_bytes(res, prov).map_err(err)?;
    crate::export::write_bytes(path, &bytes).map_err(|e| err(XlsxError::IoError(e)))
}

/// The date (UTC) a file was last modified, as (year, month, day).
pub fn file_date(path: &Path) -> Option<(u16, u8, u8)> {
    let t = std::fs::metadata(path).ok()?.modified().ok()?;
    let secs = t.duration_since(std::time::UNIX_EPOCH).ok()?.as_secs() as i64;
    Some(civil_from_days(secs.div_euclid(86_400)))
}

/// Gregorian (year, month, day) of a count of days since 1970-01-01 (the usual
/// days-to-civil conversion of the proleptic Gregorian calendar, common practice).
pub fn civil_from_days(z: i64) -> (u16, u8, u8) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = if m <= 2 { y + 1 } else { y };
    (y as u16, m as u8, d as u8)
}
