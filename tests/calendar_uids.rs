//! Calendar UIDs come from the participant and the session (date and bout), not the
//! plan's file name: a renamed plan keeps every UID, so a calendar program updates its
//! events instead of adding copies (RFC 5545 section 3.8.4.7: a UID is persistent and
//! globally unique). The events are read back with the Python icalendar package when
//! it is installed (an independent reader), else from the unfolded UID lines.

mod common;
use common::{BASE, Scratch, run};

/// The UIDs of the calendar at `path`, in file order.
fn uids(path: &std::path::Path) -> Vec<String> {
    let script = "import sys, icalendar\n\
                  cal = icalendar.Calendar.from_ical(open(sys.argv[1], 'rb').read())\n\
                  for e in cal.walk('VEVENT'): print(e['UID'])\n";
    if let Ok(out) = std::process::Command::new("python3")
        .args(["-c", script])
        .arg(path)
        .output()
        && out.status.success()
    {
        return String::from_utf8(out.stdout)
            .unwrap()
            .lines()
            .map(str::to_string)
            .collect();
    }
    // Unfold (3.1: a line starting with a space continues the previous one).
    let text = std::fs::read_to_string(path).unwrap().replace("\r\n ", "");
    text.lines()
        .filter_map(|l| l.strip_prefix("UID:"))
        .map(str::to_string)
        .collect()
}

#[test]
fn a_renamed_plan_keeps_every_uid_and_another_participant_gets_others() {
    let dir = Scratch::new("cal-uid");
    dir.write("plan.toml", BASE);
    dir.write("renamed.toml", BASE);
    dir.write(
        "other.toml",
        BASE.replace("id = \"T-001\"", "id = \"T-002\""),
    );
    for (plan, out) in [
        ("plan.toml", "a.ics"),
        ("renamed.toml", "b.ics"),
        ("other.toml", "c.ics"),
    ] {
        let r = run(dir.cmd().args(["calendar", plan, "--out", out]));
        assert_eq!(r.code, Some(0), "{}", r.stderr);
    }
    let a = uids(&dir.path().join("a.ics"));
    // 8 weeks of 3 session days.
    assert_eq!(a.len(), 24);
    assert_eq!(a, uids(&dir.path().join("b.ics")));
    let c = uids(&dir.path().join("c.ics"));
    assert_eq!(c.len(), 24);
    assert!(a.iter().all(|u| !c.contains(u)));
    // Each UID names the participant and the session's date and bout.
    assert!(a[0].starts_with("T-001-20270104-1-"), "{}", a[0]);
}
