//! Warnings and screening (docs/warnings.md): every stable warning code for a plan built to
//! earn it, the thresholds where docs/warnings.md puts them, the pre-participation
//! screening grid, and a plan without screening.
//!
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::schedule_contract::*;
use common::*;
use serde_json::Value;
use std::collections::BTreeSet;

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
