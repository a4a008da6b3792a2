//! Machine-readable outputs (CSV per the input contract, JSON).

pub mod csv;
pub mod json;
