//! The design input checked against the plant (input contract, the `Design` and `Load
//! levels` sheets): what a row names must exist, and its lists must agree. The reader
//! reports every problem at its cell; the design search refuses a plant built in code
//! with the first.

use std::fmt;

use super::{LoadType, Plant};

/// One problem of the design input, located at its cell.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct DesignProblem {
    pub sheet: &'static str,
    /// The A1 cell (blank for a row built in code).
    pub cell: String,
    pub message: String,
}

impl fmt::Display for DesignProblem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}!{}: {}", self.sheet, self.cell, self.message)
    }
}

/// Every problem of `plant.design` and `plant.load_levels`, in sheet and row order: a
/// design bus that is not on the Buses sheet, an empty list of step sizes, a price list
/// that does not match the voltage classes, a bus listed twice, and a load level's `Load`
/// that names neither a load nor a load type.
pub fn design_problems(plant: &Plant) -> Vec<DesignProblem> {
    let mut out = Vec::new();
    let mut push = |sheet: &'static str, cell: &str, message: String| {
        out.push(DesignProblem {
            sheet,
            cell: cell.to_string(),
            message,
        });
    };
    for (i, r) in plant.design.iter().enumerate() {
        if plant.bus_index(&r.bus).is_none() {
            push(
                "Design",
                &r.cells.bus,
                format!(
                    "\"Bus\" names \"{}\", which is not on the Buses sheet",
                    r.bus
                ),
            );
        }
        if r.step_kvar.is_empty() {
            push(
                "Design",
                &r.cells.step_kvar,
                "\"Step kvar\" lists no step size: give the allowed sizes, kvar at rated voltage, e.g. 25, 50, 100".into(),
            );
        }
        let n = r.capacitor_cost_per_kvar.len();
        if n > 1 && n != r.rated_kv.len() {
            push(
                "Design",
                &r.cells.capacitor_cost,
                format!(
                    "\"Capacitor cost (per kvar)\" lists {n} prices for {} voltage classes in \"Rated kV\": give one price, or one per class in the same order",
                    r.rated_kv.len()
                ),
            );
        }
        if plant.design[..i].iter().any(|o| o.bus == r.bus) {
            push(
                "Design",
                &r.cells.bus,
                format!("bus \"{}\" is listed twice: one row per bus", r.bus),
            );
        }
    }
    for r in &plant.load_levels {
        if let Some(t) = &r.load
            && LoadType::from_text(t).is_none()
            && !plant.loads.iter().any(|l| l.id == *t)
        {
            push(
                "Load levels",
                &r.cell.0,
                format!(
                    "\"Load\" names \"{t}\", which is neither a load on the Loads sheet nor a load type"
                ),
            );
        }
    }
    out
}
