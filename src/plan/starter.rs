//! The compiled-in plans: the built-in demo (`schedule` with no plan) and the
//! commented starter that `init` writes.

/// The name the demo plan goes by in reports and errors.
pub const DEMO_NAME: &str = "built-in demo plan (plans/demo.toml)";

/// The built-in demo plan: an invented participant.
pub const DEMO_PLAN: &str = include_str!("../../plans/demo.toml");

/// The commented starter plan.
pub const STARTER_PLAN: &str = include_str!("starter.toml");
