//! `sheets`: the weekly session sheets for the trainer, as HTML and as text. Snapshots
//! of the example plan's week 4 (a closure week) and the demo's week 1, the dates and
//! weekdays, a Karvonen heart-rate range checked by hand, the self-contained HTML, one
//! page per week with the cautions on each, escaping, several participants in one
//! file, the log, and the week selection. Bad command lines are in
//! the usage catalogue (`tests/cases/usage/`, run by `tests/catalogues.rs`) with every
//! other command's.

mod common;

use chrono::{Datelike, NaiveDate, Weekday};
use common::*;
use dosewright::commands::LogInput;
use dosewright::commands::sheets::{WeekSelection, sheet_input, sheet_weeks};
use dosewright::plan::parse_plan;
use dosewright::report::sheets::{self, Paper, SheetInput};
use dosewright::safety::CAUTIONS;

/// The example plan with a harder walk (5.6 km/h at 3% grade), the cycle ergometer at
/// 60% of VO2 reserve and a 60-minute cap: vigorous sessions whose heart-rate targets
/// the tests work out by hand (the shipped example is moderate).
fn example_text() -> &'static str {
    static TEXT: std::sync::OnceLock<String> = std::sync::OnceLock::new();
    TEXT.get_or_init(|| {
        let edits = [
            (
                "walking = { speed_kmh = 4.8, grade_percent = 1.0 }",
                "walking = { speed_kmh = 5.6, grade_percent = 3.0 }",
            ),
            ("vo2_reserve_percent = 50", "vo2_reserve_percent = 60"),
            ("max_session_minutes = 75", "max_session_minutes = 60"),
        ];
        let mut t = include_str!("../plans/ex-206-rotation-heart-rate.toml").to_string();
        for (old, new) in edits {
            assert_eq!(t.matches(old).count(), 1, "{old}");
            t = t.replace(old, new);
        }
        t
    })
}
const EXAMPLE_NAME: &str = "ex-206-rotation-heart-rate.toml";
const DEMO_LOG: &str = include_str!("../demo-data/demo-017-log.csv");
const SPLIT: &str = include_str!("../plans/ex-201-walking-net-split.toml");

/// `sheets` on `plan` (written as `name`; the built-in demo when None) in a fresh
/// folder, `--format text` to standard output; must succeed.
fn text_of(plan: Option<(&str, &str)>, args: &[&str]) -> String {
    let dir = Scratch::new("sheets-text");
    let mut cmd = dir.cmd();
    cmd.arg("sheets");
    if let Some((name, text)) = plan {
        dir.write(name, text);
        cmd.arg(name);
    }
    let r = run(cmd.args(args).args(["--format", "text"]));
    assert_eq!(r.code, Some(0), "{args:?}: {}", r.stderr);
    r.stdout
}

/// `sheets` as HTML into `sheets.html` in a fresh folder; the file's text.
fn html_of(plan: Option<(&str, &str)>, args: &[&str]) -> String {
    let dir = Scratch::new("sheets-html");
    let mut cmd = dir.cmd();
    cmd.arg("sheets");
    if let Some((name, text)) = plan {
        dir.write(name, text);
        cmd.arg(name);
    }
    let r = run(cmd.args(args).args(["--out", "sheets.html"]));
    assert_eq!(r.code, Some(0), "{args:?}: {}", r.stderr);
    assert_eq!(r.stdout, "", "a written file prints nothing");
    assert!(r.stderr.ends_with("wrote sheets.html\n"), "{}", r.stderr);
    std::fs::read_to_string(dir.path().join("sheets.html")).unwrap()
}

fn example() -> Option<(&'static str, &'static str)> {
    Some((EXAMPLE_NAME, example_text()))
}

/// The pages of an HTML file (the text after each `<section class="sheet` or
/// `"sheet dense">`).
fn pages(html: &str) -> Vec<&str> {
    html.split("<section class=\"sheet").skip(1).collect()
}

/// The blocks of a text file (one per page).
fn blocks(text: &str) -> Vec<&str> {
    text.split(&format!("\n{}\n\n", "=".repeat(78))).collect()
}

/// The text of HTML, tags removed and entities read (for phrases across elements).
fn visible(html: &str) -> String {
    let mut out = String::new();
    let mut in_tag = false;
    for c in html.chars() {
        match c {
            '<' => in_tag = true,
            '>' if in_tag => {
                in_tag = false;
                out.push(' ');
            }
            c if !in_tag => out.push(c),
            _ => {}
        }
    }
    let out = out
        .replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&quot;", "\"")
        .replace("&apos;", "'")
        .replace("&amp;", "&");
    out.split_whitespace().collect::<Vec<_>>().join(" ")
}

// ---------------------------------------------------------------------------
// Snapshots
// ---------------------------------------------------------------------------

#[test]
fn snapshots_of_the_example_closure_week_and_the_demo_first_week() {
    insta::assert_snapshot!("example_week_4_html", html_of(example(), &["--week", "4"]));
    insta::assert_snapshot!("example_week_4_text", text_of(example(), &["--week", "4"]));
    insta::assert_snapshot!("demo_week_1_html", html_of(None, &["--week", "1"]));
    insta::assert_snapshot!("demo_week_1_text", text_of(None, &["--week", "1"]));
}

// ---------------------------------------------------------------------------
// What the pages say
// ---------------------------------------------------------------------------

#[test]
fn dates_and_weekdays_are_the_calendars() {
    // Week 4 of a plan starting on Monday 2027-03-01 starts 21 days later.
    let start = NaiveDate::from_ymd_opt(2027, 3, 1).unwrap();
    assert_eq!(start.weekday(), Weekday::Mon);
    let week4 = start + chrono::Days::new(21);
    assert_eq!(week4, NaiveDate::from_ymd_opt(2027, 3, 22).unwrap());
    let t = text_of(example(), &["--week", "4"]);
    assert!(
        t.starts_with("Session sheet: TRN-042, week 4 of 12 (Mon 2027-03-22 to Sun 2027-03-28)\n"),
        "{t}"
    );
    // Sessions on Monday and Wednesday; Friday 2027-03-26 (Good Friday) is closed.
    for (d, wd) in [
        ("2027-03-22", Weekday::Mon),
        ("2027-03-24", Weekday::Wed),
        ("2027-03-26", Weekday::Fri),
    ] {
        assert_eq!(date(d).weekday(), wd, "{d}");
    }
    assert!(t.contains("\nMon 2027-03-22  treadmill walk\n"), "{t}");
    assert!(t.contains("\nWed 2027-03-24  treadmill walk\n"), "{t}");
    assert!(t.contains("\nFri 2027-03-26  Closed: no session.\n"), "{t}");
    assert!(
        t.contains("\nMake-up: 1 session(s) closed; 264 of 264 kcal spread over the week's other sessions (make_up = \"spread\", within the maximum).\n"),
        "{t}"
    );
    // Week 5 starts with Easter Monday closed.
    let t5 = text_of(example(), &["--week", "5"]);
    assert!(
        t5.contains("\nMon 2027-03-29  Closed: no session.\n"),
        "{t5}"
    );
    // The demo's first sessions: Mon, Wed, Fri from Monday 2027-01-11.
    let d = text_of(None, &["--week", "1"]);
    assert_eq!(date("2027-01-11").weekday(), Weekday::Mon);
    for day in ["Mon 2027-01-11", "Wed 2027-01-13", "Fri 2027-01-15"] {
        assert!(
            d.contains(&format!("\n{day}  treadmill walk, brisk\n")),
            "{day}"
        );
    }
    assert!(d.contains("(Mon 2027-01-11 to Sun 2027-01-17)"), "{d}");
}

#[test]
fn the_demo_first_week_matches_the_schedule_and_its_hand_arithmetic() {
    // docs/walkthrough.md: 12 kcal/kg/week x 104.0 kg / 3 sessions x 0.5 (ramp) = 208 kcal; at
    // 4.3 MET a 104.0 kg body spends 4.3 x 3.5 x 104.0 / 200 = 7.826 kcal/min (ACSM
    // kcal/min formula), so 208 / 7.826 = 26.6 min, rounded up to 27; 27 min give
    // 211 kcal gross. Moderate by MET (3.0-5.9, ACSM GETP 10th ed., docs/references.md
    // 6.2): RPE 12-13.
    let d = text_of(None, &["--week", "1"]);
    assert!(d.contains("Minutes computed for a body mass of 104.0 kg (measured at baseline)."));
    assert!(d.contains("  intensity  Compendium 17200 (2011), 4.3 MET\n"));
    assert_eq!(
        d.matches("  session    27 min at target; 211 kcal\n")
            .count(),
        3
    );
    assert!(d.contains("moderate by MET; HR: no target range; RPE 12-13 (Borg 6-20); talk test: can talk in full sentences, but not sing"));
    assert!(d.contains("Heart-rate targets: none (the plan gives no resting heart rate)"));
}

#[test]
fn karvonen_ranges_checked_by_hand() {
    // Karvonen MJ, Kentala E, Mustala O 1957, Ann Med Exp Biol Fenn 35:307
    // (docs/references.md section 6.3): THR = HRrest + i (HRmax - HRrest). Tanaka H, Monahan KD,
    // Seals DR 2001, J Am Coll Cardiol 37:153: HRmax = 208 - 0.7 x age; the example
    // participant is 56, so HRmax = 208 - 39.2 = 168.8, and HRrest = 72 (the plan).
    let hr_rest = 72.0;
    let hr_max = 208.0 - 0.7 * 56.0;
    assert!((hr_max - 168.8_f64).abs() < 1e-9);
    let thr = |i: f64| hr_rest + i * (hr_max - hr_rest);
    // The Friday cycle ergometer at 60% of VO2 reserve: %VO2R taken as %HRR (ACSM
    // GETP 10th ed.), a band of 5 points either side (common practice, no source):
    // 72 + 0.55 x 96.8 = 125.24 -> 125 and 72 + 0.65 x 96.8 = 134.92 -> 135.
    assert_eq!(thr(0.55).round(), 125.0);
    assert_eq!(thr(0.65).round(), 135.0);
    let t = text_of(example(), &["--week", "5"]);
    assert!(
        t.contains("\nFri 2027-04-02  cycle ergometer\n  intensity  60% of VO2 reserve, 4.3 MET\n"),
        "{t}"
    );
    assert!(
        t.contains("targets    vigorous, 60% of VO2 reserve; HR 125-135 bpm (55-65% HRR); RPE 14-17 (Borg 6-20)"),
        "{t}"
    );
    assert!(t.contains("HRrest 72 bpm, HRmax 169 bpm (age-predicted, Tanaka 208 - 0.7 x age)"));
    // The treadmill walk: ACSM walking equation VO2 = 0.1 S + 1.8 S G + 3.5 ml/kg/min
    // (ACSM GETP 10th ed., docs/references.md section 2) at 5.6 km/h (93.33 m/min) and 3% grade,
    // against VO2peak 22.5 ml/kg/min x 88.0 kg = 1.98 l/min held, at the week's
    // reference mass: the %VO2R, the band, then Karvonen.
    let plan = parse_plan(EXAMPLE_NAME, example_text()).unwrap();
    let (input, _) = sheet_input(&plan, &LogInput::default(), None, vec![4]).unwrap();
    let week = &input.sessions.weeks[3];
    let s = 5.6 * 1000.0 / 60.0;
    let vo2 = 0.1 * s + 1.8 * s * 0.03 + 3.5;
    let peak = 1.98 * 1000.0 / week.reference_mass_kg;
    let i = (vo2 - 3.5) / (peak - 3.5);
    let (low, high) = (thr(i - 0.05).round(), thr(i + 0.05).round());
    // 87.8 kg: i = 0.755, so 140-150 bpm, vigorous (60% or more).
    assert!((0.75..0.76).contains(&i), "{i}");
    assert_eq!((low, high), (140.0, 150.0));
    let t4 = text_of(example(), &["--week", "4"]);
    assert!(
        t4.contains(&format!(
            "targets    vigorous, 75% of VO2 reserve; HR {low:.0}-{high:.0} bpm (70-80% HRR); RPE 14-17 (Borg 6-20); talk test: can say only a few words without pausing for breath"
        )),
        "{t4}"
    );
    // The HTML carries the same numbers.
    let h = visible(&html_of(example(), &["--week", "4"]));
    assert!(h.contains("HR 140-150 bpm (70-80% HRR)"), "{h}");
}

#[test]
fn the_html_is_self_contained() {
    for html in [
        html_of(example(), &["--week", "4"]),
        html_of(None, &["--week", "1"]),
        html_of(
            example(),
            &[
                "--from",
                "2027-03-01",
                "--to",
                "2027-05-23",
                "--paper",
                "letter",
            ],
        ),
    ] {
        let lower = html.to_lowercase();
        for banned in [
            "http", "<link", "<script", "@import", "url(", "<img", "src=",
        ] {
            assert!(!lower.contains(banned), "the HTML holds {banned:?}");
        }
        assert!(html.starts_with(
            "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
        ));
        assert_eq!(html.matches("<style>").count(), 1);
        assert!(html.ends_with("</body>\n</html>\n"));
    }
}

#[test]
fn the_paper_sets_the_page_size() {
    let a4 = html_of(example(), &["--week", "4"]);
    assert!(a4.contains("@page { size: A4 portrait; margin: 12mm; }"));
    let letter = html_of(example(), &["--week", "4", "--paper", "letter"]);
    assert!(letter.contains("@page { size: letter portrait; margin: 12mm; }"));
    // Nothing else differs.
    assert_eq!(
        a4.replace("size: A4 portrait", "size: letter portrait"),
        letter
    );
}

#[test]
fn one_page_per_selected_week_each_with_the_cautions() {
    // Weeks 3-5 by dates (Mon 2027-03-15 to Sun 2027-04-04); a range from a
    // Wednesday to a Monday reaches the same three weeks.
    for (from, to) in [("2027-03-15", "2027-04-04"), ("2027-03-17", "2027-03-29")] {
        let html = html_of(example(), &["--from", from, "--to", to]);
        let p = pages(&html);
        assert_eq!(p.len(), 3, "{from} to {to}");
        for (page, week) in p.iter().zip(3..) {
            assert!(page.contains(&format!("<h1>TRN-042, week {week} of 12</h1>")));
        }
        let text = text_of(example(), &["--from", from, "--to", to]);
        assert_eq!(blocks(&text).len(), 3);
    }
    // The whole demo year: 24 exercise weeks, not the 12 follow-up weeks.
    let html = html_of(None, &["--from", "2027-01-01", "--to", "2027-12-31"]);
    let text = text_of(None, &["--from", "2027-01-01", "--to", "2027-12-31"]);
    assert_eq!(pages(&html).len(), 24);
    assert_eq!(blocks(&text).len(), 24);
    let outcome = "Screening result: no medical clearance needed; start at light to moderate intensity and progress gradually.";
    for (n, page) in pages(&html).iter().enumerate() {
        let v = visible(page);
        assert!(v.contains(outcome), "page {}", n + 1);
        for c in CAUTIONS {
            assert!(v.contains(c), "page {} lacks {c:?}", n + 1);
        }
    }
    for (n, block) in blocks(&text).iter().enumerate() {
        assert!(
            block.contains(&format!("  - {outcome}\n")),
            "block {}",
            n + 1
        );
        for c in CAUTIONS {
            assert!(block.contains(&format!("  - {c}\n")), "block {}", n + 1);
        }
    }
    // Each page breaks after itself but the last.
    assert!(html.contains(".sheet { width: 186mm; min-height: 250mm; display: flex; flex-direction: column;\n  break-after: page;"));
    assert!(html.contains(".sheet:last-child { break-after: auto;"));
}

#[test]
fn every_text_from_the_plan_is_escaped() {
    let plan = edit(
        example_text(),
        &[
            ("id = \"TRN-042\"", "id = \"T<&>\\\"1\""),
            (
                "label = \"treadmill walk\"",
                "label = \"walk <fast> & \\\"steady\\\"\"",
            ),
            ("name = \"as prescribed\"", "name = \"plain <b>&\\\"\""),
        ],
    );
    let html = html_of(Some(("odd<&>.toml", &plan)), &["--week", "4"]);
    for raw in ["T<&>\"1", "<fast>", "& \"steady\"", "<b>&\"", "odd<&>"] {
        assert!(!html.contains(raw), "unescaped {raw:?}");
    }
    for escaped in [
        "<title>Session sheets: T&lt;&amp;&gt;&quot;1</title>",
        "<h1>T&lt;&amp;&gt;&quot;1, week 4 of 12</h1>",
        "<b>walk &lt;fast&gt; &amp; &quot;steady&quot;</b>",
        "scenario: &quot;plain &lt;b&gt;&amp;&quot;&quot;",
        "Plan: odd&lt;&amp;&gt;.toml;",
    ] {
        assert!(html.contains(escaped), "missing {escaped:?}");
    }
    // The only tags are the renderer's own.
    let text = text_of(Some(("odd<&>.toml", &plan)), &["--week", "4"]);
    assert!(text.contains("Session sheet: T<&>\"1, week 4 of 12"));
    assert!(text.contains("\nMon 2027-03-22  walk <fast> & \"steady\"\n"));
}

#[test]
fn split_bouts_share_their_prescription_and_get_a_line_each() {
    // ex-201 splits every session into two equal bouts on five days a week.
    let t = text_of(Some(("split.toml", SPLIT)), &["--week", "8"]);
    assert_eq!(t.matches("  session    2 bouts, each: ").count(), 5, "{t}");
    assert_eq!(t.matches("  delivered  bout 1: min ").count(), 5);
    assert_eq!(t.matches("  delivered  bout 2: min ").count(), 5);
    let h = html_of(Some(("split.toml", SPLIT)), &["--week", "8"]);
    assert_eq!(
        h.matches("<tbody class=\"group\"><tr><td rowspan=\"2\">")
            .count(),
        5
    );
    assert_eq!(h.matches("<span class=\"label\">bout 2</span>").count(), 5);
    // Five rows make a dense page (smaller type) so that the week fits one page
    // (scripts/check-sheets-pdf prints it); three rows do not.
    assert!(h.contains("<section class=\"sheet dense\">"));
    let normal = html_of(example(), &["--week", "4"]);
    assert!(normal.contains("<section class=\"sheet\">"));
    assert!(!normal.contains("sheet dense\""));
}

#[test]
fn missing_clearance_is_said_on_every_page() {
    let plan = base_with(&[("known_disease = false", "known_disease = true")], "");
    let t = text_of(
        Some(("plan.toml", &plan)),
        &["--from", "2027-01-04", "--to", "2027-01-17"],
    );
    let said =
        "!! Medical clearance is needed for this plan and is not on file: no session before it is.";
    assert_eq!(blocks(&t).len(), 2);
    for b in blocks(&t) {
        assert!(b.contains(said), "{b}");
        assert!(b.contains("Screening result: medical clearance recommended before any exercise"));
    }
    let h = html_of(Some(("plan.toml", &plan)), &["--week", "2"]);
    assert!(h.contains("<p class=\"alert\">Medical clearance is needed"));
    // Not when it is on file.
    let cleared = edit(
        &plan,
        &[("medical_clearance = false", "medical_clearance = true")],
    );
    let t = text_of(Some(("plan.toml", &cleared)), &["--week", "1"]);
    assert!(!t.contains("!! "), "{t}");
}

// ---------------------------------------------------------------------------
// Where the minutes come from
// ---------------------------------------------------------------------------

/// The minutes of each session of `week` in a schedule JSON's scenario `index`.
fn schedule_minutes(json: &serde_json::Value, index: usize, week: usize) -> Vec<u64> {
    array(&json["scenarios"][index]["weeks"][week - 1], "sessions")
        .iter()
        .map(|s| s["minutes"].as_u64().unwrap())
        .collect()
}

/// The minutes at target of every session of a text sheet.
fn sheet_minutes(text: &str) -> Vec<u64> {
    text.lines()
        .filter_map(|l| l.strip_prefix("  session    "))
        .map(|l| {
            let at = l.find(" min at target").unwrap();
            let start = l[..at].rfind(' ').map_or(0, |i| i + 1);
            l[start..at].parse().unwrap()
        })
        .collect()
}

#[test]
fn minutes_are_the_schedules_for_the_scenario_and_the_log() {
    let dir = Scratch::new("sheets-log");
    dir.write("log.csv", DEMO_LOG);
    dir.write(EXAMPLE_NAME, example_text());
    let json = |args: &[&str]| -> serde_json::Value {
        let r = run(dir.cmd().args(["schedule", "--format", "json"]).args(args));
        assert_eq!(r.code, Some(0), "{}", r.stderr);
        serde_json::from_str(&r.stdout).unwrap()
    };
    let sheet = |args: &[&str]| -> String {
        let r = run(dir.cmd().args(["sheets", "--format", "text"]).args(args));
        assert_eq!(r.code, Some(0), "{}", r.stderr);
        r.stdout
    };
    // The example's second scenario, week 7.
    let j = json(&[EXAMPLE_NAME]);
    let t = sheet(&[EXAMPLE_NAME, "--week", "7", "--scenario", "eats back 30%"]);
    assert_eq!(sheet_minutes(&t), schedule_minutes(&j, 1, 7));
    assert!(t.contains("scenario: \"eats back 30%\""));
    // The demo re-planned from its log: week 5 starts on the 2027-02-08 weigh-in.
    let j = json(&["--log", "log.csv"]);
    for week in [5, 9, 12] {
        let t = sheet(&["--log", "log.csv", "--week", &week.to_string()]);
        assert_eq!(
            sheet_minutes(&t),
            schedule_minutes(&j, 0, week),
            "week {week}"
        );
    }
    let t = sheet(&["--log", "log.csv", "--week", "5"]);
    assert!(
        t.contains(
            "Minutes computed for a body mass of 103.5 kg (measured at the latest weigh-in)."
        ),
        "{t}"
    );
    assert!(
        t.contains(
            "Re-planned from the log log.csv up to 2027-03-22 (11 weigh-ins, 31 session rows)."
        ),
        "{t}"
    );
    // The log up to the 2027-02-08 weigh-in, used up to 2027-03-01 (no sessions
    // delivered after the last row): as the schedule with the same log and date.
    let early: String = DEMO_LOG
        .lines()
        .take_while(|l| !l.starts_with("2027-02-10"))
        .map(|l| format!("{l}\n"))
        .collect();
    dir.write("early.csv", early);
    let args = ["--log", "early.csv", "--as-of", "2027-03-01"];
    let j = json(&args);
    for week in [5, 7, 12] {
        let t = sheet(&[&args[..], &["--week", &week.to_string()]].concat());
        assert_eq!(
            sheet_minutes(&t),
            schedule_minutes(&j, 0, week),
            "week {week}"
        );
        assert!(
            t.contains(
                "Re-planned from the log early.csv up to 2027-03-01 (5 weigh-ins, 13 session rows)."
            ),
            "{t}"
        );
    }
    let t = sheet(&[&args[..], &["--week", "12"]].concat());
    assert!(
        t.contains("(projected by the model for Mon 2027-03-29)"),
        "{t}"
    );
}

// ---------------------------------------------------------------------------
// The library: week selection and several participants
// ---------------------------------------------------------------------------

#[test]
fn week_selection() {
    let plan = parse_plan(EXAMPLE_NAME, example_text()).unwrap();
    let d = date;
    assert_eq!(sheet_weeks(&plan, WeekSelection::Week(12)).unwrap(), [12]);
    // A single day picks its week; the first and last days of the protocol count.
    let one = |a: &str, b: &str| sheet_weeks(&plan, WeekSelection::Dates(d(a), d(b))).unwrap();
    assert_eq!(one("2027-03-28", "2027-03-28"), [4]);
    assert_eq!(one("2027-03-28", "2027-03-29"), [4, 5]);
    assert_eq!(one("2027-01-01", "2027-03-01"), [1]);
    assert_eq!(one("2027-05-23", "2028-01-01"), [12]);
    let err = |s| sheet_weeks(&plan, s).unwrap_err().to_string();
    assert_eq!(
        err(WeekSelection::Week(13)),
        "--week 13: not a week of the protocol; allowed 1 to 12 (the exercise weeks of ex-206-rotation-heart-rate.toml)"
    );
    assert_eq!(
        err(WeekSelection::Dates(d("2027-05-24"), d("2027-06-30"))),
        "--from 2027-05-24 --to 2027-06-30: no exercise week overlaps these dates; the exercise weeks of ex-206-rotation-heart-rate.toml run from Mon 2027-03-01 (week 1) to Sun 2027-05-23 (week 12)"
    );
    // The demo's follow-up weeks are named as such.
    let demo = dosewright::commands::load(None).unwrap();
    assert_eq!(
        sheet_weeks(&demo, WeekSelection::Week(30))
            .unwrap_err()
            .to_string(),
        "--week 30: a follow-up week, with no sessions; allowed 1 to 24 (the exercise weeks of built-in demo plan (plans/demo.toml))"
    );
}

#[test]
fn several_participants_print_into_one_file_in_roster_order() {
    let example = parse_plan(EXAMPLE_NAME, example_text()).unwrap();
    let demo = dosewright::commands::load(None).unwrap();
    let input = |plan, weeks| -> SheetInput {
        sheet_input(plan, &LogInput::default(), None, weeks)
            .unwrap()
            .0
    };
    let roster = [input(&demo, vec![2, 1]), input(&example, vec![4, 5, 6])];
    let html = sheets::html(&roster, Paper::A4);
    let heads: Vec<&str> = pages(&html)
        .iter()
        .map(|p| {
            let start = p.find("<h1>").unwrap() + 4;
            &p[start..p.find("</h1>").unwrap()]
        })
        .collect();
    assert_eq!(
        heads,
        [
            "DEMO-017, week 2 of 24",
            "DEMO-017, week 1 of 24",
            "TRN-042, week 4 of 12",
            "TRN-042, week 5 of 12",
            "TRN-042, week 6 of 12"
        ]
    );
    assert!(html.contains("<title>Session sheets: 2 participants</title>"));
    // Each participant's own screening outcome and the cautions on each page.
    for p in pages(&html) {
        assert!(visible(p).contains("Screening result: no medical clearance needed"));
        assert!(visible(p).contains(CAUTIONS[2]));
    }
    let text = sheets::text(&roster);
    assert_eq!(blocks(&text).len(), 5);
    assert!(blocks(&text)[2].starts_with("Session sheet: TRN-042, week 4 of 12"));
    // The same input renders the same bytes.
    assert_eq!(sheets::html(&roster, Paper::A4), html);
}
