//! The `overtone` command line: parse, call the library, print, and map every outcome to an
//! exit status: 0 ran, 1 with `--strict` when a check is flagged, 2 bad input or usage
//! (nothing is written on status 2).

use std::io::{self, Write};
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use std::sync::Arc;
use std::time::Instant;

use indicatif::{ProgressBar, ProgressStyle};
use overtone::export::{OutputKind, check_output};
use overtone::io::workbook_in::read_workbook;
use overtone::jobs::check::{CheckOptions, run_check};
use overtone::model::Plant;
use overtone::present::csv::{
    selection, write_operating_file, write_scan_file, write_transients_file, write_voltages_file,
};
use overtone::present::review::{Provenance, file_date, sha256_hex, write_review};

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
struct Select {
    /// Narrow the scan CSV to this bus (repeatable); it is scanned even if it has no bank.
    #[arg(long = "bus", value_name = "BUS")]
    buses: Vec<String>,
    /// Narrow the scan CSV to this configuration, e.g. "C1=2 C2=0" or none (repeatable).
    #[arg(long = "configuration", value_name = "CONFIG")]
    configurations: Vec<String>,
}

#[derive(clap::Args)]
struct Outputs {
    /// Write the review workbook (.xlsx) to this file.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    output: Option<PathBuf>,
    /// The report date, YYYY-MM-DD (default: the input workbook's modification date; the
    /// demo's is fixed at 2026-01-01).
    #[arg(long, value_name = "DATE")]
    date: Option<String>,
    /// Also write the frequency scan as CSV (the input contract's columns) to this file.
    #[arg(long, value_name = "FILE")]
    scan_csv: Option<PathBuf>,
    /// Also write the harmonic voltages at every bus as CSV (the input contract's columns).
    #[arg(long, value_name = "FILE")]
    voltages_csv: Option<PathBuf>,
    /// Also write the operating point (bus voltage and angle of every scenario and
    /// configuration) as CSV (the input contract's columns).
    #[arg(long, value_name = "FILE")]
    operating_csv: Option<PathBuf>,
    /// Also write the simulated switching events (one row per step energized) as CSV (the
    /// input contract's columns).
    #[arg(long, value_name = "FILE")]
    transients_csv: Option<PathBuf>,
    /// Print the JSON summary on stdout instead of the terminal table.
    #[arg(long)]
    json: bool,
    /// Exit with status 1 when any configuration is flagged.
    #[arg(long)]
    strict: bool,
    /// No progress bar.
    #[arg(long)]
    quiet: bool,
    /// Study remedies for flagged banks even above 200 step combinations.
    #[arg(long, conflicts_with = "no_remedies")]
    remedies: bool,
    /// Do not study remedies.
    #[arg(long)]
    no_remedies: bool,
    /// Replace an existing output file that overtone did not write (a workbook of your
    /// own, for example); without it such a file is refused.
    #[arg(long)]
    force: bool,
    #[command(flatten)]
    select: Select,
}

#[derive(Subcommand)]
enum Command {
    /// Run the built-in invented demo plant end to end.
    Demo(Outputs),
    /// Read a plant workbook and run every study.
    Check {
        /// The plant's input workbook (.xlsx, .xlsm, .xls or .ods).
        plant: PathBuf,
        #[command(flatten)]
        out: Outputs,
    },
    /// Frequency scan only: the peaks per bus and configuration, or the CSV with --csv.
    Scan {
        /// The plant's input workbook (.xlsx, .xlsm, .xls or .ods).
        plant: PathBuf,
        /// Write the scan CSV (the input contract's columns) to this file (`--csv` is the
        /// same option).
        #[arg(long = "scan-csv", visible_alias = "csv", value_name = "FILE")]
        csv: Option<PathBuf>,
        /// Print the JSON summary (peaks and dips of every scanned bus) instead of the table.
        #[arg(long)]
        json: bool,
        /// No progress bar.
        #[arg(long)]
        quiet: bool,
        /// Replace an existing CSV that overtone did not write.
        #[arg(long)]
        force: bool,
        #[command(flatten)]
        select: Select,
    },
    /// Write a blank input workbook with every sheet, header, note and dropdown.
    Template {
        /// The workbook to write (.xlsx); an existing file is replaced only when it is a
        /// blank template or with --force.
        file: PathBuf,
        /// Replace an existing file that is not a blank template (a filled plant workbook).
        #[arg(long)]
        force: bool,
    },
    /// Size one detuned step or tuned filter from a few numbers, no workbook.
    Size(SizeArgs),
    /// Search the bank plans (step size × count × detuning × voltage class at the Design
    /// sheet's buses) that reach the target power factor and pass every check.
    Design(DesignArgs),
}

#[derive(clap::Args)]
struct DesignArgs {
    /// The plant's input workbook (.xlsx, .xlsm, .xls or .ods), with a Design sheet (or a
    /// proposed bank on the Capacitors sheet) and optionally a Load levels sheet.
    plant: PathBuf,
    /// Write the review workbook (.xlsx): the plans compared, the load levels, and every
    /// study of the recommended plan.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    output: Option<PathBuf>,
    /// Write the plant with the recommended plan on its Capacitors sheet (.xlsx), ready for
    /// `overtone check`.
    #[arg(long, value_name = "FILE")]
    write_plant: Option<PathBuf>,
    /// The report date, YYYY-MM-DD (default: the input workbook's modification date).
    #[arg(long, value_name = "DATE")]
    date: Option<String>,
    /// Print the design as JSON instead of the terminal table.
    #[arg(long)]
    json: bool,
    /// No progress bar.
    #[arg(long)]
    quiet: bool,
    /// Replace an existing output file that overtone did not write.
    #[arg(long)]
    force: bool,
}

#[derive(clap::Args)]
#[command(group(clap::ArgGroup::new("tuning").required(true).args(["detuning", "order"])))]
#[command(allow_negative_numbers = true)]
struct SizeArgs {
    /// Bus voltage, kV line-to-line.
    #[arg(long)]
    kv: f64,
    /// Effective output wanted at bus voltage, kvar.
    #[arg(long)]
    kvar: f64,
    /// System frequency, Hz.
    #[arg(long, default_value_t = 60.0)]
    hz: f64,
    /// Detuning factor in % of X_C (e.g. 7).
    #[arg(long)]
    detuning: Option<f64>,
    /// Tuned order of a filter (e.g. 4.7).
    #[arg(long)]
    order: Option<f64>,
    /// Reactor quality factor X/R at fundamental.
    #[arg(long, default_value_t = 50.0)]
    q: f64,
    /// Capacitor rated voltage, kV (default: the next standard rating above U/(1-p)).
    #[arg(long)]
    rated_kv: Option<f64>,
    /// Supply short-circuit power at the bus, MVA, for the parallel resonance below tuning.
    #[arg(long)]
    ssc_mva: Option<f64>,
    /// Print the sizing as JSON instead of the table.
    #[arg(long)]
    json: bool,
}

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

/// The report date of the built-in demo (fixed, so the demo's workbook is reproducible).
const DEMO_DATE: (u16, u8, u8) = (2026, 1, 1);

fn warn(warnings: &[overtone::io::workbook_in::Warning]) {
    let mut err = io::stderr().lock();
    for w in warnings {
        let _ = overtone::present::terminal::table::write_hanging(
            &mut err,
            "warning: ",
            "  ",
            &w.to_string(),
            100,
        );
    }
}

fn load(path: &std::path::Path) -> Result<Plant, Failure> {
    let read = read_workbook(path)?;
    warn(&read.warnings);
    Ok(read.plant)
}

/// Parses YYYY-MM-DD.
fn parse_date(s: &str) -> Result<(u16, u8, u8), Failure> {
    let bad = || Failure(format!("--date must be YYYY-MM-DD, found \"{s}\""));
    let mut it = s.split('-');
    let y: u16 = it.next().and_then(|v| v.parse().ok()).ok_or_else(bad)?;
    let m: u8 = it.next().and_then(|v| v.parse().ok()).ok_or_else(bad)?;
    let d: u8 = it.next().and_then(|v| v.parse().ok()).ok_or_else(bad)?;
    if it.next().is_some()
        || !(1900..=9999).contains(&y)
        || !(1..=12).contains(&m)
        || !(1..=31).contains(&d)
    {
        return Err(bad());
    }
    Ok((y, m, d))
}

fn run(command: Command) -> Result<ExitCode, Failure> {
    match command {
        Command::Demo(out) => {
            let read = overtone::demo::demo_workbook()?;
            let prov = Provenance {
                input: format!("built-in demo ({})", overtone::demo::DEMO_NAME),
                sha256: sha256_hex(overtone::demo::DEMO_WORKBOOK),
                date: DEMO_DATE,
                warnings: read.warnings.clone(),
            };
            study(&read.plant, &out, None, prov)
        }
        Command::Check { plant: path, out } => {
            check_outputs(&outputs(&out), Some(&path), out.force)?;
            let read = read_workbook(&path)?;
            warn(&read.warnings);
            let prov = file_provenance(&path, &read.warnings)?;
            study(&read.plant, &out, Some(&path), prov)
        }
        Command::Scan {
            plant,
            csv,
            json,
            quiet,
            force,
            select,
        } => {
            check_outputs(&[(&csv, OutputKind::Csv)], Some(&plant), force)?;
            let plant = load(&plant)?;
            let (mut options, bar) =
                options(&select, select.configurations.clone(), quiet, Some(false));
            options.scan_only = true;
            let res = run_check(&plant, &options);
            bar.finish_and_clear();
            let res = res?;
            match csv {
                Some(path) => {
                    let sel = selection(&res, &select.buses, &select.configurations)?;
                    write_scan_file(&path, &res, &sel)?;
                    Ok(ExitCode::SUCCESS)
                }
                None if json => {
                    print(|w| writeln!(w, "{}", overtone::present::json::to_json(&res)))
                }
                None => print(|w| overtone::present::terminal::summary::write_peaks(w, &res)),
            }
        }
        Command::Size(a) => size(&a),
        Command::Design(a) => design(&a),
        Command::Template { file, force } => {
            check_outputs(&[(&Some(file.clone()), OutputKind::Template)], None, force)?;
            overtone::io::template::write_template(&file)?;
            Ok(ExitCode::SUCCESS)
        }
    }
}

/// The provenance of an input workbook for a review: its file name, SHA-256, modification
/// date (the demo's date when the file system has none) and the reader's warnings.
fn file_provenance(
    path: &std::path::Path,
    warnings: &[overtone::io::workbook_in::Warning],
) -> Result<Provenance, Failure> {
    let bytes = std::fs::read(path).map_err(|e| Failure(format!("{}: {e}", path.display())))?;
    Ok(Provenance {
        input: path
            .file_name()
            .map_or_else(String::new, |n| n.to_string_lossy().into_owned()),
        sha256: sha256_hex(&bytes),
        date: file_date(path).unwrap_or(DEMO_DATE),
        warnings: warnings.to_vec(),
    })
}

/// The outputs a study writes, with their kinds.
fn outputs(out: &Outputs) -> [(&Option<PathBuf>, OutputKind); 5] {
    [
        (&out.output, OutputKind::Review),
        (&out.scan_csv, OutputKind::Csv),
        (&out.voltages_csv, OutputKind::Csv),
        (&out.operating_csv, OutputKind::Csv),
        (&out.transients_csv, OutputKind::Csv),
    ]
}

/// Checks before any study that every output can be written, none is the input, none
/// replaces a file overtone did not write (unless `force`) and no two outputs share a path.
fn check_outputs(
    outputs: &[(&Option<PathBuf>, OutputKind)],
    input: Option<&std::path::Path>,
    force: bool,
) -> Result<(), Failure> {
    let given: Vec<(&PathBuf, OutputKind)> = outputs
        .iter()
        .filter_map(|(o, k)| o.as_ref().map(|p| (p, *k)))
        .collect();
    for (i, (o, kind)) in given.iter().enumerate() {
        check_output(o, *kind, input, force)?;
        if given[..i].iter().any(|(p, _)| p == o) {
            return Err(Failure(format!(
                "{}: given for two outputs: choose a name for each",
                o.display()
            )));
        }
    }
    Ok(())
}

/// Study options with a progress bar on stderr that appears once a study has run for a
/// second (hidden with `quiet` or when stderr is not a terminal).
fn options(
    select: &Select,
    configurations: Vec<String>,
    quiet: bool,
    remedies: Option<bool>,
) -> (CheckOptions, ProgressBar) {
    let (bar, progress) = progress_bar(quiet, "scanning {bar:40} {pos}/{len} blocks, {eta} left");
    let options = CheckOptions {
        buses: select.buses.clone(),
        configurations,
        progress: Some(progress),
        remedies,
        scan_only: false,
        switching: true,
        ..Default::default()
    };
    (options, bar)
}

/// A progress callback for the library and its bar on stderr, shown once a study has run
/// for a second (hidden with `quiet` or when stderr is not a terminal).
type Progress = Arc<dyn Fn(u64, u64) + Send + Sync>;

fn progress_bar(quiet: bool, template: &str) -> (ProgressBar, Progress) {
    let bar = if quiet {
        ProgressBar::hidden()
    } else {
        ProgressBar::new(0)
    };
    bar.set_style(
        ProgressStyle::with_template(template).unwrap_or_else(|_| ProgressStyle::default_bar()),
    );
    let start = Instant::now();
    let handle = bar.clone();
    let progress = move |done: u64, total: u64| {
        if start.elapsed().as_secs_f64() > 1.0 {
            handle.set_length(total);
            handle.set_position(done);
        }
    };
    (bar, Arc::new(progress))
}

fn size(a: &SizeArgs) -> Result<ExitCode, Failure> {
    use overtone::model::{MAX_MAGNITUDE, MIN_MAGNITUDE};
    let positive = |v: f64, what: &str| {
        if !(v.is_finite() && v > 0.0) {
            Err(Failure(format!(
                "--{what} must be a positive number, found {v}"
            )))
        } else if !(MIN_MAGNITUDE..=MAX_MAGNITUDE).contains(&v) {
            Err(Failure(format!(
                "--{what} must be between {MIN_MAGNITUDE:e} and {MAX_MAGNITUDE:e}, found {v:e}"
            )))
        } else {
            Ok(())
        }
    };
    positive(a.kv, "kv")?;
    positive(a.kvar, "kvar")?;
    if a.hz != 50.0 && a.hz != 60.0 {
        return Err(Failure(format!(
            "--hz must be 50 or 60 (as the Study sheet's Frequency), found {}",
            a.hz
        )));
    }
    positive(a.q, "q")?;
    let mut err = io::stderr().lock();
    if a.kv >= 100.0 {
        let _ = writeln!(
            err,
            "warning: --kv is in kV: {} means {} kV; for {} V give --kv {}",
            a.kv,
            a.kv,
            a.kv,
            a.kv / 1000.0
        );
    }
    if let Some(d) = a
        .detuning
        .filter(|&d| (overtone::model::MIN_MAGNITUDE..1.0).contains(&d))
    {
        let _ = writeln!(
            err,
            "warning: --detuning is in percent: {d} means p = {d} % (tuned at {:.1}); for {} % give --detuning {}",
            1.0 / (d / 100.0).sqrt(),
            (d * 100.0 * 1e6).round() / 1e6,
            (d * 100.0 * 1e6).round() / 1e6
        );
    }
    drop(err);
    for (v, what) in [
        (a.rated_kv, "rated-kv"),
        (a.ssc_mva, "ssc-mva"),
        (a.order, "order"),
    ] {
        if let Some(v) = v {
            positive(v, what)?;
        }
    }
    let p = match (a.detuning, a.order) {
        (Some(d), _) if (MIN_MAGNITUDE..100.0).contains(&d) => d / 100.0,
        (Some(d), _) => {
            return Err(Failure(format!(
                "--detuning must be above 0 and below 100 (percent of X_C, e.g. 7), found {d}{}",
                if d == 0.0 {
                    ": a plain capacitor has no reactor to size"
                } else {
                    ""
                }
            )));
        }
        (None, Some(h)) if h > 1.0 && h.is_finite() => overtone::study::detune::p_for_order(h),
        (None, Some(h)) => return Err(Failure(format!("--order must be above 1, found {h}"))),
        (None, None) => return Err(Failure("give --detuning or --order".into())),
    };
    let x_sys = a.ssc_mva.map(|s| a.kv * a.kv / s);
    let s = overtone::study::detune::size_for_output(a.hz, a.kv, a.kvar, p, a.q, a.rated_kv, x_sys)
        .ok_or_else(|| {
            Failure(format!(
                "no standard capacitor rating at or above {:.0} V: give --rated-kv",
                a.kv / (1.0 - p) * 1000.0
            ))
        })?;
    if let Some(rated) = a.rated_kv
        && s.capacitor_kv_needed > rated * (1.0 + 1e-9)
    {
        let _ = writeln!(
            io::stderr(),
            "warning: the capacitor sees U/(1-p) = {:.0} V, {:.1} % over its {:.0} V rating (IEEE 18 allows 110 % of rated rms voltage continuously, with harmonics on top): choose --rated-kv {} or more",
            s.capacitor_kv_needed * 1000.0,
            (s.capacitor_kv_needed / rated - 1.0) * 100.0,
            rated * 1000.0,
            overtone::study::detune::next_standard_rating(s.capacitor_kv_needed)
                .map_or_else(|| "higher".to_string(), |r| r.to_string())
        );
    }
    if a.json {
        return print(|w| {
            writeln!(
                w,
                "{}",
                serde_json::to_string_pretty(&s).unwrap_or_else(|_| "{}".into())
            )
        });
    }
    let tuned = a.order.is_some();
    print(|w| overtone::present::terminal::summary::write_sizing(w, &s, tuned))
}

fn study(
    plant: &Plant,
    out: &Outputs,
    input: Option<&std::path::Path>,
    mut prov: Provenance,
) -> Result<ExitCode, Failure> {
    check_outputs(&outputs(out), input, out.force)?;
    if let Some(d) = &out.date {
        prov.date = parse_date(d)?;
    }
    let remedies = match (out.remedies, out.no_remedies) {
        (true, _) => Some(true),
        (_, true) => Some(false),
        _ => None,
    };
    let (options, bar) = options(&out.select, Vec::new(), out.quiet, remedies);
    let res = run_check(plant, &options);
    bar.finish_and_clear();
    let res = res?;
    let sel = selection(&res, &out.select.buses, &out.select.configurations)?;
    if let Some(path) = &out.scan_csv {
        write_scan_file(path, &res, &sel)?;
    }
    if let Some(path) = &out.voltages_csv {
        write_voltages_file(path, &res, &sel)?;
    }
    if let Some(path) = &out.operating_csv {
        write_operating_file(path, &res, &sel)?;
    }
    if let Some(path) = &out.transients_csv {
        write_transients_file(path, &res)?;
    }
    if let Some(path) = &out.output {
        write_review(path, &res, &prov)?;
    }
    let code = print(|w| {
        if out.json {
            writeln!(w, "{}", overtone::present::json::to_json(&res))
        } else {
            overtone::present::terminal::summary::write_summary(w, &res)
        }
    })?;
    if out.strict && res.flagged() {
        return Ok(ExitCode::from(1));
    }
    Ok(code)
}

fn design(a: &DesignArgs) -> Result<ExitCode, Failure> {
    check_outputs(
        &[
            (&a.output, OutputKind::Review),
            (&a.write_plant, OutputKind::Template),
        ],
        Some(&a.plant),
        a.force,
    )?;
    let date = a.date.as_deref().map(parse_date).transpose()?;
    let read = read_workbook(&a.plant)?;
    warn(&read.warnings);
    let (bar, progress) = progress_bar(a.quiet, "designing {bar:40} {pos}/{len} plans, {eta} left");
    let options = overtone::jobs::design::DesignOptions {
        progress: Some(progress),
        ..Default::default()
    };
    let res = overtone::jobs::design::run_design(&read.plant, &options);
    bar.finish_and_clear();
    let res = res?;
    if let Some(path) = &a.write_plant
        && let Some(i) = res.recommended
    {
        let bytes = overtone::io::template::plant_workbook(&res.plant_with(i)).map_err(|e| {
            Failure(format!(
                "{}: the workbook cannot be written ({e})",
                path.display()
            ))
        })?;
        overtone::export::write_bytes(path, &bytes)
            .map_err(|e| Failure(format!("{}: {e}", path.display())))?;
    }
    if let Some(path) = &a.output {
        let mut prov = file_provenance(&a.plant, &read.warnings)?;
        if let Some(d) = date {
            prov.date = d;
        }
        overtone::present::review::write_design_review(path, &res, &prov)?;
    }
    let code = print(|w| {
        if a.json {
            writeln!(w, "{}", overtone::present::json::design_json(&res))
        } else {
            overtone::present::terminal::design::write_design(w, &res)
        }
    })?;
    if a.write_plant.is_some() && res.recommended.is_none() {
        let _ = writeln!(
            io::stderr(),
            "overtone: no plan passes every check, so --write-plant wrote nothing"
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
