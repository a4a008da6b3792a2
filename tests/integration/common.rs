//! Helpers shared by the tests: plant builders and a relative-tolerance assertion.

use overtone::model::*;

/// Asserts |got − expected| ≤ rel·|expected| (or ≤ rel when expected is 0).
#[track_caller]
pub fn assert_close(got: f64, expected: f64, rel: f64) {
    let tol = rel * expected.abs().max(f64::MIN_POSITIVE);
    assert!(
        (got - expected).abs() <= tol || (expected == 0.0 && got.abs() <= rel),
        "got {got}, expected {expected} (relative tolerance {rel})"
    );
}

pub fn bus(id: &str, kv: f64) -> Bus {
    Bus {
        id: id.into(),
        nominal_kv: kv,
        description: String::new(),
    }
}

pub fn source(id: &str, bus: &str, mva: f64, x_over_r: f64) -> Source {
    Source {
        id: id.into(),
        bus: bus.into(),
        scenario: None,
        short_circuit: ShortCircuit::Mva(mva),
        x_over_r,
    }
}

pub fn transformer(
    id: &str,
    hv: &str,
    lv: &str,
    kva: f64,
    z_percent: f64,
    x_over_r: f64,
) -> Transformer {
    Transformer {
        id: id.into(),
        hv_bus: hv.into(),
        lv_bus: lv.into(),
        kva,
        impedance_percent: z_percent,
        x_over_r,
        in_service: true,
    }
}

pub fn cable(id: &str, from: &str, to: &str, length_m: f64) -> Cable {
    Cable {
        id: id.into(),
        from_bus: from.into(),
        to_bus: to.into(),
        length_m,
        r_ohm_per_km: 0.2,
        x_ohm_per_km: 0.1,
        c_uf_per_km: 0.25,
        runs: 1,
    }
}

pub fn bank(
    id: &str,
    bus: &str,
    rated_kv: f64,
    step_kvar: f64,
    steps: u32,
    reactor: Reactor,
) -> CapacitorBank {
    CapacitorBank {
        id: id.into(),
        bus: bus.into(),
        rated_kv,
        step_kvar,
        steps,
        reactor,
        reactor_q: 50.0,
        status: BankStatus::Proposed,
        studied_steps: (0..=steps).collect(),
    }
}

pub fn load(id: &str, bus: &str, kind: LoadType, kw: f64, pf: f64) -> Load {
    Load {
        id: id.into(),
        bus: bus.into(),
        kind,
        kw,
        power_factor: pf,
        quantity: 1.0,
        load_factor: 1.0,
        spectrum: None,
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
/// loads and motors everywhere, and `banks` plain or detuned banks on the LV buses.
pub fn generated_plant(n: usize, extra_links: usize, banks: usize, seed: u64) -> Plant {
    let mut rng = Lcg(seed);
    let mut p = Plant::new(60.0);
    p.buses.push(bus("B0", 13.8));
    p.sources.push(source("U", "B0", 300.0, 12.0));
    let mut mv = vec![0usize];
    let mut lv = Vec::new();
    let mut i = 1;
    while p.buses.len() < n {
        let id = format!("B{i}");
        if i % 4 == 0 {
            let parent = mv[rng.below(mv.len())];
            p.buses.push(bus(&id, 0.48));
            p.transformers.push(transformer(
                &format!("T{i}"),
                &format!("B{parent}"),
                &id,
                500.0 + 2000.0 * rng.next_f64(),
                4.0 + 3.0 * rng.next_f64(),
                5.0 + 5.0 * rng.next_f64(),
            ));
            lv.push(i);
        } else {
            let parent = mv[rng.below(mv.len())];
            p.buses.push(bus(&id, 13.8));
            p.cables.push(cable(
                &format!("K{i}"),
                &format!("B{parent}"),
                &id,
                50.0 + 500.0 * rng.next_f64(),
            ));
            mv.push(i);
        }
        p.loads.push(load(
            &format!("L{i}"),
            &id,
            LoadType::Linear,
            50.0 + 200.0 * rng.next_f64(),
            0.85,
        ));
        if i % 3 == 0 {
            p.loads.push(load(
                &format!("M{i}"),
                &id,
                LoadType::Motor,
                100.0 + 300.0 * rng.next_f64(),
                0.85,
            ));
        }
        i += 1;
    }
    for e in 0..extra_links {
        let a = mv[rng.below(mv.len())];
        let b = mv[rng.below(mv.len())];
        if a != b {
            p.cables.push(cable(
                &format!("X{e}"),
                &format!("B{a}"),
                &format!("B{b}"),
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
        p.banks.push(bank(
            &format!("C{k}"),
            &format!("B{at}"),
            kv,
            50.0 + 100.0 * rng.next_f64(),
            3,
            reactor,
        ));
    }
    p
}
