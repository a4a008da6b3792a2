//! Output files: every output path checked before the work ([`plan`]), each output made
//! from the results ([`outputs`]) and every file written whole or not at all ([`atomic`], a
//! leaf that knows no format).

pub mod atomic;
pub mod outputs;
pub mod plan;

pub use atomic::*;
pub use outputs::{CheckOutputs, ExportFailure};
pub use plan::*;
