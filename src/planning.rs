//! A plan and its measured data turned into a schedule report: the library calls
//! behind `schedule`, the other commands that re-plan from a log, and the desk
//! (which re-plans from a register). Above the simulation and the report builder,
//! below every outer layer; it reads no file, clock or environment.

use crate::error::Error;
use crate::plan::Plan;
use crate::report::{self, ScheduleReport};
use crate::safety::Warning;
use crate::simulate::band::projection_band;
use crate::simulate::observed::Observed;
use crate::simulate::{simulate, simulate_observed};
use chrono::NaiveDate;

/// What a log contributes: the measured data, its warnings and a summary for reports.
#[derive(Debug, Clone, Default)]
pub struct LogInput {
    /// Measured data for the simulation.
    pub observed: Option<Observed>,
    /// The log's own warnings (e.g. implausible jumps).
    pub warnings: Vec<Warning>,
    /// Summary for reports.
    pub summary: Option<report::LogSummary>,
}

impl LogInput {
    /// A validated log (from a file or a register) as the simulation and the reports
    /// take it, up to `as_of`: the one place a log becomes measured data.
    pub fn from_log(
        plan: &Plan,
        log: &crate::log::Log,
        warnings: Vec<Warning>,
        as_of: Option<NaiveDate>,
    ) -> LogInput {
        let observed = Observed::from_log(plan, log, as_of);
        let summary = report::LogSummary {
            path: log.path.clone(),
            as_of: observed.as_of,
            weigh_ins: observed.weigh_ins.len(),
            sessions: observed.sessions.len(),
        };
        LogInput {
            observed: Some(observed),
            warnings,
            summary: Some(summary),
        }
    }
}

/// Validate, simulate and assemble the schedule report of a plan.
pub fn schedule_report(plan: &Plan) -> Result<ScheduleReport, Error> {
    let sim = simulate(plan)?;
    Ok(ScheduleReport::new(plan, sim))
}

/// The schedule report with the projection band, re-planned from measured data when
/// there is any.
pub fn schedule_report_with_band(
    plan: &Plan,
    observed: Option<&Observed>,
) -> Result<ScheduleReport, Error> {
    let sim = simulate_observed(plan, observed)?;
    let band = projection_band(plan, &sim, observed)?;
    let mut r = ScheduleReport::new(plan, sim);
    r.projection_band = Some(band);
    Ok(r)
}

/// The schedule report of a plan with its log (if any): band, log summary, log warnings.
pub fn schedule_report_logged(plan: &Plan, log: &LogInput) -> Result<ScheduleReport, Error> {
    let mut r = schedule_report_with_band(plan, log.observed.as_ref())?;
    add_log(&mut r, log);
    Ok(r)
}

/// [`schedule_report_logged`] without the projection band (which re-runs the plan
/// for every level of the RMR and body-fat errors): for views that need the
/// re-planned sessions, the screening and the warnings only, such as the day view.
pub fn schedule_report_logged_without_band(
    plan: &Plan,
    log: &LogInput,
) -> Result<ScheduleReport, Error> {
    let sim = simulate_observed(plan, log.observed.as_ref())?;
    let mut r = ScheduleReport::new(plan, sim);
    add_log(&mut r, log);
    Ok(r)
}

/// The log's warnings and summary on a report.
fn add_log(r: &mut ScheduleReport, log: &LogInput) {
    r.warnings.extend(log.warnings.iter().cloned());
    r.log = log.summary.clone();
}
