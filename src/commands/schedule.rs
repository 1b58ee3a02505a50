//! `schedule`: the week-by-week schedule and projected outcome of a plan.

use super::{Printed, check_outputs, deliver, display_units, refuse_display_units, side_notes};
use crate::cli::{FormatArg, ScheduleArgs};
use crate::error::Error;
use crate::report::{self};

pub use crate::planning::{schedule_report, schedule_report_logged, schedule_report_with_band};

/// Run `schedule`.
pub fn run(args: &ScheduleArgs) -> Result<Printed, Error> {
    let units = display_units(&args.display);
    match args.format {
        FormatArg::Table => {}
        FormatArg::Csv => refuse_display_units(units, "csv")?,
        FormatArg::Json => refuse_display_units(units, "json")?,
    }
    let inputs = super::log_inputs(args.plan.as_deref(), &args.logged);
    check_outputs(args.out.as_deref(), args.chart.as_deref(), &inputs)?;
    let (plan, log) = super::plan_and_logged(args.plan.as_deref(), &args.logged, Ok)?;
    let r = schedule_report_logged(&plan, &log)?;
    let index = super::scenario_index(&r, args.scenario.as_deref())?;
    let mut printed = Printed::default();
    let text = match args.format {
        FormatArg::Table => {
            report::table::render_choosing(&r, index, units, Some("--scenario NAME shows another"))
        }
        FormatArg::Json => report::json::render(&r),
        FormatArg::Csv => {
            printed.stderr = side_notes(&r);
            report::csv::render(&r)
        }
    };
    if let Some(dir) = &args.chart {
        printed
            .stderr
            .push_str(&super::charts::write_schedule_charts(
                dir,
                &r,
                &plan,
                log.observed.as_ref(),
                units,
            )?);
    }
    deliver(printed, text, args.out.as_deref())
}
