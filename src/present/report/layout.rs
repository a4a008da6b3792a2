//! The report's typesetting: text measured with the bundled fonts' advance widths, broken
//! into lines at word boundaries, and placed on A4 pages as drawing operations (text, lines,
//! polylines, rectangles) that [`super::render`] turns into PDF. Laying out first and
//! rendering after gives the page count that every footer's "Page x of y" needs.

use skrifa::MetadataProvider;
use skrifa::instance::{LocationRef, Size};

/// A4 portrait, points (1/72 in).
pub const PAGE_W: f32 = 595.28;
pub const PAGE_H: f32 = 841.89;
/// Left and right margin, points (20 mm).
pub const MARGIN: f32 = 56.7;
/// Where the text area starts and ends: below the header, above the footer.
pub const TOP: f32 = 70.0;
pub const BOTTOM: f32 = PAGE_H - 62.0;
/// The text area's width.
pub const WIDTH: f32 = PAGE_W - 2.0 * MARGIN;
/// Body text size and the line height over size.
pub const BODY: f32 = 9.5;
const LEADING: f32 = 1.3;

/// An RGB colour.
pub type Rgb = (u8, u8, u8);
pub const BLACK: Rgb = (0, 0, 0);
pub const GREY: Rgb = (110, 110, 110);
pub const RULE: Rgb = (170, 170, 170);

/// One drawing operation on a page; y grows downwards from the page's top, text at its
/// baseline.
#[derive(Debug, Clone, PartialEq)]
pub enum Op {
    Text {
        x: f32,
        y: f32,
        size: f32,
        bold: bool,
        color: Rgb,
        text: String,
    },
    Line {
        from: (f32, f32),
        to: (f32, f32),
        width: f32,
        color: Rgb,
        dashed: bool,
    },
    Polyline {
        points: Vec<(f32, f32)>,
        width: f32,
        color: Rgb,
    },
    Rect {
        x: f32,
        y: f32,
        w: f32,
        h: f32,
        fill: Rgb,
    },
}

/// The advance widths of the bundled regular and bold fonts.
pub struct Metrics<'a> {
    regular: skrifa::FontRef<'a>,
    bold: skrifa::FontRef<'a>,
}

impl<'a> Metrics<'a> {
    /// The metrics of the two fonts' bytes; `None` when one does not parse.
    pub fn new(regular: &'a [u8], bold: &'a [u8]) -> Option<Self> {
        Some(Metrics {
            regular: skrifa::FontRef::new(regular).ok()?,
            bold: skrifa::FontRef::new(bold).ok()?,
        })
    }

    /// The width of `text` at `size` points, points: the sum of its glyphs' advances (a
    /// character the font lacks counts as half an em).
    pub fn width(&self, text: &str, size: f32, bold: bool) -> f32 {
        let font = if bold { &self.bold } else { &self.regular };
        let scaled = Size::new(size);
        let metrics = font.glyph_metrics(scaled, LocationRef::default());
        let charmap = font.charmap();
        text.chars()
            .map(|c| {
                charmap
                    .map(c)
                    .and_then(|g| metrics.advance_width(g))
                    .unwrap_or(size * 0.5)
            })
            .sum()
    }

    /// `text` broken into lines no wider than `width` at word boundaries (a word wider than
    /// the line is broken between characters); explicit newlines kept.
    pub fn wrap(&self, text: &str, size: f32, bold: bool, width: f32) -> Vec<String> {
        let mut lines = Vec::new();
        for paragraph in text.split('\n') {
            let mut line = String::new();
            for word in paragraph.split_whitespace() {
                let candidate = if line.is_empty() {
                    word.to_string()
                } else {
                    format!("{line} {word}")
                };
                if self.width(&candidate, size, bold) <= width {
                    line = candidate;
                    continue;
                }
                if !line.is_empty() {
                    lines.push(std::mem::take(&mut line));
                }
                for c in word.chars() {
                    let mut next = line.clone();
                    next.push(c);
                    if !line.is_empty() && self.width(&next, size, bold) > width {
                        lines.push(std::mem::take(&mut line));
                        next = c.to_string();
                    }
                    line = next;
                }
            }
            lines.push(line);
        }
        lines
    }
}

/// A column of a table: its heading, its share of the text width, and whether its cells
/// are numbers (right-aligned).
pub struct Column<'c> {
    pub head: &'c str,
    pub share: f32,
    pub numeric: bool,
}

/// The pages being laid out and the cursor on the last.
pub struct Layout<'m> {
    pub metrics: &'m Metrics<'m>,
    pub pages: Vec<Vec<Op>>,
    /// The cursor: the top of the next line, points from the page's top.
    pub y: f32,
}

impl<'m> Layout<'m> {
    pub fn new(metrics: &'m Metrics<'m>) -> Self {
        Layout {
            metrics,
            pages: vec![Vec::new()],
            y: TOP,
        }
    }

    /// Starts a new page.
    pub fn page_break(&mut self) {
        self.pages.push(Vec::new());
        self.y = TOP;
    }

    /// Breaks the page unless `height` points fit below the cursor.
    pub fn ensure(&mut self, height: f32) {
        if self.y + height > BOTTOM && self.y > TOP {
            self.page_break();
        }
    }

    /// Adds `op` to the current page.
    pub fn push(&mut self, op: Op) {
        if let Some(page) = self.pages.last_mut() {
            page.push(op);
        }
    }

    /// Lines of text at `x`, wrapped to `width`, each at its own baseline; a page break
    /// where a line does not fit.
    pub fn lines(&mut self, text: &str, (x, width): (f32, f32), size: f32, bold: bool, color: Rgb) {
        let step = size * LEADING;
        for line in self.metrics.wrap(text, size, bold, width) {
            self.ensure(step);
            self.y += step;
            self.push(Op::Text {
                x,
                y: self.y - 0.25 * size,
                size,
                bold,
                color,
                text: line,
            });
        }
    }

    /// A section heading (level 1 or 2), kept with the next few lines.
    pub fn heading(&mut self, text: &str, level: u8) {
        let size = if level == 1 { 14.0 } else { 11.5 };
        self.ensure(size * 2.0 + 4.0 * BODY);
        self.y += if level == 1 { 10.0 } else { 6.0 };
        self.lines(text, (MARGIN, WIDTH), size, true, BLACK);
        self.y += 3.0;
    }

    /// A paragraph of body text, then a little space.
    pub fn paragraph(&mut self, text: &str) {
        self.lines(text, (MARGIN, WIDTH), BODY, false, BLACK);
        self.y += 0.5 * BODY;
    }

    /// A bullet item: a dash and hanging text.
    pub fn bullet(&mut self, text: &str) {
        self.ensure(BODY * LEADING);
        let y0 = self.y;
        let page = self.pages.len();
        self.lines(text, (MARGIN + 12.0, WIDTH - 12.0), BODY, false, BLACK);
        if page == self.pages.len() {
            self.push(Op::Text {
                x: MARGIN + 2.0,
                y: y0 + BODY * LEADING - 0.25 * BODY,
                size: BODY,
                bold: false,
                color: BLACK,
                text: "–".into(),
            });
        }
        self.y += 0.25 * BODY;
    }

    /// A table: a bold header row (repeated after a page break), then the rows, each cell
    /// wrapped in its column, a thin rule under each row.
    pub fn table(&mut self, columns: &[Column<'_>], rows: &[Vec<String>], size: f32) {
        let total: f32 = columns
            .iter()
            .map(|c| c.share)
            .sum::<f32>()
            .max(f32::EPSILON);
        let widths: Vec<f32> = columns.iter().map(|c| c.share / total * WIDTH).collect();
        let heads: Vec<String> = columns.iter().map(|c| c.head.to_string()).collect();
        self.ensure(4.0 * size * LEADING);
        self.table_row(columns, &widths, &heads, size, true);
        for row in rows {
            let height = self.row_height(&widths, row, size, false);
            if self.y + height > BOTTOM {
                self.page_break();
                self.table_row(columns, &widths, &heads, size, true);
            }
            self.table_row(columns, &widths, row, size, false);
        }
        self.y += 0.6 * BODY;
    }

    /// The height of one table row: its tallest wrapped cell.
    fn row_height(&self, widths: &[f32], cells: &[String], size: f32, bold: bool) -> f32 {
        let lines = (cells.iter().zip(widths))
            .map(|(c, w)| self.metrics.wrap(c, size, bold, w - 4.0).len())
            .max()
            .unwrap_or(1);
        lines as f32 * size * LEADING + 3.0
    }

    fn table_row(
        &mut self,
        columns: &[Column<'_>],
        widths: &[f32],
        cells: &[String],
        size: f32,
        bold: bool,
    ) {
        let height = self.row_height(widths, cells, size, bold);
        let mut x = MARGIN;
        for ((cell, w), col) in cells.iter().zip(widths).zip(columns) {
            for (i, line) in self
                .metrics
                .wrap(cell, size, bold, w - 4.0)
                .into_iter()
                .enumerate()
            {
                let tx = if col.numeric && !bold {
                    x + w - 2.0 - self.metrics.width(&line, size, bold)
                } else {
                    x + 2.0
                };
                self.push(Op::Text {
                    x: tx,
                    y: self.y + (i as f32 + 1.0) * size * LEADING - 0.25 * size,
                    size,
                    bold,
                    color: BLACK,
                    text: line,
                });
            }
            x += w;
        }
        self.y += height;
        self.push(Op::Line {
            from: (MARGIN, self.y - 1.0),
            to: (MARGIN + WIDTH, self.y - 1.0),
            width: if bold { 0.8 } else { 0.3 },
            color: if bold { BLACK } else { RULE },
            dashed: false,
        });
    }

    /// Reserves `height` points for a figure (a new page when it does not fit) and returns
    /// the top of its box.
    pub fn figure_box(&mut self, height: f32) -> f32 {
        self.ensure(height);
        let top = self.y;
        self.y += height;
        top
    }
}
