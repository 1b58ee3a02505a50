//! The `schedule` command (docs/commands.md): the JSON contract of docs/file-formats.md
//! section 4, sessions on the plan's weekdays, the dose rule for each dose kind, follow-up
//! weeks, the table and CSV formats, `--scenario`, and snapshots of the demo plan's output.
//!
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::schedule_contract::*;
use common::*;
use serde_json::Value;
use std::collections::BTreeSet;

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
