//! The typeset study report (`--report FILE.pdf`) as a reviewer reads it: poppler's
//! pdftotext for the verdict, every caution whole and the page furniture on every page;
//! pdfinfo for the pages; pdffonts for embedded fonts; the same bytes twice.

use std::path::{Path, PathBuf};
use std::process::Command;

use crate::common::{external_tool, output_within};

/// Whitespace runs to one space and hyphens dropped (pdftotext joins a word broken at a
/// line's end hyphen).
fn squash(s: &str) -> String {
    s.split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
        .replace('-', "")
}

fn case(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("cases")
        .join(format!("{name}.xlsx"))
}

/// Runs overtone with `args` and returns its output (asserting success).
fn overtone(args: &[&std::ffi::OsStr]) -> std::process::Output {
    let out = output_within(Command::new(env!("CARGO_BIN_EXE_overtone")).args(args), 600);
    assert!(
        out.status.success(),
        "{:?}: {}",
        args,
        String::from_utf8_lossy(&out.stderr)
    );
    out
}

/// The text of `pdf` in drawing order, one form feed per page.
fn pdf_text(pdf: &Path) -> String {
    let out = output_within(Command::new("pdftotext").arg("-raw").arg(pdf).arg("-"), 120);
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// The verdict block of the terminal answer (100 columns) as items: each `- ` line with
/// its hanging lines, and each indented `~`/`>` line with its own.
fn terminal_verdict(stdout: &str) -> Vec<String> {
    let mut items: Vec<String> = Vec::new();
    let mut inside = false;
    for line in stdout.lines() {
        if line.starts_with("VERDICT") {
            inside = true;
            continue;
        }
        if !inside {
            continue;
        }
        if line.trim().is_empty() {
            break;
        }
        let t = line.trim();
        if line.starts_with("- ") || t.starts_with("~ ") || t.starts_with("> ") {
            items.push(t[2..].to_string());
        } else if let Some(last) = items.last_mut() {
            last.push(' ');
            last.push_str(t);
        }
    }
    items
}

#[test]
fn the_report_carries_the_verdict_the_cautions_and_page_furniture_on_every_page() {
    if !external_tool("pdftotext", "the report's text") || !external_tool("pdfinfo", "its pages") {
        return;
    }
    let dir = std::env::temp_dir().join(format!("overtone-report-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for name in ["bottling-plant", "large-site"] {
        let pdf = dir.join(format!("{name}.pdf"));
        let out = overtone(&[
            "check".as_ref(),
            case(name).as_os_str(),
            "--report".as_ref(),
            pdf.as_os_str(),
            "--quiet".as_ref(),
        ]);
        let bytes = std::fs::read(&pdf).unwrap();
        assert!(bytes.starts_with(b"%PDF"), "{name}: not a PDF");
        let raw = pdf_text(&pdf);
        let text = squash(&raw);
        // Every verdict sentence of the terminal answer, whole.
        let verdict = terminal_verdict(&String::from_utf8_lossy(&out.stdout));
        assert!(
            verdict.len() >= 3,
            "{name}: {} verdict items",
            verdict.len()
        );
        for v in &verdict {
            assert!(text.contains(&squash(v)), "{name}: verdict not whole: {v}");
        }
        // Every caution, whole.
        for c in overtone::present::report::cautions() {
            assert!(text.contains(&squash(&c)), "{name}: caution not whole: {c}");
        }
        // Page furniture on every page; about 20 pages at most.
        let pages: Vec<&str> = raw
            .split('\u{c}')
            .filter(|p| !p.trim().is_empty())
            .collect();
        let info = output_within(Command::new("pdfinfo").arg(&pdf), 60);
        let info = String::from_utf8_lossy(&info.stdout);
        let count: usize = (info.lines())
            .find_map(|l| l.strip_prefix("Pages:"))
            .and_then(|v| v.trim().parse().ok())
            .unwrap_or(0);
        assert_eq!(
            count,
            pages.len(),
            "{name}: pdfinfo against the text's pages"
        );
        assert!((3..=20).contains(&count), "{name}: {count} pages");
        for (i, page) in pages.iter().enumerate() {
            let flat = squash(page);
            assert!(
                flat.contains(&format!("Page {} of {count}", i + 1)),
                "{name}: page {} has no page number",
                i + 1
            );
            assert!(
                flat.contains("Invented"),
                "{name}: page {} has no plant in its header",
                i + 1
            );
        }
        // The figures (a caption and axis per bank bus), the limits and the sign-off.
        assert!(text.contains("harmonic order h"), "{name}: no |Z| figure");
        assert!(text.contains("Harmonic limits at the PCC"), "{name}");
        assert!(
            text.contains("Review and signoff") && text.contains("Seal"),
            "{name}"
        );
        // The same input and date give the same bytes.
        let again = dir.join(format!("{name}-again.pdf"));
        overtone(&[
            "check".as_ref(),
            case(name).as_os_str(),
            "--report".as_ref(),
            again.as_os_str(),
            "--quiet".as_ref(),
        ]);
        assert!(
            std::fs::read(&again).unwrap() == bytes,
            "{name}: bytes differ"
        );
    }
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn the_report_embeds_its_fonts_and_design_reports_open_with_the_plan() {
    if !external_tool("pdffonts", "the report's fonts") || !external_tool("pdftotext", "text") {
        return;
    }
    let dir = std::env::temp_dir().join(format!("overtone-report-d-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let pdf = dir.join("design.pdf");
    overtone(&[
        "design".as_ref(),
        case("food-plant").as_os_str(),
        "--report".as_ref(),
        pdf.as_os_str(),
        "--quiet".as_ref(),
    ]);
    let fonts = output_within(Command::new("pdffonts").arg(&pdf), 60);
    let fonts = String::from_utf8_lossy(&fonts.stdout);
    let rows: Vec<&str> = fonts.lines().skip(2).collect();
    assert!(!rows.is_empty(), "{fonts}");
    for r in rows {
        // name, type..., then the "emb" column: yes.
        assert!(r.contains(" yes "), "font not embedded: {r}");
    }
    let text = squash(&pdf_text(&pdf));
    let first = text
        .find("The plan recommended")
        .expect("the design section");
    let basis = text.find("Study basis").expect("the basis");
    assert!(first < basis, "the plan comes before the study basis");
    assert!(
        text.contains("Recommended:"),
        "the recommended plan in words"
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_report_name_without_pdf_is_refused_before_the_study() {
    let dir = std::env::temp_dir().join(format!("overtone-report-x-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let wrong = dir.join("report.xlsx");
    let out = output_within(
        Command::new(env!("CARGO_BIN_EXE_overtone"))
            .arg("check")
            .arg(case("food-plant"))
            .arg("--report")
            .arg(&wrong),
        120,
    );
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("a PDF report") && err.contains(".pdf"),
        "{err}"
    );
    assert!(!wrong.exists());
    std::fs::remove_dir_all(&dir).ok();
}
