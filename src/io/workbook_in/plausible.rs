//! Plausibility warnings: values that pass validation but look like a unit typed wrong or a
//! capacitor rated too low, each at its own cell, naming the row. They warn (stderr and the
//! review's input echo); they do not stop the study.

use super::table::{Diagnostics, Table};
use crate::model::{Plant, Reactor};

/// The tables the warnings point into (absent sheets give no warnings).
pub struct Tables<'a> {
    pub buses: Option<&'a Table>,
    pub sources: Option<&'a Table>,
    pub transformers: Option<&'a Table>,
    pub capacitors: Option<&'a Table>,
}

/// A transformer impedance below this, %, is more likely a fraction typed for a percentage
/// (common practice: distribution transformers are 2–10 %).
const LOW_IMPEDANCE_PERCENT: f64 = 1.0;
/// Two buses joined by a transformer whose nominal kV differ by this factor or more: volts
/// typed for kV on one of them (no plant transformer has a ratio of 500).
const KV_RATIO: f64 = 500.0;
/// A detuning below this, %, is more likely a fraction typed for a percentage (common
/// practice: 5.67, 7 and 14 %).
const LOW_DETUNING_PERCENT: f64 = 1.0;

/// Adds the plausibility warnings of a validated `plant` read from `t`.
// Long: one plausibility check per line, each at its cell.
pub fn check(plant: &Plant, t: &Tables<'_>, diag: &mut Diagnostics) {
    let kv_of = |id: &str| {
        plant
            .buses
            .iter()
            .find(|b| b.id == id)
            .map(|b| b.nominal_kv)
    };
    if let Some(tt) = t.transformers {
        for (tx, row) in plant.transformers.iter().zip(&tt.rows) {
            if tx.impedance_percent < LOW_IMPEDANCE_PERCENT {
                diag.warn(
                    &tt.sheet,
                    Some(tt.cell(row, "Impedance (%)")),
                    format!(
                        "transformer {}: \"Impedance (%)\" {} % is below {LOW_IMPEDANCE_PERCENT} %: a fraction typed for a percentage? (5.75 % is entered as 5.75)",
                        tx.id, tx.impedance_percent
                    ),
                );
            }
            if let (Some(hv), Some(lv), Some(bt)) = (kv_of(&tx.hv_bus), kv_of(&tx.lv_bus), t.buses)
            {
                let (big, small, id) = if hv >= lv {
                    (hv, lv, &tx.hv_bus)
                } else {
                    (lv, hv, &tx.lv_bus)
                };
                if big / small >= KV_RATIO
                    && let Some((bus_row, _)) =
                        bt.rows.iter().zip(&plant.buses).find(|(_, b)| &b.id == id)
                {
                    diag.warn(
                        &bt.sheet,
                        Some(bt.cell(bus_row, "Nominal kV")),
                        format!(
                            "bus {id}: \"Nominal kV\" {big} is {:.0} times the {small} kV across transformer {}: volts typed for kV?",
                            big / small,
                            tx.id
                        ),
                    );
                }
            }
        }
    }
    if let Some(ct) = t.capacitors {
        for (bank, row) in plant.banks.iter().zip(&ct.rows) {
            let Some(bus_kv) = kv_of(&bank.bus) else {
                continue;
            };
            if let Reactor::Detuning { percent } = bank.reactor
                && percent < LOW_DETUNING_PERCENT
            {
                diag.warn(
                    &ct.sheet,
                    Some(ct.cell(row, "Detuning (%)")),
                    format!(
                        "bank {}: \"Detuning (%)\" {percent} is below {LOW_DETUNING_PERCENT} %: a fraction typed for a percentage? (7 % is entered as 7)",
                        bank.id
                    ),
                );
            }
            let p = bank.reactor.p();
            // U/(1 − p): the capacitor's fundamental voltage behind its reactor (textbook).
            let needed = bus_kv / (1.0 - p);
            if bank.rated_kv < needed * (1.0 - 1e-9) {
                let why = if p > 0.0 {
                    format!(
                        "the {:.2} % reactor raises the capacitor's voltage to U/(1-p) = {:.3} kV",
                        p * 100.0,
                        needed
                    )
                } else {
                    format!("its bus is {bus_kv} kV")
                };
                diag.warn(
                    &ct.sheet,
                    Some(ct.cell(row, "Rated kV")),
                    format!(
                        "bank {}: \"Rated kV\" {} is below what it sees: {why} ({:.1} % over its rating; IEEE 18 allows 110 % of rated voltage with harmonics on top)",
                        bank.id,
                        bank.rated_kv,
                        (needed / bank.rated_kv - 1.0) * 100.0
                    ),
                );
            }
        }
    }
}

/// A source whose short-circuit power is more than this many times the plant's load is
/// unusually strong for a plant (issue 31's bound).
const STRONG_SOURCE: f64 = 100.0;
/// A source weaker than this many times the plant's load can hardly carry it (the voltage
/// drop at full load would be of the order of 1/ratio; issue 31's bound).
const WEAK_SOURCE: f64 = 2.0;
/// A step below this, kvar, is more likely Mvar typed for kvar.
const SMALL_STEP_KVAR: f64 = 1.0;

/// Warnings for a plant whose load and supply look out of proportion: a transformer below
/// the load it feeds, a capacitor step below 1 kvar or above the kVA of the transformer
/// that feeds its bus, a source more than 100 × or less than 2 × the plant's load.
pub fn capability(plant: &Plant, t: &Tables<'_>, diag: &mut Diagnostics) {
    transformer_load(plant, t, diag);
    step_sizes(plant, t, diag);
    source_strength(plant, t, diag);
}

/// A transformer feeding more load than its kVA.
fn transformer_load(plant: &Plant, t: &Tables<'_>, diag: &mut Diagnostics) {
    use crate::model::loading::transformer_loadings;
    if let Some(tt) = t.transformers {
        let loadings = transformer_loadings(plant);
        for (tx, row) in plant.transformers.iter().zip(&tt.rows) {
            if let Some(l) = loadings.iter().find(|l| l.id == tx.id)
                && l.ratio() > 1.0
            {
                diag.warn(
                    &tt.sheet,
                    Some(tt.cell(row, "kVA")),
                    format!(
                        "transformer {}: feeds {:.0} kVA of load (the loads at its LV bus and beyond, at the study point, no diversity) on a {} kVA rating ({:.0} %): is the kVA or a load mistyped?",
                        tx.id, l.load_kva, tx.kva, l.ratio() * 100.0
                    ),
                );
            }
        }
    }
}

/// A step below 1 kvar, or above the kVA of the smallest transformer feeding its bus.
fn step_sizes(plant: &Plant, t: &Tables<'_>, diag: &mut Diagnostics) {
    use crate::model::loading::buses_fed_by;
    if let Some(ct) = t.capacitors {
        for (bank, row) in plant.banks.iter().zip(&ct.rows) {
            let cell = || Some(ct.cell(row, "Step kvar"));
            if bank.step_kvar < SMALL_STEP_KVAR {
                diag.warn(
                    &ct.sheet,
                    cell(),
                    format!(
                        "bank {}: \"Step kvar\" {} is below {SMALL_STEP_KVAR} kvar: Mvar typed for kvar? (a 100 kvar step is entered as 100)",
                        bank.id, bank.step_kvar
                    ),
                );
            }
            let feeding = (0..plant.transformers.len())
                .filter(|&k| plant.transformers[k].in_service)
                .filter(|&k| buses_fed_by(plant, k).contains(&bank.bus.as_str()))
                .min_by(|&a, &b| {
                    plant.transformers[a]
                        .kva
                        .total_cmp(&plant.transformers[b].kva)
                });
            if let Some(k) = feeding
                && bank.step_kvar > plant.transformers[k].kva
            {
                diag.warn(
                    &ct.sheet,
                    cell(),
                    format!(
                        "bank {}: one step of {} kvar is above the {} kVA of transformer {} that feeds its bus: is the step or the transformer mistyped?",
                        bank.id, bank.step_kvar, plant.transformers[k].kva, plant.transformers[k].id
                    ),
                );
            }
        }
    }
}

/// A source over 100 × or under 2 × the plant's load.
fn source_strength(plant: &Plant, t: &Tables<'_>, diag: &mut Diagnostics) {
    use crate::model::loading::{plant_load_kva, source_s_sc_mva};
    let load_kva = plant_load_kva(plant);
    if let Some(st) = t.sources
        && load_kva > 0.0
    {
        for (s, (src, row)) in plant.sources.iter().zip(&st.rows).enumerate() {
            let Some(mva) = source_s_sc_mva(plant, s) else {
                continue;
            };
            let ratio = mva * 1000.0 / load_kva;
            let column = match src.short_circuit {
                crate::model::ShortCircuit::Mva(_) => "Short-circuit MVA",
                crate::model::ShortCircuit::Ka(_) => "Short-circuit kA",
            };
            let why = if ratio > STRONG_SOURCE {
                "unusually strong for the plant: is the fault level the one at this bus, and in MVA (not kVA)?"
            } else if ratio < WEAK_SOURCE {
                "too weak to carry the plant's load (the load flow may have no solution): is the fault level in MVA (not GVA), or a load mistyped?"
            } else {
                continue;
            };
            diag.warn(
                &st.sheet,
                Some(st.cell(row, column)),
                format!(
                    "source {}: short-circuit power {mva:.1} MVA is {ratio:.1} × the plant's {load_kva:.0} kVA of load, {why}",
                    src.id
                ),
            );
        }
    }
}
