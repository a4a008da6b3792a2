//! The `overtone` command line: parse, run the job a command names, print, and map every
//! outcome to an exit status: 0 ran, 1 with `--strict` when a check is flagged, 2 bad input
//! or usage (nothing is written on status 2). The clap types are in `cli.rs`.

mod cli;

use std::io::{self, Write};
use std::path::Path;
use std::process::ExitCode;

use clap::Parser;
use cli::{CalibrateArgs, Cli, Command, DesignArgs, Outputs, Select};
use overtone::export::{ExportPlan, OutputKind};
use overtone::io::provenance::{Provenance, file_provenance, parse_date};
use overtone::io::workbook_in::{ReadOutcome, read_workbook};
use overtone::jobs::check::run_check;
use overtone::present::{json, terminal};

/// A failure: the message for stderr.
struct Failure(String);

impl<E: std::fmt::Display> From<E> for Failure {
    fn from(e: E) -> Self {
        Failure(e.to_string())
    }
}

/// Exit status after an interrupt: 128 + SIGINT, as shells report it (common practice).
const INTERRUPTED: i32 = 130;

fn main() -> ExitCode {
    // Ctrl-C, SIGTERM or SIGHUP: remove the temporary files of writes in progress, so that
    // no partial output is left, and stop. Finished outputs are already complete.
    let _ = ctrlc::set_handler(|| {
        overtone::export::remove_pending();
        let _ = writeln!(
            io::stderr(),
            "\novertone: interrupted; no output file was left partly written"
        );
        std::process::exit(INTERRUPTED);
    });
    // `overtone help --help` (or -h) is the program's own help.
    let args: Vec<String> = std::env::args().collect();
    let cli = if args.len() == 3 && args[1] == "help" && (args[2] == "--help" || args[2] == "-h") {
        Cli::parse_from([args[0].as_str(), "--help"])
    } else {
        Cli::parse()
    };
    match run(cli.command) {
        Ok(code) => code,
        Err(Failure(msg)) => {
            let _ = writeln!(io::stderr(), "overtone: {msg}");
            ExitCode::from(2)
        }
    }
}

fn run(command: Command) -> Result<ExitCode, Failure> {
    match command {
        Command::Demo(out) => {
            let plan = ExportPlan::check(&out.exports(), None, out.force)?;
            let read = overtone::demo::demo_workbook()?;
            let prov = overtone::demo::demo_provenance(&read.warnings);
            study(&read, &out, &plan, prov)
        }
        Command::Check { plant, out } => {
            let plan = ExportPlan::check(&out.exports(), Some(&plant), out.force)?;
            let read = read(&plant)?;
            let prov = file_provenance(&plant, &read.warnings, overtone::demo::DEMO_DATE)
                .map_err(|e| Failure(format!("{}: {e}", plant.display())))?;
            study(&read, &out, &plan, prov)
        }
        Command::Scan {
            plant,
            csv: path,
            json,
            quiet,
            force,
            select,
        } => {
            let plan =
                ExportPlan::check(&[(path.as_deref(), OutputKind::Csv)], Some(&plant), force)?;
            let read = read(&plant)?;
            scan(&read, path.as_deref(), json, quiet, &select, &plan)
        }
        Command::Size(a) => {
            let outcome = overtone::jobs::size::size(&a.request()).map_err(|e| {
                warn_lines(&e.warnings);
                Failure(e.message)
            })?;
            warn_lines(&outcome.warnings);
            if a.json {
                let text = serde_json::to_string_pretty(&outcome.sizing);
                return print(|w| writeln!(w, "{}", text.unwrap_or_else(|_| "{}".into())));
            }
            print(|w| terminal::summary::write_sizing(w, &outcome.sizing, outcome.tuned))
        }
        Command::Design(a) => design(&a),
        Command::Calibrate(a) => calibrate(&a),
        Command::Template { file, force } => {
            let plan = ExportPlan::check(&[(Some(&file), OutputKind::Template)], None, force)?;
            plan.write_template(&file)?;
            Ok(ExitCode::SUCCESS)
        }
    }
}

/// Reads the workbook at `path` and prints the reader's warnings.
fn read(path: &Path) -> Result<ReadOutcome, Failure> {
    let read = read_workbook(path)?;
    let mut err = io::stderr().lock();
    for w in &read.warnings {
        let _ = terminal::table::write_hanging(&mut err, "warning: ", "  ", &w.to_string(), 100);
    }
    Ok(read)
}

/// Prints warning lines already worded (`warning: ...`) on stderr.
fn warn_lines(lines: &[String]) {
    let mut err = io::stderr().lock();
    for l in lines {
        let _ = writeln!(err, "{l}");
    }
}

/// The `scan` command: the scan and resonance screen only, as a table, JSON or the CSV.
fn scan(
    read: &ReadOutcome,
    path: Option<&Path>,
    json: bool,
    quiet: bool,
    select: &Select,
    plan: &ExportPlan,
) -> Result<ExitCode, Failure> {
    let (mut options, bar) =
        cli::options(select, select.configurations.clone(), quiet, Some(false));
    options.scan_only = true;
    let res = run_check(&read.plant, &options);
    bar.finish_and_clear();
    let res = res?;
    match path {
        Some(path) => {
            plan.write_scan(&res, path, &select.buses, &select.configurations)?;
            Ok(ExitCode::SUCCESS)
        }
        None if json => print(|w| writeln!(w, "{}", json::to_json(&res))),
        None => print(|w| terminal::summary::write_peaks(w, &res)),
    }
}

/// `check` and `demo`: every study, the outputs asked for, then the summary.
fn study(
    read: &ReadOutcome,
    out: &Outputs,
    plan: &ExportPlan,
    mut prov: Provenance,
) -> Result<ExitCode, Failure> {
    if let Some(d) = &out.date {
        prov.date = parse_date(d)?;
    }
    let (options, bar) = cli::options(&out.select, Vec::new(), out.quiet, out.remedies());
    let res = run_check(&read.plant, &options);
    bar.finish_and_clear();
    let res = res?;
    plan.write_check(&res, &out.outputs(), &prov)?;
    let code = print(|w| match out.json {
        true => writeln!(w, "{}", json::to_json(&res)),
        false => terminal::summary::write_summary(w, &res),
    })?;
    if out.strict && res.flagged() {
        return Ok(ExitCode::from(1));
    }
    Ok(code)
}

/// `design`: the plan search, the plant with the recommended plan, the design review.
fn design(a: &DesignArgs) -> Result<ExitCode, Failure> {
    let exports = [
        (a.output.as_deref(), OutputKind::Review),
        (a.report.as_deref(), OutputKind::Report),
        (a.write_plant.as_deref(), OutputKind::Template),
    ];
    let plan = ExportPlan::check(&exports, Some(&a.plant), a.force)?;
    let date = a.date.as_deref().map(parse_date).transpose()?;
    let read = read(&a.plant)?;
    let (bar, progress) =
        cli::progress_bar(a.quiet, "designing {bar:40} {pos}/{len} plans, {eta} left");
    let options = overtone::jobs::design::DesignOptions {
        progress: Some(progress),
        ..Default::default()
    };
    let res = overtone::jobs::design::run_design(&read.plant, &options);
    bar.finish_and_clear();
    let res = res?;
    let mut prov = file_provenance(&a.plant, &read.warnings, overtone::demo::DEMO_DATE)
        .map_err(|e| Failure(format!("{}: {e}", a.plant.display())))?;
    prov.date = date.unwrap_or(prov.date);
    let documents = (a.output.as_deref(), a.report.as_deref());
    plan.write_design(&res, a.write_plant.as_deref(), documents, &prov)?;
    let code = print(|w| match a.json {
        true => writeln!(w, "{}", json::design_json(&res)),
        false => terminal::design::write_design(w, &res),
    })?;
    if a.write_plant.is_some() && res.recommended.is_none() {
        let _ = writeln!(
            io::stderr(),
            "overtone: no plan passes every check, so --write-plant wrote nothing"
        );
    }
    Ok(code)
}

/// `calibrate`: the recordings read, the model calibrated, the calibrated plant written.
fn calibrate(a: &CalibrateArgs) -> Result<ExitCode, Failure> {
    use overtone::jobs::calibrate::{CalibrateOptions, Recording, run_calibrate};
    let exports = [
        (a.write_plant.as_deref(), OutputKind::Template),
        (a.output.as_deref(), OutputKind::Review),
        (a.report.as_deref(), OutputKind::Report),
    ];
    let plan = ExportPlan::check(&exports, Some(&a.plant), a.force)?;
    let date = a.date.as_deref().map(parse_date).transpose()?;
    let read = read(&a.plant)?;
    let mut recordings = Vec::new();
    for path in &a.recordings {
        let ext = path
            .extension()
            .map(|e| e.to_string_lossy().to_ascii_lowercase());
        recordings.push(match ext.as_deref() {
            Some("csv") => Recording::Log(overtone::io::recordings::harmonic_log::read_log(path)?),
            _ => Recording::Waveforms(Box::new(overtone::io::recordings::comtrade::read_comtrade(
                path,
            )?)),
        });
    }
    let options = CalibrateOptions {
        bus: a.bus.clone(),
        start: a.configuration.clone(),
    };
    let res = run_calibrate(&read.plant, &recordings, &options)?;
    let mut prov = file_provenance(&a.plant, &read.warnings, overtone::demo::DEMO_DATE)
        .map_err(|e| Failure(format!("{}: {e}", a.plant.display())))?;
    prov.date = date.unwrap_or(prov.date);
    let mut unwritten = Vec::new();
    if let Some(path) = &a.write_plant {
        let words = format!("plant {} SHA-256 {}", prov.input, prov.sha256);
        if !plan.write_calibrated(&res, path, &words)? {
            unwritten.push("--write-plant");
        }
    }
    let documents = (a.output.as_deref(), a.report.as_deref());
    if (documents.0.is_some() || documents.1.is_some())
        && !plan.write_calibration_documents(&res, documents, &prov)?
    {
        unwritten.push("-o and --report");
    }
    let code = print(|w| match a.json {
        true => writeln!(w, "{}", json::calibrate_json(&res)),
        false => terminal::calibrate::write_calibration(w, &res),
    })?;
    if !unwritten.is_empty() {
        let _ = writeln!(
            io::stderr(),
            "overtone: no switching event was found, so {} wrote nothing",
            unwritten.join(" and ")
        );
    }
    Ok(code)
}

/// Prints to stdout; a closed pipe is a quiet success.
fn print(f: impl FnOnce(&mut dyn Write) -> io::Result<()>) -> Result<ExitCode, Failure> {
    let stdout = io::stdout();
    let mut lock = stdout.lock();
    match f(&mut lock).and_then(|()| lock.flush()) {
        Err(e) if e.kind() != io::ErrorKind::BrokenPipe => Err(Failure(format!("stdout: {e}"))),
        _ => Ok(ExitCode::SUCCESS),
    }
}
