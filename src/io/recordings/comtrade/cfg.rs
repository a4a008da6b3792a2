//! The COMTRADE configuration file (`.cfg`, or the CFG section of a `.cff`), read line by
//! line as IEEE Std C37.111-1999 clause 6 and IEEE Std C37.111-2013 clause 7 lay it out
//! (from memory):
//!
//! ```text
//! station_name,rec_dev_id,rev_year
//! TT,##A,##D
//! An,ch_id,ph,ccbm,uu,a,b,skew,min,max,primary,secondary,PS     (one per analog channel)
//! Dn,ch_id,ph,ccbm,y                                             (one per digital channel)
//! lf
//! nrates
//! samp,endsamp                                                   (nrates lines; one if 0)
//! dd/mm/yyyy,hh:mm:ss.ssssss                                     (first sample)
//! dd/mm/yyyy,hh:mm:ss.ssssss                                     (trigger)
//! ft                                                             (ASCII, BINARY, ...)
//! timemult
//! time_code,local_code                                           (2013 only)
//! tmq_code,leapsec                                               (2013 only)
//! ```

use crate::io::recordings::RecordingError;

/// The standard's revision named on the first line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Revision {
    /// IEEE Std C37.111-1999.
    #[serde(rename = "1999")]
    Y1999,
    /// IEEE Std C37.111-2013 (IEC 60255-24:2013).
    #[serde(rename = "2013")]
    Y2013,
}

/// How the data file stores samples (`ft`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "UPPERCASE")]
pub enum DataFormat {
    /// Comma-separated text, a line per sample.
    Ascii,
    /// 16-bit two's-complement analog values.
    Binary,
    /// 32-bit two's-complement analog values (2013).
    Binary32,
    /// IEEE 754 single-precision analog values (2013).
    Float32,
}

/// One analog channel's line.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct AnalogSpec {
    pub index: usize,
    pub id: String,
    pub phase: String,
    pub circuit: String,
    pub unit: String,
    /// Multiplier a of value = a·x + b.
    pub a: f64,
    /// Offset b of value = a·x + b.
    pub b: f64,
    /// Time skew of the channel from the sample time, µs.
    pub skew_us: f64,
    pub min: f64,
    pub max: f64,
    /// Transformer ratio's primary factor.
    pub primary: f64,
    /// Transformer ratio's secondary factor.
    pub secondary: f64,
    /// `P`: a·x + b gives primary values; `S`: secondary values.
    pub scaled_primary: bool,
}

/// One digital (status) channel's line.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct DigitalSpec {
    pub index: usize,
    pub id: String,
    pub phase: String,
    pub circuit: String,
    /// The channel's normal state (`y`).
    pub normal: bool,
}

/// A run of samples at one rate: samples up to `end_sample` (1-based, inclusive) at
/// `rate_hz`; `rate_hz` 0 means the data file's time stamps give the times.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct SampleRate {
    pub rate_hz: f64,
    pub end_sample: u64,
}

/// A date and time as the file writes it, with the seconds as a number.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Stamp {
    pub text: String,
    pub year: u16,
    pub month: u8,
    pub day: u8,
    pub hour: u8,
    pub minute: u8,
    pub second: f64,
}

impl Stamp {
    /// Seconds from this stamp to `later` (the same day or a later one).
    pub fn seconds_to(&self, later: &Stamp) -> f64 {
        let days = |s: &Stamp| days_from_civil(s.year as i64, s.month as i64, s.day as i64);
        let day_s = (days(later) - days(self)) as f64 * 86_400.0;
        let tod = |s: &Stamp| s.hour as f64 * 3600.0 + s.minute as f64 * 60.0 + s.second;
        day_s + tod(later) - tod(self)
    }
}

/// Days since 1970-01-01 of a Gregorian date (the usual civil-to-days conversion, common
/// practice).
pub fn days_from_civil(y: i64, m: i64, d: i64) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (m + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// The configuration file, read.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Config {
    pub station: String,
    pub device: String,
    pub revision: Revision,
    pub analog: Vec<AnalogSpec>,
    pub digital: Vec<DigitalSpec>,
    /// Nominal line frequency, Hz (`lf`).
    pub line_frequency_hz: f64,
    pub rates: Vec<SampleRate>,
    pub start: Stamp,
    pub trigger: Stamp,
    pub format: DataFormat,
    /// Multiplier of the data file's time stamps (`timemult`).
    pub time_multiplier: f64,
    /// Time stamps count nanoseconds (the date lines carry 9 decimals, 2013), else µs.
    pub nanoseconds: bool,
    /// `time_code,local_code` (2013).
    pub time_code: Option<(String, String)>,
    /// `tmq_code,leapsec` (2013).
    pub time_quality: Option<(String, String)>,
}

impl Config {
    /// The number of samples in the data file (the last `endsamp`).
    pub fn samples(&self) -> u64 {
        self.rates.last().map_or(0, |r| r.end_sample)
    }

    /// Seconds per time-stamp count: 1e-6 or 1e-9 times `timemult`.
    pub fn stamp_seconds(&self) -> f64 {
        let base = if self.nanoseconds { 1e-9 } else { 1e-6 };
        base * self.time_multiplier
    }

    /// Whether the sample times come from fixed rates (not from the time stamps).
    pub fn fixed_rates(&self) -> bool {
        self.rates.iter().all(|r| r.rate_hz > 0.0)
    }
}

/// The lines of a configuration, numbered from `first_line`, split into trimmed fields.
struct Lines<'a> {
    file: &'a str,
    lines: Vec<(usize, &'a str)>,
    at: usize,
}

impl<'a> Lines<'a> {
    fn next(
        &mut self,
        what: &str,
        fields: &[usize],
    ) -> Result<(usize, Vec<&'a str>), RecordingError> {
        let Some(&(n, text)) = self.lines.get(self.at) else {
            let line = self.lines.last().map_or(1, |l| l.0 + 1);
            return Err(RecordingError::at_line(
                self.file,
                line,
                None,
                format!("the file ends where the {what} line was expected"),
            ));
        };
        self.at += 1;
        let parts: Vec<&str> = text.split(',').map(str::trim).collect();
        if !fields.contains(&parts.len()) {
            let want = fields
                .iter()
                .map(|f| f.to_string())
                .collect::<Vec<_>>()
                .join(" or ");
            return Err(RecordingError::at_line(
                self.file,
                n,
                None,
                format!(
                    "the {what} line has {} fields; it needs {want}",
                    parts.len()
                ),
            ));
        }
        Ok((n, parts))
    }
}

/// A field parser bound to one line.
struct Field<'a> {
    file: &'a str,
    line: usize,
}

impl Field<'_> {
    fn err(&self, n: usize, name: &str, message: String) -> RecordingError {
        RecordingError::at_line(self.file, self.line, Some((n, name)), message)
    }

    fn real(&self, parts: &[&str], n: usize, name: &str) -> Result<f64, RecordingError> {
        let s = parts[n - 1];
        match s.parse::<f64>() {
            Ok(v) if v.is_finite() => Ok(v),
            _ => Err(self.err(n, name, format!("`{s}` is not a finite number"))),
        }
    }

    fn count(&self, parts: &[&str], n: usize, name: &str) -> Result<u64, RecordingError> {
        let s = parts[n - 1];
        s.parse::<u64>()
            .map_err(|_| self.err(n, name, format!("`{s}` is not a whole number")))
    }
}

/// Reads a configuration from `text`; `first_line` is the line number of its first line in
/// the file (1, or later in a `.cff`).
pub fn parse_config(file: &str, text: &str, first_line: usize) -> Result<Config, RecordingError> {
    // Long: a reader that takes the standard's lines in order, each with its own located error.
    let mut all: Vec<(usize, &str)> = text
        .split('\n')
        .enumerate()
        .map(|(i, l)| (i + first_line, l.strip_suffix('\r').unwrap_or(l)))
        .collect();
    while all.last().is_some_and(|l| l.1.trim().is_empty()) {
        all.pop();
    }
    let mut lines = Lines {
        file,
        lines: all,
        at: 0,
    };
    let (n, p) = lines.next("station", &[2, 3])?;
    let f = Field { file, line: n };
    let revision = match p.get(2).copied() {
        Some("1999") => Revision::Y1999,
        Some("2013") => Revision::Y2013,
        Some(other) => {
            return Err(f.err(
                3,
                "rev_year",
                format!("revision `{other}`: only 1999 and 2013 are read"),
            ));
        }
        None => {
            return Err(f.err(
                3,
                "rev_year",
                "no revision year (a 1991 file): only 1999 and 2013 are read".into(),
            ));
        }
    };
    let (station, device) = (p[0].to_string(), p[1].to_string());
    let (n_analog, n_digital) = channel_counts(&mut lines)?;
    let mut analog = Vec::with_capacity(n_analog);
    for k in 1..=n_analog {
        analog.push(analog_line(&mut lines, k)?);
    }
    let mut digital = Vec::with_capacity(n_digital);
    for k in 1..=n_digital {
        digital.push(digital_line(&mut lines, k)?);
    }
    let (n, p) = lines.next("line frequency (lf)", &[1])?;
    let line_frequency_hz = Field { file, line: n }.real(&p, 1, "lf")?;
    if line_frequency_hz < 0.0 {
        return Err(Field { file, line: n }.err(1, "lf", "a negative frequency".into()));
    }
    let rates = sample_rates(&mut lines)?;
    let (start, start_ns) = stamp_line(&mut lines, "first sample's date")?;
    let (trigger, trigger_ns) = stamp_line(&mut lines, "trigger's date")?;
    let (n, p) = lines.next("data file type (ft)", &[1])?;
    let format = match p[0].to_ascii_uppercase().as_str() {
        "ASCII" => DataFormat::Ascii,
        "BINARY" => DataFormat::Binary,
        "BINARY32" if revision == Revision::Y2013 => DataFormat::Binary32,
        "FLOAT32" if revision == Revision::Y2013 => DataFormat::Float32,
        "BINARY32" | "FLOAT32" => {
            return Err(Field { file, line: n }.err(
                1,
                "ft",
                format!("`{}` is a 2013 format; this file says 1999", p[0]),
            ));
        }
        _ => {
            return Err(Field { file, line: n }.err(
                1,
                "ft",
                format!("`{}`: the type is ASCII, BINARY, BINARY32 or FLOAT32", p[0]),
            ));
        }
    };
    let (n, p) = lines.next("time multiplier (timemult)", &[1])?;
    let time_multiplier = Field { file, line: n }.real(&p, 1, "timemult")?;
    if time_multiplier <= 0.0 {
        return Err(Field { file, line: n }.err(1, "timemult", "not above zero".into()));
    }
    let (mut time_code, mut time_quality) = (None, None);
    if revision == Revision::Y2013 {
        let (_, p) = lines.next("time code (time_code,local_code)", &[2])?;
        time_code = Some((p[0].to_string(), p[1].to_string()));
        let (_, p) = lines.next("time quality (tmq_code,leapsec)", &[2])?;
        time_quality = Some((p[0].to_string(), p[1].to_string()));
    }
    if let Some(&(n, _)) = lines.lines.get(lines.at) {
        return Err(RecordingError::at_line(
            file,
            n,
            None,
            "text after the configuration's last line".into(),
        ));
    }
    if start_ns != trigger_ns {
        return Err(RecordingError::at_line(
            file,
            n,
            None,
            "the two date lines give different precisions (6 and 9 decimals)".into(),
        ));
    }
    Ok(Config {
        station,
        device,
        revision,
        analog,
        digital,
        line_frequency_hz,
        rates,
        start,
        trigger,
        format,
        time_multiplier,
        nanoseconds: start_ns,
        time_code,
        time_quality,
    })
}

/// `TT,##A,##D`: the analog and digital channel counts, which must add up to TT.
fn channel_counts(lines: &mut Lines) -> Result<(usize, usize), RecordingError> {
    let (n, p) = lines.next("channel count (TT,##A,##D)", &[3])?;
    let f = Field {
        file: lines.file,
        line: n,
    };
    let total = f.count(&p, 1, "TT")?;
    let tagged = |k: usize, name: &str, tag: char| -> Result<u64, RecordingError> {
        let s = p[k - 1];
        let digits = s
            .strip_suffix(tag)
            .or_else(|| s.strip_suffix(tag.to_ascii_lowercase()));
        match digits.and_then(|d| d.parse::<u64>().ok()) {
            Some(v) => Ok(v),
            None => Err(f.err(k, name, format!("`{s}` is not a count followed by {tag}"))),
        }
    };
    let a = tagged(2, "##A", 'A')?;
    let d = tagged(3, "##D", 'D')?;
    if a + d != total {
        return Err(f.err(1, "TT", format!("{total} channels, but {a}A + {d}D")));
    }
    if total > 100_000 {
        return Err(f.err(1, "TT", format!("{total} channels is not a recording")));
    }
    Ok((a as usize, d as usize))
}

/// `An,ch_id,ph,ccbm,uu,a,b,skew,min,max,primary,secondary,PS` for channel `k`.
fn analog_line(lines: &mut Lines, k: usize) -> Result<AnalogSpec, RecordingError> {
    let (n, p) = lines.next(&format!("analog channel {k}"), &[13])?;
    let f = Field {
        file: lines.file,
        line: n,
    };
    let index = f.count(&p, 1, "An")?;
    if index != k as u64 {
        return Err(f.err(
            1,
            "An",
            format!("channel {index} where channel {k} comes next"),
        ));
    }
    if p[4].is_empty() {
        return Err(f.err(5, "uu", "no unit".into()));
    }
    let (a, b) = (f.real(&p, 6, "a")?, f.real(&p, 7, "b")?);
    let skew_us = f.real(&p, 8, "skew")?;
    let (min, max) = (f.real(&p, 9, "min")?, f.real(&p, 10, "max")?);
    if min > max {
        return Err(f.err(9, "min", format!("min {min} is above max {max}")));
    }
    let primary = f.real(&p, 11, "primary")?;
    let secondary = f.real(&p, 12, "secondary")?;
    if primary <= 0.0 {
        return Err(f.err(11, "primary", "not above zero".into()));
    }
    if secondary <= 0.0 {
        return Err(f.err(12, "secondary", "not above zero".into()));
    }
    let scaled_primary = match p[12] {
        "P" | "p" => true,
        "S" | "s" => false,
        other => return Err(f.err(13, "PS", format!("`{other}`: P or S"))),
    };
    Ok(AnalogSpec {
        index: k,
        id: p[1].to_string(),
        phase: p[2].to_string(),
        circuit: p[3].to_string(),
        unit: p[4].to_string(),
        a,
        b,
        skew_us,
        min,
        max,
        primary,
        secondary,
        scaled_primary,
    })
}

/// `Dn,ch_id,ph,ccbm,y` for channel `k`.
fn digital_line(lines: &mut Lines, k: usize) -> Result<DigitalSpec, RecordingError> {
    let (n, p) = lines.next(&format!("digital channel {k}"), &[5])?;
    let f = Field {
        file: lines.file,
        line: n,
    };
    let index = f.count(&p, 1, "Dn")?;
    if index != k as u64 {
        return Err(f.err(
            1,
            "Dn",
            format!("channel {index} where channel {k} comes next"),
        ));
    }
    let normal = match p[4] {
        "0" => false,
        "1" => true,
        other => return Err(f.err(5, "y", format!("`{other}`: 0 or 1"))),
    };
    Ok(DigitalSpec {
        index: k,
        id: p[1].to_string(),
        phase: p[2].to_string(),
        circuit: p[3].to_string(),
        normal,
    })
}

/// `nrates` and its `samp,endsamp` lines (one line `0,endsamp` when nrates is 0).
fn sample_rates(lines: &mut Lines) -> Result<Vec<SampleRate>, RecordingError> {
    let (n, p) = lines.next("number of sampling rates (nrates)", &[1])?;
    let nrates = Field {
        file: lines.file,
        line: n,
    }
    .count(&p, 1, "nrates")?;
    if nrates > 1000 {
        return Err(Field {
            file: lines.file,
            line: n,
        }
        .err(1, "nrates", format!("{nrates} rates is not a recording")));
    }
    let mut rates = Vec::new();
    let mut last_end = 0;
    for k in 0..nrates.max(1) {
        let (n, p) = lines.next("sampling rate (samp,endsamp)", &[2])?;
        let f = Field {
            file: lines.file,
            line: n,
        };
        let rate_hz = f.real(&p, 1, "samp")?;
        let end_sample = f.count(&p, 2, "endsamp")?;
        if nrates == 0 && rate_hz != 0.0 {
            return Err(f.err(1, "samp", "nrates is 0, so samp must be 0".into()));
        }
        if nrates > 0 && rate_hz <= 0.0 {
            return Err(f.err(1, "samp", "not above zero".into()));
        }
        if end_sample <= last_end {
            return Err(f.err(
                2,
                "endsamp",
                format!(
                    "rate {} ends at sample {end_sample}, not after {last_end}",
                    k + 1
                ),
            ));
        }
        if end_sample > 100_000_000 {
            return Err(f.err(
                2,
                "endsamp",
                format!("{end_sample} samples is not a recording"),
            ));
        }
        last_end = end_sample;
        rates.push(SampleRate {
            rate_hz,
            end_sample,
        });
    }
    Ok(rates)
}

/// `dd/mm/yyyy,hh:mm:ss.ssssss` (or 9 decimals): the stamp and whether it has nanoseconds.
fn stamp_line(lines: &mut Lines, what: &str) -> Result<(Stamp, bool), RecordingError> {
    let (n, p) = lines.next(what, &[2])?;
    let f = Field {
        file: lines.file,
        line: n,
    };
    let date: Vec<&str> = p[0].split('/').collect();
    let bad_date = || {
        f.err(
            1,
            "dd/mm/yyyy",
            format!("`{}` is not a date dd/mm/yyyy", p[0]),
        )
    };
    if date.len() != 3 {
        return Err(bad_date());
    }
    let day: u8 = date[0].parse().map_err(|_| bad_date())?;
    let month: u8 = date[1].parse().map_err(|_| bad_date())?;
    let year: u16 = date[2].parse().map_err(|_| bad_date())?;
    if !(1..=31).contains(&day) || !(1..=12).contains(&month) || date[2].len() != 4 {
        return Err(bad_date());
    }
    let time: Vec<&str> = p[1].split(':').collect();
    let bad_time = || f.err(2, "hh:mm:ss.ssssss", format!("`{}` is not a time", p[1]));
    if time.len() != 3 {
        return Err(bad_time());
    }
    let hour: u8 = time[0].parse().map_err(|_| bad_time())?;
    let minute: u8 = time[1].parse().map_err(|_| bad_time())?;
    let second: f64 = time[2].parse().map_err(|_| bad_time())?;
    if hour > 23 || minute > 59 || !(0.0..61.0).contains(&second) {
        return Err(bad_time());
    }
    let decimals = time[2].split('.').nth(1).map_or(0, str::len);
    Ok((
        Stamp {
            text: format!("{},{}", p[0], p[1]),
            year,
            month,
            day,
            hour,
            minute,
            second,
        },
        decimals > 6,
    ))
}
