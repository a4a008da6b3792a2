//! Human-readable output: the terminal summary and the safety cautions every report carries.

pub mod capacitors;
pub mod cautions;
pub mod operating;
pub mod summary;
pub mod table;
