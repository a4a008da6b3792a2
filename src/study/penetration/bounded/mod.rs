//! The bounded evaluation of harmonic penetration under magnitude summation: every figure
//! that is reported is exact, and the buses that cannot be the worst are ruled out by a
//! proven bound instead of being summed.
//!
//! With the energized banks E (admittances D = diag(y_b·n_b)), the transfer impedances of a
//! configuration are Z = Z₀ − Z₀[:,E]·P with P = (D⁻¹ + Z₀[E,E])⁻¹·Z₀[E,:] (the Woodbury
//! identity; the depth-first rank-1 updates of the direct path compute the same matrix).
//! A bus's magnitude sum V_r = ‖(|Z_rc|·w_c)_c‖_α (α ≥ 1: arithmetic α = 1, IEC 61000-3-6
//! α = 1, 1.4 or 2) therefore lies within
//!
//!   |V_r − V₀_r| ≤ ‖(|Z_rc − Z₀_rc|·w_c)_c‖_α ≤ Σ_c |Σ_j Z₀_rj·P_jc|·w_c
//!                ≤ Σ_j |Z₀_rj|·W_j,   W_j = Σ_c |P_jc|·w_c
//!
//! (the reverse triangle inequality for the ℓ_α norm, ‖x‖_α ≤ ‖x‖₁, then the triangle
//! inequality): V₀_r is computed once per scenario and order, W once per configuration and
//! order, and the bound costs |E| products per bus instead of one magnitude per injection
//! bus. The PCC, the bank buses and the source buses are always summed exactly (their
//! figures are reported); a configuration's worst THD bus, worst individual-harmonic bus
//! and whether any in-plant bus is above a limit are then decided by summing exactly
//! every bus whose upper bound reaches the best exact value (or the limit).
//!
//! The exact sums run over groups of injection columns whose transfer impedances are
//! proportional ([`groups`]): on a radial site the always-summed rows cost one term per
//! bus of the tree that joins them, not one per converter bus.

mod groups;
mod prepare;

use std::sync::OnceLock;

use num_complex::Complex64;

use super::dense::{bank_admittances, woodbury_solve};
use super::{
    Ctx, Distortion, Individual, abs, amps_per_pu, bus_above, individual_key, update_worst,
};
use crate::solve::SolveError;
use groups::{Groups, Law, RowSplit};

/// A result of the always-summed buses alone ([`super::Evaluation::BankBuses`]): the
/// worst buses and `in_plant_above` among them, every other bus NaN and `None`.
fn always_only(mut d: Distortion, evaluated: Vec<bool>, ctx: &Ctx<'_>) -> Distortion {
    let thd_limit = ctx.thd_limit;
    let argmax = |d: &Distortion, f: &dyn Fn(&Distortion, usize) -> f64| {
        (0..evaluated.len())
            .filter(|&r| evaluated[r])
            .max_by(|&a, &b| f(d, a).total_cmp(&f(d, b)))
            .unwrap_or(ctx.pcc)
    };
    d.worst_thd_bus = argmax(&d, &|d, r| d.thd_percent[r] / thd_limit[r]);
    d.worst_individual_bus = argmax(&d, &|d, r| individual_key(d.worst[r]));
    d.in_plant_above = (0..evaluated.len())
        .any(|r| r != ctx.pcc && evaluated[r] && bus_above(&d, r, thd_limit[r]));
    for (r, &ev) in evaluated.iter().enumerate() {
        if !ev {
            d.thd_percent[r] = f64::NAN;
            d.worst[r] = None;
        }
    }
    d.evaluated = Some(evaluated);
    d
}

/// Relative slack on the bounds, far above rounding (1e-15) and far below any figure
/// printed, so that rounding never rules out a bus that the exact sum would keep.
const SLACK: f64 = 1e-9;

/// What every configuration of a scenario and order shares.
pub(super) struct Prepared {
    /// Per scenario and order: V₀ at every bus without banks, per unit.
    v0: Vec<Vec<Vec<f64>>>,
    /// Buses always summed exactly: the PCC, the bank buses and the source buses.
    always: Vec<usize>,
    /// Per bus: its position in `always`.
    always_at: Vec<Option<usize>>,
    /// Per scenario and order, per bus: the position in `always` of the always-exact bus q
    /// nearest it in transfer impedance and S_rq = Σ_c |Z₀_rc − Z₀_qc|·w_c (see
    /// [`Prepared::new`]).
    reference: Vec<Vec<Vec<(usize, f64)>>>,
    /// Per scenario and order: the injection columns grouped ([`groups`]) and the load
    /// terms (column, |I|).
    groups: Vec<Vec<Groups>>,
    loads: Vec<Vec<Vec<(usize, f64)>>>,
    /// Per scenario, order and bus: how a candidate bus sums the groups, made when first
    /// needed (the candidates of one configuration are mostly those of the next).
    splits: Vec<Vec<Vec<OnceLock<RowSplit>>>>,
    /// Per scenario and order, k×n bank-major: |Z₀_rj| and |Z₀_rj − Z₀_qj| (q the bus's
    /// reference), the bounds' coefficients, which no configuration changes.
    abs_bank: Vec<Vec<Vec<f64>>>,
    abs_near: Vec<Vec<Vec<f64>>>,
    /// Per order and bus: 1/limit of the individual harmonic (0 without one) and the limit
    /// (+∞ without one), for the bounds' running figures.
    limit: Vec<Vec<(f64, f64)>>,
}

/// The buses always summed exactly: the PCC and its neighbours (the far ends of its ties
/// to the utility among them), the bank buses and the source buses (sorted).
pub(super) fn always_summed(net: &crate::network::Network, pcc: usize) -> Vec<usize> {
    let neighbours = (net.branches.iter())
        .filter(|b| b.from == pcc || b.to == pcc)
        .flat_map(|b| [b.from, b.to]);
    let mut always: Vec<usize> = std::iter::once(pcc)
        .chain(neighbours)
        .chain(net.banks.iter().map(|b| b.bus))
        .chain(net.sources.iter().map(|s| s.bus))
        .collect();
    always.sort_unstable();
    always.dedup();
    always
}

/// One order of one configuration: the energized banks and Q = M·Z₀[E,p_g] at every
/// group's representative p_g (M = (D⁻¹ + Z₀[E,E])⁻¹).
struct OrderState {
    energized: Vec<usize>,
    /// |E|×G, row-major.
    q: Vec<Complex64>,
}

/// The exact sums of the candidate buses of one configuration, per unit, n×orders (NaN
/// where not summed), and per bus whether any is.
struct Known {
    v: Vec<f64>,
    touched: Vec<bool>,
}

/// t_g = Z₀[r,E]·Q_g for every group: what the energized banks take from bus `r`'s
/// transfer impedance to each representative.
fn corrections(z0_r_bank: &[Complex64], st: &OrderState, ng: usize, t: &mut Vec<Complex64>) {
    t.clear();
    t.resize(ng, Complex64::default());
    for (j, &b) in st.energized.iter().enumerate() {
        let g = z0_r_bank[b];
        for (x, q) in t.iter_mut().zip(&st.q[j * ng..(j + 1) * ng]) {
            *x += g * q;
        }
    }
}

/// A bus's THD and worst individual harmonic from its magnitude per order, as the direct
/// path accumulates them.
fn finish_bus(orders: &[f64], limits: &[Option<f64>], r: usize, v: &[f64], d: &mut Distortion) {
    let mut thd = 0.0;
    let mut worst = None;
    for (o, &vm) in v.iter().enumerate() {
        let v_pct = vm * 100.0;
        thd += v_pct * v_pct;
        update_worst(
            &mut worst,
            Individual {
                order: orders[o],
                v_percent: v_pct,
                limit_percent: limits[o],
            },
        );
    }
    d.thd_percent[r] = thd.sqrt();
    d.worst[r] = worst;
}

impl Prepared {
    /// The results of `chunk`'s configurations in scenario `s`.
    pub(super) fn block(
        &self,
        ctx: &Ctx<'_>,
        s: usize,
        chunk: &[usize],
    ) -> Result<Vec<Distortion>, SolveError> {
        chunk
            .iter()
            .map(|&c| self.configuration(ctx, s, c))
            .collect()
    }

    /// The exact magnitude sum of a bus outside the always-summed ones at order `o`.
    fn sum_bus(&self, ctx: &Ctx<'_>, s: usize, o: usize, r: usize, st: &OrderState) -> f64 {
        let p = &ctx.points[s][o];
        let gr = &self.groups[s][o];
        let split = self.splits[s][o][r].get_or_init(|| {
            let mut row = Vec::new();
            p.bus_inj_row(r, &mut row);
            RowSplit::new(gr, Law::new(ctx.law, p.order), &self.loads[s][o], &row)
        });
        let z0 = p.z0_blocks();
        let mut t = Vec::new();
        corrections(
            &z0.bus_bank[r * z0.k..(r + 1) * z0.k],
            st,
            gr.groups.len(),
            &mut t,
        );
        split.sum(Law::new(ctx.law, p.order), &t)
    }

    // Long: the bounded evaluation of one configuration shares its Woodbury factors, bounds and
    // candidate lists across every step; split, they would travel as a dozen arguments through the
    // hot path.
    fn configuration(&self, ctx: &Ctx<'_>, s: usize, c: usize) -> Result<Distortion, SolveError> {
        let net = ctx.net;
        let n = net.buses.len();
        let nk = net.banks.len();
        let points = &ctx.points[s];
        let no = points.len();
        let na = self.always.len();
        let steps = &ctx.configurations[c].steps;
        let pcc_amps = amps_per_pu(net.buses[ctx.pcc].kv);
        let bank_amps: Vec<f64> = net
            .banks
            .iter()
            .map(|b| amps_per_pu(net.buses[b.bus].kv))
            .collect();
        let mut d = Distortion::zeroed(s, c, n, no, nk);
        // Per order and bus: the upper bound of 100·V (with slack), order-major no×n; per bus
        // whether the bound is exact (no energized bank reaches it).
        let mut hi = vec![0.0f64; n * no];
        // The same bounds accumulated per bus as the THD and individual-harmonic passes
        // read them while nothing is summed at the bus yet: Σ hi², the largest
        // individual key, any order above its limit.
        let mut thd_acc = vec![0.0f64; n];
        let mut key_acc = vec![0.0f64; n];
        let mut over = vec![false; n];
        let mut exact = vec![true; n];
        let mut states: Vec<OrderState> = Vec::with_capacity(no);
        // Per always-summed bus (by position), per order: its exact V.
        let mut exact_v: Vec<Vec<f64>> = vec![Vec::with_capacity(no); na];
        let mut rows: Vec<Complex64> = Vec::new(); // na × G: the always rows by group
        let mut t = Vec::new();
        let mut w_full = vec![0.0f64; nk];
        let (mut delta, mut near) = (vec![0.0f64; n], vec![0.0f64; n]);
        for (o, p) in points.iter().enumerate() {
            let h = p.order;
            let law = Law::new(ctx.law, h);
            let z0 = p.z0_blocks();
            let k = z0.k;
            let inp = &ctx.inputs[s][o];
            let gr = &self.groups[s][o];
            let ng = gr.groups.len();
            let v0 = &self.v0[s][o];
            let abs_bank = &self.abs_bank[s][o];
            let abs_near = &self.abs_near[s][o];
            let (y, energized) = bank_admittances(p, steps);
            let mut q = Vec::with_capacity(energized.len() * ng);
            for &b in &energized {
                q.extend_from_slice(&gr.z_bank[b * ng..(b + 1) * ng]);
            }
            if !woodbury_solve(z0.bank_bank, k, &y, &energized, &mut q, ng) {
                return Err(ctx.singular(s, h));
            }
            let st = OrderState { energized, q };
            // The always-exact buses' rows by group. At an energized bank's bus the row is
            // Q_j/y_j: Z[E,:] = Z₀[E,:] − Z₀[E,E]·M·Z₀[E,:] = (I − Z₀[E,E]·M)·Z₀[E,:]
            // = D⁻¹·M·Z₀[E,:] (M = (D⁻¹ + Z₀[E,E])⁻¹), no subtraction.
            rows.clear();
            for (qi, &r) in self.always.iter().enumerate() {
                match st.energized.iter().position(|&b| net.banks[b].bus == r) {
                    Some(j) => {
                        let inv = 1.0 / y[st.energized[j]];
                        rows.extend(st.q[j * ng..(j + 1) * ng].iter().map(|x| x * inv));
                    }
                    None => {
                        corrections(&z0.bus_bank[r * k..(r + 1) * k], &st, ng, &mut t);
                        rows.extend(
                            gr.z_always[qi * ng..(qi + 1) * ng]
                                .iter()
                                .zip(&t)
                                .map(|(z, x)| z - x),
                        );
                    }
                }
                let row = &rows[qi * ng..(qi + 1) * ng];
                let total: f64 = gr
                    .groups
                    .iter()
                    .zip(row)
                    .map(|(g, z)| law.group(abs(*z), g.w1, g.wa))
                    .sum();
                exact_v[qi].push(law.finish(total));
            }
            // W_j = Σ_c |P_jc|·w_c with P_j = y_j·Z[E_j,:]: |y_j| times the ℓ1 sum of the
            // bank bus's row; then the bound at every bus.
            w_full.iter_mut().for_each(|w| *w = 0.0);
            for &b in &st.energized {
                let qi = self.always_at[net.banks[b].bus].unwrap_or(0);
                let l1: f64 = gr
                    .groups
                    .iter()
                    .zip(&rows[qi * ng..(qi + 1) * ng])
                    .map(|(g, z)| abs(*z) * g.w1)
                    .sum();
                w_full[b] = abs(y[b]) * l1;
            }
            // Under `always_only` no other bus is bounded.
            if !ctx.always_only {
                // δ_r = Σ_j |Z₀_rj|·W_j and the same with |Z₀_rj − Z₀_qj|, bank by bank over
                // every bus; then each bus's bound and its running figures.
                delta.iter_mut().for_each(|x| *x = 0.0);
                near.iter_mut().for_each(|x| *x = 0.0);
                for &b in &st.energized {
                    let wb = w_full[b];
                    let (ab, an) = (&abs_bank[b * n..(b + 1) * n], &abs_near[b * n..(b + 1) * n]);
                    for r in 0..n {
                        delta[r] += ab[r] * wb;
                        near[r] += an[r] * wb;
                    }
                }
                let now: Vec<f64> = exact_v
                    .iter()
                    .map(|v| v.last().copied().unwrap_or(f64::INFINITY))
                    .collect();
                let refs = &self.reference[s][o];
                let limit = &self.limit[o];
                let hi_o = &mut hi[o * n..(o + 1) * n];
                for r in 0..n {
                    if delta[r] > 0.0 {
                        exact[r] = false;
                    }
                    let (qi, s_rq) = refs[r];
                    let via_q = now[qi] + s_rq + near[r];
                    let bound = (v0[r] + delta[r]).min(via_q) * (1.0 + SLACK) * 100.0;
                    hi_o[r] = bound;
                    thd_acc[r] += bound * bound;
                    let (inv, lp) = limit[r];
                    key_acc[r] = key_acc[r].max((bound * inv).max(bound * 1e-12));
                    over[r] |= bound > lp;
                }
            }
            // The current across the PCC, by group: into(g) = Σ c_b·Z[b, p_g] over the
            // PCC's flow functional.
            // The plant's own part (load groups) and the background's, apart.
            let (mut plant, mut background) = (0.0, 0.0);
            for (g, grp) in gr.groups.iter().enumerate() {
                let into = inp.pcc_transfer(|b| rows[self.always_at[b].unwrap_or(0) * ng + g]);
                match grp.background {
                    None => plant += law.group(abs(into), grp.w1, grp.wa),
                    Some(i) => {
                        background += law.term(abs(into - if grp.own { 1.0 } else { 0.0 }) * i)
                    }
                }
            }
            d.pcc_current_a[o] = law.finish(plant + background) * pcc_amps;
            d.pcc_plant_current_a[o] = law.finish(plant) * pcc_amps;
            d.pcc_background_current_a[o] = law.finish(background) * pcc_amps;
            for (b, bank) in net.banks.iter().enumerate() {
                let y_bank = abs(y[b]);
                let qi = self.always_at[bank.bus].unwrap_or(0);
                let vb = *exact_v[qi].last().unwrap_or(&0.0);
                d.bank_voltage_percent[b][o] = vb * 100.0;
                d.bank_current_a[b][o] = vb * y_bank * bank_amps[b];
                if !inp.background.is_empty() {
                    let total: f64 = gr
                        .groups
                        .iter()
                        .zip(&rows[qi * ng..(qi + 1) * ng])
                        .filter_map(|(g, z)| g.background.map(|i| law.term(abs(*z) * i)))
                        .sum();
                    let a = law.finish(total) * y_bank * bank_amps[b];
                    d.bank_background_rms_a[b] += a * a;
                }
            }
            states.push(st);
        }
        for b in &mut d.bank_background_rms_a {
            *b = b.sqrt();
        }
        // Exact per-bus figures: from the rows for the always-exact buses, from V₀ where no
        // bank reaches the bus, by summing on demand for the candidates.
        let mut evaluated = vec![false; n];
        let orders: Vec<f64> = points.iter().map(|p| p.order).collect();
        let finish = |r: usize, v: &[f64], d: &mut Distortion, ev: &mut [bool]| {
            finish_bus(&orders, &ctx.limits[r], r, v, d);
            ev[r] = true;
        };
        for (qi, &r) in self.always.iter().enumerate() {
            let v = std::mem::take(&mut exact_v[qi]);
            finish(r, &v, &mut d, &mut evaluated);
        }
        if ctx.always_only {
            return Ok(always_only(d, evaluated, ctx));
        }
        for (r, &ex) in exact.iter().enumerate() {
            if ex && self.always_at[r].is_none() {
                let v: Vec<f64> = (0..no).map(|o| self.v0[s][o][r]).collect();
                finish(r, &v, &mut d, &mut evaluated);
            }
        }
        // Candidates are summed order by order, the orders with the largest bound first,
        // and dropped as soon as their bound (exact where summed, bounded elsewhere) falls
        // below the best exact value: a bus is either summed at every order (exact) or
        // proven not to matter.
        let mut known = Known {
            v: vec![f64::NAN; n * no],
            touched: vec![false; n],
        };
        let sum_at = |r: usize, o: usize, known: &mut Known| -> f64 {
            let i = r * no + o;
            if known.v[i].is_nan() {
                known.v[i] = self.sum_bus(ctx, s, o, r, &states[o]);
                known.touched[r] = true;
            }
            known.v[i]
        };
        let value = |r: usize, o: usize, known: &Known| {
            let k = known.v[r * no + o];
            if k.is_nan() { hi[o * n + r] } else { k * 100.0 }
        };
        let thd_limit = ctx.thd_limit;
        let thd_bound = |r: usize, known: &Known| {
            if !known.touched[r] {
                return thd_acc[r].sqrt() / thd_limit[r];
            }
            (0..no)
                .map(|o| value(r, o, known).powi(2))
                .sum::<f64>()
                .sqrt()
                / thd_limit[r]
        };
        let key_bound = |r: usize, known: &Known| {
            if !known.touched[r] {
                return key_acc[r];
            }
            (0..no)
                .map(|o| {
                    let v = value(r, o, known);
                    let ratio = ctx.limits[r][o]
                        .filter(|&lp| lp > 0.0)
                        .map_or(0.0, |lp| v / lp);
                    ratio.max(v * 1e-12)
                })
                .fold(0.0, f64::max)
        };
        // Sums the orders of bus `r` (largest bound first) while `keep(bound)` holds; true
        // when every order was summed.
        let pursue = |r: usize, known: &mut Known, keep: &dyn Fn(usize, &Known) -> bool| -> bool {
            // Largest bound first, equal ones in order (an unstable sort of distinct keys).
            let mut by: Vec<(f64, usize)> = (0..no).map(|o| (hi[o * n + r], o)).collect();
            by.sort_unstable_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
            for (_, o) in by {
                if !keep(r, known) {
                    return false;
                }
                sum_at(r, o, known);
            }
            true
        };
        let complete = |r: usize, known: &Known, d: &mut Distortion, ev: &mut [bool]| {
            let v: Vec<f64> = (0..no).map(|o| known.v[r * no + o]).collect();
            finish_bus(&orders, &ctx.limits[r], r, &v, d);
            ev[r] = true;
        };
        let thd_ratio = |d: &Distortion, r: usize| d.thd_percent[r] / thd_limit[r];
        let key = |d: &Distortion, r: usize| individual_key(d.worst[r]);
        let best_of = |d: &Distortion, ev: &[bool], f: &dyn Fn(&Distortion, usize) -> f64| {
            (0..n)
                .filter(|&r| ev[r])
                .map(|r| f(d, r))
                .fold(f64::NEG_INFINITY, f64::max)
        };
        for (bound, f) in [
            (
                &thd_bound as &dyn Fn(usize, &Known) -> f64,
                &thd_ratio as &dyn Fn(&Distortion, usize) -> f64,
            ),
            (&key_bound, &key),
        ] {
            // Only the buses whose bound reaches the best exact value can be visited (the
            // best only grows): sorted, largest bound first.
            let mut best = best_of(&d, &evaluated, f);
            let first: Vec<f64> = (0..n).map(|r| bound(r, &known)).collect();
            let mut order: Vec<usize> = (0..n)
                .filter(|&r| !evaluated[r] && first[r] >= best)
                .collect();
            order.sort_unstable_by(|&a, &b| first[b].total_cmp(&first[a]).then(a.cmp(&b)));
            for r in order {
                if first[r] < best {
                    break;
                }
                if evaluated[r] {
                    continue;
                }
                if pursue(r, &mut known, &|r, k| bound(r, k) >= best) {
                    complete(r, &known, &mut d, &mut evaluated);
                    best = best.max(f(&d, r));
                }
            }
        }
        // Any in-plant bus above a limit: decided by the exact sums where a bound allows it.
        let above = |d: &Distortion, r: usize| bus_above(d, r, thd_limit[r]);
        let may = |r: usize, k: &Known| {
            thd_bound(r, k) > 1.0
                || if k.touched[r] {
                    (0..no).any(|o| ctx.limits[r][o].is_some_and(|lp| value(r, o, k) > lp))
                } else {
                    over[r]
                }
        };
        let mut in_plant = (0..n).any(|r| r != ctx.pcc && evaluated[r] && above(&d, r));
        if !in_plant {
            for r in 0..n {
                if r == ctx.pcc || evaluated[r] || !may(r, &known) {
                    continue;
                }
                if pursue(r, &mut known, &|r, k| may(r, k)) {
                    complete(r, &known, &mut d, &mut evaluated);
                    if above(&d, r) {
                        in_plant = true;
                        break;
                    }
                }
            }
        }
        let argmax = |f: &dyn Fn(&Distortion, usize) -> f64| {
            (0..n)
                .filter(|&r| evaluated[r])
                .max_by(|&a, &b| f(&d, a).total_cmp(&f(&d, b)))
                .unwrap_or(ctx.pcc)
        };
        let (worst_thd, worst_individual) = (argmax(&thd_ratio), argmax(&key));
        d.worst_thd_bus = worst_thd;
        d.worst_individual_bus = worst_individual;
        d.in_plant_above = in_plant;
        if evaluated.iter().all(|&e| e) {
            d.evaluated = None;
        } else {
            for (r, &ev) in evaluated.iter().enumerate() {
                if !ev {
                    d.thd_percent[r] = f64::NAN;
                    d.worst[r] = None;
                }
            }
            d.evaluated = Some(evaluated);
        }
        Ok(d)
    }
}
