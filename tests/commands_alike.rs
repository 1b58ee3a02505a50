//! Commands behave alike (docs/commands.md section 1, "One plan or the demo"): every
//! command that takes one plan runs the built-in demo without it, with the same
//! numbers as the demo's file; `check` validates a study file too; a study file given
//! for a plan is named as one. And the command line's clear messages: a bad
//! `RAYON_NUM_THREADS`, a fractional age shown as given.

mod common;

use common::hard_edges::*;
use common::*;

/// The demo's name in reports, and the name of its file in the scratch folder.
const DEMO_NAME: &str = "built-in demo plan (plans/demo.toml)";

/// Each plan-taking command with its other arguments; the plan goes right after the
/// command's name(s).
const COMMANDS: [(&[&str], &[&str]); 6] = [
    (&["schedule"], &["--format", "json"]),
    (&["compare"], &["--format", "json"]),
    (
        &["goal"],
        &["--lose-kg", "3", "--by-week", "10", "--format", "json"],
    ),
    (&["fit"], &["--log", "log.csv", "--format", "json"]),
    (&["check"], &[]),
    (&["sheets"], &["--week", "2", "--format", "text"]),
];

#[test]
fn every_plan_taking_command_runs_the_demo_without_a_plan() {
    let dir = fresh("alike");
    assert_eq!(DEMO_PLAN, include_str!("../plans/demo.toml"));
    for (cmd, rest) in COMMANDS {
        let without = run(dir.cmd().args(cmd).args(rest));
        let with = run(dir.cmd().args(cmd).arg("plan.toml").args(rest));
        assert_eq!(
            without.code,
            Some(0),
            "{cmd:?} without a plan: {}",
            without.stderr
        );
        assert_eq!(with.code, Some(0), "{cmd:?} plan.toml: {}", with.stderr);
        // The same output but for the plan's name.
        assert_eq!(
            without.stdout.replace(DEMO_NAME, "plan.toml"),
            with.stdout,
            "{cmd:?}"
        );
    }
    // The calendar too (it writes a file).
    let a = run(dir.cmd().args(["calendar", "--out", "a.ics"]));
    let b = run(dir.cmd().args(["calendar", "plan.toml", "--out", "b.ics"]));
    assert_eq!(
        (a.code, b.code),
        (Some(0), Some(0)),
        "{} {}",
        a.stderr,
        b.stderr
    );
    let read = |n: &str| std::fs::read_to_string(dir.path().join(n)).unwrap();
    assert_eq!(read("a.ics").lines().count(), read("b.ics").lines().count());
}

#[test]
fn every_plan_argument_is_optional_in_the_help_but_log_add() {
    // The rule of docs/commands.md: `[PLAN]` everywhere; `log add` writes a
    // participant's log and needs that participant's plan, unless the participant is
    // in a register (`--register`), which holds the plan.
    for (cmd, _) in COMMANDS {
        let r = run(dosewright().args(cmd).arg("--help"));
        assert!(r.stdout.contains("[PLAN]"), "{cmd:?}: {}", r.stdout);
    }
    let dir = fresh("alike-log-add");
    let r = run(dir
        .cmd()
        .args(["log", "add", "--log", "new-log.csv", "--weigh-in", "80"]));
    assert_eq!(r.code, Some(2), "{}", r.stderr);
    assert!(r.stderr.contains("<PLAN>"), "{}", r.stderr);
    assert!(!dir.path().join("new-log.csv").exists());
}

#[test]
fn check_validates_a_study_file_with_its_screening_and_cautions() {
    let dir = fresh("alike-study");
    let r = run(dir.cmd().args(["check", "study.toml"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(
        r.stdout.starts_with("study.toml: the study is valid"),
        "{}",
        r.stdout
    );
    for arm in ["control", "low", "high"] {
        assert!(
            r.stdout.contains(&format!("  - {arm}: ")),
            "{arm}: {}",
            r.stdout
        );
    }
    assert!(r.stdout.contains("Screening (ACSM 2015"), "{}", r.stdout);
    for c in dosewright::safety::CAUTIONS {
        assert!(r.stdout.contains(c), "{c}");
    }
    // The same study runs as a cohort, so what `check` passes runs.
    let c = run(dir
        .cmd()
        .args(["cohort", "study.toml", "--roster", "roster.csv", "--quiet"]));
    assert_eq!(c.code, Some(0), "{}", c.stderr);
}

#[test]
fn a_study_given_for_a_plan_is_named_and_points_to_cohort() {
    let dir = fresh("alike-study-plan");
    for cmd in [&["schedule"][..], &["compare"], &["goal"], &["sheets"]] {
        let mut args: Vec<&str> = cmd.to_vec();
        args.push("study.toml");
        if cmd == ["goal"] {
            args.extend(["--lose-kg", "3", "--by-week", "4"]);
        }
        if cmd == ["sheets"] {
            args.extend(["--week", "1", "--format", "text"]);
        }
        let r = run(dir.cmd().args(&args));
        assert_eq!(r.code, Some(2), "{args:?}");
        assert!(r.stdout.is_empty());
        assert!(
            r.stderr.contains("is a study file")
                && r.stderr.contains("dosewright cohort study.toml"),
            "{args:?}: {}",
            r.stderr
        );
    }
}

#[test]
fn an_invalid_rayon_num_threads_is_refused_with_what_is_allowed() {
    let dir = fresh("alike-rayon");
    let cohort = ["cohort", "study.toml", "--roster", "roster.csv", "--quiet"];
    for bad in ["abc", "0", "-2", "2.5", "100000"] {
        let r = run(dir.cmd().args(cohort).env("RAYON_NUM_THREADS", bad));
        assert_eq!(r.code, Some(2), "{bad}: {}", r.stderr);
        assert!(r.stdout.is_empty());
        assert!(
            r.stderr.starts_with(&format!("error: RAYON_NUM_THREADS={bad}: allowed a whole number of worker threads from 1 to 256")),
            "{bad}: {}",
            r.stderr
        );
    }
    // A good value runs, and --threads takes precedence over a bad one.
    let good = run(dir.cmd().args(cohort).env("RAYON_NUM_THREADS", "2"));
    assert_eq!(good.code, Some(0), "{}", good.stderr);
    let over = run(dir
        .cmd()
        .args(cohort)
        .args(["--threads", "2"])
        .env("RAYON_NUM_THREADS", "abc"));
    assert_eq!(over.code, Some(0), "{}", over.stderr);
    assert_eq!(good.stdout, over.stdout);
}

#[test]
fn a_fractional_age_is_shown_as_given() {
    let plan = base_with(&[("age_years = 40", "age_years = 40.6")], "");
    assert!(
        plan.contains("age_years = 40.6"),
        "the base plan's age line moved"
    );
    let (_d, r) = run_plan(&plan, &["check"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(r.stdout.contains(", 40.6 years,"), "{}", r.stdout);
}

#[test]
fn command_line_dates_name_the_days_of_the_month() {
    use dosewright::cli::values::date;
    // The days of each month of 2027 and of the leap year 2028 (Gregorian calendar:
    // 30 days hath September, April, June and November; February 28, 29 in a leap
    // year, a year divisible by 4 and not by 100 unless by 400).
    let days = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
    let names = [
        "January",
        "February",
        "March",
        "April",
        "May",
        "June",
        "July",
        "August",
        "September",
        "October",
        "November",
        "December",
    ];
    for (year, leap) in [(2027, false), (2028, true), (2100, false), (2000, true)] {
        for m in 0..12 {
            let n = days[m] + u32::from(leap && m == 1);
            assert!(date(&format!("{year}-{:02}-{n:02}", m + 1)).is_ok());
            let e = date(&format!("{year}-{:02}-{:02}", m + 1, n + 1)).unwrap_err();
            assert!(
                e.contains(&format!("{} {year} has {n} days", names[m])),
                "{e}"
            );
        }
    }
    assert!(
        date("2027-00-10")
            .unwrap_err()
            .contains("month 0 does not exist")
    );
    assert!(date("10.01.2027").unwrap_err().contains("YYYY-MM-DD"));
}

#[test]
fn numbers_on_the_command_line_name_a_decimal_comma() {
    use dosewright::cli::values::{number, positive, week};
    assert_eq!(number("82.5"), Ok(82.5));
    assert!(
        number("82,5")
            .unwrap_err()
            .contains("write 82.5 with a point")
    );
    assert!(number("1,000,5").unwrap_err().starts_with("not a number"));
    assert!(number("inf").is_err() && number("NaN").is_err());
    assert!(positive("0").is_err() && positive("-3").is_err());
    assert_eq!(week("12"), Ok(12));
    assert!(week("-1").unwrap_err().contains("negative"));
    assert!(week("2.5").unwrap_err().contains("whole number"));
}
