//! Session sheets for the trainer's record: the minutes box asks for minutes at the
//! target intensity; a session on equipment (treadmill speed and grade, ergometer
//! watts, the ACSM equations) gets a field for the setting actually used; and a
//! re-printed week the log covers shows what was delivered (minutes, average heart
//! rate, RPE, from the log) beside what was prescribed, with later dates left blank.

mod common;
use common::{BASE, Scratch, array, edit, num, run};

fn sheets(dir: &Scratch, args: &[&str]) -> String {
    let mut all = vec!["sheets"];
    all.extend(args);
    let r = run(dir.cmd().args(&all));
    assert_eq!(r.code, Some(0), "{all:?}: {}", r.stderr);
    r.stdout
}

fn with_activity(activity: &str) -> Scratch {
    let dir = Scratch::new("sheets-delivered");
    dir.write("plan.toml", edit(BASE, &[("met = 4.0", activity)]));
    dir
}

#[test]
fn a_treadmill_session_asks_for_the_speed_and_grade_used() {
    let dir = with_activity("walking = { speed_kmh = 5.0, grade_percent = 2.0 }");
    let text = sheets(&dir, &["plan.toml", "--week", "1", "--format", "text"]);
    let lines: Vec<&str> = text.lines().filter(|l| l.contains("delivered")).collect();
    assert_eq!(lines.len(), 3, "{text}");
    for l in lines {
        assert!(l.contains("min at target intensity ________"), "{l}");
        assert!(
            l.contains("speed used ________ km/h at ________ % grade"),
            "{l}"
        );
    }
    sheets(&dir, &["plan.toml", "--week", "1", "--out", "s.html"]);
    let html = std::fs::read_to_string(dir.path().join("s.html")).unwrap();
    assert!(
        html.contains("<th class=\"rec\">km/h, % grade used</th>"),
        "{html}"
    );
    assert!(html.contains("<th class=\"rec\">min at target intensity</th>"));
    assert!(html.contains("colspan=\"5\">Delivered (fill in)"));
    // Ten columns whose widths add up to the page.
    let cols = html
        .split("<colgroup>")
        .nth(1)
        .unwrap()
        .split("</colgroup>")
        .next()
        .unwrap();
    let widths: Vec<f64> = cols
        .split("width:")
        .skip(1)
        .map(|w| w.split('%').next().unwrap().parse().unwrap())
        .collect();
    assert_eq!(widths.len(), 10);
    assert!(
        (widths.iter().sum::<f64>() - 100.0).abs() < 1e-9,
        "{widths:?}"
    );
    // In US units the speed is in mph.
    let us = sheets(
        &dir,
        &[
            "plan.toml",
            "--week",
            "1",
            "--format",
            "text",
            "--units",
            "us",
        ],
    );
    assert!(us.contains("speed used ________ mph"), "{us}");
}

#[test]
fn an_ergometer_session_asks_for_the_watts_and_a_met_session_for_nothing() {
    let dir = with_activity("cycling_watts = 100");
    let text = sheets(&dir, &["plan.toml", "--week", "1", "--format", "text"]);
    assert!(text.contains("watts used ________ W"), "{text}");
    sheets(&dir, &["plan.toml", "--week", "1", "--out", "s.html"]);
    let html = std::fs::read_to_string(dir.path().join("s.html")).unwrap();
    assert!(html.contains("<th class=\"rec\">W used</th>"));

    let dir = with_activity("met = 4.0");
    let text = sheets(&dir, &["plan.toml", "--week", "1", "--format", "text"]);
    assert!(!text.contains("used"), "{text}");
    sheets(&dir, &["plan.toml", "--week", "1", "--out", "s.html"]);
    let html = std::fs::read_to_string(dir.path().join("s.html")).unwrap();
    assert!(!html.contains(" used</th>"));
    assert!(html.contains("colspan=\"4\">Delivered (fill in)"));
}

const LOG: &str = "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n\
2027-01-04,session,,,40,,,131,13,\n\
2027-01-05,session,,,20,,,118,11,extra walk\n\
2027-01-08,session,,,0,,,,,ill\n\
2027-01-10,weigh-in,79.6,,,,,,,\n";

#[test]
fn a_reprinted_week_shows_the_log_beside_the_prescription() {
    let dir = with_activity("walking = { speed_kmh = 5.0, grade_percent = 2.0 }");
    dir.write("log.csv", LOG);
    let r = run(dir.cmd().args([
        "schedule",
        "plan.toml",
        "--log",
        "log.csv",
        "--format",
        "json",
    ]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let json: serde_json::Value = serde_json::from_str(&r.stdout).unwrap();
    let week1 = &array(&array(&json, "scenarios")[0], "weeks")[0];
    let prescribed = num(week1, "minutes_per_session") as u32;

    let text = sheets(
        &dir,
        &[
            "plan.toml",
            "--log",
            "log.csv",
            "--week",
            "1",
            "--format",
            "text",
        ],
    );
    let delivered: Vec<&str> = text.lines().filter(|l| l.contains("delivered")).collect();
    assert_eq!(delivered.len(), 3, "{text}");
    // Monday: the log's row; the prescription stays beside it.
    assert!(
        delivered[0].contains(
            "(log) min at target intensity 40  setting not in the log  avg HR 131  RPE 13"
        ),
        "{}",
        delivered[0]
    );
    assert!(
        text.contains(&format!("{prescribed} min at target")),
        "{text}"
    );
    // Wednesday: no row; Friday: recorded as missed.
    assert!(
        delivered[1].contains("min at target intensity none logged"),
        "{}",
        delivered[1]
    );
    assert!(
        delivered[2].contains("min at target intensity 0 (missed)"),
        "{}",
        delivered[2]
    );
    // Tuesday's row was not a planned session.
    assert!(
        text.contains("Also logged Tue 2027-01-05: 20 min at target, avg HR 118, RPE 11 (not a planned session)."),
        "{text}"
    );

    // Week 2 is after the log's last date: blanks to fill in.
    let week2 = sheets(
        &dir,
        &[
            "plan.toml",
            "--log",
            "log.csv",
            "--week",
            "2",
            "--format",
            "text",
        ],
    );
    assert!(!week2.contains("(log)"), "{week2}");
    assert_eq!(week2.matches("min at target intensity ________").count(), 3);

    sheets(
        &dir,
        &[
            "plan.toml",
            "--log",
            "log.csv",
            "--week",
            "1",
            "--out",
            "s.html",
        ],
    );
    let html = std::fs::read_to_string(dir.path().join("s.html")).unwrap();
    assert!(html.contains("Delivered (from the log)"), "{html}");
    assert!(html.contains("<td class=\"rec logged\">40</td>"), "{html}");
    assert!(html.contains("<td class=\"rec logged\">131</td>"));
    assert!(html.contains("Screening result: "));
}
