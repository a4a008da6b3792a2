//! The `Study` sheet: two columns, `Item` and `Value`, items matched by the contract's rule.

use std::collections::HashMap;

use calamine::Data;

use super::table::{Column, Diagnostics, Table, a1, normalize, shown};
use crate::model::{
    LimitSet, LoadModel, ResistanceModel, StudySettings, Summation, Tolerance, VoltageRange,
};

pub const COLUMNS: &[Column] = &[
    Column {
        header: "Item",
        required: true,
    },
    Column {
        header: "Value",
        required: true,
    },
];

/// Where each item's value was found: normalized item → cell.
pub type ItemCells = HashMap<String, String>;

/// Parses a capacitance tolerance such as `-5/+10` or `0/+10` (percent).
pub fn tolerance(text: &str) -> Option<Tolerance> {
    let (a, b) = text.trim().trim_end_matches('%').split_once('/')?;
    let minus: f64 = a.trim().trim_end_matches('%').parse().ok()?;
    let plus: f64 = b.trim().trim_end_matches('%').parse().ok()?;
    (minus.is_finite() && plus.is_finite()).then_some(Tolerance {
        minus_percent: minus,
        plus_percent: plus,
    })
}

/// Parses a voltage band such as `0.95/1.05` (per unit); the order is checked by
/// validation.
pub fn voltage_range(text: &str) -> Option<VoltageRange> {
    let (a, b) = text.trim().split_once('/')?;
    let low: f64 = a.trim().parse().ok()?;
    let high: f64 = b.trim().parse().ok()?;
    (low.is_finite() && high.is_finite()).then_some(VoltageRange {
        low_pu: low,
        high_pu: high,
    })
}

/// The limit set named in a cell.
pub fn limit_set(text: &str) -> Option<LimitSet> {
    match normalize(text).as_str() {
        "ieee5192014" | "ieee519" => Some(LimitSet::Ieee519_2014),
        "iec6100024class1" | "class1" => Some(LimitSet::Iec61000_2_4Class1),
        "iec6100024class2" | "class2" => Some(LimitSet::Iec61000_2_4Class2),
        "iec6100024class3" | "class3" => Some(LimitSet::Iec61000_2_4Class3),
        _ => None,
    }
}

/// Reads the Study sheet into settings; `file_stem` is the default title.
// Long: one Study item per branch, each checked at its cell.
pub fn read(t: &Table, file_stem: &str, d: &mut Diagnostics) -> (StudySettings, ItemCells) {
    let mut s = StudySettings::new(f64::NAN);
    s.title = file_stem.to_string();
    let mut cells = ItemCells::new();
    let known: Vec<String> = crate::io::schema::study_item_names()
        .iter()
        .map(|i| normalize(i))
        .collect();
    let mut last_row = 0;
    for r in &t.rows {
        last_row = r.row;
        let Some(item) = t.text(r, "Item", d) else {
            continue;
        };
        let key = normalize(&item);
        let at = t.cell(r, "Value");
        if !known.contains(&key) {
            d.warn(
                &t.sheet,
                Some(t.cell(r, "Item")),
                format!("unknown item \"{item}\" ignored"),
            );
            continue;
        }
        if cells.insert(key.clone(), at.clone()).is_some() {
            d.error(
                &t.sheet,
                t.cell(r, "Item"),
                format!("item \"{item}\" appears twice"),
            );
            continue;
        }
        let value = t.raw(r, "Value").clone();
        let text = || t.text(r, "Value", &mut Diagnostics::default());
        let number = |what: &str, d: &mut Diagnostics| t.number(r, "Value", what, d);
        let bad = |d: &mut Diagnostics, expected: &str| {
            d.error(
                &t.sheet,
                at.clone(),
                format!("\"{item}\" must be {expected}, found {}", shown(&value)),
            )
        };
        match key.as_str() {
            "title" => s.title = text().unwrap_or_else(|| file_stem.to_string()),
            "plant" => s.plant = text().unwrap_or_default(),
            "preparedby" => s.prepared_by = text().unwrap_or_default(),
            "frequency" => s.frequency_hz = number("50 or 60", d).unwrap_or(f64::NAN),
            "pccbus" => s.pcc_bus = text(),
            "maxdemandcurrent" => s.max_demand_current_a = number("a positive current in A", d),
            "highestorder" => {
                if let Some(v) = number("a harmonic order above 1", d) {
                    s.highest_order = v;
                }
            }
            "scanstep" => {
                if let Some(v) = number("a step in harmonic order", d) {
                    s.scan_step_order = v;
                }
            }
            "resonancemargin" => {
                if let Some(v) = number("a percentage", d) {
                    s.resonance_margin_percent = v;
                }
            }
            "resistancemodel" => match text().map(|v| normalize(&v)).as_deref() {
                None => {}
                Some("constant") => s.resistance_model = ResistanceModel::Constant,
                Some("skin") => s.resistance_model = ResistanceModel::Skin,
                Some("frequencydependent") => {
                    s.resistance_model = ResistanceModel::FrequencyDependent
                }
                Some(_) => bad(d, "frequency-dependent, constant or skin"),
            },
            "loadmodel" => match text().map(|v| normalize(&v)).as_deref() {
                None => {}
                Some("cigre") => s.load_model = LoadModel::Cigre,
                Some("parallelrl") => s.load_model = LoadModel::ParallelRl,
                Some(_) => bad(d, "CIGRE or parallel R-L"),
            },
            "limits" => match text() {
                None => {}
                Some(v) => match limit_set(&v) {
                    Some(l) => s.limits = l,
                    None => bad(
                        d,
                        "IEEE 519-2014, IEC 61000-2-4 class 1, class 2 or class 3",
                    ),
                },
            },
            "summation" => match text().map(|v| normalize(&v)).as_deref() {
                None => {}
                Some("arithmetic") => s.summation = Summation::Arithmetic,
                Some("iec6100036") => s.summation = Summation::Iec61000_3_6,
                Some("phasor") => s.summation = Summation::Phasor,
                Some(_) => bad(d, "arithmetic, IEC 61000-3-6 or phasor"),
            },
            "targetpowerfactor" => {
                if let Some(v) = number("a power factor between 0.5 and 1 (lagging)", d) {
                    s.target_power_factor = v;
                }
            }
            "stepvoltagechange" => {
                if let Some(v) = number("a percentage", d) {
                    s.step_voltage_change_percent = v;
                }
            }
            "voltagerange" => match &value {
                Data::Empty => {}
                _ => match text().as_deref().and_then(voltage_range) {
                    Some(r) => s.voltage_range = r,
                    None => bad(d, "a band low/high in pu like 0.95/1.05"),
                },
            },
            "capacitancetolerance" => match &value {
                Data::Empty => {}
                _ => match text().as_deref().and_then(tolerance) {
                    Some(tol) => s.capacitance_tolerance = tol,
                    None => bad(d, "a band like -5/+10"),
                },
            },
            _ => {}
        }
    }
    match cells.get("frequency") {
        None => d.error(
            &t.sheet,
            a1(last_row + 1, 0),
            "required item \"Frequency (Hz)\" is missing: add a row \"Frequency (Hz)\" with 50 or 60".into(),
        ),
        Some(cell) if s.frequency_hz.is_nan() => d.error(
            &t.sheet,
            cell.clone(),
            "\"Frequency (Hz)\" must be 50 or 60, found a blank cell".into(),
        ),
        Some(_) => {}
    }
    (s, cells)
}
