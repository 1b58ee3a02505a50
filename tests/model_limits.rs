//! Numerical safety (docs/model.md section 6, "Valid range"): extreme but valid plans
//! either run to the end with finite, physically sensible numbers, or are refused with
//! [`Error::OutOfRange`] naming the scenario, the day, the date and the state
//! (docs/model.md section 6). Never a NaN, an infinity, a negative mass or a hang.
//!
//! Every plan here is valid (it passes `parse_plan`); what is extreme is where the
//! model is driven. Participants are invented (pseudonymous codes NS-xx).

use chrono::NaiveDate;
use dosewright::Error;
use dosewright::commands::schedule::schedule_report_with_band;
use dosewright::error::RangeError;
use dosewright::model::energy::{MINUTES_PER_DAY, calibrate};
use dosewright::plan::{Plan, parse_plan};
use dosewright::report::ScheduleReport;
use dosewright::report::units::{EnergyUnit, UnitSystem, Units};
use dosewright::simulate::{MIN_FAT_KG, Phase, RunMode, run};

mod common;

const FILE: &str = "extreme.toml";

/// A plan from its parts: the `[participant]` keys, the `[protocol]` keys, the
/// `[protocol.dose]` keys, the `[activity]` keys, and anything after (scenarios, a
/// `[model]` table).
fn plan_text(participant: &str, protocol: &str, dose: &str, activity: &str, rest: &str) -> String {
    format!(
        "[participant]\n{participant}\n\n[protocol]\nstart = 2027-01-04\n{protocol}\n\n\
         [protocol.dose]\n{dose}\n\n[activity]\n{activity}\n\n{rest}\n"
    )
}

/// An ordinary invented participant for the tests that are extreme elsewhere.
const ORDINARY: &str = "id = \"NS-00\"\nsex = \"female\"\nage_years = 41\nheight_cm = 166.0\n\
                        mass_kg = 84.0\nbody_fat_percent = 39.0\npal = 1.5";

/// Parse a plan that must be valid: the point of these tests is what the model does
/// with it, not whether validation refuses it.
fn valid(text: &str) -> Plan {
    match parse_plan(FILE, text) {
        Ok(p) => p,
        Err(e) => panic!("the extreme plan must be valid, but: {e}\n{text}"),
    }
}

/// What running a plan gave: the report, or the range error and its message.
enum Ran {
    Report(Box<ScheduleReport>),
    OutOfRange(RangeError, String),
}

/// Run a plan the way `schedule` does (central projection plus the band). Any error
/// other than out-of-range fails the test.
fn ran(plan: &Plan) -> Ran {
    match schedule_report_with_band(plan, None) {
        Ok(r) => {
            assert_sensible(plan, &r);
            Ran::Report(Box::new(r))
        }
        Err(e) => {
            assert_eq!(e.exit_code(), 2, "a range error is bad input (exit 2): {e}");
            let msg = e.to_string();
            match e {
                Error::OutOfRange(r) => {
                    assert_reported(plan, &r, &msg);
                    Ran::OutOfRange(r, msg)
                }
                other => {
                    panic!("an extreme valid plan gave neither a result nor a range error: {other}")
                }
            }
        }
    }
}

fn expect_report(plan: &Plan) -> Box<ScheduleReport> {
    match ran(plan) {
        Ran::Report(r) => r,
        Ran::OutOfRange(_, msg) => panic!("expected the plan to run to the end, got: {msg}"),
    }
}

fn expect_out_of_range(plan: &Plan) -> (RangeError, String) {
    match ran(plan) {
        Ran::OutOfRange(e, msg) => (e, msg),
        Ran::Report(r) => panic!(
            "expected a range error, but the plan ran to the end at {:.2} kg",
            r.scenarios[0].outcome.mass_kg
        ),
    }
}

/// A word of `text` that is how Rust or a renderer spells a non-finite number.
fn non_finite_word(text: &str) -> Option<String> {
    text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '.' || c == '-' || c == '+'))
        .map(|w| w.trim_matches(|c| c == '.' || c == '-' || c == '+'))
        .find(|w| matches!(*w, "NaN" | "nan" | "inf" | "Inf" | "infinity" | "Infinity"))
        .map(str::to_string)
}

/// Every number in a JSON value, with its path.
fn numbers(v: &serde_json::Value, path: &str, out: &mut Vec<(String, f64)>) {
    match v {
        serde_json::Value::Number(n) => out.push((
            path.to_string(),
            n.as_f64().expect("a JSON number converts to f64"),
        )),
        serde_json::Value::Array(a) => {
            for (i, x) in a.iter().enumerate() {
                numbers(x, &format!("{path}[{i}]"), out);
            }
        }
        serde_json::Value::Object(o) => {
            for (k, x) in o {
                numbers(x, &format!("{path}.{k}"), out);
            }
        }
        _ => {}
    }
}

/// Finite, physically sensible numbers everywhere in a finished report.
fn assert_sensible(plan: &Plan, r: &ScheduleReport) {
    // The JSON rendering turns a non-finite number into null; the report's own
    // Debug text shows it as it is, so check both.
    let json = dosewright::report::json::render(r);
    assert_eq!(non_finite_word(&json), None, "non-finite number in JSON");
    let v: serde_json::Value = serde_json::from_str(&json).expect("valid JSON");
    let mut nums = Vec::new();
    numbers(&v, "", &mut nums);
    assert!(!nums.is_empty());
    for (path, x) in &nums {
        assert!(x.is_finite(), "{path} = {x}");
    }
    let debug = format!("{r:?}");
    assert_eq!(
        non_finite_word(&debug),
        None,
        "non-finite number in the report"
    );
    let us_kj = Units {
        system: UnitSystem::Us,
        energy: EnergyUnit::Kj,
    };
    for units in [Units::default(), us_kj] {
        let table = dosewright::report::table::render(r, 0, units);
        assert_eq!(
            non_finite_word(&table),
            None,
            "non-finite number in the table"
        );
    }

    let total = plan.protocol.total_weeks() as usize;
    let m0 = r.baseline.mass_kg;
    for sc in &r.scenarios {
        assert_eq!(
            sc.weeks.len(),
            total,
            "scenario {}: one record a week",
            sc.name
        );
        for w in &sc.weeks {
            let e = &w.end;
            let ctx = format!("scenario {}, week {}", sc.name, w.week);
            assert!(e.mass_kg > 0.0, "{ctx}: mass {}", e.mass_kg);
            assert!(
                e.fat_free_mass_kg > 0.0,
                "{ctx}: fat-free {}",
                e.fat_free_mass_kg
            );
            assert!(e.fat_mass_kg >= MIN_FAT_KG, "{ctx}: fat {}", e.fat_mass_kg);
            assert!(
                (e.fat_mass_kg + e.fat_free_mass_kg - e.mass_kg).abs() <= 1e-9 * e.mass_kg,
                "{ctx}: fat + fat-free != mass"
            );
            assert!(
                e.rmr_kcal_per_day > 0.0,
                "{ctx}: RMR {}",
                e.rmr_kcal_per_day
            );
            assert!(e.intake_kcal_per_day >= 0.0, "{ctx}: intake");
            assert!(w.reference_mass_kg > 0.0 && w.reference_rmr_kcal_per_day > 0.0);
            assert!(
                f64::from(w.minutes_per_session) < MINUTES_PER_DAY,
                "{ctx}: {} min a session",
                w.minutes_per_session
            );
            match w.phase {
                Phase::Protocol => {
                    assert!(w.met > 1.0, "{ctx}: MET {}", w.met);
                    for s in &w.sessions {
                        assert!(
                            s.net_kcal > 0.0 && s.gross_kcal > s.net_kcal,
                            "{ctx}: {s:?}"
                        );
                        assert!(s.relative_intensity > 1.0, "{ctx}: {s:?}");
                    }
                }
                Phase::FollowUp => assert!(w.sessions.is_empty(), "{ctx}: sessions in follow-up"),
            }
        }
        let last = sc.weeks.last().expect("weeks");
        assert_eq!(sc.outcome.mass_kg, last.end.mass_kg);
        assert!((sc.outcome.mass_change_kg - (last.end.mass_kg - m0)).abs() < 1e-9);
    }
    let band = r
        .projection_band
        .as_ref()
        .expect("schedule computes the band");
    for (b, sc) in band.scenarios.iter().zip(&r.scenarios) {
        for (bw, w) in b.weeks.iter().zip(&sc.weeks) {
            assert!(bw.mass_low_kg > 0.0, "band week {}", bw.week);
            assert!(
                bw.mass_low_kg <= w.end.mass_kg && w.end.mass_kg <= bw.mass_high_kg,
                "band week {} does not hold the projection",
                bw.week
            );
        }
    }
    // Between the week ends too: every day of every scenario.
    let (baseline, physiology) =
        calibrate(&plan.participant.subject, &plan.constants).expect("calibrates");
    for sc in &plan.scenarios {
        let out = run(
            plan,
            &physiology,
            &baseline,
            sc,
            RunMode::projection(plan),
            None,
        )
        .expect("the same run succeeds again");
        assert_eq!(out.daily.len(), 7 * total + 1);
        for (day, y) in out.daily.iter().enumerate() {
            assert!(y.iter().all(|v| v.is_finite()), "day {day}: {y:?}");
            assert!(y[0] >= MIN_FAT_KG && y[1] > 0.0, "day {day}: {y:?}");
        }
    }
}

/// A range error names the plan, the scenario, the day, its date and a finite state.
fn assert_reported(plan: &Plan, e: &RangeError, msg: &str) {
    assert!(msg.starts_with(FILE), "names the plan: {msg}");
    assert!(
        msg.contains(&format!("on day {} ", e.day)),
        "names the day: {msg}"
    );
    assert!(
        msg.contains(&format!("({})", e.date)),
        "names the date: {msg}"
    );
    assert!(
        msg.contains(&format!("scenario \"{}\"", e.scenario)),
        "{msg}"
    );
    assert!(
        msg.contains("fat mass") && msg.contains("fat-free mass"),
        "{msg}"
    );
    assert!(msg.contains("kg"), "{msg}");
    assert_eq!(non_finite_word(msg), None, "nonsense in the message: {msg}");
    let date_like = msg
        .split(|c: char| !(c.is_ascii_digit() || c == '-'))
        .any(|w| NaiveDate::parse_from_str(w, "%Y-%m-%d").is_ok());
    assert!(date_like, "a YYYY-MM-DD date: {msg}");
    assert!(
        e.day <= 7 * plan.protocol.total_weeks(),
        "day {} inside the horizon",
        e.day
    );
    assert_eq!(
        e.date,
        plan.protocol.start + chrono::Days::new(u64::from(e.day)),
        "the date is the day's"
    );
    assert!(
        plan.scenarios.iter().any(|s| s.name == e.scenario),
        "a scenario of the plan"
    );
    assert!(e.fat_kg.is_finite() && e.lean_kg.is_finite(), "{msg}");
    assert!(e.lean_kg > 0.0, "{msg}");
    assert!(!e.what.trim().is_empty());
}

// --- the cases -------------------------------------------------------------------------

/// 45 kg at 8 % body fat has 3.6 kg of fat; 3000 kcal a session on 7 days a week
/// burns well over 2 kg of fat a week, so fat mass must fall below 2 kg within days.
#[test]
fn very_lean_participant_with_a_very_high_dose_is_stopped_at_the_fat_floor() {
    let text = plan_text(
        "id = \"NS-01\"\nsex = \"male\"\nage_years = 24\nheight_cm = 170.0\nmass_kg = 45.0\n\
         body_fat_percent = 8.0\npal = 1.7",
        "weeks = 12\nsession_days = [\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\", \"sun\"]",
        "kcal_per_session = 3000",
        "met = 12.0",
        "",
    );
    let plan = valid(&text);
    let (e, msg) = expect_out_of_range(&plan);
    assert!(e.what.contains("fat mass"), "{msg}");
    assert!(
        e.fat_kg < MIN_FAT_KG,
        "the state shown is the one below the floor: {msg}"
    );
    assert!(e.day >= 1 && e.day <= 14, "within two weeks: {msg}");
    assert_eq!(e.scenario, "as prescribed");
}

/// The same lean participant with a per-kg dose at the top of its range.
#[test]
fn very_lean_participant_with_the_largest_per_kg_dose() {
    let text = plan_text(
        "id = \"NS-02\"\nsex = \"female\"\nage_years = 30\nheight_cm = 160.0\nmass_kg = 45.0\n\
         body_fat_percent = 8.0",
        "weeks = 26\nfollow_up_weeks = 26\nsession_days = [\"mon\", \"wed\", \"fri\", \"sat\"]",
        "kcal_per_kg_week = 150\nmass_basis = \"current\"",
        "running = { speed_kmh = 12.0 }",
        "",
    );
    let plan = valid(&text);
    let (e, msg) = expect_out_of_range(&plan);
    assert!(e.what.contains("fat mass"), "{msg}");
}

/// A lean participant with a modest dose runs to the end without touching the floor.
#[test]
fn very_lean_participant_with_a_modest_dose_runs() {
    let text = plan_text(
        "id = \"NS-03\"\nsex = \"male\"\nage_years = 24\nheight_cm = 170.0\nmass_kg = 45.0\n\
         body_fat_percent = 8.0\npal = 1.7",
        "weeks = 12\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_week = 300",
        "met = 5.0",
        "",
    );
    let plan = valid(&text);
    let r = expect_report(&plan);
    let out = &r.scenarios[0].outcome;
    assert!(
        out.mass_change_kg < 0.0 && out.mass_change_kg > -2.0,
        "{out:?}"
    );
}

/// 520 protocol weeks with a dose: completes (no hang) and stays in range.
#[test]
fn horizon_of_520_weeks_with_a_dose_completes() {
    let text = plan_text(
        ORDINARY,
        "weeks = 520\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_kg_week = 10",
        "compendium_code = \"17200\"",
        "",
    );
    let plan = valid(&text);
    assert_eq!(plan.protocol.total_weeks(), 520);
    let r = expect_report(&plan);
    let weeks = &r.scenarios[0].weeks;
    assert_eq!(weeks.len(), 520);
    // Ten years of exercise with nothing compensated: a steady state below baseline.
    let m0 = r.baseline.mass_kg;
    let at_5y = weeks[259].end.mass_kg;
    let at_10y = weeks[519].end.mass_kg;
    assert!(at_10y < m0 && at_5y < m0, "mass fell: {at_5y} {at_10y}");
    assert!(
        (at_10y - at_5y).abs() < 0.5,
        "near a steady state: {at_5y} {at_10y}"
    );
}

/// 1 week of the smallest dose and 519 weeks of follow-up: effectively no dose for
/// ten years; completes, and the mass returns to (nearly) baseline.
#[test]
fn horizon_of_520_weeks_almost_without_a_dose_completes() {
    let text = plan_text(
        ORDINARY,
        "weeks = 1\nfollow_up_weeks = 519\nsession_days = [\"mon\"]",
        "kcal_per_week = 10",
        "met = 3.0",
        "",
    );
    let plan = valid(&text);
    assert_eq!(plan.protocol.total_weeks(), 520);
    let r = expect_report(&plan);
    let weeks = &r.scenarios[0].weeks;
    assert_eq!(weeks.len(), 520);
    assert!(weeks[1..].iter().all(|w| w.phase == Phase::FollowUp));
    let m0 = r.baseline.mass_kg;
    assert!(
        (weeks[519].end.mass_kg - m0).abs() < 0.01,
        "back to baseline"
    );
}

/// 260 weeks of exercise then 260 of follow-up, with every scenario key non-zero.
#[test]
fn horizon_of_520_weeks_split_with_follow_up_and_compensation() {
    let text = plan_text(
        ORDINARY,
        "weeks = 260\nfollow_up_weeks = 260\nsession_days = [\"tue\", \"thu\", \"sat\"]\n\
         max_session_minutes = 45\nover_max = \"split\"",
        "kcal_per_session = 350\nbasis = \"net\"",
        "walking = { speed_kmh = 5.5, grade_percent = 4.0 }",
        "[[scenario]]\nname = \"mixed\"\nintake_fraction = 0.3\nintake_lag_days = 30\n\
         activity_fraction = 0.2\nrmr_adaptation_kcal_per_kg = 10\ndiet_change_kcal_per_day = -150",
    );
    let plan = valid(&text);
    let r = expect_report(&plan);
    assert_eq!(r.scenarios[0].weeks.len(), 520);
}

/// Intake compensation above 1 (1.5, with a lag): exercise makes the participant
/// gain. The gain is bounded (expenditure rises with mass), and the plan runs.
#[test]
fn intake_compensation_above_one_with_a_lag() {
    let text = plan_text(
        ORDINARY,
        "weeks = 52\nfollow_up_weeks = 52\nsession_days = [\"mon\", \"wed\", \"fri\", \"sat\"]",
        "kcal_per_week = 2500",
        "met = 6.0",
        "[[scenario]]\nname = \"eats back 150%\"\nintake_fraction = 1.5\nintake_lag_days = 21\n\n\
         [[scenario]]\nname = \"eats back 150% at once\"\nintake_fraction = 1.5",
    );
    let plan = valid(&text);
    let r = expect_report(&plan);
    let m0 = r.baseline.mass_kg;
    for sc in &r.scenarios {
        let end_protocol = sc.outcome.protocol_end_mass_kg;
        assert!(
            end_protocol > m0,
            "{}: more eaten than burnt gains mass",
            sc.name
        );
        assert!(
            end_protocol < m0 + 15.0,
            "{}: bounded gain, {end_protocol}",
            sc.name
        );
        assert!(
            sc.outcome.dose_share < 0.0,
            "{}: negative dose share",
            sc.name
        );
    }
}

/// Intake compensation 1.5 at the longest lag with the largest weekly dose, for ten
/// years: still finite and bounded, or refused with the day.
#[test]
fn intake_compensation_above_one_for_ten_years_at_the_largest_dose() {
    let text = plan_text(
        ORDINARY,
        "weeks = 520\nsession_days = [\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\", \"sun\"]",
        "kcal_per_week = 15000",
        "met = 10.0",
        "[[scenario]]\nname = \"eats back 150% slowly\"\nintake_fraction = 1.5\nintake_lag_days = 365",
    );
    let plan = valid(&text);
    match ran(&plan) {
        Ran::Report(r) => {
            let out = &r.scenarios[0].outcome;
            assert!(
                out.mass_kg > r.baseline.mass_kg && out.mass_kg < 350.0,
                "{out:?}"
            );
        }
        Ran::OutOfRange(e, msg) => assert!(e.day > 0, "{msg}"),
    }
}

/// Activity compensation 1.0 cancels every exercise calorie from other movement;
/// when the exercise energy exceeds all non-exercise activity the model must stop
/// and say so (non-exercise activity at or below zero), not go on with negative
/// movement.
#[test]
fn activity_compensation_of_one_with_more_exercise_than_daily_movement() {
    let text = plan_text(
        ORDINARY,
        "weeks = 12\nsession_days = [\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\", \"sun\"]",
        "kcal_per_session = 1500",
        "met = 10.0",
        "[[scenario]]\nname = \"sits it all back\"\nactivity_fraction = 1.0",
    );
    let plan = valid(&text);
    let (e, msg) = expect_out_of_range(&plan);
    assert!(e.what.contains("non-exercise activity"), "{msg}");
    assert_eq!(e.scenario, "sits it all back");
    assert_eq!(e.day, 0, "out of range from the first day: {msg}");
}

/// Activity compensation 1.0 with a small dose: no loss at all from the exercise,
/// and the plan runs.
#[test]
fn activity_compensation_of_one_with_a_small_dose_runs() {
    let text = plan_text(
        ORDINARY,
        "weeks = 24\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_week = 900",
        "met = 5.0",
        "[[scenario]]\nname = \"sits it all back\"\nactivity_fraction = 1.0",
    );
    let plan = valid(&text);
    let r = expect_report(&plan);
    let out = &r.scenarios[0].outcome;
    assert!(
        out.dose_share.abs() < 1e-6,
        "nothing of the dose is kept: {out:?}"
    );
}

/// The biggest planned cut in intake, 2500 kcal/day, for a small participant whose
/// intake is below 2500: intake itself would be negative from the first day, which
/// is out of range on day 0 (not a negative meal carried through the projection).
#[test]
fn big_negative_diet_change_below_the_intake_is_refused_on_day_0() {
    let text = plan_text(
        "id = \"NS-04\"\nsex = \"female\"\nage_years = 35\nheight_cm = 160.0\nmass_kg = 58.0\n\
         body_fat_percent = 22.0\npal = 1.6",
        "weeks = 52\nfollow_up_weeks = 52\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_week = 1500",
        "met = 7.0",
        "[[scenario]]\nname = \"crash diet\"\ndiet_change_kcal_per_day = -2500",
    );
    let plan = valid(&text);
    let (e, msg) = expect_out_of_range(&plan);
    assert_eq!(e.scenario, "crash diet");
    assert!(
        e.what.contains("intake") && e.what.contains("below zero"),
        "{msg}"
    );
    assert_eq!(e.day, 0, "{msg}");
    assert_eq!(e.date, NaiveDate::from_ymd_opt(2027, 1, 4).expect("a date"));
    // The state shown is the baseline, since nothing has happened yet.
    assert!((e.fat_kg - 58.0 * 0.22).abs() < 1e-9, "{msg}");
}

/// A cut that leaves a small positive intake (about 490 kcal/day) is in range at
/// first, but no intake that low can balance the expenditure: fat mass falls to the
/// 2 kg floor within the two years, and the day it does is reported.
#[test]
fn big_negative_diet_change_is_stopped_at_the_fat_floor() {
    let text = plan_text(
        "id = \"NS-11\"\nsex = \"female\"\nage_years = 35\nheight_cm = 160.0\nmass_kg = 58.0\n\
         body_fat_percent = 22.0\npal = 1.6",
        "weeks = 52\nfollow_up_weeks = 52\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_week = 1500",
        "met = 7.0",
        "[[scenario]]\nname = \"crash diet\"\ndiet_change_kcal_per_day = -1500",
    );
    let plan = valid(&text);
    let (e, msg) = expect_out_of_range(&plan);
    assert_eq!(e.scenario, "crash diet");
    // Stopped at a floor of the model's range: fat mass 2 kg (docs/model.md section 6), or body
    // mass 30 kg / BMI 13 kg/m^2 (the plan's own lower limits, which the driver
    // also holds the projection to), whichever comes first.
    let m = e.fat_kg + e.lean_kg;
    let bmi = m / (1.60f64 * 1.60);
    let at_fat_floor = e.what.contains("fat mass") && e.fat_kg < MIN_FAT_KG && e.fat_kg > 1.0;
    let at_size_floor = e.what.contains("below the model's range") && (bmi < 13.05 || m < 30.05);
    assert!(at_fat_floor || at_size_floor, "just below a floor: {msg}");
    assert!(e.day > 28 && e.day < 7 * 104, "{msg}");
    // The weeks before the one that failed run cleanly, and end above the floor
    // (day 7w is the last sample of week w, so the failing week is ceil(day / 7)).
    let done = (e.day - 1) / 7;
    let (baseline, physiology) =
        calibrate(&plan.participant.subject, &plan.constants).expect("calibrates");
    let mode = RunMode {
        weeks: done,
        ..RunMode::projection(&plan)
    };
    let sc = &plan.scenarios[0];
    let out = run(&plan, &physiology, &baseline, sc, mode, None)
        .unwrap_or_else(|x| panic!("{msg}\nnot in range before: {x}"));
    assert_eq!(out.daily.len() as u32, 7 * done + 1);
    assert!(out.daily.iter().all(|y| y[0] >= MIN_FAT_KG));
    // The day is the projection's own, not the no-exercise comparison's (which, with
    // less deficit, reaches the floor later).
    let full = run(
        &plan,
        &physiology,
        &baseline,
        sc,
        RunMode::projection(&plan),
        None,
    );
    match full {
        Err(Error::OutOfRange(p)) => assert_eq!(p, e, "the projection's error is reported"),
        other => panic!(
            "the projection itself leaves the range: {:?}",
            other.map(|_| ())
        ),
    }
}

/// A big cut in intake for a heavy participant over a short protocol stays in range.
#[test]
fn big_negative_diet_change_for_a_heavy_participant_runs() {
    let text = plan_text(
        "id = \"NS-05\"\nsex = \"male\"\nage_years = 50\nheight_cm = 182.0\nmass_kg = 150.0\n\
         body_fat_percent = 45.0\npal = 1.5",
        "weeks = 12\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_week = 1200",
        "walking = { speed_kmh = 4.8 }",
        "[[scenario]]\nname = \"big cut\"\ndiet_change_kcal_per_day = -2500\n\
         rmr_adaptation_kcal_per_kg = 50",
    );
    let plan = valid(&text);
    let r = expect_report(&plan);
    let out = &r.scenarios[0].outcome;
    assert!(out.mass_change_kg < -10.0, "a big cut loses a lot: {out:?}");
    assert!(out.fat_mass_change_kg < out.fat_free_mass_change_kg);
}

/// MET 25 (the top of the range): sessions are short, numbers finite.
#[test]
fn very_high_met() {
    let text = plan_text(
        ORDINARY,
        "weeks = 24\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_session = 3000",
        "met = 25.0",
        "",
    );
    let plan = valid(&text);
    match ran(&plan) {
        Ran::Report(r) => {
            let w1 = &r.scenarios[0].weeks[0];
            assert!(
                w1.minutes_per_session > 0 && w1.minutes_per_session < 120,
                "{w1:?}"
            );
        }
        Ran::OutOfRange(e, msg) => assert!(e.what.contains("fat mass"), "{msg}"),
    }
}

/// MET 25 as a time-fixed dose at the top of the minutes range: 2100 min a week at
/// 25 MET is far beyond what the body can supply; refused at the fat floor.
#[test]
fn very_high_met_for_the_most_minutes() {
    let text = plan_text(
        ORDINARY,
        "weeks = 12\nsession_days = [\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\", \"sun\"]",
        "minutes_per_week = 2100",
        "met = 25.0",
        "",
    );
    let plan = valid(&text);
    let (e, msg) = expect_out_of_range(&plan);
    assert!(
        e.what.contains("fat mass") || e.what.contains("below the model's range"),
        "{msg}"
    );
}

/// With `rest_for_net = "one-met"` the net-positive limit is exactly 1 MET. Just
/// above it, a net dose needs sessions longer than a day: refused with the day.
#[test]
fn met_just_above_the_net_positive_limit_with_a_net_dose() {
    let text = plan_text(
        ORDINARY,
        "weeks = 8\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_week = 600\nbasis = \"net\"",
        "met = 1.01",
        "[model]\nrest_for_net = \"one-met\"",
    );
    let plan = valid(&text);
    let (e, msg) = expect_out_of_range(&plan);
    assert!(e.what.contains("a whole day or more"), "{msg}");
    assert_eq!(e.day, 0, "{msg}");
}

/// Just above the limit with the over-maximum policies that multiply minutes (two
/// bouts, extra sessions): the enormous minutes must be reported, not overflow.
#[test]
fn met_barely_above_the_limit_with_split_and_add_session() {
    for (over_max, id) in [
        ("split", "NS-06"),
        ("add-session", "NS-07"),
        ("cap", "NS-08"),
    ] {
        let text = plan_text(
            &ORDINARY.replace("NS-00", id),
            &format!(
                "weeks = 4\nsession_days = [\"mon\", \"wed\", \"fri\"]\nmax_session_minutes = 60\n\
                 over_max = \"{over_max}\""
            ),
            "kcal_per_session = 3000\nbasis = \"net\"",
            "met = 1.0000001",
            "[model]\nrest_for_net = \"one-met\"",
        );
        let plan = valid(&text);
        match ran(&plan) {
            // `cap` keeps sessions at the maximum: it runs, with a huge shortfall.
            Ran::Report(r) => {
                assert_eq!(over_max, "cap", "only cap can run to the end");
                assert_eq!(r.scenarios[0].weeks[0].minutes_per_session, 60);
            }
            Ran::OutOfRange(e, msg) => {
                assert_ne!(over_max, "cap", "{msg}");
                assert!(e.what.contains("whole day"), "{over_max}: {msg}");
            }
        }
    }
}

/// With a high measured RMR the own-RMR limit lies above 1 MET; a MET just above it
/// is valid at baseline. As the participant loses mass the margin changes; the run
/// either completes or stops with the reason.
#[test]
fn met_just_above_an_own_rmr_limit() {
    // RMR 3000 kcal/day at 60 kg: rest is 2.083 kcal/min, one MET is 1.05 kcal/min,
    // so the limit is 1.984 MET.
    let text = plan_text(
        "id = \"NS-09\"\nsex = \"male\"\nage_years = 28\nheight_cm = 175.0\nmass_kg = 60.0\n\
         body_fat_percent = 15.0\nrmr_kcal_per_day = 3000\npal = 1.4",
        "weeks = 12\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_week = 900\nbasis = \"net\"",
        "met = 2.0",
        "",
    );
    let plan = valid(&text);
    let (e, msg) = expect_out_of_range(&plan);
    assert!(
        e.what.contains("whole day") || e.what.contains("above rest"),
        "{msg}"
    );
    // The same with a gross dose runs: the sessions cost 2.1 kcal/min gross.
    let plan = valid(&text.replace("basis = \"net\"", "basis = \"gross\""));
    expect_report(&plan);
}

/// The refusal reaches the user through the binary: exit 2, nothing on standard
/// output, and the day, date and state on standard error.
#[test]
fn binary_reports_the_day_the_date_and_the_state() {
    let text = plan_text(
        "id = \"NS-10\"\nsex = \"male\"\nage_years = 24\nheight_cm = 170.0\nmass_kg = 45.0\n\
         body_fat_percent = 8.0\npal = 1.7",
        "weeks = 12\nsession_days = [\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\", \"sun\"]",
        "kcal_per_session = 3000",
        "met = 12.0",
        "",
    );
    for format in ["table", "json", "csv"] {
        let (_dir, r) = common::run_plan(&text, &["schedule", "--format", format]);
        assert_eq!(r.code, Some(2), "{format}: {}", r.stderr);
        assert!(r.stdout.is_empty(), "{format}: nothing on stdout");
        assert!(r.stderr.starts_with("error: plan.toml: "), "{}", r.stderr);
        for part in ["on day ", "(2027-01-", "fat mass", "fat-free mass"] {
            assert!(r.stderr.contains(part), "{format}: {part} in {}", r.stderr);
        }
    }
    let (_dir, r) = common::run_plan(&text, &["check"]);
    assert_eq!(r.code, Some(2), "check runs the same path: {}", r.stderr);
    assert!(r.stdout.is_empty());
}
