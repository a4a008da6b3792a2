//! The defaults the reader applied to blank cells, gathered while the sheets are read and
//! reported as one warning per column.

use super::table::Diagnostics;

/// The blank cells that took a default, per (sheet, column), reported once per column
/// with the cells named.
#[derive(Default)]
pub struct Defaults(Vec<(&'static str, &'static str, String, Vec<String>)>);

/// Cells named in one default warning before "and N more".
const CELLS_NAMED: usize = 8;

impl Defaults {
    pub(super) fn note(
        &mut self,
        sheet: &'static str,
        column: &'static str,
        value: &str,
        cell: String,
    ) {
        match self
            .0
            .iter_mut()
            .find(|(s, c, _, _)| *s == sheet && *c == column)
        {
            Some(e) => e.3.push(cell),
            None => self.0.push((sheet, column, value.to_string(), vec![cell])),
        }
    }

    /// One warning per column: which blank cells took which default.
    pub fn report(self, diag: &mut Diagnostics) {
        for (sheet, column, value, cells) in self.0 {
            let mut named = cells
                .iter()
                .take(CELLS_NAMED)
                .cloned()
                .collect::<Vec<_>>()
                .join(", ");
            if cells.len() > CELLS_NAMED {
                named.push_str(&format!(" and {} more", cells.len() - CELLS_NAMED));
            }
            diag.warn(
                sheet,
                None,
                if cells[0].starts_with("row ") {
                    format!(
                        "no \"{column}\" column: default {value} applied (rows {})",
                        named.replace("row ", "")
                    )
                } else {
                    format!("\"{column}\" blank at {named}: default {value} applied")
                },
            );
        }
    }
}
