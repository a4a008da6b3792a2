//! Human-readable output: the terminal summary and the safety cautions every report carries.

pub mod capacitors;
pub mod cautions;
pub mod model;
pub mod operating;
pub mod sources;
pub mod summary;
pub mod table;

pub use model::{model_scope, summation_meaning, switching_scope};
