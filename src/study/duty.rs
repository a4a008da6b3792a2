//! Capacitor duty: for every bank in every scenario × configuration, the rms and peak
//! voltage, rms current and kvar at the capacitor's own terminals with the harmonics of the
//! penetration study, against the continuous limits of IEEE 18 (or IEC 60831-1 / 60871-1
//! with an IEC limit set).
//!
//! At the capacitor, per phase: fundamental V_c1 = U_bus / (1 − p) (the rise a series
//! reactor causes; p = 0 for a plain bank), I₁ = V_c1 / X_C; harmonic V_ch = I_h·X_C / h with
//! I_h the bank's harmonic current. rms V = √(Σ V²), peak = √2·Σ V (the arithmetic sum of the
//! harmonic peaks), rms I = √(Σ I²), kvar = 3·Σ V_h·I_h. U_bus is the bus voltage the
//! operating point solved for that scenario and configuration (input contract, version 2),
//! not the nominal one.

use serde::Serialize;

use super::penetration::Distortion;
use crate::model::{CapacitorBank, LimitSet};
use crate::network::Network;
use crate::standards::capacitors::{DutyLimits, IEC_60831_1, IEC_60871_1, IEEE_18};

/// The duty limits that apply to `bank` under `set`.
pub fn limits_for(set: LimitSet, bank: &CapacitorBank) -> DutyLimits {
    match set {
        LimitSet::Ieee519_2014 => IEEE_18,
        _ if bank.rated_kv <= 1.0 => IEC_60831_1,
        _ => IEC_60871_1,
    }
}

/// Duty quantities as multiples of the rated values.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DutyRatios {
    pub rms_voltage: f64,
    pub peak_voltage: f64,
    pub rms_current: f64,
    pub kvar: f64,
    /// Peak current of one step, A: √2·(I₁ + Σ I_h) / n, the crest with every harmonic in
    /// phase (the arithmetic bound; what a series reactor must carry without saturating).
    pub step_peak_a: f64,
}

impl DutyRatios {
    /// Each ratio against its limit: true where a ratio is above its limit (at the limit is
    /// within it).
    pub fn exceeded(&self, l: &DutyLimits) -> [bool; 4] {
        [
            self.rms_voltage > l.rms_voltage,
            l.peak_voltage.is_some_and(|v| self.peak_voltage > v),
            self.rms_current > l.rms_current,
            l.kvar.is_some_and(|v| self.kvar > v),
        ]
    }
}

/// One bank in one scenario × configuration.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DutyRow {
    pub scenario: String,
    pub configuration: String,
    pub bank: String,
    pub steps: u32,
    /// The solved fundamental voltage at the bank's bus, pu of nominal.
    pub bus_v_pu: f64,
    pub ratios: DutyRatios,
    pub limits: DutyLimits,
    pub exceeds: bool,
}

/// Per-phase duty of `n` energized steps of `bank` at a fundamental bus voltage of `bus_kv`
/// (kV line-to-line: the solved voltage, or nominal for a hand check), with harmonic bank
/// currents `harmonic_a` at `orders` and the detuning factor `p`.
pub fn duty_ratios(
    bank: &CapacitorBank,
    n: u32,
    p: f64,
    bus_kv: f64,
    orders: &[f64],
    harmonic_a: &[f64],
) -> DutyRatios {
    let xc = bank.step_xc_ohm() / f64::from(n.max(1));
    let v1 = bus_kv * 1000.0 / 3f64.sqrt() / (1.0 - p);
    let i1 = v1 / xc;
    let (mut v2, mut vsum, mut i2, mut q, mut isum) = (v1 * v1, v1, i1 * i1, v1 * i1, i1);
    for (&h, &ih) in orders.iter().zip(harmonic_a) {
        let vh = ih * xc / h;
        v2 += vh * vh;
        vsum += vh;
        i2 += ih * ih;
        q += vh * ih;
        isum += ih;
    }
    let ur = bank.rated_kv * 1000.0 / 3f64.sqrt();
    let q_rated = f64::from(n) * bank.step_kvar;
    let i_rated = q_rated * 1000.0 / (3.0 * ur);
    DutyRatios {
        rms_voltage: v2.sqrt() / ur,
        peak_voltage: vsum / ur,
        rms_current: i2.sqrt() / i_rated,
        kvar: 3.0 * q / 1000.0 / q_rated,
        step_peak_a: 2f64.sqrt() * isum / f64::from(n.max(1)),
    }
}

/// The duty of every energized bank in `result`, with `bank_v_pu[b]` the solved voltage at
/// bank b's bus (pu of nominal).
#[allow(clippy::too_many_arguments)]
pub fn duty_rows(
    result: &Distortion,
    banks: &[CapacitorBank],
    steps: &[u32],
    bank_v_pu: &[f64],
    net: &Network,
    orders: &[f64],
    set: LimitSet,
    scenario: &str,
    configuration: &str,
) -> Vec<DutyRow> {
    banks
        .iter()
        .enumerate()
        .filter(|(b, _)| steps.get(*b).copied().unwrap_or(0) > 0)
        .map(|(b, bank)| {
            let n = steps[b];
            let model = &net.banks[b];
            let v_pu = bank_v_pu.get(b).copied().unwrap_or(1.0);
            let ratios = duty_ratios(
                bank,
                n,
                model.p,
                net.buses[model.bus].kv * v_pu,
                orders,
                &result.bank_current_a[b],
            );
            let limits = limits_for(set, bank);
            DutyRow {
                scenario: scenario.to_string(),
                configuration: configuration.to_string(),
                bank: bank.id.clone(),
                steps: n,
                bus_v_pu: v_pu,
                ratios,
                limits,
                exceeds: ratios.exceeded(&limits).iter().any(|&e| e),
            }
        })
        .collect()
}
