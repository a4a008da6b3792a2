//! Sequence networks: the transformer phase-shift zones of the positive network and the
//! zero-sequence network (input contract, version 2).
//!
//! **Why zones, not complex ratios.** A phase-shifting transformer as a complex ratio t
//! makes Y non-symmetric (Y_ij = −y·t̄, Y_ji = −y·t) and would need an LU factorization
//! with twice the work and storage of the LDLᵀ the scans use. In a network where every
//! loop's shifts add to zero (which parallel transformers of different vector groups
//! would violate, and which is refused), each bus b has a zone angle θ_b, and the network
//! with shifts is the shift-free network seen through the diagonal unitary map
//! V_b = V'_b·e^{jσθ_b}, I_b = I'_b·e^{jσθ_b} (σ = +1 positive, −1 negative sequence), so
//! Z_ij = e^{jσθ_i}·Z'_ij·e^{−jσθ_j}: magnitudes are unchanged and only phasor sums see
//! the shift. Injections are rotated into the shift-free network and voltages back.

use std::collections::VecDeque;

use super::damping::Growth;
use super::{BASE_MVA, Branch, Network, SeriesImpedance, Shunt, ShuntModel, TopologyError};
use crate::model::{Plant, Sequence, ZeroPath};

/// Angles that differ by less than this, degrees, are the same.
const SHIFT_TOLERANCE_DEG: f64 = 1e-6;

fn wrap(deg: f64) -> f64 {
    let w = deg.rem_euclid(360.0);
    if w > 180.0 { w - 360.0 } else { w }
}

impl Network {
    /// The zone angle of every bus in this network's branches, degrees, from the PCC
    /// (angle 0), then from each remaining source bus, then any other bus; a loop whose
    /// shifts do not add to zero is an error naming the transformer that closes it.
    pub(super) fn zones(&self, plant: &Plant) -> Result<Vec<f64>, TopologyError> {
        let n = self.buses.len();
        let mut adj: Vec<Vec<(usize, f64, usize)>> = vec![Vec::new(); n];
        for (k, b) in self.branches.iter().enumerate() {
            adj[b.from].push((b.to, b.shift_deg, k));
            adj[b.to].push((b.from, -b.shift_deg, k));
        }
        let mut zone: Vec<Option<f64>> = vec![None; n];
        let mut starts: Vec<usize> = Vec::new();
        if let Some(p) = plant.pcc_bus().and_then(|id| self.bus_index(id)) {
            starts.push(p);
        }
        starts.extend(self.sources.iter().map(|s| s.bus));
        starts.extend(0..n);
        for start in starts {
            if zone[start].is_some() {
                continue;
            }
            zone[start] = Some(0.0);
            let mut queue = VecDeque::from([start]);
            while let Some(a) = queue.pop_front() {
                let za = zone[a].unwrap_or(0.0);
                for &(b, shift, k) in &adj[a] {
                    let want = za + shift;
                    match zone[b] {
                        None => {
                            zone[b] = Some(want);
                            queue.push_back(b);
                        }
                        Some(zb) if wrap(zb - want).abs() > SHIFT_TOLERANCE_DEG => {
                            return Err(TopologyError::ShiftLoop {
                                element: self.branches[k].id.clone(),
                                shift_deg: format!("{:.1}", wrap(zb - want).abs()),
                            });
                        }
                        Some(_) => {}
                    }
                }
            }
        }
        Ok(zone.into_iter().map(|z| wrap(z.unwrap_or(0.0))).collect())
    }

    /// The zero-sequence network of `plant`, beside its positive-sequence network `pos`:
    /// - sources: Z₀ = kV²/S₀ split by the zero-sequence X/R (defaults: the positive
    ///   sequence's), grounded;
    /// - transformers by [`ZeroPath`] of their vector group, with `Zero-sequence impedance
    ///   (%)` (default the positive-sequence impedance) and the positive X/R: in series
    ///   (YNyn), as a shunt to ground at the grounded side facing a delta (YNd, Dyn) or at a
    ///   grounded zigzag, or open;
    /// - cables: R0 and X0 as given, else [`crate::model::CABLE_ZERO_MULTIPLE`] × the
    ///   positive sequence's (common practice), the positive-sequence charging and skin
    ///   effect;
    /// - loads and motors: no zero-sequence path (ungrounded, common practice);
    /// - banks: only grounded-wye banks conduct.
    ///
    /// A bus whose zero-sequence component has no grounded neutral in a scenario (no
    /// source in service, no grounded transformer winding) is `floating` there.
    // Long: every element kind's zero-sequence path, one after the other on one bus index.
    pub fn build_zero(&self, plant: &Plant) -> Result<Network, TopologyError> {
        let f = plant.study.frequency_hz;
        let mut branches = Vec::new();
        let mut shunts: Vec<Shunt> = self
            .shunts
            .iter()
            .filter(|s| matches!(s.model, ShuntModel::Capacitance { .. }))
            .cloned()
            .collect();
        // Buses grounded in every scenario by a transformer winding.
        let mut grounded = vec![false; self.buses.len()];
        let mut in_service = plant.transformers.iter().filter(|t| t.in_service);
        for pb in &self.branches {
            if !pb.id.starts_with("transformer ") {
                // A cable: its zero-sequence R0, X0 (given, or the common-practice multiple).
                let z = (plant.cables.iter())
                    .find(|c| pb.id.strip_prefix("cable ") == Some(c.id.as_str()))
                    .map_or(pb.z, |c| {
                        let (r0, x0) = c.zero_ohm_per_km();
                        let zero = crate::model::Cable {
                            r_ohm_per_km: r0,
                            x_ohm_per_km: x0,
                            ..c.clone()
                        };
                        SeriesImpedance {
                            growth: pb.z.growth,
                            ..SeriesImpedance::cable(&zero, self.buses[pb.from].z_base_ohm, f)
                        }
                    });
                branches.push(Branch {
                    shift_deg: 0.0,
                    z,
                    ..pb.clone()
                });
                continue;
            }
            let Some(t) = in_service.next() else { break };
            let group = t.vector_group(f);
            let z_pct = t.zero_impedance_percent.unwrap_or(t.impedance_percent);
            let z0 = SeriesImpedance::from_magnitude(
                z_pct / 100.0 * BASE_MVA / (t.kva / 1000.0),
                t.x_over_r,
                Growth::Transformer,
            );
            let shunt = |bus: usize| Shunt {
                id: format!("transformer {} zero sequence", t.id),
                bus,
                branch: None,
                model: ShuntModel::SeriesRl(z0),
            };
            match group.zero_path() {
                ZeroPath::Series => branches.push(Branch {
                    z: z0,
                    shift_deg: group.zero_shift_deg(),
                    ..pb.clone()
                }),
                ZeroPath::ShuntHv => {
                    shunts.push(shunt(pb.from));
                    grounded[pb.from] = true;
                }
                ZeroPath::ShuntLv => {
                    shunts.push(shunt(pb.to));
                    grounded[pb.to] = true;
                }
                ZeroPath::ShuntBoth => {
                    shunts.push(shunt(pb.from));
                    shunts.push(shunt(pb.to));
                    grounded[pb.from] = true;
                    grounded[pb.to] = true;
                }
                ZeroPath::Open => {}
            }
        }
        let sources: Vec<Shunt> = plant
            .sources
            .iter()
            .zip(&self.sources)
            .map(|(s, ps)| {
                let kv = self.buses[ps.bus].kv;
                let mva = s
                    .zero_short_circuit_mva
                    .unwrap_or_else(|| s.short_circuit_mva(kv));
                Shunt {
                    id: ps.id.clone(),
                    bus: ps.bus,
                    branch: None,
                    model: ShuntModel::SeriesRl(SeriesImpedance::from_magnitude(
                        BASE_MVA / mva,
                        s.zero_x_over_r.unwrap_or(s.x_over_r),
                        Growth::Source,
                    )),
                }
            })
            .collect();
        let banks = self
            .banks
            .iter()
            .map(|b| {
                let mut z = b.clone();
                z.conducts = b.connection.has_zero_path();
                z
            })
            .collect();
        let mut zero = Network {
            frequency_hz: self.frequency_hz,
            resistance: self.resistance,
            load_model: self.load_model,
            buses: self.buses.clone(),
            branches,
            shunts,
            sources,
            scenarios: self.scenarios.clone(),
            banks,
            power_loads: Vec::new(),
            source_emf_pu: self.source_emf_pu.clone(),
            sequence: Sequence::Zero,
            zone_deg: Vec::new(),
            floating: Vec::new(),
            pcc: self.pcc,
            source_utility: self.source_utility.clone(),
            pcc_tie: self.pcc_tie.clone(),
        };
        zero.zone_deg = zero.zones(plant)?;
        zero.floating = zero.floating_buses(&grounded);
        Ok(zero)
    }

    /// Per scenario, the buses of components (over this network's branches) that hold no
    /// grounded bus and no in-service source.
    fn floating_buses(&self, grounded: &[bool]) -> Vec<Vec<bool>> {
        let n = self.buses.len();
        let mut comp: Vec<usize> = (0..n).collect();
        fn root(c: &mut [usize], mut i: usize) -> usize {
            while c[i] != i {
                c[i] = c[c[i]];
                i = c[i];
            }
            i
        }
        for b in &self.branches {
            let (x, y) = (root(&mut comp, b.from), root(&mut comp, b.to));
            if x != y {
                comp[x] = y;
            }
        }
        self.scenarios
            .iter()
            .map(|sc| {
                let mut ok = vec![false; n];
                for (bus, _) in grounded.iter().enumerate().filter(|(_, g)| **g) {
                    let r = root(&mut comp, bus);
                    ok[r] = true;
                }
                for &s in &sc.sources {
                    let r = root(&mut comp, self.sources[s].bus);
                    ok[r] = true;
                }
                (0..n).map(|b| !ok[root(&mut comp, b)]).collect()
            })
            .collect()
    }
}
