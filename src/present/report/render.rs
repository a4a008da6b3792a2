//! The laid-out pages drawn into a PDF with krilla: every page with its header (title, plant,
//! date) and footer (the caution and "Page x of y"), the fonts embedded as subsets, no time
//! stamp of the run (the same input gives the same bytes).

use krilla::Document;
use krilla::color::rgb;
use krilla::geom::{PathBuilder, Point};
use krilla::num::NormalizedF32;
use krilla::page::PageSettings;
use krilla::paint::{Fill, Stroke, StrokeDash};
use krilla::surface::Surface;
use krilla::text::{Font, TextDirection};

use super::layout::{BLACK, GREY, MARGIN, Metrics, Op, PAGE_H, PAGE_W, RULE, Rgb, WIDTH};

/// What every page carries.
pub struct Furniture {
    /// Header: the title (cut to fit), then `header_tail` (plant and date), one line.
    pub header: String,
    pub header_tail: String,
    /// Footer, left: the caution in a few words.
    pub footer: String,
    /// The document's title (its metadata).
    pub title: String,
}

/// Why the PDF could not be written.
#[derive(Debug, thiserror::Error)]
pub enum RenderError {
    #[error("the report's bundled font could not be read")]
    Font,
    #[error("the report's page size was refused by the PDF writer")]
    Page,
    #[error("the PDF writer failed: {0}")]
    Pdf(String),
}

fn fill(color: Rgb) -> Fill {
    Fill {
        paint: rgb::Color::new(color.0, color.1, color.2).into(),
        opacity: NormalizedF32::ONE,
        rule: Default::default(),
    }
}

/// The PDF of `pages` with `furniture` on every page.
pub fn render(
    pages: &[Vec<Op>],
    furniture: &Furniture,
    (regular, bold): (&[u8], &[u8]),
    metrics: &Metrics<'_>,
) -> Result<Vec<u8>, RenderError> {
    let font = Font::new(regular.to_vec().into(), 0).ok_or(RenderError::Font)?;
    let font_bold = Font::new(bold.to_vec().into(), 0).ok_or(RenderError::Font)?;
    let mut doc = Document::new();
    doc.set_metadata(
        krilla::metadata::Metadata::new()
            .title(furniture.title.clone())
            .creator("overtone".into())
            .keywords(vec![super::REPORT_MARK.into()]),
    );
    let n = pages.len();
    let tail = &furniture.header_tail;
    let room = WIDTH - metrics.width(tail, 8.0, false);
    let header = fit(
        &format!("{}{tail}", fit(&furniture.header, room, metrics)),
        WIDTH,
        metrics,
    );
    for (i, ops) in pages.iter().enumerate() {
        let settings = PageSettings::from_wh(PAGE_W, PAGE_H).ok_or(RenderError::Page)?;
        let mut page = doc.start_page_with(settings);
        let mut surface = page.surface();
        let fonts = (&font, &font_bold);
        for op in ops {
            draw(&mut surface, op, fonts);
        }
        let number = format!("Page {} of {n}", i + 1);
        let furniture_ops = [
            Op::Text {
                x: MARGIN,
                y: 40.0,
                size: 8.0,
                bold: false,
                color: GREY,
                text: header.clone(),
            },
            Op::Line {
                from: (MARGIN, 47.0),
                to: (MARGIN + WIDTH, 47.0),
                width: 0.4,
                color: RULE,
                dashed: false,
            },
            Op::Line {
                from: (MARGIN, PAGE_H - 48.0),
                to: (MARGIN + WIDTH, PAGE_H - 48.0),
                width: 0.4,
                color: RULE,
                dashed: false,
            },
            Op::Text {
                x: MARGIN,
                y: PAGE_H - 36.0,
                size: 8.0,
                bold: false,
                color: GREY,
                text: furniture.footer.clone(),
            },
            Op::Text {
                x: MARGIN + WIDTH - metrics.width(&number, 8.0, false),
                y: PAGE_H - 36.0,
                size: 8.0,
                bold: false,
                color: BLACK,
                text: number,
            },
        ];
        for op in &furniture_ops {
            draw(&mut surface, op, fonts);
        }
        surface.finish();
        page.finish();
    }
    doc.finish().map_err(|e| RenderError::Pdf(format!("{e:?}")))
}

/// `text` cut to fit `width` points at the furniture's 8 pt, with an ellipsis when cut.
fn fit(text: &str, width: f32, metrics: &Metrics<'_>) -> String {
    if metrics.width(text, 8.0, false) <= width {
        return text.to_string();
    }
    let mut cut: String = String::new();
    for c in text.chars() {
        let mut next = cut.clone();
        next.push(c);
        next.push('…');
        if metrics.width(&next, 8.0, false) > width {
            break;
        }
        cut.push(c);
    }
    cut.push('…');
    cut
}

/// Draws one operation.
fn draw(surface: &mut Surface<'_>, op: &Op, (regular, bold_font): (&Font, &Font)) {
    match op {
        Op::Text {
            x,
            y,
            size,
            bold,
            color,
            text,
        } => {
            surface.set_fill(Some(fill(*color)));
            let font = if *bold { bold_font } else { regular };
            surface.draw_text(
                Point::from_xy(*x, *y),
                font.clone(),
                *size,
                text,
                false,
                TextDirection::Auto,
            );
        }
        Op::Line {
            from,
            to,
            width,
            color,
            dashed,
        } => stroke(surface, &[*from, *to], *width, *color, *dashed),
        Op::Polyline {
            points,
            width,
            color,
        } => stroke(surface, points, *width, *color, false),
        Op::Rect {
            x,
            y,
            w,
            h,
            fill: f,
        } => {
            let mut pb = PathBuilder::new();
            pb.move_to(*x, *y);
            pb.line_to(x + w, *y);
            pb.line_to(x + w, y + h);
            pb.line_to(*x, y + h);
            pb.close();
            if let Some(path) = pb.finish() {
                surface.set_stroke(None);
                surface.set_fill(Some(fill(*f)));
                surface.draw_path(&path);
            }
        }
    }
}

/// Strokes the open path through `points`.
fn stroke(surface: &mut Surface<'_>, points: &[(f32, f32)], width: f32, color: Rgb, dashed: bool) {
    let mut pb = PathBuilder::new();
    let mut started = false;
    for &(x, y) in points {
        if !(x.is_finite() && y.is_finite()) {
            started = false;
            continue;
        }
        if started {
            pb.line_to(x, y);
        } else {
            pb.move_to(x, y);
            started = true;
        }
    }
    let Some(path) = pb.finish() else { return };
    surface.set_fill(None);
    surface.set_stroke(Some(Stroke {
        paint: rgb::Color::new(color.0, color.1, color.2).into(),
        width,
        dash: dashed.then(|| StrokeDash {
            array: vec![3.0, 2.0],
            offset: 0.0,
        }),
        ..Default::default()
    }));
    surface.draw_path(&path);
    surface.set_stroke(None);
}
