//! The design input of the `design` command (input contract, the `Design` and `Load levels`
//! sheets): where a bank may go and which plans are allowed, and the load levels the power
//! factor must hold at. Rows are kept as the engineer wrote them, with their cells, and
//! checked by [`crate::jobs::design`] (only `design` reads them; `check` ignores them).

use serde::Serialize;

use super::Reactor;

/// One row of the `Design` sheet: a bus where a bank may go and the plans allowed there.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DesignRow {
    pub bus: String,
    /// Allowed step sizes, kvar at the capacitor's rated voltage, ascending.
    pub step_kvar: Vec<f64>,
    /// Allowed step counts, inclusive.
    pub steps_min: u32,
    pub steps_max: u32,
    /// Detuning choices (plain, a detuning factor or a tuned order).
    pub reactors: Vec<Reactor>,
    /// Capacitor voltage classes, kV line-to-line; empty = the two standard ratings at or
    /// above the capacitor's voltage U/(1 − p) of each detuning choice.
    pub rated_kv: Vec<f64>,
    /// Relative cost per kvar of capacitor (rated), one per voltage class or one for all;
    /// empty = the invented default [`DEFAULT_CAPACITOR_COST`] × (rated kV / bus kV).
    pub capacitor_cost_per_kvar: Vec<f64>,
    /// Relative cost per kvar of reactor (p × rated kvar of a step).
    pub reactor_cost_per_kvar: Option<f64>,
    /// Relative cost per step of switching equipment (contactor, fuses, controller output).
    pub step_cost: Option<f64>,
    /// The lowest leading power factor the controller may leave at the PCC (1 = never
    /// leading).
    pub leading_pf_limit: Option<f64>,
    /// Banks (ids) on this bus the designed bank replaces, existing or proposed; empty =
    /// the proposed bank on the bus.
    pub replaces: Vec<String>,
    /// The A1 cells of the row's columns, for messages: bus, step kvar, steps, detuning,
    /// rated kV.
    pub cells: DesignCells,
}

/// Where each column of a [`DesignRow`] sits (A1 notation on the `Design` sheet). Where a
/// row was read is not part of what it says: any two compare equal, so a plant written and
/// read back equals its definition.
#[derive(Debug, Clone, Default, Serialize)]
pub struct DesignCells {
    pub bus: String,
    pub step_kvar: String,
    pub steps: String,
    pub detuning: String,
    pub rated_kv: String,
    pub capacitor_cost: String,
    pub leading_pf_limit: String,
    pub replaces: String,
}

impl PartialEq for DesignCells {
    fn eq(&self, _: &Self) -> bool {
        true
    }
}

/// Default step counts of a design bus when `Steps` is blank.
pub const DEFAULT_STEPS: (u32, u32) = (1, 8);
/// Default detuning choices when `Detuning` is blank: plain, 5.67 %, 7 % and 14 %
/// (common practice: the usual detuning factors, tuned at 4.2, 3.78 and 2.67).
pub const DEFAULT_REACTORS: [Reactor; 4] = [
    Reactor::None,
    Reactor::Detuning { percent: 5.67 },
    Reactor::Detuning { percent: 7.0 },
    Reactor::Detuning { percent: 14.0 },
];
/// Invented default relative cost per rated kvar of capacitor at the bus's own voltage
/// class (scaled by rated kV / bus kV for higher classes). Stated in the Assumptions.
pub const DEFAULT_CAPACITOR_COST: f64 = 1.0;
/// Invented default relative cost per kvar of reactor.
pub const DEFAULT_REACTOR_COST: f64 = 1.5;
/// Invented default relative cost per switched step.
pub const DEFAULT_STEP_COST: f64 = 40.0;
/// Default lowest leading PF the controller may leave: 1, never leading (common practice:
/// a PF controller blocks a step that would lead).
pub const DEFAULT_LEADING_PF_LIMIT: f64 = 1.0;

/// One row of the `Load levels` sheet: at level `level`, the loads matched by `load` (a
/// load id, a load type, or every load when `None`) run at `load_factor`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LoadLevelRow {
    pub level: String,
    /// Hours per year at this level (its weight); `None` = 1.
    pub hours: Option<f64>,
    pub load: Option<String>,
    pub load_factor: f64,
    /// The A1 cell of `Load` (or `Level` when blank), for messages.
    pub cell: CellAt,
    /// The A1 cells of `Hours per year` and `Load factor`, for messages.
    pub hours_cell: CellAt,
    pub factor_cell: CellAt,
}

/// An A1 cell a row was read from, for messages. Where a row was read is not part of what
/// it says: any two compare equal.
#[derive(Debug, Clone, Default, Serialize)]
pub struct CellAt(pub String);

impl PartialEq for CellAt {
    fn eq(&self, _: &Self) -> bool {
        true
    }
}
