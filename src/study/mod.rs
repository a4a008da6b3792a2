//! The studies: what the engineer asks of the network. Each study reads the validated
//! [`crate::model::Plant`] and the [`crate::network::Network`] and returns plain result
//! structs; none of them formats output.

pub mod background;
pub mod config;
pub mod detune;
pub mod duty;
pub mod hand;
pub mod injections;
pub mod limits;
pub mod measured;
pub mod modal;
pub mod neutral;
pub mod operating;
pub mod penetration;
pub mod remedy;
pub mod resonance;
pub mod scan;
pub mod spectra;
pub mod switching;
pub mod tolerance;
pub mod transient;

pub use config::{Configuration, all_configurations, parse_configuration};
pub use resonance::{ResonanceRow, ResonanceStudy, Verdict, characteristic_orders};
pub use scan::{Extremum, Scan, ScanGrid, Series};
