//! Winding connections, sequences and background distortion (input contract, version 2:
//! *Phasor summation, winding connections and sequences*, *Background distortion*).

use serde::Serialize;

/// The symmetrical-component sequence a balanced harmonic order belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Sequence {
    Positive,
    Negative,
    Zero,
}

impl Sequence {
    /// The sequence of a balanced harmonic of order h: h = 3k+1 positive, 3k−1 negative,
    /// 3k zero; non-integer orders (interharmonics) positive (input contract, version 2).
    pub fn of(order: f64) -> Sequence {
        let r = order.round();
        if (order - r).abs() > 1e-9 {
            return Sequence::Positive;
        }
        match (r as i64).rem_euclid(3) {
            0 => Sequence::Zero,
            1 => Sequence::Positive,
            _ => Sequence::Negative,
        }
    }

    /// σ in the phase shift σ·θ a transformer gives this sequence: +1 positive, −1
    /// negative, 0 zero (zero-sequence sets have their own shift, [`VectorGroup::zero_shift_deg`]).
    pub fn sign(self) -> f64 {
        match self {
            Sequence::Positive => 1.0,
            Sequence::Negative => -1.0,
            Sequence::Zero => 0.0,
        }
    }

    /// The word printed in reports.
    pub fn word(self) -> &'static str {
        match self {
            Sequence::Positive => "positive",
            Sequence::Negative => "negative",
            Sequence::Zero => "zero",
        }
    }
}

/// One winding's connection in an IEC 60076-1 vector group.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Winding {
    Delta,
    Wye,
    WyeGrounded,
    Zigzag,
    ZigzagGrounded,
}

impl Winding {
    fn letter(self, upper: bool) -> &'static str {
        match (self, upper) {
            (Winding::Delta, true) => "D",
            (Winding::Delta, false) => "d",
            (Winding::Wye, true) => "Y",
            (Winding::Wye, false) => "y",
            (Winding::WyeGrounded, true) => "YN",
            (Winding::WyeGrounded, false) => "yn",
            (Winding::Zigzag, true) => "Z",
            (Winding::Zigzag, false) => "z",
            (Winding::ZigzagGrounded, true) => "ZN",
            (Winding::ZigzagGrounded, false) => "zn",
        }
    }
}

/// The zero-sequence equivalent of a two-winding transformer, by winding connection
/// (the zero-sequence equivalent circuits of symmetrical-component analysis, textbook,
/// from memory): grounded wye on both sides passes
/// zero sequence through Z₀; grounded wye (or grounded zigzag) facing a delta shunts Z₀ to
/// ground on the grounded side and blocks it on the other; every other combination is open.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ZeroPath {
    /// Z₀ in series between the two buses (YNyn).
    Series,
    /// Z₀ from the HV bus to ground (YNd, ZNy, ...).
    ShuntHv,
    /// Z₀ from the LV bus to ground (Dyn, Yzn, ...).
    ShuntLv,
    /// Z₀ from each bus to ground (ZNzn, YNzn with the zigzag grounded).
    ShuntBoth,
    /// No zero-sequence path through or at the transformer.
    Open,
}

/// An IEC 60076-1 vector group: HV winding, LV winding and clock number (the LV winding's
/// positive-sequence voltage lags the HV winding's by clock × 30°).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct VectorGroup {
    pub hv: Winding,
    pub lv: Winding,
    /// 0..=11.
    pub clock: u8,
}

impl VectorGroup {
    /// Parses `Dyn11`, `YNd1`, `Yy0`, `Dd0`, `Dzn0`, ... (letters case as written by IEC
    /// 60076-1, but matched case-insensitively on the winding letters: the first winding
    /// is always the HV one). `None` when it is not a two-winding vector group.
    pub fn parse(text: &str) -> Option<VectorGroup> {
        let t: String = text.chars().filter(|c| !c.is_whitespace()).collect();
        let lower = t.to_ascii_lowercase();
        let digits = lower.trim_start_matches(|c: char| c.is_ascii_alphabetic());
        let letters = &lower[..lower.len() - digits.len()];
        let clock: u8 = digits.parse().ok().filter(|c| *c <= 11)?;
        let winding = |s: &str| -> Option<(Winding, usize)> {
            for (p, w) in [
                ("yn", Winding::WyeGrounded),
                ("zn", Winding::ZigzagGrounded),
                ("d", Winding::Delta),
                ("y", Winding::Wye),
                ("z", Winding::Zigzag),
            ] {
                if s.starts_with(p) {
                    return Some((w, p.len()));
                }
            }
            None
        };
        let (hv, a) = winding(letters)?;
        let (lv, b) = winding(&letters[a..])?;
        if a + b != letters.len() {
            return None;
        }
        let g = VectorGroup { hv, lv, clock };
        g.clock_is_possible().then_some(g)
    }

    /// Odd clock numbers need one delta or zigzag and one wye winding; even ones need
    /// windings of the same kind (IEC 60076-1, from memory; zigzag windings allow both).
    fn clock_is_possible(self) -> bool {
        let star = |w: Winding| matches!(w, Winding::Wye | Winding::WyeGrounded);
        let zig = |w: Winding| matches!(w, Winding::Zigzag | Winding::ZigzagGrounded);
        if zig(self.hv) || zig(self.lv) {
            return true;
        }
        let same = star(self.hv) == star(self.lv);
        same == self.clock.is_multiple_of(2)
    }

    /// The IEC spelling, e.g. `Dyn11`.
    pub fn label(self) -> String {
        format!(
            "{}{}{}",
            self.hv.letter(true),
            self.lv.letter(false),
            self.clock
        )
    }

    /// The contract's default: `Dyn1` at 60 Hz, `Dyn11` at 50 Hz (common practice).
    pub fn default_for(frequency_hz: f64) -> VectorGroup {
        VectorGroup {
            hv: Winding::Delta,
            lv: Winding::WyeGrounded,
            clock: if frequency_hz == 60.0 { 1 } else { 11 },
        }
    }

    /// Positive-sequence shift of the LV side against the HV side, degrees: −clock × 30°
    /// (IEC 60076-1). Negative sequence takes the opposite sign.
    pub fn positive_shift_deg(self) -> f64 {
        -30.0 * f64::from(self.clock)
    }

    /// Zero-sequence shift of the LV side against the HV side, degrees, where a series
    /// path exists (YNyn with an even clock): 180° when clock/2 is odd (the windings are
    /// reversed), 0° otherwise; a zero-sequence set is unchanged by a cyclic relabelling
    /// of the phases (common practice).
    pub fn zero_shift_deg(self) -> f64 {
        if (self.clock / 2) % 2 == 1 {
            180.0
        } else {
            0.0
        }
    }

    /// The zero-sequence equivalent by winding connection ([`ZeroPath`]).
    pub fn zero_path(self) -> ZeroPath {
        use Winding::*;
        let grounded_zig = |w| w == ZigzagGrounded;
        match (self.hv, self.lv) {
            (WyeGrounded, WyeGrounded) => ZeroPath::Series,
            (a, b) if grounded_zig(a) && grounded_zig(b) => ZeroPath::ShuntBoth,
            (a, _) if grounded_zig(a) => ZeroPath::ShuntHv,
            (_, b) if grounded_zig(b) => ZeroPath::ShuntLv,
            (WyeGrounded, Delta) => ZeroPath::ShuntHv,
            (Delta, WyeGrounded) => ZeroPath::ShuntLv,
            _ => ZeroPath::Open,
        }
    }
}

/// How a capacitor bank's phases are connected (sheet `Capacitors`, `Connection`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum BankConnection {
    Delta,
    Wye,
    WyeGrounded,
}

impl BankConnection {
    /// The contract's default: delta on buses up to 1 kV, ungrounded wye above (common
    /// practice).
    pub fn default_for(bus_kv: f64) -> BankConnection {
        if bus_kv <= 1.0 {
            BankConnection::Delta
        } else {
            BankConnection::Wye
        }
    }

    /// Only a grounded-wye bank has a zero-sequence path.
    pub fn has_zero_path(self) -> bool {
        self == BankConnection::WyeGrounded
    }

    /// The contract's spelling.
    pub fn label(self) -> &'static str {
        match self {
            BankConnection::Delta => "delta",
            BankConnection::Wye => "wye",
            BankConnection::WyeGrounded => "wye grounded",
        }
    }
}

/// One row of the `Background` sheet: the open-circuit harmonic EMF behind a source.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BackgroundLine {
    pub source: String,
    /// Harmonic order h > 1.
    pub order: f64,
    /// % of the source bus's nominal voltage.
    pub voltage_percent: f64,
    /// Angle in degrees (used with `phasor` summation), referred to the source's
    /// fundamental EMF; `None` = 0.
    pub angle_deg: Option<f64>,
}
