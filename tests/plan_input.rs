//! Reading a plan file (docs/file-formats.md section 1): a missing file, a folder, bytes
//! that are not UTF-8, a byte-order mark and Windows line endings; bad plans whose
//! messages are checked beside the catalogue of tests/cases/bad-plan.
//!
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::*;

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
