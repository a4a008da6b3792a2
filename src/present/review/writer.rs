//! A small table writer over rust_xlsxwriter: header row with units, typed cells with number
//! formats, live formulas with cached results, non-finite numbers written as a reason
//! instead of a value, and print setup (landscape, fit to width, header row repeated).

use rust_xlsxwriter::{Format, FormatAlign, Formula, Worksheet, XlsxError};

/// One cell.
pub enum Cell {
    /// A number with its number format (e.g. "0.000").
    Num(f64, &'static str),
    Text(String),
    /// A formula (A1 references) and the value the tool computed for it.
    Formula(String, f64, &'static str),
    Blank,
}

/// Text cell.
pub fn t(s: impl Into<String>) -> Cell {
    Cell::Text(s.into())
}

/// The text a cell holds in place of a number that is not finite: a last resort that the
/// fuzz targets treat as a finding (each value that can be missing says why instead).
pub const NOT_COMPUTED: &str = "not computed (no finite value)";

/// Number cell, or [`NOT_COMPUTED`] when it is not finite.
pub fn n(v: f64, fmt: &'static str) -> Cell {
    if v.is_finite() {
        Cell::Num(v, fmt)
    } else {
        Cell::Text(NOT_COMPUTED.into())
    }
}

/// An optional number.
pub fn on(v: Option<f64>, fmt: &'static str) -> Cell {
    v.map_or(Cell::Blank, |x| n(x, fmt))
}

/// Header format (bold, shaded, wrapped).
pub fn header_format() -> Format {
    Format::new()
        .set_bold()
        .set_text_wrap()
        .set_background_color("#D9E2EC")
        .set_align(FormatAlign::Center)
}

/// The width a header column needs: its given width, or its longest word's (a header
/// wraps at word boundaries, never inside a word; bold text taken 12 % wider, as in
/// [`wrapped_lines`]).
pub fn header_width(h: &str, w: f64) -> f64 {
    let word = h
        .split_whitespace()
        .map(|x| x.chars().count())
        .max()
        .unwrap_or(0);
    w.max((word as f64 / 0.85).ceil() + 1.0)
}

/// Several tables on one sheet share its columns: each table's headers with every column
/// as wide as the widest any of `tables` needs there.
pub fn shared_widths<'a>(tables: &[&[(&'a str, f64)]]) -> Vec<Vec<(&'a str, f64)>> {
    let n = tables.iter().map(|t| t.len()).max().unwrap_or(0);
    let widths: Vec<f64> = (0..n)
        .map(|c| {
            (tables.iter())
                .filter_map(|t| t.get(c).map(|(h, w)| header_width(h, *w)))
                .fold(0.0, f64::max)
        })
        .collect();
    (tables.iter())
        .map(|t| {
            t.iter()
                .enumerate()
                .map(|(c, (h, _))| (*h, widths[c]))
                .collect()
        })
        .collect()
}

/// Writes `headers` in `row` and sets widths; prints landscape, fit to one page wide, with
/// the header row repeated.
pub fn header(ws: &mut Worksheet, row: u32, headers: &[(&str, f64)]) -> Result<(), XlsxError> {
    let f = header_format();
    let mut lines: f64 = 1.0;
    for (c, (h, w)) in headers.iter().enumerate() {
        let w = header_width(h, *w);
        ws.write_string_with_format(row, c as u16, *h, &f)?;
        ws.set_column_width(c as u16, w)?;
        lines = lines.max(wrapped_lines(h, w, true));
    }
    // A spreadsheet does not grow a row written from a file: the header's wrapped lines
    // get their height, or a printout loses the first lines of a long header.
    ws.set_row_height(row, LINE_POINTS * lines + 2.0)?;
    ws.set_landscape();
    // A wide table fit to one page wide on A4 or letter prints in unreadable type: on A3
    // (paper size 8) it prints at about twice the size.
    if headers.iter().map(|h| h.1).sum::<f64>() > WIDE_TABLE {
        ws.set_paper_size(8);
    }
    ws.set_print_fit_to_pages(1, 0);
    ws.set_repeat_rows(row, row)?;
    ws.set_freeze_panes(row + 1, 0)?;
    Ok(())
}

/// Total column width (characters) above which a table prints on A3.
pub const WIDE_TABLE: f64 = 200.0;

/// Rows a long table prints: the rest stay on the sheet, hidden.
pub const PRINTED_ROWS: usize = 45;

/// Keeps the printout of a table longer than 2 × [`PRINTED_ROWS`] rows (about two printed
/// pages) to [`PRINTED_ROWS`]:
/// the flagged rows first, then the most severe (`keys[i]` = (flagged, severity) of the table's row `first + i`); the other
/// rows are hidden, not removed (every row and formula stays on the sheet for the audit).
/// The page footer says how many rows print and where the rest are; an autofilter on
/// the header row (`first - 1`, columns `0..=last_col`) lets the reviewer sort and filter.
pub fn print_digest(
    ws: &mut Worksheet,
    first: u32,
    last_col: u16,
    keys: &[(bool, f64)],
    what: &str,
) -> Result<(), XlsxError> {
    print_digest_of(ws, first, last_col, keys, what, PRINTED_ROWS)
}

/// [`print_digest`] printing `printed` rows of a table longer than 2 × `printed`.
pub fn print_digest_of(
    ws: &mut Worksheet,
    first: u32,
    last_col: u16,
    keys: &[(bool, f64)],
    what: &str,
    printed: usize,
) -> Result<(), XlsxError> {
    if keys.is_empty() {
        return Ok(());
    }
    ws.autofilter(
        first.saturating_sub(1),
        0,
        first + keys.len() as u32 - 1,
        last_col,
    )?;
    if keys.len() <= 2 * printed {
        return Ok(());
    }
    let mut order: Vec<usize> = (0..keys.len()).collect();
    order.sort_by(|&a, &b| {
        keys[b]
            .0
            .cmp(&keys[a].0)
            .then(keys[b].1.total_cmp(&keys[a].1))
            .then(a.cmp(&b))
    });
    let flagged = keys.iter().filter(|k| k.0).count();
    for &i in &order[printed..] {
        ws.set_row_hidden(first + i as u32)?;
    }
    ws.set_footer(super::sheets::footer(Some(&format!(
        "{what}, {printed} of {} rows printed ({flagged} flagged; then the most severe); the rest are hidden on the sheet",
        keys.len()
    ))));
    Ok(())
}

/// Height of one line of 11-point text, points.
pub const LINE_POINTS: f64 = 15.0;

/// The lines `text` takes when wrapped at word boundaries in a column `width` characters
/// wide (a word longer than the line is broken, as a spreadsheet does). Bold text is
/// taken 12 % wider; a width unit is about one digit of the default font (an estimate that
/// errs towards one more line).
pub fn wrapped_lines(text: &str, width: f64, bold: bool) -> f64 {
    let per_line = ((width * if bold { 0.85 } else { 1.0 }).floor() as usize).max(1);
    let mut lines = 0usize;
    for paragraph in text.split('\n') {
        let mut used = 0usize;
        lines += 1;
        for word in paragraph.split_whitespace() {
            let len = word.chars().count();
            let need = if used == 0 { len } else { used + 1 + len };
            if need <= per_line {
                used = need;
            } else {
                if used > 0 {
                    lines += 1;
                }
                lines += (len.saturating_sub(1)) / per_line;
                used = (len - 1) % per_line + 1;
            }
        }
    }
    lines.max(1) as f64
}

/// Writes one row of cells.
pub fn row(ws: &mut Worksheet, r: u32, cells: &[Cell]) -> Result<(), XlsxError> {
    for (c, cell) in cells.iter().enumerate() {
        let c = c as u16;
        match cell {
            Cell::Num(v, fmt) => {
                ws.write_number_with_format(r, c, *v, &Format::new().set_num_format(*fmt))?;
            }
            // Text right after a number (right-aligned) is indented, or the two print run
            // together ("0.914lagging").
            Cell::Text(s)
                if c > 0 && matches!(cells[c as usize - 1], Cell::Num(..) | Cell::Formula(..)) =>
            {
                ws.write_string_with_format(r, c, s, &Format::new().set_indent(1))?;
            }
            Cell::Text(s) => {
                ws.write_string(r, c, s)?;
            }
            Cell::Formula(f, v, fmt) => {
                let formula = Formula::new(f.as_str()).set_result(if v.is_finite() {
                    format!("{v}")
                } else {
                    String::new()
                });
                ws.write_formula_with_format(r, c, formula, &Format::new().set_num_format(*fmt))?;
            }
            Cell::Blank => {}
        }
    }
    Ok(())
}
