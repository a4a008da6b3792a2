//! How heavily the plant's load sits on what supplies it, from the data alone (no load
//! flow): the apparent power of the loads each transformer feeds against its rating, and
//! the whole load against each source's short-circuit power. The reader warns of a
//! transformer below its load or a source out of proportion to the load, and a check names
//! the tightest element as the likely cause when a load flow has no solution.

use super::{Plant, ShortCircuit};

/// Apparent power of a load at the study point, kVA: |S| = P / pf with P = kW × Quantity ×
/// Load factor (textbook: S = P / cos φ).
fn load_kva(l: &super::Load) -> f64 {
    if l.power_factor > 0.0 {
        l.p_kw() / l.power_factor
    } else {
        0.0
    }
}

/// The whole plant's load at the study point, kVA (apparent powers added: no diversity, an
/// upper bound on their vector sum).
pub fn plant_load_kva(plant: &Plant) -> f64 {
    plant.loads.iter().map(load_kva).sum::<f64>() + 0.0
}

/// The buses fed through transformer `t`: its LV bus and every bus reached from it over
/// cables and other in-service transformers without crossing `t` or reaching its HV bus
/// (on a radial plant, the buses below it; on a plant with a loop around `t`, none is
/// counted twice).
pub fn buses_fed_by(plant: &Plant, t: usize) -> Vec<&str> {
    let tx = &plant.transformers[t];
    let mut seen: Vec<&str> = vec![tx.lv_bus.as_str()];
    let mut i = 0;
    while i < seen.len() {
        let at = seen[i];
        let mut next: Vec<&str> = Vec::new();
        for c in &plant.cables {
            if c.from_bus == at {
                next.push(&c.to_bus);
            } else if c.to_bus == at {
                next.push(&c.from_bus);
            }
        }
        for (k, o) in plant.transformers.iter().enumerate() {
            if k == t || !o.in_service {
                continue;
            }
            if o.hv_bus == at {
                next.push(&o.lv_bus);
            } else if o.lv_bus == at {
                next.push(&o.hv_bus);
            }
        }
        for b in next {
            if b != tx.hv_bus && !seen.contains(&b) {
                seen.push(b);
            }
        }
        i += 1;
    }
    seen
}

/// What kind of element supplies the load.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Supplier {
    Transformer,
    Source,
}

/// One supplying element's load against its capability.
#[derive(Debug, Clone, PartialEq)]
pub struct Loading {
    /// The supplying element's kind.
    pub kind: Supplier,
    pub id: String,
    /// The load it carries, kVA.
    pub load_kva: f64,
    /// Its rating (transformer kVA) or short-circuit power (source, kVA).
    pub capability_kva: f64,
}

impl Loading {
    /// Load over capability.
    pub fn ratio(&self) -> f64 {
        self.load_kva / self.capability_kva
    }
}

/// Each in-service transformer's fed load against its kVA, in sheet order.
pub fn transformer_loadings(plant: &Plant) -> Vec<Loading> {
    (0..plant.transformers.len())
        .filter(|&t| plant.transformers[t].in_service)
        .map(|t| {
            let fed = buses_fed_by(plant, t);
            Loading {
                kind: Supplier::Transformer,
                id: plant.transformers[t].id.clone(),
                load_kva: plant
                    .loads
                    .iter()
                    .filter(|l| fed.contains(&l.bus.as_str()))
                    .map(load_kva)
                    .sum::<f64>()
                    + 0.0,
                capability_kva: plant.transformers[t].kva,
            }
        })
        .collect()
}

/// A source's three-phase short-circuit power, MVA: as given, or √3 · kV · kA at its bus's
/// nominal kV (textbook); `None` when its bus is not on the Buses sheet.
pub fn source_s_sc_mva(plant: &Plant, s: usize) -> Option<f64> {
    let src = &plant.sources[s];
    match src.short_circuit {
        ShortCircuit::Mva(m) => Some(m),
        ShortCircuit::Ka(ka) => plant
            .buses
            .iter()
            .find(|b| b.id == src.bus)
            .map(|b| 3f64.sqrt() * b.nominal_kv * ka),
    }
}

/// Each source's short-circuit power against the whole plant's load, in sheet order.
pub fn source_loadings(plant: &Plant) -> Vec<Loading> {
    let load = plant_load_kva(plant);
    (0..plant.sources.len())
        .filter_map(|s| {
            Some(Loading {
                kind: Supplier::Source,
                id: plant.sources[s].id.clone(),
                load_kva: load,
                capability_kva: source_s_sc_mva(plant, s)? * 1000.0,
            })
        })
        .collect()
}

/// The element carrying the most load for its capability: the likeliest cause when a load
/// flow has no solution (`None` without transformers and sources).
pub fn tightest(plant: &Plant) -> Option<Loading> {
    transformer_loadings(plant)
        .into_iter()
        .chain(source_loadings(plant))
        .filter(|l| l.capability_kva > 0.0 && l.ratio().is_finite())
        .max_by(|a, b| a.ratio().total_cmp(&b.ratio()))
}
