//! A re-plan that drops sessions cancels their events: written again over the
//! calendar at `--out`, an event of this participant within the span that the new
//! plan no longer has comes back with STATUS:CANCELLED (RFC 5545 section 3.8.1.11)
//! and its SEQUENCE one higher (3.8.7.4), so a calendar program that imports the file
//! removes it instead of keeping a session that will not happen. Events outside the
//! span, and other participants' events, are not cancelled. The calendars are read
//! back with the icalendar crate's parser, and by the Python icalendar package
//! through scripts/check-ics.py --previous (skipped with a note when it is missing).
//! The participant is invented.

mod common;
use common::{BASE, Scratch, edit, run};
use std::collections::BTreeMap;

/// One event as read back.
#[derive(Debug, Clone, PartialEq)]
struct Ev {
    sequence: u32,
    status: Option<String>,
    summary: String,
    description: String,
}

/// The events of the calendar at `name` by UID, read with the icalendar crate's
/// parser (not the program's own reader).
fn events(dir: &Scratch, name: &str) -> BTreeMap<String, Ev> {
    let text = std::fs::read_to_string(dir.path().join(name)).unwrap();
    let unfolded = icalendar::parser::unfold(&text);
    let cal = icalendar::parser::read_calendar(&unfolded).expect("an iCalendar file");
    cal.components
        .iter()
        .filter(|c| c.name.as_str() == "VEVENT")
        .map(|c| {
            let get = |k: &str| c.find_prop(k).map(|p| p.val.as_str().to_string());
            (
                get("UID").expect("a UID"),
                Ev {
                    sequence: get("SEQUENCE").map_or(0, |s| s.parse().unwrap()),
                    status: get("STATUS"),
                    summary: get("SUMMARY").unwrap_or_default(),
                    description: get("DESCRIPTION").unwrap_or_default(),
                },
            )
        })
        .collect()
}

fn calendar(dir: &Scratch, args: &[&str]) -> String {
    let mut all = vec!["calendar"];
    all.extend(args);
    let r = run(dir.cmd().args(&all));
    assert_eq!(r.code, Some(0), "{all:?}: {}", r.stderr);
    r.stderr
}

/// The date in a UID `T-001-YYYYMMDD-N-HASH@dosewright`.
fn date(uid: &str) -> &str {
    &uid["T-001-".len().."T-001-".len() + 8]
}

/// The weekday of a UID's date.
fn weekday(uid: &str) -> chrono::Weekday {
    use chrono::Datelike;
    chrono::NaiveDate::parse_from_str(date(uid), "%Y%m%d")
        .unwrap()
        .weekday()
}

/// The plan moved from Monday, Wednesday and Friday to Monday and Thursday (the
/// participant can no longer come on Wednesdays and Fridays).
fn mon_thu() -> String {
    edit(
        BASE,
        &[(
            r#"session_days = ["mon", "wed", "fri"]"#,
            r#"session_days = ["mon", "thu"]"#,
        )],
    )
}

#[test]
fn dropped_sessions_in_the_span_are_cancelled_and_stay_cancelled() {
    use chrono::Weekday::{Fri, Mon, Thu, Wed};
    let dir = Scratch::new("cal-cancel");
    dir.write("plan.toml", BASE);
    calendar(
        &dir,
        &[
            "plan.toml",
            "--stamp",
            "2027-01-01T08:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    let first = events(&dir, "cal.ics");
    assert_eq!(first.len(), 24, "8 weeks of 3 sessions");
    // Another participant's event in the same file: written over, never cancelled.
    let text = std::fs::read_to_string(dir.path().join("cal.ics")).unwrap();
    let other = "BEGIN:VEVENT\r\nUID:X-999-20270120-1-00000000@dosewright\r\nDTSTAMP:20270101T080000Z\r\nDTSTART;VALUE=DATE:20270120\r\nDTEND;VALUE=DATE:20270121\r\nSUMMARY:X-999 week 3\r\nEND:VEVENT\r\n";
    dir.write(
        "cal.ics",
        text.replace("END:VCALENDAR", &format!("{other}END:VCALENDAR")),
    );

    // From week 3 (2027-01-18) on, Monday and Thursday.
    dir.write("plan.toml", mon_thu());
    let said = calendar(
        &dir,
        &[
            "plan.toml",
            "--from",
            "2027-01-18",
            "--stamp",
            "2027-01-15T08:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    let moved = events(&dir, "cal.ics");
    // Wednesday and Friday of weeks 3 to 8: 12 cancelled, one higher, titled so.
    let cancelled: Vec<&String> = moved
        .iter()
        .filter(|(_, e)| e.status.as_deref() == Some("CANCELLED"))
        .map(|(u, _)| u)
        .collect();
    assert_eq!(cancelled.len(), 12, "{cancelled:?}");
    for uid in &cancelled {
        assert!(
            date(uid) >= "20270118" && [Wed, Fri].contains(&weekday(uid)),
            "{uid}"
        );
        let (old, new) = (&first[*uid], &moved[*uid]);
        assert_eq!(new.sequence, old.sequence + 1, "{uid}");
        assert_eq!(new.summary, format!("Cancelled: {}", old.summary), "{uid}");
        assert!(
            new.description
                .starts_with("Cancelled: this session is no longer in the plan")
        );
        // The caution line the event carried is still there.
        assert!(new.description.ends_with(&old.description), "{uid}");
    }
    assert!(
        said.contains(
            "and 12 event(s) of the calendar there cancelled (sessions no longer in the plan)"
        ),
        "{said}"
    );
    // The planned sessions: Mondays and Thursdays from week 3, none cancelled.
    let planned: Vec<&String> = moved
        .iter()
        .filter(|(_, e)| e.status.is_none())
        .map(|(u, _)| u)
        .collect();
    assert_eq!(planned.len(), 12);
    assert!(
        planned
            .iter()
            .all(|u| [Mon, Thu].contains(&weekday(u)) && date(u) >= "20270118")
    );
    // Before the span, and the other participant: not in the file, not cancelled.
    assert!(
        moved
            .keys()
            .all(|u| date(u) >= "20270118" && u.starts_with("T-001-"))
    );

    // Written again from the same plan: the cancelled events are kept as they
    // were (the same SEQUENCE and text), so nothing is raised twice.
    let said = calendar(
        &dir,
        &[
            "plan.toml",
            "--from",
            "2027-01-18",
            "--stamp",
            "2027-01-16T08:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    assert_eq!(events(&dir, "cal.ics"), moved);
    assert!(said.contains("and 12 event(s)"), "{said}");

    // Back to Wednesdays: the session is planned again, one higher still.
    dir.write("plan.toml", BASE);
    calendar(
        &dir,
        &[
            "plan.toml",
            "--from",
            "2027-01-18",
            "--stamp",
            "2027-01-17T08:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    let back = events(&dir, "cal.ics");
    let wed = cancelled.iter().find(|u| weekday(u) == Wed).unwrap();
    assert_eq!(back[*wed].status, None);
    assert_eq!(back[*wed].sequence, moved[*wed].sequence + 1);
    assert_eq!(back[*wed].summary, first[*wed].summary);
}

/// The same cancellations read by Python icalendar through
/// scripts/check-ics.py --previous.
#[test]
fn python_icalendar_sees_the_cancelled_events() {
    let Some(python) = common::python_with_icalendar("python_icalendar_sees_the_cancelled_events")
    else {
        return;
    };
    let dir = Scratch::new("cal-cancel-py");
    dir.write("plan.toml", BASE);
    calendar(
        &dir,
        &[
            "plan.toml",
            "--stamp",
            "2027-01-01T08:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    std::fs::copy(dir.path().join("cal.ics"), dir.path().join("before.ics")).unwrap();
    dir.write("plan.toml", mon_thu());
    calendar(
        &dir,
        &[
            "plan.toml",
            "--stamp",
            "2027-01-15T08:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    let r = run(dir.cmd().args([
        "schedule",
        "plan.toml",
        "--format",
        "json",
        "--out",
        "s.json",
    ]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let (passed, said) = common::check_ics_previous(python, &dir, "cal.ics", "before.ics");
    assert!(passed, "{said}");
    // 16 planned sessions (Monday and Thursday of 8 weeks); Wednesday and Friday
    // cancelled (16); Thursday new (8).
    assert!(said.contains("16 events for 16 planned sessions"), "{said}");
    assert!(said.contains("16 cancelled, 8 new"), "{said}");
    // The checker fails on a calendar that drops the events instead of cancelling
    // them: written to a fresh file, the old Wednesday and Friday UIDs are missing.
    calendar(
        &dir,
        &[
            "plan.toml",
            "--stamp",
            "2027-01-15T08:00:00Z",
            "--out",
            "fresh.ics",
        ],
    );
    let (passed, said) = common::check_ics_previous(python, &dir, "fresh.ics", "before.ics");
    assert!(!passed, "{said}");
    assert!(said.contains("missing from the new calendar"), "{said}");
}
