//! `fit`: how much of the dose is not reaching the stores, estimated from weigh-ins.

use super::schedule::schedule_report;
use super::{Printed, check_outputs, deliver, display_units, refuse_display_units};
use crate::cli::{FitArgs, FitParameterArg, GoalFormat};
use crate::error::Error;
use crate::report;
use crate::simulate::fit::FitParameter;

/// Run `fit`.
pub fn run(args: &FitArgs) -> Result<Printed, Error> {
    let units = display_units(&args.display);
    if args.format == GoalFormat::Json {
        refuse_display_units(units, "json")?;
    }
    let inputs: Vec<&std::path::Path> = args
        .plan
        .iter()
        .chain(&args.log)
        .chain(&args.from.register)
        .map(|p| p.as_path())
        .collect();
    check_outputs(args.out.as_deref(), args.chart.as_deref(), &inputs)?;
    let (plan, input) = super::plan_and_log(
        args.plan.as_deref(),
        args.log.as_deref(),
        &args.from,
        args.as_of,
        Ok,
    )?;
    let schedule = schedule_report(&plan)?;
    let index = super::scenario_index(&schedule, args.scenario.as_deref())?;
    let param = match args.parameter {
        FitParameterArg::IntakeFraction => FitParameter::IntakeFraction,
        FitParameterArg::ActivityFraction => FitParameter::ActivityFraction,
    };
    let observed = input.observed.as_ref().expect("a log was read");
    let fit = crate::simulate::fit::fit(&plan, observed, index, param)?;
    let r = report::fit::FitReport::new(&schedule, input.summary.clone(), &input.warnings, fit);
    let text = match args.format {
        GoalFormat::Table => report::fit::render_table(&r, units),
        GoalFormat::Json => report::json::render(&r),
    };
    let mut printed = Printed::default();
    if let Some(dir) = &args.chart {
        let stem = super::charts::stem(&r.participant_id);
        let mut chart = report::fit::chart(&r, units);
        chart
            .caption
            .push_str(&super::charts::screening_caption(&r.screening));
        printed.stderr = super::charts::write(dir, &stem, &[("fit", chart)])?;
    }
    deliver(printed, text, args.out.as_deref())
}
