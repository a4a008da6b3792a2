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

/// Writes `headers` in `row` and sets widths; prints landscape, fit to one page wide, with
/// the header row repeated.
pub fn header(ws: &mut Worksheet, row: u32, headers: &[(&str, f64)]) -> Result<(), XlsxError> {
    let f = header_format();
    for (c, (h, w)) in headers.iter().enumerate() {
        ws.write_string_with_format(row, c as u16, *h, &f)?;
        ws.set_column_width(c as u16, *w)?;
    }
    ws.set_landscape();
    ws.set_print_fit_to_pages(1, 0);
    ws.set_repeat_rows(row, row)?;
    ws.set_freeze_panes(row + 1, 0)?;
    Ok(())
}

/// Writes one row of cells.
pub fn row(ws: &mut Worksheet, r: u32, cells: &[Cell]) -> Result<(), XlsxError> {
    for (c, cell) in cells.iter().enumerate() {
        let c = c as u16;
        match cell {
            Cell::Num(v, fmt) => {
                ws.write_number_with_format(r, c, *v, &Format::new().set_num_format(*fmt))?;
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
