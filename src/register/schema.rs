//! The register's schema as forward-only migrations: script `i` (0-based) takes a
//! register from version `i` to version `i + 1` (`PRAGMA user_version`). A script
//! once shipped is never edited; a change of schema is a new script at the end.

/// `PRAGMA application_id` of every register: the bytes "DWRG" (dosewright
/// register), so a register is told from any other SQLite file by its header.
pub const APPLICATION_ID: i32 = i32::from_be_bytes(*b"DWRG");

/// The migrations, oldest first; the schema version is their count.
pub(super) const MIGRATIONS: &[&str] = &[V1, V2, V3];

/// The newest schema version this program knows.
pub const SCHEMA_VERSION: i64 = MIGRATIONS.len() as i64;

/// Version 1: participants, entries (one stable id space for every measured row)
/// with their weigh-in and session values, and the changes (the audit trail).
/// Triggers refuse every DELETE and every UPDATE of a recorded value.
const V1: &str = r#"
CREATE TABLE participants (
    id          INTEGER PRIMARY KEY,
    code        TEXT NOT NULL UNIQUE CHECK (length(trim(code)) > 0),
    arm         TEXT,
    plan_name   TEXT NOT NULL,
    plan_text   TEXT NOT NULL,
    enrolled_at TEXT NOT NULL,
    enrolled_by TEXT NOT NULL CHECK (length(trim(enrolled_by)) > 0)
);

CREATE TABLE changes (
    id             INTEGER PRIMARY KEY,
    at             TEXT NOT NULL,
    by             TEXT NOT NULL CHECK (length(trim(by)) > 0),
    action         TEXT NOT NULL
                   CHECK (action IN ('enrol', 'record', 'import', 'correct', 'void')),
    participant_id INTEGER NOT NULL REFERENCES participants (id),
    entry_id       INTEGER REFERENCES entries (id),
    old_values     TEXT,
    new_values     TEXT,
    reason         TEXT,
    CHECK (action NOT IN ('correct', 'void') OR length(trim(coalesce(reason, ''))) > 0)
);

CREATE TABLE entries (
    id             INTEGER PRIMARY KEY,
    participant_id INTEGER NOT NULL REFERENCES participants (id),
    kind           TEXT NOT NULL CHECK (kind IN ('weigh-in', 'session')),
    date           TEXT NOT NULL,
    note           TEXT NOT NULL DEFAULT '',
    recorded_at    TEXT NOT NULL,
    recorded_by    TEXT NOT NULL CHECK (length(trim(recorded_by)) > 0),
    supersedes     INTEGER UNIQUE REFERENCES entries (id),
    superseded_by  INTEGER UNIQUE REFERENCES entries (id),
    voided_by      INTEGER UNIQUE REFERENCES changes (id)
);
CREATE INDEX entries_by_participant ON entries (participant_id, date, id);
CREATE INDEX changes_by_participant ON changes (participant_id, id);

CREATE TABLE weigh_ins (
    entry_id         INTEGER PRIMARY KEY REFERENCES entries (id),
    mass_kg          REAL NOT NULL,
    body_fat_percent REAL,
    body_fat_method  TEXT
);

CREATE TABLE sessions (
    entry_id        INTEGER PRIMARY KEY REFERENCES entries (id),
    minutes         REAL NOT NULL,
    compendium_code TEXT,
    met             REAL,
    watts           REAL,
    speed_kmh       REAL,
    avg_hr_bpm      REAL,
    rpe             REAL
);

CREATE TRIGGER participants_keep BEFORE DELETE ON participants
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: a participant cannot be deleted'); END;
CREATE TRIGGER participants_fixed BEFORE UPDATE ON participants
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: an enrolment cannot be changed'); END;

CREATE TRIGGER changes_keep BEFORE DELETE ON changes
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: the audit trail cannot be deleted'); END;
CREATE TRIGGER changes_fixed BEFORE UPDATE ON changes
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: the audit trail cannot be changed'); END;

CREATE TRIGGER entries_keep BEFORE DELETE ON entries
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: void or correct it instead of deleting'); END;
-- Only the marks superseded_by and voided_by may be set, each once, from empty; a
-- row already superseded or voided is frozen.
CREATE TRIGGER entries_fixed BEFORE UPDATE ON entries
WHEN NEW.id IS NOT OLD.id
  OR NEW.participant_id IS NOT OLD.participant_id
  OR NEW.kind IS NOT OLD.kind
  OR NEW.date IS NOT OLD.date
  OR NEW.note IS NOT OLD.note
  OR NEW.recorded_at IS NOT OLD.recorded_at
  OR NEW.recorded_by IS NOT OLD.recorded_by
  OR NEW.supersedes IS NOT OLD.supersedes
  OR OLD.superseded_by IS NOT NULL
  OR OLD.voided_by IS NOT NULL
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: a recorded value cannot be changed; correct the row instead'); END;

CREATE TRIGGER weigh_ins_keep BEFORE DELETE ON weigh_ins
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: void or correct it instead of deleting'); END;
CREATE TRIGGER weigh_ins_fixed BEFORE UPDATE ON weigh_ins
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: a recorded value cannot be changed; correct the row instead'); END;

CREATE TRIGGER sessions_keep BEFORE DELETE ON sessions
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: void or correct it instead of deleting'); END;
CREATE TRIGGER sessions_fixed BEFORE UPDATE ON sessions
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: a recorded value cannot be changed; correct the row instead'); END;
"#;

/// Version 2: a pilot's physiological measurements (docs/pilot-analysis.md): body
/// composition (fat and fat-free mass), measured RMR and total energy expenditure
/// over a period, each with its precision where known, and their own audit trail.
/// Self-contained: it only adds tables, so it can be renumbered when merged beside
/// another version-2 script. The same rules as version 1: corrections supersede,
/// voids mark, nothing is deleted or changed in place.
const V2: &str = r#"
CREATE TABLE measurement_changes (
    id             INTEGER PRIMARY KEY,
    at             TEXT NOT NULL,
    by             TEXT NOT NULL CHECK (length(trim(by)) > 0),
    action         TEXT NOT NULL CHECK (action IN ('record', 'import', 'correct', 'void')),
    participant_id INTEGER NOT NULL REFERENCES participants (id),
    measurement_id INTEGER REFERENCES measurements (id),
    old_values     TEXT,
    new_values     TEXT,
    reason         TEXT,
    CHECK (action NOT IN ('correct', 'void') OR length(trim(coalesce(reason, ''))) > 0)
);

CREATE TABLE measurements (
    id             INTEGER PRIMARY KEY,
    participant_id INTEGER NOT NULL REFERENCES participants (id),
    kind           TEXT NOT NULL CHECK (kind IN ('composition', 'rmr', 'tee')),
    date           TEXT NOT NULL,
    last_date      TEXT,
    fat_kg         REAL,
    fat_free_kg    REAL,
    mass_kg        REAL,
    kcal_per_day   REAL,
    method         TEXT,
    fat_sd_kg      REAL,
    fat_free_sd_kg REAL,
    sd_kcal_per_day REAL,
    note           TEXT NOT NULL DEFAULT '',
    recorded_at    TEXT NOT NULL,
    recorded_by    TEXT NOT NULL CHECK (length(trim(recorded_by)) > 0),
    supersedes     INTEGER UNIQUE REFERENCES measurements (id),
    superseded_by  INTEGER UNIQUE REFERENCES measurements (id),
    voided_by      INTEGER UNIQUE REFERENCES measurement_changes (id),
    CHECK (kind <> 'composition' OR (fat_kg IS NOT NULL AND fat_free_kg IS NOT NULL AND method IS NOT NULL)),
    CHECK (kind <> 'rmr' OR kcal_per_day IS NOT NULL),
    CHECK (kind <> 'tee' OR (kcal_per_day IS NOT NULL AND last_date IS NOT NULL AND method IS NOT NULL))
);
CREATE INDEX measurements_by_participant ON measurements (participant_id, date, id);
CREATE INDEX measurement_changes_by_participant ON measurement_changes (participant_id, id);

CREATE TRIGGER measurement_changes_keep BEFORE DELETE ON measurement_changes
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: the audit trail cannot be deleted'); END;
CREATE TRIGGER measurement_changes_fixed BEFORE UPDATE ON measurement_changes
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: the audit trail cannot be changed'); END;

CREATE TRIGGER measurements_keep BEFORE DELETE ON measurements
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: void or correct it instead of deleting'); END;
-- Only the marks superseded_by and voided_by may be set, each once, from empty.
CREATE TRIGGER measurements_fixed BEFORE UPDATE ON measurements
WHEN NEW.id IS NOT OLD.id
  OR NEW.participant_id IS NOT OLD.participant_id
  OR NEW.kind IS NOT OLD.kind
  OR NEW.date IS NOT OLD.date
  OR NEW.last_date IS NOT OLD.last_date
  OR NEW.fat_kg IS NOT OLD.fat_kg
  OR NEW.fat_free_kg IS NOT OLD.fat_free_kg
  OR NEW.mass_kg IS NOT OLD.mass_kg
  OR NEW.kcal_per_day IS NOT OLD.kcal_per_day
  OR NEW.method IS NOT OLD.method
  OR NEW.fat_sd_kg IS NOT OLD.fat_sd_kg
  OR NEW.fat_free_sd_kg IS NOT OLD.fat_free_sd_kg
  OR NEW.sd_kcal_per_day IS NOT OLD.sd_kcal_per_day
  OR NEW.note IS NOT OLD.note
  OR NEW.recorded_at IS NOT OLD.recorded_at
  OR NEW.recorded_by IS NOT OLD.recorded_by
  OR NEW.supersedes IS NOT OLD.supersedes
  OR OLD.superseded_by IS NOT NULL
  OR OLD.voided_by IS NOT NULL
BEGIN SELECT RAISE(ABORT, 'the register keeps every row: a recorded value cannot be changed; correct the row instead'); END;
"#;

/// Version 3: the desk's accounts (docs/desk.md) and the trail of what was done to
/// them. Web sessions are kept in the server's memory only, never on disk.
const V3: &str = r#"
CREATE TABLE accounts (
    id           INTEGER PRIMARY KEY,
    name         TEXT NOT NULL UNIQUE CHECK (length(trim(name)) > 0),
    role         TEXT NOT NULL CHECK (role IN ('trainer', 'dietitian', 'designer', 'admin')),
    password_phc TEXT NOT NULL CHECK (password_phc LIKE '$argon2%'),
    disabled     INTEGER NOT NULL DEFAULT 0 CHECK (disabled IN (0, 1)),
    created_at   TEXT NOT NULL,
    created_by   TEXT NOT NULL CHECK (length(trim(created_by)) > 0)
);

CREATE TABLE account_changes (
    id         INTEGER PRIMARY KEY,
    at         TEXT NOT NULL,
    by         TEXT NOT NULL CHECK (length(trim(by)) > 0),
    account_id INTEGER NOT NULL REFERENCES accounts (id),
    action     TEXT NOT NULL CHECK (action IN ('create', 'password', 'disable', 'enable'))
);
"#;
