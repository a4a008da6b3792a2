//! Files: the input workbook reader, and machine-readable outputs (CSV per the input
//! contract, JSON).

pub mod csv;
pub mod json;
pub mod review;
pub mod template;
pub mod workbook_in;
