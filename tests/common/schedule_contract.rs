//! Helpers shared by the schedule, check, over-max, warnings and activities tests: the
//! JSON contract of a schedule (docs/file-formats.md section 4), the words every caution
//! carries, and the demo plan's output.
#![allow(dead_code)] // not every test file uses every helper

use super::*;
use serde_json::Value;
use std::collections::BTreeSet;

/// What a plan says about its calendar, for checking a schedule against it.
pub struct Shape<'a> {
    pub start: &'a str,
    pub weeks: u64,
    pub follow_up_weeks: u64,
    /// Weekdays sessions may fall on (session days, plus spare days for add-session).
    pub days: &'a [&'a str],
    /// Distinct session dates per protocol week, when fixed.
    pub sessions_per_week: Option<usize>,
    /// Every session date has the same minutes (false with a rotation of
    /// activities or closures: then `minutes_per_session` is the longest session).
    pub uniform_minutes: bool,
}

pub fn weekday_word(d: chrono::NaiveDate) -> &'static str {
    use chrono::Datelike;
    ["mon", "tue", "wed", "thu", "fri", "sat", "sun"][d.weekday().num_days_from_monday() as usize]
}

/// Every key docs/file-formats.md section 4.1 lists for `schedule --format json`, with its type, and the
/// calendar and bookkeeping invariants of the weeks.
pub fn assert_schedule_contract(j: &Value, shape: &Shape) {
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
pub fn assert_no_misplaced_null(v: &Value, path: &str) {
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

pub const CAUTION_WORDS: [&str; 4] = [
    "Screen first: complete a pre-participation health screening (ACSM 2015)",
    "Medical clearance: where the screening calls for it",
    "Stop exercising and seek help at once on chest pain",
    "the licensed professionals responsible for the participant decide",
];

pub fn demo_output(args: &[&str]) -> String {
    let r = run(dosewright().current_dir(manifest_dir()).args(args));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    r.stdout
}
