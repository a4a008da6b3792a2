//! Resonance as a band: each bank's scanned resonance order across the capacitance
//! tolerance of the Study sheet and across the supply scenarios, and a flag where the band
//! reaches into the margin of a characteristic order although the nominal value does not.
//!
//! A capacitance C·(1 + t) scales X_C by 1/(1 + t); the scanned order is scaled by the ratio
//! of the hand-check orders √(X_C′/(|Z_th| + X_L)) / √(X_C/(|Z_th| + X_L)) (the reactor's X_L
//! is fixed), which for a plain bank is the textbook shift df/f ≈ −½·dC/C, exact as
//! 1/√(1 + t).

use serde::Serialize;

use super::resonance::{ResonanceRow, Verdict};
use crate::model::Sequence;

/// One bank in one configuration across scenarios and tolerance.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ToleranceBand {
    pub configuration: String,
    pub bank: String,
    /// Lowest and highest resonance order over the band.
    pub low_order: f64,
    pub high_order: f64,
    /// True when the band reaches within the margin of a characteristic order while every
    /// nominal (scenario) result is clear.
    pub flagged: bool,
    /// The characteristic order reached, if flagged.
    pub reaches: Option<f64>,
    /// The sequence network of the rows (zero-sequence bands hold only triplen orders).
    pub sequence: Sequence,
}

/// Scales a scanned order for a capacitance change of `t` (fraction), given the hand-check
/// inputs of the row: X_C/|Z_th| = h_hand² (1 + p·h_hand²)… expressed through the row's own
/// hand order and p.
fn shifted(order: f64, hand: f64, p: f64, t: f64) -> f64 {
    // hand² = X_C / (Z + p·X_C)  ⇒  Z / X_C = 1/hand² − p.
    let z_over_xc = 1.0 / (hand * hand) - p;
    let xc_ratio = 1.0 / (1.0 + t);
    let hand_new = (xc_ratio / (z_over_xc + p)).sqrt();
    order * hand_new / hand
}

/// The bands of every bank and configuration from the resonance rows; `p_of(bank)` gives
/// a bank's detuning factor, tolerance in percent (minus ≤ 0 ≤ plus), `chars` the
/// characteristic orders of the positive- and the zero-sequence scan and `margin` in
/// percent.
pub fn bands(
    rows: &[ResonanceRow],
    p_of: &dyn Fn(&str) -> f64,
    minus_percent: f64,
    plus_percent: f64,
    chars: (&[f64], &[f64]),
    margin: f64,
) -> Vec<ToleranceBand> {
    let mut out: Vec<ToleranceBand> = Vec::new();
    // Rows grouped by (configuration, bank), in order of first appearance.
    let mut index: std::collections::HashMap<(&str, &str, Sequence), usize> =
        std::collections::HashMap::new();
    let mut groups: Vec<Vec<&ResonanceRow>> = Vec::new();
    for r in rows {
        let i = *index
            .entry((r.configuration.as_str(), r.bank.as_str(), r.sequence))
            .or_insert_with(|| {
                groups.push(Vec::new());
                groups.len() - 1
            });
        groups[i].push(r);
    }
    for group in groups {
        let configuration = group[0].configuration.clone();
        let bank = group[0].bank.clone();
        let p = p_of(&bank);
        let sequence = group[0].sequence;
        let chars = if sequence == Sequence::Zero {
            chars.1
        } else {
            chars.0
        };
        let band_of = |order: f64, hand: f64| {
            let mut b = (f64::INFINITY, f64::NEG_INFINITY);
            for t in [minus_percent / 100.0, 0.0, plus_percent / 100.0] {
                let h = shifted(order, hand, p, t);
                b = (b.0.min(h), b.1.max(h));
            }
            b
        };
        let reached = |(lo, hi): (f64, f64)| {
            chars
                .iter()
                .copied()
                .find(|&c| lo <= c * (1.0 + margin / 100.0) && hi >= c * (1.0 - margin / 100.0))
        };
        // The named (worst) peak's band over the scenarios; then every peak's own band, the
        // first that reaches a characteristic order replacing it.
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for r in &group {
            let Some(peak) = r.peak else { continue };
            let (l, h) = band_of(peak.order, r.hand_order);
            (lo, hi) = (lo.min(l), hi.max(h));
        }
        if !lo.is_finite() {
            continue;
        }
        let mut reaches = reached((lo, hi));
        if reaches.is_none()
            && let Some((band, c)) = group
                .iter()
                .flat_map(|r| {
                    r.peaks
                        .iter()
                        .map(|sp| band_of(sp.peak.order, r.hand_order))
                })
                .find_map(|b| reached(b).map(|c| (b, c)))
        {
            (lo, hi) = band;
            reaches = Some(c);
        }
        let nominal_clear = group.iter().all(|r| r.verdict != Verdict::Resonant);
        out.push(ToleranceBand {
            configuration,
            bank,
            low_order: lo,
            high_order: hi,
            flagged: nominal_clear && reaches.is_some(),
            reaches: if nominal_clear { reaches } else { None },
            sequence,
        });
    }
    out
}
