//! Human-readable output: the terminal summary and the safety cautions every report carries.

pub mod capacitors;
pub mod cautions;
pub mod design;
pub mod model;
pub mod operating;
pub mod sources;
pub mod summary;
pub mod table;
pub mod verdict;

pub use model::{model_scope, summation_meaning, switching_scope};

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
