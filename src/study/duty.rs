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
//!
//! **Envelope.** Each row's duty is the governing one of three cases: the study point
//! (the Loads sheet's load, nominal capacitance); the high-voltage case (the lightest load
//! level, every source EMF raised to at least the top of the Study sheet's voltage range,
//! nominal capacitance); and the same with the capacitance at its upper tolerance (IEEE
//! 18-2012 allows 0/+10 %: C·k raises the fundamental current and kvar k-fold, lowers the
//! harmonic voltages I_h·X_C/(k·h), and turns the detuning factor p into k·p). The harmonic
//! currents are the study point's in every case. The governing case is the one whose worst
//! quantity stands highest against its limit.

use serde::Serialize;

use super::penetration::Distortion;
use crate::model::{CapacitorBank, LimitSet};
use crate::network::Network;
use crate::standards::capacitors::{
    DutyLimits, IEC_60831_1, IEC_60871_1, IEC_TRANSIENT, IEEE_18, IEEE_18_TRANSIENT,
    TransientCapability,
};

/// The duty limits that apply to `bank` under `set`.
pub fn limits_for(set: LimitSet, bank: &CapacitorBank) -> DutyLimits {
    match set {
        LimitSet::Ieee519_2014 => IEEE_18,
        _ if bank.rated_kv <= 1.0 => IEC_60831_1,
        _ => IEC_60871_1,
    }
}

/// The transient overvoltage capability that applies under `set`: IEEE 18 under IEEE 519,
/// the IEC capacitor standards under an IEC limit set.
pub fn transient_capability(set: LimitSet) -> TransientCapability {
    match set {
        LimitSet::Ieee519_2014 => IEEE_18_TRANSIENT,
        _ => IEC_TRANSIENT,
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

/// Which operating case of the envelope a duty row's figures come from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum DutyCase {
    /// The study point: the Loads sheet's load, the sources' `Voltage (pu)`, nominal C.
    StudyPoint,
    /// The lightest load level with every source EMF at least the top of the voltage range.
    HighVoltage,
    /// The high-voltage case with the capacitance at its upper tolerance.
    HighVoltageUpperC,
}

impl DutyCase {
    /// The words the reports use.
    pub fn label(self) -> &'static str {
        match self {
            DutyCase::StudyPoint => "study point",
            DutyCase::HighVoltage => "light load, high voltage",
            DutyCase::HighVoltageUpperC => "light load, high voltage, C +tol",
        }
    }

    /// A short label for narrow tables.
    pub fn short(self) -> &'static str {
        match self {
            DutyCase::StudyPoint => "study",
            DutyCase::HighVoltage => "Vmax",
            DutyCase::HighVoltageUpperC => "Vmax+C",
        }
    }
}

/// The envelope's high-voltage case as studied: the load level, the floor of every source's
/// EMF (pu) and the capacitance's upper tolerance (%).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DutyEnvelope {
    pub level: String,
    pub source_voltage_floor_pu: f64,
    pub capacitance_plus_percent: f64,
}

/// One bank in one scenario × configuration.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DutyRow {
    pub scenario: String,
    pub configuration: String,
    pub bank: String,
    pub steps: u32,
    /// The solved fundamental voltage at the bank's bus in the governing case, pu of
    /// nominal.
    pub bus_v_pu: f64,
    /// The governing case's ratios.
    pub ratios: DutyRatios,
    /// The case that governs (the highest quantity against its limit).
    pub case: DutyCase,
    /// The study point's ratios, for reference.
    pub study_point: DutyRatios,
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
    duty_ratios_at(bank, n, p, bus_kv, 1.0, orders, harmonic_a)
}

/// [`duty_ratios`] with the capacitance `c_factor` times its rated value (X_C / k, the
/// detuning factor k·p; rated voltage, current and kvar unchanged).
pub fn duty_ratios_at(
    bank: &CapacitorBank,
    n: u32,
    p: f64,
    bus_kv: f64,
    c_factor: f64,
    orders: &[f64],
    harmonic_a: &[f64],
) -> DutyRatios {
    let xc = bank.step_xc_ohm() / f64::from(n.max(1)) / c_factor;
    let v1 = bus_kv * 1000.0 / 3f64.sqrt() / (1.0 - p * c_factor);
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

/// The highest ratio of any quantity to its limit.
fn severity(r: &DutyRatios, l: &DutyLimits) -> f64 {
    let of = |v: f64, lim: Option<f64>| lim.map_or(0.0, |x| v / x);
    of(r.rms_voltage, Some(l.rms_voltage))
        .max(of(r.peak_voltage, l.peak_voltage))
        .max(of(r.rms_current, Some(l.rms_current)))
        .max(of(r.kvar, l.kvar))
}

/// The voltages of a duty row's cases: the study point's solved voltage at each bank's bus
/// (pu), the high-voltage case's (`None` where not solved) and the upper tolerance's
/// capacitance factor k = 1 + plus/100.
#[derive(Debug, Clone, Copy)]
pub struct CaseVoltages<'a> {
    pub study_point: &'a [f64],
    pub high: Option<&'a [f64]>,
    pub c_upper: f64,
}

/// The duty of every energized bank in `result`, governed by the worst of its cases.
#[allow(clippy::too_many_arguments)]
pub fn duty_rows(
    result: &Distortion,
    banks: &[CapacitorBank],
    steps: &[u32],
    cases: CaseVoltages<'_>,
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
            let kv = net.buses[model.bus].kv;
            let at = |v_pu: f64, k: f64| {
                duty_ratios_at(
                    bank,
                    n,
                    model.p,
                    kv * v_pu,
                    k,
                    orders,
                    &result.bank_current_a[b],
                )
            };
            let v0 = cases.study_point.get(b).copied().unwrap_or(1.0);
            let limits = limits_for(set, bank);
            let study_point = at(v0, 1.0);
            let mut governing = (DutyCase::StudyPoint, v0, study_point);
            if let Some(v) = cases.high.and_then(|h| h.get(b)).copied() {
                for (case, k) in [
                    (DutyCase::HighVoltage, 1.0),
                    (DutyCase::HighVoltageUpperC, cases.c_upper),
                ] {
                    let r = at(v, k);
                    // On a tie the later (more severe on current and kvar) case governs.
                    if severity(&r, &limits) >= severity(&governing.2, &limits) {
                        governing = (case, v, r);
                    }
                }
            }
            let (case, v_pu, ratios) = governing;
            DutyRow {
                scenario: scenario.to_string(),
                configuration: configuration.to_string(),
                bank: bank.id.clone(),
                steps: n,
                bus_v_pu: v_pu,
                ratios,
                case,
                study_point,
                limits,
                exceeds: ratios.exceeded(&limits).iter().any(|&e| e),
            }
        })
        .collect()
}
