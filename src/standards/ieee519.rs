//! IEEE Std 519-2014, *IEEE Recommended Practice and Requirements for Harmonic Control in
//! Electric Power Systems*: Table 1 (voltage distortion limits) and Tables 2–4 (current
//! distortion limits for systems rated 120 V through 69 kV, above 69 kV through 161 kV, and
//! above 161 kV).
//!
//! Band edges (common practice): a bus voltage exactly on a boundary belongs to the lower
//! row of Table 1 (the table reads V ≤ 1.0 kV, 1 kV < V ≤ 69 kV, ...); an Isc/IL ratio
//! exactly on a row boundary of Tables 2–4 belongs to the row it starts (20 is in
//! "20 < 50"); an order exactly on a column boundary belongs to the column it starts (11 is
//! in 11 ≤ h < 17), as the column headings read.

use super::Limit;

const T1: &str = "IEEE 519-2014, Table 1";
const T2: &str = "IEEE 519-2014, Table 2";
const T3: &str = "IEEE 519-2014, Table 3";
const T4: &str = "IEEE 519-2014, Table 4";

/// IEEE 519-2014 Table 1: (upper bus voltage of the row in kV, individual harmonic %, THD %),
/// rows V ≤ 1.0 kV, 1 kV < V ≤ 69 kV, 69 kV < V ≤ 161 kV, V > 161 kV.
pub const TABLE_1: [(f64, f64, f64); 4] = [
    (1.0, 5.0, 8.0),
    (69.0, 3.0, 5.0),
    (161.0, 1.5, 2.5),
    (f64::INFINITY, 1.0, 1.5),
];

/// A row of Tables 2–4: (lowest Isc/IL of the row, odd-harmonic limits by band in % of
/// I_L, TDD limit in %).
pub type CurrentRow = (f64, [f64; 5], f64);

/// IEEE 519-2014 Table 2 (120 V to 69 kV): rows by Isc/IL (lower bound of the row), odd
/// harmonic limits in % of I_L for 3 ≤ h < 11, 11 ≤ h < 17, 17 ≤ h < 23, 23 ≤ h < 35,
/// 35 ≤ h ≤ 50, then TDD.
pub const TABLE_2: [CurrentRow; 5] = [
    (0.0, [4.0, 2.0, 1.5, 0.6, 0.3], 5.0),
    (20.0, [7.0, 3.5, 2.5, 1.0, 0.5], 8.0),
    (50.0, [10.0, 4.5, 4.0, 1.5, 0.7], 12.0),
    (100.0, [12.0, 5.5, 5.0, 2.0, 1.0], 15.0),
    (1000.0, [15.0, 7.0, 6.0, 2.5, 1.4], 20.0),
];

/// IEEE 519-2014 Table 3 (above 69 kV through 161 kV): half of Table 2 (from memory).
pub const TABLE_3: [CurrentRow; 5] = [
    (0.0, [2.0, 1.0, 0.75, 0.3, 0.15], 2.5),
    (20.0, [3.5, 1.75, 1.25, 0.5, 0.25], 4.0),
    (50.0, [5.0, 2.25, 2.0, 0.75, 0.35], 6.0),
    (100.0, [6.0, 2.75, 2.5, 1.0, 0.5], 7.5),
    (1000.0, [7.5, 3.5, 3.0, 1.25, 0.7], 10.0),
];

/// IEEE 519-2014 Table 4 (above 161 kV): rows Isc/IL < 25, 25 < 50, ≥ 50 (from memory).
pub const TABLE_4: [CurrentRow; 3] = [
    (0.0, [1.0, 0.5, 0.38, 0.15, 0.1], 1.5),
    (25.0, [2.0, 1.0, 0.75, 0.3, 0.15], 2.5),
    (50.0, [3.0, 1.5, 1.15, 0.45, 0.22], 3.75),
];

/// Even harmonics are limited to 25 % of the odd harmonic limits (IEEE 519-2014, Tables 2–4,
/// note).
pub const EVEN_FACTOR: f64 = 0.25;

/// Table 1 limits for a bus of `kv` kV: (individual harmonic, THD), % of nominal
/// fundamental voltage.
pub fn voltage_limits(kv: f64) -> (Limit, Limit) {
    let row = TABLE_1.iter().find(|r| kv <= r.0).unwrap_or(&TABLE_1[3]);
    (
        Limit {
            value: row.1,
            source: T1,
        },
        Limit {
            value: row.2,
            source: T1,
        },
    )
}

/// The row of Tables 2–4 that applies at a PCC of `kv` kV with short-circuit ratio
/// `isc_over_il`: its odd-harmonic limits by band, its TDD limit and the table's name.
pub fn current_row(kv: f64, isc_over_il: f64) -> ([f64; 5], f64, &'static str) {
    let (rows, name): (&[CurrentRow], &str) = if kv <= 69.0 {
        (&TABLE_2, T2)
    } else if kv <= 161.0 {
        (&TABLE_3, T3)
    } else {
        (&TABLE_4, T4)
    };
    let row = rows
        .iter()
        .rev()
        .find(|r| isc_over_il >= r.0)
        .unwrap_or(&rows[0]);
    (row.1, row.2, name)
}

/// The column index of Tables 2–4 for an integer order h ≥ 2 (h = 2 shares the first
/// column), `None` above 50.
pub fn band(order: f64) -> Option<usize> {
    match order {
        h if h < 11.0 => Some(0),
        h if h < 17.0 => Some(1),
        h if h < 23.0 => Some(2),
        h if h < 35.0 => Some(3),
        h if h <= 50.0 => Some(4),
        _ => None,
    }
}

/// The individual current limit (% of I_L) at a PCC of `kv` kV and ratio `isc_over_il` for
/// harmonic `order`; even orders at 25 %; `None` for non-integer orders (interharmonics
/// are not in the tables) and above the 50th.
pub fn current_limit(kv: f64, isc_over_il: f64, order: f64) -> Option<Limit> {
    if order.fract() != 0.0 || order < 2.0 {
        return None;
    }
    let (bands, _, source) = current_row(kv, isc_over_il);
    let odd = bands[band(order)?];
    let value = if order % 2.0 == 0.0 {
        odd * EVEN_FACTOR
    } else {
        odd
    };
    Some(Limit { value, source })
}

/// The TDD limit (% of I_L) at a PCC of `kv` kV and ratio `isc_over_il`.
pub fn tdd_limit(kv: f64, isc_over_il: f64) -> Limit {
    let (_, tdd, source) = current_row(kv, isc_over_il);
    Limit { value: tdd, source }
}
