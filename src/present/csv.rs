//! CSV files that other tools read, per the input contract's "Outputs that other tools read":
//! numbers at full precision (the shortest text that reads back to the same f64).

use std::io::{self, Write};

use crate::jobs::check::CheckResults;
use crate::jobs::exports::{OperatingBlock, ScanCurve, VoltageBlock};

/// The header lines of the input contract's CSV files: scan, harmonic voltages, operating
/// point, switching transients.
pub const HEADERS: [&str; 4] = [
    "scenario,configuration,bus,order,frequency_hz,z_ohm,angle_deg",
    "scenario,configuration,bus,order,v_percent,v_volts",
    "scenario,configuration,bus,v_pu,angle_deg",
    "scenario,bank,step,case,peak_a,frequency_hz,bus_peak_pu,capacitor_peak_pu",
];

/// Writes `scenario,configuration,bus,order,frequency_hz,z_ohm,angle_deg`, one row per
/// point of each curve ([`crate::jobs::exports::ScanTable::curves`]).
pub fn write_scan_csv(
    out: &mut dyn Write,
    res: &CheckResults,
    curves: impl Iterator<Item = ScanCurve>,
) -> io::Result<()> {
    let f = res.plant.study.frequency_hz;
    writeln!(out, "{}", HEADERS[0])?;
    for curve in curves {
        let scenario = &res.scan.scenarios[curve.scenario];
        let label = res.label(curve.configuration);
        let bus = &res.network.buses[curve.bus].id;
        for (h, z) in res.scan.grid.orders.iter().zip(&curve.z) {
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

/// Writes `scenario,configuration,bus,order,v_percent,v_volts`: one row per bus of `buses`
/// (network indices) and injected order of each block; `v_volts` is line-to-neutral.
pub fn write_voltages_csv(
    out: &mut dyn Write,
    res: &CheckResults,
    buses: &[usize],
    blocks: impl Iterator<Item = VoltageBlock>,
) -> io::Result<()> {
    let orders = &res.penetration.injections.orders;
    writeln!(out, "{}", HEADERS[1])?;
    for block in blocks {
        let scenario = &res.scan.scenarios[block.scenario];
        let label = res.label(block.configuration);
        for &b in buses {
            let bus = &res.network.buses[b];
            let v_ln = bus.kv * 1000.0 / 3f64.sqrt();
            for (o, h) in orders.iter().enumerate() {
                let pu = block.v_pu[b][o];
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
    Ok(())
}

/// Writes `scenario,configuration,bus,v_pu,angle_deg` (input contract, version 2): the
/// operating point's voltage at every bus of `buses` (network indices) of each block; a
/// configuration without load-flow solution has no block, so no rows.
pub fn write_operating_csv(
    out: &mut dyn Write,
    res: &CheckResults,
    buses: &[usize],
    blocks: impl Iterator<Item = OperatingBlock>,
) -> io::Result<()> {
    writeln!(out, "{}", HEADERS[2])?;
    for block in blocks {
        let scenario = &res.scan.scenarios[block.scenario];
        let label = res.label(block.configuration);
        for &b in buses {
            let v = block.v_pu[b];
            writeln!(
                out,
                "{},{},{},{:?},{:?}",
                field(scenario),
                field(&label),
                field(&res.network.buses[b].id),
                v.norm(),
                v.arg().to_degrees()
            )?;
        }
    }
    Ok(())
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
