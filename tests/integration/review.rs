//! The review workbook: read back with calamine, formulas, determinism, output-path checks,
//! and (when LibreOffice is installed) its live formulas recalculated by a real spreadsheet
//! program against the tool's values.

use std::io::{Read, Write};
use std::path::PathBuf;
use std::process::Command;

use calamine::{Data, Reader, open_workbook_auto_from_rs};
use overtone::io::provenance::Provenance;
use overtone::jobs::charts::scan_charts;
use overtone::jobs::check::{CheckResults, run_check};
use overtone::present::review::review_bytes;

fn food() -> CheckResults {
    let plant = overtone::io::workbook_in::read_workbook(
        &PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("cases/food-plant.xlsx"),
    )
    .expect("case reads")
    .plant;
    run_check(&plant, &Default::default()).expect("runs")
}

fn prov() -> Provenance {
    Provenance {
        input: "food-plant.xlsx".into(),
        sha256: "0".repeat(64),
        date: (2026, 3, 1),
        warnings: Vec::new(),
    }
}

fn temp(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("overtone-review-{tag}-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

#[test]
fn sheets_headers_numbers_and_formulas_read_back() {
    let res = food();
    let bytes = review_bytes(&res, &scan_charts(&res), &prov()).unwrap();
    assert_eq!(
        bytes,
        review_bytes(&res, &scan_charts(&res), &prov()).unwrap(),
        "two runs byte-identical"
    );
    let mut wb = open_workbook_auto_from_rs(std::io::Cursor::new(bytes)).unwrap();
    let names = wb.sheet_names();
    for s in [
        "Summary",
        "Input",
        "Resonance",
        "Charts",
        "Distortion",
        "Duty",
        "Remedies",
        "Switching",
        "Operating point",
        "Assumptions",
        "Cautions",
    ] {
        assert!(names.iter().any(|n| n == s), "{s} in {names:?}");
    }
    let r = wb.worksheet_range("Resonance").unwrap();
    let head: Vec<String> = r
        .rows()
        .next()
        .unwrap()
        .iter()
        .map(|c| c.to_string())
        .collect();
    assert_eq!(head[10], "Hand check h (formula)");
    assert_eq!(head[11], "Scanned h");
    for (i, row) in res.resonance.rows.iter().enumerate() {
        let got = |c: usize| match r.get((i + 1, c)) {
            Some(Data::Float(v)) => *v,
            other => panic!("row {i} col {c}: {other:?}"),
        };
        assert_eq!(got(11), row.peak.unwrap().order);
        assert_eq!(
            got(10),
            row.hand_order,
            "cached result of the hand-check formula"
        );
        assert_eq!(got(5), row.s_sc_mva);
    }
    let f = wb.worksheet_formula("Resonance").unwrap();
    assert_eq!(
        f.get_value((1, 10)).map(String::as_str),
        Some("SQRT(F2*1000/G2)")
    );
    assert_eq!(
        f.get_value((1, 16)).map(String::as_str),
        Some("(L2-P2)/P2*100")
    );
    let d = wb.worksheet_formula("Distortion").unwrap();
    assert_eq!(d.get_value((1, 5)).map(String::as_str), Some("E2-D2"));
    let summary = wb.worksheet_range("Summary").unwrap();
    let text: Vec<String> = summary
        .rows()
        .flat_map(|r| r.iter().map(|c| c.to_string()))
        .collect();
    assert!(text.iter().any(|t| t == "EXCEEDS"));
    assert!(text.iter().any(|t| t == "Reviewer sign-off"));
    // The sources of every built-in value travel with the review (issue of a reviewer
    // without the project's files): one row each, cited from the Assumptions.
    let sources = wb.worksheet_range("Sources").unwrap();
    for (i, (what, source, confidence)) in overtone::present::sources::SOURCES.iter().enumerate() {
        assert_eq!(
            sources.get((3 + i, 0)).map(|c| c.to_string()).as_deref(),
            Some(*what)
        );
        assert_eq!(
            sources.get((3 + i, 1)).map(|c| c.to_string()).as_deref(),
            Some(*source)
        );
        assert_eq!(
            sources.get((3 + i, 2)).map(|c| c.to_string()).as_deref(),
            Some(*confidence)
        );
    }
    let assumptions = wb.worksheet_range("Assumptions").unwrap();
    assert!(
        assumptions
            .rows()
            .any(|r| r.iter().any(|c| c.to_string().contains("Sources sheet")))
    );
    let cautions = wb.worksheet_range("Cautions").unwrap();
    assert!(cautions.rows().any(|r| {
        r.iter()
            .any(|c| c.to_string().contains("licensed professional engineer"))
    }));
}

#[test]
fn output_path_is_checked_before_the_study() {
    let dir = temp("paths");
    let input = dir.join("plant.xlsx");
    std::fs::copy(
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("cases/food-plant.xlsx"),
        &input,
    )
    .unwrap();
    let run = |args: &[&str]| {
        Command::new(env!("CARGO_BIN_EXE_overtone"))
            .args(args)
            .output()
            .unwrap()
    };
    let before = std::fs::read(&input).unwrap();
    let same = run(&[
        "check",
        input.to_str().unwrap(),
        "-o",
        input.to_str().unwrap(),
    ]);
    assert_eq!(same.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&same.stderr).contains("would overwrite the input workbook"));
    assert_eq!(
        std::fs::read(&input).unwrap(),
        before,
        "the input is never modified"
    );
    let missing = run(&[
        "check",
        input.to_str().unwrap(),
        "-o",
        "/nonexistent-folder/review.xlsx",
    ]);
    assert_eq!(missing.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&missing.stderr).contains("the output folder does not exist"));
    let out = dir.join("review.xlsx");
    let ok = run(&[
        "check",
        input.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
        "--date",
        "2026-03-01",
        "--quiet",
    ]);
    assert!(
        ok.status.success(),
        "{}",
        String::from_utf8_lossy(&ok.stderr)
    );
    let again = dir.join("again.xlsx");
    run(&[
        "check",
        input.to_str().unwrap(),
        "-o",
        again.to_str().unwrap(),
        "--date",
        "2026-03-01",
        "--quiet",
    ]);
    assert_eq!(std::fs::read(&out).unwrap(), std::fs::read(&again).unwrap());
    let leftovers: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty(), "no temporary file left");
    std::fs::remove_dir_all(&dir).ok();
}

/// `bytes` with every formula cell's cached value removed, so a spreadsheet program must
/// recalculate it.
fn strip_cached_values(bytes: &[u8]) -> Vec<u8> {
    let mut zin = zip::ZipArchive::new(std::io::Cursor::new(bytes.to_vec())).unwrap();
    let mut out = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    let re_strip = |xml: &str| -> String {
        let mut s = String::with_capacity(xml.len());
        let mut rest = xml;
        while let Some(i) = rest.find("</f><v>") {
            s.push_str(&rest[..i + 4]);
            let after = &rest[i + 4..];
            let j = after.find("</v>").unwrap();
            rest = &after[j + 4..];
        }
        s.push_str(rest);
        s
    };
    for i in 0..zin.len() {
        let mut f = zin.by_index(i).unwrap();
        let name = f.name().unwrap().to_string();
        let mut data = Vec::new();
        f.read_to_end(&mut data).unwrap();
        if name.starts_with("xl/worksheets/") && name.ends_with(".xml") {
            data = re_strip(&String::from_utf8(data).unwrap()).into_bytes();
        }
        out.start_file(name, zip::write::SimpleFileOptions::default())
            .unwrap();
        out.write_all(&data).unwrap();
    }
    out.finish().unwrap().into_inner()
}

#[test]
fn live_formulas_recalculated_by_libreoffice_match() {
    if !crate::common::external_tool("soffice", "LibreOffice recalculation of the review") {
        return;
    }
    let res = food();
    let dir = temp("lo");
    let path = dir.join("stripped.xlsx");
    std::fs::write(
        &path,
        strip_cached_values(&review_bytes(&res, &scan_charts(&res), &prov()).unwrap()),
    )
    .unwrap();
    // A fresh profile that recalculates xlsx formulas on load (OOXMLRecalcMode 0).
    let profile = dir.join("profile");
    std::fs::create_dir_all(profile.join("user")).unwrap();
    std::fs::write(
        profile.join("user/registrymodifications.xcu"),
        r#"<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry" xmlns:xs="http://www.w3.org/2001/XMLSchema" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance">
<item oor:path="/org.openoffice.Office.Calc/Formula/Load"><prop oor:name="OOXMLRecalcMode" oor:op="fuse"><value>0</value></prop></item>
</oor:items>"#,
    )
    .unwrap();
    let status = crate::common::output_within(
        Command::new("soffice")
            .arg("--headless")
            .arg("--norestore")
            .arg(format!(
                "-env:UserInstallation=file://{}",
                profile.display()
            ))
            .arg("--convert-to")
            .arg("csv:Text - txt - csv (StarCalc):44,34,UTF8,1,,0,false,true,false,false,false,-1")
            .arg("--outdir")
            .arg(&dir)
            .arg(&path),
        600,
    );
    let csv = std::fs::read_to_string(dir.join("stripped-Resonance.csv"))
        .unwrap_or_else(|_| panic!("no CSV: {}", String::from_utf8_lossy(&status.stderr)));
    let rows: Vec<Vec<String>> = csv
        .lines()
        .skip(1)
        .map(|l| {
            l.split(',')
                .map(|s| s.trim_matches('"').to_string())
                .collect()
        })
        .collect();
    assert_eq!(rows.len(), res.resonance.rows.len());
    for (r, row) in rows.iter().zip(&res.resonance.rows) {
        let hand: f64 = r[10].parse().unwrap();
        let margin: f64 = r[16].parse().unwrap();
        // S_sc from the Input sheet's source, transformer and cable cells (the engineer's
        // series sum, IEEE Std 399 per-unit conversions) equals the tool's, 1e-9.
        let s_sc: f64 = r[5].parse().unwrap();
        assert!(
            (s_sc - row.s_sc_mva).abs() <= 1e-9 * row.s_sc_mva,
            "{s_sc} vs {}",
            row.s_sc_mva
        );
        // The spreadsheet's own arithmetic on the visible cells equals the tool's, 1e-9.
        assert!(
            (hand - row.hand_order).abs() <= 1e-9 * row.hand_order,
            "{hand} vs {}",
            row.hand_order
        );
        let m = row.margin_percent.unwrap();
        assert!(
            (margin - m).abs() <= 1e-9 * m.abs().max(1.0),
            "{margin} vs {m}"
        );
    }
    let dist = std::fs::read_to_string(dir.join("stripped-Distortion.csv")).unwrap();
    for (line, lr) in dist.lines().skip(1).zip(&res.limit_rows) {
        let f: Vec<&str> = line.split(',').collect();
        let margin: f64 = f[5].parse().unwrap();
        let expected = lr.worst_thd.margin.unwrap();
        assert!(
            (margin - expected).abs() <= 1e-9 * expected.abs().max(1.0),
            "{margin} vs {expected}"
        );
    }
    // Operating point: PF = P/√(P² + Q²) of the visible cells (textbook definition).
    let op = std::fs::read_to_string(dir.join("stripped-Operating point.csv")).unwrap();
    for (line, p) in op.lines().skip(1).zip(&res.operating.points) {
        let f: Vec<&str> = line.split(',').collect();
        let pf: f64 = f[4].parse().unwrap();
        let expected = p.pcc_power_factor.unwrap();
        assert!((pf - expected).abs() <= 1e-9, "{pf} vs {expected}");
    }
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn switching_and_waveform_sheets_read_back_and_print() {
    // The bottling plant (the demo) with its switching simulation: the Switching sheet
    // holds every event's simulated and formula peaks as the study found them, and the
    // Waveforms sheet a current chart and a voltage chart per bank, its data beside them.
    let plant = overtone::demo::demo_plant().unwrap();
    let res = run_check(
        &plant,
        &overtone::jobs::check::CheckOptions {
            remedies: Some(false),
            switching: true,
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(res.switching.waveforms.len(), plant.banks.len());
    let bytes = review_bytes(&res, &scan_charts(&res), &prov()).unwrap();
    let mut wb = open_workbook_auto_from_rs(std::io::Cursor::new(bytes.clone())).unwrap();
    let sw = wb.worksheet_range("Switching").unwrap();
    let num = |r: usize, c: usize| match sw.get((r, c)) {
        Some(Data::Float(f)) => *f,
        other => panic!("Switching ({r},{c}): {other:?}"),
    };
    for (i, e) in res.switching.events.iter().enumerate() {
        assert_eq!(num(i + 1, 6), e.peak_a);
        match &e.formula {
            Some(f) => assert_eq!(num(i + 1, 7), f.peak_a),
            None => assert_eq!(
                sw.get((i + 1, 7)),
                Some(&Data::String("not applicable".into()))
            ),
        }
        assert_eq!(num(i + 1, 11), e.bus_peak_pu);
        assert_eq!(num(i + 1, 12), e.capacitor_peak_pu);
    }
    let wf = wb.worksheet_range("Waveforms").unwrap();
    let w = &res.switching.waveforms[0];
    // Bank C1's block: time, current, bus, capacitor from row 4, column U.
    assert_eq!(wf.get((3, 20)), Some(&Data::Float(w.time_ms[0])));
    assert_eq!(wf.get((3, 21)), Some(&Data::Float(w.current_a[0])));
    let top = w.current_a.iter().fold(0.0f64, |m, a| m.max(a.abs()));
    let e = res
        .switching
        .events
        .iter()
        .filter(|e| e.bank == w.bank)
        .fold(0.0f64, |m, e| m.max(e.peak_a));
    // The chart shows the worst event; its sampled peak is within 0.5 % of the refined one.
    assert!((top - e).abs() <= 0.005 * e, "{top} vs {e}");
    let z = zip::ZipArchive::new(std::io::Cursor::new(bytes.clone())).unwrap();
    let charts = z
        .file_names()
        .filter(|n| n.as_ref().is_ok_and(|n| n.starts_with("xl/charts/chart")))
        .count();
    // One scan chart per bank bus, and two waveform charts per bank.
    assert!(charts > 2 * plant.banks.len(), "{charts}");
    if !crate::common::external_tool("soffice", "the review printed to PDF") {
        return;
    }
    let dir = temp("pdf");
    let path = dir.join("review.xlsx");
    std::fs::write(&path, &bytes).unwrap();
    let out = crate::common::soffice_to_pdf(&dir, std::slice::from_ref(&path), 600);
    let pdf = dir.join("review.pdf");
    assert!(
        pdf.exists(),
        "no PDF: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    if crate::common::external_tool("pdftotext", "the printed review's text") {
        let txt = dir.join("review.txt");
        crate::common::output_within(Command::new("pdftotext").arg(&pdf).arg(&txt), 120);
        let text = std::fs::read_to_string(&txt).unwrap();
        assert!(
            text.contains("Worst switching event of each bank"),
            "no waveform page"
        );
        assert!(
            text.contains("Formula peak (A)") || text.contains("Formula"),
            "no switching table"
        );
    }
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn duty_remedies_and_input_sheets_read_back() {
    // The food plant (its C1=4 resonates, so remedies are studied): every number of the
    // Duty and Remedies sheets and the Input sheet's capacitor and load rows read back
    // equal to the study's values (calamine, an independent xlsx reader).
    let res = food();
    assert!(!res.remedies.is_empty());
    let bytes = review_bytes(&res, &scan_charts(&res), &prov()).unwrap();
    let mut wb = open_workbook_auto_from_rs(std::io::Cursor::new(bytes)).unwrap();
    let num = |r: &calamine::Range<Data>, row: usize, col: usize| match r.get((row, col)) {
        Some(Data::Float(v)) => *v,
        other => panic!("({row},{col}): {other:?}"),
    };
    let text = |r: &calamine::Range<Data>, row: usize, col: usize| {
        r.get((row, col)).map(|c| c.to_string()).unwrap_or_default()
    };
    let duty = wb.worksheet_range("Duty").unwrap();
    for (i, d) in res.duty.iter().enumerate() {
        let row = i + 1;
        assert_eq!(text(&duty, row, 1), d.configuration);
        assert_eq!(text(&duty, row, 2), d.bank);
        assert_eq!(num(&duty, row, 4), d.ratios.rms_voltage * 100.0);
        assert_eq!(num(&duty, row, 6), d.ratios.peak_voltage * 100.0);
        assert_eq!(num(&duty, row, 8), d.ratios.rms_current * 100.0);
        assert_eq!(num(&duty, row, 10), d.ratios.kvar * 100.0);
        assert_eq!(
            text(&duty, row, 13),
            if d.exceeds { "EXCEEDS" } else { "meets" }
        );
    }
    let rem = wb.worksheet_range("Remedies").unwrap();
    let mut row = 1;
    for br in &res.remedies {
        for x in &br.results {
            assert_eq!(text(&rem, row, 0), br.bank);
            assert_eq!(num(&rem, row, 1), x.rank as f64);
            assert_eq!(text(&rem, row, 2), x.option.name);
            assert_eq!(num(&rem, row, 3), x.option.step.p * 100.0);
            assert_eq!(num(&rem, row, 5), x.option.step.l_mh);
            assert_eq!(num(&rem, row, 9), x.option.step.capacitor_kvar);
            assert_eq!(num(&rem, row, 10), x.option.effective_kvar);
            row += 1;
        }
    }
    // The outcome table below: its header is the second row that starts with "Bank".
    let outcome = rem
        .rows()
        .enumerate()
        .filter(|(_, r)| r.first().map(|c| c.to_string()).as_deref() == Some("Bank"))
        .nth(1)
        .map(|(i, _)| i + 1)
        .expect("outcome table");
    let mut row = outcome;
    for br in &res.remedies {
        for x in &br.results {
            assert_eq!(text(&rem, row, 0), br.bank);
            assert_eq!(text(&rem, row, 2), x.option.name);
            assert_eq!(num(&rem, row, 7), x.after.resonant as f64);
            assert_eq!(num(&rem, row, 8), x.after.limits_exceeded as f64);
            assert_eq!(num(&rem, row, 9), x.after.duty_exceeded as f64);
            assert_eq!(
                text(&rem, row, 14),
                overtone::present::words::remedy_verdict(x)
            );
            row += 1;
        }
    }
    let input = wb.worksheet_range("Input").unwrap();
    let title = |name: &str| {
        input
            .rows()
            .position(|r| r.first().map(|c| c.to_string()).as_deref() == Some(name))
            .unwrap_or_else(|| panic!("no {name} section"))
    };
    let caps = title("Capacitors") + 2;
    for (i, b) in res.plant.banks.iter().enumerate() {
        assert_eq!(text(&input, caps + i, 0), b.id);
        assert_eq!(text(&input, caps + i, 1), b.bus);
        assert_eq!(num(&input, caps + i, 2), b.rated_kv);
        assert_eq!(num(&input, caps + i, 3), b.step_kvar);
        assert_eq!(num(&input, caps + i, 4), f64::from(b.steps));
        assert_eq!(num(&input, caps + i, 11), b.trapped_charge_pu);
    }
    let loads = title("Loads") + 2;
    for (i, l) in res.plant.loads.iter().enumerate() {
        assert_eq!(text(&input, loads + i, 0), l.id);
        assert_eq!(text(&input, loads + i, 1), l.bus);
        assert_eq!(num(&input, loads + i, 3), l.kw);
        assert_eq!(num(&input, loads + i, 4), l.power_factor);
    }
}
