//! Analyzer recordings: waveform captures in COMTRADE (IEEE Std C37.111-1999 and -2013) and
//! harmonic logs as CSV. Readers are strict: every malformed file is a [`RecordingError`]
//! located at its file, line (or record and byte) and field; nothing is guessed.

pub mod comtrade;
pub mod harmonic_log;

/// A malformed or unreadable recording, located in its file.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{file}: {location}: {message}")]
pub struct RecordingError {
    /// The file's name as given.
    pub file: String,
    /// Where in the file: `line 4, field 6 (a)`, `record 12 (byte 240)` or `whole file`.
    pub location: String,
    pub message: String,
}

impl RecordingError {
    /// An error at `line` (1-based) and, when given, field `field` (1-based) named `name`.
    pub fn at_line(file: &str, line: usize, field: Option<(usize, &str)>, message: String) -> Self {
        let location = match field {
            Some((n, name)) => format!("line {line}, field {n} ({name})"),
            None => format!("line {line}"),
        };
        RecordingError {
            file: file.to_string(),
            location,
            message,
        }
    }

    /// An error about the whole file (cannot be read, wrong size).
    pub fn whole(file: &str, message: String) -> Self {
        RecordingError {
            file: file.to_string(),
            location: "whole file".into(),
            message,
        }
    }
}

/// What a recorded channel measures, from its unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Quantity {
    Voltage,
    Current,
    Other,
}

/// The quantity a unit string names and its factor to volts or amperes (`kV` → 1000); any
/// other unit is [`Quantity::Other`] with factor 1.
pub fn unit_quantity(unit: &str) -> (Quantity, f64) {
    match unit.trim() {
        "V" | "v" => (Quantity::Voltage, 1.0),
        "kV" | "KV" | "kv" => (Quantity::Voltage, 1e3),
        "MV" => (Quantity::Voltage, 1e6),
        "mV" => (Quantity::Voltage, 1e-3),
        "A" | "a" => (Quantity::Current, 1.0),
        "kA" | "KA" | "ka" => (Quantity::Current, 1e3),
        "mA" => (Quantity::Current, 1e-3),
        _ => (Quantity::Other, 1.0),
    }
}
