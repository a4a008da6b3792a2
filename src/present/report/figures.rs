//! The report's vector figures: |Z| at a bank's bus against harmonic order (its step
//! configurations, no banks and the worst configuration, with the characteristic orders and
//! their margin band marked), and the worst inrush current against time.

use super::layout::{BLACK, BODY, GREY, Layout, MARGIN, Op, RULE, Rgb, WIDTH};

/// Figure height (plot and legend), points.
pub const FIGURE_H: f32 = 262.0;
const PLOT_H: f32 = 175.0;
const LEFT: f32 = 46.0;

/// Colours of the step curves, in turn; no banks in grey, the worst in red.
const PALETTE: [Rgb; 6] = [
    (31, 119, 180),
    (44, 160, 44),
    (148, 103, 189),
    (140, 86, 75),
    (23, 190, 207),
    (188, 189, 34),
];
const WORST: Rgb = (214, 39, 40);
const BAND: Rgb = (253, 226, 200);

/// One curve: its label, points (x, y in data units) and how it is drawn.
pub struct Curve {
    pub label: String,
    pub points: Vec<(f64, f64)>,
    pub kind: CurveKind,
}

#[derive(Clone, Copy, PartialEq)]
pub enum CurveKind {
    Step(usize),
    NoBanks,
    Worst,
}

impl CurveKind {
    fn style(self) -> (Rgb, f32) {
        match self {
            CurveKind::Step(i) => (PALETTE[i % PALETTE.len()], 0.7),
            CurveKind::NoBanks => (GREY, 0.9),
            CurveKind::Worst => (WORST, 1.4),
        }
    }
}

/// Draws the |Z(h)| figure at the cursor: log |Z| (ohm) against order 1..`highest`, a
/// shaded band of ± `margin_percent` around every characteristic order in `orders` and a
/// dashed line at each, then the curves and a legend; `caption` above.
pub fn impedance(
    out: &mut Layout<'_>,
    caption: &str,
    curves: &[Curve],
    (orders, margin_percent, highest): (&[f64], f64, f64),
) {
    let top = out.figure_box(FIGURE_H) + 4.0;
    caption_text(out, caption, top);
    let (x0, y0, w, h) = (MARGIN + LEFT, top + 26.0, WIDTH - LEFT - 8.0, PLOT_H);
    let ys: Vec<f64> = (curves.iter())
        .flat_map(|c| c.points.iter().map(|p| p.1))
        .filter(|v| v.is_finite() && *v > 0.0)
        .collect();
    let lo = ys.iter().copied().fold(f64::INFINITY, f64::min).max(1e-6);
    let hi = ys.iter().copied().fold(0.0, f64::max).max(lo * 10.0);
    let (d_lo, d_hi) = (lo.log10().floor(), hi.log10().ceil());
    let px = |hx: f64| x0 + ((hx - 1.0) / (highest - 1.0).max(1e-9)) as f32 * w;
    let py = |z: f64| {
        let t = (z.max(1e-12).log10() - d_lo) / (d_hi - d_lo).max(1e-9);
        y0 + h - (t as f32) * h
    };
    for &o in orders.iter().filter(|&&o| o <= highest) {
        let (a, b) = (
            o * (1.0 - margin_percent / 100.0),
            o * (1.0 + margin_percent / 100.0),
        );
        let (xa, xb) = (px(a.max(1.0)), px(b.min(highest)));
        out.push(Op::Rect {
            x: xa,
            y: y0,
            w: xb - xa,
            h,
            fill: BAND,
        });
        out.push(Op::Line {
            from: (px(o), y0),
            to: (px(o), y0 + h),
            width: 0.4,
            color: WORST,
            dashed: true,
        });
    }
    axes(out, (x0, y0, w, h));
    log_ticks(out, (x0, y0, w), (d_lo, d_hi), &py);
    label(out, "|Z| (ohm)", (MARGIN, y0 - 6.0), false);
    order_ticks(out, (x0, y0, w, h), highest, &px);
    // No banks and the steps first, the worst on top.
    let mut order: Vec<&Curve> = curves.iter().collect();
    order.sort_by_key(|c| c.kind == CurveKind::Worst);
    for c in order {
        let (color, width) = c.kind.style();
        let points: Vec<(f32, f32)> = (c.points.iter())
            .filter(|p| p.0 <= highest)
            .map(|&(x, y)| (px(x), if y > 0.0 { py(y) } else { f32::NAN }))
            .collect();
        out.push(Op::Polyline {
            points,
            width,
            color,
        });
    }
    legend(out, curves, y0 + h + 30.0);
}

/// Draws the inrush figure at the cursor: current (A) against time (ms).
pub fn inrush(out: &mut Layout<'_>, caption: &str, time_ms: &[f64], current_a: &[f64]) {
    let top = out.figure_box(FIGURE_H - 40.0) + 4.0;
    caption_text(out, caption, top);
    let (x0, y0, w, h) = (MARGIN + LEFT, top + 26.0, WIDTH - LEFT - 8.0, PLOT_H - 20.0);
    let t_max = time_ms.iter().copied().fold(0.0, f64::max).max(1e-9);
    let a_max = current_a
        .iter()
        .map(|a| a.abs())
        .fold(0.0, f64::max)
        .max(1e-9);
    let px = |t: f64| x0 + (t / t_max) as f32 * w;
    let py = |a: f64| y0 + h / 2.0 - (a / a_max) as f32 * (h / 2.0);
    axes(out, (x0, y0, w, h));
    out.push(Op::Line {
        from: (x0, py(0.0)),
        to: (x0 + w, py(0.0)),
        width: 0.3,
        color: RULE,
        dashed: false,
    });
    for (v, y) in [(a_max, py(a_max)), (-a_max, py(-a_max))] {
        label(out, &format!("{v:.0}"), (x0 - 4.0, y + 2.5), true);
    }
    for k in 0..=4 {
        let t = t_max * f64::from(k) / 4.0;
        label(out, &format!("{t:.1}"), (px(t) - 6.0, y0 + h + 10.0), false);
    }
    label(
        out,
        "time after closing (ms)",
        (x0 + w / 2.0 - 40.0, y0 + h + 21.0),
        false,
    );
    label(out, "current (A)", (MARGIN, y0 - 4.0), false);
    let points = (time_ms.iter().zip(current_a))
        .map(|(&t, &a)| (px(t), py(a)))
        .collect();
    out.push(Op::Polyline {
        points,
        width: 0.8,
        color: WORST,
    });
}

/// The decade grid lines and labels of a log |Z| axis from 10^`d_lo` to 10^`d_hi`.
fn log_ticks(
    out: &mut Layout<'_>,
    (x0, _y0, w): (f32, f32, f32),
    (d_lo, d_hi): (f64, f64),
    py: &dyn Fn(f64) -> f32,
) {
    let mut d = d_lo;
    while d <= d_hi + 1e-9 {
        let y = py(10f64.powf(d));
        out.push(Op::Line {
            from: (x0, y),
            to: (x0 + w, y),
            width: 0.2,
            color: RULE,
            dashed: false,
        });
        label(out, &decade(d), (x0 - 4.0, y + 2.5), true);
        d += 1.0;
    }
}

/// The order axis's labels (every 2nd or 5th order) and its title.
fn order_ticks(
    out: &mut Layout<'_>,
    (x0, y0, w, h): (f32, f32, f32, f32),
    highest: f64,
    px: &dyn Fn(f64) -> f32,
) {
    let step = if highest > 30.0 { 5.0 } else { 2.0 };
    let mut t = step;
    while t <= highest + 1e-9 {
        label(out, &format!("{t:.0}"), (px(t) - 4.0, y0 + h + 10.0), false);
        t += step;
    }
    label(
        out,
        "harmonic order h",
        (x0 + w / 2.0 - 30.0, y0 + h + 21.0),
        false,
    );
}

fn caption_text(out: &mut Layout<'_>, caption: &str, top: f32) {
    out.push(Op::Text {
        x: MARGIN,
        y: top + 8.0,
        size: BODY,
        bold: true,
        color: BLACK,
        text: caption.to_string(),
    });
}

fn axes(out: &mut Layout<'_>, (x0, y0, w, h): (f32, f32, f32, f32)) {
    for (from, to) in [((x0, y0 + h), (x0 + w, y0 + h)), ((x0, y0), (x0, y0 + h))] {
        out.push(Op::Line {
            from,
            to,
            width: 0.6,
            color: BLACK,
            dashed: false,
        });
    }
}

/// A small label at (x, y); right-aligned at x when `right`.
fn label(out: &mut Layout<'_>, text: &str, (x, y): (f32, f32), right: bool) {
    let size = 7.0;
    let x = if right {
        x - out.metrics.width(text, size, false)
    } else {
        x
    };
    out.push(Op::Text {
        x,
        y,
        size,
        bold: false,
        color: BLACK,
        text: text.to_string(),
    });
}

/// A decade's label: 0.01, 0.1, 1, 10, 100 ...
fn decade(d: f64) -> String {
    let v = 10f64.powf(d);
    if d < 0.0 {
        format!("{v:.*}", (-d) as usize)
    } else {
        format!("{v:.0}")
    }
}

/// The legend: a short line and the label of each curve, in rows, then the band's key.
fn legend(out: &mut Layout<'_>, curves: &[Curve], top: f32) {
    let mut x = MARGIN + LEFT;
    let mut y = top + 8.0;
    let mut items: Vec<(String, Rgb, bool)> = (curves.iter())
        .map(|c| (c.label.clone(), c.kind.style().0, false))
        .collect();
    items.push(("characteristic order ± margin".into(), BAND, true));
    for (text, color, band) in items {
        let w = 22.0 + out.metrics.width(&text, 7.0, false) + 10.0;
        if x + w > MARGIN + WIDTH {
            x = MARGIN + LEFT;
            y += 10.0;
        }
        if band {
            out.push(Op::Rect {
                x,
                y: y - 5.0,
                w: 16.0,
                h: 6.0,
                fill: color,
            });
        } else {
            out.push(Op::Line {
                from: (x, y - 2.0),
                to: (x + 16.0, y - 2.0),
                width: 1.2,
                color,
                dashed: false,
            });
        }
        out.push(Op::Text {
            x: x + 20.0,
            y,
            size: 7.0,
            bold: false,
            color: BLACK,
            text,
        });
        x += w;
    }
}
