//! The `calendar` command: the real binary writes an iCalendar file, and a parser
//! written here (not the `icalendar` crate) reads it back against RFC 5545: line
//! ends and lengths, unfolding, BEGIN/END nesting, the required properties, TEXT
//! escaping; then the events against `schedule --format json`: one per planned
//! session, unique and stable UIDs, DTSTAMP, times and durations, closures.
//!
//! Reference: RFC 5545, Internet Calendaring and Scheduling Core Object Specification
//! (iCalendar), B. Desruisseaux (ed.), IETF 2009; the section of each rule is named
//! beside its check. Every participant here is invented.

mod common;

use chrono::{NaiveDate, NaiveDateTime};
use common::*;
use serde_json::Value;
use std::collections::BTreeSet;
use std::path::Path;

const EX206: &str = "plans/ex-206-rotation-heart-rate.toml";
const EX201: &str = "plans/ex-201-walking-net-split.toml";

// ---------------------------------------------------------------------------
// An independent reader of RFC 5545 text
// ---------------------------------------------------------------------------

/// One unfolded content line: `name *(";" param) ":" value` (RFC 5545 3.1).
#[derive(Debug, Clone)]
struct Prop {
    name: String,
    params: Vec<(String, String)>,
    /// The value as written (TEXT still escaped).
    raw: String,
}

impl Prop {
    fn param(&self, key: &str) -> Option<&str> {
        self.params
            .iter()
            .find(|(k, _)| k.eq_ignore_ascii_case(key))
            .map(|(_, v)| v.as_str())
    }
}

/// A component between `BEGIN:NAME` and `END:NAME` (RFC 5545 3.4, 3.6).
#[derive(Debug, Clone)]
struct Comp {
    name: String,
    props: Vec<Prop>,
    children: Vec<Comp>,
}

impl Comp {
    fn all(&self, name: &str) -> Vec<&Prop> {
        self.props.iter().filter(|p| p.name == name).collect()
    }

    /// The one property `name`; panics when it is missing or repeated.
    fn one(&self, name: &str) -> &Prop {
        let found = self.all(name);
        assert_eq!(
            found.len(),
            1,
            "{}: {name} {} times",
            self.name,
            found.len()
        );
        found[0]
    }

    fn text(&self, name: &str) -> String {
        unescape(&self.one(name).raw)
    }

    fn events(&self) -> Vec<&Comp> {
        self.children
            .iter()
            .filter(|c| c.name == "VEVENT")
            .collect()
    }
}

/// Problems with the physical lines: each ends in CRLF (RFC 5545 3.1: "delimited by
/// a line break, which is a CRLF sequence"), no bare CR or LF, and none is longer
/// than 75 octets without its line break (3.1: "SHOULD NOT be longer than 75
/// octets"; we hold it as a must).
fn physical_problems(bytes: &[u8]) -> Vec<String> {
    let mut p = Vec::new();
    if !bytes.ends_with(b"\r\n") {
        p.push("the file does not end with CRLF".to_string());
    }
    let lines: Vec<&[u8]> = bytes.split(|b| *b == b'\n').collect();
    for (n, line) in lines.iter().enumerate() {
        if n == lines.len() - 1 {
            if !line.is_empty() {
                p.push("text after the last line break".to_string());
            }
            break;
        }
        let Some(body) = line.strip_suffix(b"\r") else {
            p.push(format!("line {}: LF without CR", n + 1));
            continue;
        };
        if body.contains(&b'\r') {
            p.push(format!("line {}: a bare CR", n + 1));
        }
        if body.len() > 75 {
            p.push(format!("line {}: {} octets", n + 1, body.len()));
        }
    }
    p
}

/// Unfold (RFC 5545 3.1): a CRLF followed by one SPACE or HTAB is removed.
fn unfold(text: &str) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    for physical in text.split("\r\n") {
        if let Some(rest) = physical.strip_prefix([' ', '\t']) {
            lines
                .last_mut()
                .expect("a continuation line follows a line")
                .push_str(rest);
        } else if !physical.is_empty() {
            lines.push(physical.to_string());
        }
    }
    lines
}

/// Split one content line into name, parameters and value (RFC 5545 3.1 ABNF); a
/// parameter value may be a quoted string, where `:` `;` `,` are plain characters.
fn split_line(line: &str) -> Prop {
    let mut name = String::new();
    let mut chars = line.chars().peekable();
    while let Some(&c) = chars.peek() {
        if c == ';' || c == ':' {
            break;
        }
        name.push(c);
        chars.next();
    }
    assert!(
        !name.is_empty() && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '-'),
        "bad property name in {line:?}"
    );
    let mut params = Vec::new();
    while chars.peek() == Some(&';') {
        chars.next();
        let key: String = chars.by_ref().take_while(|c| *c != '=').collect();
        let mut val = String::new();
        if chars.peek() == Some(&'"') {
            chars.next();
            val = chars.by_ref().take_while(|c| *c != '"').collect();
        } else {
            while let Some(&c) = chars.peek() {
                if c == ';' || c == ':' {
                    break;
                }
                val.push(c);
                chars.next();
            }
        }
        params.push((key, val));
    }
    assert_eq!(
        chars.next(),
        Some(':'),
        "no ':' before the value in {line:?}"
    );
    Prop {
        name: name.to_ascii_uppercase(),
        params,
        raw: chars.collect(),
    }
}

/// TEXT unescaped (RFC 5545 3.3.11): `\\` `\;` `\,` and `\n` or `\N`.
fn unescape(raw: &str) -> String {
    let mut out = String::new();
    let mut chars = raw.chars();
    while let Some(c) = chars.next() {
        if c != '\\' {
            out.push(c);
            continue;
        }
        match chars.next() {
            Some('\\') => out.push('\\'),
            Some(';') => out.push(';'),
            Some(',') => out.push(','),
            Some('n') | Some('N') => out.push('\n'),
            other => panic!("bad TEXT escape \\{other:?} in {raw:?}"),
        }
    }
    out
}

/// Whether every `,` and `;` of a raw TEXT value is escaped (RFC 5545 3.3.11:
/// "COMMA character ... MUST be escaped", and so SEMICOLON and BACKSLASH).
fn escaped_properly(raw: &str) -> bool {
    let mut chars = raw.chars();
    while let Some(c) = chars.next() {
        match c {
            // The guard takes the escaped character, so it is not looked at again.
            '\\' if !matches!(chars.next(), Some('\\' | ';' | ',' | 'n' | 'N')) => {
                return false;
            }
            ',' | ';' => return false,
            _ => {}
        }
    }
    true
}

/// The one VCALENDAR of `text`, BEGIN/END nested properly (RFC 5545 3.4, 3.6).
fn parse(text: &str) -> Comp {
    let mut stack: Vec<Comp> = Vec::new();
    let mut done: Vec<Comp> = Vec::new();
    for line in unfold(text) {
        let p = split_line(&line);
        match p.name.as_str() {
            "BEGIN" => stack.push(Comp {
                name: p.raw.to_ascii_uppercase(),
                props: Vec::new(),
                children: Vec::new(),
            }),
            "END" => {
                let c = stack.pop().expect("END without BEGIN");
                assert_eq!(
                    c.name,
                    p.raw.to_ascii_uppercase(),
                    "END does not match BEGIN"
                );
                match stack.last_mut() {
                    Some(parent) => parent.children.push(c),
                    None => done.push(c),
                }
            }
            _ => stack
                .last_mut()
                .expect("a property outside any component")
                .props
                .push(p),
        }
    }
    assert!(
        stack.is_empty(),
        "unclosed: {:?}",
        stack.iter().map(|c| &c.name).collect::<Vec<_>>()
    );
    assert_eq!(done.len(), 1, "one iCalendar object");
    let cal = done.pop().unwrap();
    assert_eq!(cal.name, "VCALENDAR");
    cal
}

/// Every RFC 5545 rule the file must keep, for a calendar stamped `stamp`.
fn check_rfc5545(bytes: &[u8], stamp: &str) -> Comp {
    assert_eq!(physical_problems(bytes), Vec::<String>::new());
    let text = std::str::from_utf8(bytes).expect("UTF-8 (RFC 5545 3.1: the default charset)");
    let cal = parse(text);
    // 3.6: "prodid" and "version" are REQUIRED, but MUST NOT occur more than once;
    // 3.7.4: VERSION 2.0 for this memo.
    assert_eq!(cal.one("VERSION").raw, "2.0");
    assert!(cal.one("PRODID").raw.starts_with("-//dosewright//"));
    // 3.6: at least one component.
    let events = cal.events();
    assert!(!events.is_empty(), "an iCalendar object holds a component");
    let mut uids = BTreeSet::new();
    for e in &events {
        // 3.6.1: dtstamp and uid REQUIRED, dtstart REQUIRED without METHOD; dtend or
        // duration, not both.
        let uid = e.one("UID").raw.clone();
        assert!(
            uid.chars()
                .all(|c| c.is_ascii_alphanumeric() || "-_.@".contains(c)),
            "{uid}"
        );
        assert!(
            uids.insert(uid.clone()),
            "UID {uid} twice (3.8.4.7: unique)"
        );
        // 3.8.7.2: DTSTAMP in UTC.
        assert_eq!(e.one("DTSTAMP").raw, stamp, "{uid}");
        e.one("DTSTART");
        assert_eq!(e.all("DTEND").len() + e.all("DURATION").len(), 1, "{uid}");
        for name in ["SUMMARY", "DESCRIPTION", "LOCATION"] {
            for p in e.all(name) {
                assert!(escaped_properly(&p.raw), "{uid} {name}: {:?}", p.raw);
            }
        }
    }
    cal
}

// ---------------------------------------------------------------------------
// Events against the schedule
// ---------------------------------------------------------------------------

/// When an event happens, read from DTSTART and DTEND.
#[derive(Debug, Clone, PartialEq)]
enum Span {
    /// Floating local date-times (RFC 5545 3.3.5, form 1).
    Timed(NaiveDateTime, NaiveDateTime),
    /// DATE values (3.3.4): first day and the exclusive end.
    Days(NaiveDate, NaiveDate),
}

fn span(e: &Comp) -> Span {
    let (s, t) = (e.one("DTSTART"), e.one("DTEND"));
    // 3.8.2.2: DTEND has the value type of DTSTART.
    assert_eq!(s.param("VALUE"), t.param("VALUE"));
    assert!(
        s.param("TZID").is_none() && t.param("TZID").is_none(),
        "no TZID without VTIMEZONE"
    );
    if s.param("VALUE") == Some("DATE") {
        let d = |p: &Prop| NaiveDate::parse_from_str(&p.raw, "%Y%m%d").expect("a DATE");
        Span::Days(d(s), d(t))
    } else {
        let dt = |p: &Prop| {
            NaiveDateTime::parse_from_str(&p.raw, "%Y%m%dT%H%M%S").expect("a floating DATE-TIME")
        };
        Span::Timed(dt(s), dt(t))
    }
}

/// One planned session of the schedule JSON.
#[derive(Debug, Clone, PartialEq)]
struct Planned {
    date: NaiveDate,
    bout: Option<u64>,
    minutes: u64,
    session_minutes: u64,
}

/// The planned sessions of scenario `index` of a schedule JSON, in date order.
fn planned(json: &Value, index: usize) -> Vec<Planned> {
    let sc = &array(json, "scenarios")[index];
    array(sc, "weeks")
        .iter()
        .filter(|w| text(w, "phase") == "protocol")
        .flat_map(|w| array(w, "sessions").iter())
        .map(|s| Planned {
            date: date(text(s, "date")),
            bout: s["bout"].as_u64(),
            minutes: s["minutes"].as_u64().unwrap(),
            session_minutes: s["session_minutes"].as_u64().unwrap(),
        })
        .collect()
}

/// Run the binary in `dir` and return its result.
fn run_in(dir: &Scratch, args: &[&str]) -> Run {
    run(dir.cmd().args(args))
}

/// The DTSTAMP [`calendar`] fixes with `--stamp` when the test gives none (the
/// default is the clock's time of writing; tests/calendar_sequence.rs checks it).
const STAMP: &str = "2027-01-02T03:04:05Z";
/// [`STAMP`] as iCalendar writes it.
const STAMPED: &str = "20270102T030405Z";

/// `calendar ARGS --out cal.ics` in `dir`, which must succeed; the file's bytes.
fn calendar(dir: &Scratch, args: &[&str]) -> Vec<u8> {
    let mut all: Vec<&str> = vec!["calendar"];
    all.extend(args);
    if !args.contains(&"--stamp") {
        all.extend(["--stamp", STAMP]);
    }
    all.extend(["--out", "cal.ics"]);
    let r = run_in(dir, &all);
    assert_eq!(r.code, Some(0), "{all:?}: {}", r.stderr);
    assert_eq!(r.stdout, "", "the calendar goes to the file only");
    std::fs::read(dir.path().join("cal.ics")).expect("the calendar was written")
}

/// `schedule ARGS --format json` in `dir`, parsed.
fn schedule(dir: &Scratch, args: &[&str]) -> Value {
    let mut all: Vec<&str> = vec!["schedule"];
    all.extend(args);
    all.extend(["--format", "json"]);
    let r = run_in(dir, &all);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap()
}

/// A scratch folder with a copy of `plan` (from the crate root) under `name`.
fn with_plan(plan: &str, name: &str) -> Scratch {
    let dir = Scratch::new("calendar");
    dir.write(
        name,
        std::fs::read(manifest_dir().join(plan)).expect("the example plan"),
    );
    dir
}

/// The events and the plan's sessions must agree one to one, in order: the date, and
/// the duration (timed: the whole session in minutes; all-day: one day).
fn assert_events_match(cal: &Comp, sessions: &[Planned], session_time: Option<&str>) {
    let events = cal.events();
    assert_eq!(
        events.len(),
        sessions.len(),
        "one event per planned session"
    );
    for (e, s) in events.iter().zip(sessions) {
        let uid = e.one("UID").raw.clone();
        match span(e) {
            Span::Timed(a, b) => {
                assert_eq!(a.date(), s.date, "{uid}");
                assert_eq!((b - a).num_minutes() as u64, s.session_minutes, "{uid}");
                if s.bout != Some(2) {
                    let t = session_time.expect("timed events only with a session time");
                    assert_eq!(a.format("%H:%M").to_string(), t, "{uid}");
                }
            }
            Span::Days(a, b) => {
                assert!(
                    session_time.is_none(),
                    "{uid}: all-day despite a session time"
                );
                assert_eq!(a, s.date, "{uid}");
                // 3.6.1 and 3.8.2.2: DTEND is exclusive; one day ends the next day.
                assert_eq!(b, a.succ_opt().unwrap(), "{uid}");
                let summary = e.text("SUMMARY");
                assert!(
                    summary.contains(&format!(" {} min", s.minutes)),
                    "{uid}: the minutes are in the title: {summary}"
                );
            }
        }
    }
}

// ---------------------------------------------------------------------------
// The tests
// ---------------------------------------------------------------------------

#[test]
fn the_example_plan_gives_one_timed_event_per_session() {
    let dir = with_plan(EX206, "ex-206.toml");
    let bytes = calendar(&dir, &["ex-206.toml", "--stamp", "2027-02-20T10:15:00Z"]);
    let cal = check_rfc5545(&bytes, "20270220T101500Z");
    let sessions = planned(&schedule(&dir, &["ex-206.toml"]), 0);
    assert!(sessions.len() > 30, "{}", sessions.len());
    assert_events_match(&cal, &sessions, Some("09:30"));
    // The plan's [calendar] table: place and time zone.
    assert_eq!(cal.text("X-WR-TIMEZONE"), "Europe/Dublin");
    for e in cal.events() {
        assert_eq!(e.text("LOCATION"), "Training room 2");
    }
    // Closures (Good Friday, Easter Monday) get no event.
    let days: BTreeSet<NaiveDate> = sessions.iter().map(|s| s.date).collect();
    for closed in ["2027-03-26", "2027-03-29"] {
        assert!(!days.contains(&date(closed)), "{closed} is closed");
        let stamp = closed.replace('-', "");
        assert!(
            !cal.events()
                .iter()
                .any(|e| e.one("DTSTART").raw.starts_with(&stamp)),
            "no event on {closed}"
        );
    }
    // The week's other sessions carry the make-up note.
    for e in cal.events() {
        let start = &e.one("DTSTART").raw;
        if start.starts_with("20270322") || start.starts_with("20270324") {
            assert!(
                e.text("DESCRIPTION")
                    .contains("Closures this week: 1 session(s) closed"),
                "{start}"
            );
        }
    }
    // Warm-up and cool-down are in each session: 5 + at target + 5 minutes.
    assert!(sessions.iter().all(|s| s.session_minutes == s.minutes + 10));
}

#[test]
fn the_demo_plan_gives_all_day_events_with_the_minutes_in_the_title() {
    let dir = Scratch::new("calendar-demo");
    let bytes = calendar(&dir, &[]);
    let cal = check_rfc5545(&bytes, STAMPED);
    let sessions = planned(&schedule(&dir, &[]), 0);
    assert_eq!(sessions.len(), 72, "24 weeks of 3 sessions");
    assert_events_match(&cal, &sessions, None);
    assert!(
        cal.all("X-WR-TIMEZONE").is_empty(),
        "no times, no time zone"
    );
}

#[test]
fn the_calendar_carries_the_target_and_the_cautions() {
    let dir = with_plan(EX206, "ex-206.toml");
    let cal = parse(std::str::from_utf8(&calendar(&dir, &["ex-206.toml"])).unwrap());
    let report = dosewright::commands::schedule::schedule_report(
        &dosewright::plan::load_plan(&manifest_dir().join(EX206)).unwrap(),
    )
    .unwrap();
    let outcome = &report.screening.recommendation;
    let desc = cal.text("X-WR-CALDESC");
    assert!(
        desc.contains(&format!("Screening result: {outcome}.")),
        "{desc}"
    );
    for c in dosewright::safety::CAUTIONS {
        assert!(desc.contains(c), "X-WR-CALDESC lacks: {c}");
    }
    for e in cal.events() {
        let d = e.text("DESCRIPTION");
        for want in [
            outcome.as_str(),
            "chest pain",
            "licensed professionals",
            "min at target",
            "MET",
            "kcal gross",
            "kcal net of rest",
            "warm-up at 2.5 MET",
            "cool-down at 2.0 MET",
            "beats/min (Karvonen",
            "RPE ",
            "talk test: ",
        ] {
            assert!(
                d.contains(want),
                "{}: lacks {want:?}: {d}",
                e.one("UID").raw
            );
        }
        assert!(d.lines().count() >= 8, "one item a line (\\n in TEXT)");
    }
    // Friday is the rotation's cycle ergometer, the other days the treadmill.
    let summaries: Vec<String> = cal.events().iter().map(|e| e.text("SUMMARY")).collect();
    assert!(
        summaries[0].starts_with("TRN-042 week 1: treadmill walk "),
        "{}",
        summaries[0]
    );
    assert!(
        summaries[2].starts_with("TRN-042 week 1: cycle ergometer "),
        "{}",
        summaries[2]
    );
}

#[test]
fn the_same_plan_gives_the_same_bytes_and_a_moved_plan_the_same_uids() {
    let dir = with_plan(EX206, "ex-206-rotation-heart-rate.toml");
    let first = calendar(&dir, &["ex-206-rotation-heart-rate.toml"]);
    let again = calendar(&dir, &["ex-206-rotation-heart-rate.toml"]);
    assert!(first == again, "a second run gives the same bytes");
    // The same file in another folder, named by an absolute path.
    let other = Scratch::new("calendar-moved");
    std::fs::create_dir_all(other.path().join("deep/er")).unwrap();
    let moved = other.path().join("deep/er/ex-206-rotation-heart-rate.toml");
    std::fs::copy(manifest_dir().join(EX206), &moved).unwrap();
    let there = calendar(&other, &[moved.to_str().unwrap()]);
    let uids = |b: &[u8]| -> Vec<String> {
        parse(std::str::from_utf8(b).unwrap())
            .events()
            .iter()
            .map(|e| e.one("UID").raw.clone())
            .collect()
    };
    assert_eq!(
        uids(&first),
        uids(&there),
        "UIDs do not depend on the folder"
    );
    assert!(first == there, "nothing in the file names the folder");
    // A renamed plan keeps its UIDs: they come from the participant and the session
    // (tests/calendar_uids.rs).
    dir.write(
        "renamed.toml",
        std::fs::read(manifest_dir().join(EX206)).unwrap(),
    );
    let renamed = calendar(&dir, &["renamed.toml"]);
    let (a, b) = (uids(&first), uids(&renamed));
    assert_eq!(a.len(), b.len());
    assert_eq!(a, b, "UIDs do not follow the file name");
    assert!(a[0].starts_with("TRN-042-20270301-1-"), "{}", a[0]);
}

#[test]
fn a_label_with_a_comma_and_a_semicolon_is_escaped_and_round_trips() {
    let label = r"walk, brisk; hills \ flats";
    let plan = base_with(
        &[("met = 4.0", &format!("met = 4.0\nlabel = {label:?}"))],
        "\n[calendar]\nsession_time = \"18:05\"\nlocation = \"Hall A; door 2, left\"\n",
    );
    let dir = Scratch::new("calendar-escape");
    dir.write("plan.toml", &plan);
    let bytes = calendar(&dir, &["plan.toml"]);
    let text = String::from_utf8(bytes.clone()).unwrap();
    let cal = check_rfc5545(&bytes, STAMPED);
    let e = cal.events()[0];
    let raw = &e.one("SUMMARY").raw;
    assert!(raw.contains(r"walk\, brisk\; hills \\ flats"), "{raw}");
    let summary = e.text("SUMMARY");
    assert!(
        summary.starts_with(&format!("T-001 week 1: {label} ")),
        "{summary}"
    );
    assert_eq!(e.text("LOCATION"), "Hall A; door 2, left");
    assert!(text.contains(r"LOCATION:Hall A\; door 2\, left"));
    assert_events_match(
        &cal,
        &planned(&schedule(&dir, &["plan.toml"]), 0),
        Some("18:05"),
    );
}

#[test]
fn split_bouts_start_at_the_second_bout_time_or_six_hours_later() {
    for (extra, second) in [("", "13:15"), ("second_bout_time = \"17:40\"\n", "17:40")] {
        let dir = with_plan(EX201, "split.toml");
        let mut plan = std::fs::read_to_string(dir.path().join("split.toml")).unwrap();
        plan.push_str(&format!("\n[calendar]\nsession_time = \"07:15\"\n{extra}"));
        dir.write("split.toml", &plan);
        let cal = check_rfc5545(&calendar(&dir, &["split.toml"]), STAMPED);
        let sessions = planned(&schedule(&dir, &["split.toml"]), 0);
        assert!(
            sessions.iter().any(|s| s.bout == Some(2)),
            "the plan splits"
        );
        assert_events_match(&cal, &sessions, Some("07:15"));
        for (e, s) in cal.events().iter().zip(&sessions) {
            let Span::Timed(a, _) = span(e) else {
                panic!("timed")
            };
            let want = if s.bout == Some(2) { second } else { "07:15" };
            assert_eq!(a.format("%H:%M").to_string(), want);
            if let Some(b) = s.bout {
                assert!(e.text("SUMMARY").contains(&format!("bout {b} of 2")));
                assert!(e.one("UID").raw.contains(&format!("-{b}-")));
            }
        }
    }
}

#[test]
fn bouts_that_cannot_be_placed_are_refused() {
    let cases = [
        (
            "second_bout_time = \"07:30\"\n",
            "error: split.toml: calendar.second_bout_time: the first bout of 2027-02-08 runs 07:15-07:31 (16 min), past the second bout's start 07:30; give a later calendar.second_bout_time",
            "07:15",
        ),
        (
            "",
            "error: split.toml: calendar.session_time: the second bout of 2027-02-01 would start 6 hours after the first, on the next day; give calendar.second_bout_time (a later time the same day) or an earlier session_time",
            "19:00",
        ),
    ];
    for (extra, message, first) in cases {
        let dir = with_plan(EX201, "split.toml");
        let mut plan = std::fs::read_to_string(dir.path().join("split.toml")).unwrap();
        plan.push_str(&format!(
            "\n[calendar]\nsession_time = \"{first}\"\n{extra}"
        ));
        dir.write("split.toml", &plan);
        let r = run_in(&dir, &["calendar", "split.toml", "--out", "cal.ics"]);
        assert_eq!(r.code, Some(2), "{}", r.stderr);
        assert_eq!(r.stderr, format!("{message}\n"));
        assert_eq!(r.stdout, "");
        assert_eq!(dir.listing(), ["split.toml"], "nothing written");
    }
}

#[test]
fn from_and_to_limit_the_span_and_keep_the_uids() {
    let dir = with_plan(EX206, "ex-206.toml");
    let all = parse(std::str::from_utf8(&calendar(&dir, &["ex-206.toml"])).unwrap());
    let part = check_rfc5545(
        &calendar(
            &dir,
            &["ex-206.toml", "--from", "2027-03-24", "--to", "2027-04-07"],
        ),
        STAMPED,
    );
    let want: Vec<Planned> = planned(&schedule(&dir, &["ex-206.toml"]), 0)
        .into_iter()
        .filter(|s| s.date >= date("2027-03-24") && s.date <= date("2027-04-07"))
        .collect();
    // Wed 24, (Fri 26 closed), (Mon 29 closed), Wed 31, Fri 2, Mon 5, Wed 7.
    assert_eq!(want.len(), 5);
    assert_events_match(&part, &want, Some("09:30"));
    let uids = |c: &Comp| -> BTreeSet<String> {
        c.events()
            .iter()
            .map(|e| e.one("UID").raw.clone())
            .collect()
    };
    assert!(
        uids(&part).is_subset(&uids(&all)),
        "a part has the whole's UIDs"
    );
    // One end only.
    let tail = parse(
        std::str::from_utf8(&calendar(&dir, &["ex-206.toml", "--from", "2027-05-17"])).unwrap(),
    );
    assert_eq!(tail.events().len(), 3, "Mon 17, Wed 19, Fri 21 May");
    // A span with no session.
    let r = run_in(
        &dir,
        &[
            "calendar",
            "ex-206.toml",
            "--from",
            "2027-06-01",
            "--out",
            "none.ics",
        ],
    );
    assert_eq!(r.code, Some(2));
    assert_eq!(
        r.stderr,
        "error: no planned session on or after 2027-06-01 to put in a calendar; the plan's sessions run from 2027-03-01 to 2027-05-21\n"
    );
    assert!(!dir.path().join("none.ics").exists());
}

#[test]
fn another_scenario_and_a_log_give_their_own_minutes() {
    let dir = with_plan(EX206, "ex-206.toml");
    let json = schedule(&dir, &["ex-206.toml"]);
    let other = planned(&json, 1);
    let cal = check_rfc5545(
        &calendar(&dir, &["ex-206.toml", "--scenario", "eats back 30%"]),
        STAMPED,
    );
    assert_events_match(&cal, &other, Some("09:30"));
    assert!(
        cal.text("X-WR-CALDESC")
            .contains("scenario \"eats back 30%\"")
    );

    // The demo plan re-planned from the demo log, as `schedule --log` re-plans it.
    let dir = Scratch::new("calendar-log");
    dir.write(
        "log.csv",
        std::fs::read(manifest_dir().join("demo-data/demo-017-log.csv")).unwrap(),
    );
    let logged = planned(&schedule(&dir, &["--log", "log.csv"]), 0);
    let unlogged = planned(&schedule(&dir, &[]), 0);
    assert_ne!(logged, unlogged, "the log changes the prescription");
    let cal = check_rfc5545(&calendar(&dir, &["--log", "log.csv"]), STAMPED);
    assert_events_match(&cal, &logged, None);
    let minutes: Vec<String> = cal.events().iter().map(|e| e.text("SUMMARY")).collect();
    let want: Vec<String> = logged
        .iter()
        .map(|s| format!(" {} min", s.minutes))
        .collect();
    assert!(
        minutes
            .iter()
            .zip(&want)
            .all(|(m, w)| m.contains(w.as_str()))
    );
}

#[test]
fn bad_requests_exit_2_and_write_nothing() {
    let cases: &[(&[&str], &str)] = &[
        (
            &["--stamp", "next monday"],
            "error: --stamp next monday: not a date-time; give an RFC 3339 date-time such as 2027-03-01T08:00:00Z (or with an offset, 2027-03-01T09:00:00+01:00)",
        ),
        (
            &["--stamp", "2027-03-01T08:00:00.250Z"],
            "error: --stamp 2027-03-01T08:00:00.250Z: a fraction of a second is not allowed; give whole seconds such as 2027-03-01T08:00:00Z",
        ),
        (
            &["--from", "2027-04-01", "--to", "2027-03-01"],
            "error: --from 2027-04-01 is after --to 2027-03-01; give a span that runs forward",
        ),
        (
            &["--scenario", "nobody"],
            "error: --scenario: no scenario named \"nobody\" in ex-206.toml; the plan has \"as prescribed\", \"eats back 30%\"",
        ),
    ];
    for (args, message) in cases {
        let dir = with_plan(EX206, "ex-206.toml");
        let mut all = vec!["calendar", "ex-206.toml", "--out", "cal.ics"];
        all.extend(*args);
        let r = run_in(&dir, &all);
        assert_eq!(r.code, Some(2), "{args:?}: {}", r.stderr);
        assert_eq!(r.stderr, format!("{message}\n"), "{args:?}");
        assert_eq!(r.stdout, "");
        assert_eq!(dir.listing(), ["ex-206.toml"], "{args:?}: nothing written");
    }
    // The out path is a folder, or the plan itself.
    let dir = with_plan(EX206, "ex-206.toml");
    std::fs::create_dir(dir.path().join("cal.ics")).unwrap();
    let r = run_in(&dir, &["calendar", "ex-206.toml", "--out", "cal.ics"]);
    assert_eq!(r.code, Some(2));
    assert_eq!(
        r.stderr,
        "error: cal.ics: not a regular file (a folder, device or pipe); refusing to replace it, choose a file path\n"
    );
    let r = run_in(&dir, &["calendar", "ex-206.toml", "--out", "ex-206.toml"]);
    assert_eq!(r.code, Some(2));
    assert_eq!(
        r.stderr,
        "error: --out ex-206.toml: that is an input file; refusing to overwrite it\n"
    );
    assert_eq!(
        std::fs::read(dir.path().join("ex-206.toml")).unwrap(),
        std::fs::read(manifest_dir().join(EX206)).unwrap()
    );
}

#[test]
fn the_reader_here_catches_what_it_checks() {
    // The checker itself: a long line, a bare LF, a bad escape, bad nesting.
    assert_eq!(
        physical_problems(format!("A:{}\r\nB\n", "x".repeat(74)).as_bytes()),
        [
            "the file does not end with CRLF",
            "line 1: 76 octets",
            "line 2: LF without CR"
        ]
    );
    assert!(
        std::panic::catch_unwind(|| unescape(r"a\x")).is_err(),
        "a bad escape"
    );
    assert!(!escaped_properly("a, b"));
    assert!(!escaped_properly(r"a\\, b"));
    assert!(escaped_properly(r"a\, b\; c\\ d\n"));
    assert_eq!(unescape(r"a\, b\; c\\ d\nE"), "a, b; c\\ d\nE");
    assert_eq!(
        unfold("A:ab\r\n cd\r\n\tef\r\nB:x\r\n"),
        ["A:abcdef", "B:x"]
    );
    let p = split_line("DTSTART;VALUE=DATE;X-Q=\"a:b;c\":20270301");
    assert_eq!(
        (p.param("VALUE"), p.param("X-Q")),
        (Some("DATE"), Some("a:b;c"))
    );
    assert_eq!(p.raw, "20270301");
    let bad =
        std::panic::catch_unwind(|| parse("BEGIN:VCALENDAR\r\nBEGIN:VEVENT\r\nEND:VCALENDAR\r\n"));
    assert!(bad.is_err(), "mismatched END is caught");
}

/// The Python `icalendar` package reads the file too (Debian python3-icalendar):
/// `scripts/check-ics.py` checks the same counts. Skipped with a note when neither
/// `/usr/bin/python3` nor `python3` can import it.
#[test]
fn python_icalendar_reads_the_calendars() {
    let Some(python) = common::python_with_icalendar("python_icalendar_reads_the_calendars") else {
        return;
    };
    let script = manifest_dir().join("scripts/check-ics.py");
    for (plan, args) in [
        (Some(EX206), vec![]),
        (None, vec!["--scenario", "eats back 40%"]),
        (Some(EX201), vec![]),
    ] {
        let dir = match plan {
            Some(p) => with_plan(p, "plan.toml"),
            None => Scratch::new("calendar-python"),
        };
        let mut cal_args: Vec<&str> = plan.map(|_| "plan.toml").into_iter().collect();
        cal_args.extend(&args);
        calendar(&dir, &cal_args);
        let json = dir.path().join("schedule.json");
        let mut s_args = vec!["schedule"];
        s_args.extend(plan.map(|_| "plan.toml"));
        s_args.extend(["--format", "json", "--out", "schedule.json"]);
        assert_eq!(run_in(&dir, &s_args).code, Some(0));
        let mut cmd = std::process::Command::new(python);
        cmd.arg(&script).arg(dir.path().join("cal.ics")).arg(&json);
        if let Some(i) = args.iter().position(|a| *a == "--scenario") {
            cmd.arg(args[i + 1]);
        }
        let out = cmd.output().expect("python runs");
        assert!(
            out.status.success(),
            "{plan:?}: {}{}",
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        );
        assert!(String::from_utf8_lossy(&out.stdout).contains("ok"));
    }
    assert!(Path::new(&script).exists());
}

#[test]
fn snapshot_of_a_week_with_closures() {
    // Week 4 of the example plan: Good Friday closed, its energy spread over Monday
    // and Wednesday. Line ends shown as LF here; CRLF is checked above.
    let dir = with_plan(EX206, "ex-206-rotation-heart-rate.toml");
    let bytes = calendar(
        &dir,
        &[
            "ex-206-rotation-heart-rate.toml",
            "--from",
            "2027-03-22",
            "--to",
            "2027-03-28",
        ],
    );
    let text = String::from_utf8(bytes).unwrap().replace("\r\n", "\n");
    insta::assert_snapshot!("ex206_week_4", text);
}
