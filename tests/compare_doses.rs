//! `compare --doses` when one dose drives the model out of its range: that dose's row
//! says so and why, the other doses are kept; doses whose sessions exceed the
//! protocol's maximum are flagged (docs/commands.md, compare).
//!
//! Independent check: each dose's row against `schedule` of the plan edited to that
//! dose alone (its JSON weeks, or its exit 2 and error text for the dose out of
//! range), and the flag against the maximum written in the plan: 60 min.

mod common;

use common::{BASE, Scratch, array, edit, num, run};
use serde_json::Value;

const MAX: f64 = 60.0;

/// A light activity (2 MET) on the net basis, so a big weekly dose needs sessions of
/// a day or more (out of the model's range), with a 60-minute maximum flagged.
fn plan(kcal_per_week: &str) -> String {
    edit(
        BASE,
        &[
            (
                "kcal_per_week = 1200",
                &format!("kcal_per_week = {kcal_per_week}\nbasis = \"net\""),
            ),
            ("met = 4.0", "met = 2.0"),
            (
                "session_days = [\"mon\", \"wed\", \"fri\"]",
                "session_days = [\"mon\", \"wed\", \"fri\"]\nmax_session_minutes = 60\nover_max = \"flag\"",
            ),
        ],
    )
}

fn compare(dir: &Scratch, args: &[&str]) -> common::Run {
    dir.write("plan.toml", plan("450"));
    run(dir
        .cmd()
        .args(["compare", "plan.toml", "--doses", "150,9000,600"])
        .args(args))
}

/// `schedule` of the plan at `dose` alone.
fn schedule(dir: &Scratch, dose: &str) -> common::Run {
    let name = format!("plan-{dose}.toml");
    dir.write(&name, plan(dose));
    run(dir.cmd().args(["schedule", &name, "--format", "json"]))
}

#[test]
fn the_out_of_range_dose_gets_its_reason_and_the_others_stay() {
    let dir = Scratch::new("compare-doses");
    let r = compare(&dir, &["--format", "json"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let j: Value = serde_json::from_str(&r.stdout).unwrap();
    let d = &j["dose_response"];
    assert_eq!(num(d, "max_session_minutes"), MAX);
    let rows = array(d, "doses");
    let doses: Vec<f64> = rows.iter().map(|x| num(x, "dose")).collect();
    assert_eq!(doses, [150.0, 9000.0, 600.0], "the order asked");
    for row in rows {
        let dose = format!("{}", num(row, "dose"));
        let s = schedule(&dir, &dose);
        if dose == "9000" {
            // The plan at this dose alone fails with exit 2; the row carries the same
            // reason and no numbers.
            assert_eq!(s.code, Some(2), "{}", s.stderr);
            let why = row["out_of_range"].as_str().expect("a reason");
            assert!(
                why.starts_with("scenario \"as prescribed\" on day 0"),
                "{why}"
            );
            let what = why.split_once("): ").unwrap().1;
            assert!(s.stderr.contains(what), "{what} / {}", s.stderr);
            assert!(array(row, "scenarios").is_empty());
            assert!(row["longest_session_minutes"].is_null());
            assert_eq!(row["over_max"], false);
            continue;
        }
        assert_eq!(s.code, Some(0), "{}", s.stderr);
        assert!(row["out_of_range"].is_null());
        let sj: Value = serde_json::from_str(&s.stdout).unwrap();
        let m0 = num(&sj["baseline"], "mass_kg");
        let weeks = array(&array(&sj, "scenarios")[0], "weeks");
        let protocol: Vec<&Value> = weeks.iter().filter(|w| w["phase"] == "protocol").collect();
        // Each checkpoint equals the schedule's week (JSON rounds to 4 decimals).
        for p in array(&array(row, "scenarios")[0], "rows") {
            let w = &weeks[num(p, "week") as usize - 1];
            let change = num(&w["end"], "mass_kg") - m0;
            assert!((num(p, "mass_change_kg") - change).abs() < 2e-4);
            assert_eq!(p["minutes_per_session"], w["minutes_per_session"]);
        }
        // The flag: some protocol week's minutes before the policy over 60.
        let before = |w: &Value| {
            w["over_max"]["minutes_before"]
                .as_f64()
                .unwrap_or_else(|| num(w, "minutes_per_session"))
        };
        let over = protocol.iter().any(|w| before(w) > MAX);
        assert_eq!(row["over_max"], over, "dose {dose}");
        let longest = protocol
            .iter()
            .map(|w| num(w, "minutes_per_session"))
            .fold(0.0, f64::max);
        assert_eq!(num(row, "longest_session_minutes"), longest);
        // 150 kcal/week is 50 a session, well under the hour; 600 is 200, over it.
        assert_eq!(over, dose == "600", "dose {dose}: longest {longest}");
    }
}

#[test]
fn the_table_and_csv_say_which_dose_and_why() {
    let dir = Scratch::new("compare-doses-text");
    let t = compare(&dir, &[]);
    assert_eq!(t.code, Some(0), "{}", t.stderr);
    assert!(
        t.stdout.contains("out of the model's range"),
        "{}",
        t.stdout
    );
    assert!(
        t.stdout
            .contains("Dose 9000 kcal/week: out of the model's valid range in scenario"),
        "{}",
        t.stdout
    );
    assert!(t.stdout.contains("| 600 *"), "{}", t.stdout);
    assert!(
        t.stdout
            .contains("* Sessions over the maximum of 60 min in some week"),
        "{}",
        t.stdout
    );
    let c = compare(&dir, &["--format", "csv"]);
    assert_eq!(c.code, Some(0), "{}", c.stderr);
    let mut rd = csv::Reader::from_reader(c.stdout.as_bytes());
    let rows: Vec<csv::StringRecord> = rd.records().map(|x| x.unwrap()).collect();
    let of = |dose: &str| -> Vec<&csv::StringRecord> {
        rows.iter()
            .filter(|r| &r[1] == dose && r[5].is_empty())
            .collect()
    };
    let out = of("9000");
    assert_eq!(out.len(), 1);
    assert_eq!(&out[0][4], "out-of-range");
    assert!(of("600").iter().all(|r| &r[4] == "over-max"));
    assert!(!of("150").is_empty() && of("150").iter().all(|r| r[4].is_empty()));
    assert!(
        c.stderr
            .contains("Dose 9000 kcal/week: out of the model's valid range")
    );
}

#[test]
fn any_other_failure_still_stops_the_command() {
    // A dose outside the allowed range is a bad request, not a row.
    let dir = Scratch::new("compare-doses-bad");
    dir.write("plan.toml", plan("450"));
    let r = run(dir
        .cmd()
        .args(["compare", "plan.toml", "--doses", "150,20000"]));
    assert_eq!(r.code, Some(2));
    assert!(
        r.stderr.contains("--doses: 20000 is out of range"),
        "{}",
        r.stderr
    );
    // The plan's own dose out of range still fails the whole command: there is no
    // comparison to show.
    dir.write("own.toml", plan("9000"));
    let r = run(dir.cmd().args(["compare", "own.toml", "--doses", "150"]));
    assert_eq!(r.code, Some(2));
    assert!(r.stdout.is_empty());
}
