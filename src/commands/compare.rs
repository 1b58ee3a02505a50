//! `compare`: every scenario side by side at checkpoint weeks, and the dose-response
//! table.

use super::schedule::schedule_report_logged;
use super::{
    LogInput, Printed, check_outputs, deliver, display_units, refuse_display_units, side_notes_of,
};
use crate::cli::{CompareArgs, CompareFormat};
use crate::error::Error;
use crate::plan::{self, Plan};
use crate::report;
use crate::simulate::dose_response::dose_response;
use crate::simulate::goal::allowed_range;

/// The plan with ad-hoc scenarios from `--add-scenario` appended.
pub fn with_added_scenarios(mut plan: Plan, specs: &[String]) -> Result<Plan, Error> {
    for spec in specs {
        let sc = plan::parse_scenario_spec(spec).map_err(|e| match e {
            Error::Usage(m) => Error::Usage(format!("--add-scenario {m}")),
            other => other,
        })?;
        if plan.scenarios.iter().any(|s| s.name == sc.name) {
            return Err(Error::Usage(format!(
                "--add-scenario \"{spec}\": the plan already has a scenario named \"{}\"; choose another name",
                sc.name
            )));
        }
        plan.scenarios.push(sc);
    }
    Ok(plan)
}

/// The compare report: checkpoints, band, and the dose-response table when doses are given.
pub fn compare_report(
    plan: &Plan,
    at_weeks: &[u32],
    doses: &[f64],
) -> Result<report::compare::CompareReport, Error> {
    compare_report_logged(plan, &LogInput::default(), at_weeks, doses)
}

/// [`compare_report`] re-planned from a log.
pub fn compare_report_logged(
    plan: &Plan,
    log: &LogInput,
    at_weeks: &[u32],
    doses: &[f64],
) -> Result<report::compare::CompareReport, Error> {
    let total = plan.protocol.total_weeks();
    if let Some(bad) = at_weeks.iter().find(|w| **w < 1 || **w > total) {
        return Err(Error::Usage(format!(
            "--at-week {bad}: outside the plan's weeks; allowed 1 to {total} (protocol and follow-up)"
        )));
    }
    let amount = plan.protocol.dose.amount;
    let (lo, hi) = allowed_range(&amount);
    if let Some(bad) = doses
        .iter()
        .find(|d| !d.is_finite() || **d < lo || **d > hi)
    {
        return Err(Error::Usage(format!(
            "--doses: {} is out of range for {}; allowed {lo} to {hi} {}",
            crate::plan::participant::fmt_num(*bad),
            amount.key(),
            amount.unit()
        )));
    }
    let schedule = schedule_report_logged(plan, log)?;
    let weeks = report::compare::checkpoints(plan, at_weeks);
    let dose_response = if doses.is_empty() {
        None
    } else {
        Some(dose_response(plan, log.observed.as_ref(), doses, &weeks)?)
    };
    let band = schedule.projection_band.clone().expect("computed above");
    Ok(report::compare::CompareReport::new(
        plan,
        &schedule,
        &band,
        weeks,
        dose_response,
    ))
}

/// Run `compare`.
pub fn run(args: &CompareArgs) -> Result<Printed, Error> {
    let units = display_units(&args.display);
    match args.format {
        CompareFormat::Table | CompareFormat::Markdown => {}
        CompareFormat::Csv => refuse_display_units(units, "csv")?,
        CompareFormat::Json => refuse_display_units(units, "json")?,
    }
    let inputs = super::log_inputs(args.plan.as_deref(), &args.logged);
    check_outputs(args.out.as_deref(), args.chart.as_deref(), &inputs)?;
    let (plan, log) = super::plan_and_logged(args.plan.as_deref(), &args.logged, |p| {
        with_added_scenarios(p, &args.add_scenario)
    })?;
    let r = compare_report_logged(&plan, &log, &args.at_week, &args.doses)?;
    let text = match args.format {
        CompareFormat::Table => report::compare::render_table(&r, units),
        CompareFormat::Markdown => report::compare::render_markdown(&r, units),
        CompareFormat::Json => report::json::render(&r),
        CompareFormat::Csv => report::compare::render_csv(&r),
    };
    let mut printed = Printed::default();
    if matches!(args.format, CompareFormat::Csv) {
        printed.stderr = side_notes_of(&r.warnings, &r.screening);
        if let Some(d) = &r.dose_response {
            printed.stderr.push_str(&report::compare::dose_notes(
                &r,
                d,
                report::units::Units::default(),
            ));
        }
    }
    if let Some(dir) = &args.chart {
        let schedule = schedule_report_logged(&plan, &log)?;
        printed
            .stderr
            .push_str(&super::charts::write_schedule_charts(
                dir,
                &schedule,
                &plan,
                log.observed.as_ref(),
                units,
            )?);
    }
    deliver(printed, text, args.out.as_deref())
}
