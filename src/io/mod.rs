//! Input: the plant workbook reader (every sheet validated, each problem located at its
//! sheet and cell), the blank template built from the same column schema, and the
//! provenance of an input file.

pub mod provenance;
pub mod recordings;
pub mod schema;
pub mod template;
pub mod workbook_in;
