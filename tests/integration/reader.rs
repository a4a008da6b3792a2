//! The workbook reader: the contract examples against an independent circuit simulator,
//! .ods against .xlsx, and the template (malformed workbooks: `malformed`).

use std::io::Read;
use std::path::{Path, PathBuf};

use overtone::io::template::{plant_workbook, template_bytes};
use overtone::io::workbook_in::{read_workbook, read_workbook_bytes};
use overtone::jobs::check::{CheckOptions, run_check};
use overtone::jobs::exports::{BusTable, ScanTable, selection};
use overtone::model::Sequence;
use overtone::present::csv::write_scan_csv;

fn data(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data")
        .join(name)
}

/// Parses a scan CSV into rows of (key fields, z_ohm, angle_deg).
fn scan_rows(text: &str) -> Vec<(String, f64, f64)> {
    text.lines()
        .skip(1)
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            (
                f[..5].join(","),
                f[5].parse().unwrap(),
                f[6].parse().unwrap(),
            )
        })
        .collect()
}

fn contract_example(plant: &str, buses: &[&str], configurations: &[&str]) {
    let mut read = read_workbook(&data(&format!("{plant}.xlsx"))).expect("contract example reads");
    // The circuit simulator's netlists model R constant and linear loads as parallel R-L,
    // the Study sheet's `constant` and `parallel R-L` (the defaults add damping).
    read.plant.study.resistance_model = overtone::model::ResistanceModel::Constant;
    read.plant.study.load_model = overtone::model::LoadModel::ParallelRl;
    let buses: Vec<String> = buses.iter().map(|s| s.to_string()).collect();
    let configs: Vec<String> = configurations.iter().map(|s| s.to_string()).collect();
    let res = run_check(
        &read.plant,
        &CheckOptions {
            buses: buses.clone(),
            configurations: configs.clone(),
            ..Default::default()
        },
    )
    .expect("runs");
    let sel = selection(&res, &buses, &configs).expect("selection");
    let mut out = Vec::new();
    let table = ScanTable::new(&res, &sel);
    write_scan_csv(&mut out, &res, table.curves(&res)).unwrap();
    let got = scan_rows(&String::from_utf8(out).unwrap());
    let expected_text = std::fs::read_to_string(data(&format!("{plant}.scan.csv"))).unwrap();
    let expected = scan_rows(&expected_text);
    assert_eq!(got.len(), expected.len());
    for (g, e) in got.iter().zip(&expected) {
        // Same rows in the same order: scenario, configuration, bus, order, frequency.
        assert_eq!(g.0, e.0);
        // reference values: ngspice 39 AC analysis of the equivalent circuit
        // (../shared/contract-examples), |Z| to 1e-9 relative, angle to 1e-7 degree.
        assert!(
            (g.1 - e.1).abs() <= 1e-9 * e.1,
            "{}: |Z| {} vs {}",
            g.0,
            g.1,
            e.1
        );
        assert!(
            (g.2 - e.2).abs() <= 1e-7,
            "{}: angle {} vs {}",
            g.0,
            g.2,
            e.2
        );
    }
}

#[test]
fn contract_example_plant_12_matches_circuit_simulator() {
    contract_example(
        "plant-12",
        &["B1", "B7", "B2"],
        &["C1=3 C2=1 C3=1", "C1=1 C2=0 C3=1", "none"],
    );
}

#[test]
fn contract_example_plant_13_matches_circuit_simulator() {
    contract_example(
        "plant-13",
        &["B1", "B2"],
        &["C1=3 C2=1", "C1=1 C2=0", "none"],
    );
}

#[test]
fn ods_copy_reads_the_same_as_xlsx() {
    // tests/data/water-plant.ods: cases/water-plant.xlsx of contract version 1 saved as .ods
    // by a spreadsheet program. It reads as the current case with the version 2 items at
    // their defaults (input contract: a version 1 workbook reads unchanged).
    let xlsx = read_workbook(&Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/water-plant.xlsx"))
        .unwrap();
    let ods = read_workbook(&data("water-plant.ods")).unwrap();
    let mut expected = xlsx.plant.clone();
    for s in &mut expected.sources {
        s.voltage_pu = overtone::model::DEFAULT_SOURCE_VOLTAGE_PU;
    }
    expected.study.target_power_factor = overtone::model::DEFAULT_TARGET_POWER_FACTOR;
    // The sequence model's inputs: no background; connections at the defaults (the case
    // names the defaults, Dyn1 at 60 Hz and a delta / wye bank by bus kV).
    expected.background.clear();
    // The switching simulation's columns: at their defaults.
    for b in &mut expected.banks {
        b.trapped_charge_pu = 0.0;
        b.inrush_limit_ka = None;
    }
    // The .ods names `constant`, the case's resistance model when it was saved; its
    // `Load model` (added later) reads at the default.
    expected.study.resistance_model = overtone::model::ResistanceModel::Constant;
    assert_eq!(ods.plant, expected);
    assert!(
        ods.warnings.iter().any(|w| w.to_string()
            == "Sources: no \"Voltage (pu)\" column: default 1.0 applied (rows 2, 3)"),
        "{:?}",
        ods.warnings
    );
}

fn headers(bytes: &[u8]) -> Vec<(String, Vec<String>)> {
    use calamine::{Reader, open_workbook_auto_from_rs};
    let mut wb = open_workbook_auto_from_rs(std::io::Cursor::new(bytes.to_vec())).unwrap();
    let names = wb.sheet_names();
    names
        .into_iter()
        .map(|n| {
            let r = wb.worksheet_range(&n).unwrap();
            let row: Vec<String> = r
                .rows()
                .next()
                .map_or_else(Vec::new, |h| h.iter().map(|c| c.to_string()).collect());
            (n, row)
        })
        .collect()
}

fn sheet_xml(bytes: &[u8], index: usize) -> String {
    let mut z = zip::ZipArchive::new(std::io::Cursor::new(bytes.to_vec())).unwrap();
    let mut s = String::new();
    z.by_name(&format!("xl/worksheets/sheet{index}.xml"))
        .unwrap()
        .read_to_string(&mut s)
        .unwrap();
    s
}

#[test]
fn template_has_every_sheet_header_note_and_dropdown() {
    let t = template_bytes().unwrap();
    let h = headers(&t);
    let names: Vec<&str> = h.iter().map(|(n, _)| n.as_str()).collect();
    assert_eq!(
        names,
        [
            "Study",
            "Buses",
            "Sources",
            "Transformers",
            "Cables",
            "Capacitors",
            "Loads",
            "Spectra",
            "Background",
            "Design",
            "Load levels"
        ]
    );
    // The design section: where a bank may go and the load levels.
    assert_eq!(h[9].1[..4], ["Bus", "Step kvar", "Steps", "Detuning"]);
    assert_eq!(h[10].1, ["Level", "Hours per year", "Load", "Load factor"]);
    // Version 2: the sequence model's columns (input contract, version 2).
    assert_eq!(h[3].1[7..], ["Connection", "Zero-sequence impedance (%)"]);
    assert_eq!(h[8].1, ["Source", "Order", "Voltage (%)", "Angle (deg)"]);
    assert_eq!(
        h[5].1,
        [
            "Bank",
            "Bus",
            "Rated kV",
            "Step kvar",
            "Steps",
            "Detuning (%)",
            "Tuned order",
            "Reactor Q",
            "Status",
            "Studied steps",
            "Inrush inductance (uH)",
            "Connection",
            // Version 2: the switching simulation's columns.
            "Trapped charge (pu)",
            "Switch inrush limit (kA)"
        ]
    );
    // Loads: the Type dropdown lists every load type of the contract.
    let loads = sheet_xml(&t, 7);
    assert!(loads.contains("<dataValidation type=\"list\""), "{loads}");
    assert!(loads.contains("6-pulse drive with reactor"));
    assert!(loads.contains("<pane ySplit=\"1\""), "frozen header row");
    // Every header cell has a note: one comment file per sheet.
    let z = zip::ZipArchive::new(std::io::Cursor::new(t.clone())).unwrap();
    let comments = z
        .file_names()
        .filter(|n| n.as_ref().is_ok_and(|n| n.starts_with("xl/comments")))
        .count();
    assert_eq!(comments, 11);
    // A blank template is not a plant yet: it says what is missing.
    let err = read_workbook_bytes("t.xlsx", "t", &t)
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("Study!B5: \"Frequency (Hz)\" must be 50 or 60, found a blank cell"),
        "{err}"
    );
}

#[test]
fn filled_template_reads_back_the_same_plant() {
    // A plant's workbook is the template with rows filled in: same sheets, same headers.
    let plant = overtone::demo::demo_plant().unwrap();
    let filled = plant_workbook(&plant).unwrap();
    assert_eq!(headers(&filled), headers(&template_bytes().unwrap()));
    let back = read_workbook_bytes("filled.xlsx", "filled", &filled).unwrap();
    assert_eq!(back.plant, plant);
}

fn voltages_example(plant: &str, configurations: &[&str]) {
    let mut read = read_workbook(&data(&format!("{plant}.xlsx"))).expect("contract example reads");
    // The circuit simulator's netlists model R constant and linear loads as parallel R-L,
    // the Study sheet's `constant` and `parallel R-L` (the defaults add damping).
    read.plant.study.resistance_model = overtone::model::ResistanceModel::Constant;
    read.plant.study.load_model = overtone::model::LoadModel::ParallelRl;
    let configs: Vec<String> = configurations.iter().map(|s| s.to_string()).collect();
    let res = run_check(
        &read.plant,
        &CheckOptions {
            configurations: configs.clone(),
            ..Default::default()
        },
    )
    .expect("runs");
    let sel = selection(&res, &[], &configs).expect("selection");
    let mut out = Vec::new();
    let t = BusTable::new(&res, &sel);
    overtone::present::csv::write_voltages_csv(&mut out, &res, &t.buses, t.voltages(&res)).unwrap();
    let got = String::from_utf8(out).unwrap();
    let expected = std::fs::read_to_string(data(&format!("{plant}.voltages.csv"))).unwrap();
    assert_eq!(got.lines().count(), expected.lines().count());
    let mut compared = 0;
    for (g, e) in got.lines().zip(expected.lines()).skip(1) {
        let (g, e): (Vec<&str>, Vec<&str>) = (g.split(',').collect(), e.split(',').collect());
        assert_eq!(g[..4], e[..4]);
        // The simulated circuit is the positive-sequence one (input contract, version 1);
        // version 2 solves triplen orders in the zero-sequence network instead, so only
        // positive- and negative-sequence orders are compared.
        let order: f64 = g[3].parse().unwrap();
        if Sequence::of(order) == Sequence::Zero {
            continue;
        }
        compared += 1;
        for k in [4, 5] {
            let (a, b): (f64, f64) = (g[k].parse().unwrap(), e[k].parse().unwrap());
            // reference values: ngspice 39 AC analysis of the equivalent circuit, arithmetic
            // summation (../shared/contract-examples), to 1e-9 relative.
            assert!((a - b).abs() <= 1e-9 * b.abs(), "{g:?} vs {e:?}");
        }
    }
    assert!(compared > 10, "{compared} rows compared");
}

#[test]
fn contract_example_voltages_match_circuit_simulator() {
    voltages_example("plant-12", &["C1=3 C2=1 C3=1", "C1=1 C2=0 C3=1", "none"]);
    voltages_example("plant-13", &["C1=3 C2=1", "C1=1 C2=0", "none"]);
}
