//! Safety, a leaf: the pre-participation screening, the risk thresholds, the
//! warning type, and the cautions every human-facing output carries. The warnings a
//! simulated plan earns are worded in `simulate::warnings`.

pub mod cautions;
pub mod risk;
pub mod screening;

use serde::Serialize;

pub use cautions::CAUTIONS;
pub use screening::{ScreeningOutcome, screen};

/// One warning.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Warning {
    /// Stable machine-readable code.
    pub code: &'static str,
    /// Plain words.
    pub message: String,
}
