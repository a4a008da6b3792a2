//! Published limit tables as data, each with its edition and table in a doc comment, and
//! the look-ups the studies use. The standards themselves are the authority: where a
//! licensed copy differs from a value here, the copy wins (see `references.md` of the design
//! notes for the confidence of each value).

pub mod capacitors;
pub mod iec61000_2_4;
pub mod ieee519;

use serde::Serialize;

/// A limit applied to one value, with where it comes from.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Limit {
    /// The limit, in the unit of the value it applies to (% of nominal or of I_L).
    pub value: f64,
    /// The standard, edition and table.
    pub source: &'static str,
}
