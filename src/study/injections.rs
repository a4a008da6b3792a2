//! The harmonic sources of the penetration study: the plant's converters (grouped by bus)
//! and the utility's background EMFs behind the sources, per harmonic order, in the
//! shift-free sequence network of each order (see `network/sequence.rs`).

use std::collections::HashMap;

use num_complex::Complex64;
use serde::Serialize;

use super::spectra::{self, SpectrumChoice};
use crate::model::{Plant, Sequence, Summation};
use crate::network::{BASE_MVA, Network};

/// IEC 61000-3-6 summation exponent α at order h: 1 for h < 5, 1.4 for 5 ≤ h ≤ 10, 2 for
/// h > 10 (IEC TR 61000-3-6:2008, Table 6, from memory).
pub fn summation_exponent(order: f64) -> f64 {
    if order < 5.0 {
        1.0
    } else if order <= 10.0 {
        1.4
    } else {
        2.0
    }
}

/// Combines magnitudes by the summation law at `order`: arithmetic Σ v, IEC 61000-3-6
/// (Σ v^α)^(1/α). `Phasor` sums are complex and never reach this function; given
/// magnitudes it adds them (the bound).
pub fn combine(law: Summation, order: f64, values: impl Iterator<Item = f64>) -> f64 {
    match law {
        Summation::Arithmetic | Summation::Phasor => values.sum(),
        Summation::Iec61000_3_6 => {
            let a = summation_exponent(order);
            values.map(|v| v.powf(a)).sum::<f64>().powf(1.0 / a)
        }
    }
}

/// A background EMF behind one source at one order.
#[derive(Debug, Clone, Serialize)]
pub struct BackgroundInjection {
    /// Index into [`Injections::orders`].
    pub order: usize,
    /// Index of the source in the network.
    pub source: usize,
    /// The column (into [`Injections::buses`]) of the source's bus.
    pub column: usize,
    /// The EMF, per unit of the bus's nominal voltage, in the shift-free network (its
    /// angle matters under `phasor` summation only).
    #[serde(skip)]
    pub emf_pu: Complex64,
    /// Whether the Background sheet gives its angle (blank: 0° stated, any angle possible).
    pub angle_given: bool,
}

/// The harmonic sources of the plant and of the supply.
#[derive(Debug, Clone, Serialize)]
pub struct Injections {
    /// Orders with a non-zero injection or background, ascending (orders within 1e-9 are
    /// one).
    pub orders: Vec<f64>,
    /// The sequence network of each order: [`Sequence::of`], except a triplen order
    /// injected by 3-wire loads alone, which is positive sequence.
    pub sequences: Vec<Sequence>,
    /// Network bus index of each column: the buses with harmonic loads, then the buses of
    /// sources with a background EMF.
    pub buses: Vec<usize>,
    /// Per order, per column: the loads' current at the bus combined by the summation law,
    /// per unit of S_base at the bus's voltage base (0 for a source-only column).
    pub current_pu: Vec<Vec<f64>>,
    /// Per order, per column: Σ over the bus's loads of I_h·e^{j(φ_h − h·acos pf)}, rotated
    /// into the shift-free network (e^{j(h·θ_zone − ψ)}), per unit. Multiplied by
    /// e^{j·h·θ_V} with θ_V the bus voltage angle of the configuration's operating point it
    /// is the phasor injection (`phasor` summation).
    #[serde(skip)]
    pub phasor_pu: Vec<Vec<Complex64>>,
    /// The background EMFs, every scenario's sources.
    pub background: Vec<BackgroundInjection>,
    /// Which spectrum each harmonic-producing load used.
    pub spectra: Vec<SpectrumChoice>,
    /// Sentences naming zero-sequence injections that cannot flow (no grounded neutral at
    /// the bus in some scenario): those are not studied there.
    pub blocked: Vec<String>,
    /// Per order: the 3-wire loads' part of a triplen order whose primary tables
    /// (`current_pu`, `phasor_pu`) are zero sequence (4-wire loads or background at the
    /// same order), carried by the positive-sequence network: (current_pu, phasor_pu) per
    /// column, as the primary tables. `None` for every other order.
    #[serde(skip)]
    pub three_wire: Vec<Option<(Vec<f64>, Vec<Complex64>)>>,
}

impl Injections {
    /// Collects every harmonic-producing load's spectrum and current and every background
    /// line. I₁ in per unit is (P / pf) / S_base, the same at any voltage level. `zero` is
    /// the zero-sequence network (for the source impedances of triplen background and the
    /// buses without a grounded neutral).
    // Long: every load's injections per order and column, with the sequence routing, in one pass
    // over the loads.
    pub fn new(plant: &Plant, net: &Network, zero: &Network) -> Injections {
        let law = plant.study.summation;
        let mut chosen = Vec::new();
        // (bus, order) → magnitudes and the summed fixed phasor of the loads at that bus.
        let mut per: HashMap<(usize, u64, bool), (Vec<f64>, Complex64)> = HashMap::new();
        let mut orders: Vec<f64> = Vec::new();
        let mut buses: Vec<usize> = Vec::new();
        let intern = |orders: &mut Vec<f64>, h: f64| {
            orders
                .iter()
                .copied()
                .find(|o| (o - h).abs() < 1e-9)
                .unwrap_or_else(|| {
                    orders.push(h);
                    h
                })
        };
        let mut blocked: Vec<String> = Vec::new();
        for load in &plant.loads {
            let Some(choice) = spectra::choose(plant, load) else {
                continue;
            };
            let Some(bus) = net.bus_index(&load.bus) else {
                continue;
            };
            let i1 = load.p_kw() / 1000.0 / load.power_factor / BASE_MVA;
            let phi = load.power_factor.acos();
            let zone = net.zone_deg.get(bus).copied().unwrap_or(0.0).to_radians();
            for (&(h, m), &angle) in choice.lines.iter().zip(&choice.angles_deg) {
                if m <= 0.0 || i1 <= 0.0 {
                    continue;
                }
                let h = intern(&mut orders, h);
                let seq = load.sequence_at(h);
                if seq == Sequence::Zero {
                    let floating: Vec<&str> = net
                        .scenarios
                        .iter()
                        .enumerate()
                        .filter(|(s, _)| !zero.conducts_at(*s, bus))
                        .map(|(_, sc)| sc.name.as_str())
                        .collect();
                    if !floating.is_empty() {
                        blocked.push(format!(
                            "load {}: order {h} is zero sequence and bus \"{}\" has no grounded neutral in scenario(s) {}: that current cannot flow and is not studied there",
                            load.id,
                            net.buses[bus].id,
                            floating.join(", ")
                        ));
                    }
                }
                if !buses.contains(&bus) {
                    buses.push(bus);
                }
                let rot = match seq {
                    Sequence::Zero => zero.rotation_rad(bus, seq),
                    s => net.rotation_rad(bus, s),
                };
                let arg = angle.to_radians() - h * phi + h * zone - rot;
                // Triplen orders of 3-wire loads are kept apart (`true`).
                let three_wire = seq != Sequence::of(h);
                let e = per.entry((bus, h.to_bits(), three_wire)).or_default();
                e.0.push(i1 * m / 100.0);
                e.1 += Complex64::from_polar(i1 * m / 100.0, arg);
            }
            chosen.push(choice);
        }
        let mut lines = Vec::new();
        for b in &plant.background {
            let Some(k) = plant.sources.iter().position(|s| s.id == b.source) else {
                continue;
            };
            if b.voltage_percent <= 0.0 || b.order > plant.study.highest_order + 1e-9 {
                continue;
            }
            let h = intern(&mut orders, b.order);
            lines.push((h, k, net.sources[k].bus, b));
        }
        for &(_, _, bus, _) in &lines {
            if !buses.contains(&bus) {
                buses.push(bus);
            }
        }
        orders.sort_by(f64::total_cmp);
        let index_of = |h: f64| orders.iter().position(|&o| o == h).unwrap_or(0);
        let background = lines
            .iter()
            .map(|&(h, k, bus, b)| {
                let seq = Sequence::of(h);
                let network = if seq == Sequence::Zero { zero } else { net };
                let zone = net.zone_deg.get(bus).copied().unwrap_or(0.0).to_radians();
                let arg = b.angle_deg.unwrap_or(0.0).to_radians() + h * zone
                    - network.rotation_rad(bus, seq);
                BackgroundInjection {
                    order: index_of(h),
                    source: k,
                    column: buses.iter().position(|&c| c == bus).unwrap_or(0),
                    emf_pu: Complex64::from_polar(b.voltage_percent / 100.0, arg),
                    angle_given: b.angle_deg.is_some(),
                }
            })
            .collect();
        // A triplen order is zero sequence when a 4-wire load or the background injects it,
        // else (3-wire loads alone) positive sequence; a 3-wire part beside a zero-sequence
        // one is kept apart (`three_wire`).
        let zero_used = |h: f64| {
            per.keys().any(|&(_, o, tw)| o == h.to_bits() && !tw)
                || lines.iter().any(|&(o, ..)| o == h)
        };
        let sequences: Vec<Sequence> = orders
            .iter()
            .map(|&h| match Sequence::of(h) {
                Sequence::Zero if !zero_used(h) => Sequence::Positive,
                q => q,
            })
            .collect();
        // One table per order and column from the loads at that bus (`tw`: the 3-wire part).
        type AtBus = (Vec<f64>, Complex64);
        let row = |h: f64, tw: bool, f: &dyn Fn(f64, &AtBus) -> Complex64| -> Vec<Complex64> {
            buses
                .iter()
                .map(|&b| {
                    per.get(&(b, h.to_bits(), tw))
                        .map_or_else(Complex64::default, |v| f(h, v))
                })
                .collect()
        };
        let magnitude =
            |h: f64, v: &AtBus| Complex64::new(combine(law, h, v.0.iter().copied()), 0.0);
        let phasor = |_: f64, v: &AtBus| v.1;
        let re = |row: Vec<Complex64>| row.into_iter().map(|z| z.re).collect::<Vec<f64>>();
        let primary_tw = |o: usize| sequences[o] != Sequence::of(orders[o]);
        let current_pu = (0..orders.len())
            .map(|o| re(row(orders[o], primary_tw(o), &magnitude)))
            .collect();
        let phasor_pu = (0..orders.len())
            .map(|o| row(orders[o], primary_tw(o), &phasor))
            .collect();
        let three_wire = (0..orders.len())
            .map(|o| {
                let h = orders[o];
                let split = sequences[o] == Sequence::Zero
                    && per.keys().any(|&(_, k, tw)| k == h.to_bits() && tw);
                split.then(|| (re(row(h, true, &magnitude)), row(h, true, &phasor)))
            })
            .collect();
        blocked.dedup();
        Injections {
            sequences,
            orders,
            buses,
            current_pu,
            phasor_pu,
            background,
            spectra: chosen,
            blocked,
            three_wire,
        }
    }

    /// No injection at all (the `scan` command studies no penetration).
    pub fn none() -> Injections {
        Injections {
            orders: Vec::new(),
            sequences: Vec::new(),
            buses: Vec::new(),
            current_pu: Vec::new(),
            phasor_pu: Vec::new(),
            background: Vec::new(),
            spectra: Vec::new(),
            blocked: Vec::new(),
            three_wire: Vec::new(),
        }
    }

    /// True when some source carries a background EMF.
    pub fn has_background(&self) -> bool {
        !self.background.is_empty()
    }
}
