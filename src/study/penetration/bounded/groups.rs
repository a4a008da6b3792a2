//! Injection columns merged by proportional transfer impedances, so that the rows summed
//! for every configuration cost one term per group instead of one per injection bus.
//!
//! **Why it is exact.** Let S be the always-summed buses (the PCC, the bank buses and the
//! source buses). If column c of Z₀ restricted to S is ρ times column p,
//! Z₀[S,c] = ρ·Z₀[S,p], then for every configuration, with Z = Z₀ − Z₀[:,E]·M·Z₀[E,:] and
//! the bank buses E ⊆ S,
//!
//!   Z[q,c] = ρ·Z₀[q,p] − Z₀[q,E]·M·ρ·Z₀[E,p] = ρ·Z[q,p]   for every q ∈ S,
//!
//! so Σ_{c∈G} w_c·|Z[q,c]| = |Z[q,p]|·Σ_{c∈G} w_c·|ρ_c| (and the same with every term to
//! the power α under IEC 61000-3-6 summation). On a radial plant every injection below a
//! bus where its path joins the tree spanning S is such a column (a cut vertex p:
//! Z₀_qc = Z₀_qp·Z₀_pc/Z₀_pp for q on the other side, Kirchhoff's laws), so a large site's
//! hundreds of converter buses fall into as many groups as that tree has buses. Meshed
//! plants merge fewer columns and stay exact. A bus r outside S ([`RowSplit`]) sums each
//! group's members by Z[r,c] = Z₀[r,c] − ρ_c·(Z₀[r,E]·M·Z₀[E,p]), merging again the members
//! whose own Z₀[r,c]/ρ_c agree.
//!
//! Proportionality is tested to [`PROPORTIONAL`] relative: a tree's columns are
//! proportional to rounding (1e-16), a meshed plant's are not at all.

use std::collections::HashMap;

use num_complex::Complex64;

use super::abs;
use crate::model::Summation;
use crate::study::injections::summation_exponent;

/// Relative tolerance of proportionality (far above rounding, far below any figure shown).
pub(super) const PROPORTIONAL: f64 = 1e-12;

/// How magnitudes combine at one order: Σ v, or (Σ v^α)^(1/α) (IEC 61000-3-6).
#[derive(Debug, Clone, Copy)]
pub(super) enum Law {
    Sum,
    Square,
    Power(f64),
}

impl Law {
    pub(super) fn new(law: Summation, order: f64) -> Law {
        match law {
            Summation::Iec61000_3_6 => {
                let a = summation_exponent(order);
                if a == 1.0 {
                    Law::Sum
                } else if a == 2.0 {
                    Law::Square
                } else {
                    Law::Power(a)
                }
            }
            _ => Law::Sum,
        }
    }

    /// One term v's contribution, v^α.
    #[inline]
    pub(super) fn term(self, v: f64) -> f64 {
        match self {
            Law::Sum => v,
            Law::Square => v * v,
            Law::Power(a) => v.powf(a),
        }
    }

    /// A group's contribution: |Z|·w1 (Σ), or |Z|^α·wa.
    #[inline]
    pub(super) fn group(self, z: f64, w1: f64, wa: f64) -> f64 {
        match self {
            Law::Sum => z * w1,
            Law::Square => z * z * wa,
            Law::Power(a) => z.powf(a) * wa,
        }
    }

    /// The combined value from the sum of contributions.
    #[inline]
    pub(super) fn finish(self, total: f64) -> f64 {
        match self {
            Law::Sum => total,
            Law::Square => total.sqrt(),
            Law::Power(a) => total.powf(1.0 / a),
        }
    }
}

/// One group of columns (or one background term, alone).
#[derive(Debug, Clone, Copy)]
pub(super) struct Group {
    /// The representative column (the first member).
    pub rep: usize,
    /// Σ |ρ_c|·w_c and Σ (|ρ_c|·w_c)^α over the members.
    pub w1: f64,
    pub wa: f64,
    /// A background term: |I_N| (its PCC term is |into − own|·|I_N|, not proportional).
    pub background: Option<f64>,
    /// A background term of a utility source at the PCC bus (its own Norton current
    /// crosses the PCC).
    pub own: bool,
}

/// The groups of one scenario and order.
#[derive(Debug, Clone)]
pub(super) struct Groups {
    pub groups: Vec<Group>,
    /// Per load term (in the order of `OrderInputs::loads`): its group, ρ and weight.
    pub members: Vec<(usize, Complex64, f64)>,
    /// Z₀ from each always-summed bus to each group's representative, |S|×G row-major.
    pub z_always: Vec<Complex64>,
    /// Z₀ from each bank bus to each representative, k×G row-major.
    pub z_bank: Vec<Complex64>,
}

impl Groups {
    /// Groups the load terms `loads` (column, weight) by proportional columns of the rows
    /// `s_rows` (Z₀ from each always-summed bus to every column); each background term
    /// (column, |I_N|) is a group of its own. `bank_inj` is Z₀ from the bank buses to the
    /// columns (k×l).
    // Long: the proportional groups of one order found in one pass over the injection columns.
    pub(super) fn new(
        law: Law,
        loads: &[(usize, f64)],
        background: &[(usize, f64, bool)],
        s_rows: &[Vec<Complex64>],
        bank_inj: &[Complex64],
        k: usize,
        l: usize,
    ) -> Groups {
        let mut groups: Vec<Group> = Vec::new();
        let mut members = Vec::with_capacity(loads.len());
        // Per group: its representative's vector on S and the pivot row.
        let mut reps: Vec<(Vec<Complex64>, usize)> = Vec::new();
        let mut index: HashMap<Vec<i64>, usize> = HashMap::new();
        let quantum = 2f64.powi(24);
        for &(c, w) in loads {
            let v: Vec<Complex64> = s_rows.iter().map(|row| row[c]).collect();
            let norm2: f64 = v.iter().map(|z| z.norm_sqr()).sum();
            let pivot = (0..v.len())
                .max_by(|&a, &b| v[a].norm_sqr().total_cmp(&v[b].norm_sqr()))
                .unwrap_or(0);
            let mut found = None;
            let mut key = Vec::new();
            if norm2 > 0.0 && norm2.is_finite() {
                let p = v[pivot];
                key.push(pivot as i64);
                for z in &v {
                    let u = z / p;
                    key.push((u.re * quantum).round() as i64);
                    key.push((u.im * quantum).round() as i64);
                }
                if let Some(&g) = index.get(&key) {
                    let (rv, rp) = &reps[g];
                    let rho = p / rv[*rp];
                    let err: f64 = v
                        .iter()
                        .zip(rv)
                        .map(|(a, b)| (a - rho * b).norm_sqr())
                        .sum();
                    if err <= PROPORTIONAL * PROPORTIONAL * norm2 {
                        found = Some((g, rho));
                    }
                }
            }
            let (g, rho) = match found {
                Some(x) => x,
                None => {
                    groups.push(Group {
                        rep: c,
                        w1: 0.0,
                        wa: 0.0,
                        background: None,
                        own: false,
                    });
                    let g = groups.len() - 1;
                    if !key.is_empty() {
                        index.entry(key).or_insert(g);
                    }
                    reps.push((v, pivot));
                    (g, Complex64::new(1.0, 0.0))
                }
            };
            let t = abs(rho) * w;
            groups[g].w1 += t;
            groups[g].wa += law.term(t);
            members.push((g, rho, w));
        }
        for &(c, i, own) in background {
            groups.push(Group {
                rep: c,
                w1: i,
                wa: law.term(i),
                background: Some(i),
                own,
            });
        }
        let ng = groups.len();
        let mut z_always = Vec::with_capacity(s_rows.len() * ng);
        for row in s_rows {
            z_always.extend(groups.iter().map(|g| row[g.rep]));
        }
        let mut z_bank = Vec::with_capacity(k * ng);
        for b in 0..k {
            z_bank.extend(groups.iter().map(|g| bank_inj[b * l + g.rep]));
        }
        Groups {
            groups,
            members,
            z_always,
            z_bank,
        }
    }
}

/// How one bus r outside S sums the groups. A member c of group g with
/// Z₀[r,c] = ρ_c·κ has Z[r,c] = ρ_c·(κ − t_g) in every configuration, so the members of g
/// that share κ sum as one term |κ − t_g|·Σ|ρ_c|·w_c. A group whose own row is
/// proportional at r (κ = Z₀[r,p_g] for all) is one term; otherwise its members split by
/// where they join the path to r (on a radial plant a handful of terms, not one per
/// member).
#[derive(Debug, Clone)]
pub(super) struct RowSplit {
    /// (group, κ, Σ|ρ_c|·w_c, Σ(|ρ_c|·w_c)^α).
    pub terms: Vec<(usize, Complex64, f64, f64)>,
}

impl RowSplit {
    /// The split of the bus whose row of Z₀ to every column is `row`.
    pub(super) fn new(
        gr: &Groups,
        law: Law,
        loads: &[(usize, f64)],
        row: &[Complex64],
    ) -> RowSplit {
        let scale = row.iter().fold(0.0f64, |m, z| m.max(abs(*z)));
        let mut terms: Vec<(usize, Complex64, f64, f64)> = Vec::new();
        let mut index: HashMap<(usize, i64, i64), usize> = HashMap::new();
        let quantum = 2f64.powi(32) / scale.max(f64::MIN_POSITIVE);
        for (&(c, _), &(g, rho, w)) in loads.iter().zip(&gr.members) {
            let kappa = row[c] / rho;
            let key = (
                g,
                (kappa.re * quantum).round() as i64,
                (kappa.im * quantum).round() as i64,
            );
            let t = abs(rho) * w;
            let same = index.get(&key).copied().filter(|&i| {
                let (a, b) = (row[c], rho * terms[i].1);
                abs(a - b) <= PROPORTIONAL * abs(a).max(abs(b)).max(1e-3 * scale)
            });
            match same {
                Some(i) => {
                    terms[i].2 += t;
                    terms[i].3 += law.term(t);
                }
                None => {
                    terms.push((g, kappa, t, law.term(t)));
                    index.entry(key).or_insert(terms.len() - 1);
                }
            }
        }
        for (g, grp) in gr.groups.iter().enumerate() {
            if grp.background.is_some() {
                terms.push((g, row[grp.rep], grp.w1, grp.wa));
            }
        }
        RowSplit { terms }
    }

    /// The bus's magnitude sum given t_g = Z₀[r,E]·M·Z₀[E,p_g] for every group.
    pub(super) fn sum(&self, law: Law, t: &[Complex64]) -> f64 {
        let total: f64 = self
            .terms
            .iter()
            .map(|&(g, kappa, w1, wa)| law.group(abs(kappa - t[g]), w1, wa))
            .sum();
        law.finish(total)
    }
}
