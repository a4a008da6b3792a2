//! What every configuration of a scenario and order shares, worked out once: V₀ at every
//! bus, each bus's reference, the bounds' coefficients, the column groups.

use std::sync::OnceLock;

use num_complex::Complex64;
use rayon::prelude::*;

use super::groups::{Groups, Law};
use super::{Prepared, always_summed};
use crate::study::penetration::{Ctx, abs, magnitude_sum};

impl Prepared {
    /// Prepares the bounded evaluation of `ctx`'s scenarios and orders.
    pub(in crate::study::penetration) fn new(ctx: &Ctx<'_>) -> Prepared {
        let ns = ctx.points.len();
        let n = ctx.net.buses.len();
        let always = always_summed(ctx.net, ctx.pcc);
        let mut always_at = vec![None; n];
        for (i, &q) in always.iter().enumerate() {
            always_at[q] = Some(i);
        }
        // A second bound beside V₀ + δ: from the exact value at a reference bus q,
        //   V_r ≤ V_q + Σ_c |Z_rc − Z_qc|·w_c
        //       ≤ V_q + S_rq + Σ_j |Z₀_rj − Z₀_qj|·W_j,   S_rq = Σ_c |Z₀_rc − Z₀_qc|·w_c
        // (the same two triangle inequalities on Z_r − Z_q = (Z₀_r − Z₀_q) − (Z₀_r,E −
        // Z₀_q,E)·P). On a radial plant a bus below a bank bus shares its transfer
        // impedances to everything upstream, so S_rq holds only the local injections.
        // The reference q of each bus: among the exact buses, the two nearest by the bank
        // columns alone (Σ_j |Z₀_rj − Z₀_qj|, k terms), then the one with the smaller S_rq
        // (l terms): the bound holds for any q, the choice only makes it tight. Each bus's
        // row of Z₀ is read (or, on a lean point, solved) once, here.
        struct PerOrder {
            v0: Vec<f64>,
            refs: Vec<(usize, f64)>,
            groups: Groups,
            loads: Vec<(usize, f64)>,
        }
        let mut v0 = Vec::with_capacity(ns);
        let mut reference: Vec<Vec<Vec<(usize, f64)>>> = Vec::with_capacity(ns);
        let mut groups = Vec::with_capacity(ns);
        let mut loads = Vec::with_capacity(ns);
        for s in 0..ns {
            let per: Vec<PerOrder> = ctx.points[s]
                .par_iter()
                .enumerate()
                .map(|(o, p)| {
                    let inp = &ctx.inputs[s][o];
                    let load_terms: Vec<(usize, f64)> =
                        inp.loads.iter().map(|&(c, a, _)| (c, a)).collect();
                    let bg_terms: Vec<(usize, f64)> =
                        inp.background.iter().map(|&(c, i)| (c, abs(i))).collect();
                    let t: Vec<(usize, f64)> =
                        load_terms.iter().chain(&bg_terms).copied().collect();
                    let z0 = p.z0_blocks();
                    let k = z0.k;
                    let kept: Vec<Vec<Complex64>> = always
                        .iter()
                        .map(|&q| {
                            let mut row = Vec::new();
                            p.bus_inj_row(q, &mut row);
                            row
                        })
                        .collect();
                    let bg_own: Vec<(usize, f64, bool)> =
                        (bg_terms.iter().zip(&inp.background_own))
                            .map(|(&(c, i), &own)| (c, i, own))
                            .collect();
                    let grouped = Groups::new(
                        Law::new(ctx.law, p.order),
                        &load_terms,
                        &bg_own,
                        &kept,
                        z0.bank_inj,
                        k,
                        z0.l,
                    );
                    let mut row = Vec::new();
                    let mut vs = Vec::with_capacity(z0.n);
                    let mut refs = Vec::with_capacity(z0.n);
                    for r in 0..z0.n {
                        p.bus_inj_row_once(r, &mut row);
                        vs.push(magnitude_sum(ctx.law, p.order, inp, |c| abs(row[c])));
                        // The two nearest (the earlier of equal ones first).
                        let mut near: [Option<(f64, usize)>; 2] = [None, None];
                        for (qi, &q) in always.iter().enumerate() {
                            let d: f64 = (0..k)
                                .map(|j| abs(z0.bus_bank[r * k + j] - z0.bus_bank[q * k + j]))
                                .sum();
                            let closer = |x: Option<(f64, usize)>| x.is_none_or(|x| d < x.0);
                            if closer(near[0]) {
                                near[1] = near[0];
                                near[0] = Some((d, qi));
                            } else if closer(near[1]) {
                                near[1] = Some((d, qi));
                            }
                        }
                        let pcc_at = always_at[ctx.pcc].unwrap_or(0);
                        refs.push(
                            near.iter()
                                .flatten()
                                .map(|&(_, qi)| {
                                    let sum: f64 =
                                        t.iter().map(|&(c, w)| abs(row[c] - kept[qi][c]) * w).sum();
                                    (qi, sum)
                                })
                                .min_by(|a, b| a.1.total_cmp(&b.1))
                                .unwrap_or((pcc_at, f64::INFINITY)),
                        );
                    }
                    PerOrder {
                        v0: vs,
                        refs,
                        groups: grouped,
                        loads: load_terms,
                    }
                })
                .collect();
            let (mut vss, mut rss, mut gs, mut ls) =
                (Vec::new(), Vec::new(), Vec::new(), Vec::new());
            for x in per {
                vss.push(x.v0);
                rss.push(x.refs);
                gs.push(x.groups);
                ls.push(x.loads);
            }
            v0.push(vss);
            reference.push(rss);
            groups.push(gs);
            loads.push(ls);
        }
        let mut abs_bank = Vec::with_capacity(ns);
        let mut abs_near = Vec::with_capacity(ns);
        for (s, refs) in reference.iter().enumerate() {
            let (mut ab, mut an) = (Vec::new(), Vec::new());
            for (o, p) in ctx.points[s].iter().enumerate() {
                let z0 = p.z0_blocks();
                let k = z0.k;
                let r_of: &Vec<(usize, f64)> = &refs[o];
                let n = z0.n;
                ab.push(
                    (0..k * n)
                        .map(|i| abs(z0.bus_bank[(i % n) * k + i / n]))
                        .collect::<Vec<f64>>(),
                );
                an.push(
                    (0..k * n)
                        .map(|i| {
                            let (j, r) = (i / n, i % n);
                            let q = always[r_of[r].0];
                            abs(z0.bus_bank[r * k + j] - z0.bus_bank[q * k + j])
                        })
                        .collect::<Vec<f64>>(),
                );
            }
            abs_bank.push(ab);
            abs_near.push(an);
        }
        let splits = (0..ns)
            .map(|s| {
                (0..ctx.points[s].len())
                    .map(|_| (0..n).map(|_| OnceLock::new()).collect())
                    .collect()
            })
            .collect();
        let no = ctx.points.first().map_or(0, Vec::len);
        let limit = (0..no)
            .map(|o| {
                (0..n)
                    .map(|r| match ctx.limits[r][o] {
                        Some(lp) if lp > 0.0 => (1.0 / lp, lp),
                        Some(lp) => (0.0, lp),
                        None => (0.0, f64::INFINITY),
                    })
                    .collect()
            })
            .collect();
        Prepared {
            limit,
            v0,
            always,
            always_at,
            reference,
            groups,
            loads,
            splits,
            abs_bank,
            abs_near,
        }
    }
}
