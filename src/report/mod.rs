//! Renderers: each output format is a pure function of a finished, serializable
//! report. Renderers never call back into the simulation.

pub mod activities;
pub mod calendar;
pub mod chart;
pub mod check;
pub mod cohort;
pub mod cohort_csv;
pub mod cohort_site;
pub mod compare;
pub mod csv;
pub mod delivered;
pub mod fit;
pub mod goal;
pub mod json;
pub mod sessions;
pub mod sheets;
pub mod table;
pub mod units;

use crate::error::Error;
use crate::model::Baseline;
use crate::plan::{EnergyBasis, MassBasis, Plan, weekday_name};
use crate::safety::{self, ScreeningOutcome, Warning};
use crate::simulate::{ScenarioRun, Simulation};
use chrono::NaiveDate;
use serde::Serialize;

/// The activity as reports describe it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ActivitySummary {
    /// Label.
    pub label: String,
    /// How the intensity is given.
    pub intensity: String,
    /// The intensity itself, for descriptions in other units.
    #[serde(skip)]
    pub intensity_spec: crate::activity::Intensity,
    /// MET at baseline mass.
    pub met_at_baseline: f64,
    /// Relative intensity at baseline (multiples of own RMR).
    pub relative_intensity_at_baseline: f64,
}

/// The dose as reports describe it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DoseSummary {
    /// Plan key of the dose kind.
    pub kind: &'static str,
    /// Amount.
    pub amount: f64,
    /// Unit.
    pub unit: &'static str,
    /// gross | net.
    pub basis: EnergyBasis,
    /// baseline | current.
    pub mass_basis: MassBasis,
}

/// The protocol dates as reports describe them.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ProtocolSummary {
    /// First day.
    pub start: NaiveDate,
    /// Exercise weeks.
    pub weeks: u32,
    /// Follow-up weeks.
    pub follow_up_weeks: u32,
    /// The morning after the last day.
    pub end_date: NaiveDate,
    /// Session weekdays.
    pub session_days: Vec<&'static str>,
    /// Maximum session minutes.
    pub max_session_minutes: Option<f64>,
    /// Over-maximum policy.
    pub over_max: &'static str,
}

/// Everything `schedule` reports.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScheduleReport {
    /// Tool and version.
    pub tool: String,
    /// The plan file.
    pub plan: String,
    /// Pseudonymous participant code.
    pub participant_id: String,
    /// Activity.
    pub activity: ActivitySummary,
    /// Dose.
    pub dose: DoseSummary,
    /// Protocol.
    pub protocol: ProtocolSummary,
    /// Calibrated baseline.
    pub baseline: Baseline,
    /// Screening.
    pub screening: ScreeningOutcome,
    /// Every scenario.
    pub scenarios: Vec<ScenarioRun>,
    /// Warnings with stable codes.
    pub warnings: Vec<Warning>,
    /// The standing cautions.
    pub cautions: Vec<&'static str>,
    /// The projection band around each scenario's mass trajectory, when computed.
    pub projection_band: Option<crate::simulate::band::Band>,
    /// The participant log the schedule was re-planned from, if any.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub log: Option<LogSummary>,
}

/// The log behind a re-planned schedule.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LogSummary {
    /// The log file.
    pub path: String,
    /// The date the log is used up to.
    pub as_of: NaiveDate,
    /// Weigh-ins read.
    pub weigh_ins: usize,
    /// Session rows read.
    pub sessions: usize,
}

impl ScheduleReport {
    /// Assemble the report of a simulated plan.
    pub fn new(plan: &Plan, sim: Simulation) -> ScheduleReport {
        let screening = safety::screen(
            plan.participant.screening.as_ref(),
            crate::simulate::warnings::reaches_vigorous(plan, &sim),
        );
        let warnings = crate::simulate::warnings::warnings(plan, &sim, &screening);
        let b = &sim.baseline;
        let met0 = plan.activity.intensity.met_at(b.mass_kg);
        let p = &plan.protocol;
        ScheduleReport {
            tool: format!("dosewright {}", env!("CARGO_PKG_VERSION")),
            plan: plan.source_name.clone(),
            participant_id: plan.participant.id.clone(),
            activity: ActivitySummary {
                label: plan.activity.label.clone(),
                intensity: plan.activity.intensity.describe(),
                intensity_spec: plan.activity.intensity.clone(),
                met_at_baseline: met0,
                relative_intensity_at_baseline: sim.physiology.relative_intensity(
                    met0,
                    b.mass_kg,
                    b.rmr_kcal_per_day,
                ),
            },
            dose: DoseSummary {
                kind: p.dose.amount.key(),
                amount: p.dose.amount.value(),
                unit: p.dose.amount.unit(),
                basis: p.dose.basis,
                mass_basis: p.dose.mass_basis,
            },
            protocol: ProtocolSummary {
                start: p.start,
                weeks: p.weeks,
                follow_up_weeks: p.follow_up_weeks,
                end_date: p.end_date(),
                session_days: p.session_days.iter().map(|d| weekday_name(*d)).collect(),
                max_session_minutes: p.max_session_minutes,
                over_max: p.over_max.name(),
            },
            baseline: sim.baseline.clone(),
            screening,
            scenarios: sim.scenarios,
            warnings,
            cautions: safety::CAUTIONS.to_vec(),
            projection_band: None,
            log: None,
        }
    }

    /// The index of the scenario named `name` (the first when None).
    pub fn scenario_index(&self, name: Option<&str>) -> Result<usize, Error> {
        match name {
            None => Ok(0),
            Some(n) => self
                .scenarios
                .iter()
                .position(|s| s.name == n)
                .ok_or_else(|| {
                    let names: Vec<String> = self
                        .scenarios
                        .iter()
                        .map(|s| format!("\"{}\"", s.name))
                        .collect();
                    Error::Usage(format!(
                        "no scenario named \"{n}\" in {}; the plan has {}",
                        self.plan,
                        names.join(", ")
                    ))
                }),
        }
    }
}

/// A scenario's assumptions in plain words, energy rates in the display unit.
pub fn assumptions_text(c: &crate::model::Compensation, units: units::Units) -> String {
    c.assumptions_with(|kcal, decimals| units.per_day_text(kcal, decimals))
}

/// The cautions block of text outputs.
pub fn cautions_text(screening: &ScreeningOutcome) -> String {
    let mut s = String::from("Cautions\n");
    s.push_str(&format!(
        "  - Screening result: {}.\n",
        screening.recommendation
    ));
    for c in safety::CAUTIONS {
        s.push_str(&format!("  - {c}\n"));
    }
    s
}
