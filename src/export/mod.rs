//! Output files: every output path checked before the work ([`plan`]) and every file
//! written whole or not at all ([`atomic`], a leaf that knows no format).

pub mod atomic;
pub mod plan;

pub use atomic::*;
pub use plan::*;
