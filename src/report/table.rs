//! The plain-text table every terminal section uses.

use std::io::{self, Write};

/// Rows shown per scenario before the summary keeps only flagged rows.
pub const MAX_ROWS_PER_SCENARIO: usize = 60;

/// Writes a table; columns in `left` are left-aligned, the rest right-aligned.
pub fn write_table(
    out: &mut dyn Write,
    headers: &[&str],
    left: &[usize],
    rows: &[Vec<String>],
) -> io::Result<()> {
    let mut widths: Vec<usize> = headers.iter().map(|h| h.len()).collect();
    for r in rows {
        for (w, c) in widths.iter_mut().zip(r) {
            *w = (*w).max(c.chars().count());
        }
    }
    let line = |cells: &[String]| {
        cells
            .iter()
            .enumerate()
            .map(|(i, c)| {
                let w = widths[i];
                if left.contains(&i) {
                    format!("{c:<w$}")
                } else {
                    format!("{c:>w$}")
                }
            })
            .collect::<Vec<_>>()
            .join("  ")
    };
    let head: Vec<String> = headers.iter().map(|h| h.to_string()).collect();
    writeln!(out, "  {}", line(&head).trim_end())?;
    for r in rows {
        writeln!(out, "  {}", line(r).trim_end())?;
    }
    Ok(())
}
