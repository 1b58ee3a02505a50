//! The desk's accounts: a name, a role and an argon2id password hash (a PHC
//! string), kept in the register's `accounts` table (schema version 3), with a row
//! in `account_changes` for every creation, password change, disabling and
//! enabling. Who and when are given by the caller, as for the register.

use crate::error::Error;
use crate::register::Stamp;
use argon2::Argon2;
use argon2::password_hash::phc::PasswordHash;
use argon2::password_hash::{PasswordHasher, PasswordVerifier};
use rusqlite::{Connection, OptionalExtension, params};
use std::path::Path;
use std::time::Duration;

/// What an account may do (docs/desk.md, "Accounts and roles").
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// Reads, records weigh-ins and sessions, corrects and voids, prints sheets.
    Trainer,
    /// Reads and runs the compensation estimate (the fit).
    Dietitian,
    /// Reads and exports CSV.
    Designer,
    /// Manages accounts (and nothing else).
    Admin,
}

impl Role {
    /// Every role.
    pub const ALL: [Role; 4] = [Role::Trainer, Role::Dietitian, Role::Designer, Role::Admin];

    /// The role's name as stored and typed.
    pub fn name(self) -> &'static str {
        match self {
            Role::Trainer => "trainer",
            Role::Dietitian => "dietitian",
            Role::Designer => "designer",
            Role::Admin => "admin",
        }
    }

    /// The role of a name; an error saying what is allowed.
    pub fn parse(s: &str) -> Result<Role, Error> {
        Role::ALL
            .into_iter()
            .find(|r| r.name() == s)
            .ok_or_else(|| {
                Error::Usage(format!(
                    "role: \"{s}\" is not a role; give trainer, dietitian, designer or admin"
                ))
            })
    }

    /// Whether the role reads participants' data (the day view, participant pages,
    /// the audit). The admin manages accounts only.
    pub fn reads(self) -> bool {
        self != Role::Admin
    }
}

/// An account as stored.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Account {
    /// The account's row id.
    pub id: i64,
    /// The sign-in name (also the `who` of the audit trail).
    pub name: String,
    /// The role.
    pub role: Role,
    /// Whether the admin has disabled it.
    pub disabled: bool,
    password_phc: String,
}

/// Shortest password accepted, characters (common practice: NIST SP 800-63B
/// section 5.1.1.2 asks at least 8; a shared desk warrants more).
pub const MIN_PASSWORD_CHARS: usize = 12;
/// Longest password accepted, characters (bounds the hashing work of one attempt).
pub const MAX_PASSWORD_CHARS: usize = 256;

/// A connection to the register for the accounts (the register itself must have
/// been opened once with [`crate::register::SqliteStore::open`], which brings the
/// schema to the version holding the accounts).
pub fn connect(path: &Path) -> Result<Connection, Error> {
    let name = path.display().to_string();
    let conn = Connection::open_with_flags(path, rusqlite::OpenFlags::SQLITE_OPEN_READ_WRITE)
        .map_err(|e| db(&name, e))?;
    conn.busy_timeout(Duration::from_secs(5))
        .and_then(|_| conn.pragma_update(None, "foreign_keys", true))
        .and_then(|_| conn.pragma_update(None, "synchronous", "FULL"))
        .map_err(|e| db(&name, e))?;
    Ok(conn)
}

fn db(name: &str, e: rusqlite::Error) -> Error {
    if let rusqlite::Error::SqliteFailure(f, _) = &e
        && matches!(
            f.code,
            rusqlite::ErrorCode::DatabaseBusy | rusqlite::ErrorCode::DatabaseLocked
        )
    {
        return Error::Usage(format!(
            "{name}: the register is locked by another writer; nothing was written, try again"
        ));
    }
    Error::Internal(format!("{name}: {e}"))
}

/// A sign-in name: 1 to 64 characters of letters, digits, `.`, `_`, `-`.
pub fn check_name(name: &str) -> Result<(), Error> {
    let ok = !name.is_empty()
        && name.chars().count() <= 64
        && name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '.' | '_' | '-'));
    if ok {
        Ok(())
    } else {
        Err(Error::Usage(format!(
            "name: \"{name}\" is not allowed; give 1 to 64 letters, digits, '.', '_' or '-'"
        )))
    }
}

/// A new password: [`MIN_PASSWORD_CHARS`] to [`MAX_PASSWORD_CHARS`] characters.
pub fn check_password(password: &str) -> Result<(), Error> {
    let n = password.chars().count();
    if !(MIN_PASSWORD_CHARS..=MAX_PASSWORD_CHARS).contains(&n) {
        return Err(Error::Usage(format!(
            "password: {n} characters; give {MIN_PASSWORD_CHARS} to {MAX_PASSWORD_CHARS} characters"
        )));
    }
    Ok(())
}

/// The argon2id hash of a password (default parameters, random salt) as a PHC
/// string.
pub fn hash_password(password: &str) -> Result<String, Error> {
    Argon2::default()
        .hash_password(password.as_bytes())
        .map(|h| h.to_string())
        .map_err(|e| Error::Internal(format!("hashing the password: {e}")))
}

/// A PHC string made once from a random password, verified against when the name
/// given does not exist, so a sign-in takes as long either way.
pub fn dummy_hash() -> &'static str {
    static DUMMY: std::sync::OnceLock<String> = std::sync::OnceLock::new();
    DUMMY.get_or_init(|| {
        let mut bytes = [0u8; 16];
        let _ = getrandom::fill(&mut bytes);
        hash_password(&hex(&bytes)).unwrap_or_default()
    })
}

/// Whether `password` matches a PHC string.
pub fn verify(phc: &str, password: &str) -> bool {
    match PasswordHash::new(phc) {
        Ok(h) => Argon2::default()
            .verify_password(password.as_bytes(), &h)
            .is_ok(),
        Err(_) => false,
    }
}

/// Lower-case hex of bytes.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

impl Account {
    /// Whether `password` is this account's.
    pub fn verify(&self, password: &str) -> bool {
        verify(&self.password_phc, password)
    }
}

fn account_of(row: &rusqlite::Row<'_>) -> rusqlite::Result<(i64, String, String, bool, String)> {
    Ok((
        row.get(0)?,
        row.get(1)?,
        row.get(2)?,
        row.get(3)?,
        row.get(4)?,
    ))
}

fn to_account((id, name, role, disabled, phc): (i64, String, String, bool, String)) -> Account {
    Account {
        id,
        name,
        // The table's CHECK allows only the four names.
        role: Role::parse(&role).unwrap_or(Role::Designer),
        disabled,
        password_phc: phc,
    }
}

/// The account named `name`, if any.
pub fn find(conn: &Connection, name: &str) -> Result<Option<Account>, Error> {
    conn.query_row(
        "SELECT id, name, role, disabled, password_phc FROM accounts WHERE name = ?1",
        [name],
        account_of,
    )
    .optional()
    .map(|o| o.map(to_account))
    .map_err(|e| db("register", e))
}

/// Every account, by name.
pub fn list(conn: &Connection) -> Result<Vec<Account>, Error> {
    let mut stmt = conn
        .prepare("SELECT id, name, role, disabled, password_phc FROM accounts ORDER BY name")
        .map_err(|e| db("register", e))?;
    let rows = stmt
        .query_map([], account_of)
        .map_err(|e| db("register", e))?
        .collect::<Result<Vec<_>, _>>()
        .map_err(|e| db("register", e))?;
    Ok(rows.into_iter().map(to_account).collect())
}

/// Create an account; the name must be new.
pub fn create(
    conn: &mut Connection,
    name: &str,
    role: Role,
    password: &str,
    stamp: &Stamp,
) -> Result<Account, Error> {
    check_name(name)?;
    check_password(password)?;
    let phc = hash_password(password)?;
    let tx = conn
        .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)
        .map_err(|e| db("register", e))?;
    let exists: Option<i64> = tx
        .query_row("SELECT id FROM accounts WHERE name = ?1", [name], |r| {
            r.get(0)
        })
        .optional()
        .map_err(|e| db("register", e))?;
    if exists.is_some() {
        return Err(Error::Usage(format!(
            "name: an account \"{name}\" already exists; choose another name"
        )));
    }
    tx.execute(
        "INSERT INTO accounts (name, role, password_phc, created_at, created_by) VALUES (?1, ?2, ?3, ?4, ?5)",
        params![name, role.name(), phc, stamp.at_text(), stamp.who],
    )
    .map_err(|e| db("register", e))?;
    let id = tx.last_insert_rowid();
    log_change(&tx, id, "create", stamp)?;
    tx.commit().map_err(|e| db("register", e))?;
    find(conn, name)?.ok_or_else(|| Error::Internal("the new account was not found".into()))
}

fn log_change(
    tx: &rusqlite::Transaction<'_>,
    id: i64,
    action: &str,
    stamp: &Stamp,
) -> Result<(), Error> {
    tx.execute(
        "INSERT INTO account_changes (at, by, account_id, action) VALUES (?1, ?2, ?3, ?4)",
        params![stamp.at_text(), stamp.who, id, action],
    )
    .map_err(|e| db("register", e))?;
    Ok(())
}

fn existing(conn: &Connection, name: &str) -> Result<Account, Error> {
    find(conn, name)?.ok_or_else(|| Error::Usage(format!("name: there is no account \"{name}\"")))
}

/// Set a new password.
pub fn set_password(
    conn: &mut Connection,
    name: &str,
    password: &str,
    stamp: &Stamp,
) -> Result<(), Error> {
    check_password(password)?;
    let account = existing(conn, name)?;
    let phc = hash_password(password)?;
    let tx = conn
        .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)
        .map_err(|e| db("register", e))?;
    tx.execute(
        "UPDATE accounts SET password_phc = ?1 WHERE id = ?2",
        params![phc, account.id],
    )
    .map_err(|e| db("register", e))?;
    log_change(&tx, account.id, "password", stamp)?;
    tx.commit().map_err(|e| db("register", e))
}

/// Disable (`true`) or enable an account. A disabled account cannot sign in, and
/// its open sessions stop at their next request.
pub fn set_disabled(
    conn: &mut Connection,
    name: &str,
    disabled: bool,
    stamp: &Stamp,
) -> Result<(), Error> {
    let account = existing(conn, name)?;
    let tx = conn
        .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)
        .map_err(|e| db("register", e))?;
    tx.execute(
        "UPDATE accounts SET disabled = ?1 WHERE id = ?2",
        params![disabled, account.id],
    )
    .map_err(|e| db("register", e))?;
    log_change(
        &tx,
        account.id,
        if disabled { "disable" } else { "enable" },
        stamp,
    )?;
    tx.commit().map_err(|e| db("register", e))
}
