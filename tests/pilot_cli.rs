//! The `pilot` command: import measurements into a register, analyse, write the
//! report, chart and scenario block; bad input exits 2 naming the file and row.

mod common;

use chrono::{TimeZone, Utc};
use common::{Scratch, run};
use dosewright::register::{Enrolment, Measure, Session, SqliteStore, Stamp, Store};

fn register(dir: &Scratch) {
    let mut store = SqliteStore::create(&dir.path().join("site.register")).unwrap();
    let stamp = Stamp::new("desk", Utc.with_ymd_and_hms(2027, 1, 4, 8, 0, 0).unwrap()).unwrap();
    for (code, arm) in [
        ("T-001", "exercise"),
        ("T-002", "exercise"),
        ("T-003", "exercise"),
    ] {
        let text = common::BASE.replace("\"T-001\"", &format!("\"{code}\""));
        store
            .enrol(
                &Enrolment {
                    plan_name: format!("{code}.toml"),
                    plan_text: text,
                    arm: Some(arm.into()),
                },
                &stamp,
            )
            .unwrap();
        for k in 0..24u64 {
            store
                .record(
                    code,
                    &Measure::Session(Session {
                        date: chrono::NaiveDate::from_ymd_opt(2027, 1, 4).unwrap()
                            + chrono::Days::new(2 * k),
                        minutes: 50.0,
                        compendium_code: None,
                        met: None,
                        watts: None,
                        speed_kmh: None,
                        avg_hr_bpm: None,
                        rpe: None,
                        note: String::new(),
                    }),
                    &stamp,
                )
                .unwrap();
        }
    }
}

const MEASUREMENTS: &str =
    "participant,kind,date,last_date,fat_kg,fat_free_kg,mass_kg,kcal_per_day,method
T-001,composition,2027-01-04,,30.4,49.6,80.0,,DXA
T-001,composition,2027-03-01,,29.3,49.4,78.7,,DXA
T-002,composition,2027-01-04,,30.4,49.6,80.0,,DXA
T-002,composition,2027-03-01,,29.6,49.5,79.1,,DXA
T-003,composition,2027-01-04,,30.4,49.6,80.0,,DXA
T-003,composition,2027-03-01,,29.0,49.3,78.3,,DXA
";

#[test]
fn pilot_imports_analyses_and_writes_the_next_study_values() {
    let dir = Scratch::new("pilot");
    register(&dir);
    dir.write("m.csv", MEASUREMENTS);
    let r = run(dir.cmd().args([
        "pilot",
        "site.register",
        "--import",
        "m.csv",
        "--by",
        "desk",
        "--name",
        "walking pilot",
        "--scenarios",
        "next.toml",
        "--chart",
        "chart.svg",
    ]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(
        r.stderr.contains("imported 6 measurement(s)"),
        "{}",
        r.stderr
    );
    assert!(r.stdout.contains("# Pilot analysis: walking pilot"));
    assert!(r.stdout.contains("T-003"));
    // Without a TEE the data cannot separate intake from the rest: the report says so.
    assert!(r.stdout.contains("cannot be told apart"));
    let block = std::fs::read_to_string(dir.path().join("next.toml")).unwrap();
    assert!(
        block.contains("[[scenario]]") && block.contains("EFFECTIVE"),
        "{block}"
    );
    let svg = std::fs::read_to_string(dir.path().join("chart.svg")).unwrap();
    assert!(svg.starts_with("<svg"));
    // JSON carries every number.
    let r = run(dir
        .cmd()
        .args(["pilot", "site.register", "--format", "json"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let v: serde_json::Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(v["participants"].as_array().unwrap().len(), 3);
}

#[test]
fn pilot_refuses_bad_measurements_with_exit_2() {
    let dir = Scratch::new("pilot-bad");
    register(&dir);
    dir.write("m.csv", MEASUREMENTS.replace("29.3,49.4", "29300,49.4"));
    let r = run(dir.cmd().args([
        "pilot",
        "site.register",
        "--import",
        "m.csv",
        "--by",
        "desk",
    ]));
    assert_eq!(r.code, Some(2), "{}", r.stderr);
    assert!(
        r.stderr.contains("m.csv:3") && r.stderr.contains("grams"),
        "{}",
        r.stderr
    );
    // Nothing was imported: the analysis finds no measurement.
    let r = run(dir.cmd().args(["pilot", "site.register"]));
    assert_eq!(r.code, Some(2), "{}", r.stderr);
    assert!(
        r.stderr
            .contains("no participant has a body-composition measurement"),
        "{}",
        r.stderr
    );
}
