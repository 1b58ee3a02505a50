//! Physiology: RMR equations, body composition and the energy-balance right-hand side.
//!
//! Reference: docs/model.md (the project's model specification) and the papers cited in
//! each submodule.

pub mod balance;
pub mod composition;
pub mod energy;
pub mod rmr;

pub use energy::{
    Baseline, BodyState, Bout, Compensation, Constants, Fluxes, Physiology, RestForNet, Subject,
};
pub use rmr::{RmrEquation, Sex};
