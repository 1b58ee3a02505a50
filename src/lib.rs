//! dosewright: exercise prescribed as a dose of energy.
//!
//! A plan file becomes a validated [`plan::Plan`]; [`simulate::simulate`] integrates
//! an energy-balance model week by week, re-prescribing session minutes from each
//! week's reference mass; [`report`] renders the finished result. Data flows one
//! way: file -> raw -> plan -> simulation -> report.
//!
//! Reference: the model is specified in docs/model.md; each module
//! names the publications of its equations.

#![warn(missing_docs)]

pub mod activity;
pub mod cli;
pub mod commands;
pub mod desk;
pub mod error;
pub mod input;
pub mod log;
pub mod measure;
pub mod model;
pub mod output;
pub mod pilot;
pub mod plan;
pub mod planning;
pub mod register;
pub mod report;
pub mod safety;
pub mod simulate;
pub mod stats;
pub mod study;

pub use error::Error;
pub use plan::Plan;
