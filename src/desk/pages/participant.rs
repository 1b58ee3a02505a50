//! The desk's day view, participant page and recording forms (docs/desk.md, "Pages").

use super::*;

// ---------------------------------------------------------------------------
// The day view
// ---------------------------------------------------------------------------

pub(super) async fn day(
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
                p.muted { (v.lines.len()) " of " (v.enrolled) " enrolled participants are due a session or have a row on this date. Minutes and heart-rate ranges are re-planned from each participant's recorded weigh-ins and sessions; each participant's warnings are on their page." }
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
                                    td.screen { (l.screening) @if l.clearance_missing { br; strong { "Medical clearance is needed and not on file." } } }
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

/// The participant's mass projection to set the weigh-ins beside: every scenario
/// run from the baseline with the delivered sessions, never re-anchored at the
/// weigh-ins (as `schedule --log --chart`, docs/design.md); None without a log.
pub(super) fn delivered_projection(
    r: &Replan,
) -> Result<Option<Vec<crate::simulate::ScenarioRun>>, crate::error::Error> {
    r.input
        .observed
        .as_ref()
        .map(|obs| crate::simulate::simulate_delivered(&r.log.plan, obs).map(|s| s.scenarios))
        .transpose()
}

/// The body-mass chart: with a log, the weigh-ins as points beside the projection
/// with the delivered sessions (no shaded band, no re-anchored zigzag); without one,
/// the planned projection.
pub(super) fn mass_chart_svg(
    r: &Replan,
    delivered: Option<&[crate::simulate::ScenarioRun]>,
) -> String {
    let rep = &r.report;
    let mut chart = match (delivered, r.input.observed.as_ref()) {
        (Some(runs), Some(obs)) => {
            let points = crate::report::chart::weigh_in_points(obs);
            logged_mass_chart(runs, &points, rep.protocol.weeks, Units::default())
        }
        _ => mass_chart(&rep.scenarios, rep.protocol.weeks, None, Units::default()),
    };
    chart.title = format!(
        "Body mass: weigh-ins and the projection with the delivered sessions ({})",
        r.report.participant_id
    );
    chart.caption.push_str(&format!(
        " Screening: {}. Stop at once on chest pain, unusual breathlessness, dizziness or palpitations.",
        r.report.screening.recommendation
    ));
    chart.render()
}

pub(super) fn weigh_in_fields(w: Option<&WeighIn>, date: NaiveDate) -> Markup {
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

pub(super) fn session_fields(s: Option<&Session>, date: NaiveDate) -> Markup {
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

pub(super) async fn participant(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(code): Path<String>,
) -> Response {
    guarded(st, h, Need::Read, None, move |desk, who, store, _| {
        let r = desk.cache.replan_code(&*store, &code)?;
        let delivered = delivered_projection(&r)?;
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
                div.chart { (PreEscaped(mass_chart_svg(&r, delivered.as_deref()))) }
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

pub(super) fn minutes_text(s: &[crate::report::sessions::PlannedSession]) -> String {
    let mut m: Vec<u32> = s.iter().map(|s| s.minutes).collect();
    m.dedup();
    m.iter().map(u32::to_string).collect::<Vec<_>>().join(", ")
}

pub(super) fn rows_table(rows: &[Row], trainer: bool) -> Markup {
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

pub(super) async fn record_weigh_in(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(code): Path<String>,
    Form(fields): Form<Fields>,
) -> Response {
    record(st, h, code, fields, weigh_in_of).await
}

pub(super) async fn record_session(
    axum::extract::State(st): axum::extract::State<State>,
    h: HeaderMap,
    Path(code): Path<String>,
    Form(fields): Form<Fields>,
) -> Response {
    record(st, h, code, fields, session_of).await
}

pub(super) async fn record(
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

pub(super) fn saved(
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
