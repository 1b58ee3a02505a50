//! A calendar written again after a re-plan updates in calendar programs: the same
//! UIDs (from the participant and the session), SEQUENCE raised by one on every event
//! whose content changed and kept on the others (RFC 5545 section 3.8.7.4), DTSTAMP
//! the time of writing (3.8.7.2; `--stamp` fixes it). The calendars are read back
//! with the icalendar crate's parser here, and by the Python icalendar package
//! (scripts/check-ics.py --previous, an independent reader; skipped with a note when
//! it is missing).

mod common;
use common::{BASE, Scratch, run};
use std::collections::BTreeMap;

/// One event as read back: SEQUENCE, DTSTAMP and the content lines (every
/// property but those two).
#[derive(Debug, Clone, PartialEq)]
struct Ev {
    sequence: u32,
    stamp: String,
    content: Vec<String>,
}

/// The events of the calendar at `path` by UID, read with the icalendar crate's
/// parser (not the program's own reader).
fn events(path: &std::path::Path) -> BTreeMap<String, Ev> {
    let text = std::fs::read_to_string(path).unwrap();
    let unfolded = icalendar::parser::unfold(&text);
    let cal = icalendar::parser::read_calendar(&unfolded).expect("an iCalendar file");
    cal.components
        .iter()
        .filter(|c| c.name.as_str() == "VEVENT")
        .map(|c| {
            let get = |k: &str| c.find_prop(k).map(|p| p.val.as_str().to_string());
            let content = c
                .properties
                .iter()
                .filter(|p| !matches!(p.name.as_str(), "DTSTAMP" | "SEQUENCE"))
                .map(|p| format!("{}:{}", p.name.as_str(), p.val.as_str()))
                .collect();
            (
                get("UID").expect("a UID"),
                Ev {
                    sequence: get("SEQUENCE").map_or(0, |s| s.parse().unwrap()),
                    stamp: get("DTSTAMP").expect("a DTSTAMP"),
                    content,
                },
            )
        })
        .collect()
}

/// A log with one weigh-in of 76 kg on Monday of week 3 (2027-01-18): 4 kg below the
/// plan's 80 kg, so the minutes from week 3 on change and those before do not.
const LOG: &str = "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n\
2027-01-04,session,,,60,,,,,\n2027-01-06,session,,,60,,,,,\n2027-01-08,session,,,60,,,,,\n\
2027-01-11,session,,,60,,,,,\n2027-01-13,session,,,60,,,,,\n2027-01-15,session,,,60,,,,,\n\
2027-01-18,weigh-in,76,,,,,,,\n";

fn calendar(dir: &Scratch, args: &[&str]) {
    let mut all = vec!["calendar"];
    all.extend(args);
    let r = run(dir.cmd().args(&all));
    assert_eq!(r.code, Some(0), "{all:?}: {}", r.stderr);
}

fn scratch() -> Scratch {
    let dir = Scratch::new("cal-seq");
    dir.write("plan.toml", BASE);
    dir.write("log.csv", LOG);
    dir
}

#[test]
fn a_replan_raises_the_sequence_of_changed_events_only() {
    let dir = scratch();
    let cal = dir.path().join("cal.ics");
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
    let first = events(&cal);
    assert_eq!(first.len(), 24, "8 weeks of 3 sessions");
    assert!(first.values().all(|e| e.sequence == 0));
    assert!(first.values().all(|e| e.stamp == "20270101T080000Z"));

    // The same plan again, later: nothing changed, so nothing is raised.
    calendar(
        &dir,
        &[
            "plan.toml",
            "--stamp",
            "2027-01-03T08:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    let again = events(&cal);
    assert_eq!(
        again.keys().collect::<Vec<_>>(),
        first.keys().collect::<Vec<_>>()
    );
    for (uid, e) in &again {
        assert_eq!(e.sequence, 0, "{uid}");
        assert_eq!(e.content, first[uid].content, "{uid}");
        assert_eq!(e.stamp, "20270103T080000Z");
    }

    // Re-planned from the log: the same UIDs; each changed event one higher.
    calendar(
        &dir,
        &[
            "plan.toml",
            "--log",
            "log.csv",
            "--stamp",
            "2027-01-18T12:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    let replanned = events(&cal);
    assert_eq!(
        replanned.keys().collect::<Vec<_>>(),
        first.keys().collect::<Vec<_>>()
    );
    let mut changed = 0;
    for (uid, e) in &replanned {
        let before = &again[uid];
        let want = if e.content == before.content { 0 } else { 1 };
        assert_eq!(e.sequence, want, "{uid}");
        changed += want;
        // Before the weigh-in the prescription is the plan's: unchanged.
        let date = &uid["T-001-".len().."T-001-".len() + 8];
        if date < "20270118" {
            assert_eq!(e.sequence, 0, "{uid} is before the weigh-in");
        }
    }
    // From week 3 the minutes follow 76 kg instead of the projection.
    assert!(changed >= 18, "{changed} events changed");
    let summary = |m: &BTreeMap<String, Ev>, uid: &str| {
        m[uid]
            .content
            .iter()
            .find(|l| l.starts_with("SUMMARY:"))
            .cloned()
    };
    let week3 = replanned
        .keys()
        .find(|u| u.starts_with("T-001-20270118-1-"))
        .unwrap()
        .clone();
    assert_ne!(
        summary(&replanned, &week3),
        summary(&again, &week3),
        "week 3's minutes"
    );

    // Written again from the same log: nothing new, nothing raised.
    calendar(
        &dir,
        &[
            "plan.toml",
            "--log",
            "log.csv",
            "--stamp",
            "2027-01-19T12:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    let same = events(&cal);
    for (uid, e) in &same {
        assert_eq!(e.sequence, replanned[uid].sequence, "{uid}");
    }

    // A renamed plan writes the same events: same UIDs, same SEQUENCE.
    dir.write("renamed.toml", BASE);
    calendar(
        &dir,
        &[
            "renamed.toml",
            "--log",
            "log.csv",
            "--stamp",
            "2027-01-19T12:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    let renamed = events(&cal);
    assert_eq!(renamed, same);

    // Back to the plan without the log: the changed events change again, to 2.
    calendar(
        &dir,
        &[
            "plan.toml",
            "--stamp",
            "2027-01-20T12:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    for (uid, e) in &events(&cal) {
        let want = if renamed[uid].sequence == 1 { 2 } else { 0 };
        assert_eq!(e.sequence, want, "{uid}");
    }
}

#[test]
fn dtstamp_is_the_time_of_writing() {
    let dir = scratch();
    let before = chrono::Utc::now().timestamp();
    calendar(&dir, &["plan.toml", "--out", "cal.ics"]);
    let after = chrono::Utc::now().timestamp();
    for (uid, e) in events(&dir.path().join("cal.ics")) {
        let t = chrono::NaiveDateTime::parse_from_str(&e.stamp, "%Y%m%dT%H%M%SZ")
            .unwrap()
            .and_utc()
            .timestamp();
        assert!(
            before <= t && t <= after,
            "{uid}: {} not between the run's start and end",
            e.stamp
        );
    }
}

#[test]
fn a_file_at_out_that_is_not_a_calendar_is_written_over_with_a_note() {
    let dir = scratch();
    dir.write("notes.txt", "my notes\n");
    let r = run(dir
        .cmd()
        .args(["calendar", "plan.toml", "--out", "notes.txt"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(
        r.stderr.contains("note: notes.txt: not an iCalendar file"),
        "{}",
        r.stderr
    );
    let cal = events(&dir.path().join("notes.txt"));
    assert_eq!(cal.len(), 24);
    assert!(cal.values().all(|e| e.sequence == 0));
}

/// The same re-plan read by Python icalendar through scripts/check-ics.py --previous.
#[test]
fn python_icalendar_sees_the_same_uids_and_raised_sequences() {
    let Some(python) =
        common::python_with_icalendar("python_icalendar_sees_the_same_uids_and_raised_sequences")
    else {
        return;
    };
    let dir = scratch();
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
    calendar(
        &dir,
        &[
            "plan.toml",
            "--log",
            "log.csv",
            "--stamp",
            "2027-01-18T12:00:00Z",
            "--out",
            "cal.ics",
        ],
    );
    let r = run(dir.cmd().args([
        "schedule",
        "plan.toml",
        "--log",
        "log.csv",
        "--format",
        "json",
        "--out",
        "s.json",
    ]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let (passed, said) = common::check_ics_previous(python, &dir, "cal.ics", "before.ics");
    assert!(passed, "{said}");
    assert!(said.contains("same UIDs, SEQUENCE raised on"), "{said}");
    let raised: u32 = said
        .split("SEQUENCE raised on ")
        .nth(1)
        .and_then(|s| s.split(' ').next())
        .and_then(|n| n.parse().ok())
        .expect("a count");
    assert!(raised >= 18, "{said}");
    // The checker itself fails on a calendar whose SEQUENCE was not raised: the old
    // file read against the new one has every changed event one too low.
    let (passed, wrong) = common::check_ics_previous(python, &dir, "before.ics", "cal.ics");
    assert!(!passed, "{wrong}");
}
