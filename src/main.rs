//! The `overtone` command line: parse, call the library, print, and map every outcome to an
//! exit status (0 ran, 2 bad input or usage; nothing is written on status 2).

use std::fs::File;
use std::io::{self, BufWriter, Write};
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use overtone::check::{CheckOptions, CheckResults, run_check};
use overtone::io::csv::{MAX_SCAN_ROWS, ScanSelection, resolve, write_scan_csv};
use overtone::model::Plant;
use overtone::study::parse_configuration;

#[derive(Parser)]
#[command(
    name = "overtone",
    version,
    about = "Harmonic resonance screening of shunt capacitor banks"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(clap::Args)]
struct Outputs {
    /// Also write the frequency scan as CSV (input contract's columns) to this file.
    #[arg(long, value_name = "FILE")]
    scan_csv: Option<PathBuf>,
    /// Print the JSON summary on stdout instead of the terminal table.
    #[arg(long)]
    json: bool,
    /// Narrow the scan CSV to this bus (repeatable); it is scanned even if not a bank bus.
    #[arg(long = "bus", value_name = "BUS")]
    buses: Vec<String>,
    /// Narrow the scan CSV to this configuration, e.g. "C1=2 C2=0" or none (repeatable).
    #[arg(long = "configuration", value_name = "CONFIG")]
    configurations: Vec<String>,
}

#[derive(Subcommand)]
enum Command {
    /// Run the built-in invented demo plant end to end.
    Demo(Outputs),
}

/// A failure to report: message and exit status.
struct Failure(String);

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Demo(out) => run(&overtone::demo::demo_plant(), &out),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(Failure(msg)) => {
            let _ = writeln!(io::stderr(), "overtone: {msg}");
            ExitCode::from(2)
        }
    }
}

fn run(plant: &Plant, out: &Outputs) -> Result<(), Failure> {
    let options = CheckOptions {
        buses: out.buses.clone(),
    };
    let res = run_check(plant, &options).map_err(|e| Failure(e.to_string()))?;
    if let Some(path) = &out.scan_csv {
        write_csv(&res, out, path)?;
    }
    let stdout = io::stdout();
    let mut lock = stdout.lock();
    let printed = if out.json {
        writeln!(lock, "{}", overtone::io::json::to_json(&res))
    } else {
        overtone::report::summary::write_summary(&mut lock, &res)
    };
    match printed.and_then(|()| lock.flush()) {
        Err(e) if e.kind() != io::ErrorKind::BrokenPipe => Err(Failure(format!("stdout: {e}"))),
        _ => Ok(()),
    }
}

fn write_csv(res: &CheckResults, out: &Outputs, path: &PathBuf) -> Result<(), Failure> {
    let mut sel = ScanSelection::default();
    for id in &out.buses {
        if let Some(i) = res.network.bus_index(id) {
            sel.buses.push(i);
        }
    }
    for text in &out.configurations {
        let cfg =
            parse_configuration(text, &res.plant.banks).map_err(|e| Failure(e.to_string()))?;
        if let Some(c) = res.scan.configurations.iter().position(|x| *x == cfg) {
            sel.configurations.push(c);
        }
    }
    let (_, _, rows) = resolve(res, &sel);
    if rows > MAX_SCAN_ROWS {
        return Err(Failure(format!(
            "the scan CSV would have {rows} rows, more than {MAX_SCAN_ROWS}: narrow it with --bus and --configuration"
        )));
    }
    let file = File::create(path).map_err(|e| Failure(format!("{}: {e}", path.display())))?;
    let mut w = BufWriter::new(file);
    write_scan_csv(&mut w, res, &sel)
        .and_then(|()| w.flush())
        .map_err(|e| Failure(format!("{}: {e}", path.display())))
}
