//! Step-combination plans: the order in which a set of combinations adds its banks, depth
//! first so that combinations sharing their first banks' steps share those updates, and the
//! runner that walks a plan over any state the updates apply to (the engine's driving
//! points, the transfer impedances of penetration).

use num_complex::Complex64;

/// One step of a [`ComboPlan`].
#[derive(Debug, Clone, Copy)]
pub(super) enum Op {
    /// levels[bank + 1] = levels[bank] with `n` steps of `bank` added.
    Apply { bank: usize, n: u32 },
    /// Output `slot` = driving points of levels[bank] with `n` steps of `bank` added.
    Leaf { bank: usize, n: u32, slot: usize },
    /// Output `slot` = driving points without any bank (a plant with no banks).
    Bare { slot: usize },
}

/// A depth-first plan over a set of step combinations: combinations sorted by their step
/// counts share every bank update of their common prefix, so per scan point a full set of
/// N combinations of k banks costs about N·m + (N / s)·(k² + m·k) operations (s the steps
/// of the last bank) instead of N·k³.
#[derive(Debug, Clone)]
pub struct ComboPlan {
    pub(super) ops: Vec<Op>,
    slots: usize,
}

impl ComboPlan {
    /// The plan for `combos` (step counts per bank, each of the same length k); output slot
    /// i belongs to `combos[i]`.
    pub fn new(combos: &[&[u32]]) -> Self {
        let mut order: Vec<usize> = (0..combos.len()).collect();
        order.sort_by(|&a, &b| combos[a].cmp(combos[b]));
        let mut ops = Vec::new();
        let mut prev: Option<&[u32]> = None;
        for &slot in &order {
            let steps = combos[slot];
            let k = steps.len();
            if k == 0 {
                ops.push(Op::Bare { slot });
                continue;
            }
            let first = match prev {
                None => 0,
                Some(p) => p
                    .iter()
                    .zip(steps)
                    .position(|(a, b)| a != b)
                    .unwrap_or(k - 1),
            };
            for (bank, &n) in steps.iter().enumerate().take(k - 1).skip(first) {
                ops.push(Op::Apply { bank, n });
            }
            ops.push(Op::Leaf {
                bank: k - 1,
                n: steps[k - 1],
                slot,
            });
            prev = Some(steps);
        }
        ComboPlan {
            ops,
            slots: combos.len(),
        }
    }

    /// Number of combinations (output slots).
    pub fn len(&self) -> usize {
        self.slots
    }

    /// True when the plan holds no combination.
    pub fn is_empty(&self) -> bool {
        self.slots == 0
    }
}

/// A state that the step-combination plan updates bank by bank.
pub(super) trait PlanState: Clone + Default {
    /// `to` = this state with admittance y added at bank `a`; false if singular.
    fn add_into(&self, a: usize, y: Complex64, to: &mut Self) -> bool;
    /// The outputs of this state with y added at bank `a`; false if singular.
    fn leaf(&self, a: usize, y: Complex64, out: &mut [Complex64]) -> bool;
    /// The outputs of this state as it is.
    fn outputs(&self) -> &[Complex64];
}

/// Runs `plan` from `start` (no banks), one state per bank level in `levels`, writing
/// `block` outputs per combination slot into `out`. False if any combination is singular.
pub(super) fn run_plan<S: PlanState>(
    plan: &ComboPlan,
    start: &S,
    y_step: &[Complex64],
    levels: &mut Vec<S>,
    block: usize,
    out: &mut [Complex64],
) -> bool {
    levels.resize_with(y_step.len() + 1, S::default);
    let (first, rest) = levels.split_at_mut(1);
    first[0].clone_from(start);
    for op in &plan.ops {
        match *op {
            Op::Bare { slot } => {
                out[slot * block..(slot + 1) * block].copy_from_slice(first[0].outputs())
            }
            Op::Apply { bank, n } => {
                // Read level `bank`, write level `bank + 1`.
                let (read, write) = if bank == 0 {
                    (&first[0], &mut rest[0])
                } else {
                    let (lo, hi) = rest.split_at_mut(bank);
                    (&lo[bank - 1], &mut hi[0])
                };
                if n == 0 {
                    write.clone_from(read);
                } else if !read.add_into(bank, y_step[bank] * f64::from(n), write) {
                    return false;
                }
            }
            Op::Leaf { bank, n, slot } => {
                let read = if bank == 0 {
                    &first[0]
                } else {
                    &rest[bank - 1]
                };
                let dst = &mut out[slot * block..(slot + 1) * block];
                if n == 0 {
                    dst.copy_from_slice(read.outputs());
                } else if !read.leaf(bank, y_step[bank] * f64::from(n), dst) {
                    return false;
                }
            }
        }
    }
    out.iter().all(|z| z.re.is_finite() && z.im.is_finite())
}
