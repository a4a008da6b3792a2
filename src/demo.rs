//! The built-in demo plant. Invented: no real plant, company or person.
//!
//! A bottling plant fed at 13.8 kV with two supply scenarios (`max` and `min` utility fault
//! level), main switchgear feeding two 480 V unit substations over short cables. Substation 1
//! carries filler and conveyor drives and a proposed 5 × 200 kvar plain bank whose upper steps
//! land near the 5th and 7th harmonics; substation 2 has an existing 7 % detuned bank.

use crate::model::*;

fn bus(id: &str, kv: f64, description: &str) -> Bus {
    Bus {
        id: id.into(),
        nominal_kv: kv,
        description: description.into(),
    }
}

#[allow(clippy::too_many_arguments)]
fn load(id: &str, bus: &str, kind: LoadType, kw: f64, pf: f64, qty: f64, lf: f64) -> Load {
    Load {
        id: id.into(),
        bus: bus.into(),
        kind,
        kw,
        power_factor: pf,
        quantity: qty,
        load_factor: lf,
        spectrum: None,
    }
}

/// The demo plant, valid by construction.
pub fn demo_plant() -> Plant {
    let mut p = Plant::new(60.0);
    p.study.title = "Demo: bottling plant capacitor bank review".into();
    p.study.plant = "Invented bottling plant (demo data)".into();
    p.study.prepared_by = "overtone demo".into();
    p.study.pcc_bus = Some("MAIN".into());
    p.study.scan_step_order = 0.01;
    p.buses = vec![
        bus("MAIN", 13.8, "13.8 kV main switchgear (PCC)"),
        bus("T1-HV", 13.8, "unit substation 1, primary"),
        bus("T2-HV", 13.8, "unit substation 2, primary"),
        bus(
            "LV1",
            0.48,
            "unit substation 1, 480 V: filling and conveyors",
        ),
        bus(
            "LV2",
            0.48,
            "unit substation 2, 480 V: utilities and packaging",
        ),
    ];
    p.sources = vec![
        Source {
            id: "UTIL-MAX".into(),
            bus: "MAIN".into(),
            scenario: Some("max".into()),
            short_circuit: ShortCircuit::Mva(250.0),
            x_over_r: 15.0,
        },
        Source {
            id: "UTIL-MIN".into(),
            bus: "MAIN".into(),
            scenario: Some("min".into()),
            short_circuit: ShortCircuit::Mva(90.0),
            x_over_r: 10.0,
        },
    ];
    p.transformers = vec![
        Transformer {
            id: "T1".into(),
            hv_bus: "T1-HV".into(),
            lv_bus: "LV1".into(),
            kva: 2000.0,
            impedance_percent: 5.75,
            x_over_r: 8.0,
            in_service: true,
        },
        Transformer {
            id: "T2".into(),
            hv_bus: "T2-HV".into(),
            lv_bus: "LV2".into(),
            kva: 1500.0,
            impedance_percent: 5.5,
            x_over_r: 7.0,
            in_service: true,
        },
    ];
    p.cables = vec![
        Cable {
            id: "K1".into(),
            from_bus: "MAIN".into(),
            to_bus: "T1-HV".into(),
            length_m: 250.0,
            r_ohm_per_km: 0.16,
            x_ohm_per_km: 0.12,
            c_uf_per_km: 0.30,
            runs: 1,
        },
        Cable {
            id: "K2".into(),
            from_bus: "MAIN".into(),
            to_bus: "T2-HV".into(),
            length_m: 400.0,
            r_ohm_per_km: 0.16,
            x_ohm_per_km: 0.12,
            c_uf_per_km: 0.30,
            runs: 1,
        },
    ];
    p.banks = vec![
        CapacitorBank {
            id: "C1".into(),
            bus: "LV1".into(),
            rated_kv: 0.48,
            step_kvar: 200.0,
            steps: 5,
            reactor: Reactor::None,
            reactor_q: 50.0,
            status: BankStatus::Proposed,
            studied_steps: (0..=5).collect(),
        },
        CapacitorBank {
            id: "C2".into(),
            bus: "LV2".into(),
            rated_kv: 0.525,
            step_kvar: 100.0,
            steps: 3,
            reactor: Reactor::Detuning { percent: 7.0 },
            reactor_q: 50.0,
            status: BankStatus::Existing,
            studied_steps: (0..=3).collect(),
        },
    ];
    use LoadType::*;
    p.loads = vec![
        load("FILLER-VFD", "LV1", SixPulseDrive, 75.0, 0.95, 4.0, 0.8),
        load("CONV-VFD", "LV1", SixPulseDrive, 22.0, 0.95, 6.0, 0.7),
        load("LV1-MOTORS", "LV1", Motor, 400.0, 0.85, 1.0, 0.8),
        load("LV1-HEAT", "LV1", Linear, 300.0, 0.95, 1.0, 0.9),
        load(
            "CHILLER-VFD",
            "LV2",
            SixPulseDriveWithReactor,
            150.0,
            0.95,
            2.0,
            0.8,
        ),
        load("LV2-MOTORS", "LV2", Motor, 300.0, 0.85, 1.0, 0.8),
        load("LV2-LIGHT", "LV2", Linear, 200.0, 0.9, 1.0, 1.0),
    ];
    p
}
