//! Participant-log helpers shared by the re-planning and fit tests: weigh-in and session
//! rows, a log's text, plans with a log, a simulated participant's log, and the JSON of a
//! run with a log.
#![allow(dead_code, unused_imports)] // not every test file uses every helper

use super::{Scratch, array, num, text};
use chrono::{Datelike, Days, NaiveDate, Weekday};
use dosewright::Error;
use dosewright::log::{load_log, parse_log};
use dosewright::model::energy::calibrate;
use dosewright::model::{BodyState, Bout};
use dosewright::plan::{Plan, parse_plan};
use dosewright::simulate::fit::{FitParameter, FitResult, fit};
use dosewright::simulate::integrate::State;
use dosewright::simulate::observed::{Observed, WeighIn, anchor};
use dosewright::simulate::{
    MassSource, RunMode, RunOutput, Simulation, WeekRecord, run, simulate, simulate_observed,
};

pub const HEADER: &str =
    "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note";

pub fn day_date(plan: &Plan, day: u32) -> NaiveDate {
    plan.protocol.start + Days::new(u64::from(day))
}

/// A weigh-in row (docs/file-formats.md section 3 columns); `{}` prints the shortest exact form of an f64.
pub fn weigh_row(date: NaiveDate, mass_kg: f64, body_fat: Option<f64>) -> String {
    let bf = body_fat.map_or(String::new(), |b| format!("{b}"));
    format!("{date},weigh-in,{mass_kg},{bf},,,,,,")
}

/// A session row; `met` empty means the plan's activity.
pub fn session_row(
    date: NaiveDate,
    minutes: f64,
    met: Option<f64>,
    hr: Option<f64>,
    rpe: Option<f64>,
    note: &str,
) -> String {
    let o = |x: Option<f64>| x.map_or(String::new(), |v| format!("{v}"));
    format!(
        "{date},session,,,{minutes},,{},{},{},{note}",
        o(met),
        o(hr),
        o(rpe)
    )
}

pub fn plain_session(date: NaiveDate, minutes: f64) -> String {
    session_row(date, minutes, None, None, None, "")
}

pub fn log_text(rows: &[String]) -> String {
    let mut s = format!("{HEADER}\n");
    for r in rows {
        s.push_str(r);
        s.push('\n');
    }
    s
}

pub fn plan_of(name: &str, toml: &str) -> Plan {
    parse_plan(name, toml).unwrap_or_else(|e| panic!("the test plan {name} is valid: {e}"))
}

pub fn observed(plan: &Plan, log: &str, as_of: Option<NaiveDate>) -> Observed {
    let (log, _warnings) =
        parse_log("log.csv", log, plan, as_of).unwrap_or_else(|e| panic!("the log parses: {e}"));
    Observed::from_log(plan, &log, as_of)
}

pub fn weigh(mass_kg: f64, body_fat_percent: Option<f64>) -> WeighIn {
    WeighIn {
        day: 0,
        date: NaiveDate::from_ymd_opt(2027, 3, 1).unwrap(),
        mass_kg,
        body_fat_percent,
    }
}

/// An invented participant, Mifflin-St Jeor (no measured RMR, so k_R = 1), a stated
/// 5 MET activity, three sessions a week from Monday 2027-01-04, no ramp.
pub const ADHERENCE_PLAN: &str = r#"[participant]
id = "AD-118"
sex = "female"
age_years = 40
height_cm = 165.0
mass_kg = 90.0
body_fat_percent = 40.0
pal = 1.5

[protocol]
start = 2027-01-04
weeks = 8
follow_up_weeks = 2
session_days = ["mon", "wed", "fri"]

[protocol.dose]
kcal_per_kg_week = 10.0

[activity]
met = 5.0
"#;

/// docs/model.md sections 3 and 4 by hand for ADHERENCE_PLAN: Mifflin-St Jeor for a woman of 40 y
/// and 165 cm, ACSM gross kcal/min, net of own RMR.
pub fn rmr_ad(m: f64) -> f64 {
    10.0 * m + 6.25 * 165.0 - 5.0 * 40.0 - 161.0
}
pub fn gross(met: f64, m: f64) -> f64 {
    met * 3.5 * m / 200.0
}
pub fn net(met: f64, m: f64) -> f64 {
    gross(met, m) - rmr_ad(m) / 1440.0
}

pub fn close(a: f64, b: f64, tol: f64, what: &str) {
    assert!((a - b).abs() <= tol, "{what}: {a} vs {b}");
}

pub fn json_of(r: &super::Run, what: &str) -> serde_json::Value {
    assert_eq!(r.code, Some(0), "{what} failed: {}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap_or_else(|e| panic!("{what} prints JSON: {e}"))
}
