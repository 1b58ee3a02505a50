//! The embedded register: one SQLite file per site (docs/register.md).
//!
//! WAL mode (readers never block the one writer), a busy timeout of
//! [`BUSY_TIMEOUT`], foreign keys on, and every write one `BEGIN IMMEDIATE`
//! transaction that reads, validates and writes under the write lock, so
//! concurrent writers are serialised and none loses a row.

use super::schema::{APPLICATION_ID, MIGRATIONS, SCHEMA_VERSION};
use super::sql::{
    BUSY_TIMEOUT, CHANGE_SELECT, PARTICIPANT_SELECT, current_row, db_error, find_participant,
    insert_change, insert_entry, read_change, read_participant, select_row, select_rows,
    select_rows_each, supersede, void_row,
};
use super::{
    Action, Change, Enrolment, Imported, Measure, Participant, Recorded, Row, Stamp, Store, Which,
    file_error, reason_text, validate_rows,
};
use crate::error::Error;
use rusqlite::config::DbConfig;
use rusqlite::{Connection, OpenFlags, Transaction, TransactionBehavior, params};
use serde::Serialize;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::time::Duration;

/// How a register is opened to write. `NO_MUTEX`: a `Connection` is used by one
/// thread at a time (Rust's `Send` without `Sync`), so SQLite need not lock its
/// own mutex around every call (as rusqlite's default flags have it).
const READ_WRITE: OpenFlags =
    OpenFlags::SQLITE_OPEN_READ_WRITE.union(OpenFlags::SQLITE_OPEN_NO_MUTEX);

/// How a register is opened to read only, without SQLite's per-call mutex (see
/// [`READ_WRITE`]).
const READ_ONLY: OpenFlags =
    OpenFlags::SQLITE_OPEN_READ_ONLY.union(OpenFlags::SQLITE_OPEN_NO_MUTEX);

/// The first 16 bytes of every SQLite database file.
const SQLITE_MAGIC: &[u8; 16] = b"SQLite format 3\0";

/// A register in one SQLite file.
#[derive(Debug)]
pub struct SqliteStore {
    conn: Connection,
    path: PathBuf,
    name: String,
}

/// The result of [`SqliteStore::check`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CheckReport {
    /// The register's path.
    pub register: String,
    /// The lines of `PRAGMA integrity_check` (`["ok"]` when sound).
    pub integrity: Vec<String>,
    /// Rows whose reference points at nothing (`PRAGMA foreign_key_check`).
    pub foreign_key_violations: usize,
    /// `PRAGMA application_id`.
    pub application_id: i32,
    /// `PRAGMA user_version`, the schema version.
    pub schema_version: i64,
    /// `PRAGMA journal_mode`.
    pub journal_mode: String,
    /// Participants enrolled.
    pub participants: i64,
    /// Measured rows, every version.
    pub rows: i64,
    /// Changes in the audit trail.
    pub changes: i64,
}

impl CheckReport {
    /// Whether everything checked is as it must be.
    pub fn ok(&self) -> bool {
        self.integrity == ["ok"]
            && self.foreign_key_violations == 0
            && self.application_id == APPLICATION_ID
            && self.schema_version == SCHEMA_VERSION
            && self.journal_mode == "wal"
    }
}

/// What the first 100 bytes of a file say about it (read with plain file reads, so
/// nothing is ever written to a file that is not ours).
fn inspect_header(path: &Path, name: &str) -> Result<(), Error> {
    let mut file = std::fs::File::open(path).map_err(|e| Error::Unreadable {
        path: name.to_string(),
        reason: match e.kind() {
            std::io::ErrorKind::NotFound => "no such file; create the register first".to_string(),
            std::io::ErrorKind::PermissionDenied => "permission denied".to_string(),
            _ => e.to_string(),
        },
    })?;
    let mut header = Vec::with_capacity(100);
    file.by_ref()
        .take(100)
        .read_to_end(&mut header)
        .map_err(|e| Error::Unreadable {
            path: name.to_string(),
            reason: e.to_string(),
        })?;
    if header.len() < 100 || !header.starts_with(SQLITE_MAGIC) {
        return Err(file_error(
            name,
            "not a dosewright register (not an SQLite database); the file was left as it is"
                .to_string(),
        ));
    }
    let be = |at: usize| {
        i32::from_be_bytes([header[at], header[at + 1], header[at + 2], header[at + 3]])
    };
    let app = be(68);
    if app != APPLICATION_ID {
        return Err(foreign(name, app));
    }
    newer_check(name, i64::from(be(60)))
}

fn foreign(name: &str, app: i32) -> Error {
    file_error(
        name,
        format!(
            "an SQLite database of another program (application_id {app:#010x}), not a dosewright register; the file was left as it is"
        ),
    )
}

fn newer_check(name: &str, version: i64) -> Result<(), Error> {
    if version > SCHEMA_VERSION {
        return Err(file_error(
            name,
            format!(
                "the register has schema version {version}, newer than this program knows ({SCHEMA_VERSION}); use a newer dosewright (the file was left as it is)"
            ),
        ));
    }
    Ok(())
}

impl SqliteStore {
    /// Create a new register at `path` (which must not exist), readable and
    /// writable by its owner only (mode 0600, set when the file is created, before
    /// any data), with the newest schema.
    pub fn create(path: &Path) -> Result<SqliteStore, Error> {
        let name = path.display().to_string();
        let mut options = std::fs::OpenOptions::new();
        options.write(true).create_new(true);
        #[cfg(unix)]
        std::os::unix::fs::OpenOptionsExt::mode(&mut options, 0o600);
        options.open(path).map_err(|e| match e.kind() {
            std::io::ErrorKind::AlreadyExists => Error::Usage(format!(
                "{name}: the file already exists; open the register there, or choose a new file name"
            )),
            _ => Error::Output {
                path: name.clone(),
                reason: e.to_string(),
            },
        })?;
        #[cfg(unix)]
        {
            // The mode given at creation is masked by the umask; make it exact.
            use std::os::unix::fs::PermissionsExt;
            std::fs::set_permissions(path, std::fs::Permissions::from_mode(0o600)).map_err(
                |e| Error::Output {
                    path: name.clone(),
                    reason: e.to_string(),
                },
            )?;
        }
        let conn = Connection::open_with_flags(path, READ_WRITE).map_err(|e| db_error(&name, e))?;
        // Written straight into the empty file's header before WAL mode starts, so
        // the header read by `open` always carries it.
        conn.pragma_update(None, "application_id", APPLICATION_ID)
            .map_err(|e| db_error(&name, e))?;
        SqliteStore::ready(conn, path, name)
    }

    /// Open an existing register to read and write. A file that is not a register
    /// (not SQLite, or SQLite with another `application_id`), of a newer schema, or
    /// not writable (permission bits) is refused with an error and left exactly as
    /// it was. An older schema is migrated forward.
    pub fn open(path: &Path) -> Result<SqliteStore, Error> {
        let name = path.display().to_string();
        inspect_header(path, &name)?;
        writable(path, &name)?;
        let conn = Connection::open_with_flags(path, READ_WRITE).map_err(|e| db_error(&name, e))?;
        SqliteStore::ready(conn, path, name)
    }

    /// Open an existing register to read only (exports, the check, a schedule
    /// from the register); every write then fails with a clear error.
    pub fn open_read_only(path: &Path) -> Result<SqliteStore, Error> {
        let name = path.display().to_string();
        inspect_header(path, &name)?;
        let conn = Connection::open_with_flags(path, READ_ONLY).map_err(|e| db_error(&name, e))?;
        let store = SqliteStore {
            conn,
            path: path.to_path_buf(),
            name,
        };
        store.settings()?;
        let (app, version) = store.identity()?;
        if app != APPLICATION_ID {
            return Err(foreign(&store.name, app));
        }
        newer_check(&store.name, version)?;
        if version < SCHEMA_VERSION {
            return Err(file_error(
                &store.name,
                format!(
                    "the register has schema version {version}; open it once to write (it is then brought to version {SCHEMA_VERSION})"
                ),
            ));
        }
        Ok(store)
    }

    /// The connection, for the measurement tables (`super::measured`).
    pub(super) fn conn(&self) -> &Connection {
        &self.conn
    }

    /// The register's path.
    pub fn path(&self) -> &Path {
        &self.path
    }

    fn settings(&self) -> Result<(), Error> {
        self.conn
            .busy_timeout(BUSY_TIMEOUT)
            .and_then(|_| self.conn.pragma_update(None, "foreign_keys", true))
            // Each commit reaches the disk before "recorded" is said (WAL's own
            // default would let a power cut lose the last commits).
            .and_then(|_| self.conn.pragma_update(None, "synchronous", "FULL"))
            .map_err(|e| db_error(&self.name, e))
    }

    fn identity(&self) -> Result<(i32, i64), Error> {
        let app: i32 = self
            .conn
            .pragma_query_value(None, "application_id", |r| r.get(0))
            .map_err(|e| db_error(&self.name, e))?;
        let version: i64 = self
            .conn
            .pragma_query_value(None, "user_version", |r| r.get(0))
            .map_err(|e| db_error(&self.name, e))?;
        Ok((app, version))
    }

    /// Settings, identity checked again through SQLite, WAL mode, migrations.
    fn ready(conn: Connection, path: &Path, name: String) -> Result<SqliteStore, Error> {
        // No checkpoint when the connection closes (set first, so that a register
        // refused below is left as it was): the write-ahead log stays beside the
        // register (`NAME-wal`, synced at every commit as before) and SQLite's
        // automatic checkpoint copies it into the main file once it holds 1000
        // pages. A command that records one row then syncs the disk twice (the
        // commit and the folder), not six times (the log created, the commit, the
        // checkpoint, the log removed); durability is the same (docs/register.md,
        // "Speed").
        conn.set_db_config(DbConfig::SQLITE_DBCONFIG_NO_CKPT_ON_CLOSE, true)
            .map_err(|e| db_error(&name, e))?;
        let mut store = SqliteStore {
            conn,
            path: path.to_path_buf(),
            name,
        };
        store.settings()?;
        let (app, version) = store.identity()?;
        if app != APPLICATION_ID {
            return Err(foreign(&store.name, app));
        }
        newer_check(&store.name, version)?;
        let mode: String = store
            .conn
            .pragma_query_value(None, "journal_mode", |r| r.get(0))
            .map_err(|e| db_error(&store.name, e))?;
        if !mode.eq_ignore_ascii_case("wal") {
            store
                .conn
                .pragma_update(None, "journal_mode", "wal")
                .map_err(|e| db_error(&store.name, e))?;
        }
        if version < SCHEMA_VERSION {
            store.migrate()?;
        }
        Ok(store)
    }

    /// Run the migrations the register lacks, each in its own transaction that
    /// checks the version again under the write lock (another process may have
    /// migrated it meanwhile).
    fn migrate(&mut self) -> Result<(), Error> {
        let name = self.name.clone();
        let mut migrated = false;
        for (i, script) in MIGRATIONS.iter().enumerate() {
            let target = i as i64 + 1;
            let tx = self
                .conn
                .transaction_with_behavior(TransactionBehavior::Immediate)
                .map_err(|e| db_error(&name, e))?;
            let version: i64 = tx
                .pragma_query_value(None, "user_version", |r| r.get(0))
                .map_err(|e| db_error(&name, e))?;
            newer_check(&name, version)?;
            if version >= target {
                continue; // the transaction rolls back on drop; nothing was written
            }
            tx.execute_batch(script).map_err(|e| db_error(&name, e))?;
            tx.pragma_update(None, "user_version", target)
                .map_err(|e| db_error(&name, e))?;
            tx.commit().map_err(|e| db_error(&name, e))?;
            migrated = true;
        }
        if migrated {
            // The schema version into the main file's header at once, where
            // `inspect_header` reads it before SQLite opens a register.
            self.conn
                .execute_batch("PRAGMA wal_checkpoint(TRUNCATE)")
                .map_err(|e| db_error(&name, e))?;
        }
        Ok(())
    }

    /// One write: a `BEGIN IMMEDIATE` transaction around `f`, committed only when
    /// `f` succeeds (dropped, it rolls back).
    pub(super) fn write<T>(
        &mut self,
        f: impl FnOnce(&Transaction, &str) -> Result<T, Error>,
    ) -> Result<T, Error> {
        let name = self.name.clone();
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)
            .map_err(|e| db_error(&name, e))?;
        let out = f(&tx, &name)?;
        tx.commit().map_err(|e| db_error(&name, e))?;
        Ok(out)
    }

    /// Check the register: `PRAGMA integrity_check`, foreign keys, application id,
    /// schema version and journal mode, and count what it holds.
    pub fn check(&self) -> Result<CheckReport, Error> {
        let e = |e| db_error(&self.name, e);
        let mut stmt = self.conn.prepare("PRAGMA integrity_check").map_err(e)?;
        let integrity = stmt
            .query_map([], |r| r.get::<_, String>(0))
            .map_err(e)?
            .collect::<Result<Vec<_>, _>>()
            .map_err(e)?;
        let mut stmt = self.conn.prepare("PRAGMA foreign_key_check").map_err(e)?;
        let foreign_key_violations = stmt.query_map([], |_| Ok(())).map_err(e)?.count();
        let (application_id, schema_version) = self.identity()?;
        let journal_mode: String = self
            .conn
            .pragma_query_value(None, "journal_mode", |r| r.get(0))
            .map_err(e)?;
        let count = |table: &str| -> Result<i64, Error> {
            self.conn
                .query_row(&format!("SELECT count(*) FROM {table}"), [], |r| r.get(0))
                .map_err(e)
        };
        Ok(CheckReport {
            register: self.name.clone(),
            integrity,
            foreign_key_violations,
            application_id,
            schema_version,
            journal_mode: journal_mode.to_ascii_lowercase(),
            participants: count("participants")?,
            rows: count("entries")?,
            changes: count("changes")?,
        })
    }

    /// A consistent copy of the register in the new file `dest` (which must not
    /// exist; created with mode 0600), made with SQLite's online backup while
    /// others may go on writing: the copy is the register as of one moment.
    pub fn backup_to(&self, dest: &Path) -> Result<(), Error> {
        let dest_name = dest.display().to_string();
        let mut target = SqliteStore::new_file(dest, &dest_name)?;
        let out = |e: rusqlite::Error| Error::Output {
            path: dest_name.clone(),
            reason: format!("backup: {e}"),
        };
        {
            let backup = rusqlite::backup::Backup::new(&self.conn, &mut target).map_err(out)?;
            // Copy every page in one step: one read transaction, so one moment of
            // the register even while others write (WAL lets them go on).
            let mut tries = 0;
            loop {
                match backup.step(-1).map_err(out)? {
                    rusqlite::backup::StepResult::Done => break,
                    _ if tries < 100 => {
                        tries += 1;
                        std::thread::sleep(Duration::from_millis(50));
                    }
                    _ => {
                        return Err(Error::Output {
                            path: dest_name.clone(),
                            reason: "backup: the register stayed locked; try again".to_string(),
                        });
                    }
                }
            }
        }
        target
            .pragma_update(None, "journal_mode", "wal")
            .map_err(out)?;
        drop(target);
        // The copy must open as a sound register.
        let copy = SqliteStore::open_read_only(dest)?;
        let report = copy.check()?;
        if !report.ok() {
            return Err(Error::Output {
                path: dest_name,
                reason: format!("backup: the copy does not check out: {report:?}"),
            });
        }
        Ok(())
    }

    /// A new empty file with mode 0600, opened by SQLite.
    fn new_file(path: &Path, name: &str) -> Result<Connection, Error> {
        let mut options = std::fs::OpenOptions::new();
        options.write(true).create_new(true);
        #[cfg(unix)]
        std::os::unix::fs::OpenOptionsExt::mode(&mut options, 0o600);
        options.open(path).map_err(|e| match e.kind() {
            std::io::ErrorKind::AlreadyExists => Error::Usage(format!(
                "{name}: the file already exists; choose a new file name"
            )),
            _ => Error::Output {
                path: name.to_string(),
                reason: e.to_string(),
            },
        })?;
        Connection::open_with_flags(path, OpenFlags::SQLITE_OPEN_READ_WRITE).map_err(|e| {
            Error::Output {
                path: name.to_string(),
                reason: e.to_string(),
            }
        })
    }
}

/// A register file whose permission bits forbid the owner to write is refused
/// before SQLite opens it (as root the kernel would let the write through).
fn writable(path: &Path, name: &str) -> Result<(), Error> {
    let meta = std::fs::metadata(path).map_err(|e| Error::Unreadable {
        path: name.to_string(),
        reason: e.to_string(),
    })?;
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = meta.permissions().mode();
        if mode & 0o200 == 0 {
            return Err(Error::Usage(format!(
                "{name}: the register is read-only (mode {:o}); nothing was written. Make it writable by its owner (chmod u+w) to record",
                mode & 0o7777
            )));
        }
    }
    #[cfg(not(unix))]
    if meta.permissions().readonly() {
        return Err(Error::Usage(format!(
            "{name}: the register is read-only; nothing was written"
        )));
    }
    Ok(())
}

impl Store for SqliteStore {
    fn name(&self) -> &str {
        &self.name
    }

    fn enrol(&mut self, enrolment: &Enrolment, stamp: &Stamp) -> Result<Participant, Error> {
        let plan = crate::plan::parse_plan(&enrolment.plan_name, &enrolment.plan_text)?;
        let code = plan.participant.id.clone();
        let arm = enrolment
            .arm
            .as_deref()
            .map(str::trim)
            .filter(|a| !a.is_empty())
            .map(str::to_string);
        self.write(|tx, name| {
            let exists: bool = tx
                .query_row(
                    "SELECT EXISTS (SELECT 1 FROM participants WHERE code = ?1)",
                    params![code],
                    |r| r.get(0),
                )
                .map_err(|e| db_error(name, e))?;
            if exists {
                return Err(Error::Usage(format!(
                    "{name}: participant {code} is already enrolled; a participant is enrolled once"
                )));
            }
            tx.execute(
                "INSERT INTO participants (code, arm, plan_name, plan_text, enrolled_at, enrolled_by)
                 VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
                params![
                    code,
                    arm,
                    enrolment.plan_name,
                    enrolment.plan_text,
                    stamp.at_text(),
                    stamp.who
                ],
            )
            .map_err(|e| db_error(name, e))?;
            let pid = tx.last_insert_rowid();
            let new = serde_json::json!({
                "code": code, "arm": arm, "plan_name": enrolment.plan_name
            })
            .to_string();
            insert_change(tx, stamp, Action::Enrol, pid, None, None, Some(new), None)
                .map_err(|e| db_error(name, e))?;
            Ok(Participant {
                code: code.clone(),
                arm: arm.clone(),
                plan_name: enrolment.plan_name.clone(),
                plan_text: enrolment.plan_text.clone(),
                enrolled: stamp.clone(),
            })
        })
    }

    fn participants(&self) -> Result<Vec<Participant>, Error> {
        let e = |e| db_error(&self.name, e);
        let mut stmt = self
            .conn
            .prepare_cached(&format!("{PARTICIPANT_SELECT} ORDER BY code"))
            .map_err(e)?;
        stmt.query_map([], read_participant)
            .map_err(e)?
            .collect::<Result<Vec<_>, _>>()
            .map_err(e)
    }

    fn participant(&self, code: &str) -> Result<Participant, Error> {
        find_participant(&self.conn, &self.name, code).map(|(_, p)| p)
    }

    fn record(&mut self, code: &str, measure: &Measure, stamp: &Stamp) -> Result<Recorded, Error> {
        self.write(|tx, name| {
            let (pid, participant) = find_participant(tx, name, code)?;
            let plan = participant.plan()?;
            let current =
                select_rows(tx, Some(code), Which::Current).map_err(|e| db_error(name, e))?;
            let warnings =
                validate_rows(name, code, &plan, &current, std::slice::from_ref(measure))?;
            let id = insert_entry(tx, pid, measure, stamp, None).map_err(|e| db_error(name, e))?;
            insert_change(
                tx,
                stamp,
                Action::Record,
                pid,
                Some(id),
                None,
                Some(measure.to_json()),
                None,
            )
            .map_err(|e| db_error(name, e))?;
            let row = select_row(tx, id)
                .map_err(|e| db_error(name, e))?
                .ok_or_else(|| Error::Internal(format!("row {id} not found after insert")))?;
            Ok(Recorded { row, warnings })
        })
    }

    fn import_log(
        &mut self,
        code: &str,
        source: &str,
        text: &str,
        stamp: &Stamp,
    ) -> Result<Imported, Error> {
        self.write(|tx, name| {
            let (pid, participant) = find_participant(tx, name, code)?;
            let plan = participant.plan()?;
            // The file on its own first, so errors name its own lines.
            let (log, _) = crate::log::parse_log(source, text, &plan, None)?;
            let new: Vec<Measure> = log.rows.iter().map(Measure::from_log_row).collect();
            let current =
                select_rows(tx, Some(code), Which::Current).map_err(|e| db_error(name, e))?;
            let warnings = validate_rows(name, code, &plan, &current, &new)?;
            let mut ids = Vec::with_capacity(new.len());
            for m in &new {
                let id = insert_entry(tx, pid, m, stamp, None).map_err(|e| db_error(name, e))?;
                insert_change(
                    tx,
                    stamp,
                    Action::Import,
                    pid,
                    Some(id),
                    None,
                    Some(m.to_json()),
                    None,
                )
                .map_err(|e| db_error(name, e))?;
                ids.push(id);
            }
            Ok(Imported { ids, warnings })
        })
    }

    fn correct(
        &mut self,
        id: i64,
        measure: &Measure,
        stamp: &Stamp,
        reason: &str,
    ) -> Result<Recorded, Error> {
        let reason = reason_text(reason)?;
        self.write(|tx, name| {
            let old = current_row(tx, name, id)?;
            if old.measure.kind() != measure.kind() {
                return Err(Error::Usage(format!(
                    "{name}: row {id} is a {}; a correction keeps the kind (void it and record a {} instead)",
                    old.measure.kind(),
                    measure.kind()
                )));
            }
            let code = old.participant.clone();
            let (pid, participant) = find_participant(tx, name, &code)?;
            let plan = participant.plan()?;
            let current: Vec<Row> = select_rows(tx, Some(&code), Which::Current)
                .map_err(|e| db_error(name, e))?
                .into_iter()
                .filter(|r| r.id != id)
                .collect();
            let warnings = validate_rows(name, &code, &plan, &current, std::slice::from_ref(measure))?;
            let new_id = supersede(
                tx,
                name,
                "entries",
                id,
                || insert_entry(tx, pid, measure, stamp, Some(id)),
                |new_id| {
                    insert_change(
                        tx,
                        stamp,
                        Action::Correct,
                        pid,
                        Some(new_id),
                        Some(old.measure.to_json()),
                        Some(measure.to_json()),
                        Some(reason),
                    )
                },
            )?;
            let row = select_row(tx, new_id)
                .map_err(|e| db_error(name, e))?
                .ok_or_else(|| Error::Internal(format!("row {new_id} not found after insert")))?;
            Ok(Recorded { row, warnings })
        })
    }

    fn void(&mut self, id: i64, stamp: &Stamp, reason: &str) -> Result<Change, Error> {
        let reason = reason_text(reason)?;
        self.write(|tx, name| {
            let old = current_row(tx, name, id)?;
            let (pid, _) = find_participant(tx, name, &old.participant)?;
            let change = void_row(tx, name, "entries", id, || {
                insert_change(
                    tx,
                    stamp,
                    Action::Void,
                    pid,
                    Some(id),
                    Some(old.measure.to_json()),
                    None,
                    Some(reason),
                )
            })?;
            Ok(Change {
                id: change,
                participant: old.participant,
                action: Action::Void,
                row: Some(id),
                stamp: stamp.clone(),
                old_values: Some(old.measure.to_json()),
                new_values: None,
                reason: Some(reason.to_string()),
            })
        })
    }

    fn rows(&self, code: Option<&str>, which: Which) -> Result<Vec<Row>, Error> {
        if let Some(code) = code {
            find_participant(&self.conn, &self.name, code)?;
        }
        select_rows(&self.conn, code, which).map_err(|e| db_error(&self.name, e))
    }

    fn rows_each_participant(
        &self,
        which: Which,
        each: &mut dyn FnMut(Vec<Row>) -> Result<(), Error>,
    ) -> Result<(), Error> {
        select_rows_each(&self.conn, &self.name, which, each)
    }

    fn audit(&self, code: Option<&str>) -> Result<Vec<Change>, Error> {
        if let Some(code) = code {
            find_participant(&self.conn, &self.name, code)?;
        }
        let e = |e| db_error(&self.name, e);
        let sql = match code {
            Some(_) => format!(
                "{CHANGE_SELECT} WHERE c.participant_id = (SELECT id FROM participants WHERE code = ?1) ORDER BY c.id"
            ),
            None => format!("{CHANGE_SELECT} ORDER BY c.id"),
        };
        let mut stmt = self.conn.prepare_cached(&sql).map_err(e)?;
        let rows = match code {
            Some(code) => stmt.query_map(params![code], read_change),
            None => stmt.query_map([], read_change),
        };
        rows.map_err(e)?.collect::<Result<Vec<_>, _>>().map_err(e)
    }
}
