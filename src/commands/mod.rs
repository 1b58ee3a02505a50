//! The commands: one file per subcommand, each `run(args) -> Result<Printed, Error>`,
//! and the few helpers they share (display units, side notes, output delivery).
//!
//! Every output target of a command is checked by one call, `check_outputs`, at the
//! start of the command, before any work; every file a command writes goes through
//! `write_output`. Those two are the only places that reach the file writer.

use crate::cli::{Command, DisplayArgs, EnergyArg, FromRegisterArgs, LogAction, LogArgs, UnitsArg};
use crate::error::Error;
use crate::plan::{self, Plan};
use crate::report::units::{EnergyUnit, UnitSystem, Units};
use crate::report::{self, ScheduleReport};
use crate::safety::{ScreeningOutcome, Warning};
use chrono::NaiveDate;
use std::path::Path;

pub mod activities;
pub mod calendar;
pub mod charts;
pub mod check;
pub mod cohort;
pub mod cohort_merge;
pub mod cohort_shard;
pub mod compare;
pub mod desk;
pub mod fit;
pub mod goal;
pub mod init;
pub mod log;
pub mod pilot;
pub mod register;
pub mod schedule;
pub mod sheets;

/// What a successful command prints.
#[derive(Debug, Default, Clone, PartialEq, Eq)]
pub struct Printed {
    /// Standard output.
    pub stdout: String,
    /// Standard error (notes and warnings beside machine-readable output).
    pub stderr: String,
}

/// Run one command.
pub fn run(command: &Command) -> Result<Printed, Error> {
    match command {
        Command::Schedule(args) => schedule::run(args),
        Command::Calendar(args) => calendar::run(args),
        Command::Sheets(args) => sheets::run(args),
        Command::Compare(args) => compare::run(args),
        Command::Goal(args) => goal::run(args),
        Command::Fit(args) => fit::run(args),
        Command::Log {
            action: LogAction::Add(args),
        } => log::run(args),
        Command::Cohort(args) => cohort::run(args),
        Command::CohortMerge(args) => cohort_merge::run(args),
        Command::Pilot(args) => pilot::run(args),
        Command::Desk(args) => desk::run(args),
        Command::Register(args) => register::run(args),
        Command::Check(args) => check::run(args),
        Command::Init(args) => init::run(args),
        Command::Activities(args) => activities::run(args),
    }
}

/// Load a plan file, or the built-in demo when none is named (every command that takes
/// one plan: docs/commands.md section 1). A study file given instead is named as one,
/// with the commands that take it.
pub fn load(path: Option<&Path>) -> Result<Plan, Error> {
    match path {
        Some(p) => plan::load_plan(p).map_err(|e| match e {
            Error::Input(_) => check::study_given_for_a_plan(p).unwrap_or(e),
            other => other,
        }),
        None => plan::parse_plan(plan::starter::DEMO_NAME, plan::starter::DEMO_PLAN),
    }
}

pub use crate::planning::LogInput;

/// Read the log named on the command line, if any, up to `as_of`.
pub fn read_log(
    plan: &Plan,
    log: Option<&Path>,
    as_of: Option<NaiveDate>,
) -> Result<LogInput, Error> {
    let Some(path) = log else {
        return Ok(LogInput::default());
    };
    check_as_of(plan, as_of)?;
    let (log, warnings) = crate::log::load_log(path, plan, as_of)?;
    Ok(LogInput::from_log(plan, &log, warnings, as_of))
}

/// The plan and the log of a log-reading command (`schedule`, `calendar`, `sheets`,
/// `compare`, `goal`, `fit`): a plan file (or the demo) with an optional CSV log, or
/// a participant in a register (`--register FILE --participant CODE`), whose stored
/// plan and current rows are read exactly as `--log` reads the CSV log the register
/// exports (docs/register.md). `edit` changes the plan before the log is taken in
/// (`compare --add-scenario`).
pub fn plan_and_log(
    plan: Option<&Path>,
    log: Option<&Path>,
    from: &FromRegisterArgs,
    as_of: Option<NaiveDate>,
    edit: impl FnOnce(Plan) -> Result<Plan, Error>,
) -> Result<(Plan, LogInput), Error> {
    let (Some(register), Some(code)) = (&from.register, &from.participant) else {
        let plan = edit(load(plan)?)?;
        let log = read_log(&plan, log, as_of)?;
        return Ok((plan, log));
    };
    let store = crate::register::SqliteStore::open_read_only(register)?;
    let stored = crate::register::Store::participant(&store, code)?.plan()?;
    check_as_of(&stored, as_of)?;
    let p = crate::register::participant_log(&store, code, as_of)?;
    let plan = edit(p.plan)?;
    let log = LogInput::from_log(&plan, &p.log, p.warnings, as_of);
    Ok((plan, log))
}

/// [`plan_and_log`] for the commands that take [`LogArgs`].
pub fn plan_and_logged(
    plan: Option<&Path>,
    logged: &LogArgs,
    edit: impl FnOnce(Plan) -> Result<Plan, Error>,
) -> Result<(Plan, LogInput), Error> {
    plan_and_log(
        plan,
        logged.log.as_deref(),
        &logged.from,
        logged.as_of,
        edit,
    )
}

/// The input files of a log-reading command, for [`check_outputs`]: the plan, the
/// log and the register, whichever are given.
pub(crate) fn log_inputs<'a>(plan: Option<&'a Path>, logged: &'a LogArgs) -> Vec<&'a Path> {
    plan.into_iter()
        .chain(logged.log.as_deref())
        .chain(logged.from.register.as_deref())
        .collect()
}

/// Refuse, before any work, an output path that names one of the command's inputs
/// or that cannot be written. The one place the commands check their targets.
pub(crate) fn check_outputs(
    out: Option<&Path>,
    chart: Option<&Path>,
    inputs: &[&Path],
) -> Result<(), Error> {
    if let Some(o) = out.filter(|o| !crate::output::is_stdout(o)) {
        crate::output::refuse_overwriting_inputs(o, inputs).map_err(option_first("--out"))?;
        crate::output::check_target(o, false)?;
    }
    if let Some(dir) = chart {
        crate::output::check_chart_folder(dir).map_err(option_first("--chart"))?;
    }
    Ok(())
}

/// Whether `a` and `b` name the same existing file.
pub(crate) fn same_file(a: &Path, b: &Path) -> bool {
    a == b || crate::output::refuse_overwriting_inputs(a, &[b]).is_err()
}

/// Write one output file atomically; with `create_new`, refuse an existing file. The
/// one place the commands write a file.
pub(crate) fn write_output(path: &Path, bytes: &[u8], create_new: bool) -> Result<(), Error> {
    crate::output::write_atomic(path, bytes, create_new)
}

/// The unit system of `--units`.
pub(crate) fn unit_system(units: UnitsArg) -> UnitSystem {
    match units {
        UnitsArg::Metric => UnitSystem::Metric,
        UnitsArg::Us => UnitSystem::Us,
    }
}

/// The display units of `--units` and `--energy`.
pub(crate) fn display_units(d: &DisplayArgs) -> Units {
    Units {
        system: unit_system(d.units),
        energy: match d.energy {
            EnergyArg::Kcal => EnergyUnit::Kcal,
            EnergyArg::Kj => EnergyUnit::Kj,
        },
    }
}

/// Refuse display units other than metric and kcal with a machine-readable format:
/// JSON and CSV are the machine contract, in the units of plan files and logs, and
/// converting them silently, or ignoring the option silently, would both mislead.
pub(crate) fn refuse_display_units(units: Units, format: &str) -> Result<(), Error> {
    if units.is_model_units() {
        return Ok(());
    }
    let mut given = Vec::new();
    if units.system == UnitSystem::Us {
        given.push("--units us");
    }
    if units.energy == EnergyUnit::Kj {
        given.push("--energy kj");
    }
    Err(Error::Usage(format!(
        "{} with --format {format}: JSON and CSV are always metric and kcal (kg, km/h, kcal, as in plan files and logs); leave out --units and --energy, or choose a human-readable format such as --format table",
        given.join(" ")
    )))
}

/// Print to standard output, or write the file atomically and say so on standard error.
pub(crate) fn deliver(
    mut printed: Printed,
    text: String,
    out: Option<&Path>,
) -> Result<Printed, Error> {
    match out.filter(|o| !crate::output::is_stdout(o)) {
        Some(o) => {
            write_output(o, text.as_bytes(), false)?;
            printed.stderr.push_str(&format!("wrote {}\n", o.display()));
        }
        None => printed.stdout = text,
    }
    Ok(printed)
}

/// Warnings and cautions for standard error beside machine-readable output.
pub(crate) fn side_notes(r: &ScheduleReport) -> String {
    side_notes_of(&r.warnings, &r.screening)
}

/// Warnings and cautions for standard error, from their parts.
pub(crate) fn side_notes_of(warnings: &[Warning], screening: &ScreeningOutcome) -> String {
    let mut s = report::table::warnings_text(warnings);
    s.push_str(&report::cautions_text(screening));
    s
}

/// Randomisation asked for a roster that already gives every participant an arm.
pub(crate) fn already_allocated() -> Error {
    Error::Usage(
        "--randomise: the roster already gives every participant an arm; leave out --randomise, or empty the roster's arm column".to_string(),
    )
}

/// A usage error of the library worded with the option it came from: `FLAG: message`.
pub(crate) fn with_flag(flag: &str) -> impl Fn(Error) -> Error + '_ {
    move |e| match e {
        Error::Usage(m) => Error::Usage(format!("{flag}: {m}")),
        other => other,
    }
}

/// A usage error of the writer (which knows no options) worded with the option whose
/// value it is about: `FLAG message`, as in `--out plan.toml: that is an input file`.
pub(crate) fn option_first(flag: &str) -> impl Fn(Error) -> Error + '_ {
    move |e| match e {
        Error::Usage(m) => Error::Usage(format!("{flag} {m}")),
        other => other,
    }
}

/// The index of the scenario `--scenario` names (the first when None).
pub(crate) fn scenario_index(r: &ScheduleReport, name: Option<&str>) -> Result<usize, Error> {
    r.scenario_index(name).map_err(with_flag("--scenario"))
}

/// Refuse an `--as-of` date outside the plan's protocol and follow-up.
pub(crate) fn check_as_of(plan: &Plan, as_of: Option<NaiveDate>) -> Result<(), Error> {
    let (start, end) = (plan.protocol.start, plan.protocol.end_date());
    match as_of {
        Some(d) if d < start || d > end => Err(Error::Usage(format!(
            "--as-of {d} is outside the protocol; give a date from the start {start} through the end of follow-up {end}"
        ))),
        _ => Ok(()),
    }
}

/// One `warning [code]: message` line per warning.
pub(crate) fn warning_lines(warnings: &[Warning]) -> String {
    warnings
        .iter()
        .map(|w| format!("warning [{}]: {}\n", w.code, w.message))
        .collect()
}

/// A weigh-in given in `units`, in kg (the log always holds kg): a pound is
/// 0.45359237 kg exactly. A value that is not a finite positive number is refused
/// here, before any conversion could hide it.
pub(crate) fn to_kg(mass: f64, units: UnitsArg) -> Result<f64, Error> {
    let unit = match units {
        UnitsArg::Metric => return Ok(mass),
        UnitsArg::Us => "lb",
    };
    if !(mass.is_finite() && mass > 0.0) {
        return Err(Error::Usage(format!(
            "--weigh-in {mass}: give the measured mass in {unit}, a positive number"
        )));
    }
    Ok(mass * crate::report::units::KG_PER_LB)
}

/// The values of `log add`'s options for the log's optional named columns (the
/// same for a CSV log and a register).
pub(crate) fn recorded_of(args: &crate::cli::LogAddArgs) -> crate::log::recorded::Recorded {
    crate::log::recorded::Recorded {
        body_fat_method: args.body_fat_method.clone(),
        watts: args.watts,
        speed_kmh: args.speed,
    }
}
