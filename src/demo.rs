//! The built-in demo: the invented bottling plant of `cases/bottling-plant.xlsx`, embedded
//! in the binary so that `overtone demo` needs no file. Invented: no real plant, company or
//! person.
//!
//! A bottling plant fed at 13.8 kV with two supply scenarios (`max` and `min` utility fault
//! level), main switchgear feeding two 480 V unit substations over short cables. Substation 1
//! carries filler and conveyor drives (6-pulse, with line reactors) and a proposed 5 × 200 kvar
//! plain bank whose steps land near the 13th, 11th, 7th and 5th harmonics depending on the
//! step and scenario, and then exceed IEEE 519-2014; substation 2 has an existing 7 % detuned
//! bank, which alone meets every limit.

use crate::io::workbook_in::{ReadError, ReadOutcome, read_workbook_bytes};
use crate::model::Plant;

/// The demo workbook's bytes.
pub const DEMO_WORKBOOK: &[u8] = include_bytes!("../cases/bottling-plant.xlsx");

/// The file name the demo is reported under.
pub const DEMO_NAME: &str = "bottling-plant.xlsx";

/// Reads the embedded demo workbook.
pub fn demo_workbook() -> Result<ReadOutcome, ReadError> {
    read_workbook_bytes(DEMO_NAME, "bottling-plant", DEMO_WORKBOOK)
}

/// The demo plant.
pub fn demo_plant() -> Result<Plant, ReadError> {
    demo_workbook().map(|r| r.plant)
}

/// The report date of the built-in demo (fixed, so that the demo's workbook is
/// reproducible); also the date of an input whose file system gives none.
pub const DEMO_DATE: (u16, u8, u8) = (2026, 1, 1);

/// The provenance of the built-in demo for its reports.
pub fn demo_provenance(
    warnings: &[crate::io::workbook_in::Warning],
) -> crate::io::provenance::Provenance {
    crate::io::provenance::Provenance {
        input: format!("built-in demo ({DEMO_NAME})"),
        sha256: crate::io::provenance::sha256_hex(DEMO_WORKBOOK),
        date: DEMO_DATE,
        warnings: warnings.to_vec(),
    }
}
