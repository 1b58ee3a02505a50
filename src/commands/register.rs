//! `register`: a site's trial register on the command line (docs/register.md), and
//! `log add --register`. The command layer of the register: the clock and the OS
//! user are read here and handed to the library as a [`Stamp`].

mod day;
mod tables;

use super::{Printed, warning_lines};
use crate::cli::{ByArgs, CorrectArgs, LogAddArgs, RegisterAction, RegisterArgs, UnitsArg};
use crate::error::Error;
use crate::register::{
    self, Enrolment, Measure, Row, Session, SqliteStore, Stamp, Store, WeighIn, Which,
};
use std::path::Path;

/// Who runs the command: the OS user (read here, in the command layer), as
/// `os:NAME`, or the name `--by` gives.
pub(crate) fn who(by: &ByArgs) -> String {
    match &by.by {
        Some(name) => name.clone(),
        None => {
            let user = std::env::var("USER")
                .or_else(|_| std::env::var("LOGNAME"))
                .unwrap_or_else(|_| "unknown-os-user".to_string());
            format!("os:{user}")
        }
    }
}

/// Who and now (UTC): the clock is read here.
pub(crate) fn stamp(by: &ByArgs) -> Result<Stamp, Error> {
    Stamp::new(&who(by), chrono::Utc::now()).map_err(super::with_flag("--by"))
}

fn says(stderr: String) -> Result<Printed, Error> {
    Ok(Printed {
        stdout: String::new(),
        stderr,
    })
}

fn prints(stdout: String) -> Result<Printed, Error> {
    Ok(Printed {
        stdout,
        stderr: String::new(),
    })
}

/// Run `dosewright register ...`.
pub fn run(args: &RegisterArgs) -> Result<Printed, Error> {
    match &args.action {
        RegisterAction::Create { register } => {
            SqliteStore::create(register)?;
            says(format!(
                "{}: created an empty register (readable by its owner only)\nnext: dosewright register enrol {} PLAN.toml...\n",
                register.display(),
                register.display()
            ))
        }
        RegisterAction::Enrol {
            register,
            plans,
            study,
            roster,
            arm,
            by,
        } => enrol(
            register,
            plans,
            study.as_deref().zip(roster.as_deref()),
            arm.as_deref(),
            by,
        ),
        RegisterAction::Participants { register, format } => {
            let store = SqliteStore::open_read_only(register)?;
            prints(tables::participants(&store.participants()?, *format)?)
        }
        RegisterAction::List {
            register,
            participant,
            all,
            format,
        } => {
            let store = SqliteStore::open_read_only(register)?;
            let which = if *all { Which::All } else { Which::Current };
            if let Some(code) = participant {
                store.participant(code)?;
            }
            prints(tables::rows(
                &store.rows(participant.as_deref(), which)?,
                *format,
            )?)
        }
        RegisterAction::Correct(c) => correct(c),
        RegisterAction::Void {
            register,
            row,
            reason,
            by,
        } => {
            let stamp = stamp(by)?;
            let mut store = SqliteStore::open(register)?;
            let old = find_row(&store, *row)?;
            let change = store.void(*row, &stamp, reason)?;
            says(format!(
                "{}: participant {}: voided row {row} ({} of {}); change {} by {} at {}\n",
                register.display(),
                old.participant,
                old.measure.kind(),
                old.measure.date(),
                change.id,
                change.stamp.who,
                change.stamp.at_text()
            ))
        }
        RegisterAction::Audit {
            register,
            participant,
            format,
        } => {
            let store = SqliteStore::open_read_only(register)?;
            store.participant(participant)?;
            prints(tables::audit(&store.audit(Some(participant))?, *format)?)
        }
        RegisterAction::Import {
            register,
            log,
            participant,
            by,
        } => import(register, log, participant, by),
        RegisterAction::Export {
            register,
            to,
            participant,
        } => export(register, to, participant.as_deref()),
        RegisterAction::Backup { register, copy } => {
            let store = SqliteStore::open_read_only(register)?;
            store.backup_to(copy)?;
            says(format!(
                "{}: backed up to {} (one consistent moment; the copy was checked)\n",
                register.display(),
                copy.display()
            ))
        }
        RegisterAction::Check { register } => check(register),
        RegisterAction::Day(d) => day::run(d),
    }
}

/// `register enrol`: plan files (each under its `participant.id`), or a study and
/// its roster; all in one go, each participant its own transaction.
fn enrol(
    register: &Path,
    plans: &[std::path::PathBuf],
    study: Option<(&Path, &Path)>,
    arm: Option<&str>,
    by: &ByArgs,
) -> Result<Printed, Error> {
    let stamp = stamp(by)?;
    let mut skipped = Vec::new();
    let enrolments: Vec<Enrolment> = match study {
        Some((study, roster)) => {
            let (e, s) = crate::desk::demo::roster_enrolments(study, roster)?;
            skipped = s;
            e
        }
        None => plans
            .iter()
            .map(|p| {
                let text = crate::input::read(p)?.raw;
                let name = p.display().to_string();
                // Refuse a bad plan before the register is touched.
                crate::plan::parse_plan(&name, &text)?;
                Ok(Enrolment {
                    plan_name: name,
                    plan_text: text,
                    arm: arm.map(str::to_string),
                })
            })
            .collect::<Result<_, Error>>()?,
    };
    let mut store = SqliteStore::open(register)?;
    let mut said = String::new();
    for e in &enrolments {
        let p = store.enrol(e, &stamp)?;
        said.push_str(&format!(
            "{}: enrolled {}{} from {}\n",
            register.display(),
            p.code,
            p.arm.map(|a| format!(" (arm {a})")).unwrap_or_default(),
            p.plan_name
        ));
    }
    for s in skipped {
        said.push_str(&format!("not enrolled: {s}\n"));
    }
    says(said)
}

/// The measure `log add` describes, on `date`.
fn measure_of(args: &LogAddArgs, date: chrono::NaiveDate) -> Result<Measure, Error> {
    let note = args.note.clone().unwrap_or_default();
    let recorded = super::recorded_of(args);
    Ok(match (args.weigh_in, args.session) {
        (Some(mass), _) => Measure::WeighIn(WeighIn {
            date,
            mass_kg: super::to_kg(mass, args.units)?,
            body_fat_percent: args.body_fat,
            body_fat_method: recorded.body_fat_method,
            note,
        }),
        (None, Some(minutes)) => Measure::Session(Session {
            date,
            minutes,
            compendium_code: args.code.clone(),
            met: args.met,
            watts: recorded.watts,
            speed_kmh: recorded.speed_kmh,
            avg_hr_bpm: args.hr,
            rpe: args.rpe,
            note,
        }),
        (None, None) => unreachable!("clap requires --weigh-in or --session"),
    })
}

/// Refuse a weigh-in implausibly far from the participant's previous or next
/// current weigh-in or the plan's baseline: the one rule of `log add`
/// ([`crate::log::plausible::first_jump`]).
fn refuse_a_jump(store: &SqliteStore, code: &str, m: &Measure) -> Result<(), Error> {
    let Measure::WeighIn(w) = m else {
        return Ok(());
    };
    let plan = store.participant(code)?.plan()?;
    let rows = store.rows(Some(code), Which::Current)?;
    let weigh_ins: Vec<(String, chrono::NaiveDate, f64)> = rows
        .iter()
        .filter_map(|r| match &r.measure {
            Measure::WeighIn(x) => Some((
                format!(
                    "the weigh-in of {} ({} kg, row {})",
                    x.date, x.mass_kg, r.id
                ),
                x.date,
                x.mass_kg,
            )),
            Measure::Session(_) => None,
        })
        .collect();
    let previous = weigh_ins.iter().rfind(|x| x.1 <= w.date).cloned();
    let next = weigh_ins.iter().find(|x| x.1 > w.date).cloned();
    let base = (plan.protocol.start, plan.participant.subject.mass_kg);
    match crate::log::plausible::first_jump(w.date, w.mass_kg, previous, next, base) {
        Some(jump) => Err(Error::Usage(format!(
            "{}: {}",
            register::log_name(store.name(), code),
            jump.message(
                w.date,
                w.mass_kg,
                crate::log::JumpAdvice {
                    other_unit: "--units us takes pounds",
                    accept: "record it with --accept-jump",
                },
                "Nothing was written"
            )
        ))),
        None => Ok(()),
    }
}

/// `log add --register R --participant P`: record one weigh-in or session.
pub(crate) fn record(args: &LogAddArgs, register: &Path, code: &str) -> Result<Printed, Error> {
    let stamp = stamp(&args.by)?;
    // The date, like the stamp, comes from the clock read here.
    let date = args
        .date
        .unwrap_or_else(|| chrono::Local::now().date_naive());
    let m = measure_of(args, date)?;
    let mut store = SqliteStore::open(register)?;
    if !args.accept_jump {
        refuse_a_jump(&store, code, &m)?;
    }
    let recorded = store.record(code, &m, &stamp)?;
    let mut said = format!(
        "{}: participant {code}: recorded row {}: {} of {}: {}",
        register.display(),
        recorded.row.id,
        m.kind(),
        m.date(),
        crate::desk::views::describe(&m)
    );
    if let (UnitsArg::Us, Some(lb)) = (args.units, args.weigh_in) {
        said.push_str(&format!(" (given as {lb} lb)"));
    }
    said.push('\n');
    said.push_str(&warning_lines(&recorded.warnings));
    says(said)
}

/// The row with id `id`, in any status; an error naming the register and the id.
fn find_row(store: &SqliteStore, id: i64) -> Result<Row, Error> {
    store
        .rows(None, Which::All)?
        .into_iter()
        .find(|r| r.id == id)
        .ok_or_else(|| {
            Error::Usage(format!(
                "{}: there is no row {id}; give the id of a current row (see `dosewright register list {}`)",
                store.name(),
                store.name()
            ))
        })
}

/// `register correct`: the row's values with the ones given replaced; the kind stays.
fn correct(c: &CorrectArgs) -> Result<Printed, Error> {
    let stamp = stamp(&c.by)?;
    let mut store = SqliteStore::open(&c.register)?;
    let old = find_row(&store, c.row)?;
    let wrong = |flag: &str, kind: &str| {
        Err(Error::Usage(format!(
            "{flag}: row {} is a {kind}; a correction keeps the kind. Give the options of a {kind}, or void the row and record a new one",
            c.row
        )))
    };
    let mut m = old.measure.clone();
    match &mut m {
        Measure::WeighIn(w) => {
            for (flag, given) in [
                ("--session", c.session.is_some()),
                ("--hr", c.hr.is_some()),
                ("--rpe", c.rpe.is_some()),
                ("--watts", c.watts.is_some()),
                ("--speed", c.speed.is_some()),
            ] {
                if given {
                    return wrong(flag, "weigh-in");
                }
            }
            if let Some(mass) = c.weigh_in {
                w.mass_kg = super::to_kg(mass, c.units)?;
            }
            w.body_fat_percent = c.body_fat.or(w.body_fat_percent);
            w.body_fat_method = c.body_fat_method.clone().or(w.body_fat_method.take());
        }
        Measure::Session(s) => {
            for (flag, given) in [
                ("--weigh-in", c.weigh_in.is_some()),
                ("--body-fat", c.body_fat.is_some()),
                ("--body-fat-method", c.body_fat_method.is_some()),
            ] {
                if given {
                    return wrong(flag, "session");
                }
            }
            s.minutes = c.session.unwrap_or(s.minutes);
            s.avg_hr_bpm = c.hr.or(s.avg_hr_bpm);
            s.rpe = c.rpe.or(s.rpe);
            s.watts = c.watts.or(s.watts);
            s.speed_kmh = c.speed.or(s.speed_kmh);
        }
    }
    set_date_and_note(&mut m, c.date, c.note.as_deref());
    let recorded = store.correct(c.row, &m, &stamp, &c.reason)?;
    says(format!(
        "{}: participant {}: corrected row {} by row {}: {} of {}: {} (was {})\n{}",
        c.register.display(),
        old.participant,
        c.row,
        recorded.row.id,
        m.kind(),
        m.date(),
        crate::desk::views::describe(&m),
        crate::desk::views::describe(&old.measure),
        warning_lines(&recorded.warnings)
    ))
}

fn set_date_and_note(m: &mut Measure, date: Option<chrono::NaiveDate>, note: Option<&str>) {
    let (d, n) = match m {
        Measure::WeighIn(w) => (&mut w.date, &mut w.note),
        Measure::Session(s) => (&mut s.date, &mut s.note),
    };
    if let Some(date) = date {
        *d = date;
    }
    if let Some(note) = note {
        *n = note.to_string();
    }
}

/// `register import`: a CSV log into the register, all rows or none.
fn import(register: &Path, log: &Path, code: &str, by: &ByArgs) -> Result<Printed, Error> {
    let stamp = stamp(by)?;
    let f = crate::input::read(log)?;
    let mut store = SqliteStore::open(register)?;
    let imported = store.import_log(code, &f.name, &f.raw, &stamp)?;
    let ids = match (imported.ids.first(), imported.ids.last()) {
        (Some(a), Some(b)) => format!(" (rows {a} to {b})"),
        _ => String::new(),
    };
    says(format!(
        "{}: participant {code}: imported {} rows from {}{ids}\n{}",
        register.display(),
        imported.ids.len(),
        f.name,
        warning_lines(&imported.warnings)
    ))
}

/// `register export`: the tidy tables and each participant's CSV log into `dir`.
fn export(register: &Path, dir: &Path, code: Option<&str>) -> Result<Printed, Error> {
    crate::output::check_chart_folder(dir).map_err(|e| match e {
        Error::Usage(m) => Error::Usage(
            m.replacen("--chart", "--to", 1)
                .replace("for the charts", "for the export"),
        ),
        other => other,
    })?;
    let store = SqliteStore::open_read_only(register)?;
    let participants = match code {
        Some(c) => vec![store.participant(c)?],
        None => store.participants()?,
    };
    let rows = store.rows(code, Which::All)?;
    let mut files: Vec<(String, String)> = vec![
        (
            "participants.csv".into(),
            tables::participants(&participants, crate::cli::ListFormat::Csv)?,
        ),
        ("weigh-ins.csv".into(), register::weigh_ins_csv(&rows)?),
        ("sessions.csv".into(), register::sessions_csv(&rows)?),
        (
            "changes.csv".into(),
            register::changes_csv(&store.audit(code)?)?,
        ),
    ];
    for p in &participants {
        let current = store.rows(Some(&p.code), Which::Current)?;
        files.push((
            format!("log-{}.csv", super::charts::stem(&p.code)),
            register::log_csv(&current)?,
        ));
    }
    for (name, _) in &files {
        if super::same_file(&dir.join(name), register) {
            return Err(Error::Usage(format!(
                "--to {}: {name} there is the register itself; choose another folder",
                dir.display()
            )));
        }
    }
    let files: Vec<(String, &str)> = files.iter().map(|(n, t)| (n.clone(), t.as_str())).collect();
    // All the files or none (the one writer, output.rs).
    let paths = crate::output::write_files(dir, &files)?;
    let said: String = paths
        .iter()
        .map(|p| format!("wrote {}\n", p.display()))
        .collect();
    says(said)
}

/// `register check`: integrity and schema; an error (exit 2) naming what is wrong.
fn check(register: &Path) -> Result<Printed, Error> {
    let store = SqliteStore::open_read_only(register)?;
    let r = store.check()?;
    let text = format!(
        "{}\n  integrity_check: {}\n  foreign keys: {} violation(s)\n  application id: {:#x}\n  schema version: {} (this program: {})\n  journal mode: {}\n  participants: {}, rows: {}, changes: {}\n",
        register.display(),
        r.integrity.join("; "),
        r.foreign_key_violations,
        r.application_id,
        r.schema_version,
        register::SCHEMA_VERSION,
        r.journal_mode,
        r.participants,
        r.rows,
        r.changes
    );
    if r.ok() {
        prints(format!("{text}  result: ok\n"))
    } else {
        Err(Error::Usage(format!(
            "{text}  result: NOT OK; keep the file as it is, restore the last good backup and tell the data manager"
        )))
    }
}
