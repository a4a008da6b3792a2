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
    // Two spaces between columns, one where that keeps the table within 100 columns.
    let total: usize = 2 + widths.iter().sum::<usize>() + 2 * widths.len().saturating_sub(1);
    let gap = if total > 100 { " " } else { "  " };
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
            .join(gap)
    };
    let head: Vec<String> = headers.iter().map(|h| h.to_string()).collect();
    writeln!(out, "  {}", line(&head).trim_end())?;
    for r in rows {
        writeln!(out, "  {}", line(r).trim_end())?;
    }
    Ok(())
}

/// Writes `text` wrapped at word boundaries to lines of at most `width` columns (a word
/// longer than the width stands on its own line).
pub fn write_wrapped(out: &mut dyn Write, text: &str, width: usize) -> io::Result<()> {
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            writeln!(out, "{line}")?;
            line.clear();
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        writeln!(out, "{line}")?;
    }
    Ok(())
}

/// Writes `text` wrapped to `width` columns, its first line after `first` and the others
/// after `rest` (a hanging indent), at word boundaries.
pub fn write_hanging(
    out: &mut dyn Write,
    first: &str,
    rest: &str,
    text: &str,
    width: usize,
) -> io::Result<()> {
    let mut line = first.to_string();
    let mut empty = true;
    for word in text.split_whitespace() {
        if !empty && line.chars().count() + 1 + word.chars().count() > width {
            writeln!(out, "{line}")?;
            line = rest.to_string();
            empty = true;
        }
        if !empty {
            line.push(' ');
        }
        line.push_str(word);
        empty = false;
    }
    if !empty {
        writeln!(out, "{line}")?;
    }
    Ok(())
}
