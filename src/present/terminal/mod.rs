//! The terminal: the summary a `check` prints (verdict first, then every study's table),
//! the scan's peaks, the design comparison and the sizing, each line within 100 columns.

pub mod calibrate;
pub mod capacitors;
pub mod design;
pub mod operating;
mod pcc;
pub mod summary;
pub mod table;
pub mod verdict;
