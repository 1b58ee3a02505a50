//! `check`: validate a plan and print its resolved assumptions.

use super::schedule::schedule_report;
use super::{Printed, display_units, load};
use crate::cli::CheckArgs;
use crate::error::Error;
use crate::report;

/// Run `check`.
pub fn run(args: &CheckArgs) -> Result<Printed, Error> {
    let plan = load(Some(&args.plan))?;
    let r = schedule_report(&plan)?;
    Ok(Printed {
        stdout: report::check::render(&plan, &r, display_units(&args.display)),
        stderr: String::new(),
    })
}
