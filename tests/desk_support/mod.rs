//! Shared by the desk's tests: a demo register with accounts in a scratch folder,
//! the server started in-process on 127.0.0.1 port 0, and an HTTP client that keeps
//! cookies.
#![allow(dead_code)]

use chrono::{NaiveDate, TimeZone, Utc};
use dosewright::desk::{self, Config, accounts};
use dosewright::register::{SqliteStore, Stamp, Store, Which};
use std::net::SocketAddr;
use std::path::PathBuf;
use std::time::Duration;

/// The demo protocol's first day in the tests (a Monday).
pub fn start() -> NaiveDate {
    NaiveDate::from_ymd_opt(2027, 1, 4).unwrap()
}

/// Every test account's password.
pub const PASSWORD: &str = "a long enough pass phrase";

/// A scratch register with the demo participants and one account per role
/// (trainer1, trainer2, dietitian1, designer1, admin1).
pub struct Site {
    pub dir: tempfile::TempDir,
    pub register: PathBuf,
}

impl Site {
    pub fn new() -> Site {
        let dir = tempfile::tempdir().unwrap();
        let register = dir.path().join("site.db");
        let stamp = Stamp::new(
            "test-setup",
            Utc.with_ymd_and_hms(2027, 1, 1, 8, 0, 0).unwrap(),
        )
        .unwrap();
        desk::demo::create(&register, start(), None, 0, &stamp).unwrap();
        let mut conn = accounts::connect(&register).unwrap();
        for (name, role) in [
            ("trainer1", "trainer"),
            ("trainer2", "trainer"),
            ("dietitian1", "dietitian"),
            ("designer1", "designer"),
            ("admin1", "admin"),
        ] {
            accounts::create(
                &mut conn,
                name,
                accounts::Role::parse(role).unwrap(),
                PASSWORD,
                &stamp,
            )
            .unwrap();
        }
        Site { dir, register }
    }

    pub fn config(&self) -> Config {
        Config::new(self.register.clone())
    }

    /// Current rows of every participant.
    pub fn current_rows(&self) -> usize {
        let s = SqliteStore::open_read_only(&self.register).unwrap();
        s.rows(None, Which::Current).unwrap().len()
    }

    /// Every row version and every change.
    pub fn counts(&self) -> (usize, usize) {
        let s = SqliteStore::open_read_only(&self.register).unwrap();
        (
            s.rows(None, Which::All).unwrap().len(),
            s.audit(None).unwrap().len(),
        )
    }

    pub fn store(&self) -> SqliteStore {
        SqliteStore::open(&self.register).unwrap()
    }
}

/// The server running in-process on 127.0.0.1, port 0, on its own tokio runtime;
/// stopped (gracefully) when dropped.
pub struct Server {
    pub addr: SocketAddr,
    stop: Option<tokio::sync::oneshot::Sender<()>>,
    thread: Option<std::thread::JoinHandle<()>>,
}

impl Server {
    pub fn start(config: Config) -> Server {
        let (tx, rx) = std::sync::mpsc::channel();
        let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
        let thread = std::thread::spawn(move || {
            let rt = tokio::runtime::Builder::new_multi_thread()
                .worker_threads(2)
                .enable_all()
                .build()
                .unwrap();
            rt.block_on(async move {
                let listener = tokio::net::TcpListener::bind("127.0.0.1:0").await.unwrap();
                tx.send(listener.local_addr().unwrap()).unwrap();
                let st = desk::state(config).unwrap();
                desk::serve_on(listener, st, async {
                    let _ = stopped.await;
                })
                .await
                .unwrap();
            });
        });
        let addr = rx.recv_timeout(Duration::from_secs(30)).unwrap();
        Server {
            addr,
            stop: Some(stop),
            thread: Some(thread),
        }
    }

    pub fn url(&self, path: &str) -> String {
        format!("http://{}{}", self.addr, path)
    }

    /// A new browser-like client (own cookies, no redirects followed).
    pub fn client(&self) -> Client {
        Client {
            base: format!("http://{}", self.addr),
            agent: ureq::Agent::config_builder()
                .http_status_as_error(false)
                .max_redirects(0)
                .max_redirects_will_error(false)
                .proxy(None)
                .timeout_global(Some(Duration::from_secs(60)))
                .build()
                .into(),
        }
    }

    /// A client signed in as `name`.
    pub fn signed_in(&self, name: &str) -> Client {
        let c = self.client();
        let r = c.sign_in(name, PASSWORD);
        assert_eq!(r.status, 303, "sign-in of {name}: {}", r.body);
        c
    }
}

impl Drop for Server {
    fn drop(&mut self) {
        if let Some(s) = self.stop.take() {
            let _ = s.send(());
        }
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }
}

/// What came back.
#[derive(Debug)]
pub struct Reply {
    pub status: u16,
    pub location: Option<String>,
    pub content_type: String,
    pub set_cookies: Vec<String>,
    pub body: String,
}

pub struct Client {
    pub base: String,
    pub agent: ureq::Agent,
}

fn reply(mut r: ureq::http::Response<ureq::Body>) -> Reply {
    let h = r.headers();
    let get = |k: &str| h.get(k).and_then(|v| v.to_str().ok()).map(String::from);
    let location = get("location");
    let content_type = get("content-type").unwrap_or_default();
    let set_cookies = h
        .get_all("set-cookie")
        .iter()
        .filter_map(|v| v.to_str().ok().map(String::from))
        .collect();
    let body = r
        .body_mut()
        .with_config()
        .limit(50_000_000)
        .read_to_string()
        .unwrap_or_default();
    Reply {
        status: r.status().as_u16(),
        location,
        content_type,
        set_cookies,
        body,
    }
}

impl Client {
    pub fn get(&self, path: &str) -> Reply {
        reply(
            self.agent
                .get(format!("{}{}", self.base, path))
                .call()
                .unwrap(),
        )
    }

    pub fn post(&self, path: &str, form: &[(&str, &str)]) -> Reply {
        reply(
            self.agent
                .post(format!("{}{}", self.base, path))
                .send_form(form.iter().copied())
                .unwrap(),
        )
    }

    /// POST a form with this client's CSRF token (read from `page`).
    pub fn post_with_token(&self, page: &str, path: &str, form: &[(&str, &str)]) -> Reply {
        let token = self.token(page);
        let mut f: Vec<(&str, &str)> = vec![("csrf", token.as_str())];
        f.extend_from_slice(form);
        self.post(path, &f)
    }

    /// The CSRF token of the forms on `page`.
    pub fn token(&self, page: &str) -> String {
        let body = self.get(page).body;
        token_in(&body).unwrap_or_else(|| panic!("no form token on {page}"))
    }

    pub fn sign_in(&self, name: &str, password: &str) -> Reply {
        let page = self.get("/signin").body;
        let token = token_in(&page).expect("a sign-in token");
        self.post(
            "/signin",
            &[("csrf", &token), ("name", name), ("password", password)],
        )
    }
}

/// The value of the first `name="csrf"` field in a page.
pub fn token_in(body: &str) -> Option<String> {
    let i = body.find("name=\"csrf\" value=\"")? + "name=\"csrf\" value=\"".len();
    let rest = &body[i..];
    Some(rest[..rest.find('"')?].to_string())
}

/// The minutes at target shown for participant `code` on a day-view page.
pub fn day_minutes(body: &str, code: &str) -> Option<u32> {
    let i = body.find(&format!("href=\"/p/{code}\""))?;
    let rest = &body[i..];
    let j = rest.find("class=\"n minutes\"><div>")? + "class=\"n minutes\"><div>".len();
    let rest = &rest[j..];
    rest[..rest.find('<')?].parse().ok()
}
