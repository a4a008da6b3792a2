//! The assumptions and conditions a job records for the reports to state: one variant per
//! kind, so that a report or another job recognises a note by its kind, never by its words.
//! `Display` gives the sentence every report prints (terminal, JSON, review).

use std::fmt;

use crate::model::loading::Supplier;

/// One note of a check or a design.
#[derive(Debug, Clone, PartialEq)]
pub enum Note {
    /// The plant exceeds a harmonic limit with no bank in service: no bank choice fixes it.
    PlantLevelLimits {
        /// The scenarios in which the configuration without banks exceeds.
        scenarios: Vec<String>,
        /// The PCC bus id.
        pcc: String,
        /// The first such scenario's PCC voltage THD, TDD and worst in-plant THD, %.
        pcc_thd_percent: f64,
        tdd_percent: f64,
        worst_thd_percent: f64,
        worst_thd_bus: String,
    },
    /// A sentence of the harmonic injections study (an injection the sequence networks
    /// cannot carry, as the study words it).
    Injections(String),
    /// Under phasor summation, scenario-configurations without a load flow whose current
    /// angles fall back to the configuration without banks.
    AngleFallbacks { count: usize },
    /// I_L was estimated from the Loads sheet (no `Max demand current (A)` given).
    DemandEstimated {
        i_l_a: f64,
        before_kva: f64,
        after_kva: f64,
        target_power_factor: f64,
        /// From the PCC's draw (on-site generation netted out), not the loads'.
        from_pcc: bool,
    },
    /// Scenario-configurations without a load-flow solution: how many, the first, the
    /// scenarios they fall in and the element that carries the most load for its
    /// capability (the likely cause).
    Collapse {
        count: usize,
        first: String,
        scenarios: Vec<String>,
        tightest: Option<crate::model::loading::Loading>,
    },
    /// A switching event that could not be simulated, as the study words it.
    Switching(String),
    /// Remedies were not studied because the plant has too many step combinations.
    RemediesNotStudied {
        combinations: usize,
        auto_limit: usize,
    },
    /// Grounded-wye banks whose bus has no zero-sequence path in some scenario (bank, bus,
    /// scenarios): no zero-sequence resonance is screened there.
    NoZeroPath(Vec<(String, String, Vec<String>)>),
    /// A sentence of the design search.
    Design(String),
    /// The least-damped re-run of the flagged resonances could not be solved (its
    /// reason): their key figures are given under the study's models only.
    DampingBand(String),
}

impl fmt::Display for Note {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Note::PlantLevelLimits {
                scenarios,
                pcc,
                pcc_thd_percent,
                tdd_percent,
                worst_thd_percent,
                worst_thd_bus,
            } => write!(
                f,
                "With no capacitor bank in service the plant already exceeds its harmonic limits (scenario {}; at the PCC {pcc}: voltage THD {pcc_thd_percent:.2} %, TDD {tdd_percent:.2} %; worst in-plant voltage THD {worst_thd_percent:.2} % at {worst_thd_bus}): the converters need their own mitigation (line reactors, multi-pulse or active front ends, harmonic filters), and no bank choice fixes it.",
                scenarios.join(", "),
            ),
            Note::Injections(s) | Note::Switching(s) | Note::Design(s) => f.write_str(s),
            Note::AngleFallbacks { count } => write!(
                f,
                "phasor summation: {count} scenario-configuration(s) have no load-flow solution; their harmonic current angles use the configuration without banks (or 0° where that has none either)"
            ),
            Note::DemandEstimated {
                i_l_a,
                before_kva,
                after_kva,
                target_power_factor,
                from_pcc,
            } => write!(
                f,
                "I_L ESTIMATED from the {}: {i_l_a:.1} A at the PCC, the demand after correction ({after_kva:.0} kVA: {} at the better of the target PF {target_power_factor} and the loads' own; {before_kva:.0} kVA before correction; no diversity); give \"Max demand current (A)\" on the Study sheet (IEEE 519-2014 takes the average of the 12 monthly maximum demands)",
                if *from_pcc {
                    "PCC's draw"
                } else {
                    "Loads sheet"
                },
                if *from_pcc {
                    "the P the PCC draws from the utility without banks, on-site generation netted out,"
                } else {
                    "the loads' P at the study point"
                }
            ),
            Note::Collapse {
                count,
                first,
                tightest,
                ..
            } => {
                write!(
                    f,
                    "load flow: {count} scenario-configuration(s) have no solution (voltage collapse), the first: {first}; their capacitor duty uses the nominal bus voltage"
                )?;
                match tightest {
                    Some(t) => write!(f, "; likely cause: {}", cause_words(t)),
                    None => Ok(()),
                }
            }
            Note::NoZeroPath(banks) => {
                let each: Vec<String> = banks
                    .iter()
                    .map(|(b, bus, sc)| format!("{b} at {bus} (scenario {})", sc.join(", ")))
                    .collect();
                write!(
                    f,
                    "no zero-sequence path: {}: the bus's part of the zero-sequence network has no grounded winding or source (a delta or ungrounded winding faces it), only the bank's own neutral, so no zero-sequence resonance is screened there and triplen currents injected there do not flow in the zero sequence",
                    each.join("; ")
                )
            }
            Note::DampingBand(why) => write!(
                f,
                "the flagged resonances could not be re-run under the least-damped models (constant R, CIGRE loads): {why}; their figures are given under the study's models only"
            ),
            Note::RemediesNotStudied {
                combinations,
                auto_limit,
            } => write!(
                f,
                "remedies not studied: {combinations} step combinations exceed {auto_limit} (each option re-runs every study); ask for them with --remedies"
            ),
        }
    }
}

impl serde::Serialize for Note {
    /// A note serializes as its sentence.
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

/// The likely cause of a voltage collapse in words: the element carrying the most load for
/// its capability.
pub fn cause_words(t: &crate::model::loading::Loading) -> String {
    match t.kind {
        Supplier::Transformer => format!(
            "transformer {} feeds {:.0} kVA of load on its {:.0} kVA rating ({:.0} %)",
            t.id,
            t.load_kva,
            t.capability_kva,
            t.ratio() * 100.0
        ),
        Supplier::Source => format!(
            "the plant's {:.0} kVA of load against source {}'s {:.1} MVA short-circuit power ({:.1} %)",
            t.load_kva,
            t.id,
            t.capability_kva / 1000.0,
            t.ratio() * 100.0
        ),
    }
}
