//! The desk's pages and forms (docs/desk.md, "Pages").

use super::accounts::{self, Role};
use super::views::{self, Replan, describe, hr_text, round_text};
use super::{Fault, Fields, Need, State, Who, field, guarded, now, today};
use crate::register::{self, Measure, Row, Session, Stamp, Status, Store, WeighIn, Which};
use crate::report::chart::{logged_mass_chart, mass_chart};
use crate::report::sheets::{self, Paper};
use crate::report::units::{KG_PER_LB, Units};
use axum::Router;
use axum::body::Body;
use axum::extract::{ConnectInfo, DefaultBodyLimit, Form, Path, Query};
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{Html, IntoResponse, Redirect, Response};
use axum::routing::{get, post};
use chrono::NaiveDate;
use maud::{DOCTYPE, Markup, PreEscaped, html};
use std::collections::HashMap;
use std::net::SocketAddr;

mod participant;
mod records;
use participant::*;
use records::*;

type Q = Query<HashMap<String, String>>;

/// Every route.
pub(super) fn router(state: State) -> Router {
    Router::new()
        .route("/", get(home))
        .route("/signin", get(signin_page).post(signin))
        .route("/signout", post(signout))
        .route("/day", get(day))
        .route("/sheets", get(site_sheets))
        .route("/p/{code}", get(participant))
        .route("/p/{code}/weigh-in", post(record_weigh_in))
        .route("/p/{code}/session", post(record_session))
        .route("/p/{code}/audit", get(audit))
        .route("/p/{code}/sheets", get(participant_sheets))
        .route("/p/{code}/fit", get(fit))
        .route("/row/{id}", get(row_page))
        .route("/row/{id}/correct", post(correct))
        .route("/row/{id}/void", post(void))
        .route("/export", get(export_page))
        .route("/export/{file}", get(export_file))
        .route("/account", get(account_page))
        .route("/account/password", post(change_password))
        .route("/admin", get(admin_page))
        .route("/admin/{name}/{action}", post(admin_action))
        .fallback(not_found)
        .layer(DefaultBodyLimit::max(64 * 1024))
        .layer(axum::middleware::map_response(security_headers))
        .with_state(state)
}

/// Headers on every response: nothing from anywhere else may load, no framing,
/// no caching of participants' data, no sniffing, no referrer.
async fn security_headers(mut r: Response) -> Response {
    let h = r.headers_mut();
    h.insert(
        header::CONTENT_SECURITY_POLICY,
        HeaderValue::from_static(
            "default-src 'none'; style-src 'unsafe-inline'; img-src 'self' data:; form-action 'self'; frame-ancestors 'none'; base-uri 'none'",
        ),
    );
    h.insert(
        header::X_CONTENT_TYPE_OPTIONS,
        HeaderValue::from_static("nosniff"),
    );
    h.insert(
        header::REFERRER_POLICY,
        HeaderValue::from_static("no-referrer"),
    );
    h.insert(header::X_FRAME_OPTIONS, HeaderValue::from_static("DENY"));
    h.insert(header::CACHE_CONTROL, HeaderValue::from_static("no-store"));
    r
}

const STYLE: &str = r#"
*{box-sizing:border-box}
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif;margin:0;color:#1a1a1a;background:#f6f6f3;line-height:1.4}
header.top{background:#23395b;color:#fff;padding:.5rem 1rem;display:flex;flex-wrap:wrap;gap:.5rem 1.2rem;align-items:center}
header.top a{color:#fff;text-decoration:none;font-weight:600}
header.top .who{margin-left:auto;font-size:.9rem}
header.top form{display:inline;margin:0}
header.top button{background:transparent;border:1px solid #fff;color:#fff;padding:.2rem .6rem;border-radius:4px;cursor:pointer}
main{padding:1rem;max-width:1200px;margin:0 auto}
h1{font-size:1.5rem;margin:.3rem 0 .8rem}
h2{font-size:1.15rem;margin:1.4rem 0 .5rem;border-bottom:1px solid #ccc;padding-bottom:.2rem}
table{border-collapse:collapse;width:100%;background:#fff;margin:.3rem 0 1rem}
th,td{border:1px solid #c8c8c8;padding:.3rem .45rem;text-align:left;vertical-align:top}
th{background:#e9ecef}
td.n{text-align:right;font-variant-numeric:tabular-nums}
.safety{border:2px solid #9a6700;background:#fff8e1;padding:.6rem .9rem;margin:.6rem 0 1rem;border-radius:4px}
.safety h2{margin-top:0;border:0;font-size:1.05rem}
.warn{border-left:4px solid #b42318;background:#fff;padding:.4rem .8rem;margin:.4rem 0}
.ok{border-left:4px solid #2e7d32;background:#fff;padding:.4rem .8rem;margin:.4rem 0}
.muted{color:#555;font-size:.9rem}
.grid{display:grid;grid-template-columns:repeat(auto-fit,minmax(330px,1fr));gap:1rem}
form.card,.card{background:#fff;border:1px solid #c8c8c8;border-radius:4px;padding:.8rem}
label{display:block;margin:.35rem 0 .1rem;font-weight:600;font-size:.92rem}
input,select{font:inherit;padding:.35rem;border:1px solid #888;border-radius:3px;width:100%;max-width:22rem}
input[type=radio]{width:auto}
.inline{display:flex;gap:.5rem;align-items:center;flex-wrap:wrap}
.inline label{display:inline;font-weight:normal}
button,.button{font:inherit;background:#23395b;color:#fff;border:0;border-radius:4px;padding:.45rem 1rem;margin-top:.6rem;cursor:pointer;text-decoration:none;display:inline-block}
button.danger{background:#b42318}
a{color:#1d4e89}
.chart svg{max-width:100%;height:auto;background:#fff}
.chart{overflow-x:auto}
pre{background:#fff;border:1px solid #c8c8c8;padding:.6rem;overflow-x:auto;white-space:pre-wrap}
.tag{display:inline-block;padding:0 .4rem;border-radius:3px;background:#e9ecef;font-size:.85rem}
.tag.done{background:#d7f0da}
.wide{overflow-x:auto}
.nowrap{white-space:nowrap}
td.screen,th.screen{min-width:11rem}
.kv{font-size:.88rem;overflow-wrap:anywhere}
label input,label select{display:block;margin-top:.15rem}
.inline label input{display:inline;margin:0 .2rem 0 0}
@media (max-width:900px){main{padding:.6rem}th,td{padding:.25rem .3rem;font-size:.92rem}}
@media print{header.top,form,.noprint,button,.button{display:none!important}body{background:#fff}main{max-width:none;padding:0}a{color:#000;text-decoration:none}table{page-break-inside:auto}tr{page-break-inside:avoid}}
"#;

fn page(title: &str, who: Option<&Who>, body: Markup) -> Markup {
    html! {
        (DOCTYPE)
        html lang="en" {
            head {
                meta charset="utf-8";
                meta name="viewport" content="width=device-width, initial-scale=1";
                title { (title) " · dosewright desk" }
                style { (PreEscaped(STYLE)) }
            }
            body {
                header.top {
                    span { "dosewright desk" }
                    @if let Some(w) = who {
                        @if w.account.role.reads() {
                            a href="/day" { "Day view" }
                        }
                        @if w.account.role == Role::Trainer {
                            a href={ "/sheets?date=" (today()) } { "Week's sheets" }
                        }
                        @if w.account.role == Role::Designer {
                            a href="/export" { "Export" }
                        }
                        @if w.account.role == Role::Admin {
                            a href="/admin" { "Accounts" }
                        }
                        a href="/account" { "Password" }
                        span.who { (w.account.name) " (" (w.account.role.name()) ")" }
                        form method="post" action="/signout" {
                            input type="hidden" name="csrf" value=(w.csrf);
                            button type="submit" { "Sign out" }
                        }
                    }
                }
                main { (body) }
            }
        }
    }
}

fn respond(status: StatusCode, m: Markup) -> Response {
    (status, Html(m.into_string())).into_response()
}

fn ok(m: Markup) -> Result<Response, Fault> {
    Ok(respond(StatusCode::OK, m))
}

/// An error page (400, 403, 404, 429, 500).
pub(super) fn problem(status: StatusCode, title: &str, message: &str) -> Response {
    respond(
        status,
        page(
            title,
            None,
            html! {
                h1 { (title) }
                p.warn { (message) }
                p { a href="/day" { "Back to the day view" } " · " a href="/signin" { "Sign in" } }
            },
        ),
    )
}

async fn not_found() -> Response {
    problem(StatusCode::NOT_FOUND, "Not found", "There is no such page.")
}

fn see_other(to: &str) -> Response {
    Redirect::to(to).into_response()
}

// ---------------------------------------------------------------------------
// Signing in and out
// ---------------------------------------------------------------------------

async fn home(axum::extract::State(st): axum::extract::State<State>, h: HeaderMap) -> Response {
    guarded(st, h, Need::Any, None, |_, who, _, _| {
        Ok(see_other(if who.account.role == Role::Admin {
            "/admin"
        } else {
            "/day"
        }))
    })
    .await
}

async fn signin_page(axum::extract::State(st): axum::extract::State<State>, q: Q) -> Response {
    let token = match super::random_token() {
        Ok(t) => t,
        Err(f) => return f.into_response(),
    };
    let note = match q.get("why").map(String::as_str) {
        Some("disabled") => Some("The session ended: the account is disabled or was removed."),
        Some("signin") => Some("Please sign in (a session ends after a while without use)."),
        Some("out") => Some("Signed out."),
        Some("password") => Some("Password changed; please sign in again."),
        _ => None,
    };
    let mut r = respond(StatusCode::OK, signin_form(&token, note, None));
    r.headers_mut().insert(
        header::SET_COOKIE,
        st.set_cookie(super::SIGNIN_COOKIE, &token, None),
    );
    r
}

fn signin_form(token: &str, note: Option<&str>, error: Option<&str>) -> Markup {
    page(
        "Sign in",
        None,
        html! {
            h1 { "Sign in" }
            @if let Some(n) = note { p.ok { (n) } }
            @if let Some(e) = error { p.warn { (e) } }
            form.card method="post" action="/signin" style="max-width:26rem" {
                input type="hidden" name="csrf" value=(token);
                label for="name" { "Account name" }
                input id="name" name="name" autocomplete="username" required autofocus;
                label for="password" { "Password" }
                input id="password" name="password" type="password" autocomplete="current-password" required;
                button type="submit" { "Sign in" }
            }
            p.muted { "Accounts are created by the site's administrator from the command line." }
        },
    )
}

async fn signin(
    axum::extract::State(st): axum::extract::State<State>,
    ConnectInfo(addr): ConnectInfo<SocketAddr>,
    h: HeaderMap,
    Form(fields): Form<Fields>,
) -> Response {
    let pre = super::cookie(&h, super::SIGNIN_COOKIE).unwrap_or_default();
    let given = field(&fields, "csrf").unwrap_or("");
    if pre.is_empty() || !super::same(given, &pre) {
        return Fault::Forbidden(
            "The sign-in form's security token is missing or out of date; open the sign-in page again.".into(),
        )
        .into_response();
    }
    let name = field(&fields, "name").unwrap_or("").trim().to_string();
    let password = field(&fields, "password").unwrap_or("").to_string();
    let ip = addr.ip();
    if let Some(wait) = st.blocked(&name, ip) {
        return Fault::TooMany(wait).into_response();
    }
    let st2 = st.clone();
    let checked = tokio::task::spawn_blocking(move || -> Result<Option<Role>, Fault> {
        let conn = accounts::connect(&st2.config.register)?;
        let found = if password.chars().count() > accounts::MAX_PASSWORD_CHARS {
            None
        } else {
            accounts::find(&conn, &name)?
        };
        Ok(match found {
            Some(a) if a.verify(&password) && !a.disabled => Some(a.role),
            Some(_) => None,
            None => {
                // As long as a real check, so timing does not tell names apart.
                let _ = accounts::verify(accounts::dummy_hash(), &password);
                None
            }
        })
    })
    .await;
    let name = field(&fields, "name").unwrap_or("").trim().to_string();
    match checked {
        Ok(Ok(Some(role))) => {
            let (token, _) = match st.new_session(&name) {
                Ok(t) => t,
                Err(f) => return f.into_response(),
            };
            let mut r = see_other(if role == Role::Admin {
                "/admin"
            } else {
                "/day"
            });
            let h = r.headers_mut();
            h.append(
                header::SET_COOKIE,
                st.set_cookie(super::SESSION_COOKIE, &token, None),
            );
            h.append(
                header::SET_COOKIE,
                st.set_cookie(super::SIGNIN_COOKIE, "", Some(std::time::Duration::ZERO)),
            );
            r
        }
        Ok(Ok(None)) => {
            st.failed(&name, ip);
            respond(
                StatusCode::UNAUTHORIZED,
                signin_form(
                    &pre,
                    None,
                    Some("The name or password is wrong, or the account is disabled."),
                ),
            )
        }
        Ok(Err(f)) => f.into_response(),
        Err(e) => Fault::Internal(format!("sign-in: {e}")).into_response(),
    }
}

async fn signout(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Form(fields): Form<Fields>,
) -> Response {
    guarded(st, h, Need::Any, Some(fields), |desk, who, _, _| {
        desk.end_session(&who.key);
        let mut r = see_other("/signin?why=out");
        r.headers_mut().insert(
            header::SET_COOKIE,
            desk.set_cookie(super::SESSION_COOKIE, "", Some(std::time::Duration::ZERO)),
        );
        Ok(r)
    })
    .await
}

// ---------------------------------------------------------------------------
// Reading values from forms and queries
// ---------------------------------------------------------------------------

fn parse_date(key: &str, text: &str) -> Result<NaiveDate, Fault> {
    NaiveDate::parse_from_str(text.trim(), "%Y-%m-%d").map_err(|_| {
        Fault::Bad(format!(
            "{key}: \"{text}\" is not a date; give the date as YYYY-MM-DD, e.g. 2027-09-06"
        ))
    })
}

fn date_field(fields: &Fields, key: &str) -> Result<NaiveDate, Fault> {
    match field(fields, key).map(str::trim) {
        None | Some("") => Err(Fault::Bad(format!(
            "{key}: missing; give the date as YYYY-MM-DD"
        ))),
        Some(t) => parse_date(key, t),
    }
}

/// An optional number; an empty field is none.
fn number(fields: &Fields, key: &str, what: &str) -> Result<Option<f64>, Fault> {
    match field(fields, key).map(str::trim) {
        None | Some("") => Ok(None),
        Some(t) => match t.parse::<f64>() {
            Ok(x) if x.is_finite() => Ok(Some(x)),
            _ => Err(Fault::Bad(format!(
                "{key}: \"{t}\" is not a number; give {what}"
            ))),
        },
    }
}

fn required(fields: &Fields, key: &str, what: &str) -> Result<f64, Fault> {
    number(fields, key, what)?.ok_or_else(|| Fault::Bad(format!("{key}: missing; give {what}")))
}

fn text(fields: &Fields, key: &str) -> String {
    field(fields, key).unwrap_or("").trim().to_string()
}

fn optional_text(fields: &Fields, key: &str) -> Option<String> {
    Some(text(fields, key)).filter(|t| !t.is_empty())
}

/// A weigh-in from a form: the mass in kg or lb (converted to kg exactly, NIST SP
/// 811 Appendix B.8), optional body fat and its method, a note.
fn weigh_in_of(fields: &Fields) -> Result<Measure, Fault> {
    let date = date_field(fields, "date")?;
    let unit = field(fields, "unit").unwrap_or("kg");
    let mass = required(fields, "mass", "the body mass as a number, e.g. 82.5")?;
    let mass_kg = match unit {
        "kg" => mass,
        "lb" => mass * KG_PER_LB,
        other => {
            return Err(Fault::Bad(format!(
                "unit: \"{other}\" is not a unit of mass; give kg or lb"
            )));
        }
    };
    Ok(Measure::WeighIn(WeighIn {
        date,
        mass_kg,
        body_fat_percent: number(fields, "body_fat", "the body fat in percent, e.g. 31.5")?,
        body_fat_method: optional_text(fields, "body_fat_method"),
        note: text(fields, "note"),
    }))
}

/// A delivered session from a form.
fn session_of(fields: &Fields) -> Result<Measure, Fault> {
    Ok(Measure::Session(Session {
        date: date_field(fields, "date")?,
        minutes: required(
            fields,
            "minutes",
            "the minutes at target as a number (0 for a missed session)",
        )?,
        compendium_code: optional_text(fields, "code"),
        met: number(fields, "met", "the activity's MET, e.g. 4.3")?,
        watts: number(fields, "watts", "the power used in watts, e.g. 90")?,
        speed_kmh: number(fields, "speed_kmh", "the speed used in km/h, e.g. 5.6")?,
        avg_hr_bpm: number(
            fields,
            "hr",
            "the average heart rate in beats/min, e.g. 128",
        )?,
        rpe: number(fields, "rpe", "the Borg RPE, 6 to 20")?,
        note: text(fields, "note"),
    }))
}

fn stamp(who: &Who) -> Result<Stamp, Fault> {
    Ok(Stamp::new(&who.account.name, now())?)
}

fn code_path(code: &str) -> String {
    let mut s = String::from("/p/");
    for b in code.bytes() {
        if b.is_ascii_alphanumeric() || matches!(b, b'-' | b'_' | b'.' | b'~') {
            s.push(b as char);
        } else {
            s.push_str(&format!("%{b:02X}"));
        }
    }
    s
}

fn query_date(q: &HashMap<String, String>) -> Result<NaiveDate, Fault> {
    match q.get("date").map(|s| s.trim()) {
        None | Some("") => Ok(today()),
        Some(t) => parse_date("date", t),
    }
}

// ---------------------------------------------------------------------------
// Pieces
// ---------------------------------------------------------------------------

fn fmt1(x: f64) -> String {
    format!("{x:.1}")
}

fn safety(r: &Replan) -> Markup {
    let s = &r.report.screening;
    html! {
        section.safety {
            h2 { "Screening result and cautions" }
            p { strong { "Screening: " } (s.recommendation) }
            @if s.clearance_missing {
                p.warn { strong { "Medical clearance is needed for this plan and is not on file." } }
            }
            ul {
                @for c in &r.report.cautions { li { (c) } }
            }
        }
    }
}

/// The JSON values of an audit entry as "key: value" lines (empty values left
/// out; a plan's text shown by its length only).
fn values(json: Option<&str>) -> Markup {
    let Some(text) = json else { return html! {} };
    match serde_json::from_str::<serde_json::Map<String, serde_json::Value>>(text) {
        Ok(map) => html! {
            @for (k, v) in &map {
                @match v {
                    serde_json::Value::Null => {},
                    serde_json::Value::String(s) if s.is_empty() => {},
                    serde_json::Value::String(s) if k == "plan_text" => { div.kv { span.muted { (k) ": " } (s.lines().count()) " lines" } },
                    serde_json::Value::String(s) => { div.kv { span.muted { (k) ": " } (s) } },
                    other => { div.kv { span.muted { (k) ": " } (other.to_string()) } },
                }
            }
        },
        Err(_) => html! { code { (text) } },
    }
}

fn csrf(who: &Who) -> Markup {
    html! { input type="hidden" name="csrf" value=(who.csrf); }
}
