//! Harmonic logs as CSV, one value per row, as power-quality analyzers export their
//! aggregated measurements (the contract is ours, README "Recordings"):
//!
//! ```text
//! Time,Channel,Order,Value,Unit[,Angle (deg)][,Interval]
//! 2026-03-02 00:00:03,V1,5,2.1,%
//! ```
//!
//! - `Time`: `YYYY-MM-DD hh:mm:ss[.fff]` (or with `T`), the end of the aggregation interval.
//! - `Channel`: a name; with unit `%` a name starting with V or U is a voltage, with I a
//!   current.
//! - `Order`: 1 (the fundamental) to 50.
//! - `Value`: ≥ 0, in `Unit`: `%` of the same channel's fundamental, or `V`, `kV`, `A`, `kA`.
//! - `Interval`: `3 s` (very short) or `10 min` (short); without the column each channel's
//!   interval is the median spacing of its times, which must be one of the two.
//!
//! Headers match case-insensitively, in any order; a cell with a comma is quoted.

use super::{Quantity, RecordingError, unit_quantity};
use crate::io::recordings::comtrade::cfg::days_from_civil;

/// The aggregation interval of a log row (IEC 61000-4-30 class A as IEEE 519-2014 clause
/// 4 uses it, from memory): very short (3 s, 150/180 cycles) or short (10 min).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Interval {
    VeryShort,
    Short,
}

impl Interval {
    /// The interval's length, s.
    pub fn seconds(self) -> f64 {
        match self {
            Interval::VeryShort => 3.0,
            Interval::Short => 600.0,
        }
    }

    /// The word the reports use.
    pub fn label(self) -> &'static str {
        match self {
            Interval::VeryShort => "3 s",
            Interval::Short => "10 min",
        }
    }
}

/// How a value is given.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub enum Magnitude {
    /// % of the same channel's fundamental at the same time.
    Percent(f64),
    /// Volts or amperes (unit factor applied).
    Absolute(f64),
}

use serde::Serialize;

/// One row.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LogRow {
    /// Seconds since 1970-01-01 00:00 of the time as written (no time zone is applied).
    pub time_s: f64,
    /// Index into [`HarmonicLog::channels`].
    pub channel: usize,
    pub order: u32,
    pub value: Magnitude,
    pub angle_deg: Option<f64>,
    pub interval: Interval,
    /// Line in the file (1-based), for messages.
    pub line: usize,
}

/// A channel of the log.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LogChannel {
    pub name: String,
    pub quantity: Quantity,
}

/// A harmonic log, read.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HarmonicLog {
    pub file: String,
    pub channels: Vec<LogChannel>,
    pub rows: Vec<LogRow>,
}

const COLUMNS: [&str; 7] = [
    "time",
    "channel",
    "order",
    "value",
    "unit",
    "angle (deg)",
    "interval",
];

/// Reads the harmonic log at `path`.
pub fn read_log(path: &std::path::Path) -> Result<HarmonicLog, RecordingError> {
    let name = path.display().to_string();
    let bytes = std::fs::read(path).map_err(|e| RecordingError::whole(&name, e.to_string()))?;
    let text = String::from_utf8(bytes)
        .map_err(|_| RecordingError::whole(&name, "not UTF-8 text".into()))?;
    parse_log(&name, &text)
}

/// Reads a harmonic log from `text` (file name `file` for messages).
pub fn parse_log(file: &str, text: &str) -> Result<HarmonicLog, RecordingError> {
    // Long: a reader that takes one column per step, each with its own located error.
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut lines = text
        .split('\n')
        .enumerate()
        .map(|(i, l)| (i + 1, l.trim_end_matches('\r')));
    let Some((hn, header)) = lines.find(|l| !l.1.trim().is_empty()) else {
        return Err(RecordingError::whole(file, "empty: no header row".into()));
    };
    let head = split_csv(header).map_err(|m| RecordingError::at_line(file, hn, None, m))?;
    let mut col = [None; 7];
    for (j, h) in head.iter().enumerate() {
        let h = h.trim().to_ascii_lowercase();
        match COLUMNS.iter().position(|c| *c == h) {
            Some(k) if col[k].is_some() => {
                return Err(RecordingError::at_line(
                    file,
                    hn,
                    Some((j + 1, &h)),
                    "a second column of this name".into(),
                ));
            }
            Some(k) => col[k] = Some(j),
            None => {
                return Err(RecordingError::at_line(
                    file,
                    hn,
                    Some((j + 1, h.as_str())),
                    "unknown column; the columns are Time, Channel, Order, Value, Unit, Angle (deg), Interval".into(),
                ));
            }
        }
    }
    for (k, c) in COLUMNS.iter().enumerate().take(5) {
        if col[k].is_none() {
            return Err(RecordingError::at_line(
                file,
                hn,
                None,
                format!("no `{c}` column"),
            ));
        }
    }
    let mut log = HarmonicLog {
        file: file.to_string(),
        channels: Vec::new(),
        rows: Vec::new(),
    };
    let mut given_interval = Vec::new();
    for (n, line) in lines {
        if line.trim().is_empty() {
            continue;
        }
        let cells = split_csv(line).map_err(|m| RecordingError::at_line(file, n, None, m))?;
        let cell = |k: usize| col[k].and_then(|j| cells.get(j)).map_or("", |s| s.trim());
        let err = |k: usize, m: String| {
            RecordingError::at_line(file, n, Some((col[k].unwrap_or(0) + 1, COLUMNS[k])), m)
        };
        if cells.len() != head.len() {
            return Err(RecordingError::at_line(
                file,
                n,
                None,
                format!("{} cells under {} headers", cells.len(), head.len()),
            ));
        }
        let time_s = parse_time(cell(0)).ok_or_else(|| {
            err(
                0,
                format!("`{}` is not a time YYYY-MM-DD hh:mm:ss", cell(0)),
            )
        })?;
        let name = cell(1);
        if name.is_empty() {
            return Err(err(1, "no channel".into()));
        }
        let order = match cell(2).parse::<u32>() {
            Ok(h) if (1..=50).contains(&h) => h,
            _ => return Err(err(2, format!("`{}` is not an order 1 to 50", cell(2)))),
        };
        let v = match cell(3).parse::<f64>() {
            Ok(v) if v.is_finite() && v >= 0.0 => v,
            _ => return Err(err(3, format!("`{}` is not a number ≥ 0", cell(3)))),
        };
        let unit = cell(4);
        let (quantity, value) = if unit == "%" {
            let q = match name.chars().next().map(|c| c.to_ascii_uppercase()) {
                Some('V' | 'U') => Quantity::Voltage,
                Some('I') => Quantity::Current,
                _ => {
                    return Err(err(
                        1,
                        format!(
                            "`{name}` in %: a voltage channel's name starts with V or U, a current's with I"
                        ),
                    ));
                }
            };
            (q, Magnitude::Percent(v))
        } else {
            match unit_quantity(unit) {
                (Quantity::Other, _) => return Err(err(4, format!("`{unit}`: %, V, kV, A or kA"))),
                (q, k) => (q, Magnitude::Absolute(v * k)),
            }
        };
        let angle_deg = match cell(5) {
            "" => None,
            s => match s.parse::<f64>() {
                Ok(a) if a.is_finite() => Some(a),
                _ => return Err(err(5, format!("`{s}` is not an angle"))),
            },
        };
        let interval = match cell(6).to_ascii_lowercase().replace(' ', "").as_str() {
            "" => None,
            "3s" => Some(Interval::VeryShort),
            "10min" => Some(Interval::Short),
            other => return Err(err(6, format!("`{other}`: 3 s or 10 min"))),
        };
        let channel = match log.channels.iter().position(|c| c.name == name) {
            Some(i) if log.channels[i].quantity != quantity => {
                return Err(err(
                    1,
                    format!(
                        "`{name}` was a {:?} channel on an earlier row",
                        log.channels[i].quantity
                    )
                    .to_lowercase(),
                ));
            }
            Some(i) => i,
            None => {
                log.channels.push(LogChannel {
                    name: name.to_string(),
                    quantity,
                });
                log.channels.len() - 1
            }
        };
        given_interval.push(interval);
        log.rows.push(LogRow {
            time_s,
            channel,
            order,
            value,
            angle_deg,
            interval: Interval::Short,
            line: n,
        });
    }
    if log.rows.is_empty() {
        return Err(RecordingError::whole(
            file,
            "no rows under the header".into(),
        ));
    }
    infer_intervals(&mut log, &given_interval)?;
    Ok(log)
}

/// Sets each row's interval: as given, else from the median spacing of its channel's
/// distinct times (within 10 % of 3 s or of 600 s).
fn infer_intervals(
    log: &mut HarmonicLog,
    given: &[Option<Interval>],
) -> Result<(), RecordingError> {
    for c in 0..log.channels.len() {
        let mut times: Vec<f64> = log
            .rows
            .iter()
            .zip(given)
            .filter(|(r, g)| r.channel == c && g.is_none())
            .map(|(r, _)| r.time_s)
            .collect();
        if times.is_empty() {
            for (r, g) in log.rows.iter_mut().zip(given) {
                if let Some(g) = g {
                    r.interval = *g;
                }
            }
            continue;
        }
        times.sort_by(f64::total_cmp);
        times.dedup();
        let mut gaps: Vec<f64> = times.windows(2).map(|w| w[1] - w[0]).collect();
        gaps.sort_by(f64::total_cmp);
        let name = &log.channels[c].name;
        let Some(&median) = gaps.get(gaps.len() / 2) else {
            return Err(RecordingError::whole(
                &log.file,
                format!(
                    "channel `{name}` has one time and no Interval column: its interval cannot be told"
                ),
            ));
        };
        let inferred = if (median - 3.0).abs() <= 0.3 {
            Interval::VeryShort
        } else if (median - 600.0).abs() <= 60.0 {
            Interval::Short
        } else {
            return Err(RecordingError::whole(
                &log.file,
                format!(
                    "channel `{name}`: its times are {median} s apart; give the Interval column (3 s or 10 min)"
                ),
            ));
        };
        for (r, g) in log.rows.iter_mut().zip(given) {
            if r.channel == c {
                r.interval = g.unwrap_or(inferred);
            }
        }
    }
    Ok(())
}

/// `YYYY-MM-DD hh:mm:ss[.fff]` (or `T` between) → seconds since 1970-01-01 00:00.
pub fn parse_time(s: &str) -> Option<f64> {
    let (date, time) = s.split_once([' ', 'T'])?;
    let d: Vec<&str> = date.split('-').collect();
    let t: Vec<&str> = time.trim().split(':').collect();
    if d.len() != 3 || t.len() != 3 || d[0].len() != 4 {
        return None;
    }
    let (y, m, day): (i64, i64, i64) = (d[0].parse().ok()?, d[1].parse().ok()?, d[2].parse().ok()?);
    let (h, mi, sec): (i64, i64, f64) =
        (t[0].parse().ok()?, t[1].parse().ok()?, t[2].parse().ok()?);
    if !(1..=12).contains(&m)
        || !(1..=31).contains(&day)
        || !(0..24).contains(&h)
        || !(0..60).contains(&mi)
        || !(0.0..61.0).contains(&sec)
    {
        return None;
    }
    Some(days_from_civil(y, m, day) as f64 * 86_400.0 + (h * 3600 + mi * 60) as f64 + sec)
}

/// Splits a CSV line at commas outside double quotes ("" inside quotes is a quote).
fn split_csv(line: &str) -> Result<Vec<String>, String> {
    let mut cells = vec![String::new()];
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match (c, quoted) {
            ('"', true) if chars.peek() == Some(&'"') => {
                chars.next();
                if let Some(s) = cells.last_mut() {
                    s.push('"');
                }
            }
            ('"', _) => quoted = !quoted,
            (',', false) => cells.push(String::new()),
            (c, _) => {
                if let Some(s) = cells.last_mut() {
                    s.push(c);
                }
            }
        }
    }
    if quoted {
        return Err("a quote is not closed".into());
    }
    Ok(cells)
}
