//! Resonance screening: the hand check h_r = √(S_sc / Q_c) at each bank's bus beside the
//! scanned parallel-resonance peak, the characteristic harmonic orders of the plant's loads,
//! and a flag where a peak lies within the resonance margin of one of them.

use serde::Serialize;

use super::{Extremum, Scan};
use crate::model::{LoadType, Plant, Sequence};
use crate::network::{BASE_MVA, Network};
use crate::solve::{Engine, SolveError};
use crate::study::hand::SscBasis;

/// Characteristic harmonic orders of the plant's harmonic-producing loads, ascending, up to
/// `highest`: h = k·p ± 1 for a p-pulse converter (6-pulse with or without reactor and
/// active front end: p = 6; 12-pulse: 12; 18-pulse: 18; textbook), every odd order ≥ 3 for
/// electronic loads (single-phase rectifiers, common practice), and the orders of the
/// spectrum for custom loads or any load given a spectrum, and the orders of the Background
/// sheet (the harmonics the utility already carries).
pub fn characteristic_orders(plant: &Plant, highest: f64) -> Vec<f64> {
    let (mut positive, zero) = sequence_orders(plant, highest);
    for h in zero {
        if !positive.iter().any(|&o| (o - h).abs() < 1e-9) {
            positive.push(h);
        }
    }
    positive.sort_by(f64::total_cmp);
    positive
}

/// The characteristic orders of one harmonic-producing load up to `highest` (see
/// [`characteristic_orders`]), unsorted.
fn load_orders(plant: &Plant, l: &crate::model::Load, highest: f64) -> Vec<f64> {
    let mut orders = Vec::new();
    if let Some(sp) = l.spectrum.as_deref().and_then(|n| plant.spectrum(n)) {
        orders.extend(sp.lines.iter().map(|line| line.order));
        return orders;
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
                orders.push(k * p - 1.0);
                orders.push(k * p + 1.0);
                k += 1.0;
            }
        }
        None => {
            let mut h = 3.0;
            while h <= highest {
                orders.push(h);
                h += 2.0;
            }
        }
    }
    orders
}

/// The characteristic orders each sequence network carries, each ascending: (positive,
/// zero). The positive-sequence network (which also carries the negative-sequence orders)
/// takes every non-triplen order and the triplen orders of 3-wire loads; the zero-sequence
/// network the triplen orders of 4-wire loads and of the Background sheet.
pub fn sequence_orders(plant: &Plant, highest: f64) -> (Vec<f64>, Vec<f64>) {
    let (mut positive, mut zero): (Vec<f64>, Vec<f64>) = (Vec::new(), Vec::new());
    let add = |list: &mut Vec<f64>, h: f64| {
        if h > 1.0 && h <= highest + 1e-9 && !list.iter().any(|&o| (o - h).abs() < 1e-9) {
            list.push(h);
        }
    };
    for l in plant.loads.iter().filter(|l| l.kind.is_harmonic_source()) {
        for h in load_orders(plant, l, highest) {
            match l.sequence_at(h) {
                Sequence::Zero => add(&mut zero, h),
                _ => add(&mut positive, h),
            }
        }
    }
    for b in plant.background.iter().filter(|b| b.voltage_percent > 0.0) {
        match Sequence::of(b.order) {
            Sequence::Zero => add(&mut zero, b.order),
            _ => add(&mut positive, b.order),
        }
    }
    positive.sort_by(f64::total_cmp);
    zero.sort_by(f64::total_cmp);
    (positive, zero)
}

/// The zero-sequence scan of the banks with a zero-sequence path (grounded wye).
pub struct ZeroScan<'a, 'b> {
    pub engine: &'a Engine<'b>,
    /// The zero-sequence network scanned (for its buses without a zero-sequence path).
    pub network: &'a Network,
    pub scan: &'a Scan,
    /// For each configuration of the positive scan, its index in `scan` (the steps of the
    /// banks without a zero-sequence path set to 0).
    pub map: &'a [usize],
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

/// One parallel-resonance peak screened against the characteristic orders.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ScreenedPeak {
    pub peak: Extremum,
    pub nearest_characteristic: Option<f64>,
    /// (h_peak − h_char) / h_char × 100.
    pub margin_percent: Option<f64>,
    /// Within the resonance margin of `nearest_characteristic`.
    pub resonant: bool,
}

impl ScreenedPeak {
    /// Screens `peak` against `chars` with a margin of `margin` percent.
    pub fn new(peak: Extremum, chars: &[f64], margin: f64) -> Self {
        let nearest = chars
            .iter()
            .copied()
            .min_by(|x, y| (x - peak.order).abs().total_cmp(&(y - peak.order).abs()));
        let margin_percent = nearest.map(|h| (peak.order - h) / h * 100.0);
        ScreenedPeak {
            peak,
            nearest_characteristic: nearest,
            margin_percent,
            resonant: margin_percent.is_some_and(|m| m.abs() <= margin),
        }
    }

    /// True when `self` is the worse of two peaks: a resonant peak before a clear one; among
    /// resonant peaks the higher amplification; among clear ones the nearer a
    /// characteristic order (smaller |margin|).
    pub fn worse(&self, other: &ScreenedPeak) -> bool {
        match (self.resonant, other.resonant) {
            (true, false) => true,
            (false, true) => false,
            (true, true) => self.peak.amplification > other.peak.amplification,
            (false, false) => {
                let m = |p: &ScreenedPeak| p.margin_percent.map_or(f64::INFINITY, f64::abs);
                m(self) < m(other)
            }
        }
    }
}

/// The test a scanned maximum of |Z| passes to count as a parallel resonance: the banks
/// raise |Z| there (amplification against no banks above 1), and the phase of Z passes
/// through zero at the peak: either |angle at the peak| < 45°, or the reactance changes
/// from inductive to capacitive between the grid points on either side (a lossless or very
/// sharp peak, whose angle jumps from +90° to −90°). Near one mode
/// Z ≈ R / (1 + j·Q·(h/h₀ − h₀/h)) (circuit theory): the angle is 0 at the mode and ±45° at
/// the half-power orders, so within 45° the zero crossing lies inside the half-power band;
/// a shoulder whose angle stays beyond 45° on one side (an inductive bump between two
/// modes) is not a resonance.
pub fn is_parallel_resonance(peak: &Extremum) -> bool {
    peak.amplification > 1.0 && (peak.angle_deg.abs() < 45.0 || peak.phase_crosses_zero)
}

/// The parallel-resonance peaks of `peaks`, screened, in order.
pub fn screen_peaks(peaks: &[Extremum], chars: &[f64], margin: f64) -> Vec<ScreenedPeak> {
    peaks
        .iter()
        .filter(|p| is_parallel_resonance(p))
        .map(|p| ScreenedPeak::new(*p, chars, margin))
        .collect()
}

/// The worst of `peaks` ([`ScreenedPeak::worse`]; the first of equals).
pub fn worst_peak(peaks: &[ScreenedPeak]) -> Option<ScreenedPeak> {
    let mut worst: Option<ScreenedPeak> = None;
    for p in peaks {
        if worst.is_none_or(|w| p.worse(&w)) {
            worst = Some(*p);
        }
    }
    worst
}

/// One bank in one scenario and configuration: hand check beside scan.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResonanceRow {
    pub scenario: String,
    pub configuration: String,
    pub bank: String,
    pub bus: String,
    pub steps: u32,
    /// Short-circuit power at the bank's bus without banks, MVA: S_sc = S_base / |Z_th(1)|,
    /// from the sources, transformers and cables alone: their series sum on a radial plant
    /// (the engineer's number), the Thevenin impedance of the network of sources,
    /// transformers and cables where several sources or a loop make the path not unique
    /// (see `s_sc_basis`); loads, motors and cable charging left out either way.
    pub s_sc_mva: f64,
    /// How `s_sc_mva` was found.
    #[serde(skip)]
    pub s_sc_basis: crate::study::hand::SscBasis,
    /// The same, named by ids (the JSON's `s_sc_basis`).
    #[serde(rename = "s_sc_basis")]
    pub s_sc_basis_ids: crate::study::hand::SscBasisIds,
    /// Energized kvar on the bank's bus (every bank there, plain and detuned), corrected to
    /// bus voltage: Σ n·Step kvar·(kV_bus / kV_rated)².
    pub q_c_kvar: f64,
    /// The capacitive reactance at fundamental of the steps on the bus of this bank's
    /// detuning, together, ohm: X_C = 1/Σ(n/X_C1).
    pub x_c_ohm: f64,
    /// True when banks of another detuning are energized on the same bus (the hand check
    /// is then the susceptance zero of every group, [`crate::study::hand::resonance_order`]).
    pub mixed: bool,
    /// Hand-check order: √(S_sc / Q_c) for plain steps alone; √(X_C / (|Z_th| + X_L)) for
    /// detuned steps alone; with plain and detuned steps on the bus, the lossless
    /// susceptance zero of them all.
    pub hand_order: f64,
    /// The worst parallel-resonance peak at the bank's bus ([`ScreenedPeak::worse`]): the
    /// verdict's, whose order and characteristic order the reports name.
    pub peak: Option<Extremum>,
    pub nearest_characteristic: Option<f64>,
    /// (h_peak − h_char) / h_char × 100, of `peak`.
    pub margin_percent: Option<f64>,
    /// `RESONANT` when any of `peaks` lies within the margin of a characteristic order.
    pub verdict: Verdict,
    /// Every parallel-resonance peak at the bank's bus ([`is_parallel_resonance`]), each
    /// screened against the characteristic orders of its sequence, ascending in order.
    pub peaks: Vec<ScreenedPeak>,
    /// The order of the peak the hand check explains (the one nearest `hand_order`).
    pub hand_peak_order: Option<f64>,
    /// At a `RESONANT` row, the critical mode at its worst peak: which buses and banks
    /// form it ([`crate::study::modal`]); `None` otherwise.
    pub mode: Option<crate::study::modal::CriticalMode>,
    /// The sequence network scanned: `positive` (which carries the positive- and
    /// negative-sequence orders) or `zero` (triplen orders, grounded-wye banks only).
    pub sequence: Sequence,
}

/// The resonance study of every scenario × configuration × energized bank.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResonanceStudy {
    pub characteristic_orders: Vec<f64>,
    /// The characteristic orders the positive-sequence scan is screened against (every
    /// non-triplen order and the triplens of 3-wire loads).
    pub positive_orders: Vec<f64>,
    /// The characteristic orders the zero-sequence scan is screened against (the triplens
    /// of 4-wire loads and of the background).
    pub zero_orders: Vec<f64>,
    pub margin_percent: f64,
    pub rows: Vec<ResonanceRow>,
    /// The PCC's driving-point peaks per scenario × configuration with a bank energized
    /// (positive sequence), screened like a bank's.
    pub pcc_rows: Vec<PccResonance>,
}

/// The parallel-resonance peaks at the PCC in one scenario and configuration.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PccResonance {
    pub scenario: String,
    pub configuration: String,
    pub bus: String,
    /// The worst of `peaks` ([`ScreenedPeak::worse`]).
    pub peak: Option<ScreenedPeak>,
    pub verdict: Verdict,
    pub peaks: Vec<ScreenedPeak>,
}

impl ResonanceStudy {
    /// The characteristic orders a scan of `sequence` is screened against.
    pub fn orders_of(&self, sequence: Sequence) -> &[f64] {
        if sequence == Sequence::Zero {
            &self.zero_orders
        } else {
            &self.positive_orders
        }
    }

    /// Builds the rows from a scan that includes every bank bus, and from the zero-sequence
    /// scan of the grounded-wye banks when one was run. A grounded-wye bank on a bus with
    /// no zero-sequence path of its own network (no grounded winding or source in its
    /// zero-sequence component: only the bank's neutral) has no zero-sequence row: its scan
    /// there would be the regularizing conductance's, not the plant's. `engine` is the
    /// engine of the network of sources, transformers and cables alone
    /// ([`Network::short_circuit_network`]), whose fundamental Thevenin impedance is the
    /// hand check's S_sc where the path is not unique.
    // Long: the rows of every bank, scenario and configuration, in parallel, with the zero-sequence
    // rows beside.
    pub fn run(
        plant: &Plant,
        net: &Network,
        engine: &Engine<'_>,
        scan: &Scan,
        zero: Option<&ZeroScan<'_, '_>>,
        pcc: usize,
    ) -> Result<ResonanceStudy, SolveError> {
        let chars = characteristic_orders(plant, plant.study.highest_order);
        let margin = plant.study.resonance_margin_percent;
        let mut rows = Vec::new();
        let mut pcc_rows = Vec::new();
        let pcc_scanned = scan.buses.iter().position(|&i| i == pcc);
        let (positive, zero_chars) = sequence_orders(plant, plant.study.highest_order);
        for s in 0..net.scenarios.len() {
            // `engine` is the short-circuit network's: sources, transformers and cables.
            let fundamental = engine.point(1.0, s)?;
            // The engineer's S_sc per bank: the radial path's series sum where there is one.
            let paths: Vec<Option<(Vec<crate::study::hand::PathElement>, f64)>> = net
                .banks
                .iter()
                .map(|bank| {
                    crate::study::hand::radial_path(
                        plant,
                        &net.scenarios[s].name,
                        &net.buses[bank.bus].id,
                    )
                    .map(|p| {
                        let z: num_complex::Complex64 = p
                            .iter()
                            .map(|&e| crate::study::hand::element_z_pu(plant, e))
                            .sum();
                        (p, z.norm())
                    })
                })
                .collect();
            let zero_fundamental = match zero {
                Some(z) => Some(z.scan.fundamental(z.engine, s)?),
                None => None,
            };
            for (c, cfg) in scan.configurations.iter().enumerate() {
                let label = cfg.label(&plant.banks);
                if let Some(sb) = pcc_scanned
                    && !cfg.is_none()
                {
                    let peaks = screen_peaks(&scan.series(s, c, sb).peaks, &positive, margin);
                    let peak = worst_peak(&peaks);
                    pcc_rows.push(PccResonance {
                        scenario: net.scenarios[s].name.clone(),
                        configuration: label.clone(),
                        bus: net.buses[pcc].id.clone(),
                        peak,
                        verdict: match peak {
                            None => Verdict::NoPeak,
                            Some(w) if w.resonant => Verdict::Resonant,
                            Some(_) => Verdict::Clear,
                        },
                        peaks,
                    });
                }
                for (b, bank) in net.banks.iter().enumerate() {
                    let n = cfg.steps[b];
                    if n == 0 {
                        continue;
                    }
                    let (z_th_pu, basis) = match &paths[b] {
                        Some((p, z)) => (*z, SscBasis::Path(p.clone())),
                        None => (fundamental.bank_bus_z0_pu(b).norm(), SscBasis::Network),
                    };
                    let no_peaks = Vec::new();
                    let peaks = scan
                        .buses
                        .iter()
                        .position(|&i| i == bank.bus)
                        .map_or(&no_peaks, |sb| &scan.series(s, c, sb).peaks);
                    rows.push(row(
                        plant,
                        net,
                        (s, b, &cfg.steps),
                        &label,
                        (z_th_pu, basis),
                        peaks,
                        &positive,
                        margin,
                        Sequence::Positive,
                    ));
                    if let (Some(z), Some(f0)) = (zero, &zero_fundamental)
                        && bank.connection.has_zero_path()
                        && z.network.conducts_at(s, bank.bus)
                        && let Some(sb) = z.scan.buses.iter().position(|&i| i == bank.bus)
                    {
                        let z_th_pu = f0.bank_bus_z0_pu(b).norm();
                        let series = z.scan.series(s, z.map[c], sb);
                        rows.push(row(
                            plant,
                            net,
                            (s, b, &cfg.steps),
                            &label,
                            (z_th_pu, SscBasis::Network),
                            &series.peaks,
                            &zero_chars,
                            margin,
                            Sequence::Zero,
                        ));
                    }
                }
            }
        }
        Ok(ResonanceStudy {
            characteristic_orders: chars,
            positive_orders: positive,
            zero_orders: zero_chars,
            margin_percent: margin,
            rows,
            pcc_rows,
        })
    }
}

/// One row: bank `b` in scenario `s` with `steps` of every bank, its Thevenin impedance
/// without banks in the scanned sequence (`z_th_pu`), the scanned peaks at its bus and the
/// characteristic orders of that sequence.
///
/// The hand check counts every step energized on the bank's bus that resonates with it as
/// one capacitance: the banks there of the same detuning (plain with plain, 7 % with 7 %),
/// in the zero sequence only those with a zero-sequence path. X_C = 1/Σ(n/X_C1) and
/// Q_c = Σ n·Step kvar·(kV_bus/kV_rated)².
// Long: one resonance row's figures (hand check, peak, margin, verdict) from one bank's scan.
#[allow(clippy::too_many_arguments)]
fn row(
    plant: &Plant,
    net: &Network,
    (s, b, steps): (usize, usize, &[u32]),
    label: &str,
    (z_th_pu, s_sc_basis): (f64, SscBasis),
    peaks: &[Extremum],
    chars: &[f64],
    margin: f64,
    sequence: Sequence,
) -> ResonanceRow {
    let bank = &net.banks[b];
    let bus = &net.buses[bank.bus];
    let n = steps[b];
    // Every step energized on the bus (in the zero sequence, those with a zero-sequence
    // path), grouped by detuning: (X_C together, X_L together) per group, per unit.
    let on_bus: Vec<usize> = net
        .banks
        .iter()
        .enumerate()
        .filter(|(o, ob)| {
            ob.bus == bank.bus
                && steps[*o] > 0
                && (sequence != Sequence::Zero || ob.connection.has_zero_path())
        })
        .map(|(o, _)| o)
        .collect();
    let mut groups: Vec<(f64, f64)> = Vec::new(); // (p, Σ n/X_C1)
    for &o in &on_bus {
        let ob = &net.banks[o];
        let y = f64::from(steps[o]) / ob.xc_step_pu;
        match groups.iter_mut().find(|g| (g.0 - ob.p).abs() <= 1e-9) {
            Some(g) => g.1 += y,
            None => groups.push((ob.p, y)),
        }
    }
    let group = groups
        .iter()
        .position(|g| (g.0 - bank.p).abs() <= 1e-9)
        .unwrap_or(0);
    let reactances: Vec<(f64, f64)> = groups.iter().map(|g| (1.0 / g.1, g.0 / g.1)).collect();
    let xc_pu = reactances.get(group).map_or(f64::NAN, |g| g.0);
    let q_c_kvar: f64 = on_bus
        .iter()
        .map(|&o| plant.banks[o].kvar_at(steps[o], bus.kv))
        .sum();
    let hand_order = if reactances.is_empty() {
        f64::NAN
    } else {
        crate::study::hand::resonance_order(z_th_pu, &reactances, group)
    };
    let screened = screen_peaks(peaks, chars, margin);
    let hand_peak_order = screened
        .iter()
        .map(|p| p.peak.order)
        .min_by(|x, y| (x - hand_order).abs().total_cmp(&(y - hand_order).abs()));
    let worst = worst_peak(&screened);
    let verdict = match worst {
        None => Verdict::NoPeak,
        Some(w) if w.resonant => Verdict::Resonant,
        Some(_) => Verdict::Clear,
    };
    ResonanceRow {
        scenario: net.scenarios[s].name.clone(),
        configuration: label.to_string(),
        bank: bank.id.clone(),
        bus: bus.id.clone(),
        steps: n,
        s_sc_mva: BASE_MVA / z_th_pu,
        s_sc_basis_ids: s_sc_basis.ids(plant),
        s_sc_basis,
        q_c_kvar,
        x_c_ohm: xc_pu * bus.z_base_ohm,
        mixed: groups.len() > 1,
        hand_order,
        peak: worst.map(|w| w.peak),
        nearest_characteristic: worst.and_then(|w| w.nearest_characteristic),
        margin_percent: worst.and_then(|w| w.margin_percent),
        verdict,
        peaks: screened,
        hand_peak_order,
        mode: None,
        sequence,
    }
}
