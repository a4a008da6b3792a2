//! What a check is asked ([`CheckOptions`]), what it finds ([`CheckResults`], which every
//! report reads) and why it may not run ([`CheckError`]).

use super::notes::Note;
use crate::model::{ModelErrors, Plant};
use crate::network::{Network, TopologyError};
use crate::solve::SolveError;
use crate::study::config::ConfigurationError;
use crate::study::duty::DutyRow;
use crate::study::limits::{LimitContext, LimitRow};
use crate::study::operating::{OperatingSolver, OperatingStudy};
use crate::study::penetration::{BankAmplification, Penetration};
use crate::study::remedy::{Outcome, RemedyOption, RemedyResult};
use crate::study::switching::SwitchingStudy;
use crate::study::tolerance::ToleranceBand;
use crate::study::{ResonanceStudy, Scan};

/// Most step combinations studied in one run; above it the engineer is asked to narrow
/// `Studied steps` (a guard against runs of hours).
pub const MAX_CONFIGURATIONS: u64 = 100_000;

/// Why a check could not run.
#[derive(Debug, thiserror::Error)]
pub enum CheckError {
    #[error(transparent)]
    Model(#[from] ModelErrors),
    #[error(transparent)]
    Topology(#[from] TopologyError),
    #[error(transparent)]
    Solve(#[from] SolveError),
    #[error(transparent)]
    Configuration(#[from] ConfigurationError),
    #[error("--bus: there is no bus \"{0}\" on the Buses sheet")]
    UnknownBus(String),
    #[error(
        "{count} step combinations exceed the limit of {MAX_CONFIGURATIONS}: narrow \"Studied steps\" on the Capacitors sheet (for example 0,2,4 or 1-3)"
    )]
    TooManyConfigurations { count: u64 },
}

/// What the engineer asked for beyond the defaults.
#[derive(Clone, Default)]
pub struct CheckOptions {
    /// Extra buses to scan (ids), beyond the PCC and the bank buses.
    pub buses: Vec<String>,
    /// Configurations to study (labels such as `C1=2 C2=0`); empty = every combination of
    /// studied steps. `none`, the reference, is always studied.
    pub configurations: Vec<String>,
    /// Called with (done, total) as the scan advances; `None` = silent.
    pub progress: Option<std::sync::Arc<dyn Fn(u64, u64) + Send + Sync>>,
    /// Size and re-run remedies for flagged banks: `None` = only when the plant has at
    /// most [`AUTO_REMEDY_CONFIGURATIONS`] step combinations (each option re-runs every
    /// study).
    pub remedies: Option<bool>,
    /// Only the frequency scan and the resonance screen (the `scan` command): no operating
    /// point, penetration, duty or remedies (their results are empty).
    pub scan_only: bool,
    /// How penetration sums every configuration (bounded on large plants by default; the
    /// figures reported are the same, `Direct` is the reference the tests compare with).
    pub evaluation: crate::study::penetration::Evaluation,
    /// Simulate the switching events (`check` does; remedy re-runs do not).
    pub switching: bool,
    /// Give every flagged resonance's key figures under the least-damped models too
    /// (`None` = yes; `Some(false)` = no, for the re-runs of remedies and design).
    pub damping_band: Option<bool>,
    /// Analyse the resonance mode at every flagged peak (`None` = yes; `Some(false)` = no,
    /// for re-runs read for their figures alone: remedies, the damping band, design plans).
    pub mode_analysis: Option<bool>,
    /// Scan at these banks' buses alone (ids), their peaks alone (no dips), and screen only
    /// their rows: what a search's prescreen and the damping band read, at a fraction of
    /// the cost (the other banks' rows then have no peaks and mean nothing). `None` = the
    /// PCC, every bank bus and `buses`, peaks and dips.
    pub screened_banks: Option<Vec<String>>,
    /// Points of Y₀ kept from scans of plants that differ from this one in their banks
    /// alone (a design search's plans), with the number of that network
    /// ([`crate::study::scan::KnownPoints`]); `None` = solved afresh.
    pub known_points: Option<(std::sync::Arc<crate::study::scan::KnownPoints>, usize)>,
}

impl CheckOptions {
    /// The options of a re-run over the configurations `labels` (a remedy, the damping
    /// band): the same buses and evaluation, the studies alone (no remedies, switching,
    /// progress, damping band or mode analysis).
    pub fn rerun(&self, labels: Vec<String>) -> CheckOptions {
        CheckOptions {
            buses: self.buses.clone(),
            configurations: labels,
            progress: None,
            remedies: Some(false),
            scan_only: false,
            switching: false,
            evaluation: self.evaluation,
            damping_band: Some(false),
            mode_analysis: Some(false),
            screened_banks: None,
            known_points: None,
        }
    }
}

/// Step combinations up to which remedies are studied without being asked.
pub const AUTO_REMEDY_CONFIGURATIONS: usize = 200;

/// The remedy options studied for one bank.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct BankRemedies {
    pub bank: String,
    /// Why the bank was flagged.
    pub reason: String,
    /// The configurations compared before and after (labels).
    pub configurations: Vec<String>,
    /// Options in rank order.
    pub results: Vec<RemedyResult>,
}

/// One whole-plant remedy option: a change to several banks at once.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct JointOption {
    /// e.g. `7 % detuned: CAP-EX and CAP-A`.
    pub name: String,
    /// Each changed bank with its sized option.
    pub banks: Vec<(String, RemedyOption)>,
}

/// A whole-plant option re-run over every configuration, judged by the plant's outcome.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct JointResult {
    pub option: JointOption,
    /// Every bank's rows, every configuration.
    pub before: Outcome,
    pub after: Outcome,
    /// No bank resonant, beyond its duty or reaching a characteristic order across its
    /// tolerance, in any configuration, and no changed bank's reactor beyond its linearity.
    pub passes: bool,
    /// The changed banks' largest step peak current over the reactor's linearity peak
    /// (`None` without a reactor).
    pub linearity_ratio: Option<f64>,
    /// The plant's worst THD or TDD is higher after.
    pub worsens: bool,
    /// 1 = best.
    pub rank: usize,
}

/// The whole-plant options for the banks that form a flagged mode together.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PlantRemedies {
    /// The banks forming the mode (share of the critical mode at least 0.1 at a flagged
    /// peak), in the Capacitors sheet's order.
    pub banks: Vec<String>,
    /// Options in rank order.
    pub results: Vec<JointResult>,
}

/// Everything the studies found.
#[derive(Debug, Clone)]
pub struct CheckResults {
    pub plant: Plant,
    pub network: Network,
    pub scan: Scan,
    /// The zero-sequence scan at the grounded-wye banks' buses, when a characteristic order
    /// is zero sequence; its configurations are the distinct projections of `scan`'s onto
    /// those banks (`zero_map[c]`).
    pub zero_scan: Option<Scan>,
    pub zero_map: Vec<usize>,
    /// The zero-sequence network.
    pub zero_network: Network,
    pub resonance: ResonanceStudy,
    /// The fundamental load flow of every scenario × configuration.
    pub operating: OperatingStudy,
    /// The fundamental load flow the operating study was solved with (single
    /// configurations for the CSVs and the switching simulation).
    pub load_flow: OperatingSolver,
    pub penetration: Penetration,
    pub limits: LimitContext,
    /// One limits summary per scenario × configuration, in that nesting order.
    pub limit_rows: Vec<LimitRow>,
    /// Capacitor duty of every energized bank in every scenario × configuration.
    pub duty: Vec<DutyRow>,
    /// The duty envelope's high-voltage case as studied (`None` when it could not be built).
    pub duty_envelope: Option<crate::study::duty::DutyEnvelope>,
    /// Neutral current of the 4-wire loads, per bus with zero-sequence injection.
    pub neutral: Vec<crate::study::neutral::NeutralRow>,
    /// Resonance bands across capacitance tolerance and scenarios.
    pub tolerance: Vec<ToleranceBand>,
    /// Energizing every step of every bank, per scenario: simulated, with the formulas
    /// beside each event.
    pub switching: SwitchingStudy,
    /// Per bank and scenario, the configuration drawing the most background current.
    pub background: Vec<crate::study::background::BackgroundShare>,
    /// Per penetration result (same order), each bank bus's harmonic amplification against
    /// the configuration without banks.
    pub amplification: Vec<Vec<BankAmplification>>,
    /// Remedies for the flagged banks (empty when not studied; see `notes`).
    pub remedies: Vec<BankRemedies>,
    /// Whole-plant remedies for the banks that form a flagged mode together (empty when no
    /// flagged mode has two banks, or remedies were not studied).
    pub plant_remedies: Vec<PlantRemedies>,
    /// Every flagged resonance's key figures under the study's damping models and the
    /// least-damped ones (empty when nothing is flagged or it was not asked).
    pub damping: Vec<super::damping::DampingBand>,
    /// Assumptions the study made that the report must state.
    pub notes: Vec<Note>,
    /// Network index of the PCC bus.
    pub pcc: usize,
}

impl CheckResults {
    /// True when any bank's resonance is flagged or any limit exceeded (the `--strict`
    /// criterion).
    pub fn flagged(&self) -> bool {
        self.resonance
            .rows
            .iter()
            .any(|r| r.verdict == crate::study::Verdict::Resonant)
            || (self.resonance.pcc_rows.iter())
                .any(|r| r.verdict == crate::study::Verdict::Resonant)
            || self.limit_rows.iter().any(|r| r.exceeds)
            || self.duty.iter().any(|r| r.exceeds)
            || self.tolerance.iter().any(|t| t.flagged)
            || self.operating.points.iter().any(|p| p.flagged())
            || !self.operating.collapsed.is_empty()
            || self.operating.step_changes.iter().any(|s| s.exceeds)
            || self.switching.events.iter().any(|e| e.flagged())
    }

    /// The labels of the studied configurations in which bank `b` is energized.
    pub fn energized_labels(&self, b: usize) -> Vec<String> {
        self.scan
            .configurations
            .iter()
            .filter(|cfg| cfg.steps.get(b).is_some_and(|&k| k > 0))
            .map(|cfg| cfg.label(&self.plant.banks))
            .collect()
    }

    /// The label of configuration `c`.
    pub fn label(&self, c: usize) -> String {
        self.scan.configurations[c].label(&self.plant.banks)
    }
}
