//! The COMTRADE data file (`.dat`, or the DAT section of a `.cff`): one record per sample,
//! `n,timestamp,A1..Ak,D1..Dm` in ASCII, or little-endian binary records of a 4-byte sample
//! number, a 4-byte time stamp, the analog values (2-byte or 4-byte integers, or 4-byte
//! floats) and the status bits packed in 16-bit words (IEEE Std C37.111-1999 clause 7,
//! IEEE Std C37.111-2013 clause 8, from memory).
//!
//! Missing values (from memory): an empty ASCII field (and 99999 in a 1999 file),
//! 0x8000 in BINARY, 0x80000000 in BINARY32, NaN in FLOAT32; a missing time stamp is an
//! empty ASCII field or 0xFFFFFFFF, allowed only where fixed rates give the times.

use super::cfg::{Config, DataFormat, Revision};
use crate::io::recordings::RecordingError;

/// The raw samples: per sample its time stamp (counts, `None` = missing), per analog channel
/// the raw value x (NaN = missing), per digital channel its state.
#[derive(Debug, Clone, Default)]
pub struct RawData {
    pub stamps: Vec<Option<f64>>,
    pub analog: Vec<Vec<f64>>,
    pub digital: Vec<Vec<bool>>,
}

impl RawData {
    fn with_channels(c: &Config, samples: usize) -> Self {
        RawData {
            stamps: Vec::with_capacity(samples),
            analog: vec![Vec::with_capacity(samples); c.analog.len()],
            digital: vec![Vec::with_capacity(samples); c.digital.len()],
        }
    }
}

/// Reads ASCII records from `text`, whose first line is line `first_line` of `file`.
pub fn parse_ascii(
    file: &str,
    text: &str,
    first_line: usize,
    c: &Config,
) -> Result<RawData, RecordingError> {
    // Long: a reader that takes one field per step, each with its own located error.
    let want = c.samples() as usize;
    let (na, nd) = (c.analog.len(), c.digital.len());
    let mut lines: Vec<(usize, &str)> = text
        .split('\n')
        .enumerate()
        .map(|(i, l)| (i + first_line, l.strip_suffix('\r').unwrap_or(l)))
        .collect();
    while lines.last().is_some_and(|l| l.1.trim().is_empty()) {
        lines.pop();
    }
    // Capacity from what the file holds, not from what the configuration claims.
    let mut raw = RawData::with_channels(c, want.min(lines.len()));
    for (k, &(n, line)) in lines.iter().enumerate() {
        let err = |field: usize, name: &str, message: String| {
            RecordingError::at_line(file, n, Some((field, name)), message)
        };
        if k >= want {
            return Err(RecordingError::at_line(
                file,
                n,
                None,
                format!(
                    "record {} beyond the {want} samples the configuration gives",
                    k + 1
                ),
            ));
        }
        let p: Vec<&str> = line.split(',').map(str::trim).collect();
        if p.len() != 2 + na + nd {
            return Err(RecordingError::at_line(
                file,
                n,
                None,
                format!(
                    "{} fields; a record has {} (n, timestamp, {na} analog, {nd} digital)",
                    p.len(),
                    2 + na + nd
                ),
            ));
        }
        match p[0].parse::<u64>() {
            Ok(s) if s == k as u64 + 1 => {}
            _ => {
                return Err(err(
                    1,
                    "n",
                    format!("`{}` where sample {} comes next", p[0], k + 1),
                ));
            }
        }
        let stamp = match p[1] {
            "" => None,
            s => match s.parse::<u64>() {
                Ok(v) => Some(v as f64),
                Err(_) => return Err(err(2, "timestamp", format!("`{s}` is not a whole number"))),
            },
        };
        raw.stamps.push(stamp);
        for j in 0..na {
            let s = p[2 + j];
            let x = match s {
                "" => f64::NAN,
                "99999" if c.revision == Revision::Y1999 => f64::NAN,
                _ => match s.parse::<f64>() {
                    Ok(v) if v.is_finite() => v,
                    _ => {
                        let name = format!("A{}", j + 1);
                        return Err(err(3 + j, &name, format!("`{s}` is not a number")));
                    }
                },
            };
            raw.analog[j].push(x);
        }
        for j in 0..nd {
            let bit = match p[2 + na + j] {
                "0" => false,
                "1" => true,
                s => {
                    let name = format!("D{}", j + 1);
                    return Err(err(3 + na + j, &name, format!("`{s}`: 0 or 1")));
                }
            };
            raw.digital[j].push(bit);
        }
    }
    if raw.stamps.len() != want {
        let line = lines.last().map_or(first_line, |l| l.0 + 1);
        return Err(RecordingError::at_line(
            file,
            line,
            None,
            format!(
                "the data end after {} of the {want} samples the configuration gives",
                raw.stamps.len()
            ),
        ));
    }
    Ok(raw)
}

/// Bytes per binary record of `c`.
pub fn record_bytes(c: &Config) -> usize {
    let width = match c.format {
        DataFormat::Binary => 2,
        _ => 4,
    };
    8 + width * c.analog.len() + 2 * c.digital.len().div_ceil(16)
}

/// Reads binary records from `bytes` (exactly the data: records × record size).
pub fn parse_binary(file: &str, bytes: &[u8], c: &Config) -> Result<RawData, RecordingError> {
    let want = c.samples() as usize;
    let size = record_bytes(c);
    if bytes.len() != want * size {
        return Err(RecordingError::whole(
            file,
            format!(
                "{} bytes of data; {want} records of {size} bytes are {} bytes",
                bytes.len(),
                want * size
            ),
        ));
    }
    let mut raw = RawData::with_channels(c, want);
    let word =
        |at: usize| u32::from_le_bytes([bytes[at], bytes[at + 1], bytes[at + 2], bytes[at + 3]]);
    for k in 0..want {
        let at = k * size;
        let here = |message: String| RecordingError {
            file: file.to_string(),
            location: format!("record {} (byte {at})", k + 1),
            message,
        };
        let n = word(at);
        if n as u64 != k as u64 + 1 {
            return Err(here(format!(
                "sample number {n} where sample {} comes next",
                k + 1
            )));
        }
        let stamp = word(at + 4);
        raw.stamps.push((stamp != u32::MAX).then_some(stamp as f64));
        let mut p = at + 8;
        for channel in raw.analog.iter_mut() {
            let x = match c.format {
                DataFormat::Binary => {
                    let v = i16::from_le_bytes([bytes[p], bytes[p + 1]]);
                    p += 2;
                    if v == i16::MIN { f64::NAN } else { v as f64 }
                }
                DataFormat::Binary32 => {
                    let v = word(p) as i32;
                    p += 4;
                    if v == i32::MIN { f64::NAN } else { v as f64 }
                }
                DataFormat::Float32 => {
                    let v = f32::from_bits(word(p));
                    p += 4;
                    if v.is_infinite() {
                        return Err(here("an infinite FLOAT32 value".into()));
                    }
                    v as f64
                }
                DataFormat::Ascii => f64::NAN,
            };
            channel.push(x);
        }
        for (j, channel) in raw.digital.iter_mut().enumerate() {
            let w = p + 2 * (j / 16);
            let bits = u16::from_le_bytes([bytes[w], bytes[w + 1]]);
            channel.push(bits >> (j % 16) & 1 == 1);
        }
    }
    Ok(raw)
}
