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

/// A plant at `hz` under the models the hand formulas and the circuit simulator's netlists
/// use: constant resistance and linear loads as parallel R-L (the Study sheet's `constant`
/// and `parallel R-L`; the defaults add frequency-dependent damping).
pub fn textbook_plant(hz: f64) -> Plant {
    let mut p = Plant::new(hz);
    p.study.resistance_model = ResistanceModel::Constant;
    p.study.load_model = LoadModel::ParallelRl;
    p
}

pub fn bus(id: &str, kv: f64) -> Bus {
    Bus {
        id: id.into(),
        nominal_kv: kv,
        description: String::new(),
        neutral_rating_a: None,
    }
}

pub fn source(id: &str, bus: &str, mva: f64, x_over_r: f64) -> Source {
    Source {
        id: id.into(),
        bus: bus.into(),
        scenario: None,
        short_circuit: ShortCircuit::Mva(mva),
        x_over_r,
        voltage_pu: 1.0,
        zero_short_circuit_mva: None,
        zero_x_over_r: None,
        kind: SourceKind::Utility,
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
        connection: None,
        zero_impedance_percent: None,
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
        r0_ohm_per_km: None,
        x0_ohm_per_km: None,
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
        inrush_uh: None,
        trapped_charge_pu: 0.0,
        inrush_limit_ka: None,
        connection: None,
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
        wiring: None,
    }
}

/// A spectrum of (order, % of fundamental) lines, angles 0.
pub fn spectrum(name: &str, lines: &[(f64, f64)]) -> Spectrum {
    Spectrum {
        name: name.into(),
        lines: lines
            .iter()
            .map(|&(order, m)| SpectrumLine {
                order,
                magnitude_percent: m,
                angle_deg: Some(0.0),
            })
            .collect(),
    }
}

/// Index of the configuration with exactly `steps` in a check's scan.
pub fn config_index(res: &overtone::jobs::check::CheckResults, steps: &[u32]) -> usize {
    res.scan
        .configurations
        .iter()
        .position(|c| c.steps == steps)
        .expect("configuration studied")
}

/// Index of the injected order `h` (orders within 1e-9 are one) in a check's penetration.
pub fn order_index(res: &overtone::jobs::check::CheckResults, h: f64) -> usize {
    res.penetration
        .injections
        .orders
        .iter()
        .position(|&o| (o - h).abs() < 1e-9)
        .expect("order injected")
}

/// The lowest-|Z| dip of a scanned series.
pub fn deepest_dip(s: &overtone::study::Series) -> overtone::study::Extremum {
    *s.dips
        .iter()
        .min_by(|a, b| a.z_ohm.total_cmp(&b.z_ohm))
        .expect("a dip")
}

/// Whether the external program `name` (run with `--version`) is installed. When it is
/// not: under `CI=true` the test fails (CI installs it, `.ci/run`), elsewhere it says that
/// it skips.
pub fn external_tool(name: &str, what: &str) -> bool {
    if std::process::Command::new(name)
        .arg("--version")
        .output()
        .is_ok()
    {
        return true;
    }
    if std::env::var("CI").is_ok_and(|v| v == "true") {
        panic!(
            "{name} is not installed but CI=true: {what} must be checked in CI (.ci/run installs it)"
        );
    }
    eprintln!("{name} not on PATH: {what} not checked here (skipped; .ci/run installs it)");
    false
}

/// Runs `cmd` to completion or kills it after `seconds`, failing the test then.
pub fn output_within(cmd: &mut std::process::Command, seconds: u64) -> std::process::Output {
    use std::time::{Duration, Instant};
    let mut child = cmd
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .expect("starts");
    let deadline = Instant::now() + Duration::from_secs(seconds);
    loop {
        if child.try_wait().expect("waits").is_some() {
            return child.wait_with_output().expect("output");
        }
        if Instant::now() > deadline {
            child.kill().ok();
            panic!("{cmd:?} ran longer than {seconds} s and was killed");
        }
        std::thread::sleep(Duration::from_millis(50));
    }
}

/// Prints `files` to PDF in `dir` with LibreOffice headless (a fresh profile in
/// `dir/profile`), within `seconds`.
pub fn soffice_to_pdf(
    dir: &std::path::Path,
    files: &[std::path::PathBuf],
    seconds: u64,
) -> std::process::Output {
    output_within(
        std::process::Command::new("soffice")
            .arg("--headless")
            .arg("--norestore")
            .arg(format!(
                "-env:UserInstallation=file://{}",
                dir.join("profile").display()
            ))
            .arg("--convert-to")
            .arg("pdf")
            .arg("--outdir")
            .arg(dir)
            .args(files),
        seconds,
    )
}

/// A 60 Hz plant fed by source "U" (`mva` MVA, X/R) at bus `hv` through transformer "T"
/// (`kva` kVA, `z_percent` %, X/R) to bus `lv`, each bus (id, kV): the supply most tests
/// start from.
pub fn service(
    hv: (&str, f64),
    lv: (&str, f64),
    (mva, x_over_r): (f64, f64),
    (kva, z_percent, t_x_over_r): (f64, f64, f64),
) -> Plant {
    let mut p = textbook_plant(60.0);
    p.buses = vec![bus(hv.0, hv.1), bus(lv.0, lv.1)];
    p.sources = vec![source("U", hv.0, mva, x_over_r)];
    p.transformers = vec![transformer("T", hv.0, lv.0, kva, z_percent, t_x_over_r)];
    p
}

/// `check` without remedies (the studies alone).
pub fn check_only(p: &Plant) -> overtone::jobs::check::CheckResults {
    overtone::jobs::check::run_check(
        p,
        &overtone::jobs::check::CheckOptions {
            remedies: Some(false),
            ..Default::default()
        },
    )
    .expect("runs")
}
