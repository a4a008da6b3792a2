//! The integration tests, one binary. Where new tests go:
//! - `reference_resonance`, `reference_operating` (load flow), `reference_capacitors`,
//!   `reference_limits`, `reference_sequence` (sequence networks, background, phasor sums),
//!   `reference_damping` (resistance and load models), `reference_data` (built-in data and
//!   helpers): checks against published or textbook
//!   values (source named beside each);
//! - `calibration`: recordings (COMTRADE reader, harmonic logs) and the calibration against
//!   ngspice `.tran` recordings and hand-computed statistics;
//! - `simulator`: phasor summation with background against ngspice (when installed);
//! - `two_bank_modes`: several banks, several modes (every peak, modal analysis, whole-plant
//!   remedies) and triplens by wiring;
//! - `solver`: sparse factorization and step-combination engine against independent dense algebra;
//! - `model`: validation of plants and topology errors;
//! - `scan`: grid, configurations, peak finding;
//! - `cli`: the `overtone` binary as a user runs it (exit codes, output paths, interrupts);
//! - `design`: the design search against power-factor sizing and its own checks;
//! - `printed`, `report`: the review printed by LibreOffice and the typeset study report, as
//!   a reviewer reads them (pdftotext, pdfinfo, pdffonts);
//! - `reader`, `malformed`, `bounds`: the workbook reader, its messages and its resource bounds;
//! - `degenerate`: degenerate physics, each through the full report audit;
//! - `hostile`, `properties`: the fuzz bodies over the kept corpus (`fuzz_bodies` is
//!   `tests/fuzz/bodies.rs`) and proptest properties.

mod bounds;
mod calibration;
mod cases;
mod cli;
mod common;
mod degenerate;
mod design;
mod evaluation;
#[path = "../fuzz/bodies.rs"]
mod fuzz_bodies;
mod hostile;
mod malformed;
mod model;
mod printed;
mod properties;
mod reader;
#[path = "../support/recording.rs"]
mod recording;
mod reference_capacitors;
mod reference_damping;
mod reference_data;
mod reference_limits;
mod reference_operating;
mod reference_pcc;
mod reference_resonance;
mod reference_sequence;
mod reference_switching;
mod report;
mod review;
mod scan;
mod simulator;
mod solver;
#[path = "../support/synthetic.rs"]
mod synthetic;
mod two_bank_modes;
