//! A sheet as a table: the header row mapped to columns by the contract's matching rule,
//! data rows with their absolute positions, and typed cell access that records every
//! problem with its `Sheet!Cell`.

use std::collections::{HashMap, HashSet};

use calamine::Data;

use super::{InputError, Warning};

/// The contract's matching rule for sheet, header and item names: case-insensitive,
/// ignoring spaces, underscores, hyphens and a trailing unit in parentheses.
/// Whether an unknown header looks like a renamed `contract` header: the same words in
/// another order or case, a unit changed in brackets, or at most two letters different
/// (a typo), or one name containing the other.
fn alike(header: &str, contract: &str) -> bool {
    let words = |s: &str| -> Vec<String> {
        let mut w: Vec<String> = s
            .split(|c: char| !c.is_alphanumeric())
            .filter(|w| !w.is_empty())
            .map(str::to_lowercase)
            .collect();
        w.sort();
        w
    };
    let (a, b) = (normalize(header), normalize(contract));
    if a.is_empty() || b.is_empty() {
        return false;
    }
    let stem = |s: &str| {
        let s = s.trim();
        s.rfind('(').map_or(s, |i| s[..i].trim()).to_string()
    };
    words(header) == words(contract)
        || words(&stem(header)) == words(&stem(contract))
        || (a.len() >= 3 && b.contains(&a))
        || (b.len() >= 3 && a.contains(&b))
        || edit_distance(&a, &b) <= 2
}

use crate::model::names::edit_distance;
pub use crate::model::normalize;

/// A1 notation of a zero-based (row, column).
pub fn a1(row: u32, col: u32) -> String {
    let mut letters = Vec::new();
    let mut c = col + 1;
    while c > 0 {
        let rem = (c - 1) % 26;
        letters.push(b'A' + rem as u8);
        c = (c - 1) / 26;
    }
    letters.reverse();
    format!("{}{}", String::from_utf8_lossy(&letters), row + 1)
}

/// How a cell's value is shown in messages: text quoted, numbers as written.
pub fn shown(d: &Data) -> String {
    match d {
        Data::String(s) => format!("\"{s}\""),
        Data::Float(f) => format!("{f}"),
        Data::Int(i) => format!("{i}"),
        Data::Bool(b) => if *b { "TRUE" } else { "FALSE" }.to_string(),
        Data::Error(e) => format!("the error {e}"),
        Data::DateTime(d) => format!("a date ({})", d.as_f64()),
        Data::DateTimeIso(s) | Data::DurationIso(s) => format!("a date ({s})"),
        Data::Empty => "a blank cell".to_string(),
    }
}

/// Problems found while reading, shared by every sheet.
#[derive(Debug, Default)]
pub struct Diagnostics {
    pub errors: Vec<InputError>,
    pub warnings: Vec<Warning>,
    /// Cells that already carry an error (so a later check does not repeat it).
    pub flagged: HashSet<(String, String)>,
}

impl Diagnostics {
    pub fn error(&mut self, sheet: &str, cell: String, message: String) {
        if self.flagged.insert((sheet.to_string(), cell.clone())) {
            self.errors.push(InputError {
                sheet: sheet.to_string(),
                cell,
                message,
            });
        }
    }

    pub fn warn(&mut self, sheet: &str, cell: Option<String>, message: String) {
        self.warnings.push(Warning {
            sheet: sheet.to_string(),
            cell,
            message,
        });
    }
}

pub use crate::io::schema::Column;

/// A row of a sheet: its zero-based row and its non-blank cells by zero-based column, in
/// column order.
pub struct Row {
    pub row: u32,
    pub(super) cells: Vec<(u32, Data)>,
}

impl Row {
    fn get(&self, col: u32) -> &Data {
        static EMPTY: Data = Data::Empty;
        self.cells
            .binary_search_by_key(&col, |(c, _)| *c)
            .map_or(&EMPTY, |i| &self.cells[i].1)
    }
}

/// A sheet read as a table.
pub struct Table {
    /// The sheet's name as written in the workbook.
    pub sheet: String,
    /// Normalized header → absolute column.
    columns: HashMap<String, u32>,
    /// Normalized headers of required columns that are absent (reported once, at the
    /// header row, not again in every data row).
    missing: HashSet<String>,
    pub rows: Vec<Row>,
}

/// A cell that holds nothing: empty, or text of spaces only.
pub fn is_blank(d: &Data) -> bool {
    match d {
        Data::Empty => true,
        Data::String(s) => s.trim().is_empty(),
        _ => false,
    }
}

impl Table {
    /// Reads the sheet's `rows` with its header in row 1, checking for the required
    /// `columns`; unknown headers are warned about. Blank rows are not among `rows`.
    // Long: header matching: every column found, missing, duplicated or unknown, in one pass over
    // the header row.
    pub fn new(sheet: &str, rows: Vec<Row>, spec: &[Column], diag: &mut Diagnostics) -> Table {
        let mut t = Table {
            sheet: sheet.to_string(),
            columns: HashMap::new(),
            missing: HashSet::new(),
            rows: Vec::new(),
        };
        if rows.is_empty() {
            for c in spec.iter().filter(|c| c.required) {
                diag.error(
                    sheet,
                    "A1".into(),
                    format!(
                        "required column \"{}\" is missing (the sheet is empty)",
                        c.header
                    ),
                );
            }
            return t;
        }
        let known: HashMap<String, &Column> =
            spec.iter().map(|c| (normalize(c.header), c)).collect();
        let mut rows = rows.into_iter().peekable();
        let mut next_free_col = 0;
        let mut unknown: Vec<(String, u32)> = Vec::new();
        if let Some(header) = rows.next_if(|r| r.row == 0) {
            for (col, cell) in &header.cells {
                let col = *col;
                next_free_col = col + 1;
                let name = match cell {
                    Data::String(s) => s.trim().to_string(),
                    other => shown(other),
                };
                let key = normalize(&name);
                if t.columns.contains_key(&key) {
                    diag.error(
                        sheet,
                        a1(0, col),
                        format!("column \"{name}\" appears twice in the header row"),
                    );
                    continue;
                }
                if !known.contains_key(&key) {
                    unknown.push((name.clone(), col));
                }
                t.columns.insert(key, col);
            }
        }
        // Keep only the cells of the contract's columns (unknown columns were warned about).
        let kept: Vec<u32> = t
            .columns
            .iter()
            .filter(|(k, _)| known.contains_key(*k))
            .map(|(_, &c)| c)
            .collect();
        for mut r in rows {
            r.cells.retain(|(c, _)| kept.contains(c));
            t.rows.push(r);
        }
        // A required column that is missing beside an unknown header like it: most likely
        // renamed, reported at the renamed header's own cell.
        let mut renamed: Vec<u32> = Vec::new();
        for c in spec.iter().filter(|c| c.required) {
            if !t.columns.contains_key(&normalize(c.header)) {
                t.missing.insert(normalize(c.header));
                if let Some((name, col)) = unknown
                    .iter()
                    .filter(|(_, col)| !renamed.contains(col))
                    .find(|(name, _)| alike(name, c.header))
                {
                    renamed.push(*col);
                    diag.error(
                        sheet,
                        a1(0, *col),
                        format!(
                            "required column \"{}\" is missing; this header \"{name}\" is not in the contract (renamed? the header must read \"{}\")",
                            c.header, c.header
                        ),
                    );
                    continue;
                }
                let found: Vec<String> = spec
                    .iter()
                    .filter(|s| t.columns.contains_key(&normalize(s.header)))
                    .map(|s| s.header.to_string())
                    .collect();
                diag.error(
                    sheet,
                    a1(0, next_free_col),
                    format!(
                        "required column \"{}\" is missing from the header row (row 1){}",
                        c.header,
                        if found.is_empty() {
                            String::new()
                        } else {
                            format!("; found {}", found.join(", "))
                        }
                    ),
                );
            }
        }
        for (name, col) in unknown.iter().filter(|(_, col)| !renamed.contains(col)) {
            diag.warn(
                sheet,
                Some(a1(0, *col)),
                format!("unknown column \"{name}\" ignored"),
            );
        }
        t
    }

    /// Frees the cells once the sheet is converted; the rows keep their numbers, for
    /// locating later errors.
    pub fn release_cells(&mut self) {
        for r in &mut self.rows {
            r.cells = Vec::new();
        }
    }

    /// Whether `header` is a required column absent from the sheet (already reported).
    pub fn is_missing(&self, header: &str) -> bool {
        self.missing.contains(&normalize(header))
    }

    /// Whether the sheet has the column with this contract header.
    pub fn has(&self, header: &str) -> bool {
        self.columns.contains_key(&normalize(header))
    }

    /// Where a default was applied: `header`'s cell in `row` (A1), or `row N` when the
    /// sheet has no such column.
    pub fn default_at(&self, row: &Row, header: &str) -> String {
        if self.has(header) {
            self.cell(row, header)
        } else {
            format!("row {}", row.row + 1)
        }
    }

    /// A1 reference of `header`'s cell in `row`; column A when the column is absent.
    pub fn cell(&self, row: &Row, header: &str) -> String {
        a1(
            row.row,
            self.columns.get(&normalize(header)).copied().unwrap_or(0),
        )
    }

    /// The cell of `header` in `row` (blank when the column is absent).
    pub fn raw<'r>(&self, row: &'r Row, header: &str) -> &'r Data {
        static EMPTY: Data = Data::Empty;
        match self.columns.get(&normalize(header)) {
            Some(&c) => row.get(c),
            None => &EMPTY,
        }
    }

    /// Text of a cell (ids, names, enumerations): strings trimmed, numbers as written;
    /// `None` for a blank cell. An error cell is reported.
    pub fn text(&self, row: &Row, header: &str, diag: &mut Diagnostics) -> Option<String> {
        match self.raw(row, header) {
            d if is_blank(d) => None,
            Data::String(s) => Some(s.trim().to_string()),
            Data::Float(f) => Some(format!("{f}")),
            Data::Int(i) => Some(format!("{i}")),
            Data::Bool(b) => Some(if *b { "TRUE" } else { "FALSE" }.to_string()),
            other => {
                diag.error(
                    &self.sheet,
                    self.cell(row, header),
                    format!("\"{header}\" must be text, found {}", shown(other)),
                );
                None
            }
        }
    }

    /// A required id: reported when blank.
    pub fn id(&self, row: &Row, header: &str, diag: &mut Diagnostics) -> String {
        match self.text(row, header, diag) {
            Some(s) => s,
            None if self.is_missing(header) => String::new(),
            None => {
                diag.error(
                    &self.sheet,
                    self.cell(row, header),
                    format!("\"{header}\" is required, found a blank cell"),
                );
                String::new()
            }
        }
    }

    /// A number: numeric cells, or text holding a number; `None` when blank. Anything else
    /// is reported, naming what was expected (`what`, e.g. "a positive number").
    pub fn number(
        &self,
        row: &Row,
        header: &str,
        what: &str,
        diag: &mut Diagnostics,
    ) -> Option<f64> {
        let d = self.raw(row, header);
        let bad = |diag: &mut Diagnostics| {
            diag.error(
                &self.sheet,
                self.cell(row, header),
                format!("\"{header}\" must be {what}, found {}", shown(d)),
            );
            Some(f64::NAN)
        };
        match d {
            d if is_blank(d) => None,
            Data::Float(f) if f.is_finite() => Some(*f),
            Data::Int(i) => Some(*i as f64),
            Data::String(s) => match s.trim().parse::<f64>() {
                Ok(v) if v.is_finite() => Some(v),
                _ => bad(diag),
            },
            _ => bad(diag),
        }
    }

    /// A required number: blank is reported too; NaN stands in for a bad or blank cell.
    pub fn required_number(
        &self,
        row: &Row,
        header: &str,
        what: &str,
        diag: &mut Diagnostics,
    ) -> f64 {
        match self.number(row, header, what, diag) {
            Some(v) => v,
            None if self.is_missing(header) => f64::NAN,
            None => {
                diag.error(
                    &self.sheet,
                    self.cell(row, header),
                    format!("\"{header}\" must be {what}, found a blank cell"),
                );
                f64::NAN
            }
        }
    }

    /// A yes/no cell: yes/no, y/n, true/false, 1/0, in/out or an Excel boolean.
    pub fn yes_no(&self, row: &Row, header: &str, diag: &mut Diagnostics) -> Option<bool> {
        let d = self.raw(row, header);
        let parsed = match d {
            d if is_blank(d) => return None,
            Data::Bool(b) => Some(*b),
            Data::Float(f) if *f == 1.0 => Some(true),
            Data::Float(f) if *f == 0.0 => Some(false),
            Data::Int(1) => Some(true),
            Data::Int(0) => Some(false),
            Data::String(s) => match s.trim().to_ascii_lowercase().as_str() {
                "yes" | "y" | "true" | "1" | "in" => Some(true),
                "no" | "n" | "false" | "0" | "out" => Some(false),
                _ => None,
            },
            _ => None,
        };
        if parsed.is_none() {
            diag.error(
                &self.sheet,
                self.cell(row, header),
                format!("\"{header}\" must be yes or no, found {}", shown(d)),
            );
        }
        parsed
    }
}
