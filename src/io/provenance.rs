//! Where a studied plant came from: the input's name, SHA-256 and date, and the reader's
//! warnings, for every report to state.

use std::path::Path;

use crate::io::workbook_in::Warning;

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

/// The provenance of the input workbook at `path` (its bytes already read and validated):
/// its file name, SHA-256, modification date (`fallback_date` when the file system has
/// none) and the reader's warnings.
pub fn file_provenance(
    path: &Path,
    warnings: &[Warning],
    fallback_date: (u16, u8, u8),
) -> std::io::Result<Provenance> {
    let bytes = std::fs::read(path)?;
    Ok(Provenance {
        input: path
            .file_name()
            .map_or_else(String::new, |n| n.to_string_lossy().into_owned()),
        sha256: sha256_hex(&bytes),
        date: file_date(path).unwrap_or(fallback_date),
        warnings: warnings.to_vec(),
    })
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

/// A `--date` that is not a calendar date.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("--date must be YYYY-MM-DD, found \"{0}\"")]
pub struct DateError(pub String);

/// Parses a report date, YYYY-MM-DD (year 1900 to 9999).
pub fn parse_date(s: &str) -> Result<(u16, u8, u8), DateError> {
    let bad = || DateError(s.to_string());
    let mut it = s.split('-');
    let y: u16 = it.next().and_then(|v| v.parse().ok()).ok_or_else(bad)?;
    let m: u8 = it.next().and_then(|v| v.parse().ok()).ok_or_else(bad)?;
    let d: u8 = it.next().and_then(|v| v.parse().ok()).ok_or_else(bad)?;
    if it.next().is_some()
        || !(1900..=9999).contains(&y)
        || !(1..=12).contains(&m)
        || !(1..=31).contains(&d)
    {
        return Err(bad());
    }
    Ok((y, m, d))
}
