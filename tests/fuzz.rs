//! Fuzzing in CI (docs/commands.md section 3, "What it refuses and why"): arbitrary
//! bytes and arbitrary structurally valid plans never panic, never hang (the horizon is
//! bounded), never print NaN or an infinity, and either succeed or fail with an error
//! whose exit code is 2. The same holds for logs. `fuzz/` has the coverage-guided
//! `cargo fuzz` targets; this file is the part that runs on every `cargo test`, within
//! a minute in a debug build.
//!
//! Case counts: PROPTEST_CASES, if set, is the number of cases of the main properties
//! (the expensive ones scale from it); unset, the defaults below keep the whole file
//! well under a minute. Failures are not persisted to files (rerun with the seed the
//! failure prints). Participants are invented (pseudonymous codes FZ-xx).

use dosewright::Error;
use dosewright::commands::LogInput;
use dosewright::commands::schedule::{schedule_report_logged, schedule_report_with_band};
use dosewright::log::{load_log, parse_log};
use dosewright::plan::{Plan, load_plan, parse_plan};
use dosewright::report::ScheduleReport;
use dosewright::report::units::{EnergyUnit, UnitSystem, Units};

/// The display units furthest from the model's own.
const US_KJ: Units = Units {
    system: UnitSystem::Us,
    energy: EnergyUnit::Kj,
};
use dosewright::simulate::observed::Observed;
use proptest::prelude::*;
use proptest::test_runner::TestCaseError;
use std::fmt::Write as _;
use std::sync::mpsc;
use std::time::Duration;

mod common;

/// Cases for a property whose default is `default`: PROPTEST_CASES scales every
/// property by the same factor (PROPTEST_CASES / 256), with at least one case, so
/// that the binary and the long horizons stay a small share of the time.
fn config(default: u32) -> ProptestConfig {
    let cases = match std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|s| s.parse::<u64>().ok())
    {
        Some(n) => ((u64::from(default) * n) / 256).clamp(1, u64::from(u32::MAX)) as u32,
        None => default,
    };
    ProptestConfig {
        cases,
        failure_persistence: None,
        ..ProptestConfig::default()
    }
}

/// Run `test` on `default` cases (scaled by PROPTEST_CASES, see [`config`]) of
/// `strategy`; a failure panics with the reason and the shrunk input. (The
/// `proptest!` macro would let PROPTEST_CASES override every count alike.)
fn fuzz<S: Strategy>(
    default: u32,
    strategy: S,
    test: impl Fn(S::Value) -> Result<(), TestCaseError>,
) {
    let mut runner = proptest::test_runner::TestRunner::new(config(default));
    if let Err(e) = runner.run(&strategy, test) {
        panic!("{e}");
    }
}

/// Longest a single case may take before it counts as a hang. Generous: CI machines
/// are slow and busy, and a debug build is slower still.
const HANG: Duration = Duration::from_secs(60);

/// Run `work` on its own thread; a panic is a failure with its message, and so is
/// taking longer than [`HANG`].
fn guarded<T: Send + 'static>(
    what: &str,
    work: impl FnOnce() -> Result<T, TestCaseError> + Send + 'static,
) -> Result<T, TestCaseError> {
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        let r = std::panic::catch_unwind(std::panic::AssertUnwindSafe(work));
        let _ = tx.send(r);
    });
    match rx.recv_timeout(HANG) {
        Ok(Ok(r)) => r,
        Ok(Err(panic)) => {
            let msg = panic
                .downcast_ref::<String>()
                .cloned()
                .or_else(|| panic.downcast_ref::<&str>().map(|s| s.to_string()))
                .unwrap_or_default();
            Err(TestCaseError::fail(format!("{what}: panicked: {msg}")))
        }
        Err(_) => Err(TestCaseError::fail(format!(
            "{what}: no answer within {HANG:?} (a hang?)"
        ))),
    }
}

// --- output checks ---------------------------------------------------------------------

/// A word of `text` that is how Rust or a renderer spells a non-finite number.
fn non_finite_word(text: &str) -> Option<String> {
    text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '.' || c == '-' || c == '+'))
        .map(|w| w.trim_matches(|c| c == '.' || c == '-' || c == '+'))
        .find(|w| matches!(*w, "NaN" | "nan" | "inf" | "Inf" | "infinity" | "Infinity"))
        .map(str::to_string)
}

/// `text` with every double-quoted string emptied. JSON and Debug text quote every
/// string, and strings hold the user's own words, which may well be "inf".
fn without_strings(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut chars = text.chars();
    while let Some(c) = chars.next() {
        if c != '"' {
            out.push(c);
            continue;
        }
        while let Some(d) = chars.next() {
            match d {
                '\\' => {
                    chars.next();
                }
                '"' => break,
                _ => {}
            }
        }
        out.push_str("\"\"");
    }
    out
}

/// Whether the report's user-given text (plan name, participant code, activity
/// label, scenario names) itself holds a word such as "inf"; the plain-text
/// renderings cannot be checked word by word then.
fn user_text_has_non_finite_word(r: &ScheduleReport) -> bool {
    let mut user = vec![r.plan.as_str(), &r.participant_id, &r.activity.label];
    user.extend(r.scenarios.iter().map(|s| s.name.as_str()));
    user.iter().any(|u| non_finite_word(u).is_some())
}

fn all_numbers_finite(v: &serde_json::Value) -> bool {
    match v {
        serde_json::Value::Number(n) => n.as_f64().is_some_and(f64::is_finite),
        serde_json::Value::Array(a) => a.iter().all(all_numbers_finite),
        serde_json::Value::Object(o) => o.values().all(all_numbers_finite),
        _ => true,
    }
}

/// Every rendering of a report is free of NaN and infinities. The JSON renderer
/// would hide a non-finite number as `null`, so the report's Debug text (which
/// shows every number as it is) is checked as well.
fn check_report(r: &ScheduleReport) -> Result<(), TestCaseError> {
    let json = dosewright::report::json::render(r);
    prop_assert!(!without_strings(&json).contains("NaN"), "JSON: {}", json);
    prop_assert_eq!(
        non_finite_word(&without_strings(&json)),
        None,
        "JSON: {}",
        json
    );
    let v: serde_json::Value = serde_json::from_str(&json)
        .map_err(|e| TestCaseError::fail(format!("the JSON does not parse: {e}")))?;
    prop_assert!(all_numbers_finite(&v));
    let debug = format!("{r:?}");
    prop_assert_eq!(
        non_finite_word(&without_strings(&debug)),
        None,
        "report: {}",
        debug
    );
    if user_text_has_non_finite_word(r) {
        return Ok(());
    }
    for units in [Units::default(), US_KJ] {
        for i in 0..r.scenarios.len() {
            let table = dosewright::report::table::render(r, i, units);
            prop_assert_eq!(non_finite_word(&table), None, "table: {}", table);
        }
    }
    let csv = dosewright::report::csv::render(r);
    prop_assert_eq!(non_finite_word(&csv), None, "CSV: {}", csv);
    for sc in &r.scenarios {
        for w in &sc.weeks {
            prop_assert!(w.end.mass_kg > 0.0 && w.end.fat_mass_kg >= 2.0);
            prop_assert!(w.end.fat_free_mass_kg > 0.0);
        }
    }
    Ok(())
}

/// An error is one a person can act on: exit code 2 and no nonsense in the words.
fn check_error(e: &Error) -> Result<(), TestCaseError> {
    let msg = e.to_string();
    prop_assert_eq!(e.exit_code(), 2, "{}", msg);
    prop_assert!(!matches!(e, Error::Output { .. }), "{}", msg);
    prop_assert!(!msg.trim().is_empty());
    if let Error::OutOfRange(r) = e {
        prop_assert!(msg.contains("on day") && msg.contains("fat-free mass"));
        prop_assert!(r.fat_kg.is_finite() && r.lean_kg.is_finite(), "{}", msg);
    }
    Ok(())
}

/// Simulate a valid plan as `schedule` does and check what comes out.
fn check_valid_plan(plan: &Plan) -> Result<(), TestCaseError> {
    prop_assert!(plan.protocol.total_weeks() >= 1 && plan.protocol.total_weeks() <= 520);
    match schedule_report_with_band(plan, None) {
        Ok(r) => check_report(&r),
        Err(e) => check_error(&e),
    }
}

/// Parse plan text; if it is valid, simulate it. Either way nothing panics or hangs.
fn check_plan_text(text: String) -> Result<(), TestCaseError> {
    guarded("plan", move || match parse_plan("fuzz.toml", &text) {
        Ok(plan) => check_valid_plan(&plan),
        Err(e) => {
            prop_assert!(
                matches!(e, Error::Input(_)),
                "a plan text can only be bad input: {e}"
            );
            check_error(&e)
        }
    })
}

// --- (a) arbitrary bytes and strings as a plan -----------------------------------------

/// A scratch file with `bytes` (a [`tempfile::TempPath`]), removed when dropped.
struct TempFile(tempfile::TempPath);

impl TempFile {
    fn new(tag: &str, bytes: &[u8]) -> TempFile {
        use std::io::Write;
        let mut f = tempfile::Builder::new()
            .prefix(&format!("dosewright-fuzz-{tag}-"))
            .tempfile()
            .expect("create a scratch file");
        f.write_all(bytes).expect("write a scratch file");
        f.flush().expect("flush a scratch file");
        TempFile(f.into_temp_path())
    }
}

/// Strings that look like TOML: table headers, keys of the plan and odd values.
fn toml_like() -> impl Strategy<Value = String> {
    let header = prop::sample::select(vec![
        "[participant]",
        "[participant.screening]",
        "[protocol]",
        "[protocol.dose]",
        "[protocol.ramp]",
        "[activity]",
        "[model]",
        "[[scenario]]",
        "[[participant]]",
        "[protocol.dose.x]",
    ])
    .prop_map(str::to_string);
    let key = prop::sample::select(vec![
        "id",
        "sex",
        "age_years",
        "height_cm",
        "mass_kg",
        "body_fat_percent",
        "rmr_kcal_per_day",
        "intake_kcal_per_day",
        "pal",
        "start",
        "weeks",
        "follow_up_weeks",
        "session_days",
        "spare_days",
        "max_session_minutes",
        "over_max",
        "round_minutes_to",
        "kcal_per_session",
        "kcal_per_week",
        "kcal_per_kg_week",
        "minutes_per_week",
        "basis",
        "mass_basis",
        "start_fraction",
        "compendium_code",
        "met",
        "walking",
        "running",
        "cycling_watts",
        "label",
        "name",
        "intake_fraction",
        "intake_lag_days",
        "activity_fraction",
        "rmr_adaptation_kcal_per_kg",
        "diet_change_kcal_per_day",
        "tef_fraction",
        "exercises_regularly",
        "dose.kcal_per_week",
    ]);
    let value = prop_oneof![
        odd_value().prop_map(str::to_string),
        any::<f64>().prop_map(|v| format!("{v:?}")),
        any::<i64>().prop_map(|v| v.to_string()),
        "\"[ -~]{0,12}\"",
        "[ -~]{0,12}",
    ];
    let line = prop_oneof![
        2 => header,
        6 => (key, value).prop_map(|(k, v)| format!("{k} = {v}")),
        1 => "[ -~\u{e9}\u{feff}\t]{0,30}",
    ];
    prop::collection::vec(line, 0..30).prop_map(|lines| lines.join("\n"))
}

/// Values users (and fuzzers) write where a number, a date or a list belongs.
fn odd_value() -> impl Strategy<Value = &'static str> {
    prop::sample::select(vec![
        "nan",
        "+nan",
        "-nan",
        "inf",
        "-inf",
        "+inf",
        "1e308",
        "1.7976931348623157e308",
        "-1e308",
        "5e-324",
        "0",
        "-0.0",
        "-1",
        "4294967296",
        "9223372036854775807",
        "-9223372036854775808",
        "0.1",
        "1.0000000001",
        "0.9999999999",
        "\"\"",
        "\"  \"",
        "\"\u{0}\"",
        "\"\u{e9}\u{20ac}\u{1f600}\"",
        "[]",
        "[\"mon\", \"mon\"]",
        "[\"mon\", 1]",
        "{}",
        "{ speed_kmh = nan }",
        "{ speed_kmh = 5.0, grade_percent = inf }",
        "true",
        "false",
        "2027-02-30",
        "0000-01-01",
        "9999-12-31",
        "2027-01-04T10:00:00",
        "2027-01-04T10:00:00Z",
        "10:00:00",
        "\"2027-13-01\"",
        "\"04/01/2027\"",
        "1_000",
        "0x10",
        "1,5",
    ])
}

/// (a) Arbitrary bytes: through the file reader (which names the first bad byte)
/// and, when they are UTF-8, through the text parser.
#[test]
fn arbitrary_bytes_as_a_plan_never_panic() {
    fuzz(256, prop::collection::vec(any::<u8>(), 0..512), |bytes| {
        let b = bytes.clone();
        guarded("load_plan", move || {
            let f = TempFile::new("plan", &b);
            match load_plan(&f.0) {
                Ok(plan) => check_valid_plan(&plan),
                Err(e) => check_error(&e),
            }
        })?;
        match String::from_utf8(bytes) {
            Ok(text) => check_plan_text(text),
            Err(_) => Ok(()),
        }
    });
}

/// (a) Arbitrary strings (any Unicode) as a plan.
#[test]
fn arbitrary_strings_as_a_plan_never_panic() {
    fuzz(256, any::<String>(), check_plan_text);
}

/// (a) Strings built from the plan's own headers and keys with odd values, which
/// get past the TOML parser far more often than random text.
#[test]
fn toml_like_strings_as_a_plan_never_panic() {
    fuzz(256, toml_like(), check_plan_text);
}

// --- (b) structurally valid plans ------------------------------------------------------

/// A number mostly inside `lo..=hi`, often at an end, rarely just outside (a plan
/// has some 25 numbers, so rare per number is often per plan).
fn around(lo: f64, hi: f64) -> BoxedStrategy<f64> {
    let span = hi - lo;
    prop_oneof![
                80 => lo..=hi,
        4 => Just(lo),
        4 => Just(hi),
        1 => (0.0001..0.05f64).prop_map(move |d| lo - d * span.max(1.0)),
        1 => (0.0001..0.05f64).prop_map(move |d| hi + d * span.max(1.0)),
    ]
    .boxed()
}

/// One of the allowed words, rarely a word that is not allowed.
fn word(allowed: Vec<&'static str>, bogus: &'static str) -> BoxedStrategy<&'static str> {
    prop_oneof![60 => prop::sample::select(allowed), 1 => Just(bogus)].boxed()
}

/// A whole number in `lo..=hi`, rarely one outside or not whole.
fn whole(lo: i64, hi: i64) -> BoxedStrategy<String> {
    prop_oneof![
                80 => (lo..=hi).prop_map(|v| v.to_string()),
        1 => Just((lo - 1).to_string()),
        1 => Just((hi + 1).to_string()),
        1 => (lo..=hi).prop_map(|v| format!("{v}.5")),
    ]
    .boxed()
}

/// A TOML float.
fn num(v: f64) -> String {
    format!("{v:?}")
}

const DAYS: [&str; 7] = ["mon", "tue", "wed", "thu", "fri", "sat", "sun"];

fn days_list(mask: u8, order: &[usize]) -> String {
    let v: Vec<String> = order
        .iter()
        .filter(|i| mask & (1 << **i) != 0)
        .map(|i| format!("\"{}\"", DAYS[*i]))
        .collect();
    format!("[{}]", v.join(", "))
}

fn participant() -> impl Strategy<Value = String> {
    (
        (
            word(vec!["female", "male"], "other"),
            around(18.0, 100.0),
            prop_oneof![30 => around(120.0, 230.0), 1 => 1.2..2.3f64],
            prop_oneof![
                20 => 17.0..42.0f64,
                5 => around(13.0, 80.0),
                1 => Just(f64::NAN),
            ],
            around(30.0, 350.0),
        ),
        (
            prop::option::weighted(
                0.7,
                prop_oneof![30 => around(3.0, 70.0), 1 => 0.01..0.99f64],
            ),
            prop::option::of(around(600.0, 5000.0)),
            prop::option::of(around(500.0, 10000.0)),
            prop::option::of(around(1.1, 2.5)),
            prop::option::of((any::<bool>(), any::<bool>(), any::<bool>(), any::<bool>())),
        ),
        0u32..100,
    )
        .prop_map(|((sex, age, height, bmi, raw_mass), (bf, rmr, intake, pal, scr), id)| {
            // A BMI gives a mass that fits the height (NaN: use the raw mass instead).
            let mass = if bmi.is_nan() {
                raw_mass
            } else {
                let h = height / 100.0;
                ((bmi * h * h).clamp(25.0, 400.0) * 10.0).round() / 10.0
            };
            let mut s = format!(
                "[participant]\nid = \"FZ-{id:02}\"\nsex = \"{sex}\"\nage_years = {}\n\
                 height_cm = {}\nmass_kg = {}\n",
                num(age),
                num(height),
                num(mass)
            );
            let opt = [
                ("body_fat_percent", bf),
                ("rmr_kcal_per_day", rmr),
                ("intake_kcal_per_day", intake),
                ("pal", pal),
            ];
            for (k, v) in opt {
                if let Some(v) = v {
                    let _ = writeln!(s, "{k} = {}", num(v));
                }
            }
            if let Some((a, b, c, d)) = scr {
                let _ = write!(
                    s,
                    "\n[participant.screening]\nexercises_regularly = {a}\nknown_disease = {b}\n\
                     signs_or_symptoms = {c}\nmedical_clearance = {d}\n"
                );
            }
            s
        })
}

/// The `[protocol]`, `[protocol.dose]` and `[protocol.ramp]` tables for a horizon
/// of `weeks` (and `follow_up` weeks after).
fn protocol(
    weeks: BoxedStrategy<String>,
    follow_up: BoxedStrategy<String>,
) -> impl Strategy<Value = String> {
    let dose = (
        prop::sample::select(vec![0usize, 1, 2, 3]),
        prop::option::of(around(10.0, 3000.0)),
        around(10.0, 3000.0),
        around(10.0, 15000.0),
        around(0.5, 150.0),
        around(5.0, 2100.0),
        prop::option::of(word(vec!["gross", "net"], "both")),
        prop::option::of(word(vec!["baseline", "current"], "now")),
    )
        .prop_map(|(kind, second, s, w, kg, m, basis, mass_basis)| {
            let (k, v) = [
                ("kcal_per_session", s),
                ("kcal_per_week", w),
                ("kcal_per_kg_week", kg),
                ("minutes_per_week", m),
            ][kind];
            let mut t = format!("\n[protocol.dose]\n{k} = {}\n", num(v));
            // Rarely a second amount (refused: exactly one).
            if let (Some(x), true) = (second, kind != 0 && v < 10.1) {
                let _ = writeln!(t, "kcal_per_session = {}", num(x));
            }
            if let Some(b) = basis {
                let _ = writeln!(t, "basis = \"{b}\"");
            }
            if let Some(b) = mass_basis {
                let _ = writeln!(t, "mass_basis = \"{b}\"");
            }
            t
        });
    (
        (
            0u32..3000,
            prop::bool::weighted(0.1),
            weeks,
            prop::option::of(follow_up),
            1u8..128,
            Just((0..7).collect::<Vec<usize>>()).prop_shuffle(),
            prop::option::of(0u8..128),
        ),
        (
            prop::option::weighted(0.7, around(5.0, 600.0)),
            prop::option::weighted(
                0.5,
                word(vec!["flag", "cap", "add-session", "split"], "stop"),
            ),
            prop::option::of(prop_oneof![8 => whole(1, 5), 1 => whole(1, 30)]),
            dose,
            prop::option::of((whole(1, 2), prop::option::of(around(0.0, 1.0)))),
            prop::bool::weighted(0.01),
        ),
    )
        .prop_map(
            |(
                (offset, quoted, weeks, follow_up, mask, order, spare),
                (max, over, round, dose, ramp, no_days),
            )| {
                let start = chrono::NaiveDate::from_ymd_opt(2026, 1, 1).expect("a date")
                    + chrono::Days::new(u64::from(offset));
                let start = if quoted {
                    format!("\"{start}\"")
                } else {
                    start.to_string()
                };
                let mut t = format!("\n[protocol]\nstart = {start}\nweeks = {weeks}\n");
                if let Some(f) = follow_up {
                    let _ = writeln!(t, "follow_up_weeks = {f}");
                }
                let days = if no_days {
                    "[]".to_string()
                } else {
                    days_list(mask, &order)
                };
                let _ = writeln!(t, "session_days = {days}");
                if let Some(sp) = spare {
                    // Mostly the other weekdays; sometimes a clash (refused).
                    let sp = if sp % 25 == 0 { sp } else { sp & !mask };
                    let _ = writeln!(t, "spare_days = {}", days_list(sp, &order));
                }
                if let Some(m) = max {
                    let _ = writeln!(t, "max_session_minutes = {}", num(m));
                }
                if let Some(o) = over {
                    let _ = writeln!(t, "over_max = \"{o}\"");
                }
                if let Some(r) = round {
                    let _ = writeln!(t, "round_minutes_to = {r}");
                }
                t.push_str(&dose);
                if let Some((rw, sf)) = ramp {
                    let _ = write!(t, "\n[protocol.ramp]\nweeks = {rw}\n");
                    if let Some(sf) = sf {
                        let _ = writeln!(t, "start_fraction = {}", num(sf));
                    }
                }
                t
            },
        )
}

fn activity() -> impl Strategy<Value = String> {
    let intensity = prop_oneof![
        prop::sample::select(vec![
            "compendium_code = \"17200\"",
            "compendium_code = \"17151\"",
            "compendium_code = \"12120\"",
            "compendium_code = \"02101\"",
            "compendium_code = \"01018\"",
            "compendium_code = \"15710\"",
            "compendium_code = \"99999\"",
            "compendium_code = 17200",
            "compendium_code = \"17200\"",
            "compendium_code = \"17151\"",
            "compendium_code = \"02101\"",
            "compendium_code = \"15710\"",
        ])
        .prop_map(str::to_string),
        prop_oneof![
            8 => around(1.0, 25.0),
            1 => Just(1.0000001),
            1 => Just(1.01),
        ]
        .prop_map(|m| format!("met = {}", num(m))),
        (around(1.0, 12.0), prop::option::of(around(0.0, 40.0))).prop_map(|(s, g)| match g {
            Some(g) => format!(
                "walking = {{ speed_kmh = {}, grade_percent = {} }}",
                num(s),
                num(g)
            ),
            None => format!("walking = {{ speed_kmh = {} }}", num(s)),
        }),
        (around(4.0, 30.0), prop::option::of(around(0.0, 40.0))).prop_map(|(s, g)| match g {
            Some(g) => format!(
                "running = {{ speed_kmh = {}, grade_percent = {} }}",
                num(s),
                num(g)
            ),
            None => format!("running = {{ speed_kmh = {} }}", num(s)),
        }),
        around(10.0, 600.0).prop_map(|w| format!("cycling_watts = {}", num(w))),
    ];
    (
        intensity,
        prop::option::of(word(vec!["brisk walk", "\u{e9}lan \u{1f6b6}"], " ")),
        prop::bool::weighted(0.03),
    )
        .prop_map(|(i, label, twice)| {
            let mut t = format!("\n[activity]\n{i}\n");
            if twice {
                t.push_str("met = 4.0\n");
            }
            if let Some(l) = label {
                let _ = writeln!(t, "label = \"{l}\"");
            }
            t
        })
}

fn model() -> impl Strategy<Value = String> {
    prop::option::of((
        prop::option::of(word(
            vec![
                "mifflin-st-jeor",
                "harris-benedict-revised",
                "katch-mcardle",
                "cunningham",
                "livingston-kohlstadt",
            ],
            "schofield",
        )),
        prop::option::of(word(vec!["own-rmr", "one-met"], "zero")),
        prop::option::of(around(0.0, 0.25)),
        prop::option::of(around(8000.0, 10000.0)),
        prop::option::of(around(700.0, 2000.0)),
        prop::option::of(around(5.0, 20.0)),
    ))
    .prop_map(|m| {
        let Some((eq, rest, tef, fat, lean, forbes)) = m else {
            return String::new();
        };
        let mut t = "\n[model]\n".to_string();
        if let Some(e) = eq {
            let _ = writeln!(t, "rmr_equation = \"{e}\"");
        }
        if let Some(r) = rest {
            let _ = writeln!(t, "rest_for_net = \"{r}\"");
        }
        for (k, v) in [
            ("tef_fraction", tef),
            ("fat_kcal_per_kg", fat),
            ("lean_kcal_per_kg", lean),
            ("forbes_constant_kg", forbes),
        ] {
            if let Some(v) = v {
                let _ = writeln!(t, "{k} = {}", num(v));
            }
        }
        t
    })
}

fn scenarios() -> impl Strategy<Value = String> {
    let one = (
        prop::option::of(around(0.0, 1.5)),
        prop::option::of(around(0.0, 365.0)),
        prop::option::of(around(0.0, 1.0)),
        prop::option::of(around(0.0, 50.0)),
        prop::option::of(around(-2500.0, 2500.0)),
    );
    (prop::collection::vec(one, 0..4), prop::bool::weighted(0.02)).prop_map(|(list, clash)| {
        let mut t = String::new();
        for (i, (ci, lag, ca, ar, diet)) in list.into_iter().enumerate() {
            let name = if clash {
                "same".to_string()
            } else {
                format!("S{}", i + 1)
            };
            let _ = write!(t, "\n[[scenario]]\nname = \"{name}\"\n");
            for (k, v) in [
                ("intake_fraction", ci),
                ("intake_lag_days", lag),
                ("activity_fraction", ca),
                ("rmr_adaptation_kcal_per_kg", ar),
                ("diet_change_kcal_per_day", diet),
            ] {
                if let Some(v) = v {
                    let _ = writeln!(t, "{k} = {}", num(v));
                }
            }
        }
        t
    })
}

/// A whole plan as TOML text, tables in the usual order.
fn plan_text(
    weeks: BoxedStrategy<String>,
    follow_up: BoxedStrategy<String>,
) -> impl Strategy<Value = String> {
    (
        participant(),
        protocol(weeks, follow_up),
        activity(),
        model(),
        scenarios(),
    )
        .prop_map(|(p, pr, a, m, s)| format!("{p}{pr}{a}{m}{s}"))
}

/// Short horizons keep a case fast in a debug build.
fn short_plan() -> impl Strategy<Value = String> {
    plan_text(whole(1, 10), whole(0, 6))
}

/// Horizons up to the 520-week limit (and just past it).
fn long_plan() -> impl Strategy<Value = String> {
    plan_text(
        prop_oneof![
            (100i64..=520).prop_map(|w| w.to_string()),
            Just("521".to_string())
        ]
        .boxed(),
        prop_oneof![
            Just("0".to_string()),
            (0i64..=420).prop_map(|w| w.to_string())
        ]
        .boxed(),
    )
}

/// (b) Structurally valid plans, values inside and just outside every range.
#[test]
fn generated_plans_succeed_cleanly_or_exit_2() {
    fuzz(256, short_plan(), check_plan_text);
}

/// The generator reaches the simulation and the report checks for many plans (so
/// the property above tests more than the validator), and also produces refused
/// plans and plans the model refuses.
#[test]
fn generated_plans_reach_every_outcome() {
    use proptest::strategy::ValueTree;
    let mut runner = proptest::test_runner::TestRunner::deterministic();
    let strategy = short_plan();
    let (mut refused, mut ran, mut out_of_range) = (0, 0, 0);
    for _ in 0..300 {
        let text = strategy.new_tree(&mut runner).expect("a plan").current();
        match parse_plan("fuzz.toml", &text) {
            Err(e) => {
                refused += 1;
                if std::env::var("FUZZ_DIAG").is_ok() {
                    eprintln!("REFUSED {e}");
                }
            }
            Ok(plan) => match schedule_report_with_band(&plan, None) {
                Ok(_) => ran += 1,
                Err(Error::OutOfRange(_)) => out_of_range += 1,
                Err(e) => panic!("neither a report nor a range error: {e}"),
            },
        }
    }
    let counts = format!("{refused} refused, {ran} ran, {out_of_range} out of range");
    assert!(ran >= 60, "{counts}");
    assert!(refused >= 30, "{counts}");
    assert!(out_of_range >= 3, "{counts}");
    eprintln!("generated plans: {counts}");
}

/// (b) Long horizons, up to 520 weeks: bounded, finishes.
#[test]
fn generated_long_plans_finish() {
    fuzz(12, long_plan(), check_plan_text);
}

// --- (c) through the real binary -------------------------------------------------------

/// (c) The binary on generated plans: exit 0 or 2 (never 101, a panic), nothing on
/// standard output on failure, clean JSON on success.
#[test]
fn binary_exits_0_or_2() {
    fuzz(12, (short_plan(), any::<bool>()), |(text, json)| {
        let dir = common::Scratch::new("fuzz");
        dir.write("plan.toml", &text);
        let format = if json { "json" } else { "table" };
        let mut cmd = dir.cmd();
        cmd.args(["schedule", "plan.toml", "--format", format])
            .timeout(HANG);
        let r = common::run(&mut cmd);
        prop_assert!(
            r.code == Some(0) || r.code == Some(2),
            "exit {:?}: {}",
            r.code,
            r.stderr
        );
        prop_assert!(!r.stderr.contains("panicked"), "{}", r.stderr);
        prop_assert_eq!(non_finite_word(&r.stdout), None, "{}", r.stdout);
        if r.code == Some(2) {
            prop_assert!(r.stdout.is_empty(), "stdout on failure: {}", r.stdout);
            prop_assert!(r.stderr.starts_with("error: "), "{}", r.stderr);
        } else if json {
            let v: serde_json::Value = serde_json::from_str(&r.stdout)
                .map_err(|e| TestCaseError::fail(format!("bad JSON: {e}")))?;
            prop_assert!(all_numbers_finite(&v));
        }
        // `check` runs the same path and agrees on success or failure.
        let mut cmd = dir.cmd();
        cmd.args(["check", "plan.toml"]).timeout(HANG);
        let c = common::run(&mut cmd);
        prop_assert_eq!(c.code, r.code, "check and schedule disagree: {}", c.stderr);
        Ok(())
    });
}

/// (c) The binary on arbitrary bytes as a plan.
#[test]
fn binary_on_arbitrary_bytes_exits_2() {
    fuzz(12, prop::collection::vec(any::<u8>(), 0..256), |bytes| {
        let dir = common::Scratch::new("fuzz-bytes");
        dir.write("plan.toml", &bytes);
        let mut cmd = dir.cmd();
        cmd.args(["schedule", "plan.toml"]).timeout(HANG);
        let out = cmd
            .output()
            .map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assert_eq!(
            out.status.code(),
            Some(2),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        prop_assert!(out.stdout.is_empty());
        Ok(())
    });
}

// --- (d) logs --------------------------------------------------------------------------

/// The fixed valid plan logs are read against: 8 weeks from Monday 2027-01-04.
fn log_plan() -> Plan {
    parse_plan("plan.toml", common::BASE).expect("the base plan is valid")
}

/// Check a log text against the plan: a parse error is bad input; a log that parses
/// re-plans the schedule cleanly.
fn check_log_text(text: String, as_of: Option<chrono::NaiveDate>) -> Result<(), TestCaseError> {
    guarded("log", move || {
        let plan = log_plan();
        match parse_log("log.csv", &text, &plan, as_of) {
            Ok((log, warnings)) => {
                let observed = Observed::from_log(&plan, &log, as_of);
                let input = LogInput {
                    observed: Some(observed),
                    warnings,
                    summary: None,
                };
                match schedule_report_logged(&plan, &input) {
                    Ok(r) => check_report(&r),
                    Err(e) => check_error(&e),
                }
            }
            Err(e) => {
                // Bad text is bad input; an --as-of outside the plan is a usage error.
                prop_assert!(
                    matches!(e, Error::Input(_))
                        || (as_of.is_some() && matches!(e, Error::Usage(_))),
                    "{e}"
                );
                check_error(&e)
            }
        }
    })
}

/// A number cell: mostly a value in range, rarely an odd one.
fn cell(lo: f64, hi: f64) -> BoxedStrategy<String> {
    prop_oneof![
        30 => around(lo, hi).prop_map(|v| format!("{v}")),
        1 => odd_value().prop_map(|s| s.replace(',', ";")),
    ]
    .boxed()
}

/// A cell that may be left empty.
fn maybe(cell: BoxedStrategy<String>) -> BoxedStrategy<String> {
    prop::option::of(cell)
        .prop_map(Option::unwrap_or_default)
        .boxed()
}

/// One log row with its day since the start: a weigh-in, a session (sometimes with
/// its own code or MET), or, rarely, cells of every kind mixed up.
fn log_row() -> impl Strategy<Value = (i64, String)> {
    let weigh_in = (cell(60.0, 100.0), maybe(cell(3.0, 70.0)))
        .prop_map(|(m, bf)| format!("weigh-in,{m},{bf},,,,,"));
    let session = (
        cell(0.0, 600.0),
        prop_oneof![
            6 => Just((String::new(), String::new())),
            1 => prop::sample::select(vec!["17200", "02101", "99999", "2010"])
                .prop_map(|c| (c.to_string(), String::new())),
            1 => cell(1.0, 25.0).prop_map(|m| (String::new(), m)),
        ],
        maybe(cell(30.0, 250.0)),
        maybe(cell(6.0, 20.0)),
    )
        .prop_map(|(min, (code, met), hr, rpe)| format!("session,,,{min},{code},{met},{hr},{rpe}"));
    let messy = (
        prop::sample::select(vec!["weigh-in", "session", "Session", "weight", ""]),
        maybe(cell(30.0, 350.0)),
        maybe(cell(3.0, 70.0)),
        maybe(cell(0.0, 600.0)),
        maybe(cell(1.0, 25.0)),
    )
        .prop_map(|(k, m, bf, min, met)| format!("{k},{m},{bf},{min},,{met},,"));
    let note = prop::sample::select(vec![
        "",
        "",
        "felt fine",
        "\"a, quoted note\"",
        "\u{e9}t\u{e9}",
        "\"unclosed",
    ]);
    (
        prop_oneof![30 => 0i64..57, 1 => -3i64..0, 1 => 57i64..60],
        prop_oneof![10 => weigh_in, 10 => session, 1 => messy],
        note,
    )
        .prop_map(|(day, cells, note)| {
            let date = chrono::NaiveDate::from_ymd_opt(2027, 1, 4).expect("a date")
                + chrono::TimeDelta::days(day);
            (day, format!("{date},{cells},{note}"))
        })
}

/// A log: the header (sometimes with a BOM or an extra column), rows in date order
/// mostly, with Unix or Windows line endings.
fn log_text() -> impl Strategy<Value = String> {
    (
        prop::collection::vec(log_row(), 0..12),
        any::<bool>(),
        any::<bool>(),
        prop::bool::weighted(0.9),
        prop::bool::weighted(0.1),
    )
        .prop_map(|(mut rows, bom, crlf, sorted, extra)| {
            if sorted {
                // Date order, and at most one weigh-in a date.
                rows.sort_by_key(|(day, _)| *day);
                let mut seen = std::collections::HashSet::new();
                rows.retain(|(day, r)| !r.contains(",weigh-in,") || seen.insert(*day));
            }
            let mut header = dosewright::log::COLUMNS.join(",");
            if extra {
                header.push_str(",site");
            }
            let eol = if crlf { "\r\n" } else { "\n" };
            let mut t = String::new();
            if bom {
                t.push('\u{feff}');
            }
            t.push_str(&header);
            for (_, r) in rows {
                t.push_str(eol);
                t.push_str(&r);
                if extra {
                    t.push_str(",north");
                }
            }
            t.push_str(eol);
            t
        })
}

fn as_of() -> impl Strategy<Value = Option<chrono::NaiveDate>> {
    prop::option::of((-2i64..60).prop_map(|d| {
        chrono::NaiveDate::from_ymd_opt(2027, 1, 4).expect("a date") + chrono::TimeDelta::days(d)
    }))
}

/// (d) Arbitrary bytes as a log: through the file reader (which names the first bad
/// byte) and as text.
#[test]
fn arbitrary_bytes_as_a_log_never_panic() {
    fuzz(256, prop::collection::vec(any::<u8>(), 0..512), |bytes| {
        let b = bytes.clone();
        guarded("load_log", move || {
            let f = TempFile::new("log", &b);
            let plan = log_plan();
            match load_log(&f.0, &plan, None) {
                Ok(_) => Ok(()),
                Err(e) => check_error(&e),
            }
        })?;
        check_log_text(String::from_utf8_lossy(&bytes).into_owned(), None)
    });
}

/// (d) Arbitrary strings as a log.
#[test]
fn arbitrary_strings_as_a_log_never_panic() {
    fuzz(256, (any::<String>(), as_of()), |(text, as_of)| {
        check_log_text(text, as_of)
    });
}

/// (d) Logs that look like logs, with every kind of cell right and wrong.
#[test]
fn generated_logs_never_panic() {
    fuzz(256, (log_text(), as_of()), |(text, as_of)| {
        check_log_text(text, as_of)
    });
}

/// The log generator produces logs that are accepted as well as refused.
#[test]
fn generated_logs_are_sometimes_valid() {
    use proptest::strategy::ValueTree;
    let mut runner = proptest::test_runner::TestRunner::deterministic();
    let strategy = log_text();
    let plan = log_plan();
    let (mut valid, mut refused) = (0, 0);
    for _ in 0..300 {
        let text = strategy.new_tree(&mut runner).expect("a log").current();
        match parse_log("log.csv", &text, &plan, None) {
            Ok((log, _)) if !log.rows.is_empty() => valid += 1,
            Ok(_) => {}
            Err(e) => {
                refused += 1;
                if std::env::var("FUZZ_DIAG").is_ok() {
                    eprintln!("REFUSED {e}");
                }
            }
        }
    }
    assert!(valid >= 10, "{valid} valid non-empty logs of 300");
    assert!(refused >= 30, "{refused} refused of 300");
}

/// The output checks themselves catch what they are for.
#[test]
fn non_finite_words_are_found() {
    assert_eq!(non_finite_word("mass NaN kg"), Some("NaN".to_string()));
    assert_eq!(non_finite_word("x: -inf,"), Some("inf".to_string()));
    assert_eq!(non_finite_word("{ met: inf }"), Some("inf".to_string()));
    assert_eq!(
        non_finite_word(&format!("{:?}", [1.0, f64::NAN])),
        Some("NaN".to_string())
    );
    assert_eq!(
        non_finite_word("information, infinite, nanny 1e-5 -0.5"),
        None
    );
    let debug = format!("{:?}", ("inf", 1.5, "say \"NaN\"", f64::INFINITY));
    assert_eq!(without_strings(&debug), r#"("", 1.5, "", inf)"#);
    assert_eq!(
        non_finite_word(&without_strings(&debug)),
        Some("inf".to_string())
    );
}
