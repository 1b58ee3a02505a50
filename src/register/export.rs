//! The register's tidy CSV tables for analysis software (docs/register.md,
//! "Export"): one table per kind, one line per row version with its status, stable
//! row ids and ISO 8601 UTC times.

use super::{Change, Measure, Row, Status};
use crate::error::Error;

/// One CSV table as text (`\n` line ends).
fn table(header: &[&str], rows: impl Iterator<Item = Vec<String>>) -> Result<String, Error> {
    let mut w = csv::WriterBuilder::new()
        .terminator(csv::Terminator::Any(b'\n'))
        .from_writer(Vec::new());
    let internal = |e: csv::Error| Error::Internal(format!("writing CSV: {e}"));
    w.write_record(header).map_err(internal)?;
    for r in rows {
        w.write_record(&r).map_err(internal)?;
    }
    let bytes = w
        .into_inner()
        .map_err(|e| Error::Internal(format!("writing CSV: {e}")))?;
    String::from_utf8(bytes).map_err(|e| Error::Internal(format!("CSV text: {e}")))
}

fn num(x: f64) -> String {
    format!("{x}")
}

fn opt(x: Option<f64>) -> String {
    x.map(num).unwrap_or_default()
}

fn opt_id(x: Option<i64>) -> String {
    x.map(|i| i.to_string()).unwrap_or_default()
}

/// The header of [`weigh_ins_csv`].
pub const WEIGH_IN_COLUMNS: [&str; 12] = [
    "row_id",
    "participant",
    "date",
    "mass_kg",
    "body_fat_percent",
    "body_fat_method",
    "note",
    "status",
    "supersedes",
    "superseded_by",
    "recorded_at",
    "recorded_by",
];

/// The header of [`sessions_csv`].
pub const SESSION_COLUMNS: [&str; 16] = [
    "row_id",
    "participant",
    "date",
    "minutes",
    "compendium_code",
    "met",
    "watts",
    "speed_kmh",
    "avg_hr_bpm",
    "rpe",
    "note",
    "status",
    "supersedes",
    "superseded_by",
    "recorded_at",
    "recorded_by",
];

/// The header of [`changes_csv`].
pub const CHANGE_COLUMNS: [&str; 9] = [
    "change_id",
    "participant",
    "at",
    "by",
    "action",
    "row_id",
    "reason",
    "old_values",
    "new_values",
];

fn superseded_by(s: Status) -> String {
    match s {
        Status::Superseded(by) => by.to_string(),
        _ => String::new(),
    }
}

/// The weigh-ins among `rows` as one tidy CSV table ([`WEIGH_IN_COLUMNS`]): one
/// line per row version, its status, and ISO 8601 UTC times.
pub fn weigh_ins_csv(rows: &[Row]) -> Result<String, Error> {
    table(
        &WEIGH_IN_COLUMNS,
        rows.iter().filter_map(|r| match &r.measure {
            Measure::WeighIn(w) => Some(framed(
                r,
                w.date,
                vec![
                    num(w.mass_kg),
                    opt(w.body_fat_percent),
                    w.body_fat_method.clone().unwrap_or_default(),
                    w.note.clone(),
                ],
            )),
            Measure::Session(_) => None,
        }),
    )
}

/// One row's cells: its id, participant and date, the kind's own `cells`, then
/// its status, what it supersedes and is superseded by, and when and by whom it
/// was recorded (the columns every kind's table shares).
fn framed(r: &Row, date: chrono::NaiveDate, cells: Vec<String>) -> Vec<String> {
    let mut out = vec![r.id.to_string(), r.participant.clone(), date.to_string()];
    out.extend(cells);
    out.extend([
        r.status.name().to_string(),
        opt_id(r.supersedes),
        superseded_by(r.status),
        r.recorded.at_text(),
        r.recorded.who.clone(),
    ]);
    out
}

/// The sessions among `rows` as one tidy CSV table ([`SESSION_COLUMNS`]).
pub fn sessions_csv(rows: &[Row]) -> Result<String, Error> {
    table(
        &SESSION_COLUMNS,
        rows.iter().filter_map(|r| match &r.measure {
            Measure::Session(s) => Some(framed(
                r,
                s.date,
                vec![
                    num(s.minutes),
                    s.compendium_code.clone().unwrap_or_default(),
                    opt(s.met),
                    opt(s.watts),
                    opt(s.speed_kmh),
                    opt(s.avg_hr_bpm),
                    opt(s.rpe),
                    s.note.clone(),
                ],
            )),
            Measure::WeighIn(_) => None,
        }),
    )
}

/// The audit trail as one tidy CSV table ([`CHANGE_COLUMNS`]).
pub fn changes_csv(changes: &[Change]) -> Result<String, Error> {
    table(
        &CHANGE_COLUMNS,
        changes.iter().map(|c| {
            vec![
                c.id.to_string(),
                c.participant.clone(),
                c.stamp.at_text(),
                c.stamp.who.clone(),
                c.action.name().to_string(),
                opt_id(c.row),
                c.reason.clone().unwrap_or_default(),
                c.old_values.clone().unwrap_or_default(),
                c.new_values.clone().unwrap_or_default(),
            ]
        }),
    )
}
