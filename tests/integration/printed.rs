//! The review as a reviewer reads it: each bundled case's review printed to PDF by
//! LibreOffice (when installed; CI installs it), its page count under the target, and
//! every assumption and caution sentence present whole in the PDF's text.

use std::path::{Path, PathBuf};
use std::process::Command;

use calamine::{Reader, Xlsx, open_workbook};

use crate::common::{external_tool, output_within};

/// Page target for a bundled case's printed review (the goal: under 25 pages).
const MAX_PAGES: usize = 24;

/// The sentences of a text sheet (column B, from row 3), as written.
fn sentences(review: &Path, sheet: &str) -> Vec<String> {
    let mut wb: Xlsx<_> = open_workbook(review).unwrap();
    let r = wb.worksheet_range(sheet).unwrap();
    r.rows()
        .skip(2)
        .filter_map(|row| row.get(1).map(|c| c.to_string()))
        .filter(|s| !s.is_empty())
        .collect()
}

/// Whitespace runs to one space, so a sentence wrapped over lines compares whole; hyphens
/// dropped, as pdftotext joins a word broken at a line's end hyphen ("plant-" + "wide").
fn squash(s: &str) -> String {
    s.split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
        .replace('-', "")
}

/// Runs `overtone COMMAND CASE -o REVIEW --quiet` on a bundled case and asserts success.
fn review_of(command: &str, case: &str, review: &Path) {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let out = output_within(
        Command::new(env!("CARGO_BIN_EXE_overtone"))
            .arg(command)
            .arg(root.join("cases").join(format!("{case}.xlsx")))
            .arg("-o")
            .arg(review)
            .arg("--quiet"),
        600,
    );
    assert!(
        out.status.success(),
        "{case}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// The text pdftotext reads from the PDF LibreOffice printed of `review` (pages end with
/// a form feed).
fn printed_text(review: &Path, stderr: &[u8]) -> String {
    let pdf = review.with_extension("pdf");
    assert!(
        pdf.exists(),
        "{}: no PDF: {}",
        review.display(),
        String::from_utf8_lossy(stderr)
    );
    let txt = review.with_extension("txt");
    output_within(Command::new("pdftotext").arg(&pdf).arg(&txt), 120);
    std::fs::read_to_string(&txt).unwrap()
}

/// The `Plant` item of a bundled case's Study sheet.
fn plant_name(case: &str) -> String {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let mut wb: Xlsx<_> = open_workbook(root.join("cases").join(format!("{case}.xlsx"))).unwrap();
    let study = wb.worksheet_range("Study").unwrap();
    study
        .rows()
        .find(|row| row.first().map(|c| c.to_string()) == Some("Plant".into()))
        .and_then(|row| row.get(1).map(|c| c.to_string()))
        .unwrap_or_default()
}

/// Every printed page of `review`'s PDF carries the plant in its header and "Page i of n"
/// in its footer (read in the PDF's drawing order, as a chart spilling from the page
/// before may sit beside the header).
fn page_furniture(case: &str, review: &Path) {
    let txt = review.with_extension("raw.txt");
    let pdf = review.with_extension("pdf");
    output_within(
        Command::new("pdftotext").arg("-raw").arg(&pdf).arg(&txt),
        120,
    );
    let text = std::fs::read_to_string(&txt).unwrap();
    let plant = plant_name(case);
    assert!(!plant.is_empty(), "{case}: no plant name");
    // The widest tables (Resonance, Distortion) print on A3 (1190.55 × 841.89 pt), not
    // shrunk onto a small page.
    let info = output_within(
        Command::new("pdfinfo")
            .args(["-f", "1", "-l", "999"])
            .arg(&pdf),
        60,
    );
    let sizes: Vec<f64> = String::from_utf8_lossy(&info.stdout)
        .lines()
        .filter(|l| l.starts_with("Page") && l.contains(" size:"))
        .filter_map(|l| {
            l.split("size:")
                .nth(1)?
                .split_whitespace()
                .next()?
                .parse()
                .ok()
        })
        .collect();
    let mut wide = 0;
    for (i, page) in text.split('\u{c}').enumerate() {
        let footer_sheet = page
            .lines()
            .rev()
            .find(|l| l.contains("Page "))
            .unwrap_or("");
        if footer_sheet.starts_with("Resonance") || footer_sheet.starts_with("Distortion") {
            let width = sizes.get(i).copied().unwrap_or(0.0);
            assert!(
                width > 1100.0,
                "{case}: page {} ({footer_sheet}) is {width} pt wide",
                i + 1
            );
            wide += 1;
        }
    }
    assert!(
        wide >= 2,
        "{case}: {wide} Resonance and Distortion pages found"
    );
    let pages: Vec<&str> = text
        .split('\u{c}')
        .filter(|p| !p.trim().is_empty())
        .collect();
    let n = pages.len();
    for (i, page) in pages.iter().enumerate() {
        let flat = squash(page);
        assert!(
            flat.contains(&squash(&format!("Page {} of {n}", i + 1))),
            "{case}: page {} has no page number",
            i + 1
        );
        assert!(
            flat.contains(&squash(&plant)),
            "{case}: page {} has no plant in its header",
            i + 1
        );
    }
}

#[test]
fn printed_reviews_are_short_and_print_every_sentence_whole() {
    if !external_tool("soffice", "the review printed to PDF")
        || !external_tool("pdftotext", "the printed review's text")
    {
        return;
    }
    let dir = std::env::temp_dir().join(format!("overtone-printed-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let cases = ["bottling-plant", "food-plant", "water-plant", "large-site"];
    let mut reviews = Vec::new();
    for case in cases {
        let review = dir.join(format!("{case}.xlsx"));
        review_of("check", case, &review);
        reviews.push(review);
    }
    let out = crate::common::soffice_to_pdf(&dir, &reviews, 900);
    for (case, review) in cases.iter().zip(&reviews) {
        let text = printed_text(review, &out.stderr);
        // pdftotext ends every page with a form feed.
        let pages = text.matches('\u{c}').count();
        assert!(
            (2..=MAX_PAGES).contains(&pages),
            "{case}: {pages} printed pages (target at most {MAX_PAGES})"
        );
        page_furniture(case, review);
        let flat = squash(&text);
        for sheet in ["Assumptions", "Cautions"] {
            let lines = sentences(review, sheet);
            assert!(
                lines.len() >= 2,
                "{case}: {sheet} has {} lines",
                lines.len()
            );
            for s in lines {
                assert!(
                    flat.contains(&squash(&s)),
                    "{case}: this {sheet} line is not whole in the PDF: {s}"
                );
            }
        }
        // Every check named in the Summary's verdict table prints whole (column A, below
        // the "Check" header), not clipped by the element beside it.
        let mut wb: Xlsx<_> = open_workbook(review).unwrap();
        let summary = wb.worksheet_range("Summary").unwrap();
        let checks: Vec<String> = summary
            .rows()
            .skip_while(|row| row.first().map(|c| c.to_string()) != Some("Check".into()))
            .skip(1)
            .map_while(|row| row.first().map(|c| c.to_string()).filter(|s| !s.is_empty()))
            .collect();
        assert!(checks.len() >= 3, "{case}: {} verdict rows", checks.len());
        for c in checks {
            assert!(
                flat.contains(&squash(&c)),
                "{case}: this check is not whole in the PDF: {c}"
            );
        }
        // The scan data do not print; the charts and the study sheets do.
        assert!(!flat.contains("Marker height"), "{case}: scan data printed");
        assert!(
            flat.contains(&squash("Driving-point impedance at")),
            "{case}: no chart"
        );
        assert!(
            flat.contains(&squash("Reviewer sign-off")),
            "{case}: no summary"
        );
    }
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn the_printed_design_review_opens_with_the_plans_and_keeps_the_cautions() {
    if !external_tool("soffice", "the design review printed to PDF")
        || !external_tool("pdftotext", "the printed review's text")
    {
        return;
    }
    let dir = std::env::temp_dir().join(format!("overtone-design-pdf-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let review = dir.join("food-design.xlsx");
    review_of("design", "food-plant", &review);
    let wb: Xlsx<_> = open_workbook(&review).unwrap();
    let names = wb.sheet_names();
    assert_eq!(names[..3], ["Design", "Load levels", "Summary"]);
    assert!(names.iter().any(|n| n == "Cautions"));
    let out = crate::common::soffice_to_pdf(&dir, std::slice::from_ref(&review), 600);
    let raw = printed_text(&review, &out.stderr);
    let pages = raw.matches('\u{c}').count();
    assert!((3..=MAX_PAGES + 4).contains(&pages), "{pages} pages");
    page_furniture("food-plant", &review);
    let text = squash(&raw);
    // The first page is the design: the proposal caution and the recommended plan.
    let first = squash(raw.split('\u{c}').next().unwrap_or_default());
    assert!(
        first.contains("A PROPOSAL for a licensed engineer's review"),
        "{first}"
    );
    assert!(
        first.contains("Recommended: C1 at MCC1: 2 × 50 kvar"),
        "{first}"
    );
    for s in sentences(&review, "Cautions") {
        assert!(text.contains(&squash(&s)), "caution not printed whole: {s}");
    }
}
