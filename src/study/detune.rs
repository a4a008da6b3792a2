//! Sizing of detuned banks and single-tuned filters: reactor, capacitor voltage and rating,
//! capacitor kvar to buy, effective kvar, currents. Formulas of references.md (textbook):
//! detuning factor p = X_L / X_C, tuning order 1/√p, capacitor voltage U / (1 − p), output
//! U² / (X_C − X_L); a filter tuned at h_t has p = 1/h_t².

use serde::Serialize;

/// Standard capacitor voltage ratings, kV line-to-line (common practice: usual catalogue
/// ratings of low-voltage and medium-voltage power capacitors).
pub const STANDARD_RATINGS_KV: &[f64] = &[
    0.24, 0.4, 0.415, 0.44, 0.48, 0.525, 0.6, 0.69, 0.72, 0.8, 0.83, 0.96, 2.4, 4.16, 4.8, 6.6,
    7.2, 8.32, 9.96, 11.0, 12.47, 13.8, 14.4, 15.0, 16.5, 22.0, 24.0, 34.5,
];

/// Linearity current of a reactor as a multiple of its fundamental current (common practice:
/// 1.8 × I₁, so the reactor stays linear with the harmonic currents on top).
pub const LINEARITY_FACTOR: f64 = 1.8;

/// The lowest standard rating at or above `kv`, `None` above the list.
pub fn next_standard_rating(kv: f64) -> Option<f64> {
    STANDARD_RATINGS_KV
        .iter()
        .copied()
        .find(|&r| r >= kv * (1.0 - 1e-9))
}

/// A detuned step or tuned filter sized for a bus.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Sizing {
    pub frequency_hz: f64,
    /// Bus voltage, kV line-to-line.
    pub bus_kv: f64,
    /// Detuning factor p = X_L / X_C.
    pub p: f64,
    /// Tuning order 1/√p.
    pub tuning_order: f64,
    /// Capacitor fundamental voltage at bus voltage, U / (1 − p), kV.
    pub capacitor_kv_needed: f64,
    /// Capacitor rated voltage chosen, kV.
    pub capacitor_rated_kv: f64,
    /// Capacitor rated kvar at its rated voltage.
    pub capacitor_kvar: f64,
    /// X_C per phase at fundamental, ohm: kV_rated² / Mvar_rated.
    pub xc_ohm: f64,
    /// C per phase, µF: 1 / (2π·f·X_C).
    pub c_uf: f64,
    /// X_L = p·X_C, ohm.
    pub xl_ohm: f64,
    /// L = X_L / (2π·f), mH.
    pub l_mh: f64,
    /// Reactor resistance X_L / Q, ohm.
    pub r_ohm: f64,
    /// Effective output at bus voltage, kvar: U² / (X_C − X_L).
    pub effective_kvar: f64,
    /// Effective output at the capacitor's rated voltage applied to the bank, kvar.
    pub effective_kvar_at_rated: f64,
    /// Fundamental current, A: U / (√3·(X_C − X_L)).
    pub i1_a: f64,
    /// Reactor linearity current, A: 1.8 × I₁ (common practice).
    pub linearity_a: f64,
    /// For a tuned filter: the parallel resonance with the supply below the tuning order,
    /// h_p = √(X_C / (X_sys + X_L)), when the supply's fundamental reactance is given.
    pub parallel_order: Option<f64>,
}

/// Sizes a step from its capacitor (rated kV and kvar) and detuning factor p at a bus of
/// `bus_kv` kV and `frequency_hz`, reactor quality `q`; `x_sys_ohm` is the supply's
/// fundamental reactance at the bus, if known.
pub fn size_capacitor(
    frequency_hz: f64,
    bus_kv: f64,
    rated_kv: f64,
    capacitor_kvar: f64,
    p: f64,
    q: f64,
    x_sys_ohm: Option<f64>,
) -> Sizing {
    let w = 2.0 * std::f64::consts::PI * frequency_hz;
    let xc = rated_kv * rated_kv / (capacitor_kvar / 1000.0);
    let xl = p * xc;
    let net = xc - xl;
    let i1 = bus_kv * 1000.0 / (3f64.sqrt() * net);
    Sizing {
        frequency_hz,
        bus_kv,
        p,
        tuning_order: if p > 0.0 {
            1.0 / p.sqrt()
        } else {
            f64::INFINITY
        },
        capacitor_kv_needed: bus_kv / (1.0 - p),
        capacitor_rated_kv: rated_kv,
        capacitor_kvar,
        xc_ohm: xc,
        c_uf: 1e6 / (w * xc),
        xl_ohm: xl,
        l_mh: xl / w * 1e3,
        r_ohm: if q > 0.0 { xl / q } else { 0.0 },
        effective_kvar: bus_kv * bus_kv / net * 1000.0,
        effective_kvar_at_rated: rated_kv * rated_kv / net * 1000.0,
        i1_a: i1,
        linearity_a: LINEARITY_FACTOR * i1,
        parallel_order: x_sys_ohm.map(|xs| (xc / (xs + xl)).sqrt()),
    }
}

/// Sizes a step that must deliver `kvar` at a bus of `bus_kv` kV with detuning factor p:
/// the capacitor rating is `rated_kv` if given, else the next standard rating at or above
/// U / (1 − p); the capacitor kvar to buy at that rating is kvar·(X_C − X_L)/X_C scaled to the
/// rating: Q_rated = kvar·(1 − p)·(U_r / U)².
pub fn size_for_output(
    frequency_hz: f64,
    bus_kv: f64,
    kvar: f64,
    p: f64,
    q: f64,
    rated_kv: Option<f64>,
    x_sys_ohm: Option<f64>,
) -> Option<Sizing> {
    let rated = match rated_kv {
        Some(r) => r,
        None => next_standard_rating(bus_kv / (1.0 - p))?,
    };
    let q_rated = kvar * (1.0 - p) * (rated / bus_kv).powi(2);
    Some(size_capacitor(
        frequency_hz,
        bus_kv,
        rated,
        q_rated,
        p,
        q,
        x_sys_ohm,
    ))
}

/// The detuning factor that tunes a step to `order`: p = 1 / order².
pub fn p_for_order(order: f64) -> f64 {
    1.0 / (order * order)
}
