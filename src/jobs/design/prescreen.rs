//! One plan through the checks: the scan-only pass (narrowed to what it reads), then every
//! study when the plan is clear of resonance.

use std::sync::Arc;

use super::DesignOptions;
use super::levels::Control;
use super::search::check_options;
use crate::jobs::check::{CheckError, CheckOptions, CheckResults, run_check};
use crate::model::Plant;
use crate::study::Verdict;
use crate::study::scan::KnownPoints;

/// `plant` (a base plant with the plan's banks `ids` last) scanned, and checked whole when
/// none of `ids` is resonant or has a tolerance band reaching a characteristic order:
/// (results, clear). The scan-only pass reads the plan's own banks' rows alone, so it scans
/// their buses alone, in the configurations where one of them is energized (the others
/// have no row of theirs; `none` is added as always), with Z₀ from `known` (the points of
/// the search's network number `known.1`). A plan that is not clear gets the other banks'
/// rows where the controller (`control`) goes ([`reached_rows`], with Z₀ from `known` too).
pub(super) fn studied(
    plant: &Plant,
    (ids, control): (&[&str], &[Vec<Control>]),
    known: (Arc<KnownPoints>, usize),
    options: &DesignOptions,
) -> Result<(CheckResults, bool), CheckError> {
    let first = plant.banks.len() - ids.len();
    let energized: Vec<String> = (crate::study::all_configurations(&plant.banks).into_iter())
        .filter(|c| c.steps[first..].iter().any(|&n| n > 0))
        .map(|c| c.label(&plant.banks))
        .collect();
    let prescreen = CheckOptions {
        screened_banks: Some(ids.iter().map(|s| s.to_string()).collect()),
        configurations: energized,
        known_points: Some(known.clone()),
        ..check_options(options, true)
    };
    let scan = run_check(plant, &prescreen)?;
    let resonant = (scan.resonance.rows.iter())
        .any(|r| ids.contains(&r.bank.as_str()) && r.verdict == Verdict::Resonant);
    let band = (scan.tolerance.iter()).any(|t| ids.contains(&t.bank.as_str()) && t.flagged);
    if resonant || band {
        let reached = reached_rows(scan, plant, (ids, control), known, options)?;
        return Ok((reached, false));
    }
    let full = CheckOptions {
        known_points: Some(known),
        ..check_options(options, false)
    };
    Ok((run_check(plant, &full)?, true))
}

/// A prescreen's results with the other banks' rows (which it did not scan) replaced by
/// their rows in the configurations the controller reaches (`control`): what the plan's
/// failures name besides its own banks' resonance. The rows come from a scan of those
/// configurations alone at every bank bus, the same figures a scan of every configuration
/// gives them.
fn reached_rows(
    mut prescreen: CheckResults,
    plant: &Plant,
    (ids, control): (&[&str], &[Vec<Control>]),
    known: (Arc<KnownPoints>, usize),
    options: &DesignOptions,
) -> Result<CheckResults, CheckError> {
    let mut labels: Vec<String> = Vec::new();
    for c in control.iter().flatten() {
        let label = crate::study::Configuration {
            steps: c.steps.clone(),
        }
        .label(&plant.banks);
        if !labels.contains(&label) {
            labels.push(label);
        }
    }
    prescreen
        .resonance
        .rows
        .retain(|r| ids.contains(&r.bank.as_str()));
    if labels.is_empty() {
        return Ok(prescreen);
    }
    let reached = run_check(
        plant,
        &CheckOptions {
            configurations: labels,
            known_points: Some(known),
            ..check_options(options, true)
        },
    )?;
    (prescreen.resonance.rows)
        .extend((reached.resonance.rows.into_iter()).filter(|r| !ids.contains(&r.bank.as_str())));
    Ok(prescreen)
}
