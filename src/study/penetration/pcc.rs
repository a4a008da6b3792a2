//! What IEEE 519-2014 judges at the PCC, apart from what it does not: the harmonic current
//! across the PCC split into the plant's own emission (its loads, the background off: what
//! clause 5.2's current limits and the TDD apply to) and the part the utility's background
//! drives through the plant (reported, not judged); and under `phasor` summation, beside the
//! stated-angle figure, the worst case over every background angle the Background sheet
//! leaves blank and the arithmetic bound (every term's magnitude added).
//!
//! Worst case over unknown angles: with the known terms summing to the phasor K and the
//! unknown-angle terms to u_1 … u_m (each turning freely), max |K + Σ u_i·e^{jφ_i}| =
//! |K| + Σ |u_i| (the triangle inequality, reached when every term lines up with K); exact,
//! no sweep needed. The arithmetic bound Σ |every term| is above both.

use num_complex::Complex64;
use serde::Serialize;

use super::{OrderInputs, abs, combine};
use crate::model::Summation;

/// The PCC's figures of one order beyond the total, per unit.
#[derive(Debug, Clone, Copy, Default)]
pub(super) struct PccSplit {
    /// The plant's own emission across the PCC (its loads; the background off).
    pub plant: f64,
    /// The background's part alone (the plant's loads off).
    pub background: f64,
    /// `phasor` only: the bounds at the PCC.
    pub bounds: Option<PccBounds>,
}

/// Under `phasor` summation, one order's PCC voltage (% of nominal) and current (A) beside
/// the stated-angle figures: the worst case over the blank background angles (`None` when
/// every background angle is given or there is no background at that order) and the
/// arithmetic bound.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct PccBounds {
    /// The PCC's voltage at the stated angles (blank = 0°), %.
    pub v_stated_percent: f64,
    pub v_worst_angle_percent: Option<f64>,
    pub i_worst_angle_a: Option<f64>,
    pub v_arithmetic_percent: f64,
    pub i_arithmetic_a: f64,
    /// The arithmetic bound of the plant's own emission alone (its loads' terms), A.
    pub i_plant_arithmetic_a: f64,
}

/// A 3-wire part solved in the positive-sequence network beside a zero-sequence order
/// (see `direct.rs`): its current across the PCC (phasor, and by the law) and its voltage at
/// the PCC (phasor).
#[derive(Debug, Clone, Copy, Default)]
pub(super) struct PartAtPcc {
    pub i: Complex64,
    pub i_law: f64,
    pub v: Complex64,
}

/// The split and bounds of order `h` at the PCC bus `pcc` from the transfer impedances
/// `z(bus, column)` of the configuration (per unit), the loads' phasors `load_i` by column
/// (`phasor`), and the 3-wire part when there is one. `amps` and `percent` convert per
/// unit to A at the PCC and % of nominal.
#[allow(clippy::too_many_arguments)]
pub(super) fn split(
    inp: &OrderInputs,
    law: Summation,
    h: f64,
    pcc: usize,
    z: impl Fn(usize, usize) -> Complex64,
    load_i: &[Complex64],
    part: Option<PartAtPcc>,
    units: (f64, f64),
) -> PccSplit {
    let into = |c: usize| inp.pcc_transfer(|b| z(b, c));
    if law != Summation::Phasor {
        let bg = inp.background.iter().zip(&inp.background_own);
        let own = |c: usize, own: bool| into(c) - if own { 1.0 } else { 0.0 };
        let plant = combine(
            law,
            h,
            (inp.loads.iter().map(|&(c, a, _)| abs(into(c)) * a)).chain(part.map(|p| p.i_law)),
        );
        let background = combine(law, h, bg.map(|(&(c, i), &o)| abs(own(c, o)) * abs(i)));
        return PccSplit {
            plant,
            background,
            bounds: None,
        };
    }
    phasor_split(inp, pcc, &z, &into, load_i, part, units)
}

/// [`split`] under `phasor` summation: the stated-angle phasors, the worst case over the
/// blank background angles and the arithmetic bound.
fn phasor_split(
    inp: &OrderInputs,
    pcc: usize,
    z: &impl Fn(usize, usize) -> Complex64,
    into: &impl Fn(usize) -> Complex64,
    load_i: &[Complex64],
    part: Option<PartAtPcc>,
    (amps, percent): (f64, f64),
) -> PccSplit {
    let (mut i_plant, mut v_known) = (Complex64::default(), Complex64::default());
    let (mut v_arith, mut i_arith) = (0.0, 0.0);
    for &(c, _, _) in &inp.loads {
        let (vz, iz) = (z(pcc, c) * load_i[c], into(c) * load_i[c]);
        i_plant += iz;
        v_known += vz;
        v_arith += abs(vz);
        i_arith += abs(iz);
    }
    if let Some(p) = part {
        i_plant += p.i;
        v_known += p.v;
        v_arith += abs(p.v);
        i_arith += abs(p.i);
    }
    let mut i_known = i_plant;
    let i_plant_arith = i_arith;
    let mut v_stated = v_known;
    let (mut i_bg, mut v_free, mut i_free, mut free) = (Complex64::default(), 0.0, 0.0, false);
    let terms = (inp.background.iter().zip(&inp.background_own)).zip(&inp.background_angle_known);
    for ((&(c, i), &own), &known) in terms {
        let (vz, iz) = (z(pcc, c) * i, (into(c) - if own { 1.0 } else { 0.0 }) * i);
        i_bg += iz;
        v_stated += vz;
        v_arith += abs(vz);
        i_arith += abs(iz);
        if known {
            v_known += vz;
            i_known += iz;
        } else {
            v_free += abs(vz);
            i_free += abs(iz);
            free = true;
        }
    }
    PccSplit {
        plant: abs(i_plant),
        background: abs(i_bg),
        bounds: Some(PccBounds {
            v_stated_percent: abs(v_stated) * percent,
            i_plant_arithmetic_a: i_plant_arith * amps,
            v_worst_angle_percent: free.then(|| (abs(v_known) + v_free) * percent),
            i_worst_angle_a: free.then(|| (abs(i_known) + i_free) * amps),
            v_arithmetic_percent: v_arith * percent,
            i_arithmetic_a: i_arith * amps,
        }),
    }
}
