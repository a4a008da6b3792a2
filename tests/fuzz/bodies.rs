//! The bodies of the fuzz targets, shared by the libFuzzer targets (`tests/fuzz/fuzz_targets`,
//! nightly, `cargo fuzz`) and the stable harness (`tests/integration/hostile.rs`, which runs
//! them over the kept corpus `tests/fuzz/corpus/` on every `cargo test`).
//!
//! Both bodies panic (a finding) when the tool panics, when an error has no message, or when
//! a value that is not a finite number reaches a report: the terminal summary, the scan
//! command's peaks, the JSON summary, the scan and voltage CSVs or the review workbook.

#![allow(dead_code)]

use std::io::Read;

use arbitrary::{Arbitrary, Unstructured};
use overtone::io::provenance::Provenance;
use overtone::io::workbook_in::read_workbook_bytes;
use overtone::jobs::check::{CheckOptions, CheckResults, run_check};
use overtone::jobs::exports::{BusTable, ScanSelection, ScanTable};
use overtone::model::*;
use overtone::present::csv::{write_scan_csv, write_voltages_csv};
use overtone::present::review::review_bytes;

/// Feeds `data` to the workbook reader as .xlsx (the reader detects the real format from the
/// bytes): a plant that validates, or an error message naming the file.
pub fn read_workbook(data: &[u8]) {
    match read_workbook_bytes("fuzz.xlsx", "fuzz", data) {
        Ok(read) => {
            if let Err(errors) = read.plant.validate() {
                panic!("the reader returned a plant that does not validate: {errors:?}");
            }
        }
        Err(e) => {
            let msg = e.to_string();
            assert!(msg.contains("fuzz.xlsx"), "message without the file: {msg}");
        }
    }
}

/// Feeds `data` to the recording readers: as a single-file COMTRADE (.cff) and, when it is
/// text, as a harmonic log (.csv). Each gives a recording whose channels all hold one value
/// per sample, or an error naming the file.
pub fn read_recording(data: &[u8]) {
    match overtone::io::recordings::comtrade::parse_cff("fuzz.cff", data) {
        Ok(w) => {
            for c in &w.analog {
                assert_eq!(
                    c.values.len(),
                    w.time_s.len(),
                    "a channel without every sample"
                );
            }
            assert!(w.time_s.windows(2).all(|t| t[1] >= t[0]), "time goes back");
            // A short recording is analysed too: the events and every estimate, no panic.
            if w.time_s.last().is_some_and(|&t| t < 2.0)
                && let Ok(s) = overtone::jobs::calibrate::channels::sampled(&w, 60.0)
            {
                let opt = overtone::study::measured::events::EventOptions {
                    threshold_var: 1e3,
                    orders: 50,
                    window_cycles: 12,
                    settle_cycles: 6,
                    kv_nominal: 4.16,
                };
                let a = overtone::study::measured::events::analyse(&s, &opt);
                assert!(a.steady.len() <= 2 * a.events.len() + 1);
            }
        }
        Err(e) => assert!(
            e.to_string().contains("fuzz.cff"),
            "message without the file: {e}"
        ),
    }
    if let Ok(text) = std::str::from_utf8(data)
        && let Err(e) = overtone::io::recordings::harmonic_log::parse_log("fuzz.csv", text)
    {
        assert!(
            e.to_string().contains("fuzz.csv"),
            "message without the file: {e}"
        );
    }
}

/// Builds a plant from `data` (structured by [`PlantSpec`]) and runs every study and every
/// report on it.
pub fn plant_study(data: &[u8]) {
    let mut u = Unstructured::new(data);
    let Ok(spec) = PlantSpec::arbitrary(&mut u) else {
        return;
    };
    study_and_report(&spec.build());
}

/// Runs the check (remedies included) and every report on `plant`: an error must have a
/// message; results must reach every report without a non-finite number.
pub fn study_and_report(plant: &Plant) {
    let options = CheckOptions {
        remedies: Some(true),
        switching: true,
        ..CheckOptions::default()
    };
    match run_check(plant, &options) {
        Err(e) => assert!(!e.to_string().trim().is_empty(), "empty error message"),
        Ok(res) => audit_reports(&res),
    }
}

/// Every report of `res` is free of non-finite numbers.
pub fn audit_reports(res: &CheckResults) {
    let mut text = Vec::new();
    overtone::present::terminal::summary::write_summary(&mut text, res).expect("summary to memory");
    assert_no_nonfinite_text("terminal summary", &String::from_utf8_lossy(&text));
    let mut peaks = Vec::new();
    overtone::present::terminal::summary::write_peaks(&mut peaks, res).expect("peaks to memory");
    assert_no_nonfinite_text("scan peaks", &String::from_utf8_lossy(&peaks));

    let value =
        serde_value::to_value(overtone::present::json::summary(res)).expect("summary value");
    let mut path = Vec::new();
    if let Some(bad) = first_nonfinite(&value, &mut path) {
        panic!("a non-finite number reaches the JSON summary at {bad}");
    }

    let sel = ScanSelection::default();
    let mut csv = Vec::new();
    let table = ScanTable::new(res, &sel);
    write_scan_csv(&mut csv, res, table.curves(res)).expect("scan CSV to memory");
    assert_no_nonfinite_text("scan CSV", &String::from_utf8_lossy(&csv));
    let mut csv = Vec::new();
    let buses = BusTable::new(res, &sel);
    write_voltages_csv(&mut csv, res, &buses.buses, buses.voltages(res))
        .expect("voltage CSV to memory");
    assert_no_nonfinite_text("voltage CSV", &String::from_utf8_lossy(&csv));
    let mut csv = Vec::new();
    overtone::present::csv::write_operating_csv(&mut csv, res, &buses.buses, buses.operating(res))
        .expect("operating CSV to memory");
    assert_no_nonfinite_text("operating CSV", &String::from_utf8_lossy(&csv));
    let mut csv = Vec::new();
    overtone::present::csv::write_transients_csv(&mut csv, res).expect("transients CSV to memory");
    assert_no_nonfinite_text("transients CSV", &String::from_utf8_lossy(&csv));

    let prov = Provenance {
        input: "fuzz".into(),
        sha256: String::new(),
        date: (2026, 1, 1),
        warnings: Vec::new(),
    };
    let charts = overtone::jobs::charts::scan_charts(res);
    let pdf = overtone::present::report::report_bytes(res, &charts, &prov, None)
        .expect("study report to memory");
    assert!(pdf.starts_with(b"%PDF"), "the study report is a PDF");
    let bytes = review_bytes(res, &charts, &prov).expect("review workbook to memory");
    let mut zip = zip::ZipArchive::new(std::io::Cursor::new(bytes)).expect("review is a zip");
    for i in 0..zip.len() {
        let mut part = zip.by_index(i).expect("zip part");
        let name = String::from_utf8_lossy(part.name_raw()).into_owned();
        if !name.ends_with(".xml") {
            continue;
        }
        let mut xml = String::new();
        part.read_to_string(&mut xml).expect("xml part");
        assert_no_nonfinite_text(&format!("review workbook part {name}"), &xml);
    }
}

/// Panics when `text` holds a word `NaN`, `inf` or `infinity` (any case), as Rust, C and
/// spreadsheet programs print non-finite numbers, or the review writer's last-resort
/// `not computed` (a value that cannot be computed must say why).
pub fn assert_no_nonfinite_text(what: &str, text: &str) {
    if let Some(at) = text.find(crate_fallback()) {
        let context = text
            .get(at.saturating_sub(120)..(at + 40).min(text.len()))
            .unwrap_or("");
        panic!("{what}: a value without its reason near: {context}");
    }
    for (i, word) in text.split(|c: char| !c.is_ascii_alphanumeric()).enumerate() {
        let w = word.to_ascii_lowercase();
        if w == "nan" || w == "inf" || w == "infinity" {
            let at = text
                .match_indices(word)
                .next()
                .map_or(0, |(p, _)| p.saturating_sub(80));
            let end = (at + 160).min(text.len());
            let context = text.get(at..end).unwrap_or("");
            panic!("{what}: word {i} is \"{word}\" near: {context}");
        }
    }
}

/// The review writer's text for a number that is not finite (see `io::review`).
fn crate_fallback() -> &'static str {
    overtone::present::review::NOT_COMPUTED
}

/// The path of the first non-finite float in `v`, if any.
pub fn first_nonfinite(v: &serde_value::Value, path: &mut Vec<String>) -> Option<String> {
    use serde_value::Value;
    match v {
        Value::F64(x) if !x.is_finite() => Some(path.join(".")),
        Value::F32(x) if !x.is_finite() => Some(path.join(".")),
        Value::Option(Some(b)) | Value::Newtype(b) => first_nonfinite(b, path),
        Value::Seq(items) => items.iter().enumerate().find_map(|(i, x)| {
            path.push(i.to_string());
            let r = first_nonfinite(x, path);
            path.pop();
            r
        }),
        Value::Map(m) => m.iter().find_map(|(k, x)| {
            path.push(match k {
                Value::String(s) => s.clone(),
                other => format!("{other:?}"),
            });
            let r = first_nonfinite(x, path);
            path.pop();
            r
        }),
        _ => None,
    }
}

/// A number field: usually one of a few values of the trade and their degenerate edges,
/// sometimes any float at all (NaN and infinities included).
#[derive(Arbitrary, Debug, Clone, Copy)]
pub enum Num {
    Pick(u8),
    Raw(f64),
}

impl Num {
    fn get(self, table: &[f64]) -> f64 {
        match self {
            Num::Pick(i) => table[usize::from(i) % table.len()],
            Num::Raw(x) => x,
        }
    }
}

const KV: &[f64] = &[0.48, 0.4, 4.16, 13.8, 69.0, 0.0, -0.48, 1e-9, 1e9];
const MVA: &[f64] = &[250.0, 50.0, 1000.0, 0.0, 1e-6, 1e12];
const X_OVER_R: &[f64] = &[10.0, 6.0, 0.0, 1e9, 1e-9, -1.0];
const KVA: &[f64] = &[1500.0, 2500.0, 500.0, 0.0, 1e-6, 1e9];
const Z_PERCENT: &[f64] = &[5.75, 6.0, 8.0, 0.0, 1e-6, 100.0, -5.0];
const LENGTH_M: &[f64] = &[100.0, 20.0, 2000.0, 0.0, 1e-6, 1e7];
const R_PER_KM: &[f64] = &[0.1, 0.05, 0.0, 1e-9, 1e4];
const C_PER_KM: &[f64] = &[0.3, 0.0, 1e-9, 1e3];
const KVAR: &[f64] = &[300.0, 150.0, 600.0, 0.0, 1e-6, 1e9, -100.0];
const PERCENT: &[f64] = &[7.0, 5.67, 14.0, 0.0, 100.0, 1e-9, 99.999];
const ORDER: &[f64] = &[4.7, 4.2, 2.7, 1.0, 1.0001, 12.9, 1e6];
const Q: &[f64] = &[50.0, 30.0, 0.0, 1e9, 1e-9];
const KW: &[f64] = &[500.0, 200.0, 75.0, 0.0, -5.0, 1e-6, 1e9];
const PF: &[f64] = &[0.95, 0.85, 1.0, 0.0, 1e-9, 1.5];
const FACTOR: &[f64] = &[1.0, 0.8, 0.0, 1e-9, 2.0, 1000.0];
const MAGNITUDE: &[f64] = &[20.0, 14.0, 100.0, 0.0, 1e-9, 1e6, -3.0];
const SPECTRUM_ORDER: &[f64] = &[5.0, 7.0, 11.0, 13.0, 1.0, 0.5, 2.5, 49.9, 51.0];
const MARGIN: &[f64] = &[10.0, 5.0, 0.0, 100.0, 1e9];
const TOLERANCE: &[f64] = &[10.0, 5.0, 0.0, 1e-9, 99.0];
const DEMAND_A: &[f64] = &[1500.0, 400.0, 0.0, 1e-9, 1e9];
const HIGHEST: &[f64] = &[25.0, 13.0, 50.0, 1.0, 2.0];
const STEP: &[f64] = &[0.1, 0.05, 0.25, 1.0, 1e-4];
const STEPS: &[u32] = &[1, 2, 3, 4, 0, 6, 12];

#[derive(Arbitrary, Debug)]
pub struct BusSpec {
    kv: Num,
}

#[derive(Arbitrary, Debug)]
pub struct SourceSpec {
    bus: u8,
    scenario: Option<u8>,
    mva: Num,
    in_ka: bool,
    x_over_r: Num,
}

#[derive(Arbitrary, Debug)]
pub struct TransformerSpec {
    hv: u8,
    lv: u8,
    kva: Num,
    z_percent: Num,
    x_over_r: Num,
    in_service: bool,
    group: u8,
    zero_percent: Option<Num>,
}

#[derive(Arbitrary, Debug)]
pub struct CableSpec {
    from: u8,
    to: u8,
    length_m: Num,
    r: Num,
    x: Num,
    c: Num,
    runs: u8,
}

#[derive(Arbitrary, Debug)]
pub enum ReactorSpec {
    None,
    Detuning(Num),
    Tuned(Num),
}

#[derive(Arbitrary, Debug)]
pub struct BankSpec {
    bus: u8,
    rated_kv: Num,
    kvar: Num,
    steps: u8,
    reactor: ReactorSpec,
    q: Num,
    existing: bool,
    studied: Option<Vec<u8>>,
    inrush_uh: Option<Num>,
    connection: u8,
    trapped: u8,
    inrush_limit_ka: Option<Num>,
}

#[derive(Arbitrary, Debug)]
pub struct LoadSpec {
    bus: u8,
    kind: u8,
    kw: Num,
    pf: Num,
    quantity: Num,
    load_factor: Num,
    spectrum: Option<u8>,
}

#[derive(Arbitrary, Debug)]
pub struct SpectrumSpec {
    lines: Vec<(Num, Num, Num)>,
}

/// An arbitrary plant of at most 6 buses, 3 sources, 4 transformers, 3 cables, 3 banks,
/// 6 loads and 2 spectra, on a coarse grid so that one run takes milliseconds.
#[derive(Arbitrary, Debug)]
pub struct PlantSpec {
    hz50: bool,
    highest: Num,
    step: Num,
    pcc: Option<u8>,
    demand_a: Option<Num>,
    limits: u8,
    iec_summation: bool,
    skin: bool,
    margin: Num,
    tol_minus: Num,
    tol_plus: Num,
    buses: Vec<BusSpec>,
    sources: Vec<SourceSpec>,
    transformers: Vec<TransformerSpec>,
    cables: Vec<CableSpec>,
    banks: Vec<BankSpec>,
    loads: Vec<LoadSpec>,
    spectra: Vec<SpectrumSpec>,
    phasor: bool,
    background: Vec<(u8, Num, Num)>,
}

/// Vector groups the fuzzer picks from (every zero-sequence path kind).
const GROUPS: &[&str] = &[
    "Dyn11", "Dyn1", "YNyn0", "Yy0", "Dd0", "YNd1", "Dzn0", "YNyn6",
];

/// Bus `i` of `n` by name; an index past the end names a bus that does not exist.
fn bus_name(i: u8, n: usize) -> String {
    let i = usize::from(i);
    if i % 16 < n.max(1) {
        format!("B{}", i % 16)
    } else {
        format!("NOPE{i}")
    }
}

impl PlantSpec {
    /// The plant: any field may be invalid (validation must then say which).
    pub fn build(&self) -> Plant {
        let mut plant = Plant::new(if self.hz50 { 50.0 } else { 60.0 });
        let s = &mut plant.study;
        s.highest_order = self.highest.get(HIGHEST).min(50.0);
        s.scan_step_order = self.step.get(STEP).max(0.05);
        let nb = self.buses.len().min(6);
        s.pcc_bus = self.pcc.map(|i| bus_name(i, nb));
        s.max_demand_current_a = self.demand_a.map(|v| v.get(DEMAND_A));
        s.limits = match self.limits % 4 {
            0 => LimitSet::Ieee519_2014,
            1 => LimitSet::Iec61000_2_4Class1,
            2 => LimitSet::Iec61000_2_4Class2,
            _ => LimitSet::Iec61000_2_4Class3,
        };
        if self.iec_summation {
            s.summation = Summation::Iec61000_3_6;
        }
        if self.phasor {
            s.summation = Summation::Phasor;
        }
        if self.skin {
            s.resistance_model = ResistanceModel::Skin;
        }
        s.resonance_margin_percent = self.margin.get(MARGIN);
        s.capacitance_tolerance = Tolerance {
            minus_percent: -self.tol_minus.get(TOLERANCE),
            plus_percent: self.tol_plus.get(TOLERANCE),
        };
        plant.buses = self.buses[..nb]
            .iter()
            .enumerate()
            .map(|(i, b)| Bus {
                id: format!("B{i}"),
                nominal_kv: b.kv.get(KV),
                description: String::new(),
                neutral_rating_a: None,
            })
            .collect();
        plant.sources = self
            .sources
            .iter()
            .take(3)
            .enumerate()
            .map(|(i, x)| {
                let v = x.mva.get(MVA);
                Source {
                    id: format!("U{i}"),
                    bus: bus_name(x.bus, nb),
                    scenario: x.scenario.map(|k| format!("S{}", k % 3)),
                    short_circuit: if x.in_ka {
                        ShortCircuit::Ka(v / 10.0)
                    } else {
                        ShortCircuit::Mva(v)
                    },
                    x_over_r: x.x_over_r.get(X_OVER_R),
                    voltage_pu: 1.0,
                    zero_short_circuit_mva: None,
                    zero_x_over_r: None,
                    kind: SourceKind::Utility,
                }
            })
            .collect();
        plant.transformers = self
            .transformers
            .iter()
            .take(4)
            .enumerate()
            .map(|(i, t)| Transformer {
                id: format!("T{i}"),
                hv_bus: bus_name(t.hv, nb),
                lv_bus: bus_name(t.lv, nb),
                kva: t.kva.get(KVA),
                impedance_percent: t.z_percent.get(Z_PERCENT),
                x_over_r: t.x_over_r.get(X_OVER_R),
                in_service: t.in_service,
                connection: VectorGroup::parse(GROUPS[usize::from(t.group) % GROUPS.len()]),
                zero_impedance_percent: t.zero_percent.map(|z| z.get(Z_PERCENT)),
            })
            .collect();
        plant.cables = self
            .cables
            .iter()
            .take(3)
            .enumerate()
            .map(|(i, c)| Cable {
                id: format!("L{i}"),
                from_bus: bus_name(c.from, nb),
                to_bus: bus_name(c.to, nb),
                length_m: c.length_m.get(LENGTH_M),
                r_ohm_per_km: c.r.get(R_PER_KM),
                x_ohm_per_km: c.x.get(R_PER_KM),
                c_uf_per_km: c.c.get(C_PER_KM),
                runs: u32::from(c.runs % 5),
                r0_ohm_per_km: None,
                x0_ohm_per_km: None,
            })
            .collect();
        plant.banks = self
            .banks
            .iter()
            .take(3)
            .enumerate()
            .map(|(i, b)| {
                let steps = STEPS[usize::from(b.steps) % STEPS.len()];
                CapacitorBank {
                    id: format!("C{i}"),
                    bus: bus_name(b.bus, nb),
                    rated_kv: b.rated_kv.get(KV),
                    step_kvar: b.kvar.get(KVAR),
                    steps,
                    reactor: match b.reactor {
                        ReactorSpec::None => Reactor::None,
                        ReactorSpec::Detuning(p) => Reactor::Detuning {
                            percent: p.get(PERCENT),
                        },
                        ReactorSpec::Tuned(h) => Reactor::Tuned {
                            order: h.get(ORDER),
                        },
                    },
                    reactor_q: b.q.get(Q),
                    status: if b.existing {
                        BankStatus::Existing
                    } else {
                        BankStatus::Proposed
                    },
                    studied_steps: match &b.studied {
                        None => (0..=steps).collect(),
                        Some(list) => list.iter().take(8).map(|&n| u32::from(n % 14)).collect(),
                    },
                    inrush_uh: b.inrush_uh.map(|v| v.get(Q)),
                    connection: [
                        None,
                        Some(BankConnection::Delta),
                        Some(BankConnection::Wye),
                        Some(BankConnection::WyeGrounded),
                    ][usize::from(b.connection % 4)],
                    // −1, −0.5, 0, 0.5, 1 pu: the contract's range and its edges.
                    trapped_charge_pu: f64::from(b.trapped % 5) * 0.5 - 1.0,
                    inrush_limit_ka: b.inrush_limit_ka.map(|v| v.get(Q)),
                }
            })
            .collect();
        let ns = self.spectra.len().min(2);
        plant.loads = self
            .loads
            .iter()
            .take(6)
            .enumerate()
            .map(|(i, l)| Load {
                id: format!("D{i}"),
                bus: bus_name(l.bus, nb),
                kind: LoadType::ALL[usize::from(l.kind) % LoadType::ALL.len()],
                kw: l.kw.get(KW),
                power_factor: l.pf.get(PF),
                quantity: l.quantity.get(FACTOR),
                load_factor: l.load_factor.get(FACTOR),
                spectrum: l.spectrum.map(|k| {
                    if usize::from(k % 4) < ns {
                        format!("SP{}", k % 4)
                    } else {
                        "MISSING".into()
                    }
                }),
                wiring: None,
            })
            .collect();
        plant.spectra = self.spectra[..ns]
            .iter()
            .enumerate()
            .map(|(i, sp)| Spectrum {
                name: format!("SP{i}"),
                lines: sp
                    .lines
                    .iter()
                    .take(12)
                    .map(|(h, m, a)| SpectrumLine {
                        order: h.get(SPECTRUM_ORDER),
                        magnitude_percent: m.get(MAGNITUDE),
                        angle_deg: Some(a.get(&[0.0, 180.0, -30.0])),
                    })
                    .collect(),
            })
            .collect();
        let nsrc = plant.sources.len().max(1);
        plant.background = self
            .background
            .iter()
            .take(4)
            .map(|(k, h, v)| BackgroundLine {
                source: format!("U{}", usize::from(*k) % nsrc),
                order: h.get(SPECTRUM_ORDER),
                voltage_percent: v.get(PERCENT) / 10.0,
                angle_deg: Some(v.get(&[0.0, 90.0, -45.0])),
            })
            .collect();
        plant
    }
}

/// The plant `data` builds for [`plant_study`], for a failure message.
pub fn describe_plant(data: &[u8]) -> String {
    let mut u = Unstructured::new(data);
    PlantSpec::arbitrary(&mut u).map_or_else(
        |e| format!("no plant ({e})"),
        |s| format!("{:#?}", s.build()),
    )
}
