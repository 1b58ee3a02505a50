//! Studies: a protocol shared by dose arms, the participants (a roster or a synthetic
//! population), and the allocation of participants to arms.
//!
//! A study file holds the plan's `[protocol]` (without its dose), `[activity]`,
//! `[[rotation]]`, `[model]`, `[[scenario]]` and `[calendar]` tables, one `[[arm]]`
//! per dose (an arm with no dose is a control with no exercise), and optionally a
//! `[synthetic]` population. Each participant in each arm is simulated as a plan of
//! its own ([`Study::plan_for`]).

pub mod allocation;
pub mod dist;
pub mod randomise;
pub mod raw;
pub mod roster;
pub mod staffing;

/// The top-level tables a study file has and a plan file has not (docs/file-formats.md):
/// what is taken away when a study's shared tables become one participant's plan, and
/// how a study file is told from a plan.
pub const STUDY_ONLY_TABLES: &[&str] = &["study", "arm", "synthetic", "uncertainty", "staffing"];
pub mod synthetic;
mod validate;

use crate::activity::Activity;
use crate::model::Constants;
use crate::plan::{
    CalendarSettings, Dose, DoseAmount, EnergyBasis, MassBasis, Participant, Plan, Protocol,
    RotationEntry, Scenario,
};
use dist::Dist;
use serde::Serialize;

pub use validate::{load_study, parse_study};

/// One arm of a study.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Arm {
    /// Unique name.
    pub name: String,
    /// The dose; None for a control arm (no exercise).
    pub dose: Option<Dose>,
}

impl Arm {
    /// Whether this is a control arm.
    pub fn is_control(&self) -> bool {
        self.dose.is_none()
    }
}

/// The population synthetic participants are drawn from (`[synthetic]`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Population {
    /// Share of women.
    pub female_fraction: f64,
    /// Age, years.
    pub age_years: Dist,
    /// Height of women, cm.
    pub height_cm_female: Dist,
    /// Height of men, cm.
    pub height_cm_male: Dist,
    /// BMI, kg/m^2 (mass follows from height).
    pub bmi: Dist,
    /// Body fat, percent; None = estimated from BMI (Deurenberg 1991).
    pub body_fat_percent: Option<Dist>,
    /// Non-exercise PAL; None = the model's default.
    pub pal: Option<Dist>,
}

/// A validated study.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Study {
    /// Where it came from.
    pub source_name: String,
    /// Its name (`[study] name`, else the file name).
    pub name: String,
    /// Arms, names unique, at least one.
    pub arms: Vec<Arm>,
    /// The shared protocol; its `dose` is replaced by each arm's.
    pub protocol: Protocol,
    /// `[activity]`.
    pub activity: Activity,
    /// `[[rotation]]`.
    pub rotation: Vec<RotationEntry>,
    /// `[model]`.
    pub constants: Constants,
    /// `[[scenario]]`.
    pub scenarios: Vec<Scenario>,
    /// `[calendar]`.
    pub calendar: CalendarSettings,
    /// `[synthetic]`.
    pub population: Option<Population>,
    /// Permuted-block size for `--randomise` (a multiple of the number of arms).
    pub block_size: u32,
    /// Distributions of scenario values, per scenario in `SCENARIO_KEYS` order (None:
    /// the fixed value in `scenarios`).
    pub scenario_dists: Vec<[Option<Dist>; 5]>,
    /// Individual variation, attendance and drop-out (None: none).
    pub uncertainty: Option<Uncertainty>,
    /// `[staffing]`: group size, stations and opening hours (None: not stated).
    pub staffing: Option<staffing::Staffing>,
}

/// How the RMR equation's own error is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum RmrError {
    /// The equation's published relative error (`RmrEquation::relative_error`).
    Published,
    /// A stated relative SD.
    Sd(f64),
}

/// `[uncertainty]`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Uncertainty {
    /// The RMR factor's relative SD (a multiplicative normal factor around 1).
    pub rmr_error: RmrError,
    /// SD of body fat where it is estimated from BMI, percent (Deurenberg 1991: 4.1).
    pub body_fat_error_percent: f64,
    /// Probability a planned session is delivered.
    pub attendance: f64,
    /// Weekly drop-out hazard; a dropped participant stops exercising.
    pub dropout_per_week: f64,
}

impl Study {
    /// Whether a draw can differ from the deterministic run.
    pub fn has_uncertainty(&self) -> bool {
        self.uncertainty.is_some()
            || self
                .scenario_dists
                .iter()
                .flatten()
                .any(|d| d.is_some_and(|d| !d.is_fixed()))
    }
}

/// The dose a control arm's plan carries. It is never prescribed: control runs have
/// no exercise at all.
const CONTROL_DOSE: Dose = Dose {
    amount: DoseAmount::MinutesPerWeek(0.0),
    basis: EnergyBasis::Gross,
    mass_basis: MassBasis::Baseline,
};

impl Study {
    /// The arms' names, quoted and joined: `"control", "8 kcal/kg/week"`.
    pub fn arm_names(&self) -> String {
        self.arms
            .iter()
            .map(|a| format!("\"{}\"", a.name))
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// The index of the arm named `name`.
    pub fn arm_index(&self, name: &str) -> Option<usize> {
        self.arms.iter().position(|a| a.name == name)
    }

    /// The plan of `participant` in arm `arm`.
    pub fn plan_for(&self, participant: &Participant, arm: usize) -> Plan {
        let mut protocol = self.protocol.clone();
        protocol.dose = self.arms[arm].dose.unwrap_or(CONTROL_DOSE);
        Plan {
            source_name: format!(
                "{} ({}, arm \"{}\")",
                self.source_name, participant.id, self.arms[arm].name
            ),
            participant: participant.clone(),
            protocol,
            activity: self.activity.clone(),
            constants: self.constants,
            scenarios: self.scenarios.clone(),
            rotation: self.rotation.clone(),
            calendar: self.calendar.clone(),
        }
    }
}
