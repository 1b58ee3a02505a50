//! Staff hours from the sessions participants are expected to attend, the supervision
//! model (group size, stations, opening hours) and the peak concurrent need
//! (docs/file-formats.md, `[staffing]`; docs/commands.md, cohort).
//!
//! Every expected value is worked by hand below from the study's own numbers: a
//! time-fixed dose (`minutes_per_week`), so each session's length is known without
//! the model, attendance as a probability per session, and drop-out as a weekly
//! hazard (a participant is still exercising in week w with probability (1 - h)^w:
//! the hazard is tried in week 1 too, docs/file-formats.md, `[uncertainty]`).

mod common;

use common::{Scratch, array, num, run};
use serde_json::Value;

/// Four weeks, Monday, Wednesday and Friday from a Monday, 135 minutes a week at
/// target (45 per session) with 5 minutes of warm-up and 5 of cool-down: 55 minutes a
/// session on site.
fn study(uncertainty: &str, staffing: &str, calendar: &str) -> String {
    format!(
        r#"[study]
name = "staffing check"

[protocol]
start = 2027-09-06
weeks = 4
follow_up_weeks = 0
session_days = ["mon", "wed", "fri"]

[protocol.warm_up]
minutes = 5
met = 2.5

[protocol.cool_down]
minutes = 5
met = 2.0

[activity]
met = 4.0
label = "brisk walk"

[[arm]]
name = "control"

[[arm]]
name = "walk"
dose = {{ minutes_per_week = 135 }}

{uncertainty}
{staffing}
{calendar}
"#
    )
}

const ROSTER: &str = "id,sex,age_years,height_cm,mass_kg,body_fat_percent,rmr_kcal_per_day,intake_kcal_per_day,pal,exercises_regularly,known_disease,signs_or_symptoms,medical_clearance,arm
STF-001,female,44,162.5,84.2,41.0,,,1.50,false,false,false,false,control
STF-002,male,51,179.0,98.6,31.5,,,1.55,false,false,false,false,control
STF-003,female,39,168.0,88.0,40.0,,,1.45,false,false,false,false,walk
STF-004,male,47,181.0,101.0,30.0,,,1.50,false,false,false,false,walk
STF-005,female,55,160.0,79.5,43.0,,,1.40,false,false,false,false,walk
STF-006,male,42,175.0,95.0,29.0,,,1.60,false,false,false,false,walk
";

/// Participants in the dosed arm, sessions a week, minutes a session on site.
const WALKERS: f64 = 4.0;
const SESSIONS: f64 = 3.0;
const SESSION_MIN: f64 = 45.0 + 5.0 + 5.0;
const WEEKS: usize = 4;

fn cohort(dir: &Scratch, study_text: &str, extra: &[&str]) -> common::Run {
    dir.write("study.toml", study_text);
    dir.write("roster.csv", ROSTER);
    run(dir
        .cmd()
        .args(["cohort", "study.toml", "--roster", "roster.csv", "--quiet"])
        .args(extra))
}

fn json(dir: &Scratch, study_text: &str, extra: &[&str]) -> Value {
    let mut args = vec!["--format", "json"];
    args.extend_from_slice(extra);
    let r = cohort(dir, study_text, &args);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap()
}

fn close(what: &str, got: f64, want: f64, tol: f64) {
    assert!(
        (got - want).abs() <= tol,
        "{what}: got {got}, want {want} (allowed {tol})"
    );
}

const NO_SPREAD: &str = "rmr_error = 0\nbody_fat_error_percent = 0";

#[test]
fn attendance_scales_the_hours_and_the_peak_by_hand() {
    let dir = Scratch::new("staffing-attendance");
    let text = study(
        &format!("[uncertainty]\n{NO_SPREAD}\nattendance = 0.8"),
        "[staffing]\ngroup_size = 3\nstations = 3\nopening_hours = { mon = \"07:00-08:00\", wed = \"07:00-09:00\", fri = \"07:00-09:00\" }",
        "[calendar]\nsession_time = \"07:30\"",
    );
    let j = json(&dir, &text, &[]);
    // By hand: 4 walkers x 3 sessions x 4 weeks x 55 min x 0.8 attended / 60
    // = 2112 / 60 = 35.2 h; each week 8.8 h; the control arm none.
    let a = 0.8;
    let total = WALKERS * SESSIONS * WEEKS as f64 * SESSION_MIN * a / 60.0;
    assert!((total - 35.2).abs() < 1e-9);
    let sh = &j["staff_hours"];
    close("total", num(sh, "total"), total, 1e-4);
    close("peak", num(sh, "peak_per_week"), total / WEEKS as f64, 1e-4);
    for h in array(sh, "by_week") {
        close("week", h.as_f64().unwrap(), 8.8, 1e-4);
    }
    let walk = array(&j, "arms")
        .iter()
        .find(|x| x["name"] == "walk")
        .unwrap();
    close("arm", num(&walk["staff_hours"], "total"), total, 1e-4);
    let s = &j["staffing"];
    close("attendance", num(s, "attendance"), a, 0.0);
    close("expected", num(s, "expected_session_hours"), total, 1e-4);
    // Supervisor-hours at full groups of 3: 35.2 / 3.
    close("supervisor", num(s, "supervisor_hours"), total / 3.0, 1e-4);
    // Everyone starts at 07:30: 4 x 0.8 = 3.2 at once in every week (no drop-out),
    // the first Monday first; 4 stations, ceil(3.2 / 3) = 2 supervisors.
    let p = &s["peak"];
    assert_eq!(p["week"], 1);
    assert_eq!(p["date"], "2027-09-06");
    assert_eq!(p["weekday"], "mon");
    assert_eq!(p["time"], "07:30");
    close("at once", num(p, "participants"), WALKERS * a, 1e-9);
    assert_eq!(p["stations_needed"], 4);
    assert_eq!(p["supervisors_needed"], 2);
    // 07:30 + 55 min = 08:25, after Monday's 08:00 closing; 4 stations needed, 3 there.
    assert_eq!(s["opening_hours_hold"], false);
    let problems: Vec<&str> = array(s, "problems")
        .iter()
        .map(|x| x.as_str().unwrap())
        .collect();
    assert_eq!(problems.len(), 2, "{problems:?}");
    assert!(
        problems.iter().any(|p| p.contains("4 stations")),
        "{problems:?}"
    );
    assert!(
        problems
            .iter()
            .any(|p| p.starts_with("mon:") && p.contains("55 min")),
        "{problems:?}"
    );
    // The table says the same.
    let t = cohort(&dir, &text, &[]);
    assert_eq!(t.code, Some(0), "{}", t.stderr);
    assert!(t.stdout.contains("35.2 h in all"), "{}", t.stdout);
    assert!(t.stdout.contains("attendance 80%"), "{}", t.stdout);
    assert!(t.stdout.contains("do NOT hold"), "{}", t.stdout);
}

#[test]
fn wide_enough_hours_hold_and_no_uncertainty_counts_every_session() {
    let dir = Scratch::new("staffing-hold");
    let text = study(
        "",
        "[staffing]\nstations = 4\nopening_hours = { mon = \"07:00-09:00\", wed = \"07:00-09:00\", fri = \"07:00-09:00\" }",
        "[calendar]\nsession_time = \"07:30\"",
    );
    let j = json(&dir, &text, &[]);
    // Without [uncertainty] every planned session is attended: 4 x 3 x 4 x 55 / 60 = 44 h.
    let total = WALKERS * SESSIONS * WEEKS as f64 * SESSION_MIN / 60.0;
    close("total", num(&j["staff_hours"], "total"), total, 1e-4);
    let s = &j["staffing"];
    assert_eq!(s["opening_hours_hold"], true);
    assert!(array(s, "problems").is_empty());
    assert_eq!(s["peak"]["stations_needed"], 4);
    assert!(s["supervisor_hours"].is_null());
    assert!(s["peak"]["supervisors_needed"].is_null());
}

#[test]
fn without_a_session_time_the_sessions_spread_over_the_opening_hours() {
    let dir = Scratch::new("staffing-spread");
    let text = study(
        &format!("[uncertainty]\n{NO_SPREAD}\nattendance = 0.8"),
        "[staffing]\nstations = 1\nopening_hours = { mon = \"07:00-09:00\", wed = \"07:00-10:00\", fri = \"07:00-10:00\" }",
        "",
    );
    let j = json(&dir, &text, &[]);
    // Each session day: 4 x 0.8 x 55 = 176 participant-minutes expected. Monday is
    // open 120 min (176 / 120 = 1.4667 at once), Wednesday and Friday 180 (0.9778):
    // Monday of week 1 is the busiest; 2 stations are needed and the site has 1, and
    // 176 participant-minutes exceed 1 station x 120 min on Monday (not on the others).
    let day = WALKERS * 0.8 * SESSION_MIN;
    let p = &j["staffing"]["peak"];
    assert_eq!(p["weekday"], "mon");
    assert!(p["time"].is_null());
    // The JSON rounds to 4 decimals.
    close("at once", num(p, "participants"), day / 120.0, 5e-5 + 1e-12);
    assert_eq!(p["stations_needed"], 2);
    let problems = array(&j["staffing"], "problems");
    assert_eq!(problems.len(), 2, "{problems:?}");
    assert!(
        problems[1]
            .as_str()
            .unwrap()
            .starts_with("mon: 176 participant-minutes")
    );
}

#[test]
fn drop_out_and_attendance_by_hand_over_many_draws() {
    let dir = Scratch::new("staffing-dropout");
    let (a, h): (f64, f64) = (0.8, 0.1);
    let text = study(
        &format!("[uncertainty]\n{NO_SPREAD}\nattendance = {a}\ndropout_per_week = {h}"),
        "[staffing]\ngroup_size = 2",
        "[calendar]\nsession_time = \"18:00\"",
    );
    let draws = 400;
    let j = json(&dir, &text, &["--draws", &draws.to_string()]);
    // A walker exercises K weeks: P(K = k) = (1 - h)^k h for k < 4, P(K = 4) = (1 - h)^4,
    // so E[K] = sum over w of (1 - h)^w. Each exercising week holds 3 sessions of
    // 55 min, each attended with probability a: hours = a x 165 x K / 60.
    let q = 1.0 - h;
    let probs: Vec<f64> = (0..=WEEKS)
        .map(|k| {
            if k < WEEKS {
                q.powi(k as i32) * h
            } else {
                q.powi(WEEKS as i32)
            }
        })
        .collect();
    assert!((probs.iter().sum::<f64>() - 1.0).abs() < 1e-12);
    let ek: f64 = probs.iter().enumerate().map(|(k, p)| k as f64 * p).sum();
    let ek2: f64 = probs
        .iter()
        .enumerate()
        .map(|(k, p)| (k * k) as f64 * p)
        .sum();
    let closed: f64 = (1..=WEEKS).map(|w| q.powi(w as i32)).sum();
    assert!((ek - closed).abs() < 1e-12);
    let per_week = a * SESSIONS * SESSION_MIN / 60.0;
    let want = WALKERS * per_week * ek;
    // The mean over WALKERS x draws independent runs: 4 standard errors.
    let runs = WALKERS * f64::from(draws);
    let se = WALKERS * per_week * ((ek2 - ek * ek) / runs).sqrt();
    let got = num(&j["staff_hours"], "total");
    close("total with drop-out", got, want, 4.0 * se);
    // Without drop-out the same study would give 4 x 0.8 x 165 x 4 / 60 = 35.2 h.
    assert!(got < 35.2 - 4.0 * se, "{got}");
    // Week 1: a walker is in with probability 0.9 and attends with 0.8; at 18:00 the
    // expected participants at once are 4 x 0.9 x 0.8 = 2.88 (binomial SE over runs),
    // and week 1 is the busiest (the expectation falls week by week).
    let p = &j["staffing"]["peak"];
    let se1 = a * WALKERS * (q * h / runs).sqrt();
    close(
        "peak at once",
        num(p, "participants"),
        WALKERS * q * a,
        4.0 * se1 + 0.05,
    );
    assert_eq!(p["week"], 1);
    close(
        "supervisor-hours",
        num(&j["staffing"], "supervisor_hours"),
        got / 2.0,
        1e-4,
    );
    assert!(j["staffing"]["opening_hours_hold"].is_null());
}

#[test]
fn the_staffing_csv_table() {
    let dir = Scratch::new("staffing-csv");
    let text = study(
        &format!("[uncertainty]\n{NO_SPREAD}\nattendance = 0.8"),
        "[staffing]\ngroup_size = 3\nopening_hours = { mon = \"07:00-12:00\", wed = \"07:00-12:00\", fri = \"07:00-12:00\" }",
        "[calendar]\nsession_time = \"07:30\"",
    );
    let r = cohort(&dir, &text, &["--format", "csv", "--csv-table", "staffing"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let mut rd = csv::Reader::from_reader(r.stdout.as_bytes());
    let head = rd.headers().unwrap().clone();
    let rows: Vec<csv::StringRecord> = rd.records().map(|x| x.unwrap()).collect();
    let col = |name: &str| head.iter().position(|h| h == name).unwrap();
    assert_eq!(rows.len(), 3, "{}", r.stdout);
    assert_eq!(&rows[0][col("row")], "arm control");
    assert_eq!(&rows[0][col("expected_session_hours")], "0.0");
    assert_eq!(&rows[1][col("row")], "arm walk");
    let trial = &rows[2];
    assert_eq!(&trial[col("row")], "trial as allocated");
    let total: f64 = trial[col("expected_session_hours")].parse().unwrap();
    close("csv total", total, 35.2, 1e-4);
    let sup: f64 = trial[col("supervisor_hours")].parse().unwrap();
    close("csv supervisor", sup, 35.2 / 3.0, 1e-4);
    assert_eq!(&trial[col("peak_time")], "07:30");
    assert_eq!(&trial[col("stations_needed")], "4");
    assert_eq!(&trial[col("supervisors_needed")], "2");
    assert_eq!(&trial[col("opening_hours_hold")], "true");
    // --csv-table without --format csv is refused.
    let bad = cohort(&dir, &text, &["--csv-table", "staffing"]);
    assert_eq!(bad.code, Some(2));
    assert!(bad.stderr.contains("--csv-table"), "{}", bad.stderr);
}

#[test]
fn bad_staffing_tables_name_the_key() {
    let dir = Scratch::new("staffing-bad");
    for (staffing, key, words) in [
        (
            "[staffing]\nopening_hours = { mon = \"7-12\" }",
            "staffing.opening_hours.mon",
            "HH:MM-HH:MM",
        ),
        (
            "[staffing]\nopening_hours = { tue = \"12:00-07:00\" }",
            "staffing.opening_hours.tue",
            "closes before it opens",
        ),
        (
            "[staffing]\ngroup_size = 0",
            "staffing.group_size",
            "1 to 100",
        ),
        (
            "[staffing]\nstations = 2.5",
            "staffing.stations",
            "whole number",
        ),
        (
            "[staffing]\nopening_hours = { monday = \"07:00-08:00\" }",
            "monday",
            "unknown",
        ),
    ] {
        let r = cohort(&dir, &study("", staffing, ""), &[]);
        assert_eq!(r.code, Some(2), "{staffing}: {}", r.stderr);
        assert!(r.stderr.contains(key), "{staffing}: {}", r.stderr);
        assert!(r.stderr.contains(words), "{staffing}: {}", r.stderr);
        assert!(r.stdout.is_empty());
    }
}
