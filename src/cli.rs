//! The command line's words: the clap types of every command and option, their conversion
//! to the library's requests, and the progress bar on stderr.

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Instant;

use clap::{Parser, Subcommand};
use indicatif::{ProgressBar, ProgressStyle};
use overtone::export::{CheckOutputs, OutputKind};
use overtone::jobs::check::CheckOptions;
use overtone::jobs::size::SizeRequest;

#[derive(Parser)]
#[command(
    name = "overtone",
    version,
    about = "Harmonic resonance screening of shunt capacitor banks",
    term_width = 100
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(clap::Args)]
pub struct Select {
    /// Narrow the scan CSV to this bus (repeatable); it is scanned even if it has no bank.
    #[arg(long = "bus", value_name = "BUS")]
    pub buses: Vec<String>,
    /// Narrow the scan CSV to this configuration, e.g. "C1=2 C2=0" or none (repeatable).
    #[arg(long = "configuration", value_name = "CONFIG")]
    pub configurations: Vec<String>,
}

#[derive(clap::Args)]
pub struct Outputs {
    /// Write the review workbook (.xlsx) to this file.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Write the typeset study report (.pdf) to this file.
    #[arg(long, value_name = "FILE")]
    pub report: Option<PathBuf>,
    /// The report date, YYYY-MM-DD (default: the input workbook's modification date; the
    /// demo's is fixed at 2026-01-01).
    #[arg(long, value_name = "DATE")]
    pub date: Option<String>,
    /// Also write the frequency scan as CSV (the input contract's columns) to this file.
    #[arg(long, value_name = "FILE")]
    pub scan_csv: Option<PathBuf>,
    /// Also write the harmonic voltages at every bus as CSV (the input contract's columns;
    /// v_volts is line-to-neutral).
    #[arg(long, value_name = "FILE")]
    pub voltages_csv: Option<PathBuf>,
    /// Also write the operating point (bus voltage and angle of every scenario and
    /// configuration) as CSV (the input contract's columns).
    #[arg(long, value_name = "FILE")]
    pub operating_csv: Option<PathBuf>,
    /// Also write the simulated switching events (one row per step energized) as CSV (the
    /// input contract's columns).
    #[arg(long, value_name = "FILE")]
    pub transients_csv: Option<PathBuf>,
    /// Print the JSON summary on stdout instead of the terminal table.
    #[arg(long)]
    pub json: bool,
    /// Exit with status 1 when any configuration is flagged.
    #[arg(long)]
    pub strict: bool,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
    /// Study remedies for flagged banks even above 200 step combinations.
    #[arg(long, conflicts_with = "no_remedies")]
    pub remedies: bool,
    /// Do not study remedies.
    #[arg(long)]
    pub no_remedies: bool,
    /// Replace an existing output file that overtone did not write (a workbook of your
    /// own, for example); without it such a file is refused.
    #[arg(long)]
    pub force: bool,
    #[command(flatten)]
    pub select: Select,
}

#[derive(Subcommand)]
pub enum Command {
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
    /// Calibrate the model from recordings at the PCC: switching events in COMTRADE
    /// captures give S_sc, X/R, Z(h) and the background; a harmonic log is judged by
    /// IEEE 519-2014's statistical evaluation.
    Calibrate(CalibrateArgs),
}

#[derive(clap::Args)]
pub struct CalibrateArgs {
    /// The plant's input workbook (.xlsx, .xlsm, .xls or .ods).
    pub plant: PathBuf,
    /// Recordings: COMTRADE (.cfg with its .dat, or .cff) and harmonic logs (.csv).
    #[arg(required = true, value_name = "RECORDING")]
    pub recordings: Vec<PathBuf>,
    /// The bus the recordings were taken at (default: the PCC).
    #[arg(long, value_name = "BUS")]
    pub bus: Option<String>,
    /// The steps in service when the first recording starts, e.g. "C1=0 C2=2" (default:
    /// the fewest steps consistent with the switching events found).
    #[arg(long, value_name = "STEPS")]
    pub configuration: Option<String>,
    /// Write the calibrated plant (.xlsx): a supply scenario `measured` with the fitted
    /// source and its Background rows, ready for `overtone check`.
    #[arg(long, value_name = "FILE")]
    pub write_plant: Option<PathBuf>,
    /// Write the review workbook (.xlsx): the Calibration sheet, then every sheet of the
    /// calibrated plant's study.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Write the typeset study report (.pdf): the calibration, then the calibrated plant's
    /// study.
    #[arg(long, value_name = "FILE")]
    pub report: Option<PathBuf>,
    /// The report date, YYYY-MM-DD (default: the input workbook's modification date).
    #[arg(long, value_name = "DATE")]
    pub date: Option<String>,
    /// Print the calibration as JSON instead of the terminal summary.
    #[arg(long)]
    pub json: bool,
    /// Replace an existing output file that overtone did not write.
    #[arg(long)]
    pub force: bool,
}

#[derive(clap::Args)]
pub struct DesignArgs {
    /// The plant's input workbook (.xlsx, .xlsm, .xls or .ods), with a Design sheet (or a
    /// proposed bank on the Capacitors sheet) and optionally a Load levels sheet.
    pub plant: PathBuf,
    /// Write the review workbook (.xlsx): the plans compared, the load levels, and every
    /// study of the recommended plan.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Write the typeset study report (.pdf): the plans compared, then the recommended
    /// plan's study.
    #[arg(long, value_name = "FILE")]
    pub report: Option<PathBuf>,
    /// Write the plant with the recommended plan on its Capacitors sheet (.xlsx), ready for
    /// `overtone check`.
    #[arg(long, value_name = "FILE")]
    pub write_plant: Option<PathBuf>,
    /// The report date, YYYY-MM-DD (default: the input workbook's modification date).
    #[arg(long, value_name = "DATE")]
    pub date: Option<String>,
    /// Print the design as JSON instead of the terminal table.
    #[arg(long)]
    pub json: bool,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
    /// Replace an existing output file that overtone did not write.
    #[arg(long)]
    pub force: bool,
}

#[derive(clap::Args)]
#[command(group(clap::ArgGroup::new("tuning").required(true).args(["detuning", "order"])))]
#[command(allow_negative_numbers = true)]
#[command(
    override_usage = "overtone size --kv <KV> --kvar <KVAR> --hz <HZ> (--detuning <P> | --order <H>) [OPTIONS]"
)]
pub struct SizeArgs {
    /// Bus voltage, kV line-to-line.
    #[arg(long)]
    pub kv: f64,
    /// Effective output wanted at bus voltage, kvar.
    #[arg(long)]
    pub kvar: f64,
    /// System frequency, Hz: 50 or 60.
    #[arg(long)]
    pub hz: f64,
    /// Detuning factor in % of X_C (e.g. 7).
    #[arg(long)]
    pub detuning: Option<f64>,
    /// Tuned order of a filter (e.g. 4.7).
    #[arg(long)]
    pub order: Option<f64>,
    /// Reactor quality factor X/R at fundamental.
    #[arg(long, default_value_t = 50.0)]
    pub q: f64,
    /// Capacitor rated voltage, kV (default: the next standard rating above U/(1-p)).
    #[arg(long)]
    pub rated_kv: Option<f64>,
    /// Supply short-circuit power at the bus, MVA, for the parallel resonance below tuning.
    #[arg(long)]
    pub ssc_mva: Option<f64>,
    /// Print the sizing as JSON instead of the table.
    #[arg(long)]
    pub json: bool,
}

impl Outputs {
    /// The outputs a study writes, with their kinds, in the order they are checked.
    pub fn exports(&self) -> [(Option<&Path>, OutputKind); 6] {
        [
            (self.output.as_deref(), OutputKind::Review),
            (self.report.as_deref(), OutputKind::Report),
            (self.scan_csv.as_deref(), OutputKind::Csv),
            (self.voltages_csv.as_deref(), OutputKind::Csv),
            (self.operating_csv.as_deref(), OutputKind::Csv),
            (self.transients_csv.as_deref(), OutputKind::Csv),
        ]
    }

    /// The outputs asked for, with the narrowing of the CSVs.
    pub fn outputs(&self) -> CheckOutputs<'_> {
        CheckOutputs {
            review: self.output.as_deref(),
            report: self.report.as_deref(),
            scan_csv: self.scan_csv.as_deref(),
            voltages_csv: self.voltages_csv.as_deref(),
            operating_csv: self.operating_csv.as_deref(),
            transients_csv: self.transients_csv.as_deref(),
            buses: &self.select.buses,
            configurations: &self.select.configurations,
        }
    }

    /// `--remedies` / `--no-remedies`: `None` = the default rule.
    pub fn remedies(&self) -> Option<bool> {
        match (self.remedies, self.no_remedies) {
            (true, _) => Some(true),
            (_, true) => Some(false),
            _ => None,
        }
    }
}

impl SizeArgs {
    /// The library's request.
    pub fn request(&self) -> SizeRequest {
        SizeRequest {
            kv: self.kv,
            kvar: self.kvar,
            hz: self.hz,
            detuning: self.detuning,
            order: self.order,
            q: self.q,
            rated_kv: self.rated_kv,
            ssc_mva: self.ssc_mva,
        }
    }
}

/// Study options with a progress bar on stderr that appears once a study has run for a
/// second (hidden with `quiet` or when stderr is not a terminal).
pub fn options(
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

/// A progress callback for the library.
pub type Progress = Arc<dyn Fn(u64, u64) + Send + Sync>;

/// A progress callback and its bar on stderr, shown once a study has run for a second
/// (hidden with `quiet` or when stderr is not a terminal).
pub fn progress_bar(quiet: bool, template: &str) -> (ProgressBar, Progress) {
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
