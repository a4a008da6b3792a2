//! Jobs: what a command runs. A job builds the study context once, runs the studies the
//! command names and returns data (result structs that the [`crate::present`] layer only
//! reads). Jobs compose studies; no study imports a job.

pub mod calibrate;
pub mod charts;
pub mod check;
mod context;
pub mod damping;
pub mod design;
mod duty;
pub mod exports;
pub mod notes;
pub mod remedies;
pub mod results;
pub mod size;
pub mod studies;
