//! CLI tests: drive the real `dosewright` binary through every command and format,
//! check the JSON contract of docs/file-formats.md section 4 and invariants of the schedule, the warnings
//! with their stable codes, and bad plans beside the catalogue of tests/cases/bad-plan.
//!
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::*;
use serde_json::Value;
use std::collections::BTreeSet;

// ---------------------------------------------------------------------------
// Bad plans: exact texts, exit code 2, nothing on standard output
// ---------------------------------------------------------------------------

// The table of bad plans with their exact texts is one case per file in
// tests/cases/bad-plan, run by tests/catalogues.rs.

/// Run `args` on `plan` (written as `bad.toml`) and describe every way the run differs
/// from a clean failure with `expected` on standard error.
fn bad_run_problems(plan: &[u8], args: &[&str], expected: &str) -> Vec<String> {
    let dir = Scratch::new("bad");
    dir.write("bad.toml", plan);
    let r = run(dir.cmd().args(args));
    let mut problems = Vec::new();
    if r.code != Some(2) {
        problems.push(format!("exit code {:?}, want 2", r.code));
    }
    if !r.stdout.is_empty() {
        problems.push(format!("standard output not empty: {:?}", r.stdout));
    }
    let got = r.stderr.strip_suffix('\n').unwrap_or(&r.stderr);
    if got != expected {
        problems.push(format!("stderr\n     got: {got}\n    want: {expected}"));
    }
    problems
}

#[test]
fn the_base_plan_of_the_bad_table_is_valid_and_earns_no_warning() {
    let (_dir, r) = run_plan(BASE, &["check"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(r.stdout.starts_with("plan.toml: the plan is valid.\n"));
    assert!(r.stdout.contains("\nWarnings: none\n"), "{}", r.stdout);
    assert_eq!(r.stderr, "");
    assert!(warning_codes(&schedule_json(BASE)).is_empty());
}

#[test]
fn a_missing_plan_file_is_bad_input() {
    let dir = Scratch::new("missing");
    for args in [&["check", "nope.toml"][..], &["schedule", "nope.toml"][..]] {
        let r = run(dir.cmd().args(args));
        assert_eq!(r.code, Some(2));
        assert_eq!(r.stdout, "");
        assert_eq!(r.stderr, "error: nope.toml: cannot read: no such file\n");
    }
}

#[test]
fn a_folder_given_as_the_plan_is_bad_input() {
    let dir = Scratch::new("folder");
    std::fs::create_dir(dir.path().join("plans")).unwrap();
    let r = run(dir.cmd().args(["check", "plans"]));
    assert_eq!(r.code, Some(2));
    assert_eq!(r.stdout, "");
    assert!(
        r.stderr.starts_with("error: plans: cannot read: "),
        "{}",
        r.stderr
    );
}

#[test]
fn a_plan_that_is_not_utf8_is_bad_input() {
    // "T-001" becomes "T-" + Latin-1 e-acute + 0xFF + "01": invalid UTF-8 at byte 22,
    // the 9th character of line 2.
    let mut bytes = BASE.as_bytes().to_vec();
    let at = BASE.find("T-001").unwrap() + 2;
    bytes.splice(at..at + 1, [0xE9, 0xFF]);
    let expected = "error: bad.toml: cannot read: not UTF-8 text (byte 0xE9 at line 2, column 9); save the file as UTF-8";
    for args in [
        &["check", "bad.toml"][..],
        &["schedule", "bad.toml", "--format", "csv"][..],
    ] {
        let problems = bad_run_problems(&bytes, args, expected);
        assert!(problems.is_empty(), "{}", problems.join("\n"));
    }
}

#[test]
fn a_plan_with_a_utf8_byte_order_mark_is_accepted() {
    let mut bytes = "\u{feff}".as_bytes().to_vec();
    bytes.extend_from_slice(BASE.as_bytes());
    let dir = Scratch::new("bom");
    dir.write("plan.toml", &bytes);
    let r = run(dir.cmd().args(["check", "plan.toml"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(r.stdout.starts_with("plan.toml: the plan is valid.\n"));
    // Same schedule as without the mark.
    let with_bom = run(dir
        .cmd()
        .args(["schedule", "plan.toml", "--format", "json"]));
    let (_d, plain) = run_plan(BASE, &["schedule", "--format", "json"]);
    assert_eq!(with_bom.code, Some(0), "{}", with_bom.stderr);
    assert_eq!(plain.code, Some(0), "{}", plain.stderr);
    assert!(plain.stdout.starts_with('{'), "{}", plain.stdout);
    assert_eq!(with_bom.stdout, plain.stdout);
    // Positions in errors do not count the mark.
    let mut bad_bytes = "\u{feff}".as_bytes().to_vec();
    bad_bytes.extend_from_slice(base_with(&[("mass_kg = 80.0", "mass_kg = 3000")], "").as_bytes());
    let problems = bad_run_problems(
        &bad_bytes,
        &["check", "bad.toml"],
        "error: bad.toml:6:11: participant.mass_kg: value 3000 is out of range; allowed 30 to 350 kg",
    );
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn a_plan_with_windows_line_endings_is_accepted() {
    let crlf = BASE.replace('\n', "\r\n");
    assert!(crlf.contains("\r\n"));
    let (_dir, r) = run_plan(&crlf, &["schedule", "--format", "json"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let (_d, plain) = run_plan(BASE, &["schedule", "--format", "json"]);
    assert_eq!(plain.code, Some(0), "{}", plain.stderr);
    assert_eq!(r.stdout, plain.stdout);
    // Lines and columns stay right, and no carriage return leaks into a key.
    let bad = base_with(&[("mass_kg = 80.0", "mas_kg = 80.0")], "").replace('\n', "\r\n");
    let problems = bad_run_problems(
        bad.as_bytes(),
        &["check", "bad.toml"],
        "error: bad.toml:6:1: participant.mas_kg: unknown field `mas_kg`, expected one of `id`, `sex`, `age_years`, `height_cm`, `mass_kg`, `body_fat_percent`, `rmr_kcal_per_day`, `intake_kcal_per_day`, `pal`, `screening`, `fitness`",
    );
    assert!(problems.is_empty(), "{}", problems.join("\n"));
    let bad = base_with(&[("mass_kg = 80.0", "mass_kg = 3000")], "").replace('\n', "\r\n");
    let problems = bad_run_problems(
        bad.as_bytes(),
        &["check", "bad.toml"],
        "error: bad.toml:6:11: participant.mass_kg: value 3000 is out of range; allowed 30 to 350 kg",
    );
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn a_failed_schedule_with_out_writes_no_file() {
    let dir = Scratch::new("bad-out");
    dir.write(
        "bad.toml",
        base_with(&[("mass_kg = 80.0", "mass_kg = 3000")], ""),
    );
    let r = run(dir.cmd().args([
        "schedule", "bad.toml", "--format", "json", "--out", "out.json",
    ]));
    assert_eq!(r.code, Some(2));
    assert_eq!(r.stdout, "");
    assert_eq!(dir.listing(), ["bad.toml"]);
}

// ---------------------------------------------------------------------------
// Bad plans whose messages are unclear or wrong (bugs in src/, see the report).
// They already fail cleanly; the wording they should have is checked by the
// ignored test below.
// ---------------------------------------------------------------------------

/// What a better message must satisfy.
enum Want {
    /// The whole message (without the final newline).
    Exact(&'static str),
    /// Words it must contain.
    Has(&'static str),
    /// Words it must not contain.
    Lacks(&'static str),
}

struct Unclear {
    name: &'static str,
    plan: String,
    /// Why the present message is a problem.
    why: &'static str,
    want: Vec<Want>,
}

fn unclear_messages() -> Vec<Unclear> {
    use Want::*;
    let u = |name, edits: &[(&str, &str)], append: &str, why, want| Unclear {
        name,
        plan: base_with(edits, append),
        why,
        want,
    };
    vec![
        u(
            "duplicate_table",
            &[],
            "\n[activity]\nmet = 3.0\n",
            "says only `TOML syntax error: duplicate key` for a table given twice, naming neither the table nor the earlier header",
            vec![Has("[activity]")],
        ),
        u(
            "single_bracket_scenario_after_a_double_bracket_one",
            &[],
            "\n[[scenario]]\nname = \"a\"\n\n[scenario]\nname = \"b\"\n",
            "says only `TOML syntax error: duplicate key` at the [scenario] line; the [[scenario]] hint given for a lone [scenario] is missing",
            vec![Has("[[scenario]]"), Lacks("duplicate key")],
        ),
        u(
            "unclosed_array",
            &[("[\"mon\", \"wed\", \"fri\"]", "[\"mon\", \"wed\", \"fri\"")],
            "",
            "says `missing comma between array elements` at 21:1, the [protocol.dose] header, without a key; the unclosed array is protocol.session_days on line 19",
            vec![Has("protocol.session_days")],
        ),
        u(
            "integer_too_large",
            &[("mass_kg = 80.0", "mass_kg = 99999999999999999999")],
            "",
            "says `invalid type: integer `99999999999999999999` as i128, expected any valid TOML value`: Rust jargon, and no allowed range",
            vec![
                Has("participant.mass_kg"),
                Lacks("i128"),
                Has("30 to 350 kg"),
            ],
        ),
        u(
            "bare_word_in_an_inline_table",
            &[("met = 4.0", "walking = { speed_kmh = fast }")],
            "",
            "says `activity.walking: TOML syntax error: invalid boolean, expected `false``: the parser's guess from the f, and the inline table's key instead of speed_kmh; at top level the same mistake gets the plain hint",
            vec![
                Has("activity.walking.speed_kmh"),
                Has("quote"),
                Lacks("boolean"),
            ],
        ),
        u(
            "participant_as_an_array_table",
            &[("[participant]\n", "[[participant]]\n")],
            "",
            "says `1:1: participant: invalid type: map, expected a string`: no string is expected anywhere; the user wrote [[participant]] for [participant]",
            vec![Has("[participant]"), Lacks("expected a string")],
        ),
        u(
            "dotted_unknown_key",
            &[("mass_kg = 80.0", "mass_kg = 80.0\nscreen.x = 1")],
            "",
            "the key comes out as `participant`, without the unknown name; every other unknown key is named in full (`participant.mas_kg`, `protocol.doze`)",
            vec![Exact(
                "error: bad.toml:7:1: participant.screen: unknown field `screen`, expected one of `id`, `sex`, `age_years`, `height_cm`, `mass_kg`, `body_fat_percent`, `rmr_kcal_per_day`, `intake_kcal_per_day`, `pal`, `screening`, `fitness`",
            )],
        ),
        Unclear {
            name: "inline_array_of_scenario_tables",
            plan: format!(
                "scenario = [{{ name = \"a\" }}, {{ name = \"b\", intake_fraction = \"x\" }}]\n{BASE}"
            ),
            why: "the key comes out as `scenario`; the scenarios written as an inline array of tables are not numbered",
            want: vec![Exact(
                "error: bad.toml:1:61: scenario[2].intake_fraction: invalid type: string \"x\", expected a number",
            )],
        },
        u(
            "header_line_inside_a_multi_line_string",
            &[(
                "met = 4.0",
                "met = 4.0\nlabel = \"\"\"\n[[scenario]]\n\"\"\"",
            )],
            "\n[[scenario]]\nname = \"a\"\nintake_fraction = \"x\"\n",
            "the key comes out as `scenario[2].intake_fraction`: the locator counts a `[[scenario]]` line inside the label's multi-line string as a header, though the plan has one scenario",
            vec![Has("scenario[1].intake_fraction")],
        ),
        u(
            "fat_mass_rounded_to_the_limit",
            &[
                ("age_years = 40", "age_years = 30"),
                ("mass_kg = 80.0", "mass_kg = 50.0"),
                ("body_fat_percent = 38.0", "body_fat_percent = 8.0"),
                ("weeks = 8", "weeks = 52"),
                ("kcal_per_week = 1200", "kcal_per_week = 15000"),
                ("met = 4.0", "met = 10.0"),
            ],
            "",
            "says `fat mass 2.00 kg is below 2 kg`: the value is rounded to the limit it is said to be below",
            vec![Has("fat mass"), Lacks("2.00 kg is below 2 kg")],
        ),
        u(
            "a_day_of_minutes_in_a_minutes_dose",
            &[
                ("[\"mon\", \"wed\", \"fri\"]", "[\"mon\"]"),
                ("kcal_per_week = 1200", "minutes_per_week = 1440"),
            ],
            "",
            "says `week 1 needs sessions of 1440 min, a whole day or more (a session must be shorter than 1440 min); the activity is too light for the dose ... lower the dose or the compensation, or shorten the horizon`: with a minutes dose the intensity does not set the minutes, compensation and horizon do not either, and 1440 min is a day, not longer",
            vec![
                Has("1440 min"),
                Lacks("too light"),
                Lacks("longer than a day"),
            ],
        ),
    ]
}

#[test]
fn bad_plans_with_unclear_messages_still_fail_cleanly() {
    let mut failures = Vec::new();
    for c in unclear_messages() {
        let dir = Scratch::new("unclear");
        dir.write("bad.toml", &c.plan);
        for args in [
            &["check", "bad.toml"][..],
            &["schedule", "bad.toml", "--format", "json"][..],
        ] {
            let r = run(dir.cmd().args(args));
            if r.code != Some(2) || !r.stdout.is_empty() {
                failures.push(format!(
                    "{}: exit {:?}, stdout {:?}",
                    c.name, r.code, r.stdout
                ));
            }
            if !r.stderr.starts_with("error: bad.toml") || r.stderr.lines().count() != 1 {
                failures.push(format!("{}: stderr {:?}", c.name, r.stderr));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// Cases of `unclear_messages` whose messages have been fixed: their wants are
/// checked by a test that runs, the others by the ignored one.
const FIXED: &[&str] = &[
    "duplicate_table",
    "single_bracket_scenario_after_a_double_bracket_one",
    "unclosed_array",
];

/// What the cases chosen by `pick` get wrong against their wants.
fn unclear_failures(pick: impl Fn(&str) -> bool) -> Vec<String> {
    let mut failures = Vec::new();
    for c in unclear_messages().into_iter().filter(|c| pick(c.name)) {
        let dir = Scratch::new("unclear");
        dir.write("bad.toml", &c.plan);
        let r = run(dir.cmd().args(["check", "bad.toml"]));
        let got = r.stderr.trim_end();
        for w in &c.want {
            let ok = match w {
                Want::Exact(s) => got == *s,
                Want::Has(s) => got.contains(s),
                Want::Lacks(s) => !got.contains(s),
            };
            if !ok {
                let what = match w {
                    Want::Exact(s) => format!("want exactly: {s}"),
                    Want::Has(s) => format!("want it to contain {s:?}"),
                    Want::Lacks(s) => format!("want it not to contain {s:?}"),
                };
                failures.push(format!(
                    "{} ({})\n     got: {got}\n    {what}",
                    c.name, c.why
                ));
            }
        }
    }
    failures
}

#[test]
fn fixed_messages_say_what_is_wrong() {
    let names: Vec<&str> = unclear_messages().iter().map(|c| c.name).collect();
    assert!(FIXED.iter().all(|f| names.contains(f)), "{FIXED:?}");
    let failures = unclear_failures(|n| FIXED.contains(&n));
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
#[ignore = "src bug: these messages are still unclear or name the wrong key or place (see each case's `why` in unclear_messages)"]
fn bad_plans_with_unclear_messages_say_what_is_wrong() {
    let failures = unclear_failures(|n| !FIXED.contains(&n));
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

// ---------------------------------------------------------------------------
// schedule --format json: the docs/file-formats.md section 4.1 contract and invariants
// ---------------------------------------------------------------------------

/// What a plan says about its calendar, for checking a schedule against it.
struct Shape<'a> {
    start: &'a str,
    weeks: u64,
    follow_up_weeks: u64,
    /// Weekdays sessions may fall on (session days, plus spare days for add-session).
    days: &'a [&'a str],
    /// Distinct session dates per protocol week, when fixed.
    sessions_per_week: Option<usize>,
    /// Every session date has the same minutes (false with a rotation of
    /// activities or closures: then `minutes_per_session` is the longest session).
    uniform_minutes: bool,
}

fn weekday_word(d: chrono::NaiveDate) -> &'static str {
    use chrono::Datelike;
    ["mon", "tue", "wed", "thu", "fri", "sat", "sun"][d.weekday().num_days_from_monday() as usize]
}

/// Every key docs/file-formats.md section 4.1 lists for `schedule --format json`, with its type, and the
/// calendar and bookkeeping invariants of the weeks.
fn assert_schedule_contract(j: &Value, shape: &Shape) {
    let b = &j["baseline"];
    for k in [
        "mass_kg",
        "fat_mass_kg",
        "fat_free_mass_kg",
        "rmr_kcal_per_day",
        "intake_kcal_per_day",
        "tdee_kcal_per_day",
        "pal",
    ] {
        assert!(num(b, k) > 0.0, "baseline.{k} must be positive");
    }
    assert!(b["fat_mass_estimated"].is_boolean());
    let m0 = num(b, "mass_kg");
    assert!((num(b, "fat_mass_kg") + num(b, "fat_free_mass_kg") - m0).abs() < 1e-3);

    let start = date(shape.start);
    let total = shape.weeks + shape.follow_up_weeks;
    let scenarios = array(j, "scenarios");
    assert!(!scenarios.is_empty());
    let mut names = BTreeSet::new();
    for s in scenarios {
        let name = text(s, "name");
        assert!(
            !name.is_empty() && names.insert(name.to_string()),
            "scenario names unique"
        );
        let weeks = array(s, "weeks");
        assert_eq!(weeks.len() as u64, total, "protocol plus follow-up weeks");
        for (i, w) in weeks.iter().enumerate() {
            let n = i as u64 + 1;
            assert_eq!(w["week"].as_u64(), Some(n), "week numbers run on");
            let ws = date(text(w, "start"));
            assert_eq!(ws, start + chrono::Days::new(7 * (n - 1)), "week {n} start");
            assert!(num(w, "reference_mass_kg") > 0.0);
            let src = text(w, "mass_source");
            assert!(src == "projected" || src == "measured", "mass_source {src}");
            let ramp = num(w, "ramp_fraction");
            let mps = w["minutes_per_session"]
                .as_u64()
                .unwrap_or_else(|| panic!("minutes_per_session is a whole number: {}", w));
            let sessions = array(w, "sessions");
            if n <= shape.weeks {
                assert!(ramp > 0.0 && ramp <= 1.0, "week {n} ramp {ramp}");
                assert!(mps > 0, "week {n} has minutes");
                assert!(!sessions.is_empty(), "week {n} has sessions");
            } else {
                assert_eq!(mps, 0, "follow-up week {n}: minutes_per_session 0");
                assert_eq!(ramp, 0.0, "follow-up week {n}: ramp_fraction 0");
                assert!(sessions.is_empty(), "follow-up week {n}: no sessions");
            }
            let mut prev = None;
            let mut per_date: std::collections::BTreeMap<chrono::NaiveDate, u64> =
                Default::default();
            for x in sessions {
                let d = date(text(x, "date"));
                assert!(d >= ws && d < ws + chrono::Days::new(7), "{d} in week {n}");
                assert!(
                    shape.days.contains(&weekday_word(d)),
                    "{d} ({}) is not a plan weekday",
                    weekday_word(d)
                );
                if let Some(p) = prev {
                    assert!(d >= p, "sessions in date order");
                }
                prev = Some(d);
                let m = x["minutes"]
                    .as_u64()
                    .unwrap_or_else(|| panic!("minutes is a whole number: {x}"));
                assert!(m > 0);
                *per_date.entry(d).or_default() += m;
                assert!(num(x, "met") > 1.0);
                let gross = num(x, "gross_kcal");
                let net = num(x, "net_kcal");
                assert!(gross > net && net > 0.0, "gross {gross} > net {net} > 0");
            }
            for (d, m) in &per_date {
                if shape.uniform_minutes {
                    assert_eq!(*m, mps, "minutes on {d} add up to minutes_per_session");
                } else {
                    assert!(*m <= mps, "minutes on {d} are at most minutes_per_session");
                }
            }
            if !per_date.is_empty() {
                assert_eq!(
                    per_date.values().max().copied(),
                    Some(mps),
                    "minutes_per_session is the longest session"
                );
            }
            if let (Some(k), true) = (shape.sessions_per_week, n <= shape.weeks) {
                assert_eq!(per_date.len(), k, "session dates in week {n}");
            }
            let e = &w["end"];
            let fm = num(e, "fat_mass_kg");
            let ffm = num(e, "fat_free_mass_kg");
            assert!((fm + ffm - num(e, "mass_kg")).abs() < 1e-3);
        }
        let o = &s["outcome"];
        let last = &weeks[weeks.len() - 1];
        let end_date = date(text(o, "end_date"));
        assert_eq!(end_date, start + chrono::Days::new(7 * total));
        assert_eq!(
            end_date,
            date(text(last, "start")) + chrono::Days::new(7),
            "end_date is the morning after the last day"
        );
        for k in ["mass_kg", "fat_mass_kg", "fat_free_mass_kg"] {
            assert!(
                (num(o, k) - num(&last["end"], k)).abs() < 1e-9,
                "outcome.{k}"
            );
        }
        assert!((num(o, "mass_change_kg") - (num(o, "mass_kg") - m0)).abs() < 1e-3);
        for k in ["prescribed_net_kcal", "achieved_deficit_kcal", "dose_share"] {
            num(o, k);
        }
    }
    for w in array(j, "warnings") {
        assert!(!text(w, "code").is_empty());
        assert!(!text(w, "message").is_empty());
    }
    assert_no_misplaced_null(j, "");
}

/// JSON cannot hold NaN; serde_json writes it as null. Null is allowed only for the
/// few keys that mean "none" (no policy action, no energy target in a follow-up or
/// minutes dose, no maximum, no screening result).
fn assert_no_misplaced_null(v: &Value, path: &str) {
    const MAY_BE_NULL: [&str; 4] = [
        "over_max",
        "target_kcal_per_session",
        "max_session_minutes",
        "clearance",
    ];
    match v {
        Value::Null => {
            let key = path.rsplit('.').next().unwrap_or("");
            assert!(MAY_BE_NULL.contains(&key), "null at {path}");
        }
        Value::Array(a) => a
            .iter()
            .enumerate()
            .for_each(|(i, x)| assert_no_misplaced_null(x, &format!("{path}[{i}]"))),
        Value::Object(o) => o
            .iter()
            .for_each(|(k, x)| assert_no_misplaced_null(x, &format!("{path}.{k}"))),
        _ => {}
    }
}

#[test]
fn demo_json_has_every_key_of_the_contract() {
    let r = run(dosewright().args(["schedule", "--format", "json"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stderr, "", "JSON on stdout, nothing else");
    let j: Value = serde_json::from_str(&r.stdout).expect("valid JSON");
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-11",
            weeks: 24,
            follow_up_weeks: 12,
            days: &["mon", "wed", "fri"],
            sessions_per_week: Some(3),
            uniform_minutes: true,
        },
    );
    let names: Vec<&str> = array(&j, "scenarios")
        .iter()
        .map(|s| text(s, "name"))
        .collect();
    assert_eq!(
        names,
        ["as prescribed", "eats back 40%", "mixed compensation"]
    );
    // The demo measures body fat, so the baseline says so.
    assert_eq!(j["baseline"]["fat_mass_estimated"], Value::Bool(false));
    // Compensation costs loss: each scenario loses less than the one before.
    let change: Vec<f64> = array(&j, "scenarios")
        .iter()
        .map(|s| num(&s["outcome"], "mass_change_kg"))
        .collect();
    assert!(
        change[0] < change[1] && change[1] < change[2] && change[2] < 0.0,
        "{change:?}"
    );
}

#[test]
fn json_always_carries_every_scenario_whatever_scenario_is_picked() {
    let a = run(dosewright().args(["schedule", "--format", "json"]));
    let b = run(dosewright().args([
        "schedule",
        "--format",
        "json",
        "--scenario",
        "eats back 40%",
    ]));
    assert_eq!(a.code, Some(0));
    assert_eq!(b.code, Some(0));
    assert_eq!(a.stdout, b.stdout);
}

#[test]
fn sessions_fall_on_the_plan_weekdays_in_date_order_from_any_start_weekday() {
    // Starts on a Wednesday; days listed out of order.
    let plan = base_with(
        &[
            ("start = 2027-01-04", "start = 2027-01-06"),
            ("weeks = 8", "weeks = 3\nfollow_up_weeks = 2"),
            ("[\"mon\", \"wed\", \"fri\"]", "[\"sat\", \"tue\", \"thu\"]"),
        ],
        "",
    );
    let j = schedule_json(&plan);
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-06",
            weeks: 3,
            follow_up_weeks: 2,
            days: &["tue", "thu", "sat"],
            sessions_per_week: Some(3),
            uniform_minutes: true,
        },
    );
    let w1: Vec<&str> = array(&j["scenarios"][0]["weeks"][0], "sessions")
        .iter()
        .map(|s| text(s, "date"))
        .collect();
    assert_eq!(w1, ["2027-01-07", "2027-01-09", "2027-01-12"]);
    assert_eq!(j["scenarios"][0]["outcome"]["end_date"], "2027-02-10");
}

/// Gross kcal per minute at `met` for `mass_kg` (ACSM: MET * 3.5 * M / 200).
fn gross_per_min(met: f64, mass_kg: f64) -> f64 {
    met * 3.5 * mass_kg / 200.0
}

#[test]
fn a_gross_weekly_dose_is_met_by_the_smallest_whole_rounded_minutes() {
    let step = 5.0;
    let plan = base_with(
        &[
            ("weeks = 8", "weeks = 6\nround_minutes_to = 5"),
            ("kcal_per_week = 1200", "kcal_per_week = 1250"),
        ],
        "\n[protocol.ramp]\nweeks = 2\nstart_fraction = 0.6\n",
    );
    let j = schedule_json(&plan);
    let mut full_weeks = 0;
    for w in array(&j["scenarios"][0], "weeks") {
        let ramp = num(w, "ramp_fraction");
        let target = 1250.0 * ramp;
        let sessions = array(w, "sessions");
        let n = sessions.len() as f64;
        let e = gross_per_min(4.0, num(w, "reference_mass_kg"));
        let mut sum = 0.0;
        for s in sessions {
            let m = s["minutes"].as_u64().unwrap() as f64;
            assert_eq!(m % step, 0.0, "minutes round to the step");
            let g = num(s, "gross_kcal");
            assert!((g - m * e).abs() < 1e-3, "gross = minutes * MET*3.5*M/200");
            // Enough for the session's share, and one step less would not be.
            assert!(g >= target / n - 1e-3, "session {g} below {}", target / n);
            assert!(
                g - step * e < target / n,
                "a step less would still meet the target"
            );
            sum += g;
        }
        assert!(sum >= target - 1e-3, "week sum {sum} below target {target}");
        assert!(sum < target + n * step * e, "week sum {sum} overshoots");
        if ramp == 1.0 {
            full_weeks += 1;
            assert!(sum < target + step * e * n);
        }
    }
    assert_eq!(full_weeks, 4, "weeks 3-6 are at the full dose");
    // The ramp: 0.6 in week 1, 0.8 in week 2.
    let ramps: Vec<f64> = array(&j["scenarios"][0], "weeks")
        .iter()
        .map(|w| num(w, "ramp_fraction"))
        .collect();
    assert_eq!(ramps, [0.6, 0.8, 1.0, 1.0, 1.0, 1.0]);
}

#[test]
fn a_net_per_session_dose_is_met_in_net_energy() {
    let plan = base_with(
        &[(
            "kcal_per_week = 1200",
            "kcal_per_session = 300\nbasis = \"net\"",
        )],
        "",
    );
    let j = schedule_json(&plan);
    for w in array(&j["scenarios"][0], "weeks") {
        for s in array(w, "sessions") {
            let m = s["minutes"].as_u64().unwrap() as f64;
            let net = num(s, "net_kcal");
            assert!(net >= 300.0 - 1e-3, "net {net} below 300");
            assert!(
                net - net / m < 300.0,
                "a minute less would still meet 300 net"
            );
            assert!(num(s, "gross_kcal") > net);
        }
    }
}

#[test]
fn a_minutes_dose_gives_those_minutes() {
    let plan = base_with(&[("kcal_per_week = 1200", "minutes_per_week = 150")], "");
    let j = schedule_json(&plan);
    for w in array(&j["scenarios"][0], "weeks") {
        // 150 / 3 = 50 minutes a session.
        assert_eq!(w["minutes_per_session"], 50);
        let total: u64 = array(w, "sessions")
            .iter()
            .map(|s| s["minutes"].as_u64().unwrap())
            .sum();
        assert_eq!(total, 150);
    }
}

#[test]
fn follow_up_weeks_have_no_exercise_and_the_contract_holds() {
    let plan = base_with(&[("weeks = 8", "weeks = 4\nfollow_up_weeks = 3")], "");
    let j = schedule_json(&plan);
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-04",
            weeks: 4,
            follow_up_weeks: 3,
            days: &["mon", "wed", "fri"],
            sessions_per_week: Some(3),
            uniform_minutes: true,
        },
    );
    let weeks = array(&j["scenarios"][0], "weeks");
    assert_eq!(weeks[4]["week"], 5);
    assert_eq!(j["scenarios"][0]["outcome"]["end_date"], "2027-02-22");
}

#[test]
fn every_example_plan_passes_check_and_keeps_the_json_contract() {
    let dir = manifest_dir().join("plans");
    let mut plans: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        // Study files (with [[arm]] tables) run through `cohort`, tested in tests/cohort.rs.
        .filter(|p| {
            let t: toml::Table = toml::from_str(&std::fs::read_to_string(p).unwrap()).unwrap();
            !t.contains_key("arm")
        })
        .collect();
    plans.sort();
    assert!(plans.len() >= 5, "the demo and at least four examples");
    for path in plans {
        let name = format!("plans/{}", path.file_name().unwrap().to_string_lossy());
        let check = run(dosewright()
            .current_dir(manifest_dir())
            .args(["check", &name]));
        assert_eq!(check.code, Some(0), "{name}: {}", check.stderr);
        assert!(
            check
                .stdout
                .starts_with(&format!("{name}: the plan is valid.\n"))
        );
        let r = run(dosewright()
            .current_dir(manifest_dir())
            .args(["schedule", &name, "--format", "json"]));
        assert_eq!(r.code, Some(0), "{name}: {}", r.stderr);
        let j: Value = serde_json::from_str(&r.stdout).expect("valid JSON");
        // The calendar as the plan file states it.
        let t: toml::Table = toml::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
        let p = t["protocol"].as_table().unwrap();
        let start = p["start"].to_string();
        let list = |k: &str| -> Vec<String> {
            p.get(k).and_then(|v| v.as_array()).map_or(Vec::new(), |a| {
                a.iter().map(|d| d.as_str().unwrap().to_string()).collect()
            })
        };
        let mut days = list("session_days");
        if p.get("over_max").and_then(|v| v.as_str()) == Some("add-session") {
            let spare = list("spare_days");
            if spare.is_empty() {
                days = ["mon", "tue", "wed", "thu", "fri", "sat", "sun"]
                    .map(String::from)
                    .to_vec();
            } else {
                days.extend(spare);
            }
        }
        let days: Vec<&str> = days.iter().map(String::as_str).collect();
        assert_schedule_contract(
            &j,
            &Shape {
                start: start.trim_matches('"'),
                weeks: p["weeks"].as_integer().unwrap() as u64,
                follow_up_weeks: p
                    .get("follow_up_weeks")
                    .map_or(0, |v| v.as_integer().unwrap()) as u64,
                days: &days,
                sessions_per_week: None,
                uniform_minutes: !t.contains_key("rotation") && !p.contains_key("closures"),
            },
        );
    }
}

// ---------------------------------------------------------------------------
// Warnings with stable codes
// ---------------------------------------------------------------------------

/// Plans built to earn one warning each: (code, plan, words the message must hold).
fn warning_plans() -> Vec<(&'static str, String, &'static str)> {
    let with = |edits: &[(&str, &str)], append: &str| base_with(edits, append);
    vec![
        (
            "session-over-max",
            with(&[("weeks = 8", "weeks = 8\nmax_session_minutes = 30")], ""),
            "exceed the 30-minute maximum in weeks 1-8 (flag: the minutes were kept)",
        ),
        (
            "weekly-minutes-over-300",
            with(&[("kcal_per_week = 1200", "minutes_per_week = 330")], ""),
            "more than 300 minutes of exercise a week in weeks 1-8",
        ),
        (
            "loss-rate-over-1-percent",
            with(
                &[
                    ("kcal_per_week = 1200", "kcal_per_week = 9000"),
                    ("met = 4.0", "met = 5.5"),
                ],
                "",
            ),
            "projected loss exceeds 1% of body mass per week",
        ),
        (
            "bmi-below-18.5",
            with(
                &[
                    ("mass_kg = 80.0", "mass_kg = 52.0"),
                    ("body_fat_percent = 38.0", "body_fat_percent = 25.0"),
                    ("kcal_per_week = 1200", "kcal_per_week = 3500"),
                    ("weeks = 8", "weeks = 20"),
                ],
                "",
            ),
            "projected BMI falls below 18.5 kg/m^2",
        ),
        (
            "acsm-equation-range",
            with(&[("met = 4.0", "walking = { speed_kmh = 7.0 }")], ""),
            "outside the ACSM walking equation's valid range of 50-100 m/min",
        ),
        (
            "fat-mass-estimated",
            with(&[("body_fat_percent = 38.0\n", "")], ""),
            "is estimated from BMI (Deurenberg",
        ),
        (
            "intake-pal-drift",
            with(
                &[("pal = 1.5", "pal = 1.5\nintake_kcal_per_day = 2500")],
                "",
            ),
            "measured intake (2500 kcal/day) is 295 kcal/day above the expenditure implied by PAL 1.50",
        ),
        (
            "older-adult-met",
            with(&[("age_years = 40", "age_years = 60")], ""),
            "age 60: a MET stated against the standard 3.5 ml/kg/min at rest tends to overstate the cost of activity",
        ),
        (
            "clearance-missing",
            with(&[("known_disease = false", "known_disease = true")], ""),
            "needs medical clearance, which medical_clearance does not record",
        ),
        (
            "vigorous-start",
            with(&[("met = 4.0", "met = 6.0")], ""),
            "vigorous intensity (6.0 MET) from week 1",
        ),
        (
            "screening-not-recorded",
            with(&[(BASE_SCREENING, "")], ""),
            "screening not recorded",
        ),
    ]
}

#[test]
fn every_warning_code_appears_for_a_plan_built_to_earn_it() {
    let all: BTreeSet<&str> = warning_plans().iter().map(|(c, _, _)| *c).collect();
    assert_eq!(all.len(), 11, "one plan per code");
    for (code, plan, words) in warning_plans() {
        let j = schedule_json(&plan);
        let ws = array(&j, "warnings");
        let hit: Vec<&Value> = ws.iter().filter(|w| w["code"] == code).collect();
        assert_eq!(hit.len(), 1, "{code}: want one warning, got {ws:?}");
        let msg = text(hit[0], "message");
        assert!(msg.contains(words), "{code}: {msg:?} lacks {words:?}");
        // No other code of the list fired by accident, except loss-rate plans
        // that necessarily run long weeks.
        for w in ws {
            let c = text(w, "code");
            if c != code {
                assert!(
                    matches!(
                        (code, c),
                        ("loss-rate-over-1-percent", "weekly-minutes-over-300")
                            | ("bmi-below-18.5", "weekly-minutes-over-300")
                    ),
                    "{code} plan also earned {c}"
                );
            }
        }
        // The table and check show it too, with the code.
        for cmd in [&["schedule"][..], &["check"][..]] {
            let (_d, r) = run_plan(&plan, cmd);
            assert_eq!(r.code, Some(0), "{}", r.stderr);
            assert!(
                r.stdout.contains(&format!("  - [{code}] ")),
                "{code} missing from {cmd:?} output"
            );
        }
        // CSV keeps stdout clean and gives the warnings on stderr.
        let (_d, r) = run_plan(&plan, &["schedule", "--format", "csv"]);
        assert_eq!(r.code, Some(0), "{code}: {}", r.stderr);
        assert!(
            r.stdout.starts_with("scenario,week,"),
            "{code}: {}",
            r.stdout
        );
        assert!(
            r.stderr.contains(&format!("[{code}]")),
            "{code} not on csv stderr"
        );
        assert!(!r.stdout.contains(&format!("[{code}]")));
    }
}

#[test]
fn warning_thresholds_sit_where_the_issue_puts_them() {
    // Age 59 and 5.9 MET: no older-adult or vigorous warning.
    let j = schedule_json(&base_with(
        &[
            ("age_years = 40", "age_years = 59"),
            ("met = 4.0", "met = 5.9"),
        ],
        "",
    ));
    assert!(warning_codes(&j).is_empty(), "{:?}", warning_codes(&j));
    // Someone exercising regularly gets no vigorous-start caution at 7 MET.
    let j = schedule_json(&base_with(
        &[
            ("exercises_regularly = false", "exercises_regularly = true"),
            ("met = 4.0", "met = 7.0"),
        ],
        "",
    ));
    assert!(warning_codes(&j).is_empty(), "{:?}", warning_codes(&j));
    // Regular exerciser with known disease: moderate work needs no clearance ...
    let regular_disease = [
        ("exercises_regularly = false", "exercises_regularly = true"),
        ("known_disease = false", "known_disease = true"),
    ];
    let j = schedule_json(&base_with(&regular_disease, ""));
    assert!(warning_codes(&j).is_empty(), "{:?}", warning_codes(&j));
    // ... vigorous work does ...
    let mut vig = regular_disease.to_vec();
    vig.push(("met = 4.0", "met = 6.5"));
    let j = schedule_json(&base_with(&vig, ""));
    assert_eq!(warning_codes(&j), ["clearance-missing"]);
    // ... unless the clearance is on file.
    vig.push(("medical_clearance = false", "medical_clearance = true"));
    let j = schedule_json(&base_with(&vig, ""));
    assert!(warning_codes(&j).is_empty(), "{:?}", warning_codes(&j));
    // 300 minutes a week exactly is not over 300.
    let j = schedule_json(&base_with(
        &[("kcal_per_week = 1200", "minutes_per_week = 300")],
        "",
    ));
    assert!(warning_codes(&j).is_empty(), "{:?}", warning_codes(&j));
}

#[test]
fn the_screening_grid_gives_the_acsm_2015_recommendation() {
    // (exercises regularly, known disease, signs or symptoms, recommendation)
    let grid = [
        (
            false,
            false,
            false,
            "no medical clearance needed; start at light to moderate intensity and progress gradually",
        ),
        (
            false,
            true,
            false,
            "medical clearance recommended before any exercise",
        ),
        (
            false,
            false,
            true,
            "medical clearance recommended before any exercise",
        ),
        (
            false,
            true,
            true,
            "medical clearance recommended before any exercise",
        ),
        (
            true,
            false,
            false,
            "no medical clearance needed; continue and progress gradually",
        ),
        (
            true,
            true,
            false,
            "no clearance needed for moderate exercise; medical clearance recommended before vigorous exercise",
        ),
        (
            true,
            false,
            true,
            "stop exercising and obtain medical clearance before resuming",
        ),
        (
            true,
            true,
            true,
            "stop exercising and obtain medical clearance before resuming",
        ),
    ];
    for (reg, disease, signs, words) in grid {
        let plan = base_with(
            &[
                (
                    "exercises_regularly = false",
                    &format!("exercises_regularly = {reg}"),
                ),
                (
                    "known_disease = false",
                    &format!("known_disease = {disease}"),
                ),
                (
                    "signs_or_symptoms = false",
                    &format!("signs_or_symptoms = {signs}"),
                ),
            ],
            "",
        );
        let (_d, r) = run_plan(&plan, &["check"]);
        assert_eq!(r.code, Some(0), "{}", r.stderr);
        let line = r
            .stdout
            .lines()
            .find(|l| l.starts_with("Screening: "))
            .expect("a screening line");
        assert!(line.contains(words), "({reg}, {disease}, {signs}): {line}");
        // Clearance before any exercise, or stop and clear: symptoms, or disease in
        // someone not exercising regularly (4 MET is not vigorous).
        let needs_clearance = signs || (!reg && disease);
        let j = schedule_json(&plan);
        assert_eq!(
            warning_codes(&j).contains(&"clearance-missing".to_string()),
            needs_clearance,
            "({reg}, {disease}, {signs}) at 4 MET"
        );
    }
}

// ---------------------------------------------------------------------------
// The four over_max policies
// ---------------------------------------------------------------------------

/// BASE needs about 71.4 min a session (400 kcal at 5.6 kcal/min); these cut it.
fn over_max_plan(max: u32, policy: &str, extra: &str) -> String {
    base_with(
        &[(
            "weeks = 8",
            &format!("weeks = 8\nmax_session_minutes = {max}\nover_max = \"{policy}\"{extra}"),
        )],
        "",
    )
}

fn over_max_message(j: &Value) -> String {
    let ws = array(j, "warnings");
    assert_eq!(warning_codes(j), ["session-over-max"], "{ws:?}");
    text(&ws[0], "message").to_string()
}

fn weekly_gross(w: &Value) -> f64 {
    array(w, "sessions")
        .iter()
        .map(|s| num(s, "gross_kcal"))
        .sum()
}

#[test]
fn over_max_flag_keeps_the_minutes_and_warns() {
    let j = schedule_json(&over_max_plan(30, "flag", ""));
    let msg = over_max_message(&j);
    assert!(msg.contains("(flag: the minutes were kept)"), "{msg}");
    for w in array(&j["scenarios"][0], "weeks") {
        assert!(w["minutes_per_session"].as_u64().unwrap() > 30);
        assert!(weekly_gross(w) >= 1200.0 - 1e-3);
    }
}

#[test]
fn over_max_cap_cuts_to_the_maximum_and_reports_the_shortfall() {
    let j = schedule_json(&over_max_plan(30, "cap", ""));
    let msg = over_max_message(&j);
    assert!(msg.contains("(cap: sessions cut to the maximum, "), "{msg}");
    assert!(
        msg.contains(" kcal (gross) short of the prescribed dose in all"),
        "{msg}"
    );
    assert!(!msg.contains("still over"), "{msg}");
    for w in array(&j["scenarios"][0], "weeks") {
        for s in array(w, "sessions") {
            assert_eq!(s["minutes"], 30);
        }
        assert!(weekly_gross(w) < 1200.0, "a capped week falls short");
    }
}

#[test]
fn over_max_add_session_spreads_the_week_over_spare_days() {
    let j = schedule_json(&over_max_plan(
        45,
        "add-session",
        "\nspare_days = [\"tue\", \"thu\"]",
    ));
    let msg = over_max_message(&j);
    assert!(
        msg.contains("(add-session: up to 2 extra session(s) a week on spare days)"),
        "{msg}"
    );
    assert!(!msg.contains("still over"), "{msg}");
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-04",
            weeks: 8,
            follow_up_weeks: 0,
            days: &["mon", "tue", "wed", "thu", "fri"],
            sessions_per_week: Some(5),
            uniform_minutes: true,
        },
    );
    for w in array(&j["scenarios"][0], "weeks") {
        let sessions = array(w, "sessions");
        assert!(
            sessions
                .iter()
                .all(|s| s["minutes"].as_u64().unwrap() <= 45)
        );
        // The week's energy is kept.
        assert!(weekly_gross(w) >= 1200.0 - 1e-3, "{}", weekly_gross(w));
    }
}

#[test]
fn over_max_split_gives_two_equal_bouts_a_day() {
    let j = schedule_json(&over_max_plan(40, "split", ""));
    let msg = over_max_message(&j);
    assert!(
        msg.contains("(split: each session given as two equal bouts on the same day)"),
        "{msg}"
    );
    assert!(!msg.contains("still over"), "{msg}");
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-04",
            weeks: 8,
            follow_up_weeks: 0,
            days: &["mon", "wed", "fri"],
            sessions_per_week: Some(3),
            uniform_minutes: true,
        },
    );
    for w in array(&j["scenarios"][0], "weeks") {
        let sessions = array(w, "sessions");
        assert_eq!(sessions.len(), 6, "two bouts on each of three days");
        for pair in sessions.chunks(2) {
            assert_eq!(pair[0]["date"], pair[1]["date"]);
            assert_eq!(pair[0]["minutes"], pair[1]["minutes"]);
            assert!(pair[0]["minutes"].as_u64().unwrap() <= 40);
        }
        assert!(weekly_gross(w) >= 1200.0 - 1e-3);
    }
}

#[test]
fn over_max_policies_that_cannot_fit_say_still_over() {
    for policy in ["add-session", "split"] {
        let j = schedule_json(&over_max_plan(20, policy, "\nspare_days = [\"sat\"]"));
        let msg = over_max_message(&j);
        assert!(
            msg.contains("; still over the maximum after that in weeks 1-8"),
            "{policy}: {msg}"
        );
    }
}

// ---------------------------------------------------------------------------
// schedule: table, csv, --scenario, --out
// ---------------------------------------------------------------------------

const CAUTION_WORDS: [&str; 4] = [
    "Screen first: complete a pre-participation health screening (ACSM 2015)",
    "Medical clearance: where the screening calls for it",
    "Stop exercising and seek help at once on chest pain",
    "the licensed professionals responsible for the participant decide",
];

#[test]
fn demo_table_shows_baseline_schedule_outcome_and_cautions() {
    let r = run(dosewright().arg("schedule"));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stderr, "");
    let t = &r.stdout;
    assert!(t.starts_with("dosewright session schedule: participant DEMO-017 ("));
    for words in [
        "Baseline\n",
        "fat mass 38.0 kg (36.5% body fat, measured)",
        "Schedule for scenario \"as prescribed\" (1 of 3; --scenario NAME shows another)",
        "| 1    | 2027-01-11 | mon |",
        "| 36   | 2027-09-13 | -   | follow-up |",
        "Exercise stops after week 24; weeks 25-36 are follow-up with no sessions.",
        "Projected outcome by scenario",
        "| eats back 40%      | 2027-09-20 |",
        "| mixed compensation | 2027-09-20 |",
        "Warnings: none",
        "Cautions\n",
    ] {
        assert!(t.contains(words), "table lacks {words:?}");
    }
    for words in CAUTION_WORDS {
        assert!(t.contains(words), "table lacks the caution {words:?}");
    }
    // The outcome rows carry a projection band around the projected mass.
    assert!(t.contains("| mass [kg] |   band [kg] |"), "no band column");
    let mut rows = 0;
    for line in t.lines() {
        let cells: Vec<&str> = line.split('|').map(str::trim).collect();
        if cells.len() < 5
            || !["as prescribed", "eats back 40%", "mixed compensation"].contains(&cells[1])
        {
            continue;
        }
        rows += 1;
        let mass: f64 = cells[3].parse().expect("the mass is a number");
        let (lo, hi) = cells[4].split_once('-').expect("a band reads LOW-HIGH");
        let (lo, hi): (f64, f64) = (lo.parse().unwrap(), hi.parse().unwrap());
        assert!(
            lo <= mass && mass <= hi,
            "band {lo}-{hi} misses {mass}: {line}"
        );
    }
    assert!(rows >= 3, "{rows} outcome rows with a band");
    // Same as asking for the table by name.
    let named = run(dosewright().args(["schedule", "--format", "table"]));
    assert_eq!(named.code, Some(0), "{}", named.stderr);
    assert_eq!(named.stdout, r.stdout);
}

#[test]
fn scenario_picks_whose_schedule_the_table_shows() {
    let r = run(dosewright().args(["schedule", "--scenario", "eats back 40%"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(r.stdout.contains(
        "Schedule for scenario \"eats back 40%\" (2 of 3; --scenario NAME shows another): intake rises by 40% of exercise energy, reaching it with a 21-day lag"
    ));
    assert!(!r.stdout.contains("Schedule for scenario \"as prescribed\""));
    let first = run(dosewright().arg("schedule"));
    assert_eq!(first.code, Some(0), "{}", first.stderr);
    assert!(
        first
            .stdout
            .contains("Schedule for scenario \"as prescribed\"")
    );
    assert_ne!(first.stdout, r.stdout);
}

#[test]
fn an_unknown_scenario_is_bad_input_with_the_names_on_offer() {
    for format in ["table", "csv", "json"] {
        let r = run(dosewright().args(["schedule", "--scenario", "nope", "--format", format]));
        assert_eq!(r.code, Some(2));
        assert_eq!(r.stdout, "");
        assert_eq!(
            r.stderr,
            "error: --scenario: no scenario named \"nope\" in built-in demo plan (plans/demo.toml); the plan has \"as prescribed\", \"eats back 40%\", \"mixed compensation\"\n"
        );
    }
    let (_d, r) = run_plan(BASE, &["schedule", "--scenario", "As Prescribed"]);
    assert_eq!(r.code, Some(2));
    assert_eq!(r.stdout, "");
    assert_eq!(
        r.stderr,
        "error: --scenario: no scenario named \"As Prescribed\" in plan.toml; the plan has \"as prescribed\"\n"
    );
}

#[test]
fn csv_has_one_row_per_session_and_per_follow_up_week() {
    let r = run(dosewright().args(["schedule", "--format", "csv"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let mut rd = csv::Reader::from_reader(r.stdout.as_bytes());
    let header: Vec<String> = rd.headers().unwrap().iter().map(String::from).collect();
    assert_eq!(
        header,
        [
            "scenario",
            "week",
            "phase",
            "week_start",
            "reference_mass_kg",
            "mass_source",
            "date",
            "weekday",
            "minutes",
            "met",
            "gross_kcal",
            "net_kcal",
            "relative_intensity",
            "week_end_mass_kg"
        ]
    );
    let rows: Vec<csv::StringRecord> = rd.records().map(|r| r.unwrap()).collect();
    // 3 scenarios x (24 weeks x 3 sessions + 12 follow-up weeks).
    assert_eq!(rows.len(), 3 * (24 * 3 + 12));
    let mut last: Option<(String, String)> = None;
    for row in &rows {
        let minutes: u32 = row[8].parse().expect("minutes are whole numbers");
        match &row[2] {
            "protocol" => {
                assert!(minutes > 0);
                let d = date(&row[6]);
                assert_eq!(weekday_word(d), &row[7]);
                assert!(["mon", "wed", "fri"].contains(&&row[7]));
                for col in [4, 9, 10, 11, 12, 13] {
                    let x: f64 = row[col].parse().expect("a number");
                    assert!(x.is_finite() && x > 0.0);
                }
                if let Some((s, prev)) = &last
                    && s == &row[0]
                {
                    assert!(prev.as_str() < &row[6], "date order");
                }
                last = Some((row[0].to_string(), row[6].to_string()));
            }
            "follow-up" => {
                assert_eq!(minutes, 0);
                assert_eq!(&row[6], "");
            }
            other => panic!("phase {other}"),
        }
    }
    // Warnings and cautions go to stderr beside machine-readable output.
    assert!(
        r.stderr.starts_with("Warnings: none\nCautions\n"),
        "{}",
        r.stderr
    );
    for words in CAUTION_WORDS {
        assert!(r.stderr.contains(words));
        assert!(!r.stdout.contains(words));
    }
}

#[test]
fn a_plan_without_screening_says_screening_not_recorded_everywhere() {
    let plan = base_with(&[(BASE_SCREENING, "")], "");
    let (_d, table) = run_plan(&plan, &["schedule"]);
    let (_d, check) = run_plan(&plan, &["check"]);
    let (_d, csv) = run_plan(&plan, &["schedule", "--format", "csv"]);
    for r in [&table, &check, &csv] {
        assert_eq!(r.code, Some(0), "{}", r.stderr);
    }
    for (what, out) in [
        ("table", &table.stdout),
        ("check", &check.stdout),
        ("csv stderr", &csv.stderr),
    ] {
        assert!(
            out.contains("Screening result: screening not recorded"),
            "{what}"
        );
        assert!(
            out.contains("[screening-not-recorded] screening not recorded"),
            "{what}"
        );
        for words in CAUTION_WORDS {
            assert!(out.contains(words), "{what} lacks {words:?}");
        }
    }
    let j = schedule_json(&plan);
    assert_eq!(warning_codes(&j), ["screening-not-recorded"]);
    // With the screening block, none of that.
    let (_d, with) = run_plan(BASE, &["schedule"]);
    assert_eq!(with.code, Some(0), "{}", with.stderr);
    assert!(
        with.stdout.contains("Screening result: "),
        "{}",
        with.stdout
    );
    assert!(!with.stdout.contains("screening not recorded"));
}

#[test]
fn out_writes_the_file_atomically_and_prints_nothing() {
    let dir = Scratch::new("out");
    dir.write("plan.toml", BASE);
    for (format, file) in [
        ("json", "out.json"),
        ("csv", "out.csv"),
        ("table", "out.txt"),
    ] {
        let direct = run(dir
            .cmd()
            .args(["schedule", "plan.toml", "--format", format]));
        assert_eq!(direct.code, Some(0));
        // An older file of that name is replaced.
        dir.write(file, "old contents\n");
        let r = run(dir
            .cmd()
            .args(["schedule", "plan.toml", "--format", format, "--out", file]));
        assert_eq!(r.code, Some(0), "{}", r.stderr);
        assert_eq!(r.stdout, "", "--out prints nothing on stdout");
        assert!(
            r.stderr.ends_with(&format!("wrote {file}\n")),
            "{}",
            r.stderr
        );
        let written = std::fs::read_to_string(dir.path().join(file)).unwrap();
        assert_eq!(
            written, direct.stdout,
            "{format}: the file holds the output"
        );
    }
    // No temporary file is left behind.
    assert_eq!(
        dir.listing(),
        ["out.csv", "out.json", "out.txt", "plan.toml"]
    );
}

#[test]
fn out_refuses_to_overwrite_the_input_plan() {
    let dir = Scratch::new("out-input");
    dir.write("plan.toml", BASE);
    for target in ["plan.toml", "./plan.toml"] {
        let r = run(dir
            .cmd()
            .args(["schedule", "plan.toml", "--format", "json", "--out", target]));
        assert_eq!(r.code, Some(2));
        assert_eq!(r.stdout, "");
        assert_eq!(
            r.stderr,
            format!("error: --out {target}: that is an input file; refusing to overwrite it\n")
        );
        assert_eq!(
            std::fs::read_to_string(dir.path().join("plan.toml")).unwrap(),
            BASE
        );
    }
    assert_eq!(dir.listing(), ["plan.toml"]);
}

#[test]
fn bad_arguments_exit_2_with_nothing_on_stdout() {
    for args in [
        &["schedule", "--format", "xml"][..],
        &["frobnicate"][..],
        &["check"][..],
        &["schedule", "--bogus"][..],
    ] {
        let r = run(dosewright().args(args));
        assert_eq!(r.code, Some(2), "{args:?}");
        assert_eq!(r.stdout, "", "{args:?}");
        assert!(r.stderr.starts_with("error: "), "{args:?}: {}", r.stderr);
    }
    let r = run(dosewright().args(["schedule", "--format", "xml"]));
    assert!(r.stderr.contains("[possible values: table, csv, json]"));
}

// ---------------------------------------------------------------------------
// check, init, activities
// ---------------------------------------------------------------------------

#[test]
fn check_prints_the_resolved_assumptions_with_every_default() {
    let (_d, r) = run_plan(BASE, &["check"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    for words in [
        "plan.toml: the plan is valid.",
        "Participant T-001: female, 40 years, 165.0 cm",
        "fat mass 30.4 kg (38.0% body fat, measured)",
        "Dose: 1200 kcal/week, gross; sessions on mon wed fri; no maximum session length",
        "Protocol: 8 weeks from 2027-01-04, 0 follow-up weeks, ends 2027-03-01",
        "Ramp: none (full dose from week 1)",
        "Minutes round up to: 1 min",
        "RMR equation: mifflin-st-jeor",
        "exercise energy counted above: the participant's own RMR (own-rmr)",
        "TEF 0.10 of intake; fat 9500 kcal/kg; fat-free 1020 kcal/kg; Forbes constant 10.4 kg",
        "as prescribed: every session delivered as prescribed; nothing compensated",
        "Warnings: none",
    ] {
        assert!(
            r.stdout.contains(words),
            "check lacks {words:?}:\n{}",
            r.stdout
        );
    }
    for words in CAUTION_WORDS {
        assert!(r.stdout.contains(words));
    }
    // check does not print a schedule.
    assert!(!r.stdout.contains("| 2027-01-04 |"));
}

#[test]
fn init_prints_the_starter_plan_on_stdout() {
    let r = run(dosewright().arg("init"));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stderr, "");
    assert!(r.stdout.contains("\n# A starter plan for dosewright."));
    // The cautions come first, before any key.
    assert!(
        r.stdout
            .starts_with("# Before any exercise: complete the pre-participation health screening")
    );
    let t: toml::Table = toml::from_str(&r.stdout).expect("the starter is TOML");
    for k in ["participant", "protocol", "activity", "model", "scenario"] {
        assert!(t.contains_key(k), "starter lacks [{k}]");
    }
}

#[test]
fn init_file_writes_a_starter_that_passes_check_and_never_overwrites() {
    let dir = Scratch::new("init");
    let r = run(dir.cmd().args(["init", "starter.toml"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stdout, "");
    assert_eq!(
        r.stderr,
        "wrote starter.toml; edit it, then run `dosewright check starter.toml`\n"
    );
    let written = std::fs::read_to_string(dir.path().join("starter.toml")).unwrap();
    assert_eq!(written, run(dosewright().arg("init")).stdout);
    let check = run(dir.cmd().args(["check", "starter.toml"]));
    assert_eq!(check.code, Some(0), "{}", check.stderr);
    assert!(
        check
            .stdout
            .starts_with("starter.toml: the plan is valid.\n")
    );
    let sched = run(dir
        .cmd()
        .args(["schedule", "starter.toml", "--format", "json"]));
    assert_eq!(sched.code, Some(0), "{}", sched.stderr);
    assert_eq!(dir.listing(), ["starter.toml"]);

    // An existing file is left alone: exit 2, same bytes.
    dir.write("mine.toml", "# my own plan\n");
    for name in ["mine.toml", "starter.toml"] {
        let before = std::fs::read(dir.path().join(name)).unwrap();
        let r = run(dir.cmd().args(["init", name]));
        assert_eq!(r.code, Some(2));
        assert_eq!(r.stdout, "");
        assert_eq!(
            r.stderr,
            format!(
                "error: {name}: the file exists; refusing to overwrite it (choose another name or remove it first)\n"
            )
        );
        assert_eq!(std::fs::read(dir.path().join(name)).unwrap(), before);
    }
    assert_eq!(dir.listing(), ["mine.toml", "starter.toml"]);
}

#[test]
fn activities_lists_the_whole_table_with_the_acsm_equations() {
    let r = run(dosewright().arg("activities"));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let rows = activity_rows(&r.stdout);
    assert!(
        rows.len() >= 80,
        "at least 80 activities, got {}",
        rows.len()
    );
    assert!(
        r.stdout
            .starts_with(&format!("{} activities in the built-in table.", rows.len()))
    );
    let codes: BTreeSet<&str> = rows.iter().map(|r| r.0.as_str()).collect();
    assert_eq!(codes.len(), rows.len(), "codes are unique");
    assert!(codes.contains("17200") && codes.contains("02010"));
    assert!(rows.iter().all(|r| r.1 > 1.0 && r.1 <= 25.0));
    for words in [
        "Ainsworth et al. 2011 Compendium of Physical Activities",
        "ACSM metabolic equations",
        "| walking ",
        "50-100 m/min",
        "| running ",
        "above 134 m/min",
        "| leg cycling ",
        "300-1200 kg*m/min",
    ] {
        assert!(r.stdout.contains(words), "activities lacks {words:?}");
    }
    for words in CAUTION_WORDS {
        assert!(
            r.stdout.contains(words),
            "activities lacks the caution {words:?}"
        );
    }
}

#[test]
fn activities_searches_by_words_code_prefix_and_met_range() {
    let all = activity_rows(&run(dosewright().arg("activities")).stdout);

    let r = run(dosewright().args(["activities", "walk"]));
    assert_eq!(r.code, Some(0));
    let walk = activity_rows(&r.stdout);
    assert!(!walk.is_empty() && walk.len() < all.len());
    for (code, _, group, label) in &walk {
        let hay = format!("{label} {group}").to_lowercase();
        assert!(hay.contains("walk"), "{code} {label} does not match walk");
    }
    assert!(
        r.stdout
            .starts_with(&format!("{} activities matching \"walk\".", walk.len()))
    );
    let expected = all
        .iter()
        .filter(|r| format!("{} {}", r.3, r.2).to_lowercase().contains("walk"))
        .count();
    assert_eq!(walk.len(), expected, "every walking row is found");

    let r = run(dosewright().args(["activities", "0201"]));
    assert_eq!(r.code, Some(0));
    let prefix = activity_rows(&r.stdout);
    assert!(!prefix.is_empty());
    assert!(prefix.iter().all(|r| r.0.starts_with("0201")), "{prefix:?}");
    assert_eq!(
        prefix.len(),
        all.iter().filter(|r| r.0.starts_with("0201")).count()
    );

    let r = run(dosewright().args(["activities", "--met-min", "8", "--met-max", "10"]));
    assert_eq!(r.code, Some(0));
    let band = activity_rows(&r.stdout);
    assert!(!band.is_empty());
    assert!(band.iter().all(|r| (8.0..=10.0).contains(&r.1)), "{band:?}");
    assert_eq!(
        band.len(),
        all.iter().filter(|r| (8.0..=10.0).contains(&r.1)).count()
    );
    assert!(all.iter().any(|r| r.1 < 8.0) && all.iter().any(|r| r.1 > 10.0));
    assert!(
        r.stdout
            .starts_with(&format!("{} activities between 8 and 10 MET.", band.len()))
    );
}

#[test]
fn activities_refuses_an_impossible_met_range() {
    for (args, msg) in [
        (
            &["activities", "--met-min", "10", "--met-max", "8"][..],
            "error: --met-min 10 is above --met-max 8\n",
        ),
        (
            &["activities", "--met-min", "30"][..],
            "error: invalid value '30' for '--met-min <MET>': allowed 0 to 25 MET\n\nFor more information, try '--help'.\n",
        ),
        (
            &["activities", "--met-max", "nan"][..],
            "error: invalid value 'nan' for '--met-max <MET>': allowed 0 to 25 MET\n\nFor more information, try '--help'.\n",
        ),
    ] {
        let r = run(dosewright().args(args));
        assert_eq!(r.code, Some(2), "{args:?}");
        assert_eq!(r.stdout, "");
        assert_eq!(r.stderr, msg);
    }
}

// ---------------------------------------------------------------------------
// Snapshots of the demo plan (review changes with `cargo insta review`)
// ---------------------------------------------------------------------------

fn demo_output(args: &[&str]) -> String {
    let r = run(dosewright().current_dir(manifest_dir()).args(args));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    r.stdout
}

#[test]
fn snapshot_demo_schedule_table() {
    insta::assert_snapshot!("demo_schedule_table", demo_output(&["schedule"]));
}

/// The demo's weeks the snapshots show in full: the first two and the last of
/// follow-up. The others are checked by structure.
const SHOWN_WEEKS: [u64; 3] = [1, 2, 36];

/// The keys of an object, sorted.
fn keys(v: &Value) -> BTreeSet<String> {
    v.as_object()
        .unwrap_or_else(|| panic!("not an object: {v}"))
        .keys()
        .cloned()
        .collect()
}

/// `weeks` with only the [`SHOWN_WEEKS`], and how many were left out.
fn shown_weeks(weeks: &[Value]) -> (Vec<Value>, usize) {
    let kept: Vec<Value> = weeks
        .iter()
        .filter(|w| SHOWN_WEEKS.contains(&w["week"].as_u64().expect("a week number")))
        .cloned()
        .collect();
    let left = weeks.len() - kept.len();
    (kept, left)
}

#[test]
fn snapshot_demo_schedule_csv() {
    let out = demo_output(&["schedule", "--format", "csv"]);
    let j: Value = serde_json::from_str(&demo_output(&["schedule", "--format", "json"])).unwrap();
    let mut rd = csv::Reader::from_reader(out.as_bytes());
    let header = rd.headers().unwrap().clone();
    let rows: Vec<csv::StringRecord> = rd.records().map(|r| r.unwrap()).collect();
    // Every row against the JSON of the same run: one row per session of each
    // protocol week and one per follow-up week, in scenario and week order, with the
    // session's date, minutes and energy and the week's masses.
    let mut expected_rows = 0;
    let mut it = rows.iter();
    for s in array(&j, "scenarios") {
        for w in array(s, "weeks") {
            let sessions = array(w, "sessions");
            let n = sessions.len().max(1);
            expected_rows += n;
            for k in 0..n {
                let row = it
                    .next()
                    .expect("a CSV row for every session and follow-up week");
                assert_eq!(row.len(), header.len(), "{row:?}");
                assert_eq!(&row[0], text(s, "name"));
                assert_eq!(row[1].parse::<u64>().unwrap(), w["week"].as_u64().unwrap());
                assert_eq!(&row[2], text(w, "phase"));
                assert_eq!(&row[3], text(w, "start"));
                let close = |cell: &str, x: f64, tol: f64| {
                    let c: f64 = cell.parse().expect("a number");
                    assert!((c - x).abs() <= tol, "{cell} against {x} in {row:?}");
                };
                close(&row[4], num(w, "reference_mass_kg"), 6e-4);
                close(&row[13], num(&w["end"], "mass_kg"), 6e-4);
                if let Some(sess) = sessions.get(k) {
                    assert_eq!(&row[6], text(sess, "date"));
                    assert_eq!(&row[7], text(sess, "weekday"));
                    close(&row[8], num(sess, "minutes"), 0.0);
                    close(&row[10], num(sess, "gross_kcal"), 0.06);
                    close(&row[11], num(sess, "net_kcal"), 0.06);
                } else {
                    assert_eq!(&row[6], "");
                    assert_eq!(&row[8], "0");
                }
            }
        }
    }
    assert_eq!(rows.len(), expected_rows);
    assert_eq!(rows.len(), 3 * (24 * 3 + 12));
    // The snapshot: the header and the rows of the shown weeks.
    let mut shown = csv::Writer::from_writer(Vec::new());
    shown.write_record(&header).unwrap();
    for row in &rows {
        if SHOWN_WEEKS.contains(&row[1].parse().unwrap()) {
            shown.write_record(row).unwrap();
        }
    }
    let shown = String::from_utf8(shown.into_inner().unwrap()).unwrap();
    insta::assert_snapshot!("demo_schedule_csv", shown);
}

#[test]
fn snapshot_demo_schedule_json() {
    let out = demo_output(&["schedule", "--format", "json"]).replace(
        concat!("\"dosewright ", env!("CARGO_PKG_VERSION"), "\""),
        "\"dosewright [version]\"",
    );
    assert!(out.contains("\"tool\": \"dosewright [version]\""));
    let mut j: Value = serde_json::from_str(&out).expect("valid JSON");
    // The whole output is the pretty form of its own value (so the trimmed snapshot
    // below pins the layout of the rest too).
    assert_eq!(out, serde_json::to_string_pretty(&j).unwrap() + "\n");
    // Structure of the weeks the snapshot leaves out.
    let total = 24 + 12;
    for s in array(&j, "scenarios") {
        let weeks = array(s, "weeks");
        assert_eq!(weeks.len(), total, "{}", text(s, "name"));
        let protocol_keys = keys(&weeks[0]);
        let end_keys = keys(&weeks[0]["end"]);
        let session_keys = keys(&array(&weeks[0], "sessions")[0]);
        let start = date(text(&weeks[0], "start"));
        for (i, w) in weeks.iter().enumerate() {
            assert_eq!(w["week"].as_u64(), Some(i as u64 + 1));
            assert_eq!(keys(w), protocol_keys, "week {}", i + 1);
            assert_eq!(keys(&w["end"]), end_keys, "week {}", i + 1);
            assert_eq!(
                date(text(w, "start")),
                start + chrono::Days::new(7 * i as u64)
            );
            let sessions = array(w, "sessions");
            assert_eq!(sessions.len() as f64, num(w, "sessions_per_week"));
            for sess in sessions {
                assert_eq!(keys(sess), session_keys, "week {}", i + 1);
            }
            let phase = if i < 24 { "protocol" } else { "follow-up" };
            assert_eq!(text(w, "phase"), phase, "week {}", i + 1);
            assert_eq!(sessions.is_empty(), phase == "follow-up", "week {}", i + 1);
        }
        // The outcome is the last week's end, and the protocol end week 24's.
        let (o, last, w24) = (&s["outcome"], &weeks[total - 1]["end"], &weeks[23]["end"]);
        for k in [
            "mass_kg",
            "fat_mass_kg",
            "fat_free_mass_kg",
            "achieved_deficit_kcal",
        ] {
            assert_eq!(num(o, k), num(last, k), "{k}");
        }
        assert_eq!(num(o, "protocol_end_mass_kg"), num(w24, "mass_kg"));
    }
    for b in array(&j["projection_band"], "scenarios") {
        let weeks = array(b, "weeks");
        assert_eq!(weeks.len(), total);
        for (i, w) in weeks.iter().enumerate() {
            assert_eq!(w["week"].as_u64(), Some(i as u64 + 1));
            assert!(num(w, "mass_low_kg") <= num(w, "mass_high_kg"), "{w}");
        }
    }
    // The snapshot: every top-level key and summary, and the shown weeks.
    for path in [&["scenarios"][..], &["projection_band", "scenarios"][..]] {
        let mut v = &mut j;
        for p in path {
            v = &mut v[*p];
        }
        for s in v.as_array_mut().unwrap() {
            let (kept, left) = shown_weeks(s["weeks"].as_array().unwrap());
            s["weeks"] = Value::Array(kept);
            s["weeks_not_shown"] = Value::from(left);
        }
    }
    insta::assert_snapshot!(
        "demo_schedule_json",
        serde_json::to_string_pretty(&j).unwrap()
    );
}

#[test]
fn snapshot_check_example_plan() {
    insta::assert_snapshot!(
        "check_demo_plan",
        demo_output(&["check", "plans/demo.toml"])
    );
}

// ---------------------------------------------------------------------------
// Behaviour once reported as bugs, now fixed in src/
// ---------------------------------------------------------------------------

#[test]
fn cap_never_leaves_a_session_over_the_maximum() {
    // 400 kcal a session at 5.6 kcal/min. A step larger than the maximum is refused
    // (in the bad-plan table); a step that fits keeps every session within it.
    for (max, step) in [(20, 20), (40, 15), (20, 7), (45, 1)] {
        let plan = base_with(
            &[(
                "weeks = 8",
                &format!(
                    "weeks = 2\nmax_session_minutes = {max}\nover_max = \"cap\"\nround_minutes_to = {step}"
                ),
            )],
            "",
        );
        let j = schedule_json(&plan);
        assert_eq!(
            warning_codes(&j),
            ["session-over-max"],
            "max {max} step {step}"
        );
        for w in array(&j["scenarios"][0], "weeks") {
            for s in array(w, "sessions") {
                let m = s["minutes"].as_u64().unwrap();
                assert!(m <= max, "max {max} step {step}: capped session of {m} min");
                assert_eq!(
                    m % step,
                    0,
                    "max {max} step {step}: {m} min is not a whole step"
                );
                // The largest whole step within the maximum (docs/design.md section 1, "Cap").
                assert!(
                    m + step > max,
                    "max {max} step {step}: {m} min is cut too far"
                );
            }
        }
    }
}

#[test]
fn csv_carries_every_scenario_whatever_scenario_is_picked() {
    // The CSV is the machine-readable schedule: every scenario, like the JSON; the
    // table shows only the chosen one (scenario_picks_whose_schedule_the_table_shows).
    let all = run(dosewright().args(["schedule", "--format", "csv"]));
    let picked =
        run(dosewright().args(["schedule", "--format", "csv", "--scenario", "eats back 40%"]));
    assert_eq!(all.code, Some(0), "{}", all.stderr);
    assert_eq!(picked.code, Some(0), "{}", picked.stderr);
    assert_eq!(
        picked.stdout, all.stdout,
        "--scenario does not change the CSV"
    );
    let mut rd = csv::Reader::from_reader(picked.stdout.as_bytes());
    let mut names: Vec<String> = Vec::new();
    for x in rd.records() {
        let name = x.unwrap()[0].to_string();
        if names.last() != Some(&name) {
            names.push(name);
        }
    }
    assert_eq!(
        names,
        ["as prescribed", "eats back 40%", "mixed compensation"],
        "each scenario once, as one block, in plan order"
    );
    // The table, by contrast, shows the chosen scenario's sessions only.
    let table = run(dosewright().args(["schedule", "--scenario", "eats back 40%"]));
    assert_eq!(table.code, Some(0), "{}", table.stderr);
    assert!(
        table
            .stdout
            .contains("Schedule for scenario \"eats back 40%\"")
    );
    assert_eq!(table.stdout.matches("Schedule for scenario").count(), 1);
}

#[test]
fn schedule_help_says_what_scenario_picks_and_what_csv_and_json_carry() {
    let r = run(dosewright().args(["schedule", "--help"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    // Help text may wrap at the terminal width; compare with whitespace collapsed.
    let flat = r.stdout.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        flat.contains(
            "--scenario <SCENARIO> Whose schedule the table shows (default: the first scenario; CSV and JSON carry every scenario)"
        ),
        "{}",
        r.stdout
    );
    assert!(!flat.contains("table and CSV show"), "{}", r.stdout);
}

#[test]
fn a_session_of_a_day_or_more_is_refused() {
    let long = base_with(
        &[
            ("mass_kg = 80.0", "mass_kg = 50.0"),
            ("met = 4.0", "met = 1.5"),
            ("kcal_per_week = 1200", "kcal_per_session = 3000"),
            ("weeks = 8", "weeks = 1"),
        ],
        "",
    );
    for args in [
        &["check"][..],
        &["schedule", "--format", "csv"][..],
        &["schedule"][..],
    ] {
        let (_d, r) = run_plan(&long, args);
        assert_eq!(
            r.code,
            Some(2),
            "{args:?}: a 2286-minute session was scheduled"
        );
        assert_eq!(r.stdout, "", "{args:?}");
        assert!(
            r.stderr.contains("week 1 needs sessions of 2286 min"),
            "{args:?}: {}",
            r.stderr
        );
    }
    // The edge: a minutes dose on one weekday, 1439 minutes runs, 1440 does not.
    let one_day = |minutes: u32, extra: &str| {
        base_with(
            &[
                ("[\"mon\", \"wed\", \"fri\"]", "[\"mon\"]"),
                (
                    "kcal_per_week = 1200",
                    &format!("minutes_per_week = {minutes}"),
                ),
                ("weeks = 8", &format!("weeks = 2{extra}")),
            ],
            "",
        )
    };
    let (_d, r) = run_plan(&one_day(1439, ""), &["schedule", "--format", "json"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let (_d, r) = run_plan(&one_day(1440, ""), &["schedule", "--format", "json"]);
    assert_eq!(r.code, Some(2), "a 1440-minute session was scheduled");
    assert_eq!(r.stdout, "");
    assert!(r.stderr.contains("sessions of 1440 min"), "{}", r.stderr);
    // Splitting a day's work into two bouts on the same day does not get round it ...
    let split = one_day(1440, "\nmax_session_minutes = 600\nover_max = \"split\"");
    let (_d, r) = run_plan(&split, &["schedule", "--format", "json"]);
    assert_eq!(
        r.code,
        Some(2),
        "two 720-minute bouts on one day were scheduled"
    );
    // ... but capping the sessions does.
    let cap = one_day(1440, "\nmax_session_minutes = 600\nover_max = \"cap\"");
    let j = schedule_json(&cap);
    assert_eq!(j["scenarios"][0]["weeks"][0]["minutes_per_session"], 600);
}

#[test]
fn add_session_needs_a_free_weekday() {
    // All seven weekdays as session days leaves nothing to add to, also with an
    // explicitly empty spare_days.
    let seven = "[\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\", \"sun\"]";
    for spare in ["", "\nspare_days = []"] {
        let plan = base_with(
            &[
                ("[\"mon\", \"wed\", \"fri\"]", seven),
                (
                    "weeks = 8",
                    &format!(
                        "weeks = 2\nmax_session_minutes = 5\nover_max = \"add-session\"{spare}"
                    ),
                ),
            ],
            "",
        );
        let (_d, r) = run_plan(&plan, &["check"]);
        assert_eq!(r.code, Some(2), "{spare:?}: {}", r.stdout);
        assert_eq!(r.stdout, "");
        assert_eq!(
            r.stderr,
            "error: plan.toml:20:12: protocol.over_max: \"add-session\" needs a free weekday, but all seven are session days; use \"split\" or \"cap\"\n"
        );
    }
    // Six session days leave Sunday, and the extra session goes there.
    let six = base_with(
        &[
            (
                "[\"mon\", \"wed\", \"fri\"]",
                "[\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\"]",
            ),
            (
                "weeks = 8",
                "weeks = 2\nmax_session_minutes = 30\nover_max = \"add-session\"",
            ),
        ],
        "",
    );
    let j = schedule_json(&six);
    let msg = over_max_message(&j);
    assert!(
        msg.contains("(add-session: up to 1 extra session(s) a week on spare days)"),
        "{msg}"
    );
    for w in array(&j["scenarios"][0], "weeks") {
        let days: Vec<&str> = array(w, "sessions")
            .iter()
            .map(|s| weekday_word(date(text(s, "date"))))
            .collect();
        assert_eq!(days, ["mon", "tue", "wed", "thu", "fri", "sat", "sun"]);
    }
}

#[test]
fn activities_with_no_match_or_one_match_reads_well() {
    let r = run(dosewright().args(["activities", "zzz"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(
        r.stdout.starts_with("No activity matching \"zzz\".\n\n"),
        "{}",
        r.stdout
    );
    assert!(activity_rows(&r.stdout).is_empty());
    assert!(!r.stdout.contains("matches matching"));
    // The ACSM equations and the cautions are still shown.
    assert!(r.stdout.contains("ACSM metabolic equations"));
    for words in CAUTION_WORDS {
        assert!(r.stdout.contains(words), "lacks the caution {words:?}");
    }
    let r = run(dosewright().args(["activities", "17200"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(activity_rows(&r.stdout).len(), 1);
    assert!(
        r.stdout.starts_with("1 activity matching \"17200\". "),
        "{}",
        r.stdout
    );
    let r = run(dosewright().args(["activities", "--met-min", "0", "--met-max", "1.5"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(
        r.stdout
            .starts_with("No activity between 0 and 1.5 MET.\n\n"),
        "{}",
        r.stdout
    );
}

// ---------------------------------------------------------------------------
// Behaviour bugs still open in src/ (ignored until fixed; see the report)
// ---------------------------------------------------------------------------

#[test]
fn out_or_init_into_a_missing_folder_fails_without_output() {
    // What holds whatever the exit code: nothing on stdout, nothing written, the
    // path named. The exit code and wording are pinned by the ignored test below.
    let dir = Scratch::new("missing-folder");
    dir.write("plan.toml", BASE);
    for args in [
        &["schedule", "plan.toml", "--out", "no/such/folder/out.txt"][..],
        &["init", "no/such/folder/starter.toml"][..],
    ] {
        let r = run(dir.cmd().args(args));
        assert!(
            matches!(r.code, Some(1) | Some(2)),
            "{args:?}: {:?}",
            r.code
        );
        assert_eq!(r.stdout, "", "{args:?}");
        assert!(
            r.stderr.starts_with("error: no/such/folder/"),
            "{args:?}: {}",
            r.stderr
        );
        assert_eq!(r.stderr.lines().count(), 1, "{args:?}: {}", r.stderr);
    }
    assert_eq!(dir.listing(), ["plan.toml"]);
}

#[test]
fn out_or_init_into_a_missing_folder_is_a_bad_argument() {
    let dir = Scratch::new("missing-folder-2");
    dir.write("plan.toml", BASE);
    for args in [
        &["schedule", "plan.toml", "--out", "no/such/folder/out.txt"][..],
        &[
            "schedule",
            "plan.toml",
            "--format",
            "csv",
            "--out",
            "no/out.csv",
        ][..],
        &["init", "no/such/folder/starter.toml"][..],
    ] {
        let r = run(dir.cmd().args(args));
        assert_eq!(r.code, Some(2), "{args:?}: {}", r.stderr);
        assert_eq!(r.stdout, "", "{args:?}");
        assert!(
            r.stderr.contains("does not exist"),
            "{args:?}: {}",
            r.stderr
        );
        assert!(!r.stderr.contains("os error"), "{args:?}: {}", r.stderr);
    }
    assert_eq!(dir.listing(), ["plan.toml"]);
}

#[test]
fn a_not_utf8_column_counts_characters_like_every_other_message() {
    // `id = "Té` then 0xFF: the bad byte is the 9th character of line 2 (an editor's
    // column 9), but the 10th byte. TOML errors count characters.
    let mut bytes = BASE.replace("T-001", "Té-001").into_bytes();
    let at = bytes.windows(4).position(|w| w == b"-001").unwrap();
    bytes[at] = 0xFF;
    let problems = bad_run_problems(
        &bytes,
        &["check", "bad.toml"],
        "error: bad.toml: cannot read: not UTF-8 text (byte 0xFF at line 2, column 9); save the file as UTF-8",
    );
    assert!(problems.is_empty(), "{}", problems.join("\n"));
    // The same line with a value error after the é: the column counts characters.
    let problems = bad_run_problems(
        base_with(&[("[\"mon\", \"wed\", \"fri\"]", "[\"é\", 3]")], "").as_bytes(),
        &["check", "bad.toml"],
        "error: bad.toml:19:22: protocol.session_days: invalid type: integer `3`, expected a string",
    );
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn cap_says_what_length_it_cut_to() {
    // Maximum 40, 15-minute steps: sessions are cut to 30 minutes (docs/design.md section 1, "Cap": the largest
    // whole step that fits), yet the warning says "sessions cut to the maximum".
    let plan = base_with(
        &[(
            "weeks = 8",
            "weeks = 2\nmax_session_minutes = 40\nover_max = \"cap\"\nround_minutes_to = 15",
        )],
        "",
    );
    let j = schedule_json(&plan);
    assert_eq!(j["scenarios"][0]["weeks"][0]["minutes_per_session"], 30);
    let msg = over_max_message(&j);
    assert!(!msg.contains("cut to the maximum"), "{msg}");
    assert!(msg.contains("30 min"), "{msg}");
}

#[test]
fn activities_with_one_met_bound_reads_well() {
    let r = run(dosewright().args(["activities", "--met-min", "12"]));
    assert_eq!(r.code, Some(0));
    let n = activity_rows(&r.stdout).len();
    assert!(n > 1);
    let first = r.stdout.lines().next().unwrap();
    assert!(first.starts_with(&format!("{n} activities ")), "{first}");
    assert!(first.contains("12 MET"), "{first}");
    assert!(!first.contains("and any"), "{first}");
}
