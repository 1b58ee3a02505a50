//! The trainer's desk: a local web server over one register (docs/desk.md).
//!
//! Server-rendered HTML (maud, escaped by construction), plain forms that work
//! without JavaScript, every byte served from the binary (the stylesheet is inline;
//! no scripts, fonts or images from anywhere). Accounts with roles are kept in the
//! register ([`accounts`]); web sessions live in the server's memory only, behind a
//! random token whose SHA-256 is the key, so nothing on disk or in memory lets
//! a token be rebuilt. Every request checks the session (idle timeout), then the
//! account in the register (a disabled account loses access at once), then the
//! role, then, for every POST, the session's CSRF token, before anything is read or
//! written. The clock is read here, never in the register library: every record
//! and correction is stamped with the account's name and the current UTC time.

pub mod accounts;
pub mod demo;
mod pages;
pub mod print;
pub mod views;

use crate::error::Error;
use crate::register::SqliteStore;
use accounts::{Account, Role};
use axum::Router;
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Redirect, Response};
use sha2::{Digest, Sha256};
use std::collections::HashMap;
use std::future::Future;
use std::net::{IpAddr, SocketAddr};
use std::path::PathBuf;
use std::sync::{Arc, Mutex, MutexGuard};
use std::time::{Duration, Instant};

/// The name of the session cookie.
pub const SESSION_COOKIE: &str = "dw_session";
/// The name of the sign-in form's own token cookie (before there is a session).
pub const SIGNIN_COOKIE: &str = "dw_signin";

/// How the server runs.
#[derive(Debug, Clone)]
pub struct Config {
    /// The register file.
    pub register: PathBuf,
    /// Where to listen (127.0.0.1 unless asked otherwise).
    pub listen: SocketAddr,
    /// A session ends after this long without a request.
    pub idle_timeout: Duration,
    /// Mark cookies `Secure` (the desk is reached over TLS, through a proxy that
    /// terminates it).
    pub secure_cookies: bool,
    /// Failed sign-ins allowed per account within `signin_window`.
    pub signin_failures_per_account: usize,
    /// Failed sign-ins allowed per client address within `signin_window`.
    pub signin_failures_per_address: usize,
    /// The window of the sign-in limits.
    pub signin_window: Duration,
}

/// The default port.
pub const DEFAULT_PORT: u16 = 8470;

impl Config {
    /// The defaults for a register: 127.0.0.1:8470, 30 minutes' idle timeout, 5
    /// failed sign-ins per account and 20 per address in 15 minutes (common
    /// practice).
    pub fn new(register: PathBuf) -> Config {
        Config {
            register,
            listen: SocketAddr::from(([127, 0, 0, 1], DEFAULT_PORT)),
            idle_timeout: Duration::from_secs(30 * 60),
            secure_cookies: false,
            signin_failures_per_account: 5,
            signin_failures_per_address: 20,
            signin_window: Duration::from_secs(15 * 60),
        }
    }
}

/// A signed-in browser.
#[derive(Debug, Clone)]
struct WebSession {
    account: String,
    csrf: String,
    last_seen: Instant,
}

/// The server's state.
#[derive(Debug)]
pub struct Desk {
    pub(crate) config: Config,
    sessions: Mutex<HashMap<[u8; 32], WebSession>>,
    failures: Mutex<HashMap<String, Vec<Instant>>>,
    cache: views::Cache,
}

/// The shared state handed to the router.
pub type State = Arc<Desk>;

fn lock<T>(m: &Mutex<T>) -> MutexGuard<'_, T> {
    // A handler that panicked cannot leave these maps half-changed in a way that
    // matters (each change is one insert or remove).
    m.lock().unwrap_or_else(|p| p.into_inner())
}

/// The state for a register: it is opened once (which migrates an older schema
/// forward, adding the accounts table).
pub fn state(config: Config) -> Result<State, Error> {
    SqliteStore::open(&config.register)?;
    Ok(Arc::new(Desk {
        config,
        sessions: Mutex::new(HashMap::new()),
        failures: Mutex::new(HashMap::new()),
        cache: views::Cache::default(),
    }))
}

/// The router: every page and form.
pub fn router(state: State) -> Router {
    pages::router(state)
}

/// Serve on a bound listener until `shutdown` completes, then finish the requests
/// in flight and return.
pub async fn serve_on(
    listener: tokio::net::TcpListener,
    state: State,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> Result<(), Error> {
    axum::serve(
        listener,
        router(state).into_make_service_with_connect_info::<SocketAddr>(),
    )
    .with_graceful_shutdown(shutdown)
    .await
    .map_err(|e| Error::Internal(format!("the desk server stopped: {e}")))
}

/// Bind `config.listen` and serve until `shutdown` completes.
pub async fn serve(
    config: Config,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> Result<(), Error> {
    let listener = tokio::net::TcpListener::bind(config.listen)
        .await
        .map_err(|e| Error::Usage(format!("--listen {}: cannot listen: {e}", config.listen)))?;
    let st = state(config)?;
    serve_on(listener, st, shutdown).await
}

/// Random bytes from the operating system's CSPRNG, as hex.
fn random_token() -> Result<String, Fault> {
    let mut bytes = [0u8; 32];
    getrandom::fill(&mut bytes)
        .map_err(|e| Fault::Internal(format!("the system random source failed: {e}")))?;
    Ok(accounts::hex(&bytes))
}

fn digest(token: &str) -> [u8; 32] {
    Sha256::digest(token.as_bytes()).into()
}

/// Equal strings, compared in time that depends only on the length.
fn same(a: &str, b: &str) -> bool {
    a.len() == b.len()
        && a.bytes()
            .zip(b.bytes())
            .fold(0u8, |acc, (x, y)| acc | (x ^ y))
            == 0
}

/// The value of cookie `name` in the request.
fn cookie(headers: &HeaderMap, name: &str) -> Option<String> {
    headers
        .get_all(header::COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(cookie::Cookie::split_parse)
        .filter_map(Result::ok)
        .find(|c| c.name() == name)
        .map(|c| c.value().to_string())
}

impl Desk {
    /// A `Set-Cookie` value: HttpOnly, SameSite=Strict, Path=/, Secure over TLS.
    fn set_cookie(&self, name: &str, value: &str, max_age: Option<Duration>) -> HeaderValue {
        let mut c = cookie::Cookie::build((name.to_string(), value.to_string()))
            .http_only(true)
            .same_site(cookie::SameSite::Strict)
            .path("/")
            .secure(self.config.secure_cookies);
        if let Some(age) = max_age {
            c = c.max_age(cookie::time::Duration::seconds(age.as_secs() as i64));
        }
        HeaderValue::from_str(&c.build().to_string())
            .unwrap_or_else(|_| HeaderValue::from_static("invalid=; Max-Age=0"))
    }

    /// Re-plan every participant of the register into the cache (today's day
    /// view); errors are left for the pages to show.
    pub fn warm_up(&self) {
        if let Ok(store) = SqliteStore::open_read_only(&self.config.register) {
            let _ = views::day_view(&store, &self.cache, today());
        }
    }

    fn new_session(&self, account: &str) -> Result<(String, String), Fault> {
        let token = random_token()?;
        let csrf = random_token()?;
        let now = Instant::now();
        let mut sessions = lock(&self.sessions);
        let idle = self.config.idle_timeout;
        sessions.retain(|_, s| now.duration_since(s.last_seen) <= idle);
        sessions.insert(
            digest(&token),
            WebSession {
                account: account.to_string(),
                csrf: csrf.clone(),
                last_seen: now,
            },
        );
        Ok((token, csrf))
    }

    /// The session of a request, if signed in and not idle too long (an idle one
    /// is ended here). Seeing it counts as activity.
    fn session(&self, headers: &HeaderMap) -> Option<([u8; 32], WebSession)> {
        let token = cookie(headers, SESSION_COOKIE)?;
        let key = digest(&token);
        let mut sessions = lock(&self.sessions);
        let s = sessions.get_mut(&key)?;
        let now = Instant::now();
        if now.duration_since(s.last_seen) > self.config.idle_timeout {
            sessions.remove(&key);
            return None;
        }
        s.last_seen = now;
        Some((key, s.clone()))
    }

    fn end_session(&self, key: &[u8; 32]) {
        lock(&self.sessions).remove(key);
    }

    /// End every session of an account (its password changed or it was disabled),
    /// except `keep`.
    fn end_sessions_of(&self, account: &str, keep: Option<&[u8; 32]>) {
        lock(&self.sessions).retain(|k, s| s.account != account || Some(k) == keep);
    }

    /// Whether sign-in is blocked for this account or address; the wait if so.
    fn blocked(&self, name: &str, ip: IpAddr) -> Option<Duration> {
        let now = Instant::now();
        let window = self.config.signin_window;
        let mut f = lock(&self.failures);
        f.retain(|_, v| {
            v.retain(|t| now.duration_since(*t) < window);
            !v.is_empty()
        });
        let over = |key: &str, limit: usize| -> Option<Duration> {
            let v = f.get(key)?;
            (v.len() >= limit).then(|| window.saturating_sub(now.duration_since(v[0])))
        };
        over(
            &format!("account:{name}"),
            self.config.signin_failures_per_account,
        )
        .or_else(|| {
            over(
                &format!("address:{ip}"),
                self.config.signin_failures_per_address,
            )
        })
    }

    fn failed(&self, name: &str, ip: IpAddr) {
        let now = Instant::now();
        let mut f = lock(&self.failures);
        f.entry(format!("account:{name}")).or_default().push(now);
        f.entry(format!("address:{ip}")).or_default().push(now);
    }
}

/// What a request may do.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Need {
    /// Any signed-in account (sign out, password change).
    Any,
    /// Read participants' data.
    Read,
    /// Record, correct, void, print sheets.
    Record,
    /// The compensation estimate.
    Fit,
    /// CSV exports.
    Export,
    /// Account administration.
    Admin,
}

impl Need {
    fn allows(self, role: Role) -> bool {
        match self {
            Need::Any => true,
            Need::Read => role.reads(),
            Need::Record => role == Role::Trainer,
            Need::Fit => role == Role::Dietitian,
            Need::Export => role == Role::Designer,
            Need::Admin => role == Role::Admin,
        }
    }

    fn words(self) -> &'static str {
        match self {
            Need::Any => "a signed-in account",
            Need::Read => "a trainer, dietitian or designer account",
            Need::Record => "a trainer account (record, correct, print)",
            Need::Fit => "a dietitian account (the compensation estimate)",
            Need::Export => "a designer account (exports)",
            Need::Admin => "an admin account (accounts)",
        }
    }
}

/// The signed-in account of a request.
#[derive(Debug, Clone)]
pub(crate) struct Who {
    key: [u8; 32],
    account: Account,
    csrf: String,
}

/// Why a request fails.
#[derive(Debug)]
pub(crate) enum Fault {
    /// Not signed in (or the session ended): to the sign-in page.
    SignIn(&'static str),
    /// Bad input: the message names the field and what is allowed (400).
    Bad(String),
    /// Not allowed (403).
    Forbidden(String),
    /// No such page or row (404).
    NotFound(String),
    /// Too many failed sign-ins (429).
    TooMany(Duration),
    /// Anything else (500).
    Internal(String),
}

impl From<Error> for Fault {
    fn from(e: Error) -> Fault {
        match e {
            Error::Input(_) | Error::Usage(_) | Error::OutOfRange(_) => Fault::Bad(e.to_string()),
            other => Fault::Internal(other.to_string()),
        }
    }
}

impl IntoResponse for Fault {
    fn into_response(self) -> Response {
        match self {
            Fault::SignIn(why) => Redirect::to(&format!("/signin?why={why}")).into_response(),
            Fault::Bad(message) => pages::problem(
                StatusCode::BAD_REQUEST,
                "Not saved: a value is not allowed",
                &message,
            ),
            Fault::Forbidden(message) => {
                pages::problem(StatusCode::FORBIDDEN, "Not allowed", &message)
            }
            Fault::NotFound(message) => {
                pages::problem(StatusCode::NOT_FOUND, "Not found", &message)
            }
            Fault::TooMany(wait) => {
                let mut r = pages::problem(
                    StatusCode::TOO_MANY_REQUESTS,
                    "Too many failed sign-ins",
                    &format!(
                        "Sign-in is paused for this account or address; try again in {} minute(s).",
                        wait.as_secs().div_ceil(60).max(1)
                    ),
                );
                if let Ok(v) = HeaderValue::from_str(&wait.as_secs().max(1).to_string()) {
                    r.headers_mut().insert(header::RETRY_AFTER, v);
                }
                r
            }
            Fault::Internal(message) => {
                // The details go to the server's standard error, not to the page.
                eprintln!("desk: {message}");
                pages::problem(
                    StatusCode::INTERNAL_SERVER_ERROR,
                    "Something went wrong",
                    "The request could not be completed; nothing is half-written (every write is one transaction). The details are in the server's output.",
                )
            }
        }
    }
}

/// The fields of a submitted form.
pub(crate) type Fields = Vec<(String, String)>;

/// The value of field `name` (the first one).
pub(crate) fn field<'a>(fields: &'a Fields, name: &str) -> Option<&'a str> {
    fields
        .iter()
        .find(|(k, _)| k == name)
        .map(|(_, v)| v.as_str())
}

/// Check a request: the session (or to the sign-in page), the account in the
/// register (a disabled or removed account ends the session), the role (403), and
/// for a form the CSRF token (403, nothing written). Runs on a blocking thread.
fn check(
    desk: &Desk,
    headers: &HeaderMap,
    need: Need,
    form: Option<&Fields>,
) -> Result<Who, Fault> {
    let (key, session) = desk.session(headers).ok_or(Fault::SignIn("signin"))?;
    let conn = accounts::connect(&desk.config.register)?;
    let account = match accounts::find(&conn, &session.account)? {
        Some(a) if !a.disabled => a,
        _ => {
            desk.end_session(&key);
            return Err(Fault::SignIn("disabled"));
        }
    };
    if let Some(fields) = form {
        let given = field(fields, "csrf").unwrap_or("");
        if !same(given, &session.csrf) {
            return Err(Fault::Forbidden(
                "The form's security token is missing or out of date (the page was open from an earlier sign-in). Nothing was saved: open the page again and resubmit.".to_string(),
            ));
        }
    }
    if !need.allows(account.role) {
        return Err(Fault::Forbidden(format!(
            "This needs {}; the account {} is a {}.",
            need.words(),
            account.name,
            account.role.name()
        )));
    }
    Ok(Who {
        key,
        account,
        csrf: session.csrf,
    })
}

/// Run `f` on a blocking thread after [`check`], with the register open.
pub(crate) async fn guarded<F>(
    st: State,
    headers: HeaderMap,
    need: Need,
    form: Option<Fields>,
    f: F,
) -> Response
where
    F: FnOnce(&Desk, &Who, &mut SqliteStore, Option<Fields>) -> Result<Response, Fault>
        + Send
        + 'static,
{
    let out = tokio::task::spawn_blocking(move || {
        let who = check(&st, &headers, need, form.as_ref())?;
        let mut store = SqliteStore::open(&st.config.register)?;
        f(&st, &who, &mut store, form).map_err(|fault| match fault {
            // Messages name the register by its file name, not the server's path.
            Fault::Bad(m) => {
                let full = st.config.register.display().to_string();
                let short = st
                    .config
                    .register
                    .file_name()
                    .map(|n| n.to_string_lossy().into_owned())
                    .unwrap_or_default();
                Fault::Bad(if full.is_empty() {
                    m
                } else {
                    m.replace(&full, &short)
                })
            }
            other => other,
        })
    })
    .await;
    match out {
        Ok(Ok(r)) => r,
        Ok(Err(fault)) => fault.into_response(),
        Err(e) => Fault::Internal(format!("a request failed: {e}")).into_response(),
    }
}

/// The current UTC time: the desk's clock, read here and nowhere in the register.
pub(crate) fn now() -> chrono::DateTime<chrono::Utc> {
    chrono::Utc::now()
}

/// Today's date at the site (the machine's local date).
pub(crate) fn today() -> chrono::NaiveDate {
    chrono::Local::now().date_naive()
}

/// The warning printed when the desk listens on anything but loopback.
pub fn listen_warning(addr: SocketAddr) -> Option<String> {
    (!addr.ip().is_loopback()).then(|| {
        format!(
            "warning: the desk listens on {addr}, reachable from the network. Protect it: a firewall limited to the site's machines, and HTTPS through a reverse proxy (then use --behind-tls)."
        )
    })
}
