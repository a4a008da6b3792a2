//! Load levels and the power-factor controller of the design search.
//!
//! A level scales the loads' load factors (the `Load levels` sheet, or full and light load
//! by default). At each level and supply scenario a controller picks the step counts:
//! banks in order (the plant's other banks first, the designed bank last; several banks
//! designed together share their steps in rotation), each adding steps from its fewest
//! studied count while the PCC power factor is below the target and
//! the next step would not leave it leading beyond the limit (common practice: a PF
//! controller switches a step in while the PF is below its setting and blocks a step that
//! would lead). The power factor is the operating point's, solved by the load flow of
//! [`crate::study::operating`].

use super::DesignError;
use crate::model::{LoadLevelRow, Plant};
use crate::network::Network;
use crate::study::operating::OperatingSolver;

/// One load level: its name, its weight (hours per year) and the plant at that level.
#[derive(Debug, Clone)]
pub struct Level {
    pub name: String,
    pub hours: f64,
    pub plant: Plant,
}

/// Default levels without a `Load levels` sheet: full load (the Loads sheet as given) and
/// light load (every load factor halved); hours invented, stated in the Assumptions.
pub const DEFAULT_LEVELS: [(&str, f64, f64); 2] = [("full", 6000.0, 1.0), ("light", 2760.0, 0.5)];

/// The levels of `plant`: from its `Load levels` rows, or the defaults. A row's `Load`
/// names a load id or a load type; blank = every load. Rows apply in the order every load,
/// then types, then ids, so the most specific wins; loads no row names keep their factor.
pub fn levels(plant: &Plant) -> Result<Vec<Level>, DesignError> {
    if plant.load_levels.is_empty() {
        return Ok(DEFAULT_LEVELS
            .iter()
            .map(|&(name, hours, scale)| {
                let mut p = plant.clone();
                for l in &mut p.loads {
                    l.load_factor *= scale;
                }
                Level {
                    name: name.to_string(),
                    hours,
                    plant: p,
                }
            })
            .collect());
    }
    let mut names: Vec<&str> = Vec::new();
    for r in &plant.load_levels {
        if !names.contains(&r.level.as_str()) {
            names.push(&r.level);
        }
    }
    let mut out = Vec::new();
    for name in names {
        let rows: Vec<&LoadLevelRow> = plant
            .load_levels
            .iter()
            .filter(|r| r.level == name)
            .collect();
        let hours = rows.iter().find_map(|r| r.hours).unwrap_or(1.0);
        let mut p = plant.clone();
        for pass in 0..3 {
            for r in &rows {
                let matches = |l: &crate::model::Load| match (&r.load, pass) {
                    (None, 0) => true,
                    (Some(t), 1) => {
                        crate::model::LoadType::from_text(t).is_some_and(|k| k == l.kind)
                    }
                    (Some(id), 2) => l.id == *id,
                    _ => false,
                };
                for l in p.loads.iter_mut().filter(|l| matches(l)) {
                    l.load_factor = r.load_factor;
                }
            }
        }
        out.push(Level {
            name: name.to_string(),
            hours,
            plant: p,
        });
    }
    Ok(out)
}

/// What the controller chose at one level and scenario.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Control {
    /// Step counts of every bank.
    pub steps: Vec<u32>,
    pub p_kw: f64,
    pub q_kvar: f64,
    /// PCC power factor (`None` without load or without a load-flow solution).
    pub pf: Option<f64>,
    /// True when the PF reaches the target (lagging, or leading within the limit).
    pub reaches: bool,
}

impl Control {
    /// True when the PCC draws leading reactive power.
    pub fn leading(&self) -> bool {
        self.q_kvar < 0.0
    }
}

/// The PF controller over `allowed[b]` (ascending step counts of bank b) at scenario `s` of
/// `study` (built on `net`). `groups` is the controller order: group after group; the banks
/// of one group take one step each in rotation (a bank whose next step would lead beyond the
/// limit, or that has none left, drops out of the rotation), so a group of several banks
/// shares its steps among them (common practice: a controller rotating its outputs).
pub fn control(
    study: &OperatingSolver,
    net: &Network,
    s: usize,
    allowed: &[Vec<u32>],
    groups: &[Vec<usize>],
    target: f64,
    leading_limit: f64,
) -> Control {
    let eval = |steps: &[u32]| -> Option<(f64, f64)> {
        let v = study.shift_free_voltages(s, steps).ok()?;
        Some(net.pcc_power(s, &v))
    };
    let pf_of = |p: f64, q: f64| {
        let s = p.hypot(q);
        (p > 0.0 && s > 0.0).then(|| p / s)
    };
    // Acceptable: lagging, or leading no lower than the limit.
    let acceptable =
        |p: f64, q: f64| q >= -1e-9 || pf_of(p, q).is_some_and(|pf| pf >= leading_limit);
    let reaches =
        |p: f64, q: f64| acceptable(p, q) && pf_of(p, q).is_some_and(|pf| pf >= target - 1e-12);
    let mut steps: Vec<u32> = allowed
        .iter()
        .map(|a| a.first().copied().unwrap_or(0))
        .collect();
    let mut now = eval(&steps);
    // Index into `allowed[b]` of each bank's present count.
    let mut at: Vec<usize> = vec![0; allowed.len()];
    for group in groups {
        let mut rotating: Vec<usize> = group.clone();
        while !rotating.is_empty() && !now.is_some_and(|(p, q)| reaches(p, q)) {
            rotating.retain(|&b| {
                if now.is_some_and(|(p, q)| reaches(p, q)) {
                    return true;
                }
                let Some(&k) = allowed[b].get(at[b] + 1) else {
                    return false;
                };
                let before = steps[b];
                steps[b] = k;
                match eval(&steps) {
                    Some((p, q)) if acceptable(p, q) => {
                        at[b] += 1;
                        now = Some((p, q));
                        true
                    }
                    _ => {
                        steps[b] = before;
                        false
                    }
                }
            });
        }
    }
    let (p_kw, q_kvar) = now.unwrap_or((f64::NAN, f64::NAN));
    Control {
        pf: pf_of(p_kw, q_kvar),
        reaches: now.is_some_and(|(p, q)| reaches(p, q)),
        steps,
        p_kw,
        q_kvar,
    }
}

/// The lowest power factor of `controls` (`None` when none has one).
pub fn lowest_pf<'a>(controls: impl IntoIterator<Item = &'a Control>) -> Option<f64> {
    controls
        .into_iter()
        .filter_map(|c| c.pf)
        .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.min(v))))
}
