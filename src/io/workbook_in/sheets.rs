//! The element sheets of the input contract: one model element per data row, in row order,
//! so element i of each list comes from data row i of its sheet.

use super::defaults::Defaults;
use super::table::{Diagnostics, Table, normalize, shown};
use crate::model::*;

/// Default reactor X/R at fundamental (input contract, sheet `Capacitors`).
pub const DEFAULT_REACTOR_Q: f64 = 50.0;

pub fn buses(t: &Table, d: &mut Diagnostics) -> Vec<Bus> {
    t.rows
        .iter()
        .map(|r| Bus {
            id: t.id(r, "Bus", d),
            nominal_kv: t.required_number(r, "Nominal kV", "a positive number", d),
            description: t.text(r, "Description", d).unwrap_or_default(),
            neutral_rating_a: t.number(r, "Neutral rating (A)", "a positive number", d),
        })
        .collect()
}

pub fn sources(t: &Table, d: &mut Diagnostics, defaults: &mut Defaults) -> Vec<Source> {
    if !t.has("Short-circuit MVA") && !t.has("Short-circuit kA") {
        d.error(
            &t.sheet,
            "A1".into(),
            "the header row needs a \"Short-circuit MVA\" or a \"Short-circuit kA\" column".into(),
        );
    }
    t.rows
        .iter()
        .map(|r| {
            let mva = t.number(r, "Short-circuit MVA", "a positive number", d);
            let ka = t.number(r, "Short-circuit kA", "a positive number", d);
            let short_circuit = match (mva, ka) {
                (Some(m), None) => ShortCircuit::Mva(m),
                (None, Some(k)) => ShortCircuit::Ka(k),
                (Some(m), Some(_)) => {
                    d.error(
                        &t.sheet,
                        t.cell(r, "Short-circuit kA"),
                        "give either \"Short-circuit MVA\" or \"Short-circuit kA\", not both".into(),
                    );
                    ShortCircuit::Mva(m)
                }
                (None, None) => {
                    d.error(
                        &t.sheet,
                        t.cell(r, "Short-circuit MVA"),
                        "\"Short-circuit MVA\" or \"Short-circuit kA\" is required, found both blank".into(),
                    );
                    ShortCircuit::Mva(f64::NAN)
                }
            };
            Source {
                id: t.id(r, "Source", d),
                bus: t.id(r, "Bus", d),
                scenario: t.text(r, "Scenario", d),
                short_circuit,
                x_over_r: t.required_number(r, "X/R", "a positive number", d),
                voltage_pu: t
                    .number(r, "Voltage (pu)", "a voltage in pu between 0.5 and 1.5", d)
                    .unwrap_or_else(|| {
                        defaults.note("Sources", "Voltage (pu)", "1.0", t.default_at(r, "Voltage (pu)"));
                        DEFAULT_SOURCE_VOLTAGE_PU
                    }),
                zero_short_circuit_mva: t.number(r, "Zero-sequence MVA", "a positive number", d),
                zero_x_over_r: t.number(r, "Zero-sequence X/R", "a positive number", d),
                kind: source_kind(t, r, d, defaults),
            }
        })
        .collect()
}

/// A source's `Kind` (blank: utility, noted).
fn source_kind(
    t: &Table,
    r: &super::table::Row,
    d: &mut Diagnostics,
    defaults: &mut Defaults,
) -> SourceKind {
    match t.text(r, "Kind", d) {
        None => {
            defaults.note("Sources", "Kind", "utility", t.default_at(r, "Kind"));
            SourceKind::Utility
        }
        Some(s) => match normalize(&s).as_str() {
            "utility" => SourceKind::Utility,
            "generator" => SourceKind::Generator,
            _ => {
                d.error(
                    &t.sheet,
                    t.cell(r, "Kind"),
                    format!("\"Kind\" must be utility or generator, found \"{s}\""),
                );
                SourceKind::Utility
            }
        },
    }
}

pub fn transformers(
    t: &Table,
    d: &mut Diagnostics,
    defaults: &mut Defaults,
    frequency_hz: f64,
) -> Vec<Transformer> {
    t.rows
        .iter()
        .map(|r| Transformer {
            connection: super::sequence::vector_group(t, r, d, defaults, frequency_hz),
            zero_impedance_percent: t.number(
                r,
                "Zero-sequence impedance (%)",
                "a positive percentage",
                d,
            ),
            id: t.id(r, "Transformer", d),
            hv_bus: t.id(r, "HV bus", d),
            lv_bus: t.id(r, "LV bus", d),
            kva: t.required_number(r, "kVA", "a positive number", d),
            impedance_percent: t.required_number(r, "Impedance (%)", "a positive number", d),
            x_over_r: t.required_number(r, "X/R", "a positive number", d),
            in_service: t.yes_no(r, "In service", d).unwrap_or_else(|| {
                defaults.note(
                    "Transformers",
                    "In service",
                    "yes",
                    t.default_at(r, "In service"),
                );
                true
            }),
        })
        .collect()
}

/// A whole number ≥ `min` from a cell, or the default.
fn count(
    t: &Table,
    r: &super::table::Row,
    header: &str,
    min: u32,
    d: &mut Diagnostics,
) -> Option<u32> {
    let v = t.number(r, header, "a whole number", d)?;
    if v.is_nan() {
        return Some(0);
    }
    if v.fract() != 0.0 || v < f64::from(min) || v > 1_000_000.0 {
        d.error(
            &t.sheet,
            t.cell(r, header),
            format!(
                "\"{header}\" must be a whole number of at least {min}, found {}",
                shown(t.raw(r, header))
            ),
        );
        return Some(0);
    }
    Some(v as u32)
}

pub fn cables(t: &Table, d: &mut Diagnostics, defaults: &mut Defaults) -> Vec<Cable> {
    t.rows
        .iter()
        .map(|r| Cable {
            id: t.id(r, "Cable", d),
            from_bus: t.id(r, "From bus", d),
            to_bus: t.id(r, "To bus", d),
            length_m: t.required_number(r, "Length (m)", "a positive number", d),
            r_ohm_per_km: t.required_number(r, "R (ohm/km)", "a number of zero or more", d),
            x_ohm_per_km: t.required_number(r, "X (ohm/km)", "a number of zero or more", d),
            c_uf_per_km: t
                .number(r, "C (uF/km)", "a number of zero or more", d)
                .unwrap_or(0.0),
            runs: count(t, r, "Runs", 1, d).unwrap_or_else(|| {
                defaults.note("Cables", "Runs", "1", t.default_at(r, "Runs"));
                1
            }),
            r0_ohm_per_km: t.number(r, "R0 (ohm/km)", "a number of zero or more", d),
            x0_ohm_per_km: t.number(r, "X0 (ohm/km)", "a number of zero or more", d),
        })
        .collect()
}

/// Parses `Studied steps`: `all`, a list `0,2,4`, a range `1-3`, or a mix `0,2-4`.
pub fn studied_steps(text: &str, steps: u32) -> Result<Vec<u32>, String> {
    let t = text.trim();
    if t.eq_ignore_ascii_case("all") {
        return Ok((0..=steps).collect());
    }
    let mut out = Vec::new();
    for item in t.split([',', ';']) {
        let item = item.trim();
        let parse = |s: &str| s.trim().parse::<u32>().map_err(|_| ());
        let (a, b) = match item.split_once('-') {
            Some((a, b)) => (parse(a), parse(b)),
            None => (parse(item), parse(item)),
        };
        match (a, b) {
            (Ok(a), Ok(b)) if a <= b => out.extend(a..=b),
            _ => {
                return Err(format!(
                    "\"Studied steps\" must be all, a list like 0,2,4 or a range like 1-3, found \"{text}\""
                ));
            }
        }
    }
    out.sort_unstable();
    out.dedup();
    if let Some(&n) = out.iter().find(|&&n| n > steps) {
        return Err(format!(
            "\"Studied steps\" names {n} steps but the bank has {steps}, found \"{text}\""
        ));
    }
    Ok(out)
}

// Long: one Capacitors column per line, each checked at its cell.
pub fn banks(
    t: &Table,
    d: &mut Diagnostics,
    defaults: &mut Defaults,
    bus_kv: &dyn Fn(&str) -> Option<f64>,
) -> Vec<CapacitorBank> {
    t.rows
        .iter()
        .map(|r| {
            let steps = count(t, r, "Steps", 1, d).unwrap_or_else(|| {
                defaults.note("Capacitors", "Steps", "1", t.default_at(r, "Steps"));
                1
            });
            let detuning = t.number(r, "Detuning (%)", "a percentage between 0 and 100", d);
            let tuned = t.number(r, "Tuned order", "a harmonic order above 1", d);
            let reactor = match (detuning, tuned) {
                (Some(p), Some(_)) if p != 0.0 => {
                    d.error(
                        &t.sheet,
                        t.cell(r, "Tuned order"),
                        "give either \"Detuning (%)\" or \"Tuned order\", not both".into(),
                    );
                    Reactor::None
                }
                (_, Some(order)) => Reactor::Tuned { order },
                (Some(p), None) if p != 0.0 => Reactor::Detuning { percent: p },
                _ => Reactor::None,
            };
            let status = match t.text(r, "Status", d) {
                None => {
                    defaults.note(
                        "Capacitors",
                        "Status",
                        "proposed",
                        t.default_at(r, "Status"),
                    );
                    BankStatus::Proposed
                }
                Some(s) => match normalize(&s).as_str() {
                    "existing" => BankStatus::Existing,
                    "proposed" => BankStatus::Proposed,
                    _ => {
                        d.error(
                            &t.sheet,
                            t.cell(r, "Status"),
                            format!("\"Status\" must be existing or proposed, found \"{s}\""),
                        );
                        BankStatus::Proposed
                    }
                },
            };
            let studied = match t.raw(r, "Studied steps") {
                calamine::Data::Float(f) if f.fract() == 0.0 && *f >= 0.0 => Ok(format!("{f}")),
                calamine::Data::Int(i) => Ok(i.to_string()),
                _ => t.text(r, "Studied steps", d).ok_or(()),
            };
            let studied_steps = match studied {
                Err(()) => (0..=steps).collect(),
                Ok(text) => studied_steps(&text, steps).unwrap_or_else(|msg| {
                    d.error(&t.sheet, t.cell(r, "Studied steps"), msg);
                    (0..=steps).collect()
                }),
            };
            let bus = t.id(r, "Bus", d);
            let connection = super::sequence::bank_connection(t, r, d, defaults, bus_kv(&bus));
            CapacitorBank {
                connection,
                id: t.id(r, "Bank", d),
                bus,
                rated_kv: t.required_number(r, "Rated kV", "a positive number", d),
                step_kvar: t.required_number(r, "Step kvar", "a positive number", d),
                steps,
                reactor,
                reactor_q: t
                    .number(r, "Reactor Q", "a positive number", d)
                    .unwrap_or_else(|| {
                        if reactor != Reactor::None {
                            defaults.note(
                                "Capacitors",
                                "Reactor Q",
                                "50",
                                t.default_at(r, "Reactor Q"),
                            );
                        }
                        DEFAULT_REACTOR_Q
                    }),
                status,
                studied_steps,
                inrush_uh: t.number(
                    r,
                    "Inrush inductance (uH)",
                    "a positive inductance in uH",
                    d,
                ),
                trapped_charge_pu: t
                    .number(r, "Trapped charge (pu)", "a number from -1 to 1", d)
                    .unwrap_or(0.0),
                inrush_limit_ka: t.number(
                    r,
                    "Switch inrush limit (kA)",
                    "a positive peak current in kA",
                    d,
                ),
            }
        })
        .collect()
}

/// The load type named in a cell, by the contract's matching rule.
pub fn load_type(text: &str) -> Option<LoadType> {
    LoadType::from_text(text)
}

pub fn loads(t: &Table, d: &mut Diagnostics, defaults: &mut Defaults) -> Vec<Load> {
    t.rows
        .iter()
        .map(|r| {
            let spectrum = t.text(r, "Spectrum", d);
            // A stand-in type for a bad cell that raises no second error on the row.
            let stand_in = if spectrum.is_some() {
                LoadType::SixPulseDrive
            } else {
                LoadType::Linear
            };
            let kind = match t.text(r, "Type", d) {
                Some(s) => load_type(&s).unwrap_or_else(|| {
                    let names: Vec<&str> = LoadType::ALL.iter().map(|t| t.label()).collect();
                    d.error(
                        &t.sheet,
                        t.cell(r, "Type"),
                        format!(
                            "\"Type\" must be one of {}, found \"{s}\"",
                            names.join(", ")
                        ),
                    );
                    stand_in
                }),
                None => {
                    d.error(
                        &t.sheet,
                        t.cell(r, "Type"),
                        "\"Type\" is required, found a blank cell".into(),
                    );
                    stand_in
                }
            };
            let pf = t.number(r, "Power factor", "a number above 0 and at most 1", d);
            Load {
                id: t.id(r, "Load", d),
                bus: t.id(r, "Bus", d),
                kind,
                kw: t.required_number(r, "kW", "a number of zero or more", d),
                power_factor: pf.unwrap_or_else(|| {
                    let v = kind.default_power_factor();
                    defaults.note(
                        "Loads",
                        "Power factor",
                        "0.85 (linear, motor) or 0.95 (converters)",
                        t.default_at(r, "Power factor"),
                    );
                    v
                }),
                quantity: t
                    .number(r, "Quantity", "a number of zero or more", d)
                    .unwrap_or_else(|| {
                        defaults.note("Loads", "Quantity", "1", t.default_at(r, "Quantity"));
                        1.0
                    }),
                load_factor: t
                    .number(r, "Load factor", "a number from 0 to 1", d)
                    .unwrap_or_else(|| {
                        defaults.note("Loads", "Load factor", "1", t.default_at(r, "Load factor"));
                        1.0
                    }),
                spectrum,
                wiring: wiring(t, r, d, defaults),
            }
        })
        .collect()
}

/// A load's `Connection` (`None` when blank: the type's default, noted).
fn wiring(
    t: &Table,
    r: &super::table::Row,
    d: &mut Diagnostics,
    defaults: &mut Defaults,
) -> Option<Wiring> {
    match t.text(r, "Connection", d) {
        None => {
            defaults.note(
                "Loads",
                "Connection",
                "4-wire (electronic) or 3-wire (other types)",
                t.default_at(r, "Connection"),
            );
            None
        }
        Some(s) => match normalize(&s).as_str() {
            "3wire" | "3w" | "threewire" => Some(Wiring::ThreeWire),
            "4wire" | "4w" | "fourwire" => Some(Wiring::FourWire),
            _ => {
                d.error(
                    &t.sheet,
                    t.cell(r, "Connection"),
                    format!("\"Connection\" must be 3-wire or 4-wire, found \"{s}\""),
                );
                None
            }
        },
    }
}

/// Spectra grouped by name in order of first appearance; each line checked at its cell
/// (order above 1 and listed once per spectrum, magnitude zero or more).
pub fn spectra(t: &Table, d: &mut Diagnostics, phasor: bool) -> Vec<Spectrum> {
    let mut out: Vec<Spectrum> = Vec::new();
    if phasor && !t.has("Angle (deg)") && !t.rows.is_empty() {
        d.error(
            &t.sheet,
            "A1".into(),
            "the header row needs an \"Angle (deg)\" column: \"phasor\" summation needs every spectrum line's angle".into(),
        );
    }
    let phasor = phasor && t.has("Angle (deg)");
    for r in &t.rows {
        let name = t.id(r, "Spectrum", d);
        let order = t.required_number(r, "Order", "a harmonic order above 1", d);
        if order.is_finite() && order <= 1.0 {
            d.error(
                &t.sheet,
                t.cell(r, "Order"),
                format!("\"Order\" must be a harmonic order above 1, found {order}"),
            );
        }
        let magnitude = t.required_number(r, "Magnitude (%)", "a number of zero or more", d);
        if magnitude < 0.0 {
            d.error(
                &t.sheet,
                t.cell(r, "Magnitude (%)"),
                format!("\"Magnitude (%)\" must be a number of zero or more, found {magnitude}"),
            );
        }
        let angle = t.number(r, "Angle (deg)", "an angle in degrees", d);
        if angle.is_none() && phasor {
            d.error(
                &t.sheet,
                t.cell(r, "Angle (deg)"),
                format!(
                    "\"Angle (deg)\" is blank for order {order} of spectrum \"{name}\": \"phasor\" summation needs every spectrum line's angle"
                ),
            );
        }
        let i = match out.iter().position(|s| s.name == name) {
            Some(i) => i,
            None => {
                out.push(Spectrum {
                    name: name.clone(),
                    lines: Vec::new(),
                });
                out.len() - 1
            }
        };
        if out[i].lines.iter().any(|l| l.order == order) {
            d.error(
                &t.sheet,
                t.cell(r, "Order"),
                format!("order {order} appears twice in spectrum \"{name}\""),
            );
        }
        out[i].lines.push(SpectrumLine {
            order,
            magnitude_percent: magnitude,
            angle_deg: angle,
        });
    }
    out
}
