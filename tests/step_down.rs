//! The step-down after an absence (docs/model.md section 4, "Resuming after an
//! absence"): after a protocol week in which no planned session was delivered, the
//! next week gets 50% of the dose and the one after 75%, then the full dose again
//! (common practice; no published figure confirmed). The expected minutes are worked
//! here by hand from the plan's numbers: gross kcal/min = MET x 3.5 x kg / 200 (ACSM's
//! Guidelines for Exercise Testing and Prescription, 10th ed., the MET conversion),
//! minutes = ceil(fraction x dose / kcal per minute), at the week's reference mass.

mod common;
use common::{BASE, Scratch, array, edit, num, run};
use dosewright::simulate::prescription::Resumption;
use serde_json::Value;

/// 400 kcal gross a session at 4 MET, three sessions a week from Monday 2027-01-04.
fn plan(extra: &str) -> String {
    let mut p = edit(BASE, &[("kcal_per_week = 1200", "kcal_per_session = 400")]);
    p.push_str(extra);
    p
}

const HEADER: &str =
    "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note";

/// A log: week 1 delivered in full, the weeks in `absent` with no session, the other
/// weeks up to `through` delivered; a weigh-in each Monday up to week `through + 1`.
fn log(absent: &[u32], through: u32, minutes: u32) -> String {
    let start = chrono::NaiveDate::from_ymd_opt(2027, 1, 4).unwrap();
    let mut s = format!("{HEADER}\n");
    let mass = |w: u32| 80.0 - 0.25 * f64::from(w - 1);
    for w in 1..=through {
        let monday = start + chrono::Days::new(7 * u64::from(w - 1));
        s.push_str(&format!("{monday},weigh-in,{},,,,,,,\n", mass(w)));
        if !absent.contains(&w) {
            for d in [0u64, 2, 4] {
                let day = monday + chrono::Days::new(d);
                s.push_str(&format!("{day},session,,,{minutes},,,130,13,\n"));
            }
        }
    }
    // The Monday after: a weigh-in only, so the as-of date is that Monday and the
    // week it starts is not yet over.
    let next = start + chrono::Days::new(7 * u64::from(through));
    s.push_str(&format!("{next},weigh-in,{},,,,,,,\n", mass(through + 1)));
    s
}

fn schedule(plan_text: &str, log_text: Option<&str>) -> Value {
    let dir = Scratch::new("step-down");
    dir.write("plan.toml", plan_text);
    let mut cmd = dir.cmd();
    cmd.args(["schedule", "plan.toml", "--format", "json"]);
    if let Some(l) = log_text {
        dir.write("log.csv", l);
        cmd.args(["--log", "log.csv"]);
    }
    let r = run(&mut cmd);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap()
}

fn weeks(json: &Value) -> Vec<Value> {
    array(&array(json, "scenarios")[0], "weeks").clone()
}

/// Minutes at 4 MET of `fraction` of 400 kcal gross at `mass_kg`, rounded up to the
/// minute (the plan's default step), worked by hand.
fn by_hand(fraction: f64, mass_kg: f64) -> u32 {
    let per_min = 4.0 * 3.5 * mass_kg / 200.0;
    (fraction * 400.0 / per_min - 1e-9).ceil() as u32
}

#[test]
fn a_missed_week_steps_the_next_two_weeks_down_to_half_then_three_quarters() {
    let json = schedule(&plan(""), Some(&log(&[2], 2, 40)));
    let ws = weeks(&json);
    // Week 1 and week 2 (the absence itself) at the full dose; week 3 is the first
    // week back (50%), week 4 the second (75%), week 5 on the full dose.
    let fractions = [1.0, 1.0, 0.5, 0.75, 1.0, 1.0, 1.0, 1.0];
    for (w, f) in ws.iter().zip(fractions) {
        let m = num(w, "reference_mass_kg");
        let want = by_hand(f, m);
        assert_eq!(
            num(w, "minutes_per_session") as u32,
            want,
            "week {}: {f} of the dose at {m} kg",
            w["week"]
        );
        for s in array(w, "sessions") {
            assert_eq!(num(s, "minutes") as u32, want);
        }
        match w.get("step_down") {
            Some(n) => {
                assert_eq!(num(n, "fraction"), f, "week {}", w["week"]);
                assert!(f < 1.0);
            }
            None => assert_eq!(f, 1.0, "week {} has no step-down note", w["week"]),
        }
    }
    // Week 3's reference mass is the Monday weigh-in (79.5 kg): 50% of 400 kcal at
    // 4 x 3.5 x 79.5 / 200 = 5.565 kcal/min is 35.94 min, so 36 min.
    assert_eq!(num(&ws[2], "reference_mass_kg"), 79.5);
    assert_eq!(num(&ws[2], "minutes_per_session"), 36.0);
    assert_eq!(num(&ws[2]["step_down"], "week_back"), 1.0);
    assert_eq!(num(&ws[3]["step_down"], "week_back"), 2.0);
}

#[test]
fn without_an_absence_nothing_steps_down() {
    // Every week delivered: the same minutes as the plan at each week's mass.
    let json = schedule(&plan(""), Some(&log(&[], 3, 40)));
    for w in weeks(&json) {
        assert!(w.get("step_down").is_none(), "week {}", w["week"]);
        let m = num(&w, "reference_mass_kg");
        assert_eq!(num(&w, "minutes_per_session") as u32, by_hand(1.0, m));
    }
    // No log: a projection assumes every session is delivered.
    let json = schedule(&plan(""), None);
    assert!(weeks(&json).iter().all(|w| w.get("step_down").is_none()));
}

#[test]
fn one_session_in_a_week_is_not_an_absence() {
    // Week 2 with one session of three, on Wednesday (before the next Monday's
    // weigh-in, in date order).
    let l = log(&[2], 2, 40).replace(
        "2027-01-18,weigh-in",
        "2027-01-13,session,,,20,,,,,\n2027-01-18,weigh-in",
    );
    assert!(l.contains("2027-01-13,session"));
    let json = schedule(&plan(""), Some(&l));
    assert!(weeks(&json).iter().all(|w| w.get("step_down").is_none()));
}

#[test]
fn a_missed_week_back_starts_the_step_down_again() {
    let json = schedule(&plan(""), Some(&log(&[2, 3], 3, 40)));
    let ws = weeks(&json);
    // Week 3 was planned as the first week back (50%) and missed too, so week 4 is
    // the first week back again.
    assert_eq!(num(&ws[2]["step_down"], "fraction"), 0.5);
    assert_eq!(num(&ws[3]["step_down"], "fraction"), 0.5);
    assert_eq!(num(&ws[4]["step_down"], "fraction"), 0.75);
    assert!(ws[5].get("step_down").is_none());
    let m = num(&ws[3], "reference_mass_kg");
    assert_eq!(num(&ws[3], "minutes_per_session") as u32, by_hand(0.5, m));
}

#[test]
fn the_ramp_and_the_step_down_take_the_lower_fraction() {
    // A ramp from 0.4 over 4 weeks; r_w read from the schedule. The week gets
    // min(r_w, s) of the dose; the note only when s is the lower.
    let json = schedule(
        &plan("\n[protocol.ramp]\nweeks = 4\nstart_fraction = 0.4\n"),
        Some(&log(&[1], 1, 10)),
    );
    let ws = weeks(&json);
    let steps = [None, Some(0.5), Some(0.75), None];
    for (w, s) in ws.iter().zip(steps) {
        let r = num(w, "ramp_fraction");
        let f = s.map_or(r, |s: f64| s.min(r));
        let m = num(w, "reference_mass_kg");
        assert_eq!(
            num(w, "minutes_per_session") as u32,
            by_hand(f, m),
            "week {}",
            w["week"]
        );
        assert_eq!(
            w.get("step_down").is_some(),
            s.is_some_and(|s| s < r),
            "week {}: ramp {r}",
            w["week"]
        );
    }
}

#[test]
fn a_minutes_dose_steps_down_to_half_the_minutes() {
    // 150 min a week over three sessions: 50 min; the first week back 25, then 37.5
    // rounded up to 38.
    let p = edit(BASE, &[("kcal_per_week = 1200", "minutes_per_week = 150")]);
    let json = schedule(&p, Some(&log(&[2], 2, 50)));
    let mins: Vec<u32> = weeks(&json)
        .iter()
        .map(|w| num(w, "minutes_per_session") as u32)
        .collect();
    assert_eq!(mins, [50, 50, 25, 38, 50, 50, 50, 50]);
}

#[test]
fn the_sheet_the_calendar_and_the_schedule_say_so() {
    let dir = Scratch::new("step-down-words");
    dir.write("plan.toml", plan(""));
    dir.write("log.csv", log(&[2], 2, 40));
    let out = |args: &[&str]| {
        let r = run(dir.cmd().args(args));
        assert_eq!(r.code, Some(0), "{}", r.stderr);
        r.stdout
    };
    let table = out(&["schedule", "plan.toml", "--log", "log.csv"]);
    assert!(
        table.contains("Week 3: stepped down to 50% of the dose, week 1 back"),
        "{table}"
    );
    assert!(table.contains("Week 4: stepped down to 75% of the dose, week 2 back"));
    let sheet = out(&[
        "sheets",
        "plan.toml",
        "--log",
        "log.csv",
        "--week",
        "3",
        "--format",
        "text",
    ]);
    assert!(
        sheet.contains("After an absence: stepped down to 50% of the dose"),
        "{sheet}"
    );
    assert!(sheet.contains("common practice"));
    let cal = out(&[
        "calendar",
        "plan.toml",
        "--log",
        "log.csv",
        "--from",
        "2027-01-18",
        "--to",
        "2027-01-18",
        "--out",
        "-",
    ])
    .replace("\r\n ", "");
    assert!(
        cal.contains("After an absence: stepped down to 50%"),
        "{cal}"
    );
}

#[test]
fn the_rule_counts_weeks_with_planned_sessions_only() {
    let mut r = Resumption::default();
    assert_eq!(r.step(), None);
    r.after_week(3, 0);
    assert_eq!(r.step(), Some((1, 0.5)));
    // A week with nothing planned (all closed, or no exercise) changes nothing.
    r.after_week(0, 0);
    assert_eq!(r.step(), Some((1, 0.5)));
    r.after_week(3, 1);
    assert_eq!(r.step(), Some((2, 0.75)));
    r.after_week(3, 3);
    assert_eq!(r.step(), None);
    // An absence during the step-down starts it again.
    r.after_week(3, 0);
    r.after_week(3, 2);
    r.after_week(3, 0);
    assert_eq!(r.step(), Some((1, 0.5)));
}
