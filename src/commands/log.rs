//! `log add`: append one validated row to a participant log.

use super::to_kg;
use super::{Printed, load, same_file, warning_lines};
use crate::cli::LogAddArgs;
use crate::cli::UnitsArg;
use crate::error::Error;
use crate::log::{NewEntry, NewRow, append_row_checked};

/// Run `log add`: on a CSV log, or (`--register`) on a participant in a register.
pub fn run(args: &LogAddArgs) -> Result<Printed, Error> {
    if let (Some(log), Some(plan)) = (&args.log, &args.plan)
        && same_file(log, plan)
    {
        return Err(Error::Usage(format!(
            "--log {}: that is the plan file; give the log's CSV file",
            log.display()
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
    if let (Some(register), Some(code)) = (&args.from.register, &args.from.participant) {
        return super::register::record(args, register, code);
    }
    let (Some(log), Some(plan)) = (&args.log, &args.plan) else {
        unreachable!("clap requires PLAN and --log, or --register")
    };
    if args.by.by.is_some() {
        return Err(Error::Usage(
            "--by names who records in a register; a CSV log does not keep it. Leave out --by, or record with --register".to_string(),
        ));
    }
    let writable = crate::output::check_log(log);
    if crate::output::is_stdout(log) {
        writable.map_err(super::option_first("--log"))?;
    } else {
        writable?;
    }
    let plan = load(Some(plan))?;
    let entry = match (args.weigh_in, args.session) {
        (Some(mass), _) => NewEntry::WeighIn {
            mass_kg: to_kg(mass, args.units)?,
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
    // The clock is read here, in the command layer, and nowhere in the library.
    let date = args
        .date
        .unwrap_or_else(|| chrono::Local::now().date_naive());
    let row = NewRow {
        date,
        entry,
        note: args.note.clone(),
        recorded: super::recorded_of(args),
    };
    let (mut said, warnings) = append_row_checked(
        log,
        &plan,
        &row,
        (!args.accept_jump).then_some(crate::log::JumpAdvice {
            other_unit: "--units us takes pounds",
            accept: "add it with --accept-jump",
        }),
    )?;
    if let (UnitsArg::Us, Some(lb)) = (args.units, args.weigh_in) {
        said.push_str(&format!(" (given as {lb} lb)"));
    }
    Ok(Printed {
        stdout: String::new(),
        stderr: format!("{said}\n{}", warning_lines(&warnings)),
    })
}
