//! The JSON summary of a check: settings, characteristic orders, every resonance row and
//! every peak and dip of every scanned series.

use serde::Serialize;

use crate::check::CheckResults;
use crate::study::{Extremum, ResonanceStudy};

#[derive(Serialize)]
struct SeriesPeaks<'a> {
    scenario: &'a str,
    configuration: String,
    bus: &'a str,
    peaks: &'a [Extremum],
    dips: &'a [Extremum],
}

#[derive(Serialize)]
struct Summary<'a> {
    tool: &'static str,
    version: &'static str,
    title: &'a str,
    plant: &'a str,
    frequency_hz: f64,
    pcc_bus: &'a str,
    scenarios: &'a [String],
    configurations: Vec<String>,
    resonance: &'a ResonanceStudy,
    scan: Vec<SeriesPeaks<'a>>,
    cautions: &'static [&'static str],
}

/// The JSON text of the summary (pretty-printed). Non-finite numbers become `null`.
pub fn to_json(res: &CheckResults) -> String {
    let scan = res
        .scan
        .series
        .iter()
        .map(|s| SeriesPeaks {
            scenario: &res.scan.scenarios[s.scenario],
            configuration: res.label(s.configuration),
            bus: &res.network.buses[res.scan.buses[s.bus]].id,
            peaks: &s.peaks,
            dips: &s.dips,
        })
        .collect();
    let summary = Summary {
        tool: "overtone",
        version: env!("CARGO_PKG_VERSION"),
        title: &res.plant.study.title,
        plant: &res.plant.study.plant,
        frequency_hz: res.plant.study.frequency_hz,
        pcc_bus: &res.network.buses[res.pcc].id,
        scenarios: &res.scan.scenarios,
        configurations: (0..res.scan.configurations.len())
            .map(|c| res.label(c))
            .collect(),
        resonance: &res.resonance,
        scan,
        cautions: crate::report::cautions::CAUTIONS,
    };
    serde_json::to_string_pretty(&summary).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}
