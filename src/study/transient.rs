//! Switching transients of energizing each capacitor step, by the simple published formulas
//! of the capacitance-switching application guide IEEE Std C37.012 (from memory), undamped
//! peak values with closing at the voltage peak:
//!
//! - isolated (the first step, against the supply): I_pk = √2·U_LN·√(C/L) with L the
//!   source and transformer inductance at the bus (plus the step's reactor), f = 1/(2π√(LC));
//! - back-to-back (step k with k − 1 steps of the same bank energized, through the inductance
//!   between them: the steps' reactors if detuned, else the bank's inrush inductance per
//!   step): L_eq = L_s + L_s/(k − 1), C_eq = C_s·(k − 1)/k.
//!
//! Damping ratio ζ = (R/2)·√(C/L): under-damped (ζ < 1), critically damped (ζ = 1) or
//! over-damped. The isolated case's bus overvoltage is the capacitor-voltage overshoot of a
//! series R-L-C step: 1 + e^(−ζπ/√(1−ζ²)) per unit of peak phase voltage when
//! under-damped, 1 otherwise (at most 2 per unit, no trapped charge).

use serde::Serialize;

use crate::model::{CapacitorBank, DEFAULT_INRUSH_UH};

/// How a transient rings down.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Regime {
    UnderDamped,
    CriticallyDamped,
    OverDamped,
}

impl Regime {
    /// The regime of damping ratio ζ (critical within 1e-9).
    pub fn of(zeta: f64) -> Regime {
        if (zeta - 1.0).abs() <= 1e-9 {
            Regime::CriticallyDamped
        } else if zeta < 1.0 {
            Regime::UnderDamped
        } else {
            Regime::OverDamped
        }
    }
}

/// One energizing event.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Inrush {
    /// `isolated` or `back-to-back`.
    pub case: &'static str,
    /// Peak inrush current, A.
    pub peak_a: f64,
    /// Ringing frequency, Hz.
    pub frequency_hz: f64,
    pub zeta: f64,
    pub regime: Regime,
    /// Peak bus voltage, per unit of nominal peak phase voltage (isolated case only).
    pub overvoltage_pu: Option<f64>,
}

/// Series R-L-C switching quantities: I_pk = √2·U·√(C/L), f = 1/(2π√(LC)), ζ = (R/2)√(C/L).
pub fn rlc(
    case: &'static str,
    u_ln_v: f64,
    r_ohm: f64,
    l_h: f64,
    c_f: f64,
    isolated: bool,
) -> Inrush {
    let zeta = r_ohm / 2.0 * (c_f / l_h).sqrt();
    let regime = Regime::of(zeta);
    Inrush {
        case,
        peak_a: 2f64.sqrt() * u_ln_v * (c_f / l_h).sqrt(),
        frequency_hz: 1.0 / (2.0 * std::f64::consts::PI * (l_h * c_f).sqrt()),
        zeta,
        regime,
        overvoltage_pu: isolated.then(|| match regime {
            Regime::UnderDamped => {
                1.0 + (-zeta * std::f64::consts::PI / (1.0 - zeta * zeta).sqrt()).exp()
            }
            _ => 1.0,
        }),
    }
}

/// A step's switching inductance and resistance: the reactor's (L = p·X_C1/ω, R = X_L/Q)
/// for a detuned or tuned bank, else the bank's inrush inductance per step and no resistance.
pub fn step_branch(bank: &CapacitorBank, p: f64, w: f64) -> (f64, f64) {
    if p > 0.0 {
        let xl = p * bank.step_xc_ohm();
        (xl / w, xl / bank.reactor_q)
    } else {
        (bank.inrush_uh.unwrap_or(DEFAULT_INRUSH_UH) * 1e-6, 0.0)
    }
}

/// Energizing step `k` (1-based) of `bank` at a bus of `bus_kv`, frequency `hz`, with the
/// supply's Thevenin R and X at fundamental `z_th_ohm` (no banks) and detuning factor `p`.
/// Step 1 is the isolated case; later steps back-to-back against the k − 1 already on.
pub fn energize(
    bank: &CapacitorBank,
    p: f64,
    k: u32,
    bus_kv: f64,
    hz: f64,
    z_th_ohm: (f64, f64),
) -> Inrush {
    let w = 2.0 * std::f64::consts::PI * hz;
    let u = bus_kv * 1000.0 / 3f64.sqrt();
    let c1 = 1.0 / (w * bank.step_xc_ohm());
    let (ls, rs) = step_branch(bank, p, w);
    if k <= 1 {
        let l = z_th_ohm.1 / w + if p > 0.0 { ls } else { 0.0 };
        let r = z_th_ohm.0 + rs;
        rlc("isolated", u, r, l, c1, true)
    } else {
        let on = f64::from(k - 1);
        rlc(
            "back-to-back",
            u,
            rs + rs / on,
            ls + ls / on,
            c1 * on / (on + 1.0),
            false,
        )
    }
}

/// One side of a back-to-back loop: series R (ohm), L (H) and C (F).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rlc {
    pub r_ohm: f64,
    pub l_h: f64,
    pub c_f: f64,
}

/// Back-to-back energizing of a step (`step`) against the groups already on its bus
/// (`on`, each n steps in parallel given as one R-L-C): the groups combine in parallel
/// (C_on = ΣC, 1/L_on = Σ1/L, R_on likewise, 0 when any is 0) and the loop is
/// L_eq = L_s + L_on, C_eq = C_s·C_on/(C_s + C_on) (IEEE C37.012, from memory). With k − 1
/// equal steps of one bank this is [`energize`]'s back-to-back case.
pub fn back_to_back(u_ln_v: f64, step: Rlc, on: &[Rlc]) -> Inrush {
    let c_on: f64 = on.iter().map(|g| g.c_f).sum();
    let l_on = 1.0 / on.iter().map(|g| 1.0 / g.l_h).sum::<f64>();
    let r_on = if on.iter().all(|g| g.r_ohm > 0.0) {
        1.0 / on.iter().map(|g| 1.0 / g.r_ohm).sum::<f64>()
    } else {
        0.0
    };
    rlc(
        "back-to-back",
        u_ln_v,
        step.r_ohm + r_on,
        step.l_h + l_on,
        step.c_f * c_on / (step.c_f + c_on),
        false,
    )
}
