//! Validation: every problem reported at once, each naming the element and field.

use overtone::model::*;
use overtone::network::{Network, TopologyError};

use crate::common::*;

fn small() -> Plant {
    let mut p = Plant::new(60.0);
    p.buses = vec![bus("HV", 13.8), bus("LV", 0.48), bus("LV2", 0.48)];
    p.sources = vec![source("U", "HV", 200.0, 10.0)];
    p.transformers = vec![transformer("T1", "HV", "LV", 1000.0, 5.75, 6.0)];
    p.cables = vec![cable("K1", "LV", "LV2", 30.0)];
    p.banks = vec![bank("C1", "LV", 0.48, 100.0, 3, Reactor::None)];
    p
}

fn messages(p: &Plant) -> Vec<String> {
    match p.validate() {
        Ok(()) => Vec::new(),
        Err(e) => e.0.iter().map(|m| m.to_string()).collect(),
    }
}

#[test]
fn valid_plant_passes() {
    assert_eq!(messages(&small()), Vec::<String>::new());
    assert!(
        overtone::demo::demo_plant()
            .expect("demo reads")
            .validate()
            .is_ok()
    );
}

#[test]
fn every_problem_at_once() {
    let mut p = small();
    p.buses.push(bus("LV", 0.48)); // duplicate id
    p.banks[0].bus = "NOWHERE".into(); // unknown bus
    p.cables[0].to_bus = "HV".into(); // different kV
    p.transformers
        .push(transformer("T2", "LV", "LV2", 500.0, 5.0, 5.0)); // same kV
    p.transformers[0].kva = -3.0; // non-positive rating
    p.banks[0].step_kvar = 0.0;
    let m = messages(&p);
    let expected = [
        "Buses \"LV\", \"Bus\": duplicate id \"LV\"",
        "Transformers \"T1\", \"kVA\": must be a positive number, found -3",
        "Transformers \"T2\", \"LV bus\": connects two buses of the same nominal kV (0.48 kV): use a cable",
        "Cables \"K1\", \"To bus\": connects buses of different nominal kV (0.48 and 13.8 kV): use a transformer",
        "Capacitors \"C1\", \"Bus\": bus \"NOWHERE\" does not exist",
        "Capacitors \"C1\", \"Step kvar\": must be a positive number, found 0",
    ];
    for e in expected {
        assert!(m.iter().any(|x| x == e), "missing {e:?} in {m:#?}");
    }
    assert_eq!(m.len(), expected.len(), "{m:#?}");
}

#[test]
fn spectrum_rules() {
    let mut p = small();
    let mut l = load("D1", "LV", LoadType::Custom, 50.0, 0.95);
    p.loads.push(l.clone());
    l.id = "M1".into();
    l.kind = LoadType::Motor;
    l.spectrum = Some("S".into());
    p.loads.push(l);
    let m = messages(&p);
    assert!(
        m.contains(
            &"Loads \"D1\", \"Spectrum\": a custom load needs a spectrum from the Spectra sheet"
                .to_string()
        ),
        "{m:?}"
    );
    assert!(
        m.contains(
            &"Loads \"M1\", \"Spectrum\": a motor load injects no harmonics and takes no spectrum"
                .to_string()
        ),
        "{m:?}"
    );
}

#[test]
fn studied_steps_beyond_the_bank() {
    let mut p = small();
    p.banks[0].studied_steps = vec![0, 2, 5];
    assert_eq!(
        messages(&p),
        vec![
            "Capacitors \"C1\", \"Studied steps\": step count 5 exceeds the bank's 3 steps"
                .to_string()
        ]
    );
}

#[test]
fn isolated_buses_are_named() {
    let mut p = small();
    p.buses.push(bus("FAR", 0.48));
    p.buses.push(bus("FAR2", 0.48));
    p.cables.push(cable("K9", "FAR", "FAR2", 10.0));
    p.validate().expect("valid data, bad topology");
    let err = Network::build(&p).expect_err("isolated");
    assert_eq!(
        err,
        TopologyError::Isolated {
            scenario: "base".into(),
            buses: vec!["FAR".into(), "FAR2".into()],
        }
    );
    assert_eq!(
        err.to_string(),
        "scenario \"base\": bus(es) \"FAR\", \"FAR2\" reach no source in service (check the Sources, Transformers and Cables sheets)"
    );
}

#[test]
fn transformer_out_of_service_isolates_per_scenario() {
    let mut p = small();
    p.sources[0].scenario = Some("max".into());
    p.transformers[0].in_service = false;
    let err = Network::build(&p).expect_err("isolated");
    assert!(
        matches!(err, TopologyError::Isolated { ref scenario, ref buses } if scenario == "max" && buses == &["LV", "LV2"]),
        "{err}"
    );
}

#[test]
fn scenarios_and_blank_rows() {
    let mut p = small();
    p.sources[0].scenario = Some("max".into());
    p.sources.push(Source {
        scenario: Some("min".into()),
        id: "U2".into(),
        ..p.sources[0].clone()
    });
    p.sources.push(Source {
        scenario: None,
        id: "G".into(),
        short_circuit: ShortCircuit::Ka(5.0),
        ..p.sources[0].clone()
    });
    assert_eq!(p.scenarios(), vec!["max".to_string(), "min".to_string()]);
    let ids: Vec<&str> = p.sources_in("min").map(|s| s.id.as_str()).collect();
    assert_eq!(ids, vec!["U2", "G"]);
    // input contract: S = √3 × kV × kA.
    assert!((p.sources[2].short_circuit_mva(13.8) - 3f64.sqrt() * 13.8 * 5.0).abs() < 1e-12);
}

/// Fuzz finding (tests/fuzz/corpus/plant_study/regression-subnormal-kv-isc-inf): a subnormal bus voltage
/// passed as "positive" and the fault current at the bus overflowed to infinity. Magnitudes
/// outside 1e-9 .. 1e12 are refused, each naming the element and field.
#[test]
fn magnitudes_outside_the_computable_range_are_refused() {
    let mut p = small();
    p.buses[1].nominal_kv = 2.482817965885e-312;
    p.banks[0].step_kvar = 1e13;
    p.cables[0].c_uf_per_km = 5e-324;
    let m = messages(&p);
    for expected in [
        "Buses \"LV\", \"Nominal kV\": must be between 1e-9 and 1e12 (the range the studies compute in), found 2.482817965885e-312",
        "Capacitors \"C1\", \"Step kvar\": must be between 1e-9 and 1e12 (the range the studies compute in), found 1e13",
        "Cables \"K1\", \"C\": must be between 1e-9 and 1e12 (the range the studies compute in), found 5e-324",
    ] {
        assert!(m.iter().any(|x| x == expected), "missing {expected}: {m:?}");
    }
    // The edges themselves are accepted (degenerate::* studies 1e-6 and 1e9 kvar steps).
    let mut p = small();
    p.banks[0].step_kvar = 1e12;
    p.cables[0].c_uf_per_km = 1e-9;
    assert_eq!(messages(&p), Vec::<String>::new());
}
