//! What the design search tries, before any plan is checked: the kits (one family per bank
//! of a plan: a plan at one design bus, or a bank at every design bus together), the
//! controller's choices for a plant with a kit's banks, and each kit's step counts bounded
//! by the power factor.

use super::DesignError;
use super::levels::{self, Control, Level};
use super::plans::Family;
use crate::jobs::check::CheckError;
use crate::model::{CapacitorBank, Reactor};
use crate::network::Network;
use crate::study::operating::OperatingSolver;

/// Most kits of banks at every design bus together before the search keeps only the
/// lowest capacitor voltage class per bus (and beyond which, even so, it skips them).
pub const JOINT_LIMIT: usize = 256;

/// One kit: the families of its banks (indices into the search's families, one per design
/// row it covers, in row order) and the plant it joins (index into the search's bases).
#[derive(Debug, Clone)]
pub struct Kit {
    pub families: Vec<usize>,
    pub base: usize,
}

/// The kits of banks at every design bus together: per detuning choice every design row
/// allows, every combination of one family per row with that choice (one detuning choice
/// across the plant: common practice, so that no detuned bank absorbs another bus's
/// harmonics at a different tuning), joining plant `base`. Beyond [`JOINT_LIMIT`] kits only
/// each row's lowest voltage class is kept; beyond it even so, none (with the reason).
pub fn joint_kits(families: &[Family], rows: usize, base: usize) -> (Vec<Kit>, Option<String>) {
    let n = joint_count(families, rows, false);
    let mut note = None;
    let lowest_only = n > JOINT_LIMIT;
    if lowest_only {
        let m = joint_count(families, rows, true);
        if m > JOINT_LIMIT {
            let note = format!(
                "The plans with a bank at every design bus together were not searched: {n} combinations of size, detuning and class ({m} with the lowest voltage class at each bus) exceed {JOINT_LIMIT}; name fewer sizes or detuning choices on the Design sheet."
            );
            return (Vec::new(), Some(note));
        }
        note = Some(format!(
            "Plans with a bank at every design bus together: {n} combinations of size, detuning and class exceed {JOINT_LIMIT}, so only each bus's lowest voltage class was tried ({m} combinations)."
        ));
    }
    let mut kits = Vec::new();
    for r in reactors(families) {
        let mut partial: Vec<Vec<usize>> = vec![Vec::new()];
        for choices in per_row(families, rows, r, lowest_only) {
            partial = (partial.iter())
                .flat_map(|p| {
                    choices.iter().map(move |&c| {
                        let mut q = p.clone();
                        q.push(c);
                        q
                    })
                })
                .collect();
        }
        kits.extend(
            partial
                .into_iter()
                .filter(|p| p.len() == rows)
                .map(|families| Kit { families, base }),
        );
    }
    (kits, note)
}

/// The detuning choices of `families`, each once, in order.
fn reactors(families: &[Family]) -> Vec<Reactor> {
    let mut out: Vec<Reactor> = Vec::new();
    for f in families {
        if !out.contains(&f.reactor) {
            out.push(f.reactor);
        }
    }
    out
}

/// Per design row, its families (indices) with detuning choice `r`; with `lowest_only`,
/// only those of the row's lowest voltage class.
fn per_row(families: &[Family], rows: usize, r: Reactor, lowest_only: bool) -> Vec<Vec<usize>> {
    (0..rows)
        .map(|row| {
            let of: Vec<usize> = (0..families.len())
                .filter(|&i| families[i].row == row && families[i].reactor == r)
                .collect();
            let low = (of.iter())
                .map(|&i| families[i].rated_kv)
                .fold(f64::INFINITY, f64::min);
            of.into_iter()
                .filter(|&i| !lowest_only || families[i].rated_kv <= low)
                .collect()
        })
        .collect()
}

/// How many kits of banks at every design bus together `families` make (saturating).
fn joint_count(families: &[Family], rows: usize, lowest_only: bool) -> usize {
    reactors(families)
        .into_iter()
        .map(|r| {
            (per_row(families, rows, r, lowest_only).iter())
                .fold(1usize, |n, c| n.saturating_mul(c.len()))
        })
        .fold(0usize, usize::saturating_add)
}

/// The controller's choices per level and scenario (`[level][scenario]`) for a plant at the
/// levels `levels` with the banks `designed` added (each at its `steps`, every count studied):
/// the plant's banks first, one by one, then the designed banks together in rotation.
pub fn controls(
    levels: &[Level],
    designed: &[CapacitorBank],
    leading_limit: f64,
) -> Result<Vec<Vec<Control>>, DesignError> {
    let mut out = Vec::new();
    for level in levels {
        let mut plant = level.plant.clone();
        let first = plant.banks.len();
        for b in designed {
            let mut b = b.clone();
            b.studied_steps = (0..=b.steps).collect();
            plant.banks.push(b);
        }
        let net = Network::build(&plant).map_err(CheckError::from)?;
        let study = OperatingSolver::new(&net);
        let allowed: Vec<Vec<u32>> = (plant.banks.iter())
            .map(|b| b.studied_steps.clone())
            .collect();
        let mut groups: Vec<Vec<usize>> = (0..first).map(|b| vec![b]).collect();
        if !designed.is_empty() {
            groups.push((first..plant.banks.len()).collect());
        }
        out.push(
            (0..net.scenarios.len())
                .map(|s| {
                    levels::control(
                        &study,
                        &net,
                        s,
                        &allowed,
                        &groups,
                        plant.study.target_power_factor,
                        leading_limit,
                    )
                })
                .collect(),
        );
    }
    Ok(out)
}

/// The most steps the controller switches in of bank `b` at any level and scenario.
pub fn most_steps(control: &[Vec<Control>], b: usize) -> u32 {
    (control.iter().flatten())
        .map(|c| c.steps.get(b).copied().unwrap_or(0))
        .max()
        .unwrap_or(0)
}
