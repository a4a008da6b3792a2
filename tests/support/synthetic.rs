//! Generated plants for tests and benchmarks: radial or lightly meshed feeders of any size,
//! from a seed. Invented data.

// Each benchmark uses a part of these generators.
#![allow(dead_code)]
use overtone::model::*;

fn bus(id: &str, kv: f64) -> Bus {
    Bus {
        id: id.into(),
        nominal_kv: kv,
        description: String::new(),
        neutral_rating_a: None,
    }
}

fn load(id: &str, bus: &str, kind: LoadType, kw: f64) -> Load {
    Load {
        id: id.into(),
        bus: bus.into(),
        kind,
        kw,
        power_factor: 0.85,
        quantity: 1.0,
        load_factor: 1.0,
        spectrum: None,
        wiring: None,
    }
}

/// A small deterministic generator (64-bit LCG, Knuth's MMIX constants) for test networks.
pub struct Lcg(pub u64);

impl Lcg {
    pub fn next_f64(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
    pub fn below(&mut self, n: usize) -> usize {
        ((self.next_f64() * n as f64) as usize).min(n - 1)
    }
}

/// A generated plant: a 13.8 kV radial (or meshed, with `extra_links` cross cables) feeder
/// tree of `n` buses, every fourth bus with a transformer to its own 0.48 kV bus, linear
/// loads and motors everywhere, and `banks` plain or detuned banks of `steps` steps on the LV
/// buses.
pub fn generated_plant(n: usize, extra_links: usize, banks: usize, steps: u32, seed: u64) -> Plant {
    let mut rng = Lcg(seed);
    let mut p = Plant::new(60.0);
    p.buses.push(bus("B0", 13.8));
    p.sources.push(Source {
        id: "U".into(),
        bus: "B0".into(),
        scenario: None,
        short_circuit: ShortCircuit::Mva(300.0),
        x_over_r: 12.0,
        voltage_pu: DEFAULT_SOURCE_VOLTAGE_PU,
        zero_short_circuit_mva: None,
        zero_x_over_r: None,
        kind: SourceKind::Utility,
    });
    let mut mv = vec![0usize];
    let mut lv = Vec::new();
    let mut i = 1;
    // Loads sized so that the whole plant draws about 15 MW whatever its size (a
    // realistic load for the 300 MVA service, so the operating point has a solution).
    let scale = (300.0 / n.max(1) as f64).min(1.0);
    while p.buses.len() < n {
        let id = format!("B{i}");
        if i % 4 == 0 {
            let parent = mv[rng.below(mv.len())];
            p.buses.push(bus(&id, 0.48));
            p.transformers.push(Transformer {
                id: format!("T{i}"),
                hv_bus: format!("B{parent}"),
                lv_bus: id.clone(),
                kva: 500.0 + 2000.0 * rng.next_f64(),
                impedance_percent: 4.0 + 3.0 * rng.next_f64(),
                x_over_r: 5.0 + 5.0 * rng.next_f64(),
                in_service: true,
                connection: None,
                zero_impedance_percent: None,
            });
            lv.push(i);
        } else {
            let parent = mv[rng.below(mv.len())];
            p.buses.push(bus(&id, 13.8));
            p.cables.push(cable(
                format!("K{i}"),
                format!("B{parent}"),
                id.clone(),
                50.0 + 500.0 * rng.next_f64(),
            ));
            mv.push(i);
        }
        p.loads.push(load(
            &format!("L{i}"),
            &id,
            LoadType::Linear,
            (10.0 + 40.0 * rng.next_f64()) * scale,
        ));
        if i % 3 == 0 {
            p.loads.push(load(
                &format!("M{i}"),
                &id,
                LoadType::Motor,
                (20.0 + 60.0 * rng.next_f64()) * scale,
            ));
        }
        i += 1;
    }
    for e in 0..extra_links {
        let a = mv[rng.below(mv.len())];
        let b = mv[rng.below(mv.len())];
        if a != b {
            p.cables.push(cable(
                format!("X{e}"),
                format!("B{a}"),
                format!("B{b}"),
                300.0,
            ));
        }
    }
    for k in 0..banks {
        let at = if lv.is_empty() { 0 } else { lv[k % lv.len()] };
        let kv = p.buses[at].nominal_kv;
        let reactor = if k % 2 == 0 {
            Reactor::None
        } else {
            Reactor::Detuning { percent: 7.0 }
        };
        p.banks.push(CapacitorBank {
            id: format!("C{k}"),
            bus: format!("B{at}"),
            rated_kv: kv,
            step_kvar: 50.0 + 100.0 * rng.next_f64(),
            steps,
            reactor,
            reactor_q: 50.0,
            status: BankStatus::Proposed,
            studied_steps: (0..=steps).collect(),
            inrush_uh: None,
            trapped_charge_pu: 0.0,
            inrush_limit_ka: None,
            connection: None,
        });
    }
    p
}

fn cable(id: String, from: String, to: String, length_m: f64) -> Cable {
    Cable {
        id,
        from_bus: from,
        to_bus: to,
        length_m,
        r_ohm_per_km: 0.2,
        x_ohm_per_km: 0.1,
        c_uf_per_km: 0.25,
        runs: 1,
        r0_ohm_per_km: None,
        x0_ohm_per_km: None,
    }
}

/// Gives `plant` two supply scenarios at its first source's bus: `max` (the source as it is)
/// and `min` (a third of its fault level, lower X/R).
pub fn with_two_scenarios(mut plant: Plant) -> Plant {
    if let Some(first) = plant.sources.first().cloned() {
        let weaker = match first.short_circuit {
            ShortCircuit::Mva(m) => ShortCircuit::Mva(m / 3.0),
            ShortCircuit::Ka(k) => ShortCircuit::Ka(k / 3.0),
        };
        plant.sources = vec![
            Source {
                id: format!("{}-MAX", first.id),
                scenario: Some("max".into()),
                ..first.clone()
            },
            Source {
                id: format!("{}-MIN", first.id),
                scenario: Some("min".into()),
                short_circuit: weaker,
                x_over_r: first.x_over_r * 0.7,
                ..first
            },
        ];
    }
    plant
}

/// Gives `plant` converters on about two thirds of its buses (every bus whose index is not
/// a multiple of 3): one custom-spectrum drive of 20–60 kW each (scaled like the loads), with
/// a 51-order spectrum of characteristic, even and interharmonic orders (invented). The
/// shape of a large site where every MCC has drives.
pub fn with_converters(mut plant: Plant, seed: u64) -> Plant {
    let mut rng = Lcg(seed ^ 0x5eed);
    let mut lines = Vec::new();
    let mut add = |order: f64, m: f64| {
        lines.push(SpectrumLine {
            order,
            magnitude_percent: m,
            angle_deg: Some(0.0),
        });
    };
    let mut k = 1.0;
    while 6.0 * k - 1.0 <= 49.0 {
        add(6.0 * k - 1.0, 60.0 / (6.0 * k - 1.0));
        if 6.0 * k + 1.0 <= 49.0 {
            add(6.0 * k + 1.0, 40.0 / (6.0 * k + 1.0));
        }
        k += 1.0;
    }
    for h in (2..=50).step_by(2) {
        add(f64::from(h), 2.0 / f64::from(h).sqrt());
    }
    for i in 0..10 {
        add(1.5 + f64::from(i), 0.8);
    }
    plant.spectra.push(Spectrum {
        name: "VFD-51".into(),
        lines,
    });
    let n = plant.buses.len();
    let scale = (300.0 / n.max(1) as f64).min(1.0);
    let ids: Vec<String> = plant.buses.iter().map(|b| b.id.clone()).collect();
    for (i, id) in ids.iter().enumerate().filter(|(i, _)| i % 3 != 0) {
        plant.loads.push(Load {
            id: format!("VFD{i}"),
            bus: id.clone(),
            kind: LoadType::Custom,
            kw: (20.0 + 40.0 * rng.next_f64()) * scale,
            power_factor: 0.95,
            quantity: 1.0,
            load_factor: 1.0,
            spectrum: Some("VFD-51".into()),
            wiring: None,
        });
    }
    plant
}
