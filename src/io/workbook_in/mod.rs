//! Reads the plant's input workbook (`.xlsx`, `.xlsm`, `.xls`, `.ods`) per the input
//! contract into a validated [`Plant`], or every problem found (up to
//! [`MAX_ERRORS`]), each naming `Sheet!Cell`, the value found and what was expected.
//!
//! Reading is in three passes: the file (one clear sentence when it is not a readable
//! workbook), the cells (types, blanks, enumerations, at their cells), then the plant's own
//! validation ([`Plant::validate`]), whose element-and-field errors are mapped back to cells.

mod cells;
mod defaults;
mod design;
mod plausible;
mod sequence;
mod sheets;
mod study;
mod table;

use std::fmt;
use std::io::Cursor;
use std::path::Path;

use calamine::{HeaderRow, Reader, Sheets, open_workbook_auto_from_rs};

pub use cells::{MAX_CELLS, MAX_ROWS};

pub use design::reactor_choice;
pub use sheets::{load_type, studied_steps};
pub use study::{limit_set, tolerance};
pub use table::{a1, normalize};

use crate::model::Plant;
use table::{Diagnostics, Row, Table};

/// Most cell errors reported for one workbook.
pub const MAX_ERRORS: usize = 100;

/// One bad cell.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct InputError {
    pub sheet: String,
    /// A1 notation.
    pub cell: String,
    pub message: String,
}

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}!{}: {}", self.sheet, self.cell, self.message)
    }
}

/// Something the reader assumed or ignored, kept for the report's assumptions.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct Warning {
    pub sheet: String,
    pub cell: Option<String>,
    pub message: String,
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.cell {
            Some(c) => write!(f, "{}!{}: {}", self.sheet, c, self.message),
            None => write!(f, "{}: {}", self.sheet, self.message),
        }
    }
}

/// A workbook that could not be read into a plant.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum ReadError {
    /// The file itself: missing, empty, not a workbook, damaged, encrypted, or without a
    /// required sheet.
    #[error("{file}: {reason}")]
    File { file: String, reason: String },
    /// Bad cells, all of them (up to [`MAX_ERRORS`]).
    #[error("{file}: {} problem(s) in the workbook{}:\n{}", .errors.len() + .more, if *.more > 0 { format!(" (the first {} shown)", .errors.len()) } else { String::new() }, .errors.iter().map(|e| format!("  {e}")).collect::<Vec<_>>().join("\n"))]
    Cells {
        file: String,
        errors: Vec<InputError>,
        /// Errors found beyond those listed.
        more: usize,
    },
}

/// A plant read from a workbook, with the reader's warnings.
#[derive(Debug, Clone)]
pub struct ReadOutcome {
    pub plant: Plant,
    pub warnings: Vec<Warning>,
}

/// Reads and validates the workbook at `path`.
pub fn read_workbook(path: &Path) -> Result<ReadOutcome, ReadError> {
    let file = path.display().to_string();
    let bytes = std::fs::read(path).map_err(|e| ReadError::File {
        file: file.clone(),
        reason: match e.kind() {
            std::io::ErrorKind::NotFound => "the file does not exist".to_string(),
            std::io::ErrorKind::PermissionDenied => {
                "permission denied: the file cannot be read".to_string()
            }
            _ => format!("the file cannot be read ({e})"),
        },
    })?;
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    read_workbook_bytes(&file, &stem, &bytes)
}

/// Bounds on what the reader accepts, so that a runaway or hostile file is refused with a
/// sentence instead of exhausting memory.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ReadLimits {
    /// Non-blank cells in the contract's sheets ([`MAX_CELLS`]).
    pub max_cells: usize,
    /// Bytes the parts of an .xlsx or .xlsm may expand to, as the zip directory declares
    /// them; its sheets are streamed ([`MAX_EXPANDED_BYTES`]).
    pub max_expanded_bytes: u64,
    /// The same for an .ods, whose reader holds every sheet at once
    /// ([`MAX_ODS_EXPANDED_BYTES`]).
    pub max_ods_expanded_bytes: u64,
    /// Bytes of an .xls file, whose reader holds every sheet at once ([`MAX_XLS_BYTES`]).
    pub max_xls_bytes: u64,
}

/// The .xlsx expansion bound: 1 GiB. A workbook of 1,000,000 loads expands to 275 MB and
/// reads in 719 MB.
pub const MAX_EXPANDED_BYTES: u64 = 1 << 30;
/// The .ods expansion bound: 512 MiB. An .ods of 100,000 loads expands to 98 MB and reads
/// in 120 MB, so the bound keeps a read near 650 MB.
pub const MAX_ODS_EXPANDED_BYTES: u64 = 512 << 20;
/// The .xls size bound: 64 MiB (the format holds at most 65,536 rows a sheet).
pub const MAX_XLS_BYTES: u64 = 64 << 20;

impl Default for ReadLimits {
    fn default() -> Self {
        ReadLimits {
            max_cells: MAX_CELLS,
            max_expanded_bytes: MAX_EXPANDED_BYTES,
            max_ods_expanded_bytes: MAX_ODS_EXPANDED_BYTES,
            max_xls_bytes: MAX_XLS_BYTES,
        }
    }
}

/// The uncompressed size the zip directory of `bytes` declares for all its parts, and
/// whether it is an OpenDocument file (`None` when the directory cannot be read: the
/// workbook reader then says why).
fn declared_expansion(bytes: &[u8]) -> Option<(u64, bool)> {
    let mut zip = zip::ZipArchive::new(Cursor::new(bytes)).ok()?;
    let mut total = 0u64;
    let mut ods = false;
    for i in 0..zip.len() {
        let part = zip.by_index_raw(i).ok()?;
        ods |= part.name_raw() == b"content.xml";
        total = total.saturating_add(part.size());
    }
    Some((total, ods))
}

const ZIP_MAGIC: &[u8] = b"PK\x03\x04";
const OLE_MAGIC: &[u8] = &[0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1];

fn open<'b>(
    file: &str,
    bytes: &'b [u8],
    limits: &ReadLimits,
) -> Result<Sheets<Cursor<&'b [u8]>>, ReadError> {
    let fail = |reason: String| ReadError::File {
        file: file.to_string(),
        reason,
    };
    if bytes.is_empty() {
        return Err(fail("the file is empty".into()));
    }
    let is_zip = bytes.starts_with(ZIP_MAGIC);
    let is_ole = bytes.starts_with(OLE_MAGIC);
    if !is_zip && !is_ole {
        return Err(fail(
            "this is not a spreadsheet workbook (.xlsx, .xlsm, .xls or .ods)".into(),
        ));
    }
    let too_large = |size: u64, bound: u64, what: &str| {
        fail(format!(
            "the workbook {what} {} MB, more than the {} MB the reader accepts: remove unused sheets, rows and columns or split the plant into several studies",
            size / 1_000_000,
            bound / 1_000_000
        ))
    };
    if is_zip && let Some((expanded, ods)) = declared_expansion(bytes) {
        let bound = if ods {
            limits.max_ods_expanded_bytes
        } else {
            limits.max_expanded_bytes
        };
        if expanded > bound {
            return Err(too_large(expanded, bound, "expands to"));
        }
    }
    if is_ole && bytes.len() as u64 > limits.max_xls_bytes {
        return Err(too_large(bytes.len() as u64, limits.max_xls_bytes, "is"));
    }
    let opened = std::panic::catch_unwind(|| open_workbook_auto_from_rs(Cursor::new(bytes)));
    match opened {
        Ok(Ok(mut wb)) => {
            wb.with_header_row(HeaderRow::Row(0));
            Ok(wb)
        }
        Ok(Err(e)) if is_ole && !file.to_ascii_lowercase().ends_with(".xls") => Err(fail(format!(
            "the workbook is password-protected or encrypted and cannot be read: save a copy without a password (reader: {e})"
        ))),
        Ok(Err(e)) => Err(fail(format!(
            "the workbook cannot be read; it may be truncated or damaged: open it in a spreadsheet program and save it again (reader: {e})"
        ))),
        Err(_) => Err(fail(
            "the workbook is malformed in a way the reader cannot handle: open it in a spreadsheet program and save it again".into(),
        )),
    }
}

/// A sheet that could not be gathered.
enum SheetError {
    TooLarge(cells::TooLarge),
    Reader(String),
}

/// The non-blank cells of sheet `name`, streamed for .xlsx (no dense range is built) and
/// taken from the reader's range for the other formats, spending from `budget`.
fn sheet_rows<RS: std::io::Read + std::io::Seek>(
    wb: &mut Sheets<RS>,
    name: &str,
    budget: &mut usize,
) -> Result<Vec<Row>, SheetError> {
    if let Sheets::Xlsx(x) = wb {
        let mut reader = x
            .worksheet_cells_reader(name)
            .map_err(|e| SheetError::Reader(e.to_string()))?;
        let mut out = cells::Collector::new(budget);
        while let Some(cell) = reader
            .next_cell()
            .map_err(|e| SheetError::Reader(e.to_string()))?
        {
            let (r, c) = cell.get_position();
            out.push(r, c, cells::owned(cell.get_value()))
                .map_err(SheetError::TooLarge)?;
        }
        return Ok(out.finish());
    }
    let range = wb
        .worksheet_range(name)
        .map_err(|e| SheetError::Reader(e.to_string()))?;
    cells::from_range(&range, budget).map_err(SheetError::TooLarge)
}

/// The sheets of the contract: (name, required).
pub const SHEETS: &[(&str, bool)] = &[
    ("Study", true),
    ("Buses", true),
    ("Sources", true),
    ("Transformers", false),
    ("Cables", false),
    ("Capacitors", false),
    ("Loads", false),
    ("Spectra", false),
    ("Background", false),
    ("Design", false),
    ("Load levels", false),
];

/// Reads and validates a workbook held in memory; `file` names it in messages and `stem`
/// is the default study title.
pub fn read_workbook_bytes(file: &str, stem: &str, bytes: &[u8]) -> Result<ReadOutcome, ReadError> {
    read_workbook_bytes_within(file, stem, bytes, &ReadLimits::default())
}

/// A sheet's name as found and its rows.
type SheetRows = Option<(String, Vec<Row>)>;

/// The sheets of [`SHEETS`] that the workbook has, in that order, as rows (`None` for an
/// optional sheet it lacks); a missing required sheet or an unreadable one is an error
/// naming the file.
fn sheet_tables(
    file: &str,
    wb: &mut Sheets<Cursor<&[u8]>>,
    names: &[String],
    limits: &ReadLimits,
) -> Result<Vec<SheetRows>, ReadError> {
    let fail = |reason: String| ReadError::File {
        file: file.to_string(),
        reason,
    };
    let mut sheets: Vec<SheetRows> = Vec::new();
    let mut missing = Vec::new();
    let mut budget = limits.max_cells;
    for &(sheet, required) in SHEETS {
        let found = names
            .iter()
            .find(|n| normalize(n) == normalize(sheet))
            .cloned();
        let Some(name) = found else {
            if required {
                missing.push(sheet);
            } else {
                sheets.push(None);
            }
            continue;
        };
        let rows = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            sheet_rows(wb, &name, &mut budget)
        }));
        match rows {
            Ok(Ok(r)) => sheets.push(Some((name, r))),
            Ok(Err(SheetError::TooLarge(t))) => {
                return Err(fail(t.sentence(&name, limits.max_cells)));
            }
            Ok(Err(SheetError::Reader(e))) => {
                return Err(fail(format!(
                    "sheet \"{name}\" cannot be read; the workbook may be damaged (reader: {e})"
                )));
            }
            Err(_) => {
                return Err(fail(format!(
                    "sheet \"{name}\" is malformed and cannot be read"
                )));
            }
        }
    }
    if !missing.is_empty() {
        return Err(fail(format!(
            "the workbook has no sheet {} (sheets found: {}); `overtone template FILE.xlsx` writes a blank workbook with every sheet",
            missing
                .iter()
                .map(|m| format!("\"{m}\""))
                .collect::<Vec<_>>()
                .join(", "),
            if names.is_empty() {
                "none".to_string()
            } else {
                names.join(", ")
            }
        )));
    }
    Ok(sheets)
}

/// The element sheets' tables, kept (cells released) after conversion so that the plant's
/// validation errors can be mapped back to their cells.
#[derive(Default)]
struct Tables {
    study: Option<Table>,
    buses: Option<Table>,
    sources: Option<Table>,
    transformers: Option<Table>,
    cables: Option<Table>,
    capacitors: Option<Table>,
    loads: Option<Table>,
    background: Option<Table>,
}

/// Converts every sheet into the plant. Each sheet becomes a table just before it is
/// converted, and gives its cells back after (the tables keep their row numbers for mapping
/// validation errors to cells), so that at most one sheet's cells are held beside the
/// plant.
fn read_plant(
    mut sheets: Vec<SheetRows>,
    stem: &str,
    diag: &mut Diagnostics,
) -> (Plant, Tables, study::ItemCells) {
    let mut table = |i: usize, spec: &[table::Column], diag: &mut Diagnostics| {
        sheets[i]
            .take()
            .map(|(name, rows)| Table::new(&name, rows, spec, diag))
    };
    let mut plant = Plant::new(f64::NAN);
    let mut defaults = defaults::Defaults::default();
    let mut item_cells = study::ItemCells::new();
    let mut t = Tables {
        study: table(0, study::COLUMNS, diag),
        ..Tables::default()
    };
    if let Some(tb) = &mut t.study {
        (plant.study, item_cells) = study::read(tb, stem, diag);
        tb.release_cells();
    }
    t.buses = table(1, &crate::io::schema::columns("Buses"), diag);
    if let Some(tb) = &mut t.buses {
        plant.buses = sheets::buses(tb, diag);
        tb.release_cells();
    }
    t.sources = table(2, &crate::io::schema::columns("Sources"), diag);
    if let Some(tb) = &mut t.sources {
        plant.sources = sheets::sources(tb, diag, &mut defaults);
        tb.release_cells();
    }
    t.transformers = table(3, &crate::io::schema::columns("Transformers"), diag);
    if let Some(tb) = &mut t.transformers {
        plant.transformers =
            sheets::transformers(tb, diag, &mut defaults, plant.study.frequency_hz);
        tb.release_cells();
    }
    t.cables = table(4, &crate::io::schema::columns("Cables"), diag);
    if let Some(tb) = &mut t.cables {
        plant.cables = sheets::cables(tb, diag, &mut defaults);
        tb.release_cells();
    }
    t.capacitors = table(5, &crate::io::schema::columns("Capacitors"), diag);
    if let Some(tb) = &mut t.capacitors {
        let kv: std::collections::HashMap<&str, f64> = plant
            .buses
            .iter()
            .map(|b| (b.id.as_str(), b.nominal_kv))
            .collect();
        let bus_kv = |id: &str| kv.get(id).copied();
        plant.banks = sheets::banks(tb, diag, &mut defaults, &bus_kv);
        tb.release_cells();
    }
    t.loads = table(6, &crate::io::schema::columns("Loads"), diag);
    if let Some(tb) = &mut t.loads {
        plant.loads = sheets::loads(tb, diag, &mut defaults);
        tb.release_cells();
    }
    if let Some(tb) = &mut table(7, &crate::io::schema::columns("Spectra"), diag) {
        let phasor = plant.study.summation == crate::model::Summation::Phasor;
        plant.spectra = sheets::spectra(tb, diag, phasor);
        tb.release_cells();
        warn_orders_above_studied(&plant, &tb.sheet, diag);
    }
    t.background = table(8, &crate::io::schema::columns("Background"), diag);
    if let Some(tb) = &mut t.background {
        plant.background = sequence::background(tb, diag);
        tb.release_cells();
    }
    if let Some(tb) = &mut table(9, &crate::io::schema::columns("Design"), diag) {
        plant.design = design::design(tb, diag);
        tb.release_cells();
    }
    if let Some(tb) = &mut table(10, &crate::io::schema::columns("Load levels"), diag) {
        plant.load_levels = design::load_levels(tb, diag);
        tb.release_cells();
    }
    defaults.report(diag);
    (plant, t, item_cells)
}

/// A warning per spectrum line above the highest order studied (it is not studied).
fn warn_orders_above_studied(plant: &Plant, sheet: &str, diag: &mut Diagnostics) {
    for s in &plant.spectra {
        for l in s
            .lines
            .iter()
            .filter(|l| l.order > plant.study.highest_order)
        {
            diag.warn(
                sheet,
                None,
                format!(
                    "spectrum \"{}\": order {} is above the highest order studied ({}) and is not studied",
                    s.name, l.order, plant.study.highest_order
                ),
            );
        }
    }
}

/// Each of the plant's validation errors at its sheet and cell (Study items by their item
/// cells; a spectrum's lines were checked at their cells already).
fn locate_model_errors(
    errors: Vec<crate::model::ModelError>,
    t: &Tables,
    item_cells: &study::ItemCells,
    diag: &mut Diagnostics,
) {
    for e in errors {
        let located = match e.sheet {
            "Study" => t.study.as_ref().map(|tb| {
                let cell = item_cells
                    .get(&normalize(e.field))
                    .cloned()
                    .unwrap_or_else(|| "A1".to_string());
                (tb.sheet.clone(), cell)
            }),
            "Spectra" => None, // every spectrum line was checked at its cell
            sheet => {
                let tb = match sheet {
                    "Buses" => &t.buses,
                    "Sources" => &t.sources,
                    "Transformers" => &t.transformers,
                    "Cables" => &t.cables,
                    "Capacitors" => &t.capacitors,
                    "Loads" => &t.loads,
                    "Background" => &t.background,
                    _ => &None,
                };
                tb.as_ref().filter(|tb| !tb.is_missing(e.field)).map(|tb| {
                    let cell = e
                        .index
                        .and_then(|i| tb.rows.get(i))
                        .map_or_else(|| "A2".to_string(), |r| tb.cell(r, e.field));
                    (tb.sheet.clone(), cell)
                })
            }
        };
        if let Some((sheet, cell)) = located {
            let message = if e.message.starts_with("must") {
                format!("\"{}\" {}", e.field, e.message)
            } else {
                format!("\"{}\": {}", e.field, e.message)
            };
            diag.error(&sheet, cell, message);
        }
    }
}

/// [`read_workbook_bytes`] within `limits`.
pub fn read_workbook_bytes_within(
    file: &str,
    stem: &str,
    bytes: &[u8],
    limits: &ReadLimits,
) -> Result<ReadOutcome, ReadError> {
    let mut wb = open(file, bytes, limits)?;
    let names = wb.sheet_names();
    let sheets = sheet_tables(file, &mut wb, &names, limits)?;
    let mut diag = Diagnostics::default();
    for n in &names {
        if !SHEETS.iter().any(|(s, _)| normalize(s) == normalize(n)) {
            diag.warn(n, None, "unknown sheet ignored".into());
        }
    }
    let (plant, tables, item_cells) = read_plant(sheets, stem, &mut diag);
    if let Err(model_errors) = plant.validate() {
        locate_model_errors(model_errors.0, &tables, &item_cells, &mut diag);
    }
    for p in crate::model::design_problems(&plant) {
        diag.error(p.sheet, p.cell, p.message);
    }
    if diag.errors.is_empty() {
        let located = plausible::Tables {
            buses: tables.buses.as_ref(),
            sources: tables.sources.as_ref(),
            transformers: tables.transformers.as_ref(),
            capacitors: tables.capacitors.as_ref(),
        };
        plausible::check(&plant, &located, &mut diag);
        plausible::capability(&plant, &located, &mut diag);
        return Ok(ReadOutcome {
            plant,
            warnings: diag.warnings,
        });
    }
    let total = diag.errors.len();
    let mut errors = diag.errors;
    errors.truncate(MAX_ERRORS);
    Err(ReadError::Cells {
        file: file.to_string(),
        more: total - errors.len(),
        errors,
    })
}
