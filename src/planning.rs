//! A plan and its measured data turned into a schedule report: the library calls
//! behind `schedule`, the other commands that re-plan from a log, and the desk
//! (which re-plans from a register). Above the simulation and the report builder,
//! below every outer layer; it reads no file, clock or environment.

use crate::error::Error;
use crate::plan::Plan;
use crate::report::sessions::{PlannedWeek, planned_week};
use crate::report::{self, ScheduleReport};
use crate::safety::Warning;
use crate::safety::screening::ScreeningOutcome;
use crate::simulate::band::projection_band;
use crate::simulate::observed::Observed;
use crate::simulate::{RunMode, calibrated, run, simulate, simulate_observed};
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

/// The log's warnings and summary on a report.
fn add_log(r: &mut ScheduleReport, log: &LogInput) {
    r.warnings.extend(log.warnings.iter().cloned());
    r.log = log.summary.clone();
}

/// What the day view shows of one participant on one date, as the schedule
/// re-planned from the same log would show it: the protocol week holding the date
/// with its re-planned sessions, and the screening result.
#[derive(Debug, Clone, PartialEq)]
pub struct DayPlan {
    /// The protocol week holding the date (None before the start or after the last
    /// protocol week): its sessions under the first scenario, re-planned from the log.
    pub week: Option<PlannedWeek>,
    /// The screening result, as on the schedule.
    pub screening: ScreeningOutcome,
}

/// The [`DayPlan`] of `plan` with its log on `date`, from the fewest weeks that
/// decide it (docs/register.md, "Speed"). A week's prescription depends only on the
/// weeks before it, so the first scenario is run up to the date's week only: its
/// sessions are those of the schedule's first scenario (the one the sheets print).
/// The screening needs the whole run only when its result turns on whether any
/// session of any scenario is vigorous; then every scenario is run as the
/// schedule runs them.
pub fn day_plan(plan: &Plan, log: &LogInput, date: NaiveDate) -> Result<DayPlan, Error> {
    let p = &plan.protocol;
    let observed = log.observed.as_ref();
    let day = (date - p.start).num_days();
    let week = (0..7 * i64::from(p.weeks))
        .contains(&day)
        .then(|| (day / 7) as u32 + 1);
    let week = match (week, plan.scenarios.first()) {
        (Some(w), Some(first)) => {
            let (baseline, physiology) = calibrated(plan)?;
            // As `simulate_observed` runs the projection: re-anchored at the
            // weigh-ins when there is a log.
            let mode = RunMode {
                observed,
                anchor: observed.is_some(),
                weeks: w,
                ..RunMode::projection(plan)
            };
            let out = run(plan, &physiology, &baseline, first, mode, None)?;
            out.weeks.last().map(|r| planned_week(plan, r))
        }
        _ => None,
    };
    let answers = plan.participant.screening.as_ref();
    let screening = match (
        crate::safety::screen(answers, false),
        crate::safety::screen(answers, true),
    ) {
        (a, b) if a == b => a,
        _ => {
            let sim = simulate_observed(plan, observed)?;
            crate::safety::screen(
                answers,
                crate::simulate::warnings::reaches_vigorous(plan, &sim),
            )
        }
    };
    Ok(DayPlan { week, screening })
}
