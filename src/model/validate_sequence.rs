//! Checks of the version 2 sequence and background inputs: zero-sequence data, vector
//! groups, the `Background` sheet and the angles `phasor` summation needs.

use std::collections::HashSet;

use super::validate::Collector;
use super::{Plant, Summation, ZeroPath};

impl Plant {
    // Long: one check per sequence-model field, in the contract's order.
    pub(super) fn validate_sequences(&self, c: &mut Collector<'_>) {
        const SRC: &str = "Sources";
        for (i, s) in self.sources.iter().enumerate() {
            c.index = Some(i);
            if let Some(v) = s.zero_short_circuit_mva {
                c.positive(SRC, &s.id, "Zero-sequence MVA", v);
                c.magnitude(SRC, &s.id, "Zero-sequence MVA", v);
            }
            if let Some(v) = s.zero_x_over_r {
                c.positive(SRC, &s.id, "Zero-sequence X/R", v);
            }
        }
        const TX: &str = "Transformers";
        for (i, t) in self.transformers.iter().enumerate() {
            c.index = Some(i);
            let Some(z0) = t.zero_impedance_percent else {
                continue;
            };
            c.positive(TX, &t.id, "Zero-sequence impedance", z0);
            let group = t.vector_group(self.study.frequency_hz);
            if group.zero_path() == ZeroPath::Open {
                c.push(
                    TX,
                    &t.id,
                    "Zero-sequence impedance",
                    format!(
                        "is given but a {} transformer has no zero-sequence path (it needs a grounded wye or zigzag winding, YN/yn or ZN/zn): leave it blank",
                        group.label()
                    ),
                );
            }
        }
        const BG: &str = "Background";
        let mut seen = HashSet::new();
        for (i, b) in self.background.iter().enumerate() {
            c.index = Some(i);
            if !self.sources.iter().any(|s| s.id == b.source) {
                c.push(
                    BG,
                    &b.source,
                    "Source",
                    format!("source \"{}\" is not on the Sources sheet", b.source),
                );
            }
            if !(b.order.is_finite() && b.order > 1.0) {
                c.push(
                    BG,
                    &b.source,
                    "Order",
                    format!("must be a harmonic order above 1, found {}", b.order),
                );
            } else {
                c.magnitude(BG, &b.source, "Order", b.order);
                if !seen.insert((b.source.as_str(), b.order.to_bits())) {
                    c.push(
                        BG,
                        &b.source,
                        "Order",
                        format!(
                            "order {} appears twice for source \"{}\"",
                            b.order, b.source
                        ),
                    );
                }
            }
            if !(b.voltage_percent.is_finite() && (0.0..=100.0).contains(&b.voltage_percent)) {
                c.push(
                    BG,
                    &b.source,
                    "Voltage",
                    format!(
                        "must be a percentage of nominal voltage from 0 to 100, found {}",
                        b.voltage_percent
                    ),
                );
            }
            if let Some(a) = b.angle_deg
                && !a.is_finite()
            {
                c.push(
                    BG,
                    &b.source,
                    "Angle",
                    format!("must be a number, found {a}"),
                );
            }
        }
        if self.study.summation == Summation::Phasor {
            c.index = None;
            for s in &self.spectra {
                for l in s.lines.iter().filter(|l| l.angle_deg.is_none()) {
                    c.push(
                        "Spectra",
                        &s.name,
                        "Angle",
                        format!(
                            "order {} has no angle: \"phasor\" summation needs every spectrum line's \"Angle (deg)\"",
                            l.order
                        ),
                    );
                }
            }
        }
    }
}
