//! dosewright: exercise prescribed as a dose of energy.
//!
//! A plan file becomes a validated [`plan::Plan`]; [`simulate::simulate`] integrates
//! an energy-balance model week by week, re-prescribing session minutes from each
//! week's reference mass; [`report`] renders the finished result. Data flows one
//! way: file -> raw -> plan -> simulation -> report.
//!
//! Reference: the model is specified in MODEL.md (README, "The model"); each module
//! names the publications of its equations.

#![warn(missing_docs)]

pub mod activity;
pub mod app;
pub mod cli;
pub mod desk;
pub mod error;
pub mod files;
pub mod log;
pub mod model;
pub mod plan;
pub mod register;
pub mod report;
pub mod safety;
pub mod simulate;
pub mod study;

pub use error::Error;
pub use plan::Plan;
