//! The plant as the engineer described it, in engineering units (kV line-to-line, kVA and
//! kvar three-phase, ohm per phase), before any per-unit conversion.
//!
//! Types here mirror the input-workbook contract one to one. A [`Plant`] is built loosely (by
//! the workbook reader, by code for the demo or tests) and then checked once by
//! [`Plant::validate`], which returns every problem at once; nothing downstream re-checks.

mod design;
mod elements;
pub mod loading;
pub mod names;
mod sequence;
mod validate;
mod validate_design;
mod validate_sequence;

pub use design::*;
pub use elements::*;
pub use sequence::*;
pub use validate::{MAX_MAGNITUDE, MIN_MAGNITUDE, ModelError, ModelErrors};
pub use validate_design::{DesignProblem, design_problems};

/// Name of the single scenario studied when no source row names one (input contract,
/// sheet `Sources`).
pub const DEFAULT_SCENARIO: &str = "base";

/// Everything the engineer described: study settings and the plant's elements.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Plant {
    pub study: StudySettings,
    pub buses: Vec<Bus>,
    pub sources: Vec<Source>,
    pub transformers: Vec<Transformer>,
    pub cables: Vec<Cable>,
    pub banks: Vec<CapacitorBank>,
    pub loads: Vec<Load>,
    pub spectra: Vec<Spectrum>,
    /// The `Background` sheet: harmonic EMFs behind the sources (input contract, version 2).
    pub background: Vec<BackgroundLine>,
    /// The `Design` sheet (read by `design` only).
    pub design: Vec<DesignRow>,
    /// The `Load levels` sheet (read by `design` only).
    pub load_levels: Vec<LoadLevelRow>,
}

impl Plant {
    /// An empty plant with the contract's default study settings at `frequency_hz`.
    pub fn new(frequency_hz: f64) -> Self {
        Plant {
            study: StudySettings::new(frequency_hz),
            buses: Vec::new(),
            sources: Vec::new(),
            transformers: Vec::new(),
            cables: Vec::new(),
            banks: Vec::new(),
            loads: Vec::new(),
            spectra: Vec::new(),
            background: Vec::new(),
            design: Vec::new(),
            load_levels: Vec::new(),
        }
    }

    /// The supply scenarios studied, in order of first appearance on the Sources sheet; the
    /// single scenario `base` when no source names one.
    pub fn scenarios(&self) -> Vec<String> {
        let mut names: Vec<String> = Vec::new();
        for s in &self.sources {
            if let Some(name) = &s.scenario
                && !names.iter().any(|n| n == name)
            {
                names.push(name.clone());
            }
        }
        if names.is_empty() {
            names.push(DEFAULT_SCENARIO.to_string());
        }
        names
    }

    /// Sources in service in `scenario`: those naming it and those naming none.
    pub fn sources_in(&self, scenario: &str) -> impl Iterator<Item = &Source> {
        let named = self.sources.iter().any(|s| s.scenario.is_some());
        self.sources.iter().filter(move |s| match &s.scenario {
            None => true,
            Some(n) => !named || n == scenario,
        })
    }

    /// Index of the bus with id `id`.
    pub fn bus_index(&self, id: &str) -> Option<usize> {
        self.buses.iter().position(|b| b.id == id)
    }

    /// The PCC bus id: the Study sheet's `PCC bus`, else the bus of the first utility
    /// source (the first source when none is marked utility).
    pub fn pcc_bus(&self) -> Option<&str> {
        self.study.pcc_bus.as_deref().or_else(|| {
            self.sources
                .iter()
                .find(|s| s.kind == SourceKind::Utility)
                .or(self.sources.first())
                .map(|s| s.bus.as_str())
        })
    }

    /// The spectrum named `name` on the Spectra sheet.
    pub fn spectrum(&self, name: &str) -> Option<&Spectrum> {
        self.spectra.iter().find(|s| s.name == name)
    }
}
