//! Writes input workbooks per the contract: the blank template (`overtone template`) and a
//! plant's own workbook (for the example cases and round-trip tests). Every sheet and header
//! of the contract with its unit, a note on every header saying what the column means, its
//! default and allowed values, dropdowns for closed lists, number ranges, a frozen header
//! row and set widths.

use rust_xlsxwriter::{
    DataValidation, DataValidationRule, DocProperties, ExcelDateTime, Format, Note, Workbook,
    Worksheet, XlsxError,
};

use crate::model::*;

pub use crate::io::schema::LOAD_TYPES;
use crate::io::schema::*;

fn validation(check: Check) -> Result<Option<DataValidation>, XlsxError> {
    let dv = match check {
        Check::Text => return Ok(None),
        Check::List(items) => DataValidation::new().allow_list_strings(items)?,
        Check::Positive => DataValidation::new()
            .allow_decimal_number(DataValidationRule::GreaterThan(0.0))
            .set_error_message("A number greater than 0 is expected.")?,
        Check::NonNegative => DataValidation::new()
            .allow_decimal_number(DataValidationRule::GreaterThanOrEqualTo(0.0))
            .set_error_message("A number of 0 or more is expected.")?,
        Check::Between(a, b) => DataValidation::new()
            .allow_decimal_number(DataValidationRule::Between(a, b))
            .set_error_message(format!("A number from {a} to {b} is expected."))?,
        Check::Whole(min) => DataValidation::new()
            .allow_whole_number(DataValidationRule::GreaterThanOrEqualTo(min))
            .set_error_message(format!("A whole number of at least {min} is expected."))?,
    };
    Ok(Some(dv.ignore_blank(true)))
}

/// A cell value of a plant's workbook.
enum V {
    N(f64),
    T(String),
    Blank,
}

fn t(s: &str) -> V {
    if s.is_empty() {
        V::Blank
    } else {
        V::T(s.to_string())
    }
}

fn write_row(ws: &mut Worksheet, row: u32, values: &[V]) -> Result<(), XlsxError> {
    for (c, v) in values.iter().enumerate() {
        match v {
            V::N(x) if x.is_finite() => {
                ws.write_number(row, c as u16, *x)?;
            }
            V::T(s) => {
                ws.write_string(row, c as u16, s)?;
            }
            _ => {}
        }
    }
    Ok(())
}

/// The rows of each element sheet for `plant`, in the columns of [`sheets`].
// Long: every element sheet's rows as data, a column per line.
fn rows(plant: &Plant, sheet: &str) -> Vec<Vec<V>> {
    use V::*;
    match sheet {
        "Buses" => plant
            .buses
            .iter()
            .map(|b| {
                vec![
                    t(&b.id),
                    N(b.nominal_kv),
                    t(&b.description),
                    b.neutral_rating_a.map_or(Blank, N),
                ]
            })
            .collect(),
        "Sources" => plant
            .sources
            .iter()
            .map(|s| {
                let (mva, ka) = match s.short_circuit {
                    ShortCircuit::Mva(m) => (N(m), Blank),
                    ShortCircuit::Ka(k) => (Blank, N(k)),
                };
                vec![
                    t(&s.id),
                    t(&s.bus),
                    t(s.scenario.as_deref().unwrap_or("")),
                    mva,
                    ka,
                    N(s.x_over_r),
                    N(s.voltage_pu),
                    s.zero_short_circuit_mva.map_or(Blank, N),
                    s.zero_x_over_r.map_or(Blank, N),
                    t(s.kind.label()),
                ]
            })
            .collect(),
        "Transformers" => plant
            .transformers
            .iter()
            .map(|x| {
                vec![
                    t(&x.id),
                    t(&x.hv_bus),
                    t(&x.lv_bus),
                    N(x.kva),
                    N(x.impedance_percent),
                    N(x.x_over_r),
                    t(if x.in_service { "yes" } else { "no" }),
                    x.connection.map_or(Blank, |g| T(g.label())),
                    x.zero_impedance_percent.map_or(Blank, N),
                ]
            })
            .collect(),
        "Cables" => plant
            .cables
            .iter()
            .map(|c| {
                vec![
                    t(&c.id),
                    t(&c.from_bus),
                    t(&c.to_bus),
                    N(c.length_m),
                    N(c.r_ohm_per_km),
                    N(c.x_ohm_per_km),
                    N(c.c_uf_per_km),
                    N(f64::from(c.runs)),
                    c.r0_ohm_per_km.map_or(Blank, N),
                    c.x0_ohm_per_km.map_or(Blank, N),
                ]
            })
            .collect(),
        "Capacitors" => plant
            .banks
            .iter()
            .map(|b| {
                let (det, tuned) = match b.reactor {
                    Reactor::None => (Blank, Blank),
                    Reactor::Detuning { percent } => (N(percent), Blank),
                    Reactor::Tuned { order } => (Blank, N(order)),
                };
                let all: Vec<u32> = (0..=b.steps).collect();
                let studied = if b.studied_steps == all {
                    "all".to_string()
                } else {
                    b.studied_steps
                        .iter()
                        .map(u32::to_string)
                        .collect::<Vec<_>>()
                        .join(",")
                };
                vec![
                    t(&b.id),
                    t(&b.bus),
                    N(b.rated_kv),
                    N(b.step_kvar),
                    N(f64::from(b.steps)),
                    det,
                    tuned,
                    N(b.reactor_q),
                    t(match b.status {
                        BankStatus::Existing => "existing",
                        BankStatus::Proposed => "proposed",
                    }),
                    T(studied),
                    b.inrush_uh.map_or(Blank, N),
                    b.connection.map_or(Blank, |c| t(c.label())),
                    if b.trapped_charge_pu == 0.0 {
                        Blank
                    } else {
                        N(b.trapped_charge_pu)
                    },
                    b.inrush_limit_ka.map_or(Blank, N),
                ]
            })
            .collect(),
        "Loads" => plant
            .loads
            .iter()
            .map(|l| {
                vec![
                    t(&l.id),
                    t(&l.bus),
                    t(l.kind.label()),
                    N(l.kw),
                    N(l.power_factor),
                    N(l.quantity),
                    N(l.load_factor),
                    t(l.spectrum.as_deref().unwrap_or("")),
                    t(l.wiring.map_or("", Wiring::label)),
                ]
            })
            .collect(),
        "Spectra" => plant
            .spectra
            .iter()
            .flat_map(|s| {
                s.lines.iter().map(|l| {
                    vec![
                        t(&s.name),
                        N(l.order),
                        N(l.magnitude_percent),
                        l.angle_deg.map_or(Blank, N),
                    ]
                })
            })
            .collect(),
        "Background" => plant
            .background
            .iter()
            .map(|b| {
                vec![
                    t(&b.source),
                    N(b.order),
                    N(b.voltage_percent),
                    b.angle_deg.map_or(Blank, N),
                ]
            })
            .collect(),
        "Design" => plant
            .design
            .iter()
            .map(|d| {
                let list = |v: &[f64]| {
                    v.iter()
                        .map(|x| format!("{x}"))
                        .collect::<Vec<_>>()
                        .join(", ")
                };
                vec![
                    t(&d.bus),
                    T(list(&d.step_kvar)),
                    T(if d.steps_min == d.steps_max {
                        format!("{}", d.steps_min)
                    } else {
                        format!("{}-{}", d.steps_min, d.steps_max)
                    }),
                    T(d.reactors
                        .iter()
                        .map(|r| match r {
                            Reactor::None => "plain".to_string(),
                            Reactor::Detuning { percent } => format!("{percent}"),
                            Reactor::Tuned { order } => format!("tuned {order}"),
                        })
                        .collect::<Vec<_>>()
                        .join(", ")),
                    t(&list(&d.rated_kv)),
                    t(&list(&d.capacitor_cost_per_kvar)),
                    d.reactor_cost_per_kvar.map_or(Blank, N),
                    d.step_cost.map_or(Blank, N),
                    d.leading_pf_limit.map_or(Blank, N),
                    t(&d.replaces.join(", ")),
                ]
            })
            .collect(),
        "Load levels" => plant
            .load_levels
            .iter()
            .map(|l| {
                vec![
                    t(&l.level),
                    l.hours.map_or(Blank, N),
                    t(l.load.as_deref().unwrap_or("")),
                    N(l.load_factor),
                ]
            })
            .collect(),
        _ => Vec::new(),
    }
}

fn study_values(plant: &Plant) -> Vec<V> {
    use V::*;
    let s = &plant.study;
    let tol = s.capacitance_tolerance;
    vec![
        t(&s.title),
        t(&s.plant),
        t(&s.prepared_by),
        N(s.frequency_hz),
        t(s.pcc_bus.as_deref().unwrap_or("")),
        s.max_demand_current_a.map_or(Blank, N),
        N(s.highest_order),
        N(s.scan_step_order),
        t(s.resistance_model.word()),
        t(match s.limits {
            LimitSet::Ieee519_2014 => LIMITS[0],
            LimitSet::Iec61000_2_4Class1 => LIMITS[1],
            LimitSet::Iec61000_2_4Class2 => LIMITS[2],
            LimitSet::Iec61000_2_4Class3 => LIMITS[3],
        }),
        t(match s.summation {
            Summation::Arithmetic => SUMMATION[0],
            Summation::Iec61000_3_6 => SUMMATION[1],
            Summation::Phasor => SUMMATION[2],
        }),
        N(s.resonance_margin_percent),
        T(format!("{}/+{}", tol.minus_percent, tol.plus_percent)),
        N(s.target_power_factor),
        N(s.step_voltage_change_percent),
        T(format!(
            "{}/{}",
            s.voltage_range.low_pu, s.voltage_range.high_pu
        )),
        t(s.load_model.word()),
    ]
}

fn note(text: &str) -> Note {
    Note::new(text)
        .add_author_prefix(false)
        .set_width(320)
        .set_height(120)
}

/// A note (cell comment) on a data row of the written workbook: its sheet, the row's index
/// among that sheet's data rows (0 = the first under the header) and the text.
#[derive(Debug, Clone, PartialEq)]
pub struct RowNote {
    pub sheet: &'static str,
    pub row: usize,
    pub text: String,
}

/// Builds the workbook: blank (`None`, the template) or holding `plant`, with `notes` on
/// the first cell of the rows they name.
fn build(plant: Option<&Plant>, notes: &[RowNote]) -> Result<Workbook, XlsxError> {
    let mut wb = Workbook::new();
    wb.set_properties(
        &DocProperties::new()
            .set_title("overtone input workbook")
            .set_creation_datetime(&ExcelDateTime::from_ymd(2026, 1, 1)?),
    );
    let bold = Format::new().set_bold().set_background_color("#DCE6F0");
    let ws = wb.add_worksheet().set_name("Study")?;
    ws.write_string_with_format(0, 0, "Item", &bold)?;
    ws.write_string_with_format(0, 1, "Value", &bold)?;
    ws.set_column_width(0, 28)?;
    ws.set_column_width(1, 34)?;
    ws.set_freeze_panes(1, 0)?;
    let values = plant.map(study_values);
    for (i, (item, text, check)) in study_items().into_iter().enumerate() {
        let r = i as u32 + 1;
        ws.write_string(r, 0, item)?;
        ws.insert_note(r, 0, &note(text))?;
        if let Some(dv) = validation(check)? {
            ws.add_data_validation(r, 1, r, 1, &dv)?;
        }
        if let Some(v) = values.as_ref().and_then(|v| v.get(i)) {
            write_row(
                ws,
                r,
                &[
                    V::Blank,
                    match v {
                        V::N(x) => V::N(*x),
                        V::T(s) => V::T(s.clone()),
                        V::Blank => V::Blank,
                    },
                ],
            )?;
        }
    }
    for (name, cols) in sheets() {
        let ws = wb.add_worksheet().set_name(name)?;
        ws.set_freeze_panes(1, 0)?;
        for (c, column) in cols.iter().enumerate() {
            let c16 = c as u16;
            ws.write_string_with_format(0, c16, column.header, &bold)?;
            ws.insert_note(0, c16, &note(column.note))?;
            ws.set_column_width(c16, column.width)?;
            if let Some(dv) = validation(column.check)? {
                ws.add_data_validation(1, c16, DATA_ROWS, c16, &dv)?;
            }
        }
        if let Some(p) = plant {
            for (i, row) in rows(p, name).iter().enumerate() {
                write_row(ws, i as u32 + 1, row)?;
            }
            for n in notes.iter().filter(|n| n.sheet == name) {
                ws.insert_note(n.row as u32 + 1, 0, &note(&n.text))?;
            }
        }
    }
    Ok(wb)
}

/// The bytes of `plant`'s input workbook (deterministic: fixed document date).
pub fn plant_workbook(plant: &Plant) -> Result<Vec<u8>, XlsxError> {
    build(Some(plant), &[])?.save_to_buffer()
}

/// The bytes of `plant`'s input workbook with `notes` on the rows they name (provenance of
/// rows a job added).
pub fn plant_workbook_noted(plant: &Plant, notes: &[RowNote]) -> Result<Vec<u8>, XlsxError> {
    build(Some(plant), notes)?.save_to_buffer()
}

/// The bytes of the blank template.
pub fn template_bytes() -> Result<Vec<u8>, XlsxError> {
    build(None, &[])?.save_to_buffer()
}
