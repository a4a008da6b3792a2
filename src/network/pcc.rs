//! The point of common coupling as IEEE 519-2014 (clause 3, definitions of PCC, I_L and TDD)
//! takes it: the interface where the utility and the customer exchange power and harmonic
//! current. The plant's figures "at the PCC" are the flow across that interface, not the sum
//! of the sources: the branches that join the PCC bus to the utility side, plus a utility
//! source connected at the PCC bus itself. On-site generators are the plant's.
//!
//! The utility side of a scenario is found on the network's graph: remove the PCC bus; every
//! part left that holds an in-service utility source is the utility's, and every branch from
//! the PCC bus into such a part is a tie. The flow from the PCC bus toward the utility is
//! then a linear functional of the bus voltages at any order h,
//!
//! I_pcc = Σ_ties [y_br(h)·(V_p − V_u) + y_half(h)·V_p] + Σ_sources at p y_s(h)·V_p − Σ I_N,
//!
//! with y_half the half charging of a tie cable at the PCC end (π model: the cable's own
//! current at its PCC terminal) and I_N the Norton current of each utility source at the PCC
//! bus (its EMF at h = 1, its background at h > 1). Branch flows are taken in the shift-free
//! network; every tie ends at the PCC bus, so one rotation (the PCC's zone) applies to all.

use num_complex::Complex64;

use super::Network;

/// The PCC's ties to the utility in one scenario.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PccTie {
    /// Ties: (index of the branch in the positive-sequence network, whether the PCC is its
    /// `from` end).
    pub branches: Vec<(usize, bool)>,
    /// In-service utility sources at the PCC bus (indices into `Network::sources`).
    pub sources: Vec<usize>,
}

impl PccTie {
    /// True when the PCC has a utility side in this scenario.
    pub fn exists(&self) -> bool {
        !self.branches.is_empty() || !self.sources.is_empty()
    }
}

impl Network {
    /// The ties of the PCC bus `pcc` in every scenario (see the module documentation);
    /// computed on the positive-sequence network, whose branches are every in-service
    /// physical branch.
    pub(super) fn pcc_ties(&self, pcc: usize) -> Vec<PccTie> {
        let n = self.buses.len();
        let mut adj: Vec<Vec<usize>> = vec![Vec::new(); n];
        for br in &self.branches {
            adj[br.from].push(br.to);
            adj[br.to].push(br.from);
        }
        // Component label of every bus once the PCC bus is removed.
        let mut part = vec![usize::MAX; n];
        let mut parts = 0;
        for start in 0..n {
            if start == pcc || part[start] != usize::MAX {
                continue;
            }
            part[start] = parts;
            let mut stack = vec![start];
            while let Some(b) = stack.pop() {
                for &c in &adj[b] {
                    if c != pcc && part[c] == usize::MAX {
                        part[c] = parts;
                        stack.push(c);
                    }
                }
            }
            parts += 1;
        }
        self.scenarios
            .iter()
            .map(|sc| {
                let utility: Vec<usize> = sc
                    .sources
                    .iter()
                    .copied()
                    .filter(|&k| self.source_utility.get(k).copied().unwrap_or(true))
                    .collect();
                let mut utility_part = vec![false; parts];
                for &k in &utility {
                    let b = self.sources[k].bus;
                    if b != pcc {
                        utility_part[part[b]] = true;
                    }
                }
                let branches = self
                    .branches
                    .iter()
                    .filter_map(|br| {
                        let far = if br.from == pcc {
                            br.to
                        } else if br.to == pcc {
                            br.from
                        } else {
                            return None;
                        };
                        (far != pcc && utility_part[part[far]])
                            .then_some((br.index, br.from == pcc))
                    })
                    .collect();
                PccTie {
                    branches,
                    sources: utility
                        .into_iter()
                        .filter(|&k| self.sources[k].bus == pcc)
                        .collect(),
                }
            })
            .collect()
    }

    /// The flow from the PCC bus toward the utility in scenario `s` at order `h`, as the
    /// coefficients c of I = Σ c_i·V_i (per unit, this network's sequence), by bus (each bus
    /// at most once), and the utility sources at the PCC whose Norton current is subtracted.
    /// Empty where the PCC has no utility side (or, in the zero sequence, no series path
    /// to it).
    pub fn pcc_flow(&self, s: usize, h: f64) -> (Vec<(usize, Complex64)>, &[usize]) {
        let Some(tie) = self.pcc_tie.get(s) else {
            return (Vec::new(), &[]);
        };
        let rm = self.resistance;
        let p = self.pcc;
        let mut at_p = Complex64::default();
        let mut out: Vec<(usize, Complex64)> = Vec::new();
        for &(index, _) in &tie.branches {
            // The zero-sequence network holds only the branches with a series path.
            for br in self.branches.iter().filter(|b| b.index == index) {
                let y = br.z.at(h, rm).inv();
                let far = if br.from == p { br.to } else { br.from };
                at_p += y;
                match out.iter_mut().find(|(b, _)| *b == far) {
                    Some((_, c)) => *c -= y,
                    None => out.push((far, -y)),
                }
            }
            for sh in self
                .shunts
                .iter()
                .filter(|x| x.branch == Some(index) && x.bus == p)
            {
                at_p += sh.model.y_pu(h, rm);
            }
        }
        for &k in &tie.sources {
            at_p += self.sources[k].model.y_pu(h, rm);
        }
        if at_p != Complex64::default() {
            out.push((p, at_p));
        }
        (out, &tie.sources)
    }

    /// The fundamental power the utility side delivers into the PCC bus in scenario `s`,
    /// kW and kvar (positive Q = drawn by the plant, lagging): S = −V_p·conj(I_pcc) × S_base
    /// with I_pcc the flow toward the utility (module documentation) at h = 1 and `v` the
    /// shift-free bus voltages, per unit.
    pub fn pcc_power(&self, s: usize, v: &[Complex64]) -> (f64, f64) {
        let (coef, own) = self.pcc_flow(s, 1.0);
        let mut i: Complex64 = coef.iter().map(|&(b, c)| c * v[b]).sum();
        for &k in own {
            i -= self.sources[k].model.y_pu(1.0, self.resistance) * self.source_emf_pu[k];
        }
        let s_pu = -v[self.pcc] * i.conj();
        let kva = super::BASE_MVA * 1000.0;
        (s_pu.re * kva, s_pu.im * kva)
    }
}
