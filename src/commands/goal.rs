//! `goal`: the smallest dose of the plan's kind that reaches a loss by a week.

use super::compare::with_added_scenarios;
use super::schedule::schedule_report;
use super::{Printed, check_outputs, deliver, display_units, refuse_display_units};
use crate::cli::{GoalArgs, GoalFormat};
use crate::error::Error;
use crate::report;
use crate::simulate::goal::{
    GoalRequest, RequestProblem, check_request, request_problem, solve_observed,
};

/// Run `goal`.
pub fn run(args: &GoalArgs) -> Result<Printed, Error> {
    let units = display_units(&args.display);
    if args.format == GoalFormat::Json {
        refuse_display_units(units, "json")?;
    }
    let inputs = super::log_inputs(args.plan.as_deref(), &args.logged);
    check_outputs(args.out.as_deref(), None, &inputs)?;
    let (plan, log) = super::plan_and_logged(args.plan.as_deref(), &args.logged, |p| {
        with_added_scenarios(p, &args.add_scenario)
    })?;
    let m0 = plan.participant.subject.mass_kg;
    let lose = match (args.lose_kg, args.lose_percent) {
        (Some(kg), _) => kg,
        (None, Some(p)) => m0 * p / 100.0,
        (None, None) => unreachable!("clap requires one of the two"),
    };
    let request = GoalRequest {
        lose_kg: lose,
        by_week: args.by_week,
    };
    match request_problem(&plan, &request) {
        Some(RequestProblem::Week { week, weeks }) => {
            return Err(Error::Usage(format!(
                "--by-week {week}: outside the protocol; allowed 1 to {weeks} (the plan's weeks)"
            )));
        }
        Some(RequestProblem::Loss(_)) => {
            check_request(&plan, &request).map_err(super::with_flag(if args.lose_kg.is_some() {
                "--lose-kg"
            } else {
                "--lose-percent"
            }))?
        }
        None => {}
    }
    let mut schedule = schedule_report(&plan)?;
    schedule.warnings.extend(log.warnings.iter().cloned());
    let answers = solve_observed(&plan, &request, log.observed.as_ref())?;
    let r = report::goal::GoalReport::new(&schedule, request, answers);
    let text = match args.format {
        GoalFormat::Table => report::goal::render_table(&r, units),
        GoalFormat::Json => report::json::render(&r),
    };
    deliver(Printed::default(), text, args.out.as_deref())
}
