//! Hostile input on the stable toolchain: the libFuzzer targets' bodies
//! (`tests/fuzz/bodies.rs`) over the kept corpus, and proptest mutations of workbook bytes
//! and arbitrary plants; nothing panics, a plant either fails validation with messages or
//! runs to results whose every report is free of non-finite numbers.

use std::path::{Path, PathBuf};

use crate::fuzz_bodies;

use overtone::io::workbook_in::read_workbook_bytes;
use overtone::jobs::check::{CheckOptions, run_check};
use overtone::model::*;
use proptest::prelude::*;

fn case_bytes() -> Vec<u8> {
    std::fs::read(PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("cases/food-plant.xlsx")).unwrap()
}

/// The files of the kept corpus of fuzz target `target`, sorted by name.
fn corpus(target: &str) -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fuzz/corpus")
        .join(target);
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.expect("corpus entry").path())
        .filter(|p| p.is_file())
        .collect();
    files.sort();
    files
}

/// Runs `body` on every corpus file of `target`; a panic names the file (and for the
/// plant target, the plant).
fn replay(target: &str, body: fn(&[u8]), at_least: usize) {
    let files = corpus(target);
    assert!(
        files.len() >= at_least,
        "{target}: {} corpus files, expected at least {at_least}",
        files.len()
    );
    for f in files {
        let bytes = std::fs::read(&f).expect("corpus file");
        if std::panic::catch_unwind(|| body(&bytes)).is_err() {
            let plant = if target == "plant_study" {
                fuzz_bodies::describe_plant(&bytes)
            } else {
                String::new()
            };
            panic!("fuzz target {target} fails on {}\n{plant}", f.display());
        }
    }
}

#[test]
fn reader_corpus_replays_clean() {
    // The seeds: every workbook of cases/ and tests/data/, the malformed workbooks of the
    // reader tests, and what the libFuzzer runs kept.
    replay("read_workbook", fuzz_bodies::read_workbook, 400);
}

#[test]
fn recording_corpus_replays_clean() {
    // The seeds: COMTRADE single files (ASCII, BINARY, FLOAT32) and harmonic logs written
    // by hand, and what the libFuzzer runs kept.
    replay("read_recording", fuzz_bodies::read_recording, 5);
}

#[test]
fn plant_corpus_replays_clean() {
    replay("plant_study", fuzz_bodies::plant_study, 1200);
}

#[test]
fn every_case_reaches_every_report_without_a_non_finite_number() {
    for case in ["bottling-plant", "food-plant", "water-plant", "large-site"] {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join(format!("cases/{case}.xlsx"));
        let read = overtone::io::workbook_in::read_workbook(&path).expect("case reads");
        fuzz_bodies::study_and_report(&read.plant);
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    #[test]
    fn arbitrary_plant_bytes_never_panic(data in proptest::collection::vec(any::<u8>(), 0..600)) {
        fuzz_bodies::plant_study(&data);
    }

    #[test]
    fn mutated_workbooks_never_panic(edits in proptest::collection::vec((any::<usize>(), any::<u8>()), 1..8), cut in any::<usize>()) {
        let mut bytes = case_bytes();
        for (i, b) in edits {
            let i = i % bytes.len();
            bytes[i] = b;
        }
        if cut % 3 == 0 {
            bytes.truncate(cut % bytes.len());
        }
        // Either a plant or an error with a message: never a panic.
        match read_workbook_bytes("m.xlsx", "m", &bytes) {
            Ok(read) => prop_assert!(read.plant.validate().is_ok()),
            Err(e) => prop_assert!(!e.to_string().is_empty()),
        }
    }

    #[test]
    fn arbitrary_plants_fail_cleanly_or_run_finite(
        kv in prop::sample::select(vec![0.0, -1.0, 0.48, 4.16, 13.8, 1e6]),
        mva in prop::sample::select(vec![0.0, 1e-6, 5.0, 250.0, 1e9]),
        xr in prop::sample::select(vec![0.0, 0.1, 10.0, 1e9]),
        z in prop::sample::select(vec![-1.0, 0.5, 5.75, 50.0]),
        kvar in prop::sample::select(vec![0.0, 1e-6, 100.0, 1e9]),
        steps in 0u32..5,
        p in prop::sample::select(vec![0.0, 7.0, 99.0]),
        kw in prop::sample::select(vec![-5.0, 0.0, 50.0, 1e7]),
        pf in prop::sample::select(vec![0.0, 0.5, 1.0, 1.5]),
    ) {
        let mut plant = Plant::new(60.0);
        plant.study.highest_order = 25.0;
        plant.study.scan_step_order = 0.05;
        plant.buses = vec![
            Bus { id: "HV".into(), nominal_kv: 13.8, description: String::new(), neutral_rating_a: None },
            Bus { id: "LV".into(), nominal_kv: kv, description: String::new(), neutral_rating_a: None },
        ];
        plant.sources = vec![Source { id: "U".into(), bus: "HV".into(), scenario: None, short_circuit: ShortCircuit::Mva(mva), x_over_r: xr, voltage_pu: 1.0, zero_short_circuit_mva: None, zero_x_over_r: None, kind: SourceKind::Utility }];
        plant.transformers = vec![Transformer { id: "T".into(), hv_bus: "HV".into(), lv_bus: "LV".into(), kva: 1000.0, impedance_percent: z, x_over_r: 6.0, in_service: true, connection: None, zero_impedance_percent: None }];
        plant.banks = vec![CapacitorBank {
            id: "C".into(), bus: "LV".into(), rated_kv: kv.abs().max(0.1), step_kvar: kvar, steps,
            reactor: if p > 0.0 { Reactor::Detuning { percent: p } } else { Reactor::None },
            reactor_q: 50.0, status: BankStatus::Proposed, studied_steps: (0..=steps).collect(), inrush_uh: None, connection: None, trapped_charge_pu: 0.0, inrush_limit_ka: None,
        }];
        plant.loads = vec![Load { id: "D".into(), bus: "LV".into(), kind: LoadType::SixPulseDrive, kw, power_factor: pf, quantity: 1.0, load_factor: 1.0, spectrum: None, wiring: None }];
        match run_check(&plant, &CheckOptions { remedies: Some(true), ..Default::default() }) {
            Err(e) => prop_assert!(!e.to_string().is_empty()),
            Ok(res) => {
                for d in &res.penetration.results {
                    prop_assert!(d.thd_percent.iter().all(|v| v.is_finite()));
                }
                for r in &res.resonance.rows {
                    prop_assert!(r.hand_order.is_finite());
                }
                prop_assert!(res.limit_rows.iter().all(|r| r.tdd.value.is_finite()));
            }
        }
    }
}
