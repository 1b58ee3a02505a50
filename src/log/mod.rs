//! The participant log: weigh-ins and delivered sessions as CSV (docs/file-formats.md section 3, "The
//! participant log"), read into a validated [`Log`] and appended to one row at a time.
//!
//! One header row `date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,
//! avg_hr_bpm,rpe,note` (more columns may follow: the optional named columns of
//! [`recorded`] are read, others ignored), then one row per weigh-in or
//! session in date order, dated from the protocol start through
//! [`Protocol::end_date`](crate::plan::Protocol::end_date) inclusive. A weigh-in
//! dated D is the state at 00:00 of day D (docs/model.md section 7).
//!
//! Limits: mass 30-350 kg and body fat 3-70 % as for the plan; minutes 0-600 (0 is
//! a missed session recorded on purpose); MET above 1 and at most 25 as for the
//! plan; average heart rate 30-250 beats/min; RPE on the Borg 6-20 scale.
//! Consecutive weigh-ins more than 3 kg apart within 7 days earn a warning: body
//! stores cannot change that fast, so the entry is more likely a slip or another
//! scale.
//!
//! Reference: Borg GA 1982, Psychophysical bases of perceived exertion, Med Sci
//! Sports Exerc 14:377 (the 6-20 RPE scale); Ainsworth et al. 2011, Med Sci Sports
//! Exerc 43:1575 (activity codes).

mod append;
mod cells;
mod parse;
pub mod plausible;
pub mod recorded;

use crate::activity::Intensity;
use crate::error::Error;
use crate::plan::Plan;
use crate::safety::Warning;
use chrono::NaiveDate;
use serde::Serialize;
use std::path::Path;

/// The columns every log starts with, in this order (more may follow).
pub const COLUMNS: [&str; 10] = [
    "date",
    "kind",
    "mass_kg",
    "body_fat_percent",
    "minutes",
    "compendium_code",
    "met",
    "avg_hr_bpm",
    "rpe",
    "note",
];

/// What one log row records.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum Entry {
    /// A weigh-in: the state at 00:00 of its date.
    WeighIn {
        /// Measured body mass, kg (30 to 350).
        mass_kg: f64,
        /// Measured body fat, percent (3 to 70), if recorded.
        body_fat_percent: Option<f64>,
    },
    /// A delivered session (or one bout of it; several on one date are allowed).
    Session {
        /// Minutes delivered (0 to 600; 0 = a missed session recorded on purpose).
        minutes: f64,
        /// The intensity: the row's compendium code or MET, else the plan's activity.
        intensity: Intensity,
        /// The compendium code as the row gives it (a five-digit string), if any.
        compendium_code: Option<String>,
        /// The MET as the row gives it (above 1, at most 25), if any.
        met: Option<f64>,
        /// Average heart rate, beats/min (30 to 250), if recorded.
        avg_hr_bpm: Option<f64>,
        /// Rating of perceived exertion on the Borg 6-20 scale, if recorded.
        rpe: Option<f64>,
    },
}

/// One validated row of the log.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LogRow {
    /// 1-based line in the file where the row starts.
    pub line: usize,
    /// The row's date.
    pub date: NaiveDate,
    /// What it records.
    pub entry: Entry,
    /// The note cell, trimmed (empty when there is none).
    pub note: String,
    /// The optional named columns' values ([`recorded::RECORDED_COLUMNS`]).
    #[serde(skip_serializing_if = "recorded::Recorded::is_empty")]
    pub recorded: recorded::Recorded,
}

/// A validated log.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Log {
    /// The file as the user named it.
    pub path: String,
    /// The rows, in file order, which is date order.
    pub rows: Vec<LogRow>,
}

impl Log {
    /// The weigh-in rows, in date order.
    pub fn weigh_ins(&self) -> impl Iterator<Item = &LogRow> {
        self.rows
            .iter()
            .filter(|r| matches!(r.entry, Entry::WeighIn { .. }))
    }

    /// The session rows (missed ones with 0 minutes included), in date order.
    pub fn sessions(&self) -> impl Iterator<Item = &LogRow> {
        self.rows
            .iter()
            .filter(|r| matches!(r.entry, Entry::Session { .. }))
    }

    /// The date of the last row, if there is one.
    pub fn last_date(&self) -> Option<NaiveDate> {
        self.rows.last().map(|r| r.date)
    }
}

/// A row to append with [`append_row`].
#[derive(Debug, Clone, PartialEq)]
pub struct NewRow {
    /// The row's date.
    pub date: NaiveDate,
    /// What it records.
    pub entry: NewEntry,
    /// A note (one line), if any.
    pub note: Option<String>,
    /// Values for the optional named columns; a log without such a column gains it
    /// (and its empty cells) when a value is given.
    pub recorded: recorded::Recorded,
}

/// What a new row records; checked by the same rules as a row read from a file.
#[derive(Debug, Clone, PartialEq)]
pub enum NewEntry {
    /// A weigh-in.
    WeighIn {
        /// Measured body mass, kg.
        mass_kg: f64,
        /// Measured body fat, percent, if any.
        body_fat_percent: Option<f64>,
    },
    /// A delivered session; neither code nor MET means the plan's activity.
    Session {
        /// Minutes delivered (0 for a missed session).
        minutes: f64,
        /// A compendium code (five digits, leading zeros kept), if any.
        compendium_code: Option<String>,
        /// A MET, if any.
        met: Option<f64>,
        /// Average heart rate, beats/min, if any.
        avg_hr_bpm: Option<f64>,
        /// Borg 6-20 rating of perceived exertion, if any.
        rpe: Option<f64>,
    },
}

/// Read and validate the log at `path` against `plan`. `as_of` defaults to the log's
/// last date; rows after `as_of` are an error. A file that cannot be read (missing,
/// not a regular file, too large, not UTF-8: see [`crate::input::read`]) is
/// [`Error::Unreadable`]; anything wrong inside it is [`Error::Input`] naming the
/// line and the cell.
pub fn load_log(
    path: &Path,
    plan: &Plan,
    as_of: Option<NaiveDate>,
) -> Result<(Log, Vec<Warning>), Error> {
    let f = crate::input::read(path)?;
    parse_log(&f.name, &f.raw, plan, as_of)
}

/// Validate log text; `name` names it in errors. `as_of` as for [`load_log`].
pub fn parse_log(
    name: &str,
    text: &str,
    plan: &Plan,
    as_of: Option<NaiveDate>,
) -> Result<(Log, Vec<Warning>), Error> {
    let parsed = parse::parse(name, text, plan, as_of)?;
    let warnings = parsed.warnings.into_iter().map(|w| w.warning).collect();
    Ok((parsed.log, warnings))
}

/// Validate `row` against the plan and the existing log at `path` (which may not
/// exist yet: then the header is written first), and append it atomically: the whole
/// new file goes to a temporary file in the same folder, which is then renamed over
/// the log ([`crate::output::write_atomic`]; a symlinked log is written through to
/// its target, whose permissions are kept). The row goes to its place by date
/// (before the first row of a later date). Other bytes are kept exactly, a
/// byte-order mark and Windows line endings included; the new row uses the file's
/// own line ending. A read-only log is refused ([`crate::output::check_log`]). On any
/// error the file is left as it was.
///
/// Returns a one-line confirmation and the warnings the new row earns (such as an
/// implausible jump in mass).
pub fn append_row(path: &Path, plan: &Plan, row: &NewRow) -> Result<(String, Vec<Warning>), Error> {
    append::append(path, plan, row, None)
}

/// How the caller words the way out of a refused weigh-in: how a mass in the other
/// unit is entered and how an implausible weigh-in is added anyway. The command line
/// names its options (`--units us`, `--accept-jump`); the library knows none.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct JumpAdvice<'a> {
    /// E.g. "--units us takes pounds".
    pub other_unit: &'a str,
    /// E.g. "add it with --accept-jump".
    pub accept: &'a str,
}

/// As [`append_row`], but with `refuse` a weigh-in implausibly far
/// ([`plausible::is_implausible`]) from the previous weigh-in, the next one or the
/// plan's baseline is refused ([`Error::Usage`], with the caller's advice); with
/// None it is accepted. The row goes to its place by date: before the first row of
/// a later date, after the rows of its own date.
pub fn append_row_checked(
    path: &Path,
    plan: &Plan,
    row: &NewRow,
    refuse: Option<JumpAdvice<'_>>,
) -> Result<(String, Vec<Warning>), Error> {
    append::append(path, plan, row, refuse)
}
