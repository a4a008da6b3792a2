//! The per-unit harmonic network built from a validated [`Plant`]: buses, series branches,
//! shunts, sources per scenario and switchable capacitor banks, each with its admittance
//! at any harmonic order h (integer or not).
//!
//! **Per-unit system.** System base S_base = [`BASE_MVA`] = 100 MVA three-phase; the voltage
//! base of each bus is its nominal line-to-line kV, so Z_base = kV² / S_base ohm. Because a
//! transformer's ratio is by contract the ratio of its buses' nominal kV, it becomes a plain
//! series impedance in per unit and no ideal transformer is needed. All quantities are per
//! phase, in one sequence network: [`Network::build`] gives the positive-sequence network
//! (which also serves the negative sequence), [`Network::build_zero`] the zero-sequence one.
//! Transformer phase shifts are not in Y: each bus carries the shift of its zone
//! (`zone_deg`), applied to injections and voltages (see `sequence.rs`).

pub mod damping;
mod elements;
mod pcc;
mod sequence;
mod topology;

pub use elements::{BankModel, SeriesImpedance, ShuntModel};
pub use pcc::PccTie;
pub use topology::TopologyError;

use num_complex::Complex64;

use crate::model::{LoadModel, Plant, ResistanceModel, Sequence, SourceKind};

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
    /// Index of this branch in the positive-sequence network's `branches` (its own index
    /// there; the zero-sequence network holds only the branches with a series path).
    pub index: usize,
    /// Phase shift of the `to` side against the `from` side in this network's sequence,
    /// degrees (transformers: −clock × 30° positive; cables 0).
    pub shift_deg: f64,
}

/// A shunt element from a bus to the reference.
#[derive(Debug, Clone)]
pub struct Shunt {
    pub id: String,
    pub bus: usize,
    pub model: ShuntModel,
    /// The branch (positive-sequence index) whose charging this is, for a cable's half.
    pub branch: Option<usize>,
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
    /// How linear loads are modelled at harmonic orders (each load's shunt carries it).
    pub load_model: LoadModel,
    pub buses: Vec<NetBus>,
    pub branches: Vec<Branch>,
    /// Loads, motors and cable charging: in service in every scenario.
    pub shunts: Vec<Shunt>,
    /// Source Thevenin impedances (every source of the plant).
    pub sources: Vec<Shunt>,
    pub scenarios: Vec<Scenario>,
    /// Capacitor banks in the order of the Capacitors sheet.
    pub banks: Vec<BankModel>,
    /// Constant-power loads of the operating point (every load with P > 0).
    pub power_loads: Vec<PowerLoad>,
    /// EMF of each source (same order as `sources`), pu of its bus's nominal kV, angle 0.
    pub source_emf_pu: Vec<f64>,
    /// The sequence this network models (`Positive` also serves negative-sequence orders).
    pub sequence: Sequence,
    /// Phase shift of each bus's zone against the PCC's, degrees, in this network's
    /// sequence (positive-sequence shifts in the positive network; negative sequence takes
    /// the opposite sign).
    pub zone_deg: Vec<f64>,
    /// Zero sequence only, per scenario and bus: true where the bus has no grounded
    /// neutral in the fixed network (no source, no grounded transformer winding): a unit
    /// conductance keeps Y regular there and no injection is studied at such a bus.
    pub floating: Vec<Vec<bool>>,
    /// The PCC bus (Study sheet's `PCC bus`, else the first utility source's bus).
    pub pcc: usize,
    /// Whether each source (order of `sources`) is the utility's (`Kind`), not the plant's.
    pub source_utility: Vec<bool>,
    /// Per scenario, the PCC's ties to the utility side ([`PccTie`]).
    pub pcc_tie: Vec<PccTie>,
}

/// A load of the operating point: constant power drawn at its bus (input contract,
/// version 2): P = kW × Quantity × Load factor, Q = P·tan(acos pf), lagging, per unit of
/// [`BASE_MVA`].
#[derive(Debug, Clone)]
pub struct PowerLoad {
    pub bus: usize,
    pub s_pu: Complex64,
}

impl Network {
    /// Builds the network of a validated plant and checks that in every scenario each bus
    /// reaches an in-service source.
    ///
    /// The plant must have passed [`Plant::validate`]; unknown bus ids are reported as a
    /// topology error rather than a panic.
    // Long: every element kind turned into its per-unit model, one after the other on one bus
    // index.
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
                index: branches.len(),
                shift_deg: t
                    .vector_group(plant.study.frequency_hz)
                    .positive_shift_deg(),
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
                z: SeriesImpedance::cable(c, zb, plant.study.frequency_hz),
                index: branches.len(),
                shift_deg: 0.0,
            });
            if let Some(half) = ShuntModel::cable_half_charging(c, plant.study.frequency_hz, zb) {
                for bus in [from, to] {
                    shunts.push(Shunt {
                        id: format!("cable {} charging", c.id),
                        bus,
                        branch: Some(branches.len() - 1),
                        model: half,
                    });
                }
            }
        }
        for l in &plant.loads {
            let bus = find(&l.bus, &l.id)?;
            if let Some(model) = ShuntModel::load(l, plant.study.load_model) {
                shunts.push(Shunt {
                    id: format!("load {}", l.id),
                    bus,
                    branch: None,
                    model,
                });
            }
        }
        let mut power_loads = Vec::new();
        for l in &plant.loads {
            let bus = find(&l.bus, &l.id)?;
            let p_pu = l.p_kw() / 1000.0 / BASE_MVA;
            if p_pu > 0.0 {
                let q_pu = p_pu * l.power_factor.acos().tan();
                power_loads.push(PowerLoad {
                    bus,
                    s_pu: Complex64::new(p_pu, q_pu),
                });
            }
        }
        let mut sources = Vec::new();
        for s in &plant.sources {
            let bus = find(&s.bus, &s.id)?;
            sources.push(Shunt {
                id: format!("source {}", s.id),
                bus,
                branch: None,
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
            banks.push(BankModel::new(b, bus, buses[bus].kv, buses[bus].z_base_ohm));
        }
        let mut net = Network {
            frequency_hz: plant.study.frequency_hz,
            resistance: plant.study.resistance_model,
            load_model: plant.study.load_model,
            buses,
            branches,
            shunts,
            sources,
            scenarios,
            banks,
            power_loads,
            source_emf_pu: plant.sources.iter().map(|s| s.voltage_pu).collect(),
            sequence: Sequence::Positive,
            zone_deg: Vec::new(),
            floating: Vec::new(),
            pcc: plant
                .pcc_bus()
                .map_or(Ok(0), |id| find(id, "Study: PCC bus"))?,
            source_utility: plant
                .sources
                .iter()
                .map(|s| s.kind == SourceKind::Utility)
                .collect(),
            pcc_tie: Vec::new(),
        };
        net.check_topology()?;
        net.zone_deg = net.zones(plant)?;
        net.pcc_tie = net.pcc_ties(net.pcc);
        if let Some((sc, _)) = (net.scenarios.iter().zip(&net.pcc_tie)).find(|(_, t)| !t.exists()) {
            return Err(TopologyError::PccWithoutUtility {
                scenario: sc.name.clone(),
                pcc: net.buses[net.pcc].id.clone(),
            });
        }
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

    /// The same network without its shunts (loads, motors, cable charging) and without
    /// on-site generators: utility sources, transformers and cables alone, as IEEE 519-2014's short-circuit current at the PCC
    /// and the engineer's hand check count them (the banks kept, to be energized or not).
    pub fn short_circuit_network(&self) -> Network {
        let scenarios = self
            .scenarios
            .iter()
            .map(|sc| Scenario {
                name: sc.name.clone(),
                sources: (sc.sources.iter().copied())
                    .filter(|&k| self.source_utility.get(k).copied().unwrap_or(true))
                    .collect(),
            })
            .collect();
        Network {
            shunts: Vec::new(),
            scenarios,
            ..self.clone()
        }
    }

    /// Calls `add(i, j, y)` for every per-unit entry of the fundamental admittance matrix of
    /// the operating point in `scenario`, without capacitor banks: branches, cable charging
    /// and the source impedances at h = 1. Loads and motors are not in it: they draw
    /// constant power ([`Network::power_loads`]).
    pub fn stamp_load_flow(&self, scenario: usize, add: &mut dyn FnMut(usize, usize, Complex64)) {
        let rm = self.resistance;
        for br in &self.branches {
            let y = br.z.at(1.0, rm).inv();
            add(br.from, br.from, y);
            add(br.to, br.to, y);
            add(br.from, br.to, -y);
        }
        for sh in &self.shunts {
            if matches!(sh.model, ShuntModel::Capacitance { .. }) {
                add(sh.bus, sh.bus, sh.model.y_pu(1.0, rm));
            }
        }
        if let Some(sc) = self.scenarios.get(scenario) {
            for &i in &sc.sources {
                let s = &self.sources[i];
                add(s.bus, s.bus, s.model.y_pu(1.0, rm));
            }
        }
    }

    /// Norton current of every in-service source of `scenario` at its bus, per unit:
    /// I_N = E·y_s(1) with E the source's `Voltage (pu)` at angle 0.
    pub fn norton_currents(&self, scenario: usize) -> Vec<Complex64> {
        let mut i = vec![Complex64::default(); self.buses.len()];
        if let Some(sc) = self.scenarios.get(scenario) {
            for &k in &sc.sources {
                let s = &self.sources[k];
                i[s.bus] += s.model.y_pu(1.0, self.resistance) * self.source_emf_pu[k];
            }
        }
        i
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
        if let Some(f) = self.floating.get(scenario) {
            for (bus, _) in f.iter().enumerate().filter(|(_, f)| **f) {
                add(bus, bus, Complex64::new(1.0, 0.0));
            }
        }
    }

    /// True when an injection at `bus` can flow in scenario `s` (always, except at a
    /// zero-sequence bus without a grounded neutral).
    pub fn conducts_at(&self, s: usize, bus: usize) -> bool {
        !self.floating.get(s).is_some_and(|f| f[bus])
    }

    /// The shift, radians, that carries a quantity of order h from the shift-free network
    /// to the actual phase at `bus`: σ·zone (σ = ±1 for positive / negative sequence; the
    /// zero network's own zone for zero sequence).
    pub fn rotation_rad(&self, bus: usize, sequence: Sequence) -> f64 {
        let z = self.zone_deg.get(bus).copied().unwrap_or(0.0).to_radians();
        match sequence {
            Sequence::Zero => z,
            s => s.sign() * z,
        }
    }
}
