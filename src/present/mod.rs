//! Presenting results: the terminal summary, the review workbook, the CSVs of the input
//! contract and the JSON summary, with the words, cautions and sources they share. This
//! layer reads result structs only: it never solves or runs a study, and it writes no file
//! (each writer returns bytes or writes to a `Write`; [`crate::export`] puts them on disk).

pub mod cautions;
pub mod csv;
pub mod json;
pub mod report;
pub mod review;
pub mod sources;
pub mod terminal;
pub mod words;

pub use words::{damping_meaning, damping_words, model_scope, summation_meaning, switching_scope};

/// A bank's series reactor in words: `7 % detuned`, `tuned at 4.7`; `None` for a plain bank.
pub fn reactor_words(r: crate::model::Reactor) -> Option<String> {
    match r {
        crate::model::Reactor::None => None,
        crate::model::Reactor::Detuning { percent } => Some(format!("{percent} % detuned")),
        crate::model::Reactor::Tuned { order } => Some(format!("tuned at {order}")),
    }
}

/// The limit set's name as printed.
pub fn limit_set_name(l: crate::model::LimitSet) -> &'static str {
    use crate::model::LimitSet;
    match l {
        LimitSet::Ieee519_2014 => "IEEE 519-2014",
        LimitSet::Iec61000_2_4Class1 => "IEC 61000-2-4 class 1",
        LimitSet::Iec61000_2_4Class2 => "IEC 61000-2-4 class 2",
        LimitSet::Iec61000_2_4Class3 => "IEC 61000-2-4 class 3",
    }
}
