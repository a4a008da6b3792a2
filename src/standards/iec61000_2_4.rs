//! IEC 61000-2-4 (compatibility levels in industrial plants for low-frequency conducted
//! disturbances), harmonic voltage compatibility levels in % of the fundamental for classes
//! 1, 2 and 3. Values from memory (references.md): confirm against a licensed copy. Orders
//! the stored table does not cover (even orders above 6, triplens above 21, interharmonics)
//! have no individual level here; they still count in THD.

use super::Limit;

const SRC: &str = "IEC 61000-2-4, Table of harmonic voltage compatibility levels (from memory)";

/// Stored orders: (order, class 1, class 2, class 3), % of fundamental.
pub const TABLE: [(f64, f64, f64, f64); 11] = [
    (2.0, 2.0, 2.0, 3.0),
    (3.0, 3.0, 5.0, 6.0),
    (4.0, 1.0, 1.0, 1.5),
    (5.0, 3.0, 6.0, 8.0),
    (6.0, 0.5, 0.5, 1.0),
    (7.0, 3.0, 5.0, 7.0),
    (9.0, 1.5, 1.5, 2.5),
    (11.0, 3.0, 3.5, 5.0),
    (13.0, 3.0, 3.0, 4.5),
    (15.0, 0.3, 0.4, 2.0),
    (21.0, 0.2, 0.3, 1.75),
];

/// Voltage THD compatibility level of classes 1, 2, 3, %.
pub const THD: [f64; 3] = [5.0, 8.0, 10.0];

/// The individual compatibility level of `class` (1, 2 or 3) at `order`: the stored table,
/// or for non-triplen odd orders 17 ≤ h ≤ 49 the formula 2.27·(17/h) − 0.27 (classes 1 and
/// 2) or 4.5·(17/h) − 0.5 (class 3).
pub fn voltage_limit(class: u8, order: f64) -> Option<Limit> {
    let col = |r: &(f64, f64, f64, f64)| match class {
        1 => r.1,
        2 => r.2,
        _ => r.3,
    };
    if let Some(r) = TABLE.iter().find(|r| r.0 == order) {
        return Some(Limit {
            value: col(r),
            source: SRC,
        });
    }
    let odd_non_triplen = order.fract() == 0.0 && order % 2.0 == 1.0 && order % 3.0 != 0.0;
    if odd_non_triplen && (17.0..=49.0).contains(&order) {
        let value = if class == 3 {
            4.5 * (17.0 / order) - 0.5
        } else {
            2.27 * (17.0 / order) - 0.27
        };
        return Some(Limit { value, source: SRC });
    }
    None
}

/// The THD compatibility level of `class`.
pub fn thd_limit(class: u8) -> Limit {
    Limit {
        value: THD[usize::from(class.clamp(1, 3) - 1)],
        source: SRC,
    }
}
