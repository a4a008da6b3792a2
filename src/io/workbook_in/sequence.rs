//! Version 2 columns and sheet of the sequence model: transformer and bank `Connection`
//! and the `Background` sheet.

use super::defaults::Defaults;
use super::table::{Diagnostics, Row, Table, normalize};
use crate::model::{BackgroundLine, BankConnection, VectorGroup};

/// A transformer's `Connection` (IEC 60076-1 vector group); blank = the contract's
/// default for the frequency, noted as a default.
pub fn vector_group(
    t: &Table,
    r: &Row,
    d: &mut Diagnostics,
    defaults: &mut Defaults,
    frequency_hz: f64,
) -> Option<VectorGroup> {
    match t.text(r, "Connection", d) {
        None => {
            let g = VectorGroup::default_for(frequency_hz);
            defaults.note(
                "Transformers",
                "Connection",
                "Dyn1 at 60 Hz, Dyn11 at 50 Hz (common practice)",
                t.default_at(r, "Connection"),
            );
            Some(g)
        }
        Some(text) => match VectorGroup::parse(&text) {
            Some(g) => Some(g),
            None => {
                d.error(
                    &t.sheet,
                    t.cell(r, "Connection"),
                    format!(
                        "\"Connection\" must be an IEC 60076-1 vector group such as Dyn11, Dyn1, YNyn0, Yy0, Dd0, YNd1 (windings D, Y, YN, Z, ZN then d, y, yn, z, zn and a clock number 0 to 11 that the windings allow), found \"{text}\""
                    ),
                );
                None
            }
        },
    }
}

/// A bank's `Connection`: `delta`, `wye` or `wye grounded`; blank = delta up to 1 kV, wye
/// above (by the bank's bus), noted as a default.
pub fn bank_connection(
    t: &Table,
    r: &Row,
    d: &mut Diagnostics,
    defaults: &mut Defaults,
    bus_kv: Option<f64>,
) -> Option<BankConnection> {
    match t.text(r, "Connection", d) {
        None => {
            defaults.note(
                "Capacitors",
                "Connection",
                "delta up to 1 kV, wye above (common practice)",
                t.default_at(r, "Connection"),
            );
            bus_kv.map(BankConnection::default_for)
        }
        Some(text) => match normalize(&text).as_str() {
            "delta" | "d" => Some(BankConnection::Delta),
            "wye" | "y" | "star" | "wyeungrounded" | "ungroundedwye" => Some(BankConnection::Wye),
            "wyegrounded" | "groundedwye" | "yn" | "stargrounded" => {
                Some(BankConnection::WyeGrounded)
            }
            _ => {
                d.error(
                    &t.sheet,
                    t.cell(r, "Connection"),
                    format!("\"Connection\" must be delta, wye or wye grounded, found \"{text}\""),
                );
                None
            }
        },
    }
}

/// The `Background` sheet, one line per row.
pub fn background(t: &Table, d: &mut Diagnostics) -> Vec<BackgroundLine> {
    t.rows
        .iter()
        .map(|r| BackgroundLine {
            source: t.id(r, "Source", d),
            order: t.required_number(r, "Order", "a harmonic order above 1", d),
            voltage_percent: t.required_number(
                r,
                "Voltage (%)",
                "a percentage of nominal voltage from 0 to 100",
                d,
            ),
            angle_deg: t.number(r, "Angle (deg)", "an angle in degrees", d),
        })
        .collect()
}
