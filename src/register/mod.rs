//! The trial register: everything measured at a site in one store, with
//! corrections that never delete, an audit trail of every change, and no lost rows
//! when several people record at once (docs/register.md).
//!
//! The storage sits behind the small [`Store`] trait; [`SqliteStore`] is the
//! embedded one (one SQLite file per site). The rules for a measured row are not
//! repeated here: a participant's current rows are rendered as the CSV log (the
//! exchange format, [`crate::log::COLUMNS`] first) and validated by
//! [`crate::log::parse_log`] against the participant's plan before anything is
//! written, so the register accepts exactly what a CSV log accepts, and a
//! participant's rows exported with [`log_csv`] read back as the same [`Log`].
//!
//! The library never reads the clock, the OS user or the environment: every write
//! takes a [`Stamp`] (who and when, UTC) from the caller.

mod export;
mod measured;
mod schema;
mod sql;
mod sqlite;

pub use measured::{ImportedMeasurement, Measurement, MeasurementChange, MeasurementRow};

pub use export::{
    CHANGE_COLUMNS, SESSION_COLUMNS, WEIGH_IN_COLUMNS, changes_csv, sessions_csv, weigh_ins_csv,
};
pub use schema::{APPLICATION_ID, SCHEMA_VERSION};
pub use sqlite::{CheckReport, SqliteStore};

use crate::error::{Error, InputError, Location};
use crate::log::{COLUMNS, Entry, Log, LogRow};
use crate::plan::Plan;
use crate::safety::Warning;
use chrono::{DateTime, NaiveDate, SecondsFormat, Utc};
use serde::Serialize;

/// Columns the register's log text carries after [`COLUMNS`]: values the log
/// parser does not need, and the row's stable id.
pub const EXTRA_COLUMNS: [&str; 4] = ["body_fat_method", "watts", "speed_kmh", "row_id"];

/// Who made a change and when: given by the caller (the OS user or a desk account,
/// and the current UTC time), never read by the library.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Stamp {
    /// Who (not empty).
    pub who: String,
    /// When, UTC.
    pub at: DateTime<Utc>,
}

impl Stamp {
    /// A stamp; an empty `who` is an error.
    pub fn new(who: &str, at: DateTime<Utc>) -> Result<Stamp, Error> {
        let who = who.trim();
        if who.is_empty() {
            return Err(Error::Usage(
                "who made the change is empty; give the name of the person or account recording"
                    .to_string(),
            ));
        }
        one_line("who", who)?;
        Ok(Stamp {
            who: who.to_string(),
            at,
        })
    }

    /// `at` as ISO 8601 UTC with milliseconds (`2027-01-11T08:30:00.000Z`), the form
    /// stored and exported (it sorts as text in time order).
    pub fn at_text(&self) -> String {
        iso(&self.at)
    }
}

/// A UTC time as stored: ISO 8601 with milliseconds and `Z`.
fn iso(at: &DateTime<Utc>) -> String {
    at.to_rfc3339_opts(SecondsFormat::Millis, true)
}

/// A participant to enrol: the plan text as given (its `participant.id` is the
/// participant's code in the register) and the arm, if the trial has arms.
#[derive(Debug, Clone, PartialEq)]
pub struct Enrolment {
    /// Where the plan came from (a file name), for messages.
    pub plan_name: String,
    /// The plan's TOML text, stored exactly as given.
    pub plan_text: String,
    /// The study arm, if any.
    pub arm: Option<String>,
}

/// An enrolled participant.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Participant {
    /// Pseudonymous code (the plan's `participant.id`).
    pub code: String,
    /// The study arm, if any.
    pub arm: Option<String>,
    /// Where the plan came from.
    pub plan_name: String,
    /// The plan text as given at enrolment.
    pub plan_text: String,
    /// Who enrolled the participant, and when.
    pub enrolled: Stamp,
}

impl Participant {
    /// The participant's validated plan.
    pub fn plan(&self) -> Result<Plan, Error> {
        crate::plan::parse_plan(&self.plan_name, &self.plan_text)
    }
}

/// A weigh-in: the state at 00:00 of its date.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WeighIn {
    /// The date.
    pub date: NaiveDate,
    /// Body mass, kg.
    pub mass_kg: f64,
    /// Body fat, percent, if measured.
    pub body_fat_percent: Option<f64>,
    /// How body fat was measured (DXA, bioimpedance, skinfolds...), if given.
    pub body_fat_method: Option<String>,
    /// A note (one line; empty for none).
    pub note: String,
}

/// A delivered session (or one bout of it).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Session {
    /// The date.
    pub date: NaiveDate,
    /// Minutes at the target (0 = a missed session recorded on purpose).
    pub minutes: f64,
    /// The compendium code of the activity done, if not the plan's.
    pub compendium_code: Option<String>,
    /// The MET of the activity done, if given instead of a code.
    pub met: Option<f64>,
    /// The power actually used on an ergometer, watts, if recorded.
    pub watts: Option<f64>,
    /// The speed actually used (treadmill, track), km/h, if recorded.
    pub speed_kmh: Option<f64>,
    /// Average heart rate, beats/min, if recorded.
    pub avg_hr_bpm: Option<f64>,
    /// Borg 6-20 rating of perceived exertion, if recorded.
    pub rpe: Option<f64>,
    /// A note (one line; empty for none).
    pub note: String,
}

/// What one measured row records.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Measure {
    /// A weigh-in.
    WeighIn(WeighIn),
    /// A delivered session.
    Session(Session),
}

impl Measure {
    /// The row's date.
    pub fn date(&self) -> NaiveDate {
        match self {
            Measure::WeighIn(w) => w.date,
            Measure::Session(s) => s.date,
        }
    }

    /// The row's note.
    pub fn note(&self) -> &str {
        match self {
            Measure::WeighIn(w) => &w.note,
            Measure::Session(s) => &s.note,
        }
    }

    /// `weigh-in` or `session`, as in the log's `kind` column.
    pub fn kind(&self) -> &'static str {
        match self {
            Measure::WeighIn(_) => "weigh-in",
            Measure::Session(_) => "session",
        }
    }

    /// The values as JSON, as the audit trail keeps them.
    pub fn to_json(&self) -> String {
        // A Measure holds only numbers, dates and strings: serialising cannot fail.
        serde_json::to_string(self).unwrap_or_default()
    }

    /// The measure of a validated log row, with the values of its optional named
    /// columns (body-fat method, watts, speed).
    pub fn from_log_row(row: &LogRow) -> Measure {
        match &row.entry {
            Entry::WeighIn {
                mass_kg,
                body_fat_percent,
            } => Measure::WeighIn(WeighIn {
                date: row.date,
                mass_kg: *mass_kg,
                body_fat_percent: *body_fat_percent,
                body_fat_method: row.recorded.body_fat_method.clone(),
                note: row.note.clone(),
            }),
            Entry::Session {
                minutes,
                compendium_code,
                met,
                avg_hr_bpm,
                rpe,
                ..
            } => Measure::Session(Session {
                date: row.date,
                minutes: *minutes,
                compendium_code: compendium_code.clone(),
                met: *met,
                watts: row.recorded.watts,
                speed_kmh: row.recorded.speed_kmh,
                avg_hr_bpm: *avg_hr_bpm,
                rpe: *rpe,
                note: row.note.clone(),
            }),
        }
    }
}

/// Where a row stands.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "status", content = "by")]
pub enum Status {
    /// The row counts.
    Current,
    /// Corrected: the row with this id replaces it.
    Superseded(i64),
    /// Voided: it does not count (the void is in the audit trail).
    Voided,
}

impl Status {
    /// `current`, `superseded` or `voided`.
    pub fn name(self) -> &'static str {
        match self {
            Status::Current => "current",
            Status::Superseded(_) => "superseded",
            Status::Voided => "voided",
        }
    }
}

/// One measured row of the register, in any status.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Row {
    /// The stable row id (one id space for weigh-ins and sessions).
    pub id: i64,
    /// The participant's code.
    pub participant: String,
    /// What it records.
    pub measure: Measure,
    /// Who recorded this version of the row, and when.
    pub recorded: Stamp,
    /// The row this one corrects, if it is a correction.
    pub supersedes: Option<i64>,
    /// Where it stands.
    pub status: Status,
}

/// Which rows to read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Which {
    /// Only the rows that count (neither superseded nor voided).
    Current,
    /// Every version of every row.
    All,
}

/// What a change did.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Action {
    /// A participant enrolled.
    Enrol,
    /// A row recorded.
    Record,
    /// A row recorded by an import of a CSV log.
    Import,
    /// A row corrected (a new version supersedes it).
    Correct,
    /// A row voided.
    Void,
}

impl Action {
    /// The action's name as stored.
    pub fn name(self) -> &'static str {
        match self {
            Action::Enrol => "enrol",
            Action::Record => "record",
            Action::Import => "import",
            Action::Correct => "correct",
            Action::Void => "void",
        }
    }

    fn from_name(s: &str) -> Option<Action> {
        [
            Action::Enrol,
            Action::Record,
            Action::Import,
            Action::Correct,
            Action::Void,
        ]
        .into_iter()
        .find(|a| a.name() == s)
    }
}

/// One entry of the audit trail.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Change {
    /// The change's id (in the order changes were made).
    pub id: i64,
    /// The participant's code.
    pub participant: String,
    /// What was done.
    pub action: Action,
    /// The row it concerns: the new row for a record, import or correction, the
    /// voided row for a void; none for an enrolment.
    pub row: Option<i64>,
    /// Who and when.
    pub stamp: Stamp,
    /// The values before (JSON), for a correction or void.
    pub old_values: Option<String>,
    /// The values after (JSON), for an enrolment, record, import or correction.
    pub new_values: Option<String>,
    /// Why (required for corrections and voids).
    pub reason: Option<String>,
}

/// A row written, with the warnings it earns (such as an implausible jump in mass).
#[derive(Debug, Clone, PartialEq)]
pub struct Recorded {
    /// The new row.
    pub row: Row,
    /// Warnings about the new row, from the log's rules.
    pub warnings: Vec<Warning>,
}

/// A CSV log imported in one transaction.
#[derive(Debug, Clone, PartialEq)]
pub struct Imported {
    /// The new rows' ids, in the log's order.
    pub ids: Vec<i64>,
    /// Warnings about the imported rows, from the log's rules.
    pub warnings: Vec<Warning>,
}

/// The operations the commands need, kept small so that another storage can
/// follow.
///
/// Every write is atomic (all of it or nothing), validates through
/// [`validate_rows`] against the participant's current rows *inside* its
/// transaction (so two writers cannot both validate against a state that one of
/// them is about to change), and appends one [`Change`] per row touched. Nothing is
/// ever deleted or overwritten: a correction inserts a new version that
/// supersedes the old one, a void marks the row.
///
/// A server database for multi-site trials (not built) would implement the same
/// trait over a connection pool: the same tables with a `site` column (and
/// row-level security per site), each method one `SERIALIZABLE` (or `SELECT ... FOR
/// UPDATE` on the participant row) transaction, the `Stamp` coming from the
/// authenticated account, and the same no-delete/no-update rules as triggers or
/// revoked `DELETE`/`UPDATE` privileges. Callers would not change.
pub trait Store {
    /// A name for messages (the register's path).
    fn name(&self) -> &str;
    /// Enrol a participant under the plan's `participant.id`.
    fn enrol(&mut self, enrolment: &Enrolment, stamp: &Stamp) -> Result<Participant, Error>;
    /// Every participant, by code.
    fn participants(&self) -> Result<Vec<Participant>, Error>;
    /// One participant; an error naming the code when not enrolled.
    fn participant(&self, code: &str) -> Result<Participant, Error>;
    /// Record one weigh-in or session.
    fn record(&mut self, code: &str, measure: &Measure, stamp: &Stamp) -> Result<Recorded, Error>;
    /// Import a CSV log's rows for a participant, all or none.
    fn import_log(
        &mut self,
        code: &str,
        source: &str,
        text: &str,
        stamp: &Stamp,
    ) -> Result<Imported, Error>;
    /// Correct row `id` (a current row): a new version supersedes it.
    fn correct(
        &mut self,
        id: i64,
        measure: &Measure,
        stamp: &Stamp,
        reason: &str,
    ) -> Result<Recorded, Error>;
    /// Void row `id` (a current row).
    fn void(&mut self, id: i64, stamp: &Stamp, reason: &str) -> Result<Change, Error>;
    /// Rows of one participant (or all, with `None`), by participant, date and id.
    fn rows(&self, code: Option<&str>, which: Which) -> Result<Vec<Row>, Error>;
    /// Every participant's rows, as [`Store::rows`] with `None` gives them, handed
    /// to `each` one participant at a time (by code; participants without rows are
    /// left out) as soon as they are read, so that the caller can work on one
    /// participant while the next is read. An error from `each` stops the reading.
    fn rows_each_participant(
        &self,
        which: Which,
        each: &mut dyn FnMut(Vec<Row>) -> Result<(), Error>,
    ) -> Result<(), Error>;
    /// The audit trail of one participant (or all, with `None`), in order.
    fn audit(&self, code: Option<&str>) -> Result<Vec<Change>, Error>;
}

/// A participant's plan, validated log and the log's warnings, read from a
/// register: what `schedule`, `sheets`, `calendar`, `fit` and `compare` need in
/// place of a plan file and a CSV log.
#[derive(Debug, Clone)]
pub struct ParticipantLog {
    /// The participant.
    pub participant: Participant,
    /// Their plan.
    pub plan: Plan,
    /// Their current rows as a validated log (the same as reading the exported
    /// CSV with `--log`).
    pub log: Log,
    /// The log's warnings.
    pub warnings: Vec<Warning>,
}

/// Read a participant's plan and log from a register. `as_of` as for
/// [`crate::log::parse_log`].
pub fn participant_log(
    store: &dyn Store,
    code: &str,
    as_of: Option<NaiveDate>,
) -> Result<ParticipantLog, Error> {
    let participant = store.participant(code)?;
    let rows = store.rows(Some(code), Which::Current)?;
    participant_log_of(store.name(), participant, &rows, as_of)
}

/// [`participant_log`] from a participant and their current rows already read
/// from the register named `register`.
pub fn participant_log_of(
    register: &str,
    participant: Participant,
    rows: &[Row],
    as_of: Option<NaiveDate>,
) -> Result<ParticipantLog, Error> {
    let text = log_csv(rows)?;
    participant_log_of_text(register, participant, &text, as_of)
}

/// [`participant_log_of`] from the participant's current rows already rendered
/// by [`log_csv`] (`text`).
pub fn participant_log_of_text(
    register: &str,
    participant: Participant,
    text: &str,
    as_of: Option<NaiveDate>,
) -> Result<ParticipantLog, Error> {
    let plan = participant.plan()?;
    let code = &participant.code;
    let (log, warnings) = crate::log::parse_log(&log_name(register, code), text, &plan, as_of)?;
    Ok(ParticipantLog {
        participant,
        plan,
        log,
        warnings,
    })
}

/// How a participant's log is named in messages.
pub(crate) fn log_name(register: &str, code: &str) -> String {
    format!("{register}: participant {code}")
}

/// A row to render: its id (none for a row not yet written) and its values.
type Item<'a> = (Option<i64>, &'a Measure);

/// Rows as the CSV log text: the header [`COLUMNS`] then [`EXTRA_COLUMNS`], one
/// line per row in the order given, `\n` line ends. Numbers are written in their
/// shortest exact form, so they read back as the same values.
fn render(items: &[Item<'_>]) -> Result<String, Error> {
    let mut w = csv::WriterBuilder::new()
        .terminator(csv::Terminator::Any(b'\n'))
        .from_writer(Vec::new());
    let header: Vec<&str> = COLUMNS
        .iter()
        .chain(EXTRA_COLUMNS.iter())
        .copied()
        .collect();
    let internal = |e: csv::Error| Error::Internal(format!("writing log text: {e}"));
    w.write_record(&header).map_err(internal)?;
    let num = |x: f64| format!("{x}");
    let opt = |x: Option<f64>| x.map(num).unwrap_or_default();
    for (id, m) in items {
        let id = id.map(|i| i.to_string()).unwrap_or_default();
        // ISO 8601 (`%Y-%m-%d`): `Display` of a date writes it without parsing a
        // format string for every row.
        let date = m.date().to_string();
        let record: [String; 14] = match m {
            Measure::WeighIn(x) => [
                date,
                "weigh-in".into(),
                num(x.mass_kg),
                opt(x.body_fat_percent),
                String::new(),
                String::new(),
                String::new(),
                String::new(),
                String::new(),
                x.note.clone(),
                x.body_fat_method.clone().unwrap_or_default(),
                String::new(),
                String::new(),
                id,
            ],
            Measure::Session(x) => [
                date,
                "session".into(),
                String::new(),
                String::new(),
                num(x.minutes),
                x.compendium_code.clone().unwrap_or_default(),
                opt(x.met),
                opt(x.avg_hr_bpm),
                opt(x.rpe),
                x.note.clone(),
                String::new(),
                opt(x.watts),
                opt(x.speed_kmh),
                id,
            ],
        };
        w.write_record(&record).map_err(internal)?;
    }
    let bytes = w
        .into_inner()
        .map_err(|e| Error::Internal(format!("writing log text: {e}")))?;
    String::from_utf8(bytes).map_err(|e| Error::Internal(format!("log text: {e}")))
}

/// A participant's rows (normally the current ones, from [`Store::rows`]) as the
/// CSV log text that `--log` reads, with [`EXTRA_COLUMNS`] after the log's own.
pub fn log_csv(rows: &[Row]) -> Result<String, Error> {
    let items: Vec<Item<'_>> = rows.iter().map(|r| (Some(r.id), &r.measure)).collect();
    render(&items)
}

/// Check the values the log's ten columns do not hold: text on one line, and the
/// body-fat method, watts and speed by their one rule
/// ([`crate::log::recorded::Recorded::check`]).
fn check_extras(m: &Measure) -> Result<(), Error> {
    one_line("note", m.note())?;
    let (recorded, weigh_in, fat) = match m {
        Measure::WeighIn(w) => (
            crate::log::recorded::Recorded {
                body_fat_method: w.body_fat_method.clone(),
                ..Default::default()
            },
            true,
            w.body_fat_percent,
        ),
        Measure::Session(s) => {
            if let Some(code) = &s.compendium_code {
                one_line("compendium_code", code)?;
            }
            (
                crate::log::recorded::Recorded {
                    watts: s.watts,
                    speed_kmh: s.speed_kmh,
                    ..Default::default()
                },
                false,
                None,
            )
        }
    };
    recorded
        .check(weigh_in, fat)
        .map_err(|(key, message)| Error::Usage(format!("{key}: {message}")))
}

/// Text that must fit on one line.
pub(crate) fn one_line(key: &str, text: &str) -> Result<(), Error> {
    if text.contains(['\n', '\r']) {
        return Err(Error::Usage(format!(
            "{key}: the text holds a line break; it must be one line"
        )));
    }
    Ok(())
}

/// A reason for a correction or void: required, one line.
pub(crate) fn reason_text(reason: &str) -> Result<&str, Error> {
    let reason = reason.trim();
    if reason.is_empty() {
        return Err(Error::Usage(
            "the reason is empty; a correction or void needs a reason (what was wrong)".to_string(),
        ));
    }
    one_line("reason", reason)?;
    Ok(reason)
}

/// The one check of new rows: `current` (a participant's current rows, in date
/// order) with `new` placed at their dates (after the rows already on that date)
/// must read as a valid log of `plan` through [`crate::log::parse_log`]. Returns
/// the warnings about the new rows. An error about a row names the register, the
/// participant and the row (the line numbers of the rendered text would mean
/// nothing to a person).
pub fn validate_rows(
    register: &str,
    code: &str,
    plan: &Plan,
    current: &[Row],
    new: &[Measure],
) -> Result<Vec<Warning>, Error> {
    for m in new {
        check_extras(m)?;
    }
    let mut items: Vec<Item<'_>> = current.iter().map(|r| (Some(r.id), &r.measure)).collect();
    items.extend(new.iter().map(|m| (None, m)));
    // A stable sort: rows on the same date keep their order, new ones last.
    items.sort_by_key(|(_, m)| m.date());
    let text = render(&items)?;
    let name = log_name(register, code);
    // Line 1 is the header; item k is on line k + 2.
    let line_of = |k: usize| k + 2;
    let new_lines: Vec<usize> = items
        .iter()
        .enumerate()
        .filter(|(_, (id, _))| id.is_none())
        .map(|(k, _)| line_of(k))
        .collect();
    match crate::log::parse_log(&name, &text, plan, None) {
        Ok((_, warnings)) => Ok(warnings
            .into_iter()
            .filter(|w| {
                new_lines
                    .iter()
                    .any(|l| w.message.starts_with(&format!("{name} line {l}:")))
            })
            .collect()),
        Err(Error::Input(mut e)) => {
            if let Some(k) = e.location.line.and_then(|l| l.checked_sub(2))
                && let Some((id, m)) = items.get(k)
            {
                let which = match id {
                    Some(id) => format!("row {id}"),
                    None => "the new row".to_string(),
                };
                e.location =
                    Location::file(&format!("{name}, {which} ({} of {})", m.kind(), m.date()));
            }
            Err(Error::Input(e))
        }
        Err(e) => Err(e),
    }
}

/// A register-file problem a person can act on (exit 2).
fn file_error(path: &str, message: String) -> Error {
    Error::Input(InputError {
        location: Location::file(path),
        key: None,
        message,
    })
}
