//! The JSON summary of a check: settings, characteristic orders, every resonance row, every
//! peak and dip of every scanned series, the spectra used, and the harmonic distortion of
//! every configuration against its limits.

use crate::jobs::notes::Note;
use serde::Serialize;

use crate::jobs::check::CheckResults;
use crate::study::limits::{BusCheck, LimitContext, LimitRow, bus_checks};
use crate::study::penetration::BankAmplification;
use crate::study::spectra::SpectrumChoice;
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
struct DistortionJson<'a> {
    limits: &'a LimitRow,
    bank_amplification: &'a [BankAmplification],
    /// Every bus against its limits; omitted (null) for large studies.
    buses: Option<Vec<BusCheck>>,
    /// The flow across the PCC toward the utility per injected order, A: the plant's emission
    /// and the background-driven part together.
    pcc_current_a: &'a [f64],
    /// The plant's own emission across the PCC (background off), A: what IEEE 519 judges.
    pcc_plant_current_a: &'a [f64],
    /// The background-driven part alone (the plant's loads off), A: reported, not judged.
    pcc_background_current_a: &'a [f64],
    /// Under `phasor` summation, per injected order at the PCC: the worst case over blank
    /// background angles and the arithmetic bound (empty under the other laws).
    pcc_bounds: &'a [crate::study::penetration::PccBounds],
    bank_current_a: &'a [Vec<f64>],
    bank_voltage_percent: &'a [Vec<f64>],
    /// rms of each bank's harmonic current from the background alone, A.
    bank_background_rms_a: &'a [f64],
}

/// The model the harmonic results come from (input contract, version 2).
#[derive(Serialize)]
struct ModelJson<'a> {
    scope: &'static str,
    /// The Study sheet's resistance and load models, and what they mean.
    resistance_model: crate::model::ResistanceModel,
    load_model: crate::model::LoadModel,
    damping_meaning: String,
    summation: &'static str,
    summation_meaning: &'static str,
    /// The sequence of each injected order, in `injected_orders` order.
    order_sequences: &'a [crate::model::Sequence],
    /// Per transformer: its vector group as studied.
    vector_groups: Vec<(String, String)>,
    /// Per bank: its connection as studied.
    bank_connections: Vec<(String, &'static str)>,
    /// The Background sheet.
    background: &'a [crate::model::BackgroundLine],
    /// Per bank and scenario, the configuration with the most background current.
    background_shares: &'a [crate::study::background::BackgroundShare],
    /// Peaks of the zero-sequence scan at the grounded-wye banks' buses (empty when not run).
    zero_sequence_scan: Vec<SeriesPeaks<'a>>,
}

/// The operating point: per scenario and configuration `pcc_p_kw`, `pcc_q_kvar` (positive =
/// drawn lagging) and `pcc_power_factor` (input contract, version 2): the flow from the
/// utility side into the PCC bus (on-site generation is the plant's), bus voltage extremes
/// and verdicts; the worst voltage change per step; the kvar needed per bank.
#[derive(Serialize)]
struct OperatingJson<'a> {
    target_power_factor: f64,
    voltage_range_pu: [f64; 2],
    step_voltage_change_limit_percent: f64,
    points: &'a [crate::study::operating::OperatingPoint],
    no_solution: Vec<String>,
    step_changes: &'a [crate::study::operating::StepChange],
    kvar_needed: &'a [crate::study::operating::KvarNeed],
}

/// Every flagged resonance's key figures under the study's models and the least-damped
/// ones (`rows` empty when nothing is flagged).
#[derive(Serialize)]
struct DampingJson<'a> {
    least_damped_resistance_model: crate::model::ResistanceModel,
    least_damped_load_model: crate::model::LoadModel,
    rows: &'a [crate::jobs::damping::DampingBand],
}

/// Scenario × configuration × bus entries above which per-bus checks are left out of the
/// JSON (the limit rows, with each configuration's worst bus, stay).
pub const MAX_BUS_ENTRIES: usize = 200_000;

/// Everything the JSON summary holds, borrowed from a [`CheckResults`]; serialize it with
/// any serde format (the audit tests walk it for non-finite numbers).
#[derive(Serialize)]
pub struct Summary<'a> {
    tool: &'static str,
    version: &'static str,
    title: &'a str,
    plant: &'a str,
    frequency_hz: f64,
    pcc_bus: &'a str,
    scenarios: &'a [String],
    configurations: Vec<String>,
    model: ModelJson<'a>,
    resonance: &'a ResonanceStudy,
    scan: Vec<SeriesPeaks<'a>>,
    limits: &'a LimitContext,
    injected_orders: &'a [f64],
    spectra: &'a [SpectrumChoice],
    operating: OperatingJson<'a>,
    distortion: Vec<DistortionJson<'a>>,
    duty: &'a [crate::study::duty::DutyRow],
    /// The duty envelope's high-voltage case as studied.
    duty_envelope: Option<&'a crate::study::duty::DutyEnvelope>,
    /// The neutral current of each bus's 4-wire loads (3·I₀ over the triplen orders).
    neutral: &'a [crate::study::neutral::NeutralRow],
    tolerance: &'a [crate::study::tolerance::ToleranceBand],
    transients: &'a [crate::study::switching::SwitchingEvent],
    remedies: &'a [crate::jobs::check::BankRemedies],
    /// Whole-plant options for the banks that form a flagged mode together.
    plant_remedies: &'a [crate::jobs::check::PlantRemedies],
    damping: DampingJson<'a>,
    assumptions: &'a [Note],
    cautions: &'static [&'static str],
}

/// The JSON text of the summary (pretty-printed). Non-finite numbers become `null`.
pub fn to_json(res: &CheckResults) -> String {
    serde_json::to_string_pretty(&summary(res))
        .unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}

/// The summary of `res` that [`to_json`] prints.
pub fn summary(res: &CheckResults) -> Summary<'_> {
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
    let distortion = distortion(res);
    let model = model(res);
    let orders = &res.penetration.injections.orders;
    Summary {
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
        model,
        resonance: &res.resonance,
        scan,
        limits: &res.limits,
        injected_orders: orders,
        spectra: &res.penetration.injections.spectra,
        operating: OperatingJson {
            target_power_factor: res.operating.target_power_factor,
            voltage_range_pu: [res.operating.low_pu, res.operating.high_pu],
            step_voltage_change_limit_percent: res.operating.step_limit_percent,
            points: &res.operating.points,
            no_solution: res
                .operating
                .collapsed
                .iter()
                .map(ToString::to_string)
                .collect(),
            step_changes: &res.operating.step_changes,
            kvar_needed: &res.operating.needs,
        },
        distortion,
        duty: &res.duty,
        duty_envelope: res.duty_envelope.as_ref(),
        neutral: &res.neutral,
        tolerance: &res.tolerance,
        transients: &res.switching.events,
        remedies: &res.remedies,
        plant_remedies: &res.plant_remedies,
        damping: DampingJson {
            least_damped_resistance_model: crate::model::LEAST_DAMPED.0,
            least_damped_load_model: crate::model::LEAST_DAMPED.1,
            rows: &res.damping,
        },
        assumptions: &res.notes,
        cautions: crate::present::cautions::CAUTIONS,
    }
}

/// Per scenario × configuration, the limits row with its amplification, per-bus checks
/// (while the JSON stays within [`MAX_BUS_ENTRIES`]) and the PCC and bank figures.
fn distortion(res: &CheckResults) -> Vec<DistortionJson<'_>> {
    let nc = res.scan.configurations.len();
    let per_bus = res.penetration.results.len() * res.network.buses.len() <= MAX_BUS_ENTRIES;
    res.penetration
        .results
        .iter()
        .zip(&res.limit_rows)
        .map(|(d, row)| DistortionJson {
            limits: row,
            bank_amplification: &res.amplification[d.scenario * nc + d.configuration],
            buses: (per_bus && d.evaluated.is_none())
                .then(|| bus_checks(d, &res.limits, &res.network)),
            pcc_current_a: &d.pcc_current_a,
            pcc_plant_current_a: &d.pcc_plant_current_a,
            pcc_background_current_a: &d.pcc_background_current_a,
            pcc_bounds: &d.pcc_bounds,
            bank_current_a: &d.bank_current_a,
            bank_voltage_percent: &d.bank_voltage_percent,
            bank_background_rms_a: &d.bank_background_rms_a,
        })
        .collect()
}

/// The model the study used: scope, summation, sequences per order, vector groups, bank
/// connections, background and the zero-sequence scan's peaks.
fn model(res: &CheckResults) -> ModelJson<'_> {
    let f = res.plant.study.frequency_hz;
    let study = &res.plant.study;
    ModelJson {
        scope: crate::present::model_scope(),
        resistance_model: study.resistance_model,
        load_model: study.load_model,
        damping_meaning: crate::present::damping_meaning(study.resistance_model, study.load_model),
        summation: crate::present::terminal::summary::summation_word(res.plant.study.summation),
        summation_meaning: crate::present::summation_meaning(res.plant.study.summation),
        order_sequences: &res.penetration.injections.sequences,
        vector_groups: res
            .plant
            .transformers
            .iter()
            .map(|t| (t.id.clone(), t.vector_group(f).label()))
            .collect(),
        bank_connections: res
            .network
            .banks
            .iter()
            .map(|b| (b.id.clone(), b.connection.label()))
            .collect(),
        background: &res.plant.background,
        background_shares: &res.background,
        zero_sequence_scan: res.zero_scan.as_ref().map_or_else(Vec::new, |z| {
            z.series
                .iter()
                .map(|s| SeriesPeaks {
                    scenario: &z.scenarios[s.scenario],
                    configuration: z.configurations[s.configuration].label(&res.plant.banks),
                    bus: &res.network.buses[z.buses[s.bus]].id,
                    peaks: &s.peaks,
                    dips: &s.dips,
                })
                .collect()
        }),
    }
}

/// The design as JSON: the recommended plan, the reason, the counts, the baseline and every
/// plan ranked with its controller choices and failures.
pub fn design_json(d: &crate::jobs::design::DesignResult) -> String {
    #[derive(serde::Serialize)]
    struct DesignJson<'a> {
        target_power_factor: f64,
        levels: &'a [(String, f64)],
        scenarios: &'a [String],
        recommended: Option<&'a crate::jobs::design::PlanResult>,
        reason: &'a str,
        counts: crate::jobs::design::Counts,
        baseline: &'a crate::jobs::design::Baseline,
        unreachable: &'a [(String, String)],
        notes: &'a [Note],
        plans: &'a [crate::jobs::design::PlanResult],
    }
    let j = DesignJson {
        target_power_factor: d.target_power_factor,
        levels: &d.levels,
        scenarios: &d.scenarios,
        recommended: d.recommended.map(|i| &d.plans[i]),
        reason: &d.reason,
        counts: d.counts,
        baseline: d.baseline(),
        unreachable: &d.unreachable,
        notes: &d.notes,
        plans: &d.plans,
    };
    serde_json::to_string_pretty(&j).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}

/// The JSON of a calibration: the recordings, every event, the source fit, Z(h), the
/// background, the resonance and per-order comparison, the verdicts by scenario, the
/// measured compliance rows and the notes.
pub fn calibrate_json(c: &crate::jobs::calibrate::CalibrationResults) -> String {
    #[derive(serde::Serialize)]
    struct CalibrationJson<'a> {
        bus: &'a str,
        kv: f64,
        verdict: Vec<String>,
        recordings: &'a [crate::jobs::calibrate::RecordingSummary],
        events: &'a [crate::jobs::calibrate::EventRow],
        source: Option<&'a crate::jobs::calibrate::SourceFit>,
        impedance: &'a [crate::jobs::calibrate::estimate::OrderImpedance],
        background: &'a [crate::jobs::calibrate::estimate::BackgroundEstimate],
        background_basis: &'a str,
        resonance: &'a [crate::jobs::calibrate::ResonanceCompare],
        comparison: &'a [crate::jobs::calibrate::OrderCompare],
        verdicts: &'a [crate::jobs::calibrate::VerdictCount],
        compliance: &'a [crate::study::measured::compliance::Compliance],
        notes: &'a [String],
        cautions: &'static [&'static str],
    }
    let j = CalibrationJson {
        bus: &c.bus,
        kv: c.kv,
        verdict: crate::present::terminal::calibrate::verdict_items(c),
        recordings: &c.recordings,
        events: &c.events,
        source: c.source.as_ref(),
        impedance: &c.impedance,
        background: &c.background,
        background_basis: &c.background_basis,
        resonance: &c.resonance,
        comparison: &c.comparison,
        verdicts: &c.verdicts,
        compliance: &c.compliance,
        notes: &c.notes,
        cautions: crate::present::cautions::CAUTIONS,
    };
    serde_json::to_string_pretty(&j).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}
