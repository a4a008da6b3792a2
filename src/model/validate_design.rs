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
        let bus_kv = plant
            .buses
            .iter()
            .find(|b| b.id == r.bus)
            .map(|b| b.nominal_kv);
        if let Some(kv) = bus_kv
            && let Some(&low) = r.rated_kv.iter().find(|&&v| v < kv)
        {
            push(
                "Design",
                &r.cells.rated_kv,
                format!(
                    "\"Rated kV\" lists {low} kV, below the bus \"{}\" at {kv} kV: a capacitor's voltage class is at or above its bus voltage (above U/(1 − p) when detuned)",
                    r.bus
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
    replaces_problems(plant, &mut push);
    level_problems(plant, &mut push);
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

/// A Design row's `Replaces` naming a bank that does not exist or sits on another bus.
fn replaces_problems(plant: &Plant, push: &mut impl FnMut(&'static str, &str, String)) {
    for r in &plant.design {
        for id in &r.replaces {
            match plant.banks.iter().find(|b| &b.id == id) {
                None => push(
                    "Design",
                    &r.cells.replaces,
                    format!(
                        "\"Replaces\" names \"{id}\", which is not a bank on the Capacitors sheet"
                    ),
                ),
                Some(b) if b.bus != r.bus => push(
                    "Design",
                    &r.cells.replaces,
                    format!(
                        "\"Replaces\" names \"{id}\", which sits on bus \"{}\", not on this row's bus \"{}\"",
                        b.bus, r.bus
                    ),
                ),
                Some(_) => {}
            }
        }
    }
}

/// The Load levels rows that contradict each other: a level's hours given twice and
/// different, one load (or every load) given two factors at one level, and every level at
/// zero hours (the levels would weigh nothing).
fn level_problems(plant: &Plant, push: &mut impl FnMut(&'static str, &str, String)) {
    const SHEET: &str = "Load levels";
    let rows = &plant.load_levels;
    for (i, r) in rows.iter().enumerate() {
        let earlier = rows[..i].iter().filter(|o| o.level == r.level);
        for o in earlier {
            if let (Some(a), Some(b)) = (o.hours, r.hours)
                && a != b
            {
                push(
                    SHEET,
                    &r.hours_cell.0,
                    format!(
                        "level \"{}\" has {a} hours per year on an earlier row and {b} here: give its hours once, or the same on every row",
                        r.level
                    ),
                );
                break;
            }
            if o.load == r.load && o.load_factor != r.load_factor {
                let whom = r.load.as_ref().map_or_else(
                    || "every load (blank Load)".to_string(),
                    |l| format!("\"{l}\""),
                );
                push(
                    SHEET,
                    &r.factor_cell.0,
                    format!(
                        "level \"{}\" sets {whom} to load factor {} on an earlier row and {} here: one factor per level and load",
                        r.level, o.load_factor, r.load_factor
                    ),
                );
                break;
            }
        }
    }
    // A level's weight is the first hours given on its rows (1 when none is).
    let mut levels: Vec<(&str, f64, &str)> = Vec::new();
    for r in rows {
        if !levels.iter().any(|(l, _, _)| *l == r.level) {
            let first = rows
                .iter()
                .filter(|o| o.level == r.level)
                .find_map(|o| o.hours.map(|h| (h, &o.hours_cell.0)));
            let (h, cell) = first.map_or((1.0, r.hours_cell.0.as_str()), |(h, c)| (h, c.as_str()));
            levels.push((&r.level, h, cell));
        }
    }
    if !levels.is_empty() && levels.iter().all(|(_, h, _)| *h == 0.0) {
        push(
            SHEET,
            levels[0].2,
            "\"Hours per year\" is 0 at every level: the levels would weigh nothing; give each level its hours per year".to_string(),
        );
    }
}
