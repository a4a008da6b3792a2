//! The per-unit harmonic network built from a validated [`Plant`]: buses, series branches,
//! shunts, sources per scenario and switchable capacitor banks, each with its admittance
//! at any harmonic order h (integer or not).
//!
//! **Per-unit system.** System base S_base = [`BASE_MVA`] = 100 MVA three-phase; the voltage
//! base of each bus is its nominal line-to-line kV, so Z_base = kV² / S_base ohm. Because a
//! transformer's ratio is by contract the ratio of its buses' nominal kV, it becomes a plain
//! series impedance in per unit and no ideal transformer is needed. All quantities are
//! positive-sequence, per phase.

mod elements;
mod topology;

pub use elements::{BankModel, SeriesImpedance, ShuntModel};
pub use topology::TopologyError;

use num_complex::Complex64;

use crate::model::{Plant, ResistanceModel};

/// System base power, MVA three-phase.
pub const BASE_MVA: f64 = 100.0;

/// A bus of the network.
#[derive(Debug, Clone)]
pub struct NetBus {
    pub id: String,
    /// Nominal line-to-line voltage, kV (the bus's voltage base).
    pub kv: f64,
    /// Impedance base at this bus, ohm: Z_base = kV² / S_base.
    pub z_base_ohm: f64,
}

/// A series element between two buses (transformer or cable).
#[derive(Debug, Clone)]
pub struct Branch {
    pub id: String,
    pub from: usize,
    pub to: usize,
    pub z: SeriesImpedance,
}

/// A shunt element from a bus to the reference.
#[derive(Debug, Clone)]
pub struct Shunt {
    pub id: String,
    pub bus: usize,
    pub model: ShuntModel,
}

/// A supply scenario: which source shunts are in service.
#[derive(Debug, Clone)]
pub struct Scenario {
    pub name: String,
    /// Indices into [`Network::sources`].
    pub sources: Vec<usize>,
}

/// The per-unit network, shared by every scenario and configuration.
#[derive(Debug, Clone)]
pub struct Network {
    pub frequency_hz: f64,
    pub resistance: ResistanceModel,
    pub buses: Vec<NetBus>,
    pub branches: Vec<Branch>,
    /// Loads, motors and cable charging: in service in every scenario.
    pub shunts: Vec<Shunt>,
    /// Source Thevenin impedances (every source of the plant).
    pub sources: Vec<Shunt>,
    pub scenarios: Vec<Scenario>,
    /// Capacitor banks in the order of the Capacitors sheet.
    pub banks: Vec<BankModel>,
}

impl Network {
    /// Builds the network of a validated plant and checks that in every scenario each bus
    /// reaches an in-service source.
    ///
    /// The plant must have passed [`Plant::validate`]; unknown bus ids are reported as a
    /// topology error rather than a panic.
    pub fn build(plant: &Plant) -> Result<Network, TopologyError> {
        let buses: Vec<NetBus> = plant
            .buses
            .iter()
            .map(|b| NetBus {
                id: b.id.clone(),
                kv: b.nominal_kv,
                z_base_ohm: b.nominal_kv * b.nominal_kv / BASE_MVA,
            })
            .collect();
        let index: std::collections::HashMap<&str, usize> = plant
            .buses
            .iter()
            .enumerate()
            .map(|(i, b)| (b.id.as_str(), i))
            .collect();
        let find = |id: &str, element: &str| {
            index
                .get(id)
                .copied()
                .ok_or_else(|| TopologyError::UnknownBus {
                    element: element.to_string(),
                    bus: id.to_string(),
                })
        };
        let mut branches = Vec::new();
        for t in plant.transformers.iter().filter(|t| t.in_service) {
            branches.push(Branch {
                id: format!("transformer {}", t.id),
                from: find(&t.hv_bus, &t.id)?,
                to: find(&t.lv_bus, &t.id)?,
                z: SeriesImpedance::transformer(t),
            });
        }
        let mut shunts = Vec::new();
        for c in &plant.cables {
            let from = find(&c.from_bus, &c.id)?;
            let to = find(&c.to_bus, &c.id)?;
            let zb = buses[from].z_base_ohm;
            branches.push(Branch {
                id: format!("cable {}", c.id),
                from,
                to,
                z: SeriesImpedance::cable(c, zb),
            });
            if let Some(half) = ShuntModel::cable_half_charging(c, plant.study.frequency_hz, zb) {
                for bus in [from, to] {
                    shunts.push(Shunt {
                        id: format!("cable {} charging", c.id),
                        bus,
                        model: half,
                    });
                }
            }
        }
        for l in &plant.loads {
            let bus = find(&l.bus, &l.id)?;
            if let Some(model) = ShuntModel::load(l) {
                shunts.push(Shunt {
                    id: format!("load {}", l.id),
                    bus,
                    model,
                });
            }
        }
        let mut sources = Vec::new();
        for s in &plant.sources {
            let bus = find(&s.bus, &s.id)?;
            sources.push(Shunt {
                id: format!("source {}", s.id),
                bus,
                model: ShuntModel::source(s, buses[bus].kv),
            });
        }
        let scenarios = plant
            .scenarios()
            .into_iter()
            .map(|name| {
                let members = plant
                    .sources
                    .iter()
                    .enumerate()
                    .filter(|(_, s)| plant.sources_in(&name).any(|t| t.id == s.id))
                    .map(|(i, _)| i)
                    .collect();
                Scenario {
                    name,
                    sources: members,
                }
            })
            .collect();
        let mut banks = Vec::new();
        for b in &plant.banks {
            let bus = find(&b.bus, &b.id)?;
            banks.push(BankModel::new(b, bus, buses[bus].z_base_ohm));
        }
        let net = Network {
            frequency_hz: plant.study.frequency_hz,
            resistance: plant.study.resistance_model,
            buses,
            branches,
            shunts,
            sources,
            scenarios,
            banks,
        };
        net.check_topology()?;
        Ok(net)
    }

    /// Index of the bus with id `id`.
    pub fn bus_index(&self, id: &str) -> Option<usize> {
        self.buses.iter().position(|b| b.id == id)
    }

    /// The (from, to) bus pairs of every branch, in branch order: the sparsity pattern of
    /// Y(h) beyond its diagonal.
    pub fn edges(&self) -> Vec<(usize, usize)> {
        self.branches.iter().map(|b| (b.from, b.to)).collect()
    }

    /// Calls `add(i, j, y)` for every per-unit admittance entry of Y(h) without capacitor
    /// banks in `scenario` (i = j on the diagonal; each off-diagonal pair once, with i ≠ j).
    /// Y_ii = Σ shunt y + Σ branch y; Y_ij = −y_branch (nodal analysis).
    pub fn stamp(&self, order: f64, scenario: usize, mut add: impl FnMut(usize, usize, Complex64)) {
        let rm = self.resistance;
        for br in &self.branches {
            let y = br.z.at(order, rm).inv();
            add(br.from, br.from, y);
            add(br.to, br.to, y);
            add(br.from, br.to, -y);
        }
        for sh in &self.shunts {
            add(sh.bus, sh.bus, sh.model.y_pu(order, rm));
        }
        if let Some(sc) = self.scenarios.get(scenario) {
            for &i in &sc.sources {
                let s = &self.sources[i];
                add(s.bus, s.bus, s.model.y_pu(order, rm));
            }
        }
    }
}
