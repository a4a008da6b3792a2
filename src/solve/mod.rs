//! Linear algebra of the harmonic network: a sparse LDLᵀ factorization of the complex
//! symmetric admittance matrix Y(h) whose ordering and symbolic analysis are done once per
//! network ([`Symbolic`]) and reused at every scan point ([`Factor`]), and the per-point
//! engine that turns it into driving-point and transfer impedances and applies capacitor-step
//! combinations as small dense corrections ([`Engine`], [`PointSolution`]).
//!
//! Why our own elimination rather than a general sparse LU: Y(h) is complex symmetric
//! (not Hermitian) and, for the passive networks studied, factors stably without pivoting,
//! so an LDLᵀ with a minimum-degree order computed once costs O(buses) per point on radial
//! networks with no fill and no run-time pattern work; see DEVELOPERS.md for the figures.

mod batch;
mod engine;
mod load_flow;
mod pencil;
mod plan;
mod roots;
mod sparse;
mod transfer;

pub use batch::{BATCH_POINTS, PointBatch};
pub use engine::{Engine, PointSolution, Scratch, SolveError};
pub use load_flow::{
    LoadFlowFailure, LoadFlowScratch, LoadFlowSystem, MAX_ITERATIONS, MISMATCH_PU,
};
pub use pencil::{Pole, matrix_pencil};
pub use plan::ComboPlan;
pub use roots::decreasing_root;
pub use sparse::{Factor, SingularPivot, Symbolic};
pub use transfer::{HarmonicPoint, TransferScratch, Z0Blocks};

/// A Sherman–Morrison denominator 1 + y·Z[a,a] that can be divided by: finite and not
/// vanishing (its larger component above 1e-300; no `hypot` in the innermost loop).
#[inline]
pub(crate) fn admissible(denom: num_complex::Complex64) -> bool {
    denom.re.is_finite() && denom.im.is_finite() && denom.re.abs().max(denom.im.abs()) > 1e-300
}
