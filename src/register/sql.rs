//! The SQL the register's reads and writes share: SQLite failures in plain words,
//! the row, participant and change readers, and the inserts of an entry and of its
//! audit record.

use super::{
    Action, Change, Measure, Participant, Row, Session, Stamp, Status, WeighIn, Which, file_error,
};
use crate::error::Error;
use chrono::{DateTime, NaiveDate, Utc};
use rusqlite::{Connection, ErrorCode, OptionalExtension, Transaction, params};
use std::time::Duration;

/// How long a write waits for another writer's lock before giving up.
pub const BUSY_TIMEOUT: Duration = Duration::from_secs(5);

/// A SQLite failure in plain words: a lock held too long, a read-only file or a
/// full disk are the person's to act on (exit 2, or 1 for the disk); anything else
/// is a write that failed.
pub(super) fn db_error(name: &str, e: rusqlite::Error) -> Error {
    let code = e.sqlite_error_code();
    match code {
        Some(ErrorCode::DatabaseBusy) | Some(ErrorCode::DatabaseLocked) => Error::Usage(format!(
            "{name}: the register is locked by another writer for more than {} s; nothing was written, try again",
            BUSY_TIMEOUT.as_secs()
        )),
        Some(ErrorCode::ReadOnly) => Error::Usage(format!(
            "{name}: the register cannot be written (read-only file or folder); nothing was written"
        )),
        Some(ErrorCode::DiskFull) => Error::Output {
            path: name.to_string(),
            reason: "the disk is full; the change was rolled back whole, nothing was written"
                .to_string(),
        },
        Some(ErrorCode::NotADatabase) | Some(ErrorCode::DatabaseCorrupt) => file_error(
            name,
            format!("the register is damaged or not a register ({e}); restore it from a backup"),
        ),
        _ => Error::Output {
            path: name.to_string(),
            reason: format!("register: {e}"),
        },
    }
}

/// The columns [`read_row`] reads, then the tables they come from.
macro_rules! row_select {
    ($from:literal) => {
        concat!(
            "SELECT e.id, p.code, e.kind, e.date, e.note, e.recorded_at, e.recorded_by,
        e.supersedes, e.superseded_by, e.voided_by,
        w.mass_kg, w.body_fat_percent, w.body_fat_method,
        s.minutes, s.compendium_code, s.met, s.watts, s.speed_kmh, s.avg_hr_bpm, s.rpe
 FROM ",
            $from,
            "
 LEFT JOIN weigh_ins w ON w.entry_id = e.id
 LEFT JOIN sessions s ON s.entry_id = e.id"
        )
    };
}

pub(super) const ROW_SELECT: &str =
    row_select!("entries e JOIN participants p ON p.id = e.participant_id");

/// [`ROW_SELECT`] for every participant's rows in code order: `CROSS JOIN` makes
/// SQLite walk the participants by the index on their codes and each one's rows
/// by the index on (participant, date, id), already in the order asked for,
/// instead of reading every row and sorting them all (about half the time of the
/// read for 50,000 rows).
const ROW_SELECT_ALL: &str =
    row_select!("participants p CROSS JOIN entries e ON e.participant_id = p.id");

/// A row of [`ROW_SELECT`].
pub(super) fn read_row(r: &rusqlite::Row<'_>) -> rusqlite::Result<Row> {
    // Text read in place (no copy) where only its meaning is kept.
    let weigh_in = r.get_ref(2)?.as_str()? == "weigh-in";
    let date: NaiveDate = parse_date(r, 3)?;
    let note: String = r.get(4)?;
    let measure = if weigh_in {
        Measure::WeighIn(WeighIn {
            date,
            mass_kg: r.get(10)?,
            body_fat_percent: r.get(11)?,
            body_fat_method: r.get(12)?,
            note,
        })
    } else {
        Measure::Session(Session {
            date,
            minutes: r.get(13)?,
            compendium_code: r.get(14)?,
            met: r.get(15)?,
            watts: r.get(16)?,
            speed_kmh: r.get(17)?,
            avg_hr_bpm: r.get(18)?,
            rpe: r.get(19)?,
            note,
        })
    };
    let superseded_by: Option<i64> = r.get(8)?;
    let voided_by: Option<i64> = r.get(9)?;
    let status = match (superseded_by, voided_by) {
        (_, Some(_)) => Status::Voided,
        (Some(by), None) => Status::Superseded(by),
        (None, None) => Status::Current,
    };
    Ok(Row {
        id: r.get(0)?,
        participant: r.get(1)?,
        measure,
        recorded: Stamp {
            who: r.get(6)?,
            at: parse_time(r, 5)?,
        },
        supersedes: r.get(7)?,
        status,
    })
}

pub(super) fn conversion(
    i: usize,
    e: impl std::error::Error + Send + Sync + 'static,
) -> rusqlite::Error {
    rusqlite::Error::FromSqlConversionFailure(i, rusqlite::types::Type::Text, Box::new(e))
}

pub(super) fn parse_date(r: &rusqlite::Row<'_>, i: usize) -> rusqlite::Result<NaiveDate> {
    // Stored as ISO 8601 (`%Y-%m-%d`), which `FromStr` reads without a format
    // string to parse for every row.
    let s = r.get_ref(i)?.as_str()?;
    s.parse::<NaiveDate>().map_err(|e| conversion(i, e))
}

pub(super) fn parse_time(r: &rusqlite::Row<'_>, i: usize) -> rusqlite::Result<DateTime<Utc>> {
    let s = r.get_ref(i)?.as_str()?;
    DateTime::parse_from_rfc3339(s)
        .map(|t| t.with_timezone(&Utc))
        .map_err(|e| conversion(i, e))
}

/// Every participant's rows (as [`select_rows`] reads them with no code), handed to
/// `each` one participant at a time as soon as the participant's last row is read.
pub(super) fn select_rows_each(
    conn: &Connection,
    name: &str,
    which: Which,
    each: &mut dyn FnMut(Vec<Row>) -> Result<(), Error>,
) -> Result<(), Error> {
    let mut stmt = conn
        .prepare_cached(&rows_sql(false, which))
        .map_err(|e| db_error(name, e))?;
    let mut rows = stmt
        .query_map([], read_row)
        .map_err(|e| db_error(name, e))?;
    let mut batch: Vec<Row> = Vec::new();
    loop {
        let next = rows.next().transpose().map_err(|e| db_error(name, e))?;
        let same = match (&next, batch.last()) {
            (Some(r), Some(last)) => r.participant == last.participant,
            _ => true,
        };
        if !same || (next.is_none() && !batch.is_empty()) {
            // The next participant's rows are likely as many: room for them at once.
            let room = Vec::with_capacity(batch.len());
            each(std::mem::replace(&mut batch, room))?;
        }
        match next {
            Some(r) => batch.push(r),
            None => return Ok(()),
        }
    }
}

/// The query of [`select_rows`], for one participant (`one`) or all.
fn rows_sql(one: bool, which: Which) -> String {
    let current = match which {
        // The unary `+` keeps SQLite from searching the (nearly all NULL) unique
        // indexes of these marks instead of the participant's index.
        Which::Current => " AND +e.superseded_by IS NULL AND +e.voided_by IS NULL",
        Which::All => "",
    };
    // One participant's rows through the index on (participant_id, date, id).
    if one {
        format!(
            "{ROW_SELECT} WHERE e.participant_id = (SELECT id FROM participants WHERE code = ?1){current} ORDER BY e.date, e.id"
        )
    } else {
        format!("{ROW_SELECT_ALL} WHERE 1{current} ORDER BY p.code, e.date, e.id")
    }
}

/// Rows of one participant (or all), by participant, date and id.
pub(super) fn select_rows(
    conn: &Connection,
    code: Option<&str>,
    which: Which,
) -> rusqlite::Result<Vec<Row>> {
    let mut stmt = conn.prepare_cached(&rows_sql(code.is_some(), which))?;
    match code {
        Some(code) => stmt.query_map(params![code], read_row)?.collect(),
        None => stmt.query_map([], read_row)?.collect(),
    }
}

pub(super) fn select_row(conn: &Connection, id: i64) -> rusqlite::Result<Option<Row>> {
    let sql = format!("{ROW_SELECT} WHERE e.id = ?1");
    conn.query_row(&sql, params![id], read_row).optional()
}

pub(super) fn read_participant(r: &rusqlite::Row<'_>) -> rusqlite::Result<Participant> {
    Ok(Participant {
        code: r.get(0)?,
        arm: r.get(1)?,
        plan_name: r.get(2)?,
        plan_text: r.get(3)?,
        enrolled: Stamp {
            at: parse_time(r, 4)?,
            who: r.get(5)?,
        },
    })
}

pub(super) const PARTICIPANT_SELECT: &str =
    "SELECT code, arm, plan_name, plan_text, enrolled_at, enrolled_by FROM participants";

/// The participant's row id and record, or an error naming the code.
pub(super) fn find_participant(
    conn: &Connection,
    name: &str,
    code: &str,
) -> Result<(i64, Participant), Error> {
    let found = conn
        .query_row(
            "SELECT id, code, arm, plan_name, plan_text, enrolled_at, enrolled_by FROM participants WHERE code = ?1",
            params![code],
            |r| {
                let id: i64 = r.get(0)?;
                Ok((
                    id,
                    Participant {
                        code: r.get(1)?,
                        arm: r.get(2)?,
                        plan_name: r.get(3)?,
                        plan_text: r.get(4)?,
                        enrolled: Stamp {
                            at: parse_time(r, 5)?,
                            who: r.get(6)?,
                        },
                    },
                ))
            },
        )
        .optional()
        .map_err(|e| db_error(name, e))?;
    found.ok_or_else(|| {
        Error::Usage(format!(
            "{name}: participant {code} is not enrolled; enrol them first (codes are case-sensitive)"
        ))
    })
}

pub(super) fn read_change(r: &rusqlite::Row<'_>) -> rusqlite::Result<Change> {
    let action: String = r.get(4)?;
    let action = Action::from_name(&action)
        .ok_or_else(|| conversion(4, std::io::Error::other(format!("unknown action {action}"))))?;
    Ok(Change {
        id: r.get(0)?,
        participant: r.get(1)?,
        stamp: Stamp {
            at: parse_time(r, 2)?,
            who: r.get(3)?,
        },
        action,
        row: r.get(5)?,
        old_values: r.get(6)?,
        new_values: r.get(7)?,
        reason: r.get(8)?,
    })
}

pub(super) const CHANGE_SELECT: &str =
    "SELECT c.id, p.code, c.at, c.by, c.action, c.entry_id, c.old_values, c.new_values, c.reason
 FROM changes c JOIN participants p ON p.id = c.participant_id";

/// Insert a measured row (and its values), returning its id.
pub(super) fn insert_entry(
    tx: &Transaction,
    participant_id: i64,
    m: &Measure,
    stamp: &Stamp,
    supersedes: Option<i64>,
) -> rusqlite::Result<i64> {
    tx.prepare_cached(
        "INSERT INTO entries (participant_id, kind, date, note, recorded_at, recorded_by, supersedes)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)",
    )?
    .execute(params![
        participant_id,
        m.kind(),
        m.date().format("%Y-%m-%d").to_string(),
        m.note(),
        stamp.at_text(),
        stamp.who,
        supersedes
    ])?;
    let id = tx.last_insert_rowid();
    match m {
        Measure::WeighIn(w) => {
            tx.prepare_cached(
                "INSERT INTO weigh_ins (entry_id, mass_kg, body_fat_percent, body_fat_method)
                 VALUES (?1, ?2, ?3, ?4)",
            )?
            .execute(params![
                id,
                w.mass_kg,
                w.body_fat_percent,
                w.body_fat_method
            ])?;
        }
        Measure::Session(s) => {
            tx.prepare_cached(
                "INSERT INTO sessions (entry_id, minutes, compendium_code, met, watts, speed_kmh, avg_hr_bpm, rpe)
                 VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)",
            )?
            .execute(params![
                id,
                s.minutes,
                s.compendium_code,
                s.met,
                s.watts,
                s.speed_kmh,
                s.avg_hr_bpm,
                s.rpe
            ])?;
        }
    }
    Ok(id)
}

/// Append one change to the audit trail, returning its id.
#[allow(clippy::too_many_arguments)]
pub(super) fn insert_change(
    tx: &Transaction,
    stamp: &Stamp,
    action: Action,
    participant_id: i64,
    entry: Option<i64>,
    old: Option<String>,
    new: Option<String>,
    reason: Option<&str>,
) -> rusqlite::Result<i64> {
    tx.prepare_cached(
        "INSERT INTO changes (at, by, action, participant_id, entry_id, old_values, new_values, reason)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)",
    )?
    .execute(params![
        stamp.at_text(),
        stamp.who,
        action.name(),
        participant_id,
        entry,
        old,
        new,
        reason
    ])?;
    Ok(tx.last_insert_rowid())
}

/// The one order of a correction, for weigh-ins and sessions (`entries`) and for
/// a pilot's measurements (`measurements`) alike: the new version is inserted
/// (`insert`, superseding row `id`), row `id` of `table` is marked
/// `superseded_by` it, and the change goes to the audit trail (`audit`, given the
/// new id). Returns the new row's id. Inside the caller's transaction.
pub(super) fn supersede(
    tx: &Transaction,
    name: &str,
    table: &str,
    id: i64,
    insert: impl FnOnce() -> rusqlite::Result<i64>,
    audit: impl FnOnce(i64) -> rusqlite::Result<i64>,
) -> Result<i64, Error> {
    let e = |e| db_error(name, e);
    let new = insert().map_err(e)?;
    mark(tx, table, "superseded_by", id, new).map_err(e)?;
    audit(new).map_err(e)?;
    Ok(new)
}

/// The one order of a void, for both tables: the change goes to the audit trail
/// (`audit`), then row `id` of `table` is marked `voided_by` it. Returns the
/// change's id.
pub(super) fn void_row(
    tx: &Transaction,
    name: &str,
    table: &str,
    id: i64,
    audit: impl FnOnce() -> rusqlite::Result<i64>,
) -> Result<i64, Error> {
    let e = |e| db_error(name, e);
    let change = audit().map_err(e)?;
    mark(tx, table, "voided_by", id, change).map_err(e)?;
    Ok(change)
}

/// Set `column` (`superseded_by` or `voided_by`) of row `id` of `table`: the only
/// update the schema's triggers allow, once, from empty.
fn mark(tx: &Transaction, table: &str, column: &str, id: i64, value: i64) -> rusqlite::Result<()> {
    debug_assert!(matches!(table, "entries" | "measurements"));
    debug_assert!(matches!(column, "superseded_by" | "voided_by"));
    tx.execute(
        &format!("UPDATE {table} SET {column} = ?1 WHERE id = ?2"),
        params![value, id],
    )?;
    Ok(())
}

/// A row that can be corrected or voided: it exists and is current.
pub(super) fn current_row(tx: &Transaction, name: &str, id: i64) -> Result<Row, Error> {
    let row = select_row(tx, id)
        .map_err(|e| db_error(name, e))?
        .ok_or_else(|| {
            Error::Usage(format!(
                "{name}: there is no row {id}; list the participant's rows to see their ids"
            ))
        })?;
    match row.status {
        Status::Current => Ok(row),
        Status::Superseded(by) => Err(Error::Usage(format!(
            "{name}: row {id} was already corrected by row {by}; correct or void row {by} instead"
        ))),
        Status::Voided => Err(Error::Usage(format!(
            "{name}: row {id} is voided; record a new row instead"
        ))),
    }
}
