//! Hostile input on the stable toolchain (a proptest harness standing in for libFuzzer,
//! which needs nightly): mutated workbook bytes and arbitrary plants never panic; a plant
//! either fails validation with messages or runs to finite results.

use std::path::PathBuf;

use overtone::check::{CheckOptions, run_check};
use overtone::io::workbook_in::read_workbook_bytes;
use overtone::model::*;
use proptest::prelude::*;

fn case_bytes() -> Vec<u8> {
    std::fs::read(PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("cases/food-plant.xlsx")).unwrap()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

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
            Bus { id: "HV".into(), nominal_kv: 13.8, description: String::new() },
            Bus { id: "LV".into(), nominal_kv: kv, description: String::new() },
        ];
        plant.sources = vec![Source { id: "U".into(), bus: "HV".into(), scenario: None, short_circuit: ShortCircuit::Mva(mva), x_over_r: xr }];
        plant.transformers = vec![Transformer { id: "T".into(), hv_bus: "HV".into(), lv_bus: "LV".into(), kva: 1000.0, impedance_percent: z, x_over_r: 6.0, in_service: true }];
        plant.banks = vec![CapacitorBank {
            id: "C".into(), bus: "LV".into(), rated_kv: kv.abs().max(0.1), step_kvar: kvar, steps,
            reactor: if p > 0.0 { Reactor::Detuning { percent: p } } else { Reactor::None },
            reactor_q: 50.0, status: BankStatus::Proposed, studied_steps: (0..=steps).collect(), inrush_uh: None,
        }];
        plant.loads = vec![Load { id: "D".into(), bus: "LV".into(), kind: LoadType::SixPulseDrive, kw, power_factor: pf, quantity: 1.0, load_factor: 1.0, spectrum: None }];
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
