//! Corrections and voids, the audit, the printed sheets, the fit, the exports and the
//! accounts pages of the desk (docs/desk.md, "Pages").

use super::*;

// ---------------------------------------------------------------------------
// Correct or void
// ---------------------------------------------------------------------------

pub(super) fn find_row(store: &dyn Store, id: &str) -> Result<Row, Fault> {
    let id: i64 = id
        .parse()
        .map_err(|_| Fault::NotFound(format!("row \"{id}\": not a row number")))?;
    store
        .rows(None, Which::All)?
        .into_iter()
        .find(|r| r.id == id)
        .ok_or_else(|| Fault::NotFound(format!("row {id}: no such row in the register")))
}

pub(super) async fn row_page(
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

pub(super) fn reason(fields: &Fields) -> Result<String, Fault> {
    let r = text(fields, "reason");
    if r.is_empty() {
        return Err(Fault::Bad(
            "reason: missing; a correction or void needs a reason (what was wrong)".to_string(),
        ));
    }
    Ok(r)
}

pub(super) async fn correct(
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

pub(super) async fn void(
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

pub(super) async fn audit(
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

pub(super) fn html_document(text: String) -> Result<Response, Fault> {
    Ok((
        StatusCode::OK,
        [(header::CONTENT_TYPE, "text/html; charset=utf-8")],
        text,
    )
        .into_response())
}

pub(super) async fn participant_sheets(
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

pub(super) async fn site_sheets(
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

pub(super) async fn fit(
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

pub(super) async fn export_page(
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

pub(super) async fn export_file(
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

pub(super) async fn account_page(
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

pub(super) async fn change_password(
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
            desk.set_cookie(
                crate::desk::SESSION_COOKIE,
                "",
                Some(std::time::Duration::ZERO),
            ),
        );
        Ok(r)
    })
    .await
}

pub(super) async fn admin_page(
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

pub(super) async fn admin_action(
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
