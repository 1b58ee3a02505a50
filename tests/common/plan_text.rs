//! Plan-text helpers shared by the goal, compare and physiology tests: a plan built
//! from parts, one line set at a time, the library's simulation of it, and the real
//! binary run in a scratch folder.
#![allow(dead_code, unused_imports)] // not every test file uses every helper

use dosewright::commands::compare::{compare_report, with_added_scenarios};
use dosewright::model::energy::calibrate;
use dosewright::model::{BodyState, Bout, Compensation};
use dosewright::plan::{Plan, parse_plan};
use dosewright::simulate::goal::{GoalAnswer, GoalRequest, allowed_range, solve};
use dosewright::simulate::{Phase, Simulation, simulate};
use serde_json::Value;

/// An invented participant with body fat and RMR estimated (so the band has width).
pub const PARTICIPANT_ESTIMATED: &str = r#"[participant]
id = "CG-114"
sex = "female"
age_years = 45
height_cm = 166.0
mass_kg = 88.0
pal = 1.5
"#;

/// An invented participant with body fat and RMR both measured (a zero-width band).
pub const PARTICIPANT_MEASURED: &str = r#"[participant]
id = "CG-207"
sex = "male"
age_years = 52
height_cm = 180.0
mass_kg = 101.0
body_fat_percent = 31.0
rmr_kcal_per_day = 1850
pal = 1.5
"#;

/// The four scenarios most tests run: none compensated, lagged eating back, a mix, and
/// moving less. Each has `c_I (1 - beta) + c_A < 1`, so loss rises with the dose
/// (docs/model.md section 5).
pub const SCENARIOS: &str = r#"
[[scenario]]
name = "as prescribed"

[[scenario]]
name = "eats back 40%"
intake_fraction = 0.4
intake_lag_days = 21.0

[[scenario]]
name = "mixed"
intake_fraction = 0.25
intake_lag_days = 14.0
activity_fraction = 0.15
rmr_adaptation_kcal_per_kg = 5.0

[[scenario]]
name = "moves less 30%"
activity_fraction = 0.3
"#;

/// A whole plan: participant, protocol lines, the dose table's lines, optional ramp
/// and activity lines, then the scenarios.
pub fn plan_text(
    participant: &str,
    protocol: &str,
    dose: &str,
    ramp: &str,
    activity: &str,
    scenarios: &str,
) -> String {
    let ramp = if ramp.is_empty() {
        String::new()
    } else {
        format!("\n[protocol.ramp]\n{ramp}\n")
    };
    format!(
        "{participant}\n[protocol]\nstart = 2027-03-01\n{protocol}\n\n[protocol.dose]\n{dose}\n{ramp}\n[activity]\n{activity}\n{scenarios}"
    )
}

/// `text` with the one line that starts with `key =` replaced by `key = value`.
pub fn set_line(text: &str, key: &str, value: &str) -> String {
    let prefix = format!("{key} =");
    let hits = text.lines().filter(|l| l.starts_with(&prefix)).count();
    assert_eq!(hits, 1, "the line {prefix:?} must occur exactly once");
    text.lines()
        .map(|l| {
            if l.starts_with(&prefix) {
                format!("{key} = {value}")
            } else {
                l.to_string()
            }
        })
        .collect::<Vec<_>>()
        .join("\n")
        + "\n"
}

pub fn parse(text: &str) -> Plan {
    parse_plan("test.toml", text).unwrap_or_else(|e| panic!("the test plan is valid: {e}\n{text}"))
}

pub fn sim(text: &str) -> Simulation {
    simulate(&parse(text)).expect("the test plan simulates")
}

pub struct Out {
    pub code: Option<i32>,
    pub stdout: String,
    pub stderr: String,
}

/// A scratch folder that removes itself.
pub struct Scratch(tempfile::TempDir);

impl Scratch {
    pub fn new() -> Scratch {
        let dir = tempfile::Builder::new()
            .prefix("dosewright-compare-goal-")
            .tempdir()
            .expect("create a scratch folder");
        Scratch(dir)
    }
}

/// `dosewright SUBCOMMAND plan.toml ARGS...` with `plan` written to a scratch folder.
pub fn cli(plan: &str, subcommand: &str, args: &[&str]) -> Out {
    let dir = Scratch::new();
    std::fs::write(dir.0.path().join("plan.toml"), plan).expect("write the plan");
    let out = assert_cmd::Command::cargo_bin("dosewright")
        .expect("the dosewright binary is built")
        .current_dir(dir.0.path())
        .env("NO_COLOR", "1")
        .arg(subcommand)
        .arg("plan.toml")
        .args(args)
        .output()
        .expect("the binary runs");
    Out {
        code: out.status.code(),
        stdout: String::from_utf8(out.stdout).expect("stdout is UTF-8"),
        stderr: String::from_utf8(out.stderr).expect("stderr is UTF-8"),
    }
}

/// A run that must succeed with JSON on standard output.
pub fn cli_json(plan: &str, subcommand: &str, args: &[&str]) -> Value {
    let mut a = args.to_vec();
    a.extend(["--format", "json"]);
    let r = cli(plan, subcommand, &a);
    assert_eq!(
        r.code,
        Some(0),
        "{subcommand} {args:?} failed: {}",
        r.stderr
    );
    serde_json::from_str(&r.stdout).expect("valid JSON")
}

/// A run that must be refused as bad input: exit 2, nothing on standard output, and a
/// message on standard error containing every one of `needles`.
pub fn assert_usage_error(plan: &str, subcommand: &str, args: &[&str], needles: &[&str]) {
    let r = cli(plan, subcommand, args);
    assert_eq!(
        r.code,
        Some(2),
        "{subcommand} {args:?} must exit 2; stderr: {}",
        r.stderr
    );
    assert!(
        r.stdout.is_empty(),
        "{subcommand} {args:?} printed to stdout: {}",
        r.stdout
    );
    assert!(
        r.stderr.starts_with("error: "),
        "{args:?}: message starts with 'error: ': {}",
        r.stderr
    );
    for n in needles {
        assert!(
            r.stderr.contains(n),
            "{subcommand} {args:?}: message should mention {n:?}; got: {}",
            r.stderr
        );
    }
}

pub fn num(v: &Value, key: &str) -> f64 {
    let x = v
        .get(key)
        .unwrap_or_else(|| panic!("key {key:?} missing in {v}"))
        .as_f64()
        .unwrap_or_else(|| panic!("key {key:?} is not a number in {v}"));
    assert!(x.is_finite(), "{key} is finite");
    x
}

pub fn arr<'a>(v: &'a Value, key: &str) -> &'a Vec<Value> {
    v.get(key)
        .unwrap_or_else(|| panic!("key {key:?} missing"))
        .as_array()
        .unwrap_or_else(|| panic!("key {key:?} is not an array"))
}

pub fn s<'a>(v: &'a Value, key: &str) -> &'a str {
    v.get(key)
        .unwrap_or_else(|| panic!("key {key:?} missing in {v}"))
        .as_str()
        .unwrap_or_else(|| panic!("key {key:?} is not a string in {v}"))
}

/// A 16 + 8 week plan at 12 kcal/kg/week, participant with estimates.
pub fn compare_plan() -> String {
    plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 16\nfollow_up_weeks = 8\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_kg_week = 12.0",
        "weeks = 4",
        "compendium_code = \"17200\"",
        SCENARIOS,
    )
}

pub fn compensation(c_i: f64, c_a: f64) -> Compensation {
    Compensation {
        intake_fraction: c_i,
        activity_fraction: c_a,
        ..Compensation::default()
    }
}
