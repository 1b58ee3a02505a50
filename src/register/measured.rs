//! A pilot's physiological measurements in the register (schema version 2): body
//! composition, measured RMR and total energy expenditure, with the same audit
//! rules as weigh-ins and sessions (docs/register.md): every write takes a
//! [`Stamp`], appends a row to `measurement_changes`, corrections supersede and
//! voids mark, nothing is deleted. Values are checked by the row checks in
//! [`crate::measure`] ([`crate::measure::check_visit`],
//! [`crate::measure::check_rmr`], [`crate::measure::check_tee`]), the same ones
//! the pilot analysis calls, before anything is written.

use super::sql::{db_error, find_participant, parse_date, parse_time, supersede, void_row};
use super::{SqliteStore, Stamp, Status, Store, Which, one_line, reason_text};
use crate::error::{Error, Location};
use crate::measure::{RmrMeasure, TeeMeasure, Visit, check_rmr, check_tee, check_visit};
use crate::safety::Warning;
use chrono::NaiveDate;
use rusqlite::{OptionalExtension, Transaction, params};
use serde::Serialize;

/// One physiological measurement.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Measurement {
    /// Body composition at a visit.
    Composition {
        /// Date (the state at 00:00).
        date: NaiveDate,
        /// Fat mass, kg.
        fat_kg: f64,
        /// Fat-free mass, kg.
        fat_free_kg: f64,
        /// Weighed mass at the same visit, kg.
        mass_kg: Option<f64>,
        /// Method (`DXA`, ...).
        method: String,
        /// Precision of the fat mass, kg (SD).
        fat_sd_kg: Option<f64>,
        /// Precision of the fat-free mass, kg (SD).
        fat_free_sd_kg: Option<f64>,
    },
    /// A measured RMR.
    Rmr {
        /// Date.
        date: NaiveDate,
        /// kcal/day.
        kcal_per_day: f64,
        /// Precision, kcal/day (SD).
        sd_kcal_per_day: Option<f64>,
    },
    /// Total energy expenditure over a period.
    Tee {
        /// First day.
        first: NaiveDate,
        /// Last day (inclusive).
        last: NaiveDate,
        /// kcal/day.
        kcal_per_day: f64,
        /// Method (`DLW`, ...).
        method: String,
        /// Precision, kcal/day (SD).
        sd_kcal_per_day: Option<f64>,
    },
}

/// One row of a measurement CSV: a participant code, the values, a note and where
/// the row came from.
#[derive(Debug, Clone, PartialEq)]
pub struct ImportedMeasurement {
    /// Participant code.
    pub participant: String,
    /// The values.
    pub measurement: Measurement,
    /// Note.
    pub note: String,
    /// File and line.
    pub at: Location,
}

impl Measurement {
    /// `composition`, `rmr` or `tee`.
    pub fn kind(&self) -> &'static str {
        match self {
            Measurement::Composition { .. } => "composition",
            Measurement::Rmr { .. } => "rmr",
            Measurement::Tee { .. } => "tee",
        }
    }

    /// The (first) date.
    pub fn date(&self) -> NaiveDate {
        match self {
            Measurement::Composition { date, .. } | Measurement::Rmr { date, .. } => *date,
            Measurement::Tee { first, .. } => *first,
        }
    }

    fn to_json(&self) -> String {
        serde_json::to_string(self).unwrap_or_default()
    }

    /// Check the values (units, ranges, precision) with the analysis's row checks.
    pub fn check(&self, who: &str, at: &Location) -> Result<Vec<Warning>, Error> {
        match self {
            Measurement::Composition { method, .. } => {
                one_line("method", method)?;
                check_visit(who, &self.visit(at))
            }
            Measurement::Rmr { .. } => {
                check_rmr(who, &self.rmr(at))?;
                Ok(vec![])
            }
            Measurement::Tee { method, .. } => {
                one_line("method", method)?;
                check_tee(who, &self.tee(at))?;
                Ok(vec![])
            }
        }
    }

    /// As a visit of the analysis (meaningful for a composition).
    pub fn visit(&self, at: &Location) -> Visit {
        match self {
            Measurement::Composition {
                date,
                fat_kg,
                fat_free_kg,
                mass_kg,
                method,
                fat_sd_kg,
                fat_free_sd_kg,
            } => Visit {
                date: *date,
                fat_kg: *fat_kg,
                fat_free_kg: *fat_free_kg,
                weighed_kg: *mass_kg,
                method: method.clone(),
                fat_sd_kg: *fat_sd_kg,
                fat_free_sd_kg: *fat_free_sd_kg,
                at: at.clone(),
            },
            _ => unreachable!("visit() of a composition only"),
        }
    }

    /// As an RMR of the analysis.
    pub fn rmr(&self, at: &Location) -> RmrMeasure {
        match self {
            Measurement::Rmr {
                date,
                kcal_per_day,
                sd_kcal_per_day,
            } => RmrMeasure {
                date: *date,
                kcal_per_day: *kcal_per_day,
                sd: *sd_kcal_per_day,
                at: at.clone(),
            },
            _ => unreachable!("rmr() of an RMR only"),
        }
    }

    /// As a TEE of the analysis.
    pub fn tee(&self, at: &Location) -> TeeMeasure {
        match self {
            Measurement::Tee {
                first,
                last,
                kcal_per_day,
                method,
                sd_kcal_per_day,
            } => TeeMeasure {
                first: *first,
                last: *last,
                kcal_per_day: *kcal_per_day,
                method: method.clone(),
                sd: *sd_kcal_per_day,
                at: at.clone(),
            },
            _ => unreachable!("tee() of a TEE only"),
        }
    }
}

/// One stored measurement, in any status.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MeasurementRow {
    /// Stable id.
    pub id: i64,
    /// Participant code.
    pub participant: String,
    /// The values.
    pub measurement: Measurement,
    /// Note (one line).
    pub note: String,
    /// Who recorded this version, and when.
    pub recorded: Stamp,
    /// The row this one corrects.
    pub supersedes: Option<i64>,
    /// Where it stands.
    pub status: Status,
}

impl MeasurementRow {
    /// Where the row is, for messages.
    pub fn location(&self, register: &str) -> Location {
        Location::file(&format!(
            "{register}: participant {}, measurement row {} ({} of {})",
            self.participant,
            self.id,
            self.measurement.kind(),
            self.measurement.date()
        ))
    }
}

const SELECT: &str = "SELECT m.id, p.code, m.kind, m.date, m.last_date, m.fat_kg, m.fat_free_kg, m.mass_kg, \
     m.kcal_per_day, m.method, m.fat_sd_kg, m.fat_free_sd_kg, m.sd_kcal_per_day, m.note, \
     m.recorded_at, m.recorded_by, m.supersedes, m.superseded_by, m.voided_by \
     FROM measurements m JOIN participants p ON p.id = m.participant_id";

fn read(r: &rusqlite::Row<'_>) -> rusqlite::Result<MeasurementRow> {
    let kind: String = r.get(2)?;
    let measurement = match kind.as_str() {
        "composition" => Measurement::Composition {
            date: parse_date(r, 3)?,
            fat_kg: r.get(5)?,
            fat_free_kg: r.get(6)?,
            mass_kg: r.get(7)?,
            method: r.get(9)?,
            fat_sd_kg: r.get(10)?,
            fat_free_sd_kg: r.get(11)?,
        },
        "rmr" => Measurement::Rmr {
            date: parse_date(r, 3)?,
            kcal_per_day: r.get(8)?,
            sd_kcal_per_day: r.get(12)?,
        },
        _ => Measurement::Tee {
            first: parse_date(r, 3)?,
            last: parse_date(r, 4)?,
            kcal_per_day: r.get(8)?,
            method: r.get(9)?,
            sd_kcal_per_day: r.get(12)?,
        },
    };
    let superseded_by: Option<i64> = r.get(17)?;
    let voided_by: Option<i64> = r.get(18)?;
    Ok(MeasurementRow {
        id: r.get(0)?,
        participant: r.get(1)?,
        measurement,
        note: r.get(13)?,
        recorded: Stamp {
            at: parse_time(r, 14)?,
            who: r.get(15)?,
        },
        supersedes: r.get(16)?,
        status: match (superseded_by, voided_by) {
            (_, Some(_)) => Status::Voided,
            (Some(by), None) => Status::Superseded(by),
            (None, None) => Status::Current,
        },
    })
}

fn insert(
    tx: &Transaction,
    pid: i64,
    m: &Measurement,
    note: &str,
    stamp: &Stamp,
    supersedes: Option<i64>,
) -> rusqlite::Result<i64> {
    let (date, last, fat, ffm, mass, kcal, method, fsd, lsd, ksd) = match m {
        Measurement::Composition {
            date,
            fat_kg,
            fat_free_kg,
            mass_kg,
            method,
            fat_sd_kg,
            fat_free_sd_kg,
        } => (
            *date,
            None,
            Some(*fat_kg),
            Some(*fat_free_kg),
            *mass_kg,
            None,
            Some(method.clone()),
            *fat_sd_kg,
            *fat_free_sd_kg,
            None,
        ),
        Measurement::Rmr {
            date,
            kcal_per_day,
            sd_kcal_per_day,
        } => (
            *date,
            None,
            None,
            None,
            None,
            Some(*kcal_per_day),
            None,
            None,
            None,
            *sd_kcal_per_day,
        ),
        Measurement::Tee {
            first,
            last,
            kcal_per_day,
            method,
            sd_kcal_per_day,
        } => (
            *first,
            Some(last.to_string()),
            None,
            None,
            None,
            Some(*kcal_per_day),
            Some(method.clone()),
            None,
            None,
            *sd_kcal_per_day,
        ),
    };
    tx.prepare_cached(
        "INSERT INTO measurements (participant_id, kind, date, last_date, fat_kg, fat_free_kg, mass_kg, \
         kcal_per_day, method, fat_sd_kg, fat_free_sd_kg, sd_kcal_per_day, note, recorded_at, recorded_by, supersedes) \
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16)",
    )?
    .execute(params![
        pid,
        m.kind(),
        date.to_string(),
        last,
        fat,
        ffm,
        mass,
        kcal,
        method,
        fsd,
        lsd,
        ksd,
        note,
        stamp.at_text(),
        stamp.who,
        supersedes
    ])?;
    Ok(tx.last_insert_rowid())
}

#[allow(clippy::too_many_arguments)]
fn change(
    tx: &Transaction,
    stamp: &Stamp,
    action: &str,
    pid: i64,
    id: Option<i64>,
    old: Option<String>,
    new: Option<String>,
    reason: Option<&str>,
) -> rusqlite::Result<i64> {
    tx.prepare_cached(
        "INSERT INTO measurement_changes (at, by, action, participant_id, measurement_id, old_values, new_values, reason) \
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)",
    )?
    .execute(params![
        stamp.at_text(),
        stamp.who,
        action,
        pid,
        id,
        old,
        new,
        reason
    ])?;
    Ok(tx.last_insert_rowid())
}

fn select_one(tx: &rusqlite::Connection, id: i64) -> rusqlite::Result<Option<MeasurementRow>> {
    tx.query_row(&format!("{SELECT} WHERE m.id = ?1"), params![id], read)
        .optional()
}

/// One measurement change of the audit trail.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MeasurementChange {
    /// Change id.
    pub id: i64,
    /// Participant code.
    pub participant: String,
    /// `record`, `import`, `correct` or `void`.
    pub action: String,
    /// The measurement row.
    pub row: Option<i64>,
    /// Who and when.
    pub stamp: Stamp,
    /// Old values (JSON).
    pub old_values: Option<String>,
    /// New values (JSON).
    pub new_values: Option<String>,
    /// Why.
    pub reason: Option<String>,
}

impl SqliteStore {
    /// Record one measurement for participant `code`, after checking its values.
    pub fn record_measurement(
        &mut self,
        code: &str,
        m: &Measurement,
        note: &str,
        stamp: &Stamp,
    ) -> Result<(MeasurementRow, Vec<Warning>), Error> {
        one_line("note", note)?;
        let register = self.name().to_string();
        let warnings = m.check(
            code,
            &Location::file(&format!("{register}: participant {code}, the new row")),
        )?;
        let row = self.write(|tx, name| {
            let (pid, _) = find_participant(tx, name, code)?;
            let id = insert(tx, pid, m, note, stamp, None).map_err(|e| db_error(name, e))?;
            change(
                tx,
                stamp,
                "record",
                pid,
                Some(id),
                None,
                Some(m.to_json()),
                None,
            )
            .map_err(|e| db_error(name, e))?;
            select_one(tx, id)
                .map_err(|e| db_error(name, e))?
                .ok_or_else(|| Error::Internal(format!("measurement {id} not found after insert")))
        })?;
        Ok((row, warnings))
    }

    /// Import measurements (participant code, values, note) in one transaction:
    /// all or none. Every value is checked first, then every participant must be
    /// enrolled.
    pub fn import_measurements(
        &mut self,
        rows: &[ImportedMeasurement],
        stamp: &Stamp,
    ) -> Result<(Vec<i64>, Vec<Warning>), Error> {
        let mut warnings = Vec::new();
        for r in rows {
            one_line("note", &r.note)?;
            warnings.extend(r.measurement.check(&r.participant, &r.at)?);
        }
        let ids = self.write(|tx, name| {
            let mut ids = Vec::with_capacity(rows.len());
            for r in rows {
                let (pid, _) = find_participant(tx, name, &r.participant).map_err(|e| match e {
                    Error::Usage(m) => Error::Usage(format!("{}: {m}", r.at)),
                    e => e,
                })?;
                let id = insert(tx, pid, &r.measurement, &r.note, stamp, None)
                    .map_err(|e| db_error(name, e))?;
                change(
                    tx,
                    stamp,
                    "import",
                    pid,
                    Some(id),
                    None,
                    Some(r.measurement.to_json()),
                    None,
                )
                .map_err(|e| db_error(name, e))?;
                ids.push(id);
            }
            Ok(ids)
        })?;
        Ok((ids, warnings))
    }

    /// Correct measurement `id` (a current row): a new version supersedes it. The
    /// kind stays.
    pub fn correct_measurement(
        &mut self,
        id: i64,
        m: &Measurement,
        note: &str,
        stamp: &Stamp,
        reason: &str,
    ) -> Result<MeasurementRow, Error> {
        let reason = reason_text(reason)?;
        one_line("note", note)?;
        self.write(|tx, name| {
            let old = current(tx, name, id)?;
            if old.measurement.kind() != m.kind() {
                return Err(Error::Usage(format!(
                    "{name}: measurement row {id} is a {} measurement; a correction keeps the kind (record a new row instead)",
                    old.measurement.kind()
                )));
            }
            m.check(&old.participant, &old.location(name))?;
            let (pid, _) = find_participant(tx, name, &old.participant)?;
            let new = supersede(
                tx,
                name,
                "measurements",
                id,
                || insert(tx, pid, m, note, stamp, Some(id)),
                |new| {
                    change(
                        tx,
                        stamp,
                        "correct",
                        pid,
                        Some(new),
                        Some(old.measurement.to_json()),
                        Some(m.to_json()),
                        Some(reason),
                    )
                },
            )?;
            select_one(tx, new)
                .map_err(|e| db_error(name, e))?
                .ok_or_else(|| Error::Internal(format!("measurement {new} not found after insert")))
        })
    }

    /// Void measurement `id` (a current row).
    pub fn void_measurement(&mut self, id: i64, stamp: &Stamp, reason: &str) -> Result<(), Error> {
        let reason = reason_text(reason)?;
        self.write(|tx, name| {
            let old = current(tx, name, id)?;
            let (pid, _) = find_participant(tx, name, &old.participant)?;
            void_row(tx, name, "measurements", id, || {
                change(
                    tx,
                    stamp,
                    "void",
                    pid,
                    Some(id),
                    Some(old.measurement.to_json()),
                    None,
                    Some(reason),
                )
            })?;
            Ok(())
        })
    }

    /// Measurements of one participant (or all), by participant, date and id.
    pub fn measurements(
        &self,
        code: Option<&str>,
        which: Which,
    ) -> Result<Vec<MeasurementRow>, Error> {
        let name = self.name().to_string();
        let conn = self.conn();
        if let Some(code) = code {
            find_participant(conn, &name, code)?;
        }
        let filter = match which {
            Which::Current => " AND m.superseded_by IS NULL AND m.voided_by IS NULL",
            Which::All => "",
        };
        let sql = format!(
            "{SELECT} WHERE (?1 IS NULL OR p.code = ?1){filter} ORDER BY p.code, m.date, m.id"
        );
        let e = |e| db_error(&name, e);
        let mut stmt = conn.prepare(&sql).map_err(e)?;
        let rows = stmt
            .query_map(params![code], read)
            .map_err(e)?
            .collect::<Result<Vec<_>, _>>()
            .map_err(e)?;
        Ok(rows)
    }

    /// The measurements' audit trail of one participant (or all), in order.
    pub fn measurement_audit(&self, code: Option<&str>) -> Result<Vec<MeasurementChange>, Error> {
        let name = self.name().to_string();
        let conn = self.conn();
        if let Some(code) = code {
            find_participant(conn, &name, code)?;
        }
        let e = |e| db_error(&name, e);
        let mut stmt = conn
            .prepare(
                "SELECT c.id, p.code, c.action, c.measurement_id, c.at, c.by, c.old_values, c.new_values, c.reason \
                 FROM measurement_changes c JOIN participants p ON p.id = c.participant_id \
                 WHERE (?1 IS NULL OR p.code = ?1) ORDER BY c.id",
            )
            .map_err(e)?;
        let rows = stmt
            .query_map(params![code], |r| {
                Ok(MeasurementChange {
                    id: r.get(0)?,
                    participant: r.get(1)?,
                    action: r.get(2)?,
                    row: r.get(3)?,
                    stamp: Stamp {
                        at: parse_time(r, 4)?,
                        who: r.get(5)?,
                    },
                    old_values: r.get(6)?,
                    new_values: r.get(7)?,
                    reason: r.get(8)?,
                })
            })
            .map_err(e)?
            .collect::<Result<Vec<_>, _>>()
            .map_err(e)?;
        Ok(rows)
    }
}

fn current(tx: &Transaction, name: &str, id: i64) -> Result<MeasurementRow, Error> {
    let row = select_one(tx, id)
        .map_err(|e| db_error(name, e))?
        .ok_or_else(|| {
            Error::Usage(format!(
                "{name}: there is no measurement row {id}; list the participant's measurements to see their ids"
            ))
        })?;
    match row.status {
        Status::Current => Ok(row),
        Status::Superseded(by) => Err(Error::Usage(format!(
            "{name}: measurement row {id} was already corrected by row {by}; correct or void row {by} instead"
        ))),
        Status::Voided => Err(Error::Usage(format!(
            "{name}: measurement row {id} is voided; record a new row instead"
        ))),
    }
}
