//! IEEE Std 519-2014's statistical evaluation of measured harmonics at the PCC (clause 5,
//! from memory):
//!
//! - voltage (5.1): the daily 99th percentile of very short (3 s) values below 1.5 × Table 1,
//!   and the weekly 95th percentile of short (10 min) values below Table 1;
//! - current (5.2): the daily 99th percentile of very short values below 2.0 × Tables 2–4,
//!   the weekly 99th percentile of short values below 1.5 × the tables, and the weekly
//!   95th percentile of short values below the tables.
//!
//! Each limit applies to every individual order and to THD (voltage) or TDD (current).
//! Percentiles are nearest-rank: the value at rank ⌈p·N⌉ of the N values sorted ascending
//! (common practice). Days are calendar days of the log's time stamps (each stamp the end
//! of its interval); weeks run 7 days from the first day logged. Short values are taken as
//! logged, or, for a channel logged only at 3 s, aggregated as the rms of the 3-s values in
//! each clock-aligned 10-min interval (IEC 61000-4-30 aggregation, from memory). Voltage
//! harmonics are in % of the measured fundamental (taken as the nominal); currents in % of
//! I_L.

use std::collections::BTreeMap;

use serde::Serialize;

use crate::io::recordings::Quantity;
use crate::io::recordings::harmonic_log::{HarmonicLog, Interval, Magnitude};
use crate::standards::ieee519;

/// The limits' basis at the recording point.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LimitsAt {
    pub kv: f64,
    /// Maximum demand load current, A.
    pub i_l_a: f64,
    pub isc_over_il: f64,
}

/// One test of one period: the percentile of one order (or THD/TDD) against its limit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StatRow {
    /// e.g. `daily 99th percentile of 3 s values`.
    pub test: &'static str,
    /// The clause of IEEE 519-2014 the test is from.
    pub clause: &'static str,
    /// `2026-03-02` (a day) or `week from 2026-03-02`.
    pub period: String,
    /// `None` = THD (voltage) or TDD (current).
    pub order: Option<u32>,
    /// The percentile, % (of the fundamental for voltage, of I_L for current).
    pub value_percent: f64,
    /// The table's limit × the test's multiplier, %.
    pub limit_percent: f64,
    pub multiplier: f64,
    pub exceeds: bool,
    /// Values in the period and the share of the period they cover, %.
    pub values: usize,
    pub coverage_percent: f64,
}

/// The evaluation of one channel of a log.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Compliance {
    pub file: String,
    pub channel: String,
    pub quantity: Quantity,
    /// The limits' basis: the PCC's kV, I_L and Isc/IL.
    pub basis: LimitsAt,
    pub rows: Vec<StatRow>,
    /// First and last time stamps logged, and the days between them.
    pub first: String,
    pub last: String,
    pub days: f64,
    /// Why a test could not run (too little data, no fundamental in amperes ...).
    pub notes: Vec<String>,
}

impl Compliance {
    /// Whether any test exceeds its limit.
    pub fn exceeds(&self) -> bool {
        self.rows.iter().any(|r| r.exceeds)
    }
}

/// Per time stamp, per order, the value in % (voltage: of the fundamental; current: of I_L).
type Series = BTreeMap<i64, BTreeMap<u32, f64>>;

/// Evaluates every voltage and current channel of `log` against the limits at `at`.
pub fn evaluate(log: &HarmonicLog, at: &LimitsAt) -> Vec<Compliance> {
    let mut out = Vec::new();
    for (c, ch) in log.channels.iter().enumerate() {
        // Currents are judged in % of I_L: without a positive I_L there is nothing to judge.
        let no_demand =
            ch.quantity == Quantity::Current && !(at.i_l_a > 0.0 && at.i_l_a.is_finite());
        if ch.quantity == Quantity::Other {
            continue;
        }
        if no_demand {
            out.push(Compliance {
                file: log.file.clone(),
                channel: ch.name.clone(),
                quantity: ch.quantity,
                basis: *at,
                rows: Vec::new(),
                first: String::new(),
                last: String::new(),
                days: 0.0,
                notes: vec![format!(
                    "{}: I_L is not known (no Max demand current on the Study sheet and no loads), so the currents cannot be judged in % of I_L",
                    ch.name
                )],
            });
            continue;
        }
        let mut notes = Vec::new();
        let mut series: BTreeMap<Interval, Series> = BTreeMap::new();
        let mut raw: BTreeMap<(Interval, i64), BTreeMap<u32, Magnitude>> = BTreeMap::new();
        for r in log.rows.iter().filter(|r| r.channel == c) {
            raw.entry((r.interval, (r.time_s * 1000.0).round() as i64))
                .or_default()
                .insert(r.order, r.value);
        }
        for ((interval, t), orders) in &raw {
            match percents(orders, ch.quantity, at.i_l_a) {
                Some(p) => {
                    series.entry(*interval).or_default().insert(*t, p);
                }
                None if notes.is_empty() => notes.push(format!(
                    "{}: values need the fundamental (order 1) at the same time, in {}, to be put in % of {}",
                    ch.name,
                    if ch.quantity == Quantity::Current { "amperes" } else { "volts" },
                    if ch.quantity == Quantity::Current { "I_L" } else { "the fundamental" }
                )),
                None => {}
            }
        }
        if !series.contains_key(&Interval::VeryShort) {
            notes.push(format!(
                "{}: no 3-s values, so the daily 99th-percentile test (clause {}) was not evaluated",
                ch.name,
                if ch.quantity == Quantity::Voltage { "5.1 a)" } else { "5.2 a)" }
            ));
        }
        if !series.contains_key(&Interval::Short)
            && let Some(vs) = series.get(&Interval::VeryShort)
        {
            let agg = aggregate(vs);
            notes.push(format!(
                "{}: 10-min values aggregated from the 3-s values ({} intervals)",
                ch.name,
                agg.len()
            ));
            series.insert(Interval::Short, agg);
        }
        let times: Vec<i64> = series.values().flat_map(|s| s.keys().copied()).collect();
        let (Some(&t0), Some(&t1)) = (times.iter().min(), times.iter().max()) else {
            continue;
        };
        let mut rows = Vec::new();
        for (interval, s) in &series {
            rows.extend(tests(s, *interval, ch.quantity, at));
        }
        let days = (t1 - t0) as f64 / 86_400_000.0;
        if days < 7.0 {
            notes.push(format!("{}: {days:.2} days logged; IEEE 519-2014 evaluates a week at least, so the weekly tests cover less than a week", ch.name));
        }
        out.push(Compliance {
            file: log.file.clone(),
            channel: ch.name.clone(),
            quantity: ch.quantity,
            basis: *at,
            rows,
            first: stamp(t0),
            last: stamp(t1),
            days,
            notes,
        });
    }
    out
}

/// One time stamp's orders in %: voltage harmonics over the fundamental, currents over I_L;
/// `None` when the conversion needs an order 1 that is missing.
fn percents(
    orders: &BTreeMap<u32, Magnitude>,
    q: Quantity,
    i_l_a: f64,
) -> Option<BTreeMap<u32, f64>> {
    let fundamental = orders.get(&1).and_then(|m| match m {
        Magnitude::Absolute(x) => Some(*x),
        Magnitude::Percent(_) => None,
    });
    let mut out = BTreeMap::new();
    for (&h, m) in orders.iter().filter(|(h, _)| **h >= 2) {
        let p = match (q, m) {
            (Quantity::Voltage, Magnitude::Percent(p)) => *p,
            (Quantity::Voltage, Magnitude::Absolute(v)) => {
                100.0 * v / fundamental.filter(|f| *f > 0.0)?
            }
            (_, Magnitude::Absolute(a)) => 100.0 * a / i_l_a,
            (_, Magnitude::Percent(p)) => p * fundamental? / i_l_a,
        };
        out.insert(h, p);
    }
    Some(out)
}

/// 10-min values from 3-s ones: per order, the rms of the values stamped in (t − 10 min, t]
/// with t on the clock's 10-min marks.
fn aggregate(vs: &Series) -> Series {
    let mut sums: BTreeMap<i64, BTreeMap<u32, (f64, usize)>> = BTreeMap::new();
    for (&t, orders) in vs {
        let end = (t + 599_999).div_euclid(600_000) * 600_000;
        for (&h, &v) in orders {
            let e = sums.entry(end).or_default().entry(h).or_insert((0.0, 0));
            e.0 += v * v;
            e.1 += 1;
        }
    }
    sums.into_iter()
        .map(|(t, o)| {
            (
                t,
                o.into_iter()
                    .map(|(h, (s, n))| (h, (s / n as f64).sqrt()))
                    .collect(),
            )
        })
        .collect()
}

/// IEEE 519-2014 clause 5's statistical tests: (interval, voltage?, test, clause,
/// percentile, multiplier of the table's limit, weekly?).
#[rustfmt::skip]
const TESTS: [(Interval, bool, &str, &str, f64, f64, bool); 5] = [
    (Interval::VeryShort, true, "daily 99th percentile of 3 s values", "5.1 a)", 0.99, 1.5, false),
    (Interval::Short, true, "weekly 95th percentile of 10 min values", "5.1 b)", 0.95, 1.0, true),
    (Interval::VeryShort, false, "daily 99th percentile of 3 s values", "5.2 a)", 0.99, 2.0, false),
    (Interval::Short, false, "weekly 99th percentile of 10 min values", "5.2 b)", 0.99, 1.5, true),
    (Interval::Short, false, "weekly 95th percentile of 10 min values", "5.2 c)", 0.95, 1.0, true),
];

/// The tests of one interval class, per period.
fn tests(s: &Series, interval: Interval, q: Quantity, at: &LimitsAt) -> Vec<StatRow> {
    let voltage = q == Quantity::Voltage;
    let specs: Vec<(&str, &str, f64, f64, bool)> = (TESTS.iter())
        .filter(|t| t.0 == interval && t.1 == voltage)
        .map(|t| (t.2, t.3, t.4, t.5, t.6))
        .collect();
    let Some(&first) = s.keys().next() else {
        return Vec::new();
    };
    let day_of = |t: i64| (t - 1).div_euclid(86_400_000);
    let mut rows = Vec::new();
    for (test, clause, p, mult, weekly) in specs {
        let mut periods: BTreeMap<i64, Vec<&BTreeMap<u32, f64>>> = BTreeMap::new();
        for (&t, v) in s {
            let key = if weekly {
                (day_of(t) - day_of(first)).div_euclid(7)
            } else {
                day_of(t)
            };
            periods.entry(key).or_default().push(v);
        }
        for (key, vals) in periods {
            let start_day = if weekly { day_of(first) + 7 * key } else { key };
            let period = if weekly {
                format!("week from {}", day_stamp(start_day))
            } else {
                day_stamp(start_day)
            };
            let expected = if weekly { 7.0 * 86_400.0 } else { 86_400.0 } / interval.seconds();
            let coverage = 100.0 * vals.len() as f64 / expected;
            let items = period_items(&vals, voltage, at);
            for (order, mut xs, limit) in items {
                let (Some(limit), Some(value)) = (limit, percentile(&mut xs, p)) else {
                    continue;
                };
                rows.push(StatRow {
                    test,
                    clause,
                    period: period.clone(),
                    order,
                    value_percent: value,
                    limit_percent: limit * mult,
                    multiplier: mult,
                    exceeds: value > limit * mult,
                    values: xs.len(),
                    coverage_percent: coverage,
                });
            }
        }
    }
    rows
}

/// Per order of a period's values, and for THD/TDD (`None`), the values and the table's
/// limit (IEEE 519-2014 Table 1 for voltage, Tables 2–4 for current).
fn period_items(
    vals: &[&BTreeMap<u32, f64>],
    voltage: bool,
    at: &LimitsAt,
) -> Vec<(Option<u32>, Vec<f64>, Option<f64>)> {
    let mut orders: Vec<u32> = vals.iter().flat_map(|v| v.keys().copied()).collect();
    orders.sort_unstable();
    orders.dedup();
    let mut items: Vec<(Option<u32>, Vec<f64>, Option<f64>)> = (orders.iter())
        .map(|&h| {
            let limit = if voltage {
                Some(ieee519::voltage_limits(at.kv).0.value)
            } else {
                ieee519::current_limit(at.kv, at.isc_over_il, h as f64).map(|l| l.value)
            };
            let xs = vals.iter().filter_map(|v| v.get(&h).copied()).collect();
            (Some(h), xs, limit)
        })
        .collect();
    let total: Vec<f64> = (vals.iter())
        .map(|v| v.values().map(|x| x * x).sum::<f64>().sqrt())
        .collect();
    let total_limit = if voltage {
        ieee519::voltage_limits(at.kv).1.value
    } else {
        ieee519::tdd_limit(at.kv, at.isc_over_il).value
    };
    items.push((None, total, Some(total_limit)));
    items
}

/// The nearest-rank `p` percentile of `xs`: the value at rank ⌈p·N⌉ of the sorted values
/// (common practice); `None` when empty.
pub fn percentile(xs: &mut [f64], p: f64) -> Option<f64> {
    if xs.is_empty() {
        return None;
    }
    xs.sort_by(f64::total_cmp);
    let rank = ((p * xs.len() as f64).ceil() as usize).clamp(1, xs.len());
    Some(xs[rank - 1])
}

/// `YYYY-MM-DD` of a day number (days since 1970-01-01).
fn day_stamp(day: i64) -> String {
    let (y, m, d) = crate::io::provenance::civil_from_days(day);
    format!("{y:04}-{m:02}-{d:02}")
}

/// `YYYY-MM-DD hh:mm:ss` of a time in ms since 1970-01-01.
fn stamp(ms: i64) -> String {
    let s = ms.div_euclid(1000);
    let tod = s.rem_euclid(86_400);
    format!(
        "{} {:02}:{:02}:{:02}",
        day_stamp(s.div_euclid(86_400)),
        tod / 3600,
        tod / 60 % 60,
        tod % 60
    )
}
