//! The planned sessions as an iCalendar file: one VEVENT per session (per bout with
//! `split`), built with the `icalendar` crate. Each event carries the session's
//! target (minutes, MET and intensity, energy, warm-up and cool-down, heart-rate and
//! RPE ranges, the talk test) and a short caution; the calendar's description carries
//! the screening result, the warnings and every standing caution.
//!
//! Times: with `calendar.session_time` an event starts at that local time as a
//! floating date-time (RFC 5545 3.3.5, form 1), because a `TZID` must refer to a
//! VTIMEZONE definition (3.2.19) that the file would have to carry; the plan's
//! `time_zone` is written as the common `X-WR-TIMEZONE` extension. The second bout
//! starts at `second_bout_time`, or [`SECOND_BOUT_AFTER_HOURS`] after the first bout's
//! start. DTEND is the start plus the whole session (warm-up, time at target,
//! cool-down). Without a session time each event is all-day (VALUE=DATE, DTEND the
//! next day: DTEND is exclusive, 3.6.1 and 3.8.2.2).
//!
//! Updates: every event's UID comes from the participant and the session ([`uid`]),
//! DTSTAMP is the time of writing (passed in; the command reads the clock or
//! `--stamp`), and SEQUENCE (3.8.7.4) starts at 0 and grows by one each time the
//! calendar is written again over an earlier one whose event of the same UID had
//! other content ([`sequences`]), so calendar programs replace changed events. An
//! event of that earlier calendar, for the same participant and within the span
//! written, that the re-plan no longer has (a bout that is no longer needed, a
//! session the protocol lost) is written again as cancelled ([`cancellations`]:
//! STATUS:CANCELLED, 3.8.1.11, with its SEQUENCE raised), so a calendar program
//! that imports the file removes it rather than keeping a session that will not
//! happen.
//!
//! Reference: RFC 5545, Internet Calendaring and Scheduling Core Object Specification
//! (iCalendar), B. Desruisseaux (ed.), IETF 2009: 3.1 content lines and folding,
//! 3.3.4 DATE, 3.3.5 DATE-TIME, 3.3.11 TEXT, 3.4 the iCalendar object, 3.6.1 VEVENT,
//! 3.7.3 PRODID, 3.7.4 VERSION, 3.8.2.2 DTEND, 3.8.4.7 UID, 3.8.7.2 DTSTAMP,
//! 3.8.7.4 SEQUENCE.

use super::sessions::{PlannedSession, PlannedWeek, SessionPlan};
use super::units::Units;
use crate::error::{Error, InputError, Location};
use crate::plan::{CalendarSettings, EnergyBasis};
use crate::safety::{CAUTIONS, ScreeningOutcome, Warning};
use crate::simulate::MassSource;
use chrono::{DateTime, NaiveDate, NaiveDateTime, TimeDelta, Utc};
use icalendar::{Calendar, Component, Event, EventLike};
use std::collections::BTreeMap;
use std::path::Path;

/// Hours from the first bout's start to the second's when the plan gives no
/// `calendar.second_bout_time` (our choice: a morning and an afternoon bout).
pub const SECOND_BOUT_AFTER_HOURS: i64 = 6;

/// The most octets of a content line, line break excluded (RFC 5545 3.1).
pub const MAX_LINE_OCTETS: usize = 75;

/// The domain part of every UID (RFC 5545 3.8.4.7 suggests a domain name on the
/// right-hand side; this names the program, not a host).
pub const UID_DOMAIN: &str = "dosewright";

/// The plan's file name (not its folder, so a moved folder keeps its UIDs); the demo
/// plan is `demo.toml`.
pub fn plan_file_name(source: &str) -> String {
    if source == crate::plan::starter::DEMO_NAME {
        return "demo.toml".to_string();
    }
    Path::new(source)
        .file_name()
        .map_or_else(|| source.to_string(), |n| n.to_string_lossy().into_owned())
}

/// 32-bit FNV-1a of `bytes` (Fowler, Noll and Vo; offset basis 0x811c9dc5, prime
/// 0x01000193): a hash that stays the same across platforms and Rust versions.
pub fn fnv1a_32(bytes: &[u8]) -> u32 {
    bytes.iter().fold(0x811c_9dc5, |h: u32, b| {
        (h ^ u32::from(*b)).wrapping_mul(0x0100_0193)
    })
}

/// The UID of the `index`-th session (bout) on `date`: `CODE-YYYYMMDD-N-HASH@dosewright`.
/// CODE is the participant code with characters other than letters, digits, `-`,
/// `_` and `.` made `_`; HASH is [`fnv1a_32`] of the unchanged code, so two codes
/// that read the same once made safe get different UIDs. The UID depends on the
/// participant and the session only: a renamed or re-planned plan keeps every
/// session's UID, so a calendar program updates the events instead of adding copies.
pub fn uid(participant_id: &str, date: NaiveDate, index: u32) -> String {
    let (prefix, suffix) = uid_ends(participant_id);
    format!("{prefix}{}-{index}{suffix}", date.format("%Y%m%d"))
}

/// What every UID of a participant starts and ends with: `CODE-` and
/// `-HASH@dosewright` (see [`uid`]).
fn uid_ends(participant_id: &str) -> (String, String) {
    let code: String = participant_id
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || "-_.".contains(c) {
                c
            } else {
                '_'
            }
        })
        .collect();
    let hash = fnv1a_32(participant_id.as_bytes());
    (format!("{code}-"), format!("-{hash:08x}@{UID_DOMAIN}"))
}

/// The sessions of `plan` dated from `from` through `to` (either open), weeks left
/// without a session dropped.
pub fn within(plan: &SessionPlan, from: Option<NaiveDate>, to: Option<NaiveDate>) -> SessionPlan {
    let keep = |d: &NaiveDate| from.is_none_or(|f| *d >= f) && to.is_none_or(|t| *d <= t);
    let weeks = plan
        .weeks
        .iter()
        .filter_map(|w| {
            let sessions: Vec<PlannedSession> = w
                .sessions
                .iter()
                .filter(|s| keep(&s.date))
                .cloned()
                .collect();
            (!sessions.is_empty()).then(|| PlannedWeek {
                sessions,
                ..w.clone()
            })
        })
        .collect();
    SessionPlan {
        weeks,
        ..plan.clone()
    }
}

/// When an event starts and ends: local (floating) times, or a whole day.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum When {
    /// From one floating local date-time to another.
    Timed(NaiveDateTime, NaiveDateTime),
    /// All day on this date.
    AllDay(NaiveDate),
}

/// When `s` happens under `settings`.
pub fn when(s: &PlannedSession, settings: &CalendarSettings) -> When {
    let Some(first) = settings.session_time else {
        return When::AllDay(s.date);
    };
    let start = match (s.bout, settings.second_bout_time) {
        (Some(2), Some(t)) => s.date.and_time(t),
        (Some(2), None) => s.date.and_time(first) + TimeDelta::hours(SECOND_BOUT_AFTER_HOURS),
        _ => s.date.and_time(first),
    };
    When::Timed(
        start,
        start + TimeDelta::minutes(i64::from(s.session_minutes)),
    )
}

/// Refuse settings whose bouts cannot be placed: a second bout that the default
/// [`SECOND_BOUT_AFTER_HOURS`] puts on the next day, or a first bout that runs past
/// the second bout's start.
pub fn check_times(plan: &SessionPlan, settings: &CalendarSettings) -> Result<(), Error> {
    let err = |key: &str, message: String| {
        Error::Input(InputError {
            location: Location::file(&plan.plan),
            key: Some(key.to_string()),
            message,
        })
    };
    let sessions: Vec<&PlannedSession> =
        plan.weeks.iter().flat_map(|w| w.sessions.iter()).collect();
    for second in sessions.iter().filter(|s| s.bout == Some(2)) {
        let When::Timed(start2, _) = when(second, settings) else {
            return Ok(());
        };
        if start2.date() != second.date {
            return Err(err(
                "calendar.session_time",
                format!(
                    "the second bout of {} would start {SECOND_BOUT_AFTER_HOURS} hours after the first, on the next day; give calendar.second_bout_time (a later time the same day) or an earlier session_time",
                    second.date
                ),
            ));
        }
    }
    // Sessions are in date order, so a first bout comes just before its second.
    for pair in sessions.windows(2) {
        let (first, second) = (pair[0], pair[1]);
        if first.bout != Some(1) || second.bout != Some(2) || first.date != second.date {
            continue;
        }
        if let (When::Timed(start1, end1), When::Timed(start2, _)) =
            (when(first, settings), when(second, settings))
            && end1 > start2
        {
            return Err(err(
                if settings.second_bout_time.is_some() {
                    "calendar.second_bout_time"
                } else {
                    "calendar.session_time"
                },
                format!(
                    "the first bout of {} runs {}-{} ({} min), past the second bout's start {}; give a later calendar.second_bout_time",
                    first.date,
                    start1.format("%H:%M"),
                    end1.format("%H:%M"),
                    first.session_minutes,
                    start2.format("%H:%M")
                ),
            ));
        }
    }
    Ok(())
}

/// The event's title: "TRN-042 week 3: treadmill walk 25 min (session 35 min)".
fn summary(id: &str, week: u32, s: &PlannedSession) -> String {
    let mut t = format!("{id} week {week}: {} {} min", s.activity, s.minutes);
    if let Some(b) = s.bout {
        t.push_str(&format!(", bout {b} of 2"));
    }
    if s.session_minutes != s.minutes {
        t.push_str(&format!(" (session {} min)", s.session_minutes));
    }
    t
}

/// The one-line caution every event carries.
pub fn caution_line(screening: &ScreeningOutcome) -> String {
    format!(
        "Caution: screening result: {}. Stop at once and seek help on chest pain, unusual breathlessness, dizziness or palpitations. Local clinical rules and the licensed professionals responsible for the participant decide.",
        screening.recommendation
    )
}

/// The event's description: the target in full, one item a line.
fn description(
    plan: &SessionPlan,
    w: &PlannedWeek,
    s: &PlannedSession,
    screening: &ScreeningOutcome,
    u: Units,
) -> String {
    let t = &s.targets;
    let mut lines = vec![format!(
        "Participant {}, week {}, {} (scenario \"{}\").",
        plan.participant_id,
        w.week,
        s.date.format("%A %Y-%m-%d"),
        plan.scenario
    )];
    if let Some(b) = s.bout {
        lines.push(format!(
            "Bout {b} of 2: the session is split into two bouts this day."
        ));
    }
    lines.push(format!(
        "Activity: {}: {}.",
        s.activity,
        s.intensity.describe_with(|kmh| u.speed_text(kmh))
    ));
    let mut intensity = format!("Intensity: {:.1} MET, {}", s.met, t.class.name());
    if let Some(f) = t.vo2_reserve_fraction {
        intensity.push_str(&format!(", about {:.0}% of VO2 reserve", f * 100.0));
    }
    intensity.push('.');
    lines.push(intensity);
    let mut parts = Vec::new();
    if let Some((m, met)) = s.warm_up {
        parts.push(format!("{m} min warm-up at {met:.1} MET"));
    }
    parts.push(format!("{} min at target", s.minutes));
    if let Some((m, met)) = s.cool_down {
        parts.push(format!("{m} min cool-down at {met:.1} MET"));
    }
    if parts.len() == 1 {
        lines.push(format!(
            "Session: {} min at target (no warm-up or cool-down in the plan).",
            s.minutes
        ));
    } else {
        lines.push(format!(
            "Session: {} min: {}.",
            s.session_minutes,
            parts.join(", then ")
        ));
    }
    let basis = match plan.basis {
        EnergyBasis::Gross => "gross",
        EnergyBasis::Net => "net",
    };
    lines.push(format!(
        "Energy of the whole session: {:.0} {e} gross, {:.0} {e} net of rest (the dose counts {basis}).",
        u.energy(s.gross_kcal),
        u.energy(s.net_kcal),
        e = u.energy_label()
    ));
    if let Some(hr) = &t.heart_rate {
        lines.push(format!(
            "Heart rate: {}-{} beats/min (Karvonen, {:.0}-{:.0}% of heart-rate reserve; rest {:.0}, maximum {:.0}, {}).",
            hr.low_bpm,
            hr.high_bpm,
            hr.reserve.0 * 100.0,
            hr.reserve.1 * 100.0,
            hr.hr_rest_bpm,
            hr.hr_max_bpm,
            hr.hr_max_source
        ));
    }
    lines.push(format!(
        "Effort: RPE {}-{} on the Borg 6-20 scale; talk test: {}.",
        t.rpe.0, t.rpe.1, t.talk_test
    ));
    lines.push(format!(
        "Minutes set from a body mass of {:.1} {} ({}) at the start of the week.",
        u.mass(w.reference_mass_kg),
        u.mass_label(),
        match w.mass_source {
            MassSource::Measured => "measured",
            MassSource::Projected => "projected",
        }
    ));
    if let Some(m) = &w.make_up {
        lines.push(format!("Closures this week: {m}."));
    }
    if let Some(o) = &w.over_max {
        lines.push(format!("Over the maximum: {o}."));
    }
    if let Some(d) = &w.step_down {
        lines.push(format!("After an absence: {d}."));
    }
    lines.push(caution_line(screening));
    lines.join("\n")
}

/// The calendar's own description: what it holds, the warnings and the cautions.
fn calendar_description(
    plan: &SessionPlan,
    settings: &CalendarSettings,
    screening: &ScreeningOutcome,
    warnings: &[Warning],
) -> String {
    let dates: Vec<NaiveDate> = plan
        .weeks
        .iter()
        .flat_map(|w| w.sessions.iter().map(|s| s.date))
        .collect();
    let span = match (dates.first(), dates.last()) {
        (Some(a), Some(b)) => format!(", {a} to {b}"),
        _ => String::new(),
    };
    let mut s = format!(
        "Planned exercise sessions of participant {} from {}, scenario \"{}\"{span}, written by dosewright {}. Each session's minutes were set from the body mass expected at the start of its week; write the calendar again after re-planning.\n",
        plan.participant_id,
        plan_file_name(&plan.plan),
        plan.scenario,
        env!("CARGO_PKG_VERSION")
    );
    match (settings.session_time, &settings.time_zone) {
        (Some(_), Some(tz)) => s.push_str(&format!(
            "Times are local times where the sessions happen ({tz}).\n"
        )),
        (Some(_), None) => s.push_str("Times are local times where the sessions happen.\n"),
        (None, _) => s.push_str(
            "No session time is set (calendar.session_time), so each session is an all-day event with its minutes in the title.\n",
        ),
    }
    if warnings.is_empty() {
        s.push_str("Warnings: none.\n");
    } else {
        s.push_str("Warnings:\n");
        for w in warnings {
            s.push_str(&format!("- [{}] {}\n", w.code, w.message));
        }
    }
    s.push_str("Cautions:\n");
    s.push_str(&format!(
        "- Screening result: {}.\n",
        screening.recommendation
    ));
    for c in CAUTIONS {
        s.push_str(&format!("- {c}\n"));
    }
    s.trim_end().to_string()
}

/// An event of a calendar written before: its SEQUENCE and its content.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PreviousEvent {
    /// SEQUENCE (0 when the event has none, RFC 5545 3.8.7.4).
    pub sequence: u32,
    /// Every property but DTSTAMP and SEQUENCE, one `NAME;PARAMS:VALUE` a line, in
    /// file order, as the icalendar crate's parser reads them.
    pub content: String,
    /// The event's content lines as the file has them (unfolded, still escaped),
    /// but BEGIN, END, DTSTAMP and SEQUENCE: what a cancellation writes again.
    pub raw: Vec<String>,
}

/// The events of a calendar written before, by UID.
pub type Previous = BTreeMap<String, PreviousEvent>;

/// The events of the iCalendar text `text`, read with the icalendar crate's parser:
/// each VEVENT's UID, SEQUENCE and content. An error in words when the text is not an
/// iCalendar object, or an event has no UID or a SEQUENCE that is not a whole number.
pub fn previous_events(text: &str) -> Result<Previous, String> {
    let unfolded = icalendar::parser::unfold(text);
    let cal = icalendar::parser::read_calendar(&unfolded)
        .map_err(|_| "not an iCalendar file (the icalendar parser cannot read it)".to_string())?;
    let has_calendar = cal.properties.iter().any(|p| p.name.as_str() == "VERSION");
    if !has_calendar {
        return Err("not an iCalendar file (no VCALENDAR with a VERSION)".to_string());
    }
    let mut raw_lines = raw_events(&unfolded);
    let mut out = Previous::new();
    for c in cal
        .components
        .iter()
        .filter(|c| c.name.as_str() == "VEVENT")
    {
        let Some(uid) = c.find_prop("UID") else {
            return Err("an event has no UID".to_string());
        };
        let uid = uid.val.as_str().to_string();
        let sequence = match c.find_prop("SEQUENCE") {
            None => 0,
            Some(p) => p.val.as_str().trim().parse::<u32>().map_err(|_| {
                format!(
                    "event {uid}: SEQUENCE {:?} is not a whole number",
                    p.val.as_str()
                )
            })?,
        };
        let mut content = String::new();
        for p in c
            .properties
            .iter()
            .filter(|p| !matches!(p.name.as_str(), "DTSTAMP" | "SEQUENCE"))
        {
            content.push_str(p.name.as_str());
            for param in &p.params {
                content.push(';');
                content.push_str(param.key.as_str());
                if let Some(v) = &param.val {
                    content.push('=');
                    content.push_str(v.as_str());
                }
            }
            content.push(':');
            content.push_str(p.val.as_str());
            content.push('\n');
        }
        let raw = raw_lines.remove(&uid).unwrap_or_default();
        out.insert(
            uid,
            PreviousEvent {
                sequence,
                content,
                raw,
            },
        );
    }
    Ok(out)
}

/// Each VEVENT's content lines in the unfolded text, by UID, as written (escaped),
/// but BEGIN, END, DTSTAMP and SEQUENCE. Read after the icalendar crate's parser has
/// accepted the text, so the blocks are well formed.
fn raw_events(unfolded: &str) -> BTreeMap<String, Vec<String>> {
    let mut out = BTreeMap::new();
    let mut block: Option<Vec<String>> = None;
    for line in unfolded.lines() {
        match line {
            "BEGIN:VEVENT" => block = Some(Vec::new()),
            "END:VEVENT" => {
                if let Some(b) = block.take()
                    && let Some(uid) = b.iter().find_map(|l| l.strip_prefix("UID:"))
                {
                    out.insert(uid.to_string(), b);
                }
            }
            _ => {
                let stamp = ["DTSTAMP:", "DTSTAMP;", "SEQUENCE:", "SEQUENCE;"];
                if let Some(b) = &mut block
                    && !stamp.iter().any(|p| line.starts_with(p))
                {
                    b.push(line.to_string());
                }
            }
        }
    }
    out
}

/// The SEQUENCE of each event of the new calendar `fresh` (as written without one):
/// an event the previous calendar has with the same content keeps its SEQUENCE, one
/// whose content changed gets the previous SEQUENCE plus one, and a new event 0
/// (RFC 5545 3.8.7.4: the sequence number is incremented each time the organizer
/// makes a significant revision).
pub fn sequences(fresh: &Previous, previous: &Previous) -> BTreeMap<String, u32> {
    fresh
        .iter()
        .map(|(uid, new)| {
            let seq = match previous.get(uid) {
                Some(old) if old.content == new.content => old.sequence,
                Some(old) => old.sequence.saturating_add(1),
                None => 0,
            };
            (uid.clone(), seq)
        })
        .collect()
}

/// What a calendar is written against: its DTSTAMP, the events of the calendar
/// written before at the same place (an empty map: none), and the span asked for
/// (either end open).
#[derive(Debug, Clone, Copy)]
pub struct Against<'a> {
    /// DTSTAMP of every event (the time of writing).
    pub stamp: DateTime<Utc>,
    /// The calendar written before.
    pub previous: &'a Previous,
    /// The first and last date asked for.
    pub span: (Option<NaiveDate>, Option<NaiveDate>),
}

/// The iCalendar file of `plan`: one VEVENT per session, stamped `against.stamp`,
/// each with the SEQUENCE that [`sequences`] gives against the previous calendar's
/// events, then that calendar's events that [`cancellations`] cancels; and how many
/// those are.
pub fn render(
    plan: &SessionPlan,
    settings: &CalendarSettings,
    against: Against<'_>,
    screening: &ScreeningOutcome,
    warnings: &[Warning],
    u: Units,
) -> (String, usize) {
    let write = |seqs: Option<&BTreeMap<String, u32>>| {
        render_with(
            plan,
            settings,
            against.stamp,
            (screening, warnings),
            u,
            seqs,
        )
    };
    let fresh = previous_events(&write(None)).expect("the calendar written here reads back");
    let text = write(Some(&sequences(&fresh, against.previous)));
    let cancelled = cancellations(&fresh, against, &plan.participant_id);
    if cancelled.is_empty() {
        return (text, 0);
    }
    let end = "END:VCALENDAR";
    let at = text.rfind(end).expect("a calendar ends with END:VCALENDAR");
    let mut out = text[..at].to_string();
    for event in &cancelled {
        out.push_str(event);
    }
    out.push_str(&text[at..]);
    (refold(&out), cancelled.len())
}

/// The events of the previous calendar to write again as cancelled, in UID order,
/// each as VEVENT text (CRLF, unfolded): those of this participant (the code and
/// hash of [`uid`]) dated within the span that `fresh` (the new calendar's events)
/// does not have. A newly cancelled event keeps its content, with STATUS:CANCELLED,
/// "Cancelled: " before its title and a line before its description, and its
/// SEQUENCE plus one; one cancelled before is written again as it was.
pub fn cancellations(fresh: &Previous, against: Against<'_>, participant_id: &str) -> Vec<String> {
    let stamp = against.stamp.format("%Y%m%dT%H%M%SZ");
    let (from, to) = against.span;
    let (prefix, suffix) = uid_ends(participant_id);
    against
        .previous
        .iter()
        .filter(|(id, _)| !fresh.contains_key(*id))
        .filter_map(|(id, old)| {
            let middle = id.strip_prefix(&prefix)?.strip_suffix(&suffix)?;
            let date = NaiveDate::parse_from_str(middle.get(..8)?, "%Y%m%d").ok()?;
            let inside = from.is_none_or(|f| date >= f) && to.is_none_or(|t| date <= t);
            inside.then_some(old)
        })
        .map(|old| {
            let before = old.raw.iter().any(|l| l == "STATUS:CANCELLED");
            let sequence = if before {
                old.sequence
            } else {
                old.sequence.saturating_add(1)
            };
            let mut e = format!("BEGIN:VEVENT\r\nDTSTAMP:{stamp}\r\nSEQUENCE:{sequence}\r\n");
            for line in &old.raw {
                let line = match line.split_once(':') {
                    Some(("SUMMARY", v)) if !before => format!("SUMMARY:Cancelled: {v}"),
                    Some(("DESCRIPTION", v)) if !before => format!(
                        "DESCRIPTION:Cancelled: this session is no longer in the plan after a re-plan\\n\\n{v}"
                    ),
                    _ => line.to_string(),
                };
                e.push_str(&line);
                e.push_str("\r\n");
            }
            if !before {
                e.push_str("STATUS:CANCELLED\r\n");
            }
            e.push_str("END:VEVENT\r\n");
            e
        })
        .collect()
}

/// The calendar's text, with each event's SEQUENCE from `seqs` (None: no SEQUENCE).
fn render_with(
    plan: &SessionPlan,
    settings: &CalendarSettings,
    stamp: DateTime<Utc>,
    (screening, warnings): (&ScreeningOutcome, &[Warning]),
    u: Units,
    seqs: Option<&BTreeMap<String, u32>>,
) -> String {
    let plan_file = plan_file_name(&plan.plan);
    let mut cal = Calendar::empty();
    cal.append_property(("VERSION", "2.0"))
        .append_property((
            "PRODID",
            format!(
                "-//dosewright//dosewright {}//EN",
                env!("CARGO_PKG_VERSION")
            )
            .as_str(),
        ))
        .append_property(("CALSCALE", "GREGORIAN"))
        .append_property((
            "X-WR-CALNAME",
            format!("{} sessions ({plan_file})", plan.participant_id).as_str(),
        ))
        .append_property((
            "X-WR-CALDESC",
            calendar_description(plan, settings, screening, warnings).as_str(),
        ));
    if let (Some(_), Some(tz)) = (settings.session_time, &settings.time_zone) {
        cal.append_property(("X-WR-TIMEZONE", tz.as_str()));
    }
    for w in &plan.weeks {
        for s in &w.sessions {
            let mut e = Event::new();
            let id = uid(&plan.participant_id, s.date, s.index_on_date);
            e.uid(&id).timestamp(stamp);
            if let Some(seq) = seqs.and_then(|m| m.get(&id)) {
                e.sequence(*seq);
            }
            e.summary(&summary(&plan.participant_id, w.week, s))
                .description(&description(plan, w, s, screening, u));
            match when(s, settings) {
                When::Timed(start, end) => {
                    e.starts(start).ends(end);
                }
                When::AllDay(d) => {
                    // DTEND is exclusive: a one-day event ends the next day.
                    e.starts(d)
                        .ends(d.succ_opt().expect("plan dates end before 2201"))
                        .add_property("TRANSP", "TRANSPARENT");
                }
            }
            if let Some(place) = &settings.location {
                e.location(place);
            }
            cal.push(e.done());
        }
    }
    refold(&cal.to_string())
}

/// The crate's text with every content line folded again at [`MAX_LINE_OCTETS`] on a
/// character boundary (RFC 5545 3.1). icalendar 0.17.17 leaves a last continuation
/// line of 76 octets when exactly 75 remain (its loop compares the rest with 75 but
/// the continuation line adds a space); unfolding and folding again fixes that and
/// changes nothing else. As the crate does, a fold never puts a second blank at the
/// start of a continuation line, for readers that strip more than the one.
fn refold(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + text.len() / 32);
    let mut logical = String::new();
    for line in text.split("\r\n") {
        match line.strip_prefix([' ', '\t']) {
            Some(rest) => logical.push_str(rest),
            None => {
                if !logical.is_empty() {
                    fold_into(&mut out, &logical);
                }
                logical = line.to_string();
            }
        }
    }
    if !logical.is_empty() {
        fold_into(&mut out, &logical);
    }
    out
}

/// Append `line`, folded, each physical line ending in CRLF.
fn fold_into(out: &mut String, line: &str) {
    let mut rest = line;
    let mut room = MAX_LINE_OCTETS;
    while rest.len() > room {
        let mut cut = room;
        while !rest.is_char_boundary(cut) {
            cut -= 1;
        }
        if rest[cut..].starts_with([' ', '\t']) {
            let before = rest[..cut].char_indices().next_back().map_or(0, |(i, _)| i);
            if before > 0 {
                cut = before;
            }
        }
        out.push_str(&rest[..cut]);
        out.push_str("\r\n ");
        rest = &rest[cut..];
        room = MAX_LINE_OCTETS - 1;
    }
    out.push_str(rest);
    out.push_str("\r\n");
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fnv1a_matches_its_test_vectors() {
        // FNV-1a 32-bit test vectors (Fowler, Noll and Vo; the FNV test suite), from
        // memory, and the same values from an independent Python implementation.
        assert_eq!(fnv1a_32(b""), 0x811c_9dc5);
        assert_eq!(fnv1a_32(b"a"), 0xe40c_292c);
        assert_eq!(fnv1a_32(b"foobar"), 0xbf9c_f968);
    }

    #[test]
    fn folded_lines_fit_75_octets_and_unfold_to_the_original() {
        // RFC 5545 3.1: at most 75 octets a line, a fold is CRLF then one blank.
        for len in 1..400 {
            for filler in ["x", "é", "虎", "a b"] {
                let body: String = filler.repeat(len).chars().take(len).collect();
                let line = format!("DESCRIPTION:{body}");
                let mut out = String::new();
                fold_into(&mut out, &line);
                assert!(out.ends_with("\r\n"));
                for physical in out.trim_end_matches("\r\n").split("\r\n") {
                    assert!(
                        physical.len() <= MAX_LINE_OCTETS,
                        "{len} {filler}: {physical:?}"
                    );
                    assert!(!physical.starts_with("  "), "{physical:?}");
                }
                let unfolded = out.trim_end_matches("\r\n").replace("\r\n ", "");
                assert_eq!(unfolded, line);
            }
        }
    }

    #[test]
    fn the_crates_own_folding_overfills_a_line_that_refold_fixes() {
        // icalendar 0.17.17: a 150-octet content line comes out as 75 octets and a
        // continuation of 76. If this starts failing after an upgrade, the crate
        // folds within RFC 5545 3.1 and `refold` can go.
        let text = Event::new()
            .uid("u")
            .summary(&"x".repeat(142))
            .done()
            .to_string();
        let longest = |t: &str| t.split("\r\n").map(str::len).max().unwrap_or(0);
        assert_eq!(longest(&text), MAX_LINE_OCTETS + 1);
        assert_eq!(longest(&refold(&text)), MAX_LINE_OCTETS);
    }

    #[test]
    fn refold_keeps_short_lines_and_joins_continuations() {
        let text = "BEGIN:VCALENDAR\r\nSUMMARY:ab\r\n cd\r\nEND:VCALENDAR\r\n";
        assert_eq!(
            refold(text),
            "BEGIN:VCALENDAR\r\nSUMMARY:abcd\r\nEND:VCALENDAR\r\n"
        );
    }

    #[test]
    fn uids_use_the_participant_and_the_session_and_safe_characters() {
        let d = NaiveDate::from_ymd_opt(2027, 3, 1).unwrap();
        let a = uid("TRN-042", d, 1);
        assert!(a.starts_with("TRN-042-20270301-1-"), "{a}");
        assert!(a.ends_with("@dosewright"));
        assert_ne!(a, uid("TRN-043", d, 1));
        assert_ne!(a, uid("TRN-042", d, 2));
        assert_ne!(a, uid("TRN-042", d.succ_opt().unwrap(), 1));
        // Two codes that read the same once made safe differ in the hash.
        assert_ne!(uid("R 1", d, 1), uid("R/1", d, 1));
        let odd = uid("R 1/ü", d, 1);
        assert!(odd.starts_with("R_1__-"), "{odd}");
        assert!(
            odd.chars()
                .all(|c| c.is_ascii_alphanumeric() || "-_.@".contains(c))
        );
        assert_eq!(plan_file_name("/a/b/ex.toml"), "ex.toml");
        assert_eq!(plan_file_name(crate::plan::starter::DEMO_NAME), "demo.toml");
    }
}
