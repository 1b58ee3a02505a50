//! The four over-maximum policies of a session (`over_max` of `[protocol]`, docs/file-formats.md
//! section 1): flag, cap, add a session, split into two bouts, and what each says when the
//! week still does not fit.
//!
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::schedule_contract::*;
use common::*;
use serde_json::Value;

/// BASE needs about 71.4 min a session (400 kcal at 5.6 kcal/min); these cut it.
fn over_max_plan(max: u32, policy: &str, extra: &str) -> String {
    base_with(
        &[(
            "weeks = 8",
            &format!("weeks = 8\nmax_session_minutes = {max}\nover_max = \"{policy}\"{extra}"),
        )],
        "",
    )
}

fn over_max_message(j: &Value) -> String {
    let ws = array(j, "warnings");
    assert_eq!(warning_codes(j), ["session-over-max"], "{ws:?}");
    text(&ws[0], "message").to_string()
}

fn weekly_gross(w: &Value) -> f64 {
    array(w, "sessions")
        .iter()
        .map(|s| num(s, "gross_kcal"))
        .sum()
}

#[test]
fn over_max_flag_keeps_the_minutes_and_warns() {
    let j = schedule_json(&over_max_plan(30, "flag", ""));
    let msg = over_max_message(&j);
    assert!(msg.contains("(flag: the minutes were kept)"), "{msg}");
    for w in array(&j["scenarios"][0], "weeks") {
        assert!(w["minutes_per_session"].as_u64().unwrap() > 30);
        assert!(weekly_gross(w) >= 1200.0 - 1e-3);
    }
}

#[test]
fn over_max_cap_cuts_to_the_maximum_and_reports_the_shortfall() {
    let j = schedule_json(&over_max_plan(30, "cap", ""));
    let msg = over_max_message(&j);
    assert!(msg.contains("(cap: sessions cut to the maximum, "), "{msg}");
    assert!(
        msg.contains(" kcal (gross) short of the prescribed dose in all"),
        "{msg}"
    );
    assert!(!msg.contains("still over"), "{msg}");
    for w in array(&j["scenarios"][0], "weeks") {
        for s in array(w, "sessions") {
            assert_eq!(s["minutes"], 30);
        }
        assert!(weekly_gross(w) < 1200.0, "a capped week falls short");
    }
}

#[test]
fn over_max_add_session_spreads_the_week_over_spare_days() {
    let j = schedule_json(&over_max_plan(
        45,
        "add-session",
        "\nspare_days = [\"tue\", \"thu\"]",
    ));
    let msg = over_max_message(&j);
    assert!(
        msg.contains("(add-session: up to 2 extra session(s) a week on spare days)"),
        "{msg}"
    );
    assert!(!msg.contains("still over"), "{msg}");
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-04",
            weeks: 8,
            follow_up_weeks: 0,
            days: &["mon", "tue", "wed", "thu", "fri"],
            sessions_per_week: Some(5),
            uniform_minutes: true,
        },
    );
    for w in array(&j["scenarios"][0], "weeks") {
        let sessions = array(w, "sessions");
        assert!(
            sessions
                .iter()
                .all(|s| s["minutes"].as_u64().unwrap() <= 45)
        );
        // The week's energy is kept.
        assert!(weekly_gross(w) >= 1200.0 - 1e-3, "{}", weekly_gross(w));
    }
}

#[test]
fn over_max_split_gives_two_equal_bouts_a_day() {
    let j = schedule_json(&over_max_plan(40, "split", ""));
    let msg = over_max_message(&j);
    assert!(
        msg.contains("(split: each session given as two equal bouts on the same day)"),
        "{msg}"
    );
    assert!(!msg.contains("still over"), "{msg}");
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-04",
            weeks: 8,
            follow_up_weeks: 0,
            days: &["mon", "wed", "fri"],
            sessions_per_week: Some(3),
            uniform_minutes: true,
        },
    );
    for w in array(&j["scenarios"][0], "weeks") {
        let sessions = array(w, "sessions");
        assert_eq!(sessions.len(), 6, "two bouts on each of three days");
        for pair in sessions.chunks(2) {
            assert_eq!(pair[0]["date"], pair[1]["date"]);
            assert_eq!(pair[0]["minutes"], pair[1]["minutes"]);
            assert!(pair[0]["minutes"].as_u64().unwrap() <= 40);
        }
        assert!(weekly_gross(w) >= 1200.0 - 1e-3);
    }
}

#[test]
fn over_max_policies_that_cannot_fit_say_still_over() {
    for policy in ["add-session", "split"] {
        let j = schedule_json(&over_max_plan(20, policy, "\nspare_days = [\"sat\"]"));
        let msg = over_max_message(&j);
        assert!(
            msg.contains("; still over the maximum after that in weeks 1-8"),
            "{policy}: {msg}"
        );
    }
}

#[test]
fn cap_never_leaves_a_session_over_the_maximum() {
    // 400 kcal a session at 5.6 kcal/min. A step larger than the maximum is refused
    // (in the bad-plan table); a step that fits keeps every session within it.
    for (max, step) in [(20, 20), (40, 15), (20, 7), (45, 1)] {
        let plan = base_with(
            &[(
                "weeks = 8",
                &format!(
                    "weeks = 2\nmax_session_minutes = {max}\nover_max = \"cap\"\nround_minutes_to = {step}"
                ),
            )],
            "",
        );
        let j = schedule_json(&plan);
        assert_eq!(
            warning_codes(&j),
            ["session-over-max"],
            "max {max} step {step}"
        );
        for w in array(&j["scenarios"][0], "weeks") {
            for s in array(w, "sessions") {
                let m = s["minutes"].as_u64().unwrap();
                assert!(m <= max, "max {max} step {step}: capped session of {m} min");
                assert_eq!(
                    m % step,
                    0,
                    "max {max} step {step}: {m} min is not a whole step"
                );
                // The largest whole step within the maximum (docs/design.md section 1, "Cap").
                assert!(
                    m + step > max,
                    "max {max} step {step}: {m} min is cut too far"
                );
            }
        }
    }
}

#[test]
fn add_session_needs_a_free_weekday() {
    // All seven weekdays as session days leaves nothing to add to, also with an
    // explicitly empty spare_days.
    let seven = "[\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\", \"sun\"]";
    for spare in ["", "\nspare_days = []"] {
        let plan = base_with(
            &[
                ("[\"mon\", \"wed\", \"fri\"]", seven),
                (
                    "weeks = 8",
                    &format!(
                        "weeks = 2\nmax_session_minutes = 5\nover_max = \"add-session\"{spare}"
                    ),
                ),
            ],
            "",
        );
        let (_d, r) = run_plan(&plan, &["check"]);
        assert_eq!(r.code, Some(2), "{spare:?}: {}", r.stdout);
        assert_eq!(r.stdout, "");
        assert_eq!(
            r.stderr,
            "error: plan.toml:20:12: protocol.over_max: \"add-session\" needs a free weekday, but all seven are session days; use \"split\" or \"cap\"\n"
        );
    }
    // Six session days leave Sunday, and the extra session goes there.
    let six = base_with(
        &[
            (
                "[\"mon\", \"wed\", \"fri\"]",
                "[\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\"]",
            ),
            (
                "weeks = 8",
                "weeks = 2\nmax_session_minutes = 30\nover_max = \"add-session\"",
            ),
        ],
        "",
    );
    let j = schedule_json(&six);
    let msg = over_max_message(&j);
    assert!(
        msg.contains("(add-session: up to 1 extra session(s) a week on spare days)"),
        "{msg}"
    );
    for w in array(&j["scenarios"][0], "weeks") {
        let days: Vec<&str> = array(w, "sessions")
            .iter()
            .map(|s| weekday_word(date(text(s, "date"))))
            .collect();
        assert_eq!(days, ["mon", "tue", "wed", "thu", "fri", "sat", "sun"]);
    }
}

#[test]
fn cap_says_what_length_it_cut_to() {
    // Maximum 40, 15-minute steps: sessions are cut to 30 minutes (docs/design.md section 1, "Cap": the largest
    // whole step that fits), yet the warning says "sessions cut to the maximum".
    let plan = base_with(
        &[(
            "weeks = 8",
            "weeks = 2\nmax_session_minutes = 40\nover_max = \"cap\"\nround_minutes_to = 15",
        )],
        "",
    );
    let j = schedule_json(&plan);
    assert_eq!(j["scenarios"][0]["weeks"][0]["minutes_per_session"], 30);
    let msg = over_max_message(&j);
    assert!(!msg.contains("cut to the maximum"), "{msg}");
    assert!(msg.contains("30 min"), "{msg}");
}
