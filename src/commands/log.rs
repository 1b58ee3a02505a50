//! `log add`: append one validated row to a participant log.

use super::{Printed, load, same_file, warning_lines};
use crate::cli::LogAddArgs;
use crate::error::Error;
use crate::log::{NewEntry, NewRow, append_row};

/// Run `log add`.
pub fn run(args: &LogAddArgs) -> Result<Printed, Error> {
    if same_file(&args.log, &args.plan) {
        return Err(Error::Usage(format!(
            "--log {}: that is the plan file; give the log's CSV file",
            args.log.display()
        )));
    }
    // clap lets `requires = "session"` be met by any member of the required
    // group, so a weigh-in's misplaced session options are refused here
    // instead of being dropped silently.
    let session_only = [
        ("--code", args.code.is_some()),
        ("--met", args.met.is_some()),
        ("--hr", args.hr.is_some()),
        ("--rpe", args.rpe.is_some()),
    ];
    if args.weigh_in.is_some()
        && let Some((name, _)) = session_only.iter().find(|(_, given)| *given)
    {
        return Err(Error::Usage(format!(
            "{name} describes a session; give it with --session, not with --weigh-in"
        )));
    }
    if args.session.is_some() && args.body_fat.is_some() {
        return Err(Error::Usage(
            "--body-fat belongs to a weigh-in; give it with --weigh-in, not with --session"
                .to_string(),
        ));
    }
    crate::output::check_log(&args.log)?;
    let plan = load(Some(&args.plan))?;
    let entry = match (args.weigh_in, args.session) {
        (Some(kg), _) => NewEntry::WeighIn {
            mass_kg: kg,
            body_fat_percent: args.body_fat,
        },
        (None, Some(minutes)) => NewEntry::Session {
            minutes,
            compendium_code: args.code.clone(),
            met: args.met,
            avg_hr_bpm: args.hr,
            rpe: args.rpe,
        },
        (None, None) => unreachable!("clap requires --weigh-in or --session"),
    };
    let row = NewRow {
        date: args.date,
        entry,
        note: args.note.clone(),
    };
    let (said, warnings) = append_row(&args.log, &plan, &row)?;
    Ok(Printed {
        stdout: String::new(),
        stderr: format!("{said}\n{}", warning_lines(&warnings)),
    })
}
