//! CSV files that other tools read, per the input contract's "Outputs that other tools read":
//! numbers at full precision (the shortest text that reads back to the same f64).

use std::io::{self, Write};

use crate::jobs::check::CheckResults;

/// The header lines of the input contract's CSV files: scan, harmonic voltages, operating
/// point, switching transients.
pub const HEADERS: [&str; 4] = [
    "scenario,configuration,bus,order,frequency_hz,z_ohm,angle_deg",
    "scenario,configuration,bus,order,v_percent,v_volts",
    "scenario,configuration,bus,v_pu,angle_deg",
    "scenario,bank,step,case,peak_a,frequency_hz,bus_peak_pu,capacitor_peak_pu",
];

/// Which series of the scan go into the CSV.
#[derive(Debug, Clone, Default)]
pub struct ScanSelection {
    /// Network bus indices; empty = the PCC and every bank bus.
    pub buses: Vec<usize>,
    /// Configuration indices into the scan; empty = every configuration.
    pub configurations: Vec<usize>,
}

/// Rows above which a scan CSV is refused (input contract).
pub const MAX_SCAN_ROWS: u64 = 5_000_000;

/// The selected (bus position in the scan, configuration) lists and the row count.
pub fn resolve(res: &CheckResults, sel: &ScanSelection) -> (Vec<usize>, Vec<usize>, u64) {
    let buses: Vec<usize> = if sel.buses.is_empty() {
        let mut v = vec![res.pcc];
        for b in &res.network.banks {
            if !v.contains(&b.bus) {
                v.push(b.bus);
            }
        }
        v
    } else {
        sel.buses.clone()
    }
    .into_iter()
    .filter_map(|bus| res.scan.buses.iter().position(|&b| b == bus))
    .collect();
    let configs: Vec<usize> = if sel.configurations.is_empty() {
        (0..res.scan.configurations.len()).collect()
    } else {
        sel.configurations.clone()
    };
    let rows = res.scan.scenarios.len() as u64
        * configs.len() as u64
        * buses.len() as u64
        * res.scan.grid.orders.len() as u64;
    (buses, configs, rows)
}

/// Writes `scenario,configuration,bus,order,frequency_hz,z_ohm,angle_deg`, one row per
/// scenario, configuration, bus and scan point.
pub fn write_scan_csv(
    out: &mut dyn Write,
    res: &CheckResults,
    sel: &ScanSelection,
) -> io::Result<()> {
    let (buses, configs, _) = resolve(res, sel);
    let f = res.plant.study.frequency_hz;
    writeln!(out, "{}", HEADERS[0])?;
    for (s, scenario) in res.scan.scenarios.iter().enumerate() {
        for &c in &configs {
            let label = res.label(c);
            for &b in &buses {
                let bus = &res.network.buses[res.scan.buses[b]].id;
                let Some(curve) = res.scan.curve(s, c, b) else {
                    continue;
                };
                for (h, z) in res.scan.grid.orders.iter().zip(&curve) {
                    writeln!(
                        out,
                        "{},{},{},{:?},{:?},{:?},{:?}",
                        field(scenario),
                        field(&label),
                        field(bus),
                        h,
                        frequency_hz(*h, f),
                        z.norm(),
                        z.arg().to_degrees()
                    )?;
                }
            }
        }
    }
    Ok(())
}

/// Frequency of order `h` at fundamental `f` Hz, rounded to 1e-9 Hz like the grid's
/// orders so that 2.05 × 60 prints as 123.0.
pub fn frequency_hz(h: f64, f: f64) -> f64 {
    (h * f * 1e9).round() / 1e9
}

/// A CSV field, quoted when it holds a comma, quote or line break (RFC 4180).
pub fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// Builds the selection from command-line names: bus ids and configuration labels.
pub fn selection(
    res: &CheckResults,
    buses: &[String],
    configurations: &[String],
) -> Result<ScanSelection, crate::jobs::check::CheckError> {
    let mut sel = ScanSelection::default();
    for id in buses {
        let i = res
            .network
            .bus_index(id)
            .ok_or_else(|| crate::jobs::check::CheckError::UnknownBus(id.clone()))?;
        sel.buses.push(i);
    }
    for text in configurations {
        let cfg = crate::study::parse_configuration(text, &res.plant.banks)?;
        if let Some(c) = res.scan.configurations.iter().position(|x| *x == cfg) {
            sel.configurations.push(c);
        }
    }
    Ok(sel)
}

/// A scan CSV that was not written.
#[derive(Debug, thiserror::Error)]
pub enum CsvError {
    #[error(
        "the CSV would have {0} rows, more than {MAX_SCAN_ROWS}: narrow it with --bus and --configuration"
    )]
    TooLarge(u64),
    #[error("{path}: {source}")]
    Io {
        path: String,
        source: std::io::Error,
    },
}

/// Writes the scan CSV of `sel` to `path` (refusing more than [`MAX_SCAN_ROWS`] rows), whole
/// or not at all ([`crate::export::write_file`]).
pub fn write_scan_file(
    path: &std::path::Path,
    res: &CheckResults,
    sel: &ScanSelection,
) -> Result<(), CsvError> {
    let (_, _, rows) = resolve(res, sel);
    if rows > MAX_SCAN_ROWS {
        return Err(CsvError::TooLarge(rows));
    }
    let io_err = |source| CsvError::Io {
        path: path.display().to_string(),
        source,
    };
    crate::export::write_file(path, |w| write_scan_csv(w, res, sel)).map_err(io_err)
}

/// The selection of the per-bus CSVs: every bus (sheet order) and every configuration
/// unless `--bus` / `--configuration` narrow them.
fn every_bus(res: &CheckResults, sel: &ScanSelection) -> (Vec<usize>, Vec<usize>) {
    let or_all = |v: &[usize], n: usize| {
        if v.is_empty() {
            (0..n).collect()
        } else {
            v.to_vec()
        }
    };
    (
        or_all(&sel.buses, res.network.buses.len()),
        or_all(&sel.configurations, res.scan.configurations.len()),
    )
}

/// Writes `scenario,configuration,bus,order,v_percent,v_volts`: one row per bus (every bus
/// by default, in sheet order) and injected order; `v_volts` is line-to-neutral.
pub fn write_voltages_csv(
    out: &mut dyn Write,
    res: &CheckResults,
    sel: &ScanSelection,
) -> io::Result<()> {
    let (buses, configs) = every_bus(res, sel);
    let orders = &res.penetration.injections.orders;
    writeln!(out, "{}", HEADERS[1])?;
    for (s, scenario) in res.scan.scenarios.iter().enumerate() {
        for &c in &configs {
            let label = res.label(c);
            let Some(v) = res
                .penetration
                .voltages(s, &res.scan.configurations[c].steps)
            else {
                continue;
            };
            for &b in &buses {
                let bus = &res.network.buses[b];
                let v_ln = bus.kv * 1000.0 / 3f64.sqrt();
                for (o, h) in orders.iter().enumerate() {
                    let pu = v[b][o];
                    writeln!(
                        out,
                        "{},{},{},{:?},{:?},{:?}",
                        field(scenario),
                        field(&label),
                        field(&bus.id),
                        h,
                        pu * 100.0,
                        pu * v_ln
                    )?;
                }
            }
        }
    }
    Ok(())
}

/// Writes the harmonic-voltage CSV of `sel` to `path`, whole or not at all.
pub fn write_voltages_file(
    path: &std::path::Path,
    res: &CheckResults,
    sel: &ScanSelection,
) -> Result<(), CsvError> {
    let io_err = |source| CsvError::Io {
        path: path.display().to_string(),
        source,
    };
    crate::export::write_file(path, |w| write_voltages_csv(w, res, sel)).map_err(io_err)
}

/// Writes `scenario,configuration,bus,v_pu,angle_deg` (input contract, version 2): the
/// operating point's voltage at every bus (in sheet order; `--bus` narrows) of every
/// scenario and configuration (`--configuration` narrows); a configuration without
/// load-flow solution has no rows.
pub fn write_operating_csv(
    out: &mut dyn Write,
    res: &CheckResults,
    sel: &ScanSelection,
) -> io::Result<()> {
    let (buses, configs) = every_bus(res, sel);
    writeln!(out, "{}", HEADERS[2])?;
    for (s, scenario) in res.scan.scenarios.iter().enumerate() {
        for &c in &configs {
            let label = res.label(c);
            let Ok(v) = res.operating.voltages(s, &res.scan.configurations[c].steps) else {
                continue;
            };
            for &b in &buses {
                writeln!(
                    out,
                    "{},{},{},{:?},{:?}",
                    field(scenario),
                    field(&label),
                    field(&res.network.buses[b].id),
                    v[b].norm(),
                    v[b].arg().to_degrees()
                )?;
            }
        }
    }
    Ok(())
}

/// Writes the operating-point CSV of `sel` to `path`, whole or not at all (refusing more
/// than [`MAX_SCAN_ROWS`] rows).
pub fn write_operating_file(
    path: &std::path::Path,
    res: &CheckResults,
    sel: &ScanSelection,
) -> Result<(), CsvError> {
    let (buses, configs) = every_bus(res, sel);
    let rows = (res.scan.scenarios.len() * configs.len() * buses.len()) as u64;
    if rows > MAX_SCAN_ROWS {
        return Err(CsvError::TooLarge(rows));
    }
    let io_err = |source| CsvError::Io {
        path: path.display().to_string(),
        source,
    };
    crate::export::write_file(path, |w| write_operating_csv(w, res, sel)).map_err(io_err)
}

/// Writes `scenario,bank,step,case,peak_a,frequency_hz,bus_peak_pu,capacitor_peak_pu`
/// (input contract, version 2): one row per simulated energizing event, each figure at its
/// worst closing instant; a ringing frequency not seen (over-damped) is left empty.
pub fn write_transients_csv(out: &mut dyn Write, res: &CheckResults) -> io::Result<()> {
    writeln!(out, "{}", HEADERS[3])?;
    for e in &res.switching.events {
        writeln!(
            out,
            "{},{},{},{},{:?},{},{:?},{:?}",
            field(&e.scenario),
            field(&e.bank),
            e.step,
            e.case.label(),
            e.peak_a,
            e.frequency_hz
                .map_or_else(String::new, |f| format!("{f:?}")),
            e.bus_peak_pu,
            e.capacitor_peak_pu
        )?;
    }
    Ok(())
}

/// Writes the transients CSV to `path`, whole or not at all.
pub fn write_transients_file(path: &std::path::Path, res: &CheckResults) -> Result<(), CsvError> {
    let io_err = |source| CsvError::Io {
        path: path.display().to_string(),
        source,
    };
    crate::export::write_file(path, |w| write_transients_csv(w, res)).map_err(io_err)
}
