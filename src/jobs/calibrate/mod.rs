//! The `calibrate` job: the plant's model against its own measurements. Switching events in
//! waveform recordings measure the source (S_sc, X/R, Z(h)) and the background behind it;
//! the fit becomes a supply scenario `measured` of a calibrated plant, checked beside the
//! scenarios the engineer gave; a harmonic log is judged by IEEE 519-2014's statistical
//! evaluation.

pub mod channels;
pub mod estimate;
pub mod matching;
mod model;
mod run;
mod written;

pub use model::{OrderCompare, ResonanceCompare, VerdictCount};
pub use run::*;
pub use written::{calibrated_plant, provenance_notes};

/// Why a calibration cannot run.
#[derive(Debug, thiserror::Error)]
pub enum CalibrateError {
    #[error(transparent)]
    Recording(#[from] crate::io::recordings::RecordingError),
    #[error(
        "{file}: the analysis needs the three phase voltages (or phase-to-phase voltages, or one) and the matching line currents, named by their `ph` field (A, B, C) and unit (V, kV, A, kA); found {voltages} voltage and {currents} current channels"
    )]
    Channels {
        file: String,
        voltages: usize,
        currents: usize,
    },
    #[error("--bus: there is no bus \"{0}\" on the Buses sheet")]
    UnknownBus(String),
    #[error(
        "the plant has no utility source at bus {0}: the recording point must be a source's bus (the PCC)"
    )]
    NoSource(String),
    #[error("--configuration: {0}")]
    Configuration(#[from] crate::study::config::ConfigurationError),
    #[error(transparent)]
    Check(#[from] crate::jobs::check::CheckError),
    #[error("no recording given: a COMTRADE .cfg/.cff or a harmonic log .csv")]
    NoRecording,
}
