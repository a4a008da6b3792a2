//! COMTRADE waveform captures (IEEE Std C37.111-1999 and -2013): a `.cfg` with its `.dat`
//! (ASCII, BINARY, BINARY32 or FLOAT32), or the 2013 single file `.cff`. The reader turns
//! raw values into primary volts and amperes (value = a·x + b, then × primary/secondary
//! when the channel is scaled to secondary, then the unit's factor) and gives every sample
//! its time in seconds from the first.

pub mod cfg;
pub mod dat;

use std::path::{Path, PathBuf};

pub use cfg::{AnalogSpec, Config, DataFormat, DigitalSpec, Revision, SampleRate, Stamp};

use super::{Quantity, RecordingError, unit_quantity};

/// One analog channel in primary SI units.
#[derive(Debug, Clone, PartialEq)]
pub struct AnalogChannel {
    pub spec: AnalogSpec,
    pub quantity: Quantity,
    /// Primary values, V or A (other units as written); NaN where the sample is missing.
    pub values: Vec<f64>,
    /// Samples whose raw value sits at the channel's declared min or max: the recorder's
    /// range was reached, and the waveform there is clipped.
    pub at_range_limit: usize,
}

/// A COMTRADE recording, read and scaled.
#[derive(Debug, Clone, PartialEq)]
pub struct Waveforms {
    /// The file name as given (the `.cfg` or `.cff`).
    pub file: String,
    pub config: Config,
    /// Seconds from the first sample, per sample.
    pub time_s: Vec<f64>,
    pub analog: Vec<AnalogChannel>,
    /// Per digital channel, its state per sample.
    pub digital: Vec<(DigitalSpec, Vec<bool>)>,
}

/// Largest recording read, bytes (a week at 10 kHz of 8 channels in BINARY32 is ~2 GB; a
/// capture around switching events is far smaller).
pub const MAX_BYTES: u64 = 2 << 30;

/// Reads the recording at `path`: a `.cff`, or a `.cfg` or `.dat` whose partner (same stem,
/// `.dat`/`.DAT` or `.cfg`/`.CFG`) lies beside it.
pub fn read_comtrade(path: &Path) -> Result<Waveforms, RecordingError> {
    let name = path.display().to_string();
    let ext = path
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default();
    if !path.is_file() {
        return Err(RecordingError::whole(&name, "no such file".into()));
    }
    match ext.as_str() {
        "cff" => {
            let bytes = read_bytes(path)?;
            parse_cff(&name, &bytes)
        }
        "cfg" | "dat" => {
            let cfg_path = partner(path, "cfg")?;
            let dat_path = partner(path, "dat")?;
            let cfg_name = cfg_path.display().to_string();
            let text = String::from_utf8(read_bytes(&cfg_path)?).map_err(|_| {
                RecordingError::whole(&cfg_name, "the configuration is not UTF-8 text".into())
            })?;
            let config = cfg::parse_config(&cfg_name, &text, 1)?;
            let dat_name = dat_path.display().to_string();
            let bytes = read_bytes(&dat_path)?;
            let raw = match config.format {
                DataFormat::Ascii => {
                    let text = std::str::from_utf8(&bytes).map_err(|_| {
                        RecordingError::whole(&dat_name, "ASCII data that are not text".into())
                    })?;
                    dat::parse_ascii(&dat_name, text, 1, &config)?
                }
                _ => dat::parse_binary(&dat_name, &bytes, &config)?,
            };
            scale(&cfg_name, &dat_name, config, raw)
        }
        _ => Err(RecordingError::whole(
            &name,
            "a COMTRADE recording is a .cfg with its .dat, or a .cff".into(),
        )),
    }
}

/// The file's bytes, refusing what cannot be a recording.
fn read_bytes(path: &Path) -> Result<Vec<u8>, RecordingError> {
    let name = path.display().to_string();
    let meta = std::fs::metadata(path).map_err(|e| RecordingError::whole(&name, e.to_string()))?;
    if meta.len() > MAX_BYTES {
        return Err(RecordingError::whole(
            &name,
            format!(
                "{} bytes is larger than the {} bytes read",
                meta.len(),
                MAX_BYTES
            ),
        ));
    }
    std::fs::read(path).map_err(|e| RecordingError::whole(&name, e.to_string()))
}

/// The file beside `path` with extension `ext` (as written in lower or upper case).
fn partner(path: &Path, ext: &str) -> Result<PathBuf, RecordingError> {
    for e in [ext.to_string(), ext.to_ascii_uppercase()] {
        let p = path.with_extension(&e);
        if p.is_file() {
            return Ok(p);
        }
    }
    Err(RecordingError::whole(
        &path.display().to_string(),
        format!("no .{ext} file beside it with the same name"),
    ))
}

/// A text section of a `.cff`: (kind, its header's line, first byte, end byte).
type Section = (String, usize, usize, usize);
/// The DAT section's header: (type, announced byte count, its line, first byte).
type DatHeader = (String, Option<usize>, usize, usize);

/// The sections of a `.cff` up to and including the DAT header.
fn cff_sections(
    file: &str,
    bytes: &[u8],
) -> Result<(Vec<Section>, Option<DatHeader>), RecordingError> {
    let mut at = 0usize;
    let mut line_no = 0usize;
    let mut sections: Vec<Section> = Vec::new();
    let mut dat: Option<DatHeader> = None;
    while at < bytes.len() {
        let end = bytes[at..]
            .iter()
            .position(|&b| b == b'\n')
            .map_or(bytes.len(), |p| at + p);
        line_no += 1;
        let line = String::from_utf8_lossy(&bytes[at..end]);
        let line = line.trim_end_matches('\r').trim();
        let next = (end + 1).min(bytes.len());
        if let Some(kind) = section_header(line) {
            if let Some(last) = sections.last_mut() {
                last.3 = at;
            }
            if let Some(rest) = kind.strip_prefix("DAT ") {
                let (ty, n) = match rest.split_once(':') {
                    Some((ty, n)) => {
                        let n = n.trim().parse::<usize>().map_err(|_| {
                            RecordingError::at_line(
                                file,
                                line_no,
                                Some((1, "byte count")),
                                format!("`{}` is not a byte count", n.trim()),
                            )
                        })?;
                        (ty.trim().to_string(), Some(n))
                    }
                    None => (rest.trim().to_string(), None),
                };
                dat = Some((ty, n, line_no, next));
                break;
            }
            sections.push((kind, line_no, next, bytes.len()));
        } else if sections.is_empty() && !line.is_empty() {
            return Err(RecordingError::at_line(
                file,
                line_no,
                None,
                "a .cff begins with `--- file type: CFG ---`".into(),
            ));
        }
        at = next;
    }
    Ok((sections, dat))
}

/// Reads a 2013 single-file recording: `--- file type: CFG ---`, then optional INF and
/// HDR sections, then `--- file type: DAT ASCII ---` or `--- file type: DAT BINARY: n ---`
/// (BINARY32, FLOAT32) followed by n bytes of records (IEEE Std C37.111-2013 clause 9,
/// from memory).
pub fn parse_cff(file: &str, bytes: &[u8]) -> Result<Waveforms, RecordingError> {
    let (sections, dat) = cff_sections(file, bytes)?;
    let Some(&(_, cfg_line, start, end)) = sections.iter().find(|s| s.0 == "CFG") else {
        return Err(RecordingError::whole(file, "no CFG section".into()));
    };
    for s in &sections {
        if !matches!(s.0.as_str(), "CFG" | "INF" | "HDR") {
            return Err(RecordingError::at_line(
                file,
                s.1,
                None,
                format!("unknown section `{}`", s.0),
            ));
        }
    }
    let text = std::str::from_utf8(&bytes[start..end]).map_err(|_| {
        RecordingError::at_line(
            file,
            cfg_line + 1,
            None,
            "the CFG section is not UTF-8 text".into(),
        )
    })?;
    let config = cfg::parse_config(file, text, cfg_line + 1)?;
    let Some((ty, n, dat_line, start)) = dat else {
        return Err(RecordingError::whole(file, "no DAT section".into()));
    };
    let declared = match config.format {
        DataFormat::Ascii => "ASCII",
        DataFormat::Binary => "BINARY",
        DataFormat::Binary32 => "BINARY32",
        DataFormat::Float32 => "FLOAT32",
    };
    if !ty.eq_ignore_ascii_case(declared) {
        return Err(RecordingError::at_line(
            file,
            dat_line,
            None,
            format!("the DAT section is {ty}; the CFG section says {declared}"),
        ));
    }
    let raw = cff_data(file, bytes, &config, (n, dat_line, start))?;
    scale(file, file, config, raw)
}

/// The DAT section's records from byte `start` (the line after its header, `dat_line`):
/// ASCII to the end of the file, or exactly the `n` bytes announced (whitespace after).
fn cff_data(
    file: &str,
    bytes: &[u8],
    config: &Config,
    (n, dat_line, start): (Option<usize>, usize, usize),
) -> Result<dat::RawData, RecordingError> {
    Ok(match (config.format, n) {
        (DataFormat::Ascii, _) => {
            let text = std::str::from_utf8(&bytes[start..]).map_err(|_| {
                RecordingError::at_line(
                    file,
                    dat_line + 1,
                    None,
                    "ASCII data that are not text".into(),
                )
            })?;
            dat::parse_ascii(file, text, dat_line + 1, config)?
        }
        (_, None) => {
            return Err(RecordingError::at_line(
                file,
                dat_line,
                None,
                "a binary DAT section gives its byte count: `DAT BINARY: n`".into(),
            ));
        }
        (_, Some(n)) => {
            let Some(data) = bytes.get(start..start + n) else {
                return Err(RecordingError::at_line(
                    file,
                    dat_line,
                    None,
                    format!("{n} bytes announced; {} follow", bytes.len() - start),
                ));
            };
            if bytes[start + n..].iter().any(|b| !b.is_ascii_whitespace()) {
                return Err(RecordingError::at_line(
                    file,
                    dat_line,
                    None,
                    format!("more than the {n} bytes announced follow"),
                ));
            }
            dat::parse_binary(file, data, config)?
        }
    })
}

/// `--- file type: KIND ---` → KIND (upper case).
fn section_header(line: &str) -> Option<String> {
    let inner = line.strip_prefix("---")?.strip_suffix("---")?.trim();
    let (head, kind) = inner.split_once(':')?;
    head.trim()
        .eq_ignore_ascii_case("file type")
        .then(|| kind.trim().to_ascii_uppercase())
}

/// Sample times and primary values from the raw data.
fn scale(
    cfg_name: &str,
    dat_name: &str,
    config: Config,
    raw: dat::RawData,
) -> Result<Waveforms, RecordingError> {
    let time_s = sample_times(cfg_name, dat_name, &config, &raw.stamps)?;
    let analog = config
        .analog
        .iter()
        .zip(raw.analog)
        .map(|(spec, xs)| {
            let (quantity, unit) = unit_quantity(&spec.unit);
            let ratio = if spec.scaled_primary {
                1.0
            } else {
                spec.primary / spec.secondary
            };
            let k = unit * ratio;
            let at_range_limit = if spec.min < spec.max {
                xs.iter()
                    .filter(|&&x| x <= spec.min || x >= spec.max)
                    .count()
            } else {
                0
            };
            let values = xs.into_iter().map(|x| (spec.a * x + spec.b) * k).collect();
            AnalogChannel {
                spec: spec.clone(),
                quantity,
                values,
                at_range_limit,
            }
        })
        .collect();
    let digital = config.digital.iter().cloned().zip(raw.digital).collect();
    Ok(Waveforms {
        file: cfg_name.to_string(),
        config,
        time_s,
        analog,
        digital,
    })
}

/// Each sample's time, s from the first: from the fixed rates (sample n at the previous
/// time plus 1/rate of its run) or, with nrates 0, from the time stamps × timemult.
fn sample_times(
    cfg_name: &str,
    dat_name: &str,
    c: &Config,
    stamps: &[Option<f64>],
) -> Result<Vec<f64>, RecordingError> {
    let mut t = Vec::with_capacity(stamps.len());
    if c.fixed_rates() {
        let mut now = 0.0;
        let mut run = 0;
        for k in 0..stamps.len() {
            while run + 1 < c.rates.len() && k as u64 >= c.rates[run].end_sample {
                run += 1;
            }
            if k > 0 {
                now += 1.0 / c.rates[run].rate_hz;
            }
            t.push(now);
        }
        return Ok(t);
    }
    let unit = c.stamp_seconds();
    let first = stamps.first().copied().flatten().unwrap_or(0.0);
    for (k, s) in stamps.iter().enumerate() {
        let Some(s) = s else {
            return Err(RecordingError {
                file: dat_name.to_string(),
                location: format!("sample {}", k + 1),
                message: format!("no time stamp, and {cfg_name} gives no sampling rate"),
            });
        };
        let v = (s - first) * unit;
        if t.last().is_some_and(|&last| v < last) {
            return Err(RecordingError {
                file: dat_name.to_string(),
                location: format!("sample {}", k + 1),
                message: "the time stamp goes back in time".into(),
            });
        }
        t.push(v);
    }
    Ok(t)
}
