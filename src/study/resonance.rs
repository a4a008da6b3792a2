//! Resonance screening: the hand check h_r = √(S_sc / Q_c) at each bank's bus beside the
//! scanned parallel-resonance peak, the characteristic harmonic orders of the plant's loads,
//! and a flag where a peak lies within the resonance margin of one of them.

use serde::Serialize;

use super::{Extremum, Scan};
use crate::model::{LoadType, Plant};
use crate::network::{BASE_MVA, Network};
use crate::solve::{Engine, SolveError};

/// Characteristic harmonic orders of the plant's harmonic-producing loads, ascending, up to
/// `highest`: h = k·p ± 1 for a p-pulse converter (6-pulse with or without reactor and
/// active front end: p = 6; 12-pulse: 12; 18-pulse: 18; textbook), every odd order ≥ 3 for
/// electronic loads (single-phase rectifiers, common practice), and the orders of the
/// spectrum for custom loads or any load given a spectrum.
pub fn characteristic_orders(plant: &Plant, highest: f64) -> Vec<f64> {
    let mut orders: Vec<f64> = Vec::new();
    let mut add = |h: f64| {
        if h > 1.0 && h <= highest + 1e-9 && !orders.iter().any(|&o| (o - h).abs() < 1e-9) {
            orders.push(h);
        }
    };
    for l in plant.loads.iter().filter(|l| l.kind.is_harmonic_source()) {
        if let Some(sp) = l.spectrum.as_deref().and_then(|n| plant.spectrum(n)) {
            for line in &sp.lines {
                add(line.order);
            }
            continue;
        }
        let pulses = match l.kind {
            LoadType::TwelvePulseDrive => Some(12.0),
            LoadType::EighteenPulseDrive => Some(18.0),
            LoadType::Electronic => None,
            _ => Some(6.0),
        };
        match pulses {
            Some(p) => {
                let mut k = 1.0;
                while k * p - 1.0 <= highest {
                    add(k * p - 1.0);
                    add(k * p + 1.0);
                    k += 1.0;
                }
            }
            None => {
                let mut h = 3.0;
                while h <= highest {
                    add(h);
                    h += 2.0;
                }
            }
        }
    }
    orders.sort_by(f64::total_cmp);
    orders
}

/// The screening verdict of one bank's resonance in one configuration.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Verdict {
    /// The scanned peak lies within the resonance margin of a characteristic order.
    Resonant,
    /// A peak exists, outside the margin of every characteristic order.
    Clear,
    /// No parallel-resonance peak at the bank's bus within the scanned range.
    NoPeak,
}

impl Verdict {
    /// The word printed in reports.
    pub fn word(self) -> &'static str {
        match self {
            Verdict::Resonant => "RESONANT",
            Verdict::Clear => "clear",
            Verdict::NoPeak => "no peak",
        }
    }
}

/// One bank in one scenario and configuration: hand check beside scan.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResonanceRow {
    pub scenario: String,
    pub configuration: String,
    pub bank: String,
    pub bus: String,
    pub steps: u32,
    /// Short-circuit power at the bank's bus without banks, MVA: S_sc = kV² / |Z_th(1)|.
    pub s_sc_mva: f64,
    /// Energized kvar corrected to bus voltage: n·Step kvar·(kV_bus / kV_rated)².
    pub q_c_kvar: f64,
    /// Hand-check order: √(S_sc / Q_c) for a plain bank; √(X_C / (|Z_th| + X_L)) with a
    /// series reactor (the same law with the reactor's inductance added to the system's).
    pub hand_order: f64,
    /// The scanned peak at the bank's bus nearest the hand-check order.
    pub peak: Option<Extremum>,
    pub nearest_characteristic: Option<f64>,
    /// (h_peak − h_char) / h_char × 100.
    pub margin_percent: Option<f64>,
    pub verdict: Verdict,
}

/// The resonance study of every scenario × configuration × energized bank.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResonanceStudy {
    pub characteristic_orders: Vec<f64>,
    pub margin_percent: f64,
    pub rows: Vec<ResonanceRow>,
}

impl ResonanceStudy {
    /// Builds the rows from a scan that includes every bank bus.
    pub fn run(
        plant: &Plant,
        net: &Network,
        engine: &Engine<'_>,
        scan: &Scan,
    ) -> Result<ResonanceStudy, SolveError> {
        let chars = characteristic_orders(plant, plant.study.highest_order);
        let margin = plant.study.resonance_margin_percent;
        let mut rows = Vec::new();
        for (s, scenario) in net.scenarios.iter().enumerate() {
            let fundamental = scan.fundamental(engine, s)?;
            for (c, cfg) in scan.configurations.iter().enumerate() {
                let label = cfg.label(&plant.banks);
                for (b, bank) in net.banks.iter().enumerate() {
                    let n = cfg.steps[b];
                    if n == 0 {
                        continue;
                    }
                    let bus = &net.buses[bank.bus];
                    let z_th_pu = fundamental.bank_bus_z0_pu(b).norm();
                    let xc_pu = bank.xc_step_pu / f64::from(n);
                    let hand_order = (xc_pu / (z_th_pu + bank.p * xc_pu)).sqrt();
                    let peak = scan
                        .buses
                        .iter()
                        .position(|&i| i == bank.bus)
                        .and_then(|sb| {
                            scan.series(s, c, sb)
                                .peaks
                                .iter()
                                .min_by(|x, y| {
                                    (x.order - hand_order)
                                        .abs()
                                        .total_cmp(&(y.order - hand_order).abs())
                                })
                                .copied()
                        });
                    let nearest = peak.and_then(|p| {
                        chars
                            .iter()
                            .copied()
                            .min_by(|x, y| (x - p.order).abs().total_cmp(&(y - p.order).abs()))
                    });
                    let margin_percent = match (peak, nearest) {
                        (Some(p), Some(h)) => Some((p.order - h) / h * 100.0),
                        _ => None,
                    };
                    let verdict = match (peak, margin_percent) {
                        (None, _) => Verdict::NoPeak,
                        (Some(_), Some(m)) if m.abs() <= margin => Verdict::Resonant,
                        _ => Verdict::Clear,
                    };
                    let model = &plant.banks[b];
                    rows.push(ResonanceRow {
                        scenario: scenario.name.clone(),
                        configuration: label.clone(),
                        bank: bank.id.clone(),
                        bus: bus.id.clone(),
                        steps: n,
                        s_sc_mva: BASE_MVA / z_th_pu,
                        q_c_kvar: model.kvar_at(n, bus.kv),
                        hand_order,
                        peak,
                        nearest_characteristic: nearest,
                        margin_percent,
                        verdict,
                    });
                }
            }
        }
        Ok(ResonanceStudy {
            characteristic_orders: chars,
            margin_percent: margin,
            rows,
        })
    }
}
