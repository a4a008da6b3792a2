//! Files: the input workbook reader, and machine-readable outputs (CSV per the input
//! contract, JSON), the review workbook and the template, all written whole or not at all
//! (`output`).

pub mod csv;
pub mod json;
pub mod output;
pub mod review;
pub mod template;
pub mod workbook_in;
