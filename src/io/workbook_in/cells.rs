//! A sheet's non-blank cells gathered row by row: streamed from .xlsx without building a
//! dense range, taken from the range for the other formats, within the bounds that keep a
//! hostile or runaway workbook from exhausting memory. Every step is linear (or n log n when
//! a file stores its cells out of order).

use calamine::{Data, DataRef, Range};

use super::table::{Row, is_blank};

/// Rows a sheet may have: the row limit of the .xlsx format itself.
pub const MAX_ROWS: u32 = 1_048_576;

/// Non-blank cells a workbook may have in the contract's sheets. At about 45 bytes a cell
/// in memory (value, column, row share) plus its text, 10 million cells stay well under
/// 1 GB; a plant's workbook of 100,000 loads has about 800,000.
pub const MAX_CELLS: usize = 10_000_000;

/// Why a sheet was refused as too large.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TooLarge {
    /// A cell beyond [`MAX_ROWS`] (zero-based row of the cell).
    Rows(u32),
    /// More non-blank cells in the workbook than its bound (default [`MAX_CELLS`]).
    Cells,
}

impl TooLarge {
    /// The sentence for the user about sheet `sheet`, with the cell bound `max_cells`.
    pub fn sentence(self, sheet: &str, max_cells: usize) -> String {
        match self {
            TooLarge::Rows(r) => format!(
                "sheet \"{sheet}\" has a cell in row {}, beyond the {MAX_ROWS} rows a sheet may have: remove the stray cells",
                u64::from(r) + 1
            ),
            TooLarge::Cells => format!(
                "the workbook has more than {max_cells} non-blank cells (reached in sheet \"{sheet}\"), more than the reader accepts: remove unused rows and columns or split the plant into several studies"
            ),
        }
    }
}

/// Collects cells into rows, counting against a workbook-wide cell budget.
pub struct Collector<'b> {
    rows: Vec<Row>,
    in_order: bool,
    budget: &'b mut usize,
}

impl<'b> Collector<'b> {
    /// A collector spending from `budget` (cells still allowed in the workbook).
    pub fn new(budget: &'b mut usize) -> Self {
        Collector {
            rows: Vec::new(),
            in_order: true,
            budget,
        }
    }

    /// Adds the cell at zero-based (`row`, `col`); blank cells are dropped.
    pub fn push(&mut self, row: u32, col: u32, value: Data) -> Result<(), TooLarge> {
        if row >= MAX_ROWS {
            return Err(TooLarge::Rows(row));
        }
        if is_blank(&value) {
            return Ok(());
        }
        if *self.budget == 0 {
            return Err(TooLarge::Cells);
        }
        *self.budget -= 1;
        match self.rows.last_mut() {
            Some(last) if last.row == row => {
                if last.cells.last().is_some_and(|(c, _)| *c >= col) {
                    self.in_order = false;
                }
                last.cells.push((col, value));
            }
            last => {
                if last.is_some_and(|l| l.row > row) {
                    self.in_order = false;
                }
                self.rows.push(Row {
                    row,
                    cells: vec![(col, value)],
                });
            }
        }
        Ok(())
    }

    /// The rows in order, each row's cells in column order (a cell written twice keeps its
    /// last value).
    pub fn finish(mut self) -> Vec<Row> {
        if self.in_order {
            return self.rows;
        }
        self.rows.sort_by_key(|r| r.row);
        let mut merged: Vec<Row> = Vec::with_capacity(self.rows.len());
        for r in self.rows {
            match merged.last_mut() {
                Some(last) if last.row == r.row => last.cells.extend(r.cells),
                _ => merged.push(r),
            }
        }
        for r in &mut merged {
            r.cells.sort_by_key(|(c, _)| *c);
            // Keep the last of equal columns: reverse, dedup keeps the first, reverse back.
            r.cells.reverse();
            r.cells.dedup_by_key(|(c, _)| *c);
            r.cells.reverse();
        }
        merged
    }
}

/// The cells of a range already read (the .xls and .ods readers build one).
pub fn from_range(range: &Range<Data>, budget: &mut usize) -> Result<Vec<Row>, TooLarge> {
    let (r0, c0) = range.start().unwrap_or((0, 0));
    let mut out = Collector::new(budget);
    for (r, c, d) in range.used_cells() {
        let row = r0.saturating_add(u32::try_from(r).unwrap_or(u32::MAX));
        let col = c0.saturating_add(u32::try_from(c).unwrap_or(u32::MAX));
        out.push(row, col, d.clone())?;
    }
    Ok(out.finish())
}

/// An owned value of a streamed cell.
pub fn owned(d: &DataRef<'_>) -> Data {
    Data::from(d.clone())
}
