//! The desk's pages and forms (docs/desk.md, "Pages").

use super::accounts::{self, Role};
use super::views::{self, Replan};
use super::{Fault, Fields, Need, State, Who, field, guarded, now, today};
use crate::register::{self, Measure, Row, Session, Stamp, Status, Store, WeighIn, Which};
use crate::report::chart::{Series, mass_chart};
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

fn describe(m: &Measure) -> String {
    match m {
        Measure::WeighIn(w) => {
            let mut s = format!("{} kg", round_text(w.mass_kg, 2));
            if let Some(bf) = w.body_fat_percent {
                s.push_str(&format!(", body fat {bf}%"));
                if let Some(m) = &w.body_fat_method {
                    s.push_str(&format!(" ({m})"));
                }
            }
            s
        }
        Measure::Session(x) => {
            let mut s = format!("{} min at target", x.minutes);
            if let Some(c) = &x.compendium_code {
                s.push_str(&format!(", code {c}"));
            }
            if let Some(m) = x.met {
                s.push_str(&format!(", {m} MET"));
            }
            if let Some(w) = x.watts {
                s.push_str(&format!(", {w} W"));
            }
            if let Some(v) = x.speed_kmh {
                s.push_str(&format!(", {v} km/h"));
            }
            if let Some(h) = x.avg_hr_bpm {
                s.push_str(&format!(", HR {h}"));
            }
            if let Some(r) = x.rpe {
                s.push_str(&format!(", RPE {r}"));
            }
            s
        }
    }
}

fn round_text(x: f64, decimals: usize) -> String {
    let s = format!("{x:.decimals$}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
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

fn hr_text(s: &crate::report::sessions::PlannedSession) -> String {
    match &s.targets.heart_rate {
        Some(h) => format!("{}-{} bpm", h.low_bpm, h.high_bpm),
        None => "no resting HR on file".to_string(),
    }
}

fn csrf(who: &Who) -> Markup {
    html! { input type="hidden" name="csrf" value=(who.csrf); }
}

// ---------------------------------------------------------------------------
// The day view
// ---------------------------------------------------------------------------

async fn day(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    q: Q,
) -> Response {
    let q = q.0;
    guarded(st, h, Need::Read, None, move |desk, who, store, _| {
        let date = query_date(&q)?;
        let v = views::day_view(&*store, &desk.cache, date)?;
        let prev = date.pred_opt().unwrap_or(date);
        let next = date.succ_opt().unwrap_or(date);
        ok(page(
            &format!("Day view {date}"),
            Some(who),
            html! {
                h1 { "Day view: " (date.format("%A %Y-%m-%d")) }
                form.inline.noprint method="get" action="/day" {
                    a href={ "/day?date=" (prev) } { "← " (prev) }
                    label for="date" { "Date" }
                    input #date type="date" name="date" value=(date) style="max-width:12rem";
                    button type="submit" style="margin-top:0" { "Show" }
                    a href={ "/day?date=" (next) } { (next) " →" }
                }
                p.muted { (v.lines.len()) " of " (v.enrolled) " enrolled participants are due a session or have a row on this date. Minutes and heart-rate ranges are re-planned from each participant's recorded weigh-ins and sessions." }
                @if v.lines.is_empty() {
                    p.ok { "No one is due a session on this date." }
                } @else {
                    div.wide { table {
                        thead { tr {
                            th { "Participant" } th { "Week" } th { "Due" }
                            th { "Minutes at target" } th { "Target heart rate" } th { "RPE" }
                            th { "Recorded on this date" } th.screen { "Screening" }
                        } }
                        tbody {
                            @for l in &v.lines {
                                tr {
                                    td { a href=(code_path(&l.code)) { (l.code) } @if let Some(a) = &l.arm { br; span.muted { (a) } } }
                                    td.n { @if let Some(w) = l.week { (w) } }
                                    td { @if l.due.is_empty() { "not due" } @else {
                                        @for s in &l.due { div { (s.activity) @if let Some(b) = s.bout { " (bout " (b) ")" } } }
                                    } }
                                    td.n.minutes { @for s in &l.due { div { (s.minutes) } div.muted { (s.session_minutes) " min in all" } } }
                                    td.hr.nowrap { @for s in &l.due { div { (hr_text(s)) } } }
                                    td.nowrap { @for s in &l.due { div { (s.targets.rpe.0) "-" (s.targets.rpe.1) } } }
                                    td {
                                        @if l.recorded.is_empty() { span.tag { "nothing yet" } }
                                        @for r in &l.recorded { div { span.tag.done { (r.measure.kind()) } " " (describe(&r.measure)) @if !r.measure.note().is_empty() { " · " span.muted { (r.measure.note()) } } } }
                                    }
                                    td.screen { (l.screening) @if l.warnings > 0 { br; span.muted { (l.warnings) " warning(s) on the participant page" } } }
                                }
                            }
                        }
                    } }
                }
            },
        ))
    })
    .await
}

// ---------------------------------------------------------------------------
// The participant page
// ---------------------------------------------------------------------------

fn mass_chart_svg(r: &Replan) -> String {
    let rep = &r.report;
    let mut chart = mass_chart(&rep.scenarios, rep.protocol.weeks, None, Units::default());
    let start = r.log.plan.protocol.start;
    let points: Vec<(f64, f64)> = r
        .log
        .log
        .rows
        .iter()
        .filter_map(|row| match row.entry {
            crate::log::Entry::WeighIn { mass_kg, .. } => {
                Some(((row.date - start).num_days() as f64 / 7.0, mass_kg))
            }
            _ => None,
        })
        .collect();
    if !points.is_empty() {
        let slot = chart.series.len();
        chart.series.push(Series {
            name: "weigh-ins (measured)".to_string(),
            points,
            dashed: false,
            slot,
            markers_only: true,
        });
    }
    chart.title = format!(
        "Body mass: projection re-planned from the log, and weigh-ins ({})",
        r.report.participant_id
    );
    chart.caption.push_str(&format!(
        " Points: the recorded weigh-ins. Screening: {}.",
        r.report.screening.recommendation
    ));
    chart.render()
}

fn weigh_in_fields(w: Option<&WeighIn>, date: NaiveDate) -> Markup {
    html! {
        label { "Date" input type="date" name="date" required value=(w.map_or(date, |w| w.date)); }
        label { "Body mass" input name="mass" inputmode="decimal" required value=[w.map(|w| w.mass_kg)]; }
        div.inline {
            label { input type="radio" name="unit" value="kg" checked; " kg" }
            label { input type="radio" name="unit" value="lb"; " lb" }
        }
        label { "Body fat, % (optional)" input name="body_fat" inputmode="decimal" value=[w.and_then(|w| w.body_fat_percent)]; }
        label { "Body-fat method (optional)" input name="body_fat_method" value=[w.and_then(|w| w.body_fat_method.clone())]; }
        label { "Note (optional)" input name="note" value=[w.map(|w| w.note.clone())]; }
    }
}

fn session_fields(s: Option<&Session>, date: NaiveDate) -> Markup {
    html! {
        label { "Date" input type="date" name="date" required value=(s.map_or(date, |s| s.date)); }
        label { "Minutes at target (0 = missed)" input name="minutes" inputmode="decimal" required value=[s.map(|s| s.minutes)]; }
        label { "Compendium code, if not the plan's (optional)" input name="code" value=[s.and_then(|s| s.compendium_code.clone())]; }
        label { "MET, if not the plan's activity (optional)" input name="met" inputmode="decimal" value=[s.and_then(|s| s.met)]; }
        label { "Watts used (optional)" input name="watts" inputmode="decimal" value=[s.and_then(|s| s.watts)]; }
        label { "Speed used, km/h (optional)" input name="speed_kmh" inputmode="decimal" value=[s.and_then(|s| s.speed_kmh)]; }
        label { "Average heart rate, bpm (optional)" input name="hr" inputmode="decimal" value=[s.and_then(|s| s.avg_hr_bpm)]; }
        label { "RPE 6-20 (optional)" input name="rpe" inputmode="decimal" value=[s.and_then(|s| s.rpe)]; }
        label { "Note (optional)" input name="note" value=[s.map(|s| s.note.clone())]; }
    }
}

async fn participant(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(code): Path<String>,
) -> Response {
    guarded(st, h, Need::Read, None, move |desk, who, store, _| {
        let r = desk.cache.replan_code(&*store, &code)?;
        let rows = store.rows(Some(&code), Which::Current)?;
        let trainer = who.account.role == Role::Trainer;
        let today = today();
        let this_week = r.week_of(today).unwrap_or(1);
        let rep = &r.report;
        let p = &r.log.participant;
        let path = code_path(&code);
        let adherence = rep.scenarios.first().and_then(|s| s.adherence.as_ref());
        ok(page(
            &format!("Participant {code}"),
            Some(who),
            html! {
                h1 { "Participant " (p.code) @if let Some(a) = &p.arm { " · arm " (a) } }
                p.muted { "Plan: " (p.plan_name) " · protocol " (rep.protocol.start) " to " (rep.protocol.end_date) ", " (rep.protocol.weeks) " weeks, sessions on " (rep.protocol.session_days.join(", ")) " · activity: " (rep.activity.label) }
                (safety(&r))
                @if !rep.warnings.is_empty() {
                    h2 { "Warnings" }
                    @for w in &rep.warnings { p.warn { (w.message) } }
                }
                p.noprint {
                    a href={ (path) "/audit" } { "Audit trail" }
                    @if trainer { " · " a href={ (path) "/sheets?week=" (this_week) } { "Print week " (this_week) "'s sheet" } }
                    @if who.account.role == Role::Dietitian { " · " a href={ (path) "/fit" } { "Compensation estimate (fit)" } }
                }
                h2 { "Adherence (counted from delivered sessions)" }
                @match adherence {
                    Some(a) => {
                        table { tbody {
                            tr { th { "Weeks covered by the log" } td.n { (a.weeks) } }
                            tr { th { "Sessions delivered / planned" } td.n { (a.sessions_delivered) " / " (a.sessions_planned) } }
                            tr { th { "Minutes delivered / prescribed" } td.n { (fmt1(a.minutes_delivered)) " / " (fmt1(a.minutes_prescribed)) } }
                            tr { th { "Dose per week delivered / prescribed (" (rep.dose.unit) ")" } td.n { (round_text(a.dose_delivered_per_week, 2)) " / " (round_text(a.dose_prescribed_per_week, 2)) } }
                            @if let Some(hr) = a.mean_hr_bpm { tr { th { "Mean heart rate" } td.n { (fmt1(hr)) " bpm" } } }
                            @if let Some(rpe) = a.mean_rpe { tr { th { "Mean RPE" } td.n { (fmt1(rpe)) } } }
                        } }
                    }
                    None => { p { "No delivered sessions recorded yet." } }
                }
                h2 { "Body mass" }
                div.chart { (PreEscaped(mass_chart_svg(&r))) }
                @if trainer {
                    h2.noprint { "Record" }
                    div.grid.noprint {
                        form.card method="post" action={ (path) "/weigh-in" } {
                            strong { "Weigh-in" }
                            (csrf(who))
                            (weigh_in_fields(None, today))
                            button type="submit" { "Record weigh-in" }
                        }
                        form.card method="post" action={ (path) "/session" } {
                            strong { "Delivered session" }
                            (csrf(who))
                            (session_fields(None, today))
                            button type="submit" { "Record session" }
                        }
                    }
                }
                h2 { "Recorded rows (current)" }
                (rows_table(&rows, trainer))
                h2 { "Schedule re-planned from the register (" (rep.scenarios[0].name) ")" }
                div.wide { table {
                    thead { tr { th { "Week" } th { "Dates" } th { "Mass the minutes use" } th { "Sessions" } th { "Minutes at target" } th { "Target heart rate" } th { "RPE" } } }
                    tbody {
                        @for w in &r.sessions.weeks {
                            tr {
                                td.n { (w.week) }
                                td { (w.start) " to " (w.end) }
                                td.n { (fmt1(w.reference_mass_kg)) " kg (" (match w.mass_source { crate::simulate::MassSource::Measured => "measured", crate::simulate::MassSource::Projected => "projected" }) ")" }
                                td.n { (w.sessions.len()) }
                                td.n { (minutes_text(&w.sessions)) }
                                td { @if let Some(s) = w.sessions.first() { (hr_text(s)) } }
                                td { @if let Some(s) = w.sessions.first() { (s.targets.rpe.0) "-" (s.targets.rpe.1) } }
                            }
                        }
                    }
                } }
            },
        ))
    })
    .await
}

fn minutes_text(s: &[crate::report::sessions::PlannedSession]) -> String {
    let mut m: Vec<u32> = s.iter().map(|s| s.minutes).collect();
    m.dedup();
    m.iter().map(u32::to_string).collect::<Vec<_>>().join(", ")
}

fn rows_table(rows: &[Row], trainer: bool) -> Markup {
    html! {
        @if rows.is_empty() { p { "No rows yet." } } @else {
            div.wide { table {
                thead { tr { th { "Row" } th { "Date" } th { "Kind" } th { "Values" } th { "Note" } th { "Recorded by" } th { "At (UTC)" } @if trainer { th.noprint { "" } } } }
                tbody {
                    @for r in rows {
                        tr {
                            td.n { (r.id) }
                            td { (r.measure.date()) }
                            td { (r.measure.kind()) @if r.supersedes.is_some() { " (corrected)" } }
                            td { (describe(&r.measure)) }
                            td { (r.measure.note()) }
                            td { (r.recorded.who) }
                            td { (r.recorded.at.format("%Y-%m-%d %H:%M")) }
                            @if trainer { td.noprint { a href={ "/row/" (r.id) } { "correct or void" } } }
                        }
                    }
                }
            } }
        }
    }
}

async fn record_weigh_in(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(code): Path<String>,
    Form(fields): Form<Fields>,
) -> Response {
    record(st, h, code, fields, weigh_in_of).await
}

async fn record_session(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(code): Path<String>,
    Form(fields): Form<Fields>,
) -> Response {
    record(st, h, code, fields, session_of).await
}

async fn record(
    st: State,
    h: HeaderMap,
    code: String,
    fields: Fields,
    parse: fn(&Fields) -> Result<Measure, Fault>,
) -> Response {
    guarded(
        st,
        h,
        Need::Record,
        Some(fields),
        move |_, who, store, fields| {
            let fields = fields.unwrap_or_default();
            let m = parse(&fields)?;
            let recorded = store.record(&code, &m, &stamp(who)?)?;
            let r = recorded.row;
            saved(
                who,
                &format!("Recorded row {}", r.id),
                &code,
                &format!(
                    "{} of {}: {}",
                    r.measure.kind(),
                    r.measure.date(),
                    describe(&r.measure)
                ),
                &recorded.warnings,
            )
        },
    )
    .await
}

fn saved(
    who: &Who,
    title: &str,
    code: &str,
    what: &str,
    warnings: &[crate::safety::Warning],
) -> Result<Response, Fault> {
    let path = code_path(code);
    ok(page(
        title,
        Some(who),
        html! {
            h1 { (title) }
            p.ok { (what) " (by " (who.account.name) ")" }
            @for w in warnings { p.warn { (w.message) } }
            p { a.button href=(path) { "Back to participant " (code) } " " a href="/day" { "Day view" } }
        },
    ))
}

// ---------------------------------------------------------------------------
// Correct or void
// ---------------------------------------------------------------------------

fn find_row(store: &dyn Store, id: &str) -> Result<Row, Fault> {
    let id: i64 = id
        .parse()
        .map_err(|_| Fault::NotFound(format!("row \"{id}\": not a row number")))?;
    store
        .rows(None, Which::All)?
        .into_iter()
        .find(|r| r.id == id)
        .ok_or_else(|| Fault::NotFound(format!("row {id}: no such row in the register")))
}

async fn row_page(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(id): Path<String>,
) -> Response {
    guarded(st, h, Need::Record, None, move |_, who, store, _| {
        let row = find_row(&*store, &id)?;
        let current = row.status == Status::Current;
        ok(page(
            &format!("Row {}", row.id),
            Some(who),
            html! {
                h1 { "Row " (row.id) ": " (row.measure.kind()) " of " (row.measure.date()) ", participant " a href=(code_path(&row.participant)) { (row.participant) } }
                p { (describe(&row.measure)) @if !row.measure.note().is_empty() { " · note: " (row.measure.note()) } }
                p.muted { "Recorded by " (row.recorded.who) " at " (row.recorded.at_text()) " · status " (row.status.name()) }
                @if !current {
                    p.warn { "Only a current row can be corrected or voided; this one is " (row.status.name()) "." }
                } @else {
                    div.grid {
                        form.card method="post" action={ "/row/" (row.id) "/correct" } {
                            strong { "Correct (the original is kept in the audit)" }
                            (csrf(who))
                            @match &row.measure {
                                Measure::WeighIn(w) => (weigh_in_fields(Some(w), w.date)),
                                Measure::Session(s) => (session_fields(Some(s), s.date)),
                            }
                            label { "Reason (required)" input name="reason" required; }
                            button type="submit" { "Save correction" }
                        }
                        form.card method="post" action={ "/row/" (row.id) "/void" } {
                            strong { "Void (the row stays visible in the audit)" }
                            (csrf(who))
                            label { "Reason (required)" input name="reason" required; }
                            button.danger type="submit" { "Void row" }
                        }
                    }
                }
            },
        ))
    })
    .await
}

fn reason(fields: &Fields) -> Result<String, Fault> {
    let r = text(fields, "reason");
    if r.is_empty() {
        return Err(Fault::Bad(
            "reason: missing; a correction or void needs a reason (what was wrong)".to_string(),
        ));
    }
    Ok(r)
}

async fn correct(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(id): Path<String>,
    Form(fields): Form<Fields>,
) -> Response {
    guarded(
        st,
        h,
        Need::Record,
        Some(fields),
        move |_, who, store, fields| {
            let fields = fields.unwrap_or_default();
            let row = find_row(&*store, &id)?;
            let m = match row.measure {
                Measure::WeighIn(_) => weigh_in_of(&fields)?,
                Measure::Session(_) => session_of(&fields)?,
            };
            let why = reason(&fields)?;
            let recorded = store.correct(row.id, &m, &stamp(who)?, &why)?;
            saved(
                who,
                &format!("Corrected row {} (now row {})", row.id, recorded.row.id),
                &row.participant,
                &format!(
                    "{} -> {}; reason: {why}",
                    describe(&row.measure),
                    describe(&recorded.row.measure)
                ),
                &recorded.warnings,
            )
        },
    )
    .await
}

async fn void(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(id): Path<String>,
    Form(fields): Form<Fields>,
) -> Response {
    guarded(
        st,
        h,
        Need::Record,
        Some(fields),
        move |_, who, store, fields| {
            let fields = fields.unwrap_or_default();
            let row = find_row(&*store, &id)?;
            let why = reason(&fields)?;
            store.void(row.id, &stamp(who)?, &why)?;
            saved(
                who,
                &format!("Voided row {}", row.id),
                &row.participant,
                &format!("{}; reason: {why}", describe(&row.measure)),
                &[],
            )
        },
    )
    .await
}

// ---------------------------------------------------------------------------
// The audit
// ---------------------------------------------------------------------------

async fn audit(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(code): Path<String>,
) -> Response {
    guarded(st, h, Need::Read, None, move |_, who, store, _| {
        let p = store.participant(&code)?;
        let changes = store.audit(Some(&code))?;
        let rows = store.rows(Some(&code), Which::All)?;
        ok(page(
            &format!("Audit {code}"),
            Some(who),
            html! {
                h1 { "Audit trail: participant " a href=(code_path(&p.code)) { (p.code) } }
                p.muted { "Every change, in order: who (the account), when (UTC), what, the old and new values, and why. Nothing is ever deleted." }
                div.wide { table {
                    thead { tr { th { "#" } th { "When (UTC)" } th { "Who" } th { "Action" } th { "Row" } th { "Reason" } th { "Old values" } th { "New values" } } }
                    tbody {
                        @for c in &changes {
                            tr {
                                td.n { (c.id) }
                                td.nowrap { (c.stamp.at.format("%Y-%m-%d")) br; (c.stamp.at.format("%H:%M:%S%.3fZ")) }
                                td { (c.stamp.who) }
                                td { (c.action.name()) }
                                td.n { @if let Some(r) = c.row { (r) } }
                                td { (c.reason.as_deref().unwrap_or("")) }
                                td { (values(c.old_values.as_deref())) }
                                td { (values(c.new_values.as_deref())) }
                            }
                        }
                    }
                } }
                h2 { "Every version of every row" }
                div.wide { table {
                    thead { tr { th { "Row" } th { "Date" } th { "Kind" } th { "Values" } th { "Status" } th { "Corrects" } th { "Recorded by" } th { "At (UTC)" } } }
                    tbody {
                        @for r in &rows {
                            tr {
                                td.n { (r.id) }
                                td.nowrap { (r.measure.date()) }
                                td.nowrap { (r.measure.kind()) }
                                td { (describe(&r.measure)) }
                                td { (r.status.name()) @if let Status::Superseded(by) = r.status { " by row " (by) } }
                                td.n { @if let Some(s) = r.supersedes { (s) } }
                                td { (r.recorded.who) }
                                td.nowrap { (r.recorded.at.format("%Y-%m-%d")) br; (r.recorded.at.format("%H:%M:%S%.3fZ")) }
                            }
                        }
                    }
                } }
            },
        ))
    })
    .await
}

// ---------------------------------------------------------------------------
// Sheets
// ---------------------------------------------------------------------------

fn html_document(text: String) -> Result<Response, Fault> {
    Ok((
        StatusCode::OK,
        [(header::CONTENT_TYPE, "text/html; charset=utf-8")],
        text,
    )
        .into_response())
}

async fn participant_sheets(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(code): Path<String>,
    q: Q,
) -> Response {
    let q = q.0;
    guarded(st, h, Need::Record, None, move |desk, _, store, _| {
        let r = desk.cache.replan_code(&*store, &code)?;
        let weeks = r.sessions.weeks.len() as u32;
        let week = match q.get("week").map(|s| s.trim()) {
            None | Some("") => r.week_of(today()).unwrap_or(1),
            Some(t) => match t.parse::<u32>() {
                Ok(w) if (1..=weeks).contains(&w) => w,
                _ => {
                    return Err(Fault::Bad(format!(
                        "week: \"{t}\" is not a week of the protocol; give a whole number from 1 to {weeks}"
                    )));
                }
            },
        };
        html_document(sheets::html(
            &[views::sheet_input(&r, vec![week])],
            Paper::A4,
        ))
    })
    .await
}

async fn site_sheets(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    q: Q,
) -> Response {
    let q = q.0;
    guarded(st, h, Need::Record, None, move |desk, who, store, _| {
        let date = query_date(&q)?;
        let mut inputs = Vec::new();
        for p in store.participants()? {
            let rows = store.rows(Some(&p.code), Which::Current)?;
            let r = desk.cache.replan(&*store, &p, &rows)?;
            if let Some(w) = r.week_of(date) {
                inputs.push(views::sheet_input(&r, vec![w]));
            }
        }
        if inputs.is_empty() {
            return ok(page(
                "Sheets",
                Some(who),
                html! { h1 { "Sheets" } p { "No participant has a protocol week holding " (date) "." } },
            ));
        }
        html_document(sheets::html(&inputs, Paper::A4))
    })
    .await
}

// ---------------------------------------------------------------------------
// The compensation estimate
// ---------------------------------------------------------------------------

async fn fit(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(code): Path<String>,
    q: Q,
) -> Response {
    let q = q.0;
    guarded(st, h, Need::Fit, None, move |desk, who, store, _| {
        use crate::simulate::fit::FitParameter;
        let r = desk.cache.replan_code(&*store, &code)?;
        let param = match q.get("parameter").map(String::as_str) {
            None | Some("") | Some("intake-fraction") => FitParameter::IntakeFraction,
            Some("activity-fraction") => FitParameter::ActivityFraction,
            Some(other) => {
                return Err(Fault::Bad(format!(
                    "parameter: \"{other}\" is not allowed; give intake-fraction or activity-fraction"
                )));
            }
        };
        let plan = &r.log.plan;
        let schedule = crate::planning::schedule_report(plan)?;
        let observed = r
            .input
            .observed
            .as_ref()
            .ok_or_else(|| Fault::Internal("no measured data".into()))?;
        let body = match crate::simulate::fit::fit(plan, observed, 0, param) {
            Ok(f) => {
                let fr = crate::report::fit::FitReport::new(
                    &schedule,
                    r.input.summary.clone(),
                    &r.input.warnings,
                    f,
                );
                let table = crate::report::fit::render_table(&fr, Units::default());
                let chart = crate::report::fit::chart(&fr, Units::default()).render();
                html! {
                    p.ok { "Estimate " strong { (round_text(fr.fit.estimate, 2)) } " with interval " strong { (round_text(fr.fit.interval[0], 2)) " to " (round_text(fr.fit.interval[1], 2)) } " (" (fr.fit.parameter) ", " (fr.fit.weigh_ins) " weigh-ins over " (fr.fit.span_days) " days)." }
                    div.chart { (PreEscaped(chart)) }
                    pre { (table) }
                }
            }
            Err(e) => html! { p.warn { "No estimate: " (e.to_string()) } },
        };
        ok(page(
            &format!("Fit {code}"),
            Some(who),
            html! {
                h1 { "Compensation estimate: participant " a href=(code_path(&code)) { (code) } }
                (safety(&r))
                p.noprint { "Parameter: " a href={ (code_path(&code)) "/fit?parameter=intake-fraction" } { "intake fraction" } " · " a href={ (code_path(&code)) "/fit?parameter=activity-fraction" } { "activity fraction" } }
                (body)
            },
        ))
    })
    .await
}

// ---------------------------------------------------------------------------
// Export
// ---------------------------------------------------------------------------

async fn export_page(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
) -> Response {
    guarded(st, h, Need::Export, None, |_, who, store, _| {
        let n = store.participants()?.len();
        ok(page(
            "Export",
            Some(who),
            html! {
                h1 { "Export CSV" }
                p { "One tidy table per kind, every version of every row with its status, ISO 8601 UTC times and stable row ids (" (n) " participants)." }
                ul {
                    li { a href="/export/weigh-ins.csv" { "weigh-ins.csv" } }
                    li { a href="/export/sessions.csv" { "sessions.csv" } }
                    li { a href="/export/changes.csv" { "changes.csv" } " (the audit trail)" }
                }
            },
        ))
    })
    .await
}

async fn export_file(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(file): Path<String>,
) -> Response {
    guarded(st, h, Need::Export, None, move |_, _, store, _| {
        let text = match file.as_str() {
            "weigh-ins.csv" => register::weigh_ins_csv(&store.rows(None, Which::All)?)?,
            "sessions.csv" => register::sessions_csv(&store.rows(None, Which::All)?)?,
            "changes.csv" => register::changes_csv(&store.audit(None)?)?,
            _ => return Err(Fault::NotFound(format!("no export named {file}"))),
        };
        Response::builder()
            .status(StatusCode::OK)
            .header(header::CONTENT_TYPE, "text/csv; charset=utf-8")
            .header(
                header::CONTENT_DISPOSITION,
                format!("attachment; filename=\"{file}\""),
            )
            .body(Body::from(text))
            .map_err(|e| Fault::Internal(e.to_string()))
    })
    .await
}

// ---------------------------------------------------------------------------
// Accounts
// ---------------------------------------------------------------------------

async fn account_page(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
) -> Response {
    guarded(st, h, Need::Any, None, |_, who, _, _| {
        ok(page(
            "Password",
            Some(who),
            html! {
                h1 { "Change your password" }
                form.card method="post" action="/account/password" style="max-width:26rem" {
                    (csrf(who))
                    label { "Current password" input type="password" name="current" autocomplete="current-password" required; }
                    label { "New password (" (accounts::MIN_PASSWORD_CHARS) " characters or more)" input type="password" name="new" autocomplete="new-password" required; }
                    label { "New password again" input type="password" name="repeat" autocomplete="new-password" required; }
                    button type="submit" { "Change password" }
                }
            },
        ))
    })
    .await
}

async fn change_password(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Form(fields): Form<Fields>,
) -> Response {
    guarded(st, h, Need::Any, Some(fields), |desk, who, _, fields| {
        let fields = fields.unwrap_or_default();
        let current = field(&fields, "current").unwrap_or("");
        let new = field(&fields, "new").unwrap_or("");
        if !who.account.verify(current) {
            return Err(Fault::Bad(
                "current: the current password is wrong; nothing was changed".into(),
            ));
        }
        if new != field(&fields, "repeat").unwrap_or("") {
            return Err(Fault::Bad(
                "repeat: the two new passwords differ; type the same one twice".into(),
            ));
        }
        let mut conn = accounts::connect(&desk.config.register)?;
        accounts::set_password(&mut conn, &who.account.name, new, &stamp(who)?)?;
        desk.end_sessions_of(&who.account.name, None);
        let mut r = see_other("/signin?why=password");
        r.headers_mut().insert(
            header::SET_COOKIE,
            desk.set_cookie(super::SESSION_COOKIE, "", Some(std::time::Duration::ZERO)),
        );
        Ok(r)
    })
    .await
}

async fn admin_page(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
) -> Response {
    guarded(st, h, Need::Admin, None, |desk, who, _, _| {
        let conn = accounts::connect(&desk.config.register)?;
        let list = accounts::list(&conn)?;
        ok(page(
            "Accounts",
            Some(who),
            html! {
                h1 { "Accounts" }
                p.muted { "Accounts are created from the command line (dosewright desk account add). Disabling an account ends its access at its next request." }
                table {
                    thead { tr { th { "Name" } th { "Role" } th { "State" } th { "" } } }
                    tbody {
                        @for a in &list {
                            tr {
                                td { (a.name) }
                                td { (a.role.name()) }
                                td { @if a.disabled { "disabled" } @else { "active" } }
                                td {
                                    @if a.name != who.account.name {
                                        form method="post" action={ "/admin/" (a.name) "/" (if a.disabled { "enable" } else { "disable" }) } {
                                            (csrf(who))
                                            @if a.disabled { button type="submit" { "Enable" } }
                                            @else { button.danger type="submit" { "Disable" } }
                                        }
                                    }
                                }
                            }
                        }
                    }
                }
            },
        ))
    })
    .await
}

async fn admin_action(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path((name, action)): Path<(String, String)>,
    Form(fields): Form<Fields>,
) -> Response {
    guarded(st, h, Need::Admin, Some(fields), move |desk, who, _, _| {
        let disable = match action.as_str() {
            "disable" => true,
            "enable" => false,
            _ => return Err(Fault::NotFound(format!("no action {action}"))),
        };
        if name == who.account.name {
            return Err(Fault::Bad(
                "name: an admin cannot disable their own account here".into(),
            ));
        }
        let mut conn = accounts::connect(&desk.config.register)?;
        accounts::set_disabled(&mut conn, &name, disable, &stamp(who)?)?;
        if disable {
            desk.end_sessions_of(&name, None);
        }
        Ok(see_other("/admin"))
    })
    .await
}
