//! `log add`: weigh-ins in pounds (stored as kg), the refusal of an implausible
//! weigh-in with its override, rows placed by date, and `--date` defaulting to today.
//!
//! The pound is 0.45359237 kg exactly (the international yard and pound agreement of
//! 1959; NIST Special Publication 811, 2008, appendix B). The plausibility rule is
//! common practice (docs/file-formats.md, "Plausible weigh-ins"): 3 kg within 7 days,
//! plus 2% of the earlier mass per week of a longer gap.

mod common;
use common::{BASE, Scratch, run};

const KG_PER_LB: f64 = 0.453_592_37;
const HEADER: &str =
    "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n";

fn add(dir: &Scratch, args: &[&str]) -> common::Run {
    run(dir
        .cmd()
        .args(["log", "add", "plan.toml", "--log", "log.csv"])
        .args(args))
}

/// The mass cells of the log's weigh-ins, in file order, with their dates.
fn weigh_ins(dir: &Scratch) -> Vec<(String, f64)> {
    let text = std::fs::read_to_string(dir.path().join("log.csv")).unwrap();
    text.lines()
        .skip(1)
        .filter(|l| l.contains(",weigh-in,"))
        .map(|l| {
            let cells: Vec<&str> = l.split(',').collect();
            (cells[0].to_string(), cells[2].parse().unwrap())
        })
        .collect()
}

#[test]
fn pounds_are_stored_as_kg_and_read_back_as_the_same_pounds() {
    let dir = Scratch::new("log-lb");
    dir.write("plan.toml", BASE);
    for lb in [176.4, 175.0, 174.25] {
        let r = add(
            &dir,
            &[
                "--date",
                "2027-01-04",
                "--units",
                "us",
                "--weigh-in",
                &lb.to_string(),
            ],
        );
        assert_eq!(r.code, Some(0), "{}", r.stderr);
        let stored = weigh_ins(&dir).pop().unwrap().1;
        // lb -> kg by the exact factor, and back: the same pounds within rounding of
        // the stored decimal text (shortest round-trip form of an f64).
        assert!(
            (stored - lb * KG_PER_LB).abs() < 1e-9,
            "{lb} lb stored as {stored} kg"
        );
        assert!((stored / KG_PER_LB - lb).abs() < 1e-9);
        assert!(
            r.stderr.contains(&format!("(given as {lb} lb)")),
            "{}",
            r.stderr
        );
        std::fs::remove_file(dir.path().join("log.csv")).unwrap();
    }
}

#[test]
fn pounds_typed_as_kg_are_refused_naming_the_override_and_the_file_is_unchanged() {
    let dir = Scratch::new("log-jump");
    dir.write("plan.toml", BASE); // baseline 80 kg on 2027-01-04
    let log = format!("{HEADER}2027-01-04,weigh-in,80,,,,,,,\n");
    dir.write("log.csv", &log);
    // 176.4 lb = 80.01 kg typed without --units us.
    let r = add(&dir, &["--date", "2027-01-11", "--weigh-in", "176.4"]);
    assert_eq!(r.code, Some(2), "{}", r.stderr);
    assert!(r.stderr.contains("--accept-jump"), "{}", r.stderr);
    assert!(r.stderr.contains("--units us takes pounds"), "{}", r.stderr);
    assert_eq!(
        std::fs::read_to_string(dir.path().join("log.csv")).unwrap(),
        log
    );
    // Given in pounds it is fine.
    let r = add(
        &dir,
        &[
            "--date",
            "2027-01-11",
            "--units",
            "us",
            "--weigh-in",
            "176.4",
        ],
    );
    assert_eq!(r.code, Some(0), "{}", r.stderr);
}

#[test]
fn the_baseline_counts_when_the_log_has_no_weigh_in_yet() {
    let dir = Scratch::new("log-base");
    dir.write("plan.toml", BASE);
    // 4 weeks after the start: allowed 3 + 0.02 * 80 * 4 = 9.4 kg from 80 kg.
    let r = add(&dir, &["--date", "2027-02-01", "--weigh-in", "89.5"]);
    assert_eq!(r.code, Some(2), "{}", r.stderr);
    assert!(
        r.stderr
            .contains("the plan's baseline (80 kg on 2027-01-04)"),
        "{}",
        r.stderr
    );
    assert!(
        r.stderr
            .contains("more than the 9.4 kg allowed over 28 days"),
        "{}",
        r.stderr
    );
    assert!(!dir.path().join("log.csv").exists());
    let r = add(&dir, &["--date", "2027-02-01", "--weigh-in", "89.3"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    // The override adds the row; the reader's warning still says what is odd.
    let r = add(
        &dir,
        &["--date", "2027-02-02", "--weigh-in", "95", "--accept-jump"],
    );
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(
        r.stderr.contains("log-implausible-jump")
            || r.stderr.contains("body stores do not change that fast"),
        "{}",
        r.stderr
    );
}

#[test]
fn a_row_goes_to_its_place_by_date() {
    let dir = Scratch::new("log-place");
    dir.write("plan.toml", BASE);
    let log = format!(
        "{HEADER}2027-01-04,weigh-in,80,,,,,,,\n2027-01-06,session,,,30,,,,,\n2027-01-18,weigh-in,79,,,,,,,\n"
    );
    dir.write("log.csv", &log);
    let r = add(&dir, &["--date", "2027-01-11", "--weigh-in", "79.6"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(r.stderr.contains("added line 4"), "{}", r.stderr);
    let dates: Vec<String> = weigh_ins(&dir).into_iter().map(|(d, _)| d).collect();
    assert_eq!(dates, ["2027-01-04", "2027-01-11", "2027-01-18"]);
    // The other bytes are unchanged: removing the new line gives the old file.
    let now = std::fs::read_to_string(dir.path().join("log.csv")).unwrap();
    assert_eq!(now.replace("2027-01-11,weigh-in,79.6,,,,,,,\n", ""), log);
    // A weigh-in placed between two others is checked against the next one too:
    // 82.4 kg is 2.8 kg from the previous one (fine) and 3.4 kg from the next.
    let r = add(&dir, &["--date", "2027-01-13", "--session", "30"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let r = add(&dir, &["--date", "2027-01-15", "--weigh-in", "82.4"]);
    assert_eq!(r.code, Some(2), "{}", r.stderr);
    assert!(
        r.stderr.contains("the weigh-in of 2027-01-18 (79 kg"),
        "{}",
        r.stderr
    );
}

#[test]
fn the_date_defaults_to_today() {
    let dir = Scratch::new("log-today");
    // A plan that starts today, so that today is inside the protocol.
    let today = chrono::Local::now().date_naive();
    dir.write(
        "plan.toml",
        BASE.replace("start = 2027-01-04", &format!("start = {today}")),
    );
    let r = add(&dir, &["--session", "30"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let text = std::fs::read_to_string(dir.path().join("log.csv")).unwrap();
    assert!(text.contains(&format!("{today},session,,,30,")), "{text}");
}
