//! The Input sheet: the plant as read, sheet by sheet (with the sequence model's
//! connections as studied, defaults resolved), and the reader's warnings.

use rust_xlsxwriter::{Format, Worksheet, XlsxError};

use super::super::Provenance;
use super::super::writer::{Cell, n, on, row, t};
use crate::jobs::check::CheckResults;
use crate::model::{Reactor, ZeroPath};

/// A zero-sequence path in words.
fn zero_path_words(z: ZeroPath) -> &'static str {
    match z {
        ZeroPath::Series => "through (YNyn)",
        ZeroPath::ShuntHv => "to ground at HV",
        ZeroPath::ShuntLv => "to ground at LV",
        ZeroPath::ShuntBoth => "to ground at both",
        ZeroPath::Open => "none",
    }
}

/// Where the Input sheet put the rows that other sheets' formulas read (0-based rows of
/// the first data row of each section; row i of a section is that plus i).
#[derive(Debug, Clone, Copy, Default)]
pub(in crate::present::review) struct InputCells {
    pub buses: u32,
    pub sources: u32,
    pub transformers: u32,
    pub cables: u32,
}

pub(in crate::present::review) fn input(
    ws: &mut Worksheet,
    res: &CheckResults,
    prov: &Provenance,
) -> Result<InputCells, XlsxError> {
    let mut cells = InputCells::default();
    let p = &res.plant;
    let f = p.study.frequency_hz;
    let connections: Vec<&str> = res
        .network
        .banks
        .iter()
        .map(|b| b.connection.label())
        .collect();
    let bold = Format::new().set_bold();
    let mut r = 0u32;
    let section = |ws: &mut Worksheet,
                   r: &mut u32,
                   title: &str,
                   heads: &[&str],
                   rows: Vec<Vec<Cell>>|
     -> Result<(), XlsxError> {
        ws.write_string_with_format(*r, 0, title, &Format::new().set_bold().set_font_size(12))?;
        *r += 1;
        let f = super::super::writer::header_format();
        for (c, h) in heads.iter().enumerate() {
            ws.write_string_with_format(*r, c as u16, *h, &f)?;
        }
        *r += 1;
        for cells in rows {
            row(ws, *r, &cells)?;
            *r += 1;
        }
        *r += 1;
        Ok(())
    };
    cells.buses = r + 2;
    section(
        ws,
        &mut r,
        "Buses",
        &["Bus", "Nominal kV", "Description"],
        p.buses
            .iter()
            .map(|b| vec![t(&b.id), n(b.nominal_kv, "0.###"), t(&b.description)])
            .collect(),
    )?;
    cells.sources = r + 2;
    section(
        ws,
        &mut r,
        "Sources",
        &[
            "Source",
            "Bus",
            "Scenario",
            "Short-circuit MVA (normalized)",
            "X/R",
            "Zero-sequence MVA",
            "Zero-sequence X/R",
            "Voltage (pu)",
            "Kind",
        ],
        p.sources
            .iter()
            .map(|s| {
                let kv = p
                    .buses
                    .iter()
                    .find(|b| b.id == s.bus)
                    .map_or(f64::NAN, |b| b.nominal_kv);
                vec![
                    t(&s.id),
                    t(&s.bus),
                    t(s.scenario.as_deref().unwrap_or("(every scenario)")),
                    n(s.short_circuit_mva(kv), "0.0"),
                    n(s.x_over_r, "0.0"),
                    n(
                        s.zero_short_circuit_mva.unwrap_or(s.short_circuit_mva(kv)),
                        "0.0",
                    ),
                    n(s.zero_x_over_r.unwrap_or(s.x_over_r), "0.0"),
                    n(s.voltage_pu, "0.000"),
                    t(s.kind.label()),
                ]
            })
            .collect(),
    )?;
    cells.transformers = r + 2;
    section(
        ws,
        &mut r,
        "Transformers",
        &[
            "Transformer",
            "HV bus",
            "LV bus",
            "kVA",
            "Impedance (%)",
            "X/R",
            "In service",
            "Connection",
            "Zero-sequence path",
            "Zero-sequence impedance (%)",
        ],
        p.transformers
            .iter()
            .map(|x| {
                vec![
                    t(&x.id),
                    t(&x.hv_bus),
                    t(&x.lv_bus),
                    n(x.kva, "0"),
                    n(x.impedance_percent, "0.00"),
                    n(x.x_over_r, "0.0"),
                    t(if x.in_service { "yes" } else { "no" }),
                    t(x.vector_group(f).label()),
                    t(zero_path_words(x.vector_group(f).zero_path())),
                    n(
                        x.zero_impedance_percent.unwrap_or(x.impedance_percent),
                        "0.00",
                    ),
                ]
            })
            .collect(),
    )?;
    cells.cables = r + 2;
    section(
        ws,
        &mut r,
        "Cables",
        &[
            "Cable",
            "From bus",
            "To bus",
            "Length (m)",
            "R (ohm/km)",
            "X (ohm/km)",
            "C (uF/km)",
            "Runs",
        ],
        p.cables
            .iter()
            .map(|c| {
                vec![
                    t(&c.id),
                    t(&c.from_bus),
                    t(&c.to_bus),
                    n(c.length_m, "0.0"),
                    n(c.r_ohm_per_km, "0.0000"),
                    n(c.x_ohm_per_km, "0.0000"),
                    n(c.c_uf_per_km, "0.000"),
                    n(f64::from(c.runs), "0"),
                ]
            })
            .collect(),
    )?;
    section(
        ws,
        &mut r,
        "Capacitors",
        &[
            "Bank",
            "Bus",
            "Rated kV",
            "Step kvar",
            "Steps",
            "Reactor",
            "Reactor Q",
            "Status",
            "Studied steps",
            "Inrush inductance (uH)",
            "Connection",
            "Trapped charge (pu)",
            "Switch inrush limit (kA)",
        ],
        p.banks
            .iter()
            .enumerate()
            .map(|(i, b)| {
                vec![
                    t(&b.id),
                    t(&b.bus),
                    n(b.rated_kv, "0.000"),
                    n(b.step_kvar, "0.0"),
                    n(f64::from(b.steps), "0"),
                    t(match b.reactor {
                        Reactor::None => "plain".to_string(),
                        Reactor::Detuning { percent } => format!("detuned {percent} %"),
                        Reactor::Tuned { order } => format!("tuned at {order}"),
                    }),
                    n(b.reactor_q, "0"),
                    t(format!("{:?}", b.status).to_lowercase()),
                    t(b.studied_steps
                        .iter()
                        .map(u32::to_string)
                        .collect::<Vec<_>>()
                        .join(",")),
                    on(b.inrush_uh, "0.0"),
                    t(connections.get(i).copied().unwrap_or("")),
                    n(b.trapped_charge_pu, "0.00"),
                    on(b.inrush_limit_ka, "0.00"),
                ]
            })
            .collect(),
    )?;
    section(
        ws,
        &mut r,
        "Loads",
        &[
            "Load",
            "Bus",
            "Type",
            "kW",
            "Power factor",
            "Quantity",
            "Load factor",
            "Spectrum used",
            "Connection",
        ],
        p.loads
            .iter()
            .map(|l| {
                let used = res
                    .penetration
                    .injections
                    .spectra
                    .iter()
                    .find(|s| s.load == l.id)
                    .map_or_else(|| "-".to_string(), |s| s.name.clone());
                vec![
                    t(&l.id),
                    t(&l.bus),
                    t(l.kind.label()),
                    n(l.kw, "0.0"),
                    n(l.power_factor, "0.00"),
                    n(l.quantity, "0.##"),
                    n(l.load_factor, "0.00"),
                    t(used),
                    t(match l.wiring {
                        Some(w) => w.label().to_string(),
                        None => format!("{} (default)", l.wiring().label()),
                    }),
                ]
            })
            .collect(),
    )?;
    section(
        ws,
        &mut r,
        "Spectra (Spectra sheet)",
        &["Spectrum", "Order", "Magnitude (%)", "Angle (deg)"],
        p.spectra
            .iter()
            .flat_map(|s| {
                s.lines.iter().map(move |l| {
                    vec![
                        t(&s.name),
                        n(l.order, "0.##"),
                        n(l.magnitude_percent, "0.00"),
                        l.angle_deg.map_or_else(|| t(""), |a| n(a, "0.0")),
                    ]
                })
            })
            .collect(),
    )?;
    section(
        ws,
        &mut r,
        "Background (Background sheet: utility-side harmonic EMF behind each source)",
        &["Source", "Order", "Voltage (%)", "Angle (deg)"],
        p.background
            .iter()
            .map(|b| {
                vec![
                    t(&b.source),
                    n(b.order, "0.##"),
                    n(b.voltage_percent, "0.00"),
                    b.angle_deg.map_or_else(|| t("0 (blank)"), |a| n(a, "0.0")),
                ]
            })
            .collect(),
    )?;
    ws.write_string_with_format(
        r,
        0,
        "Reader warnings (defaults applied, unknown columns)",
        &bold,
    )?;
    r += 1;
    if prov.warnings.is_empty() {
        ws.write_string(r, 0, "none")?;
    }
    for w in &prov.warnings {
        ws.write_string(r, 0, w.to_string())?;
        r += 1;
    }
    for c in 0..14 {
        ws.set_column_width(c, 16)?;
    }
    ws.set_landscape();
    ws.set_print_fit_to_pages(1, 0);
    Ok(cells)
}
