//! Plausibility warnings: values that pass validation but look like a unit typed wrong or a
//! capacitor rated too low, each at its own cell, naming the row. They warn (stderr and the
//! review's input echo); they do not stop the study.

use super::table::{Diagnostics, Table};
use crate::model::{Plant, Reactor};

/// The tables the warnings point into (absent sheets give no warnings).
pub struct Tables<'a> {
    pub buses: Option<&'a Table>,
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
