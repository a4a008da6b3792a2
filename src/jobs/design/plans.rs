//! The plans of the design search: one bank at one design bus, equal steps of a size, a
//! count, a detuning choice and a capacitor voltage class; its bank, output and cost.

use serde::Serialize;

use crate::model::*;
use crate::study::detune::next_standard_rating;

/// One plan: what would be bought.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    pub bus: String,
    /// Rated kvar of one step at the capacitor's rated voltage.
    pub step_kvar: f64,
    pub steps: u32,
    pub reactor: Reactor,
    /// Capacitor rated voltage, kV line-to-line.
    pub rated_kv: f64,
}

impl Plan {
    /// Output of one step at bus voltage `bus_kv`, kvar: Q = Step kvar·(kV_bus/kV_rated)²
    /// /(1 − p) (a detuned step's output U²/(X_C − X_L); references.md, textbook).
    pub fn effective_step_kvar(&self, bus_kv: f64) -> f64 {
        let r = bus_kv / self.rated_kv;
        self.step_kvar * r * r / (1.0 - self.reactor.p())
    }

    /// The reactor as the reports name it: `plain`, `7 %` or `tuned 4.70`.
    pub fn reactor_label(&self) -> String {
        reactor_label(self.reactor)
    }

    /// `4 × 50 kvar, 0.525 kV, 7 %` (the bus apart).
    pub fn label(&self) -> String {
        format!(
            "{} × {} kvar, {} kV, {}",
            self.steps,
            self.step_kvar,
            self.rated_kv,
            self.reactor_label()
        )
    }
}

/// `plain`, `7 %` or `tuned 4.70`.
pub fn reactor_label(r: Reactor) -> String {
    match r {
        Reactor::None => "plain".into(),
        Reactor::Detuning { percent } => format!("{percent} %"),
        Reactor::Tuned { order } => format!("tuned {order:.2}"),
    }
}

/// A family of plans: everything but the step count.
#[derive(Debug, Clone, PartialEq)]
pub struct Family {
    /// Index of the design row.
    pub row: usize,
    pub bus_kv: f64,
    pub step_kvar: f64,
    pub reactor: Reactor,
    pub rated_kv: f64,
    /// Relative cost per rated kvar of capacitor of this class.
    pub capacitor_cost: f64,
}

/// The voltage classes of `row` for `reactor` at a bus of `bus_kv`: the row's own list, or
/// the two standard ratings at or above the capacitor's voltage U/(1 − p).
pub fn classes(row: &DesignRow, reactor: Reactor, bus_kv: f64) -> Vec<f64> {
    if !row.rated_kv.is_empty() {
        return row.rated_kv.clone();
    }
    let mut out = Vec::new();
    if let Some(a) = next_standard_rating(bus_kv / (1.0 - reactor.p())) {
        out.push(a);
        if let Some(b) = next_standard_rating(a * (1.0 + 1e-6)) {
            out.push(b);
        }
    }
    out
}

/// Every family of `row`: step size × detuning × voltage class.
pub fn families(r: usize, row: &DesignRow, bus_kv: f64) -> Vec<Family> {
    let mut out = Vec::new();
    for &step_kvar in &row.step_kvar {
        for &reactor in &row.reactors {
            let cls = classes(row, reactor, bus_kv);
            for (i, &rated_kv) in cls.iter().enumerate() {
                let capacitor_cost = match row.capacitor_cost_per_kvar.len() {
                    0 => DEFAULT_CAPACITOR_COST * (rated_kv / bus_kv).max(1.0),
                    1 => row.capacitor_cost_per_kvar[0],
                    _ => row
                        .capacitor_cost_per_kvar
                        .get(i)
                        .copied()
                        .unwrap_or(f64::NAN),
                };
                out.push(Family {
                    row: r,
                    bus_kv,
                    step_kvar,
                    reactor,
                    rated_kv,
                    capacitor_cost,
                });
            }
        }
    }
    out
}

/// The relative cost of `steps` steps of `family` under `row`'s prices: capacitor kvar
/// (rated) × its price + reactor kvar (p × rated kvar, the reactor's reactive power at
/// rated capacitor current to first order) × its price + steps × the step price.
pub fn cost(family: &Family, row: &DesignRow, steps: u32) -> f64 {
    let n = f64::from(steps);
    let kvar = n * family.step_kvar;
    kvar * family.capacitor_cost
        + kvar * family.reactor.p() * row.reactor_cost_per_kvar.unwrap_or(DEFAULT_REACTOR_COST)
        + n * row.step_cost.unwrap_or(DEFAULT_STEP_COST)
}

/// The bank of a plan at a bus of `bus_kv`: `template`'s id and settings (a proposed bank
/// the plan replaces) or the contract's defaults written out (so the written plant reads
/// without default warnings), every step count studied.
pub fn bank(plan: &Plan, id: &str, template: Option<&CapacitorBank>, bus_kv: f64) -> CapacitorBank {
    CapacitorBank {
        id: id.to_string(),
        bus: plan.bus.clone(),
        rated_kv: plan.rated_kv,
        step_kvar: plan.step_kvar,
        steps: plan.steps,
        reactor: plan.reactor,
        reactor_q: template.map_or(50.0, |t| t.reactor_q),
        status: BankStatus::Proposed,
        studied_steps: (0..=plan.steps).collect(),
        inrush_uh: template.and_then(|t| t.inrush_uh),
        connection: template
            .and_then(|t| t.connection)
            .or(Some(BankConnection::default_for(bus_kv))),
        trapped_charge_pu: template.map_or(0.0, |t| t.trapped_charge_pu),
        inrush_limit_ka: template.and_then(|t| t.inrush_limit_ka),
    }
}
