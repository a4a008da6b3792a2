//! The engineer's independent hand check of a bank's resonance: the short-circuit power at
//! the bank's bus from the sources, transformers and cables alone (loads and motors left
//! out, as the engineer computes it), and the parallel-resonance order of every step
//! energized on that bus, plain and detuned together.

use num_complex::Complex64;
use serde::Serialize;

use crate::model::Plant;
use crate::network::BASE_MVA;

/// One series element on the path from a bus to its source.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum PathElement {
    /// Index into `plant.sources`.
    Source(usize),
    /// Index into `plant.transformers`.
    Transformer(usize),
    /// Index into `plant.cables`.
    Cable(usize),
}

/// Where a row's S_sc comes from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum SscBasis {
    /// The series sum of the path's elements to the scenario's one source (a radial
    /// plant): loads, motors and cable charging left out.
    Path(Vec<PathElement>),
    /// The network's fundamental Thevenin impedance (several sources or a meshed plant),
    /// loads and motors included.
    Network,
}

/// A row's S_sc basis as the JSON gives it: the path's element ids from the bank's bus to
/// the source, or `network`.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum SscBasisIds {
    Path(Vec<String>),
    Network,
}

impl SscBasis {
    /// The basis with each path element named by its id on its sheet.
    pub fn ids(&self, plant: &Plant) -> SscBasisIds {
        match self {
            SscBasis::Network => SscBasisIds::Network,
            SscBasis::Path(p) => SscBasisIds::Path(
                p.iter()
                    .map(|e| match *e {
                        PathElement::Source(i) => plant.sources[i].id.clone(),
                        PathElement::Transformer(i) => plant.transformers[i].id.clone(),
                        PathElement::Cable(i) => plant.cables[i].id.clone(),
                    })
                    .collect(),
            ),
        }
    }
}

/// Series impedance of one path element, per unit on [`BASE_MVA`] (complex):
/// source Z = (S_base/S_sc)∠atan(X/R); transformer Z = (Z%/100)·(S_base/S_rated)∠atan(X/R)
/// (IEEE Std 399 per-unit conversions, common practice); cable Z = (R + jX)·ℓ/runs over
/// Z_base = kV²/S_base at its buses' nominal kV.
pub fn element_z_pu(plant: &Plant, e: PathElement) -> Complex64 {
    let angle = |x_over_r: f64| x_over_r.atan();
    let kv_of = |id: &str| {
        plant
            .buses
            .iter()
            .find(|b| b.id == id)
            .map_or(f64::NAN, |b| b.nominal_kv)
    };
    match e {
        PathElement::Source(i) => {
            let s = &plant.sources[i];
            let mva = s.short_circuit_mva(kv_of(&s.bus));
            Complex64::from_polar(BASE_MVA / mva, angle(s.x_over_r))
        }
        PathElement::Transformer(i) => {
            let t = &plant.transformers[i];
            let z = t.impedance_percent / 100.0 * BASE_MVA / (t.kva / 1000.0);
            Complex64::from_polar(z, angle(t.x_over_r))
        }
        PathElement::Cable(i) => {
            let c = &plant.cables[i];
            let kv = kv_of(&c.from_bus);
            let z_base = kv * kv / BASE_MVA;
            let km = c.length_m / 1000.0 / f64::from(c.runs.max(1));
            Complex64::new(c.r_ohm_per_km * km, c.x_ohm_per_km * km) / z_base
        }
    }
}

/// The radial path from `bus` to the one utility source in service in `scenario` (the
/// sources with no scenario or that scenario's name; on-site generators left out, as IEEE
/// 519-2014's short-circuit current at the PCC): `None` when the scenario has several
/// utility sources, the in-service branches form a loop, or the bus is not connected.
pub fn radial_path(plant: &Plant, scenario: &str, bus: &str) -> Option<Vec<PathElement>> {
    let sources: Vec<usize> = plant
        .sources
        .iter()
        .enumerate()
        .filter(|(_, s)| s.scenario.as_deref().is_none_or(|n| n == scenario))
        .filter(|(_, s)| s.kind == crate::model::SourceKind::Utility)
        .map(|(i, _)| i)
        .collect();
    let [source] = sources[..] else {
        return None;
    };
    // Edges of the in-service branches: (a, b, element).
    let mut edges: Vec<(&str, &str, PathElement)> = Vec::new();
    for (i, t) in plant.transformers.iter().enumerate() {
        if t.in_service {
            edges.push((&t.hv_bus, &t.lv_bus, PathElement::Transformer(i)));
        }
    }
    for (i, c) in plant.cables.iter().enumerate() {
        edges.push((&c.from_bus, &c.to_bus, PathElement::Cable(i)));
    }
    // A forest has as many edges as buses less its components; one loop anywhere in the
    // source's component makes the path not unique, so the component is checked whole.
    let target = plant.sources[source].bus.as_str();
    let mut seen: Vec<&str> = vec![target];
    let mut parent: Vec<(&str, Option<(usize, &str)>)> = vec![(target, None)];
    let mut queue = std::collections::VecDeque::from([target]);
    let mut used = vec![false; edges.len()];
    while let Some(at) = queue.pop_front() {
        for (k, &(a, b, _)) in edges.iter().enumerate() {
            if used[k] || (a != at && b != at) {
                continue;
            }
            used[k] = true;
            let next = if a == at { b } else { a };
            if seen.contains(&next) {
                return None; // a loop: the path is not unique
            }
            seen.push(next);
            parent.push((next, Some((k, at))));
            queue.push_back(next);
        }
    }
    let mut path = Vec::new();
    let mut at = bus;
    loop {
        let (_, link) = parent.iter().find(|(b, _)| *b == at)?;
        match link {
            Some((k, up)) => {
                path.push(edges[*k].2);
                at = up;
            }
            None => break,
        }
    }
    path.push(PathElement::Source(source));
    Some(path)
}

/// The parallel-resonance order of a bus with groups of energized steps `(X_C, X_L)` (ohm
/// at fundamental, the group's steps together) behind a system reactance `x_th` (ohm,
/// the Thevenin impedance's magnitude taken as inductive), lossless: the zero of the
/// susceptance B(h) = −1/(h·X_th) + Σ 1/(X_C/h − h·X_L) (a plain group has X_L = 0 and
/// susceptance h/X_C). B rises between its poles (the groups' tuning orders √(X_C/X_L)),
/// so each interval holds one zero (textbook circuit theory, common practice).
/// `group` picks the row's group: a detuned group's resonance is the zero just below its
/// tuning order; a plain group's the zero above every tuning order. With one group this is
/// √(X_C/X_th) plain and √(X_C/(X_th + X_L)) detuned, exactly.
pub fn resonance_order(x_th: f64, groups: &[(f64, f64)], group: usize) -> f64 {
    let (xc, xl) = groups[group];
    if groups.len() == 1 {
        return (xc / (x_th + xl)).sqrt();
    }
    let b = |h: f64| -> f64 {
        -1.0 / (h * x_th)
            + groups
                .iter()
                .map(|&(c, l)| 1.0 / (c / h - h * l))
                .sum::<f64>()
    };
    let poles: Vec<f64> = groups
        .iter()
        .filter(|g| g.1 > 0.0)
        .map(|g| (g.0 / g.1).sqrt())
        .collect();
    let (lo, hi) = if xl > 0.0 {
        let own = (xc / xl).sqrt();
        let below = poles
            .iter()
            .copied()
            .filter(|&p| p < own)
            .fold(0.0, f64::max);
        (below, own)
    } else {
        let top = poles.iter().copied().fold(0.0, f64::max);
        // Above the top pole B → −∞; it crosses zero below the plain group's own √(X_C/X_th)
        // scaled up: search to a bound where B is positive.
        let mut hi = (xc / x_th).sqrt().max(top) * 2.0 + 1.0;
        while b(hi) <= 0.0 && hi < 1e6 {
            hi *= 2.0;
        }
        (top, hi)
    };
    // Bisection strictly inside the interval (B is monotone there).
    let (mut a, mut z) = (lo + (hi - lo) * 1e-12, hi - (hi - lo) * 1e-12);
    for _ in 0..200 {
        let m = 0.5 * (a + z);
        if b(m) < 0.0 {
            a = m;
        } else {
            z = m;
        }
    }
    0.5 * (a + z)
}
