//! Continuous-duty limits of shunt power capacitors, as multiples of rated values.

use serde::Serialize;

/// Continuous limits of a capacitor: multiples of its rated rms voltage, rated peak voltage
/// (√2·U_r), nominal rms current (rated kvar / rated voltage) and rated kvar. `None` where the
/// standard sets none here.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DutyLimits {
    pub rms_voltage: f64,
    pub peak_voltage: Option<f64>,
    pub rms_current: f64,
    pub kvar: Option<f64>,
    pub source: &'static str,
}

/// IEEE Std 18-2012 (shunt power capacitors), continuous operation: 110 % rated rms voltage,
/// 120 % rated peak voltage including harmonics, 135 % nominal rms current, 135 % rated kvar
/// (references.md: verified for the 2002 edition, kept in 2012 from memory).
pub const IEEE_18: DutyLimits = DutyLimits {
    rms_voltage: 1.10,
    peak_voltage: Some(1.20),
    rms_current: 1.35,
    kvar: Some(1.35),
    source: "IEEE 18-2012, continuous operation",
};

/// IEC 60831-1 (≤ 1 kV): 1.10 U_n (8 h in 24 h, taken as the continuous limit here) and
/// 1.30 I_n (references.md: from memory).
pub const IEC_60831_1: DutyLimits = DutyLimits {
    rms_voltage: 1.10,
    peak_voltage: None,
    rms_current: 1.30,
    kvar: None,
    source: "IEC 60831-1 (from memory)",
};

/// IEC 60871-1 (> 1 kV): 1.10 U_n (12 h in 24 h) and 1.30 I_n (references.md: from memory).
pub const IEC_60871_1: DutyLimits = DutyLimits {
    rms_voltage: 1.10,
    peak_voltage: None,
    rms_current: 1.30,
    kvar: None,
    source: "IEC 60871-1 (from memory)",
};

/// A capacitor's transient (switching) overvoltage capability: the peak it withstands as a
/// multiple of its rated peak phase voltage √2·U_r, and the clause it comes from.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TransientCapability {
    pub peak_multiple: f64,
    pub source: &'static str,
}

/// IEEE Std 18-2012, transient overvoltage capability of shunt capacitors: 2.0 × rated peak
/// for switching transients of infrequent occurrence (from memory; the standard ties the
/// multiple to the number of events per year; confirm against the capacitor's data).
pub const IEEE_18_TRANSIENT: TransientCapability = TransientCapability {
    peak_multiple: 2.0,
    source: "IEEE 18-2012, transient overvoltage capability (from memory)",
};

/// IEC 60831-1 (and IEC 60871-1 above 1 kV), switching overvoltages: 2·√2·U_N peak
/// (from memory).
pub const IEC_TRANSIENT: TransientCapability = TransientCapability {
    peak_multiple: 2.0,
    source: "IEC 60831-1 / IEC 60871-1, switching overvoltages (from memory)",
};
