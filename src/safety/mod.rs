//! Safety: the pre-participation screening, the warnings a plan earns, and the
//! cautions every human-facing output carries.

pub mod cautions;
pub mod risk;
pub mod screening;
pub mod warnings;

pub use cautions::CAUTIONS;
pub use screening::{ScreeningOutcome, screen};
pub use warnings::{Warning, warnings};
