//! The linear evaluation of harmonic penetration under `phasor` summation: superposition
//! holds, so no transfer matrix is formed. Per scenario, order and configuration:
//!
//!   V₀ = Z₀·I                       (one sparse solve Y₀·V₀ = I with the kept factors)
//!   V  = V₀ − Z₀[:,E]·X,  (D⁻¹ + Z₀[E,E])·X = V₀[E]
//!
//! (the Woodbury identity for the energized banks E with admittances D, the same matrix the
//! direct path's rank-1 updates form: Z·I = Z₀·I − Z₀[:,E]·(D⁻¹ + Z₀[E,E])⁻¹·Z₀[E,:]·I and
//! Z₀[E,:]·I = V₀[E]). The cost is one solve and O(buses × banks) per order instead of
//! O(buses × injection buses), every bus exact. The currents I carry each configuration's
//! operating angles, so V₀ is solved per configuration.

use num_complex::Complex64;

use super::dense::{bank_admittances, woodbury_solve};
use super::{Ctx, Distortion, abs, background_currents, load_phasors, pcc, phasor_currents};
use crate::solve::HarmonicPoint;
use crate::solve::SolveError;

impl Ctx<'_> {
    /// The results of `chunk`'s configurations in scenario `s`, every bus evaluated.
    pub(super) fn linear_block(
        &self,
        s: usize,
        chunk: &[usize],
    ) -> Result<Vec<Distortion>, SolveError> {
        let net = self.net;
        let (n, nk) = (net.buses.len(), net.banks.len());
        let (no, l) = (self.injections.orders.len(), self.injections.buses.len());
        let nc = self.configurations.len();
        let (mut inj, mut v, mut work) = (Vec::new(), Vec::new(), Vec::new());
        let mut v_mag = vec![0.0; n];
        let mut bank_bg = vec![0.0; nk];
        let mut out = Vec::with_capacity(chunk.len());
        for &c in chunk {
            let mut d = Distortion::zeroed(s, c, n, no, nk);
            let steps = &self.configurations[c].steps;
            let theta = &self.angles[s * nc + c];
            for (o, p) in self.points[s].iter().enumerate() {
                let h = p.order;
                let z0 = p.z0_blocks();
                let k = z0.k;
                let inp = &self.inputs[s][o];
                let (y, energized) = bank_admittances(p, steps);
                // V = V₀ − Z₀[:,E]·X at every bus.
                phasor_currents(inp, h, theta, l, &mut inj);
                p.z0_times(&inj, &mut v, &mut work);
                let mut x: Vec<Complex64> =
                    energized.iter().map(|&b| v[net.banks[b].bus]).collect();
                if !woodbury_solve(z0.bank_bank, k, &y, &energized, &mut x, 1) {
                    return Err(self.singular(s, h));
                }
                for (r, vr) in v.iter_mut().enumerate() {
                    for (&b, xj) in energized.iter().zip(&x) {
                        *vr -= z0.bus_bank[r * k + b] * xj;
                    }
                    v_mag[r] = abs(*vr);
                }
                let supply = abs(inp.pcc_current(&v));
                // The background alone at the bank buses: Z₀[bank, c]·I_N summed, then the
                // same correction.
                bank_bg.iter_mut().for_each(|x| *x = 0.0);
                if !inp.background.is_empty() {
                    background_currents(inp, l, &mut inj);
                    let v0_bank: Vec<Complex64> = (0..k)
                        .map(|b| {
                            z0.bank_inj[b * l..(b + 1) * l]
                                .iter()
                                .zip(&inj)
                                .map(|(z, i)| z * i)
                                .sum()
                        })
                        .collect();
                    let mut xb: Vec<Complex64> = energized.iter().map(|&b| v0_bank[b]).collect();
                    if !woodbury_solve(z0.bank_bank, k, &y, &energized, &mut xb, 1) {
                        return Err(self.singular(s, h));
                    }
                    for (b, slot) in bank_bg.iter_mut().enumerate() {
                        let mut vb = v0_bank[b];
                        for (&e, xj) in energized.iter().zip(&xb) {
                            vb -= z0.bank_bank[b * k + e] * xj;
                        }
                        *slot = abs(vb) * abs(y[b]);
                    }
                }
                let bank_i: Vec<f64> = (net.banks.iter().zip(&y))
                    .map(|(bank, &yb)| v_mag[bank.bus] * abs(yb))
                    .collect();
                self.record(&mut d, o, h, &v_mag, supply, &bank_bg, &bank_i);
                let split = self
                    .linear_pcc(p, inp, (&y, &energized), theta, &mut inj)
                    .ok_or_else(|| self.singular(s, h))?;
                self.record_pcc(&mut d, o, split);
            }
            self.conclude(&mut d);
            out.push(d);
        }
        Ok(out)
    }
}

impl Ctx<'_> {
    /// The PCC's split and bounds of one order and configuration (bank admittances `y` of
    /// the energized banks), from the rows of Z at the PCC's buses; `None` when singular.
    fn linear_pcc(
        &self,
        p: &HarmonicPoint,
        inp: &super::OrderInputs,
        (y, energized): (&[Complex64], &[usize]),
        theta: &[f64],
        inj: &mut Vec<Complex64>,
    ) -> Option<pcc::PccSplit> {
        let mut buses: Vec<usize> = std::iter::once(self.pcc)
            .chain(inp.pcc.iter().map(|&(b, _)| b))
            .collect();
        buses.sort_unstable();
        buses.dedup();
        let rows = rows_now(p, y, energized, &buses)?;
        let row = |b: usize| buses.iter().position(|&q| q == b).unwrap_or(0);
        load_phasors(inp, p.order, theta, p.z0_blocks().l, inj);
        Some(pcc::split(
            inp,
            self.law,
            p.order,
            self.pcc,
            |b, c| rows[row(b)][c],
            inj,
            None,
            self.pcc_units(),
        ))
    }
}

/// Rows of Z (this configuration, per unit) from each bus of `buses` to every injection
/// column: Z[q,:] = Z₀[q,:] − u·Z₀[E,:] with (D⁻¹ + Z₀[E,E])·u = Z₀[E,q] (the Woodbury
/// identity; Z₀ and that matrix are symmetric, Y being reciprocal). `None` when singular.
fn rows_now(
    p: &HarmonicPoint,
    y: &[Complex64],
    energized: &[usize],
    buses: &[usize],
) -> Option<Vec<Vec<Complex64>>> {
    let z0 = p.z0_blocks();
    let (k, l) = (z0.k, z0.l);
    let mut out = Vec::with_capacity(buses.len());
    for &q in buses {
        let mut row = Vec::new();
        p.bus_inj_row(q, &mut row);
        let mut u: Vec<Complex64> = energized.iter().map(|&b| z0.bus_bank[q * k + b]).collect();
        if !woodbury_solve(z0.bank_bank, k, y, energized, &mut u, 1) {
            return None;
        }
        for (&b, uj) in energized.iter().zip(&u) {
            for (r, z) in row.iter_mut().zip(&z0.bank_inj[b * l..(b + 1) * l]) {
                *r -= uj * z;
            }
        }
        out.push(row);
    }
    Some(out)
}
