//! The `compare` command (docs/commands.md, `compare`): checkpoints, rows equal to the
//! end states of `schedule`, the projection band (docs/model.md section 8), the Markdown
//! and CSV formats, `--add-scenario`, the dose-response table and the intake warnings.
//!
//! Numbers come from library calls; command-line behaviour from the real binary.
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::plan_text::*;
use dosewright::commands::compare::compare_report;
use dosewright::simulate::{Phase, simulate};
use serde_json::Value;

const ROW_KEYS: [&str; 9] = [
    "week",
    "mass_kg",
    "fat_mass_kg",
    "fat_free_mass_kg",
    "mass_change_kg",
    "minutes_per_session",
    "prescribed_net_kcal",
    "achieved_deficit_kcal",
    "dose_share",
];

fn checkpoints_of(j: &Value) -> Vec<u64> {
    arr(j, "checkpoints")
        .iter()
        .map(|w| w.as_u64().expect("a week number"))
        .collect()
}

#[test]
fn compare_checkpoints_are_4_12_26_within_the_horizon_the_ends_and_at_week() {
    // The default checkpoints (docs/design.md section 1, "`compare` checkpoints"): weeks 4, 12, 26 (within the horizon), protocol end, follow-up end, --at-week.
    let j = cli_json(&compare_plan(), "compare", &[]);
    assert_eq!(checkpoints_of(&j), vec![4, 12, 16, 24]);
    let j = cli_json(
        &compare_plan(),
        "compare",
        &["--at-week", "7", "--at-week", "20"],
    );
    assert_eq!(checkpoints_of(&j), vec![4, 7, 12, 16, 20, 24]);
    // A checkpoint that is already there is not repeated.
    let j = cli_json(&compare_plan(), "compare", &["--at-week", "12"]);
    assert_eq!(checkpoints_of(&j), vec![4, 12, 16, 24]);

    let long = compare_plan().replacen(
        "weeks = 16\nfollow_up_weeks = 8",
        "weeks = 20\nfollow_up_weeks = 10",
        1,
    );
    assert!(long.contains("weeks = 20"));
    let j = cli_json(&long, "compare", &[]);
    assert_eq!(checkpoints_of(&j), vec![4, 12, 20, 26, 30]);

    let short = plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 3\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_kg_week = 12.0",
        "",
        "met = 5.0",
        "",
    );
    let j = cli_json(&short, "compare", &[]);
    assert_eq!(
        checkpoints_of(&j),
        vec![3],
        "no checkpoint beyond the horizon"
    );
    let sc = &arr(&j, "scenarios")[0];
    assert_eq!(
        s(sc, "name"),
        "as prescribed",
        "no scenarios: one named as prescribed"
    );
}

#[test]
fn compare_rows_equal_the_schedule_end_states() {
    // Invariant: row N is the state at the end of week N (docs/file-formats.md section 4.2), the same run that
    // `schedule` prints as weeks[N-1].end.
    let text = compare_plan();
    let c = cli_json(&text, "compare", &["--at-week", "7"]);
    let sch = cli_json(&text, "schedule", &[]);
    let m0 = num(&sch["baseline"], "mass_kg");
    let cs = arr(&c, "scenarios");
    let ss = arr(&sch, "scenarios");
    assert_eq!(cs.len(), 4);
    assert_eq!(cs.len(), ss.len());
    let weeks = checkpoints_of(&c);
    for (a, b) in cs.iter().zip(ss) {
        assert_eq!(s(a, "name"), s(b, "name"));
        assert!(!s(a, "assumptions").is_empty());
        let rows = arr(a, "rows");
        assert_eq!(rows.len(), weeks.len(), "one row per checkpoint");
        for (row, &n) in rows.iter().zip(&weeks) {
            for key in ROW_KEYS {
                assert!(row.get(key).is_some(), "JSON contract key {key:?} in {row}");
            }
            assert_eq!(row["week"].as_u64(), Some(n));
            let w = &arr(b, "weeks")[n as usize - 1];
            assert_eq!(w["week"].as_u64(), Some(n));
            let end = &w["end"];
            for key in ["mass_kg", "fat_mass_kg", "fat_free_mass_kg"] {
                assert!(
                    (num(row, key) - num(end, key)).abs() < 1e-9,
                    "{} week {n} {key}: compare {} vs schedule {}",
                    s(a, "name"),
                    num(row, key),
                    num(end, key)
                );
            }
            for key in ["prescribed_net_kcal", "achieved_deficit_kcal", "dose_share"] {
                if end.get(key).is_some() {
                    assert!(
                        (num(row, key) - num(end, key)).abs() < 1e-9,
                        "week {n} {key}"
                    );
                }
            }
            assert_eq!(
                row["minutes_per_session"], w["minutes_per_session"],
                "week {n} minutes"
            );
            // Closed form: change from baseline (both rounded to 4 decimals).
            assert!((num(row, "mass_change_kg") - (num(end, "mass_kg") - m0)).abs() < 2e-4);
            // Invariant: mass is fat plus fat-free mass.
            assert!(
                (num(row, "mass_kg") - num(row, "fat_mass_kg") - num(row, "fat_free_mass_kg"))
                    .abs()
                    < 2e-4
            );
        }
        // Follow-up checkpoints have no minutes (docs/file-formats.md section 4.2).
        let last = rows.last().expect("rows");
        assert_eq!(last["minutes_per_session"].as_u64(), Some(0));
    }
}

#[test]
fn compare_band_brackets_the_central_mass() {
    // Invariant: the band is the lowest and highest of runs that include the central one.
    let j = cli_json(&compare_plan(), "compare", &["--at-week", "2"]);
    let mut widest: f64 = 0.0;
    for sc in arr(&j, "scenarios") {
        for row in arr(sc, "rows") {
            let (lo, m, hi) = (
                num(row, "mass_low_kg"),
                num(row, "mass_kg"),
                num(row, "mass_high_kg"),
            );
            assert!(lo <= m && m <= hi, "{}: {lo} <= {m} <= {hi}", s(sc, "name"));
            widest = widest.max(hi - lo);
        }
    }
    // With RMR and body fat both estimated the band has width (docs/model.md section 8).
    assert!(
        widest > 0.01,
        "band width {widest} kg with estimated RMR and body fat"
    );
    // Say what the band is made of: the RMR equation's error and Deurenberg's SEE.
    let sources: Vec<&str> = arr(&j, "band_sources")
        .iter()
        .map(|v| v.as_str().expect("a string"))
        .collect();
    assert!(
        sources
            .iter()
            .any(|x| x.contains("RMR") && x.contains("scaled by")),
        "{sources:?}"
    );
    assert!(
        sources.iter().any(|x| x.contains("Deurenberg")),
        "{sources:?}"
    );
    assert!(s(&j, "band_meaning").contains("not a confidence interval"));
}

#[test]
fn compare_band_has_zero_width_when_rmr_and_body_fat_are_measured() {
    // docs/model.md section 8: the band comes only from the RMR equation's error and Deurenberg's
    // error; with both measured neither applies.
    let text = plan_text(
        PARTICIPANT_MEASURED,
        "weeks = 16\nfollow_up_weeks = 8\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_kg_week = 12.0",
        "",
        "met = 5.0",
        SCENARIOS,
    );
    let j = cli_json(&text, "compare", &[]);
    for sc in arr(&j, "scenarios") {
        for row in arr(sc, "rows") {
            assert_eq!(num(row, "mass_low_kg"), num(row, "mass_kg"));
            assert_eq!(num(row, "mass_high_kg"), num(row, "mass_kg"));
        }
    }
    let sources: Vec<&str> = arr(&j, "band_sources")
        .iter()
        .map(|v| v.as_str().expect("a string"))
        .collect();
    assert!(
        sources.iter().all(|x| x.contains("measured")),
        "{sources:?}"
    );
    // Library: exactly the central masses.
    let r = compare_report(&parse(&text), &[], &[]).expect("compare");
    for sc in &r.scenarios {
        for row in &sc.rows {
            assert_eq!(row.mass_low_kg, row.mass_kg);
            assert_eq!(row.mass_high_kg, row.mass_kg);
        }
    }
}

#[test]
fn compare_markdown_and_csv_formats() {
    let text = compare_plan();
    let j = cli_json(&text, "compare", &[]);
    let weeks = checkpoints_of(&j);

    let md = cli(&text, "compare", &["--format", "markdown"]);
    assert_eq!(md.code, Some(0), "{}", md.stderr);
    assert!(md.stdout.starts_with("# "), "a Markdown heading first");
    let header = md
        .stdout
        .lines()
        .find(|l| l.starts_with('|') && l.contains("quantity"))
        .expect("a Markdown table header");
    for sc in arr(&j, "scenarios") {
        assert!(
            header.contains(s(sc, "name")),
            "column for {}",
            s(sc, "name")
        );
        assert!(
            md.stdout.contains(s(sc, "assumptions")),
            "assumptions printed"
        );
    }
    assert!(
        md.stdout
            .lines()
            .any(|l| l.starts_with("|-") || l.starts_with("| -") || l.starts_with("|:"))
    );
    assert!(md.stdout.contains("protocol ends"));

    let c = cli(&text, "compare", &["--format", "csv"]);
    assert_eq!(c.code, Some(0), "{}", c.stderr);
    let mut rd = csv::Reader::from_reader(c.stdout.as_bytes());
    let headers = rd.headers().expect("a header row").clone();
    for key in [
        "scenario",
        "week",
        "mass_kg",
        "mass_low_kg",
        "mass_high_kg",
        "dose_share",
    ] {
        assert!(headers.iter().any(|h| h == key), "CSV column {key}");
    }
    let col = |k: &str| headers.iter().position(|h| h == k).expect(k);
    let rows: Vec<csv::StringRecord> = rd.records().map(|r| r.expect("a CSV row")).collect();
    assert_eq!(
        rows.len(),
        4 * weeks.len(),
        "one row per scenario and checkpoint"
    );
    for sc in arr(&j, "scenarios") {
        for row in arr(sc, "rows") {
            let week = row["week"].as_u64().expect("week").to_string();
            let r = rows
                .iter()
                .find(|r| &r[col("scenario")] == s(sc, "name") && r[col("week")] == week)
                .expect("the CSV has the row");
            let m: f64 = r[col("mass_kg")].parse().expect("a number");
            assert!(
                (m - num(row, "mass_kg")).abs() < 1e-3,
                "CSV mass matches JSON"
            );
        }
    }

    let t = cli(&text, "compare", &[]);
    assert_eq!(t.code, Some(0), "{}", t.stderr);
    assert!(
        t.stdout.contains("(protocol ends)"),
        "the table marks the end of the protocol"
    );
    assert!(t.stdout.contains("(follow-up ends)"));
}

#[test]
fn compare_add_scenario_adds_a_column_with_plain_words() {
    let text = compare_plan();
    let j = cli_json(
        &text,
        "compare",
        &[
            "--add-scenario",
            "eats back 30%:intake_fraction=0.3",
            "--add-scenario",
            "late eater: intake_fraction = 0.4 , intake_lag_days=21",
            "--add-scenario",
            "plain",
        ],
    );
    let sc = arr(&j, "scenarios");
    assert_eq!(sc.len(), 7, "three columns added after the plan's four");
    assert_eq!(s(&sc[4], "name"), "eats back 30%");
    assert_eq!(
        s(&sc[4], "assumptions"),
        "intake rises by 30% of exercise energy at once"
    );
    assert_eq!(s(&sc[5], "name"), "late eater");
    assert_eq!(
        s(&sc[5], "assumptions"),
        "intake rises by 40% of exercise energy, reaching it with a 21-day lag"
    );
    assert_eq!(s(&sc[6], "name"), "plain");
    assert_eq!(
        s(&sc[6], "assumptions"),
        "every session delivered as prescribed; nothing compensated"
    );
    // docs/model.md section 5: eating back 30% at once leaves less of the dose than nothing eaten back.
    let last = |v: &Value| {
        num(
            arr(v, "rows")
                .iter()
                .find(|r| r["week"] == 16)
                .expect("week 16"),
            "mass_change_kg",
        )
    };
    assert!(last(&sc[4]) > last(&sc[0]), "eating back 30% loses less");
    // The ad-hoc column with nothing compensated is the plan's "as prescribed" (invariant).
    assert_eq!(arr(&sc[6], "rows"), arr(&sc[0], "rows"));

    let t = cli(
        &text,
        "compare",
        &["--add-scenario", "eats back 30%:intake_fraction=0.3"],
    );
    assert_eq!(t.code, Some(0));
    assert!(
        t.stdout
            .contains("- eats back 30%: intake rises by 30% of exercise energy at once"),
        "assumptions above the table:\n{}",
        t.stdout
    );
}

#[test]
fn compare_bad_add_scenario_strings_exit_2_naming_the_problem() {
    let text = compare_plan();
    let bad = |spec: &str, needles: &[&str]| {
        let mut n = vec!["--add-scenario"];
        n.extend(needles);
        assert_usage_error(&text, "compare", &["--add-scenario", spec], &n);
    };
    bad(":intake_fraction=0.3", &["name", "empty"]);
    bad("  :intake_fraction=0.3", &["name", "empty"]);
    bad("x:intake_fracton=0.3", &["unknown key", "intake_fracton"]);
    bad(
        "x:intake_fraction=1.6",
        &["intake_fraction", "out of range", "allowed -0.5 to 1.5"],
    );
    bad("x:intake_lag_days=-1", &["intake_lag_days", "out of range"]);
    bad(
        "x:diet_change_kcal_per_day=-3000",
        &["diet_change_kcal_per_day", "out of range"],
    );
    bad(
        "x:intake_fraction=lots",
        &["intake_fraction", "not a number"],
    );
    bad("x:intake_fraction=", &["intake_fraction", "not a number"]);
    bad("x:intake_fraction=nan", &["intake_fraction"]);
    bad("x:intake_fraction", &["no '='"]);
    bad(
        "x:intake_fraction=0.2,intake_fraction=0.3",
        &["intake_fraction", "twice"],
    );
    bad(
        "as prescribed:intake_fraction=0.3",
        &["already has a scenario named", "as prescribed"],
    );
    // Two added scenarios with one name.
    assert_usage_error(
        &text,
        "compare",
        &[
            "--add-scenario",
            "a:intake_fraction=0.1",
            "--add-scenario",
            "a:intake_fraction=0.2",
        ],
        &["already has a scenario named \"a\""],
    );
}

#[test]
fn compare_bad_weeks_and_doses_exit_2() {
    let text = compare_plan(); // 16 + 8 weeks, kcal_per_kg_week
    let c = |args: &[&str], needles: &[&str]| assert_usage_error(&text, "compare", args, needles);
    c(&["--at-week", "0"], &["--at-week 0", "allowed 1 to 24"]);
    c(&["--at-week", "25"], &["--at-week 25", "allowed 1 to 24"]);
    c(
        &["--doses", "0.4"],
        &["--doses", "0.4", "kcal_per_kg_week", "allowed 0.5 to 150"],
    );
    c(
        &["--doses", "4,151"],
        &["--doses", "151", "allowed 0.5 to 150"],
    );
    c(&["--doses", "4,nan"], &["--doses", "NaN"]);
    // Other dose kinds: their own ranges (docs/file-formats.md section 1).
    let per_session = text.replacen("kcal_per_kg_week = 12.0", "kcal_per_session = 300", 1);
    assert_usage_error(
        &per_session,
        "compare",
        &["--doses", "3001"],
        &["kcal_per_session", "allowed 10 to 3000"],
    );
    let minutes = text.replacen("kcal_per_kg_week = 12.0", "minutes_per_week = 150", 1);
    assert_usage_error(
        &minutes,
        "compare",
        &["--doses", "4"],
        &["minutes_per_week", "allowed 5 to 2100"],
    );
    // At the edges the doses are accepted.
    let ok = cli(
        &minutes,
        "compare",
        &["--doses", "5,2100", "--format", "json"],
    );
    assert_eq!(ok.code, Some(0), "{}", ok.stderr);
}

#[test]
fn compare_warns_when_a_diet_takes_intake_below_rmr_or_the_floor() {
    // docs/warnings.md (`intake-below-floor`, `intake-below-rmr`) / docs/references.md section 6.4 (common practice): unsupervised intake floors of
    // 1,200 kcal/day (women) and 1,500 (men), and never below RMR. CG-114's intake at
    // balance is PAL 1.5 x Mifflin-St Jeor 1,531.5 = 2,297 kcal/day (closed form);
    // -1,200 takes it to ~1,097 (below both), -500 to ~1,797 (below neither).
    let text = compare_plan();
    let codes = |j: &Value| -> Vec<(String, String)> {
        arr(j, "warnings")
            .iter()
            .map(|w| (s(w, "code").to_string(), s(w, "message").to_string()))
            .collect()
    };
    let mild = cli_json(
        &text,
        "compare",
        &["--add-scenario", "mild diet:diet_change_kcal_per_day=-500"],
    );
    assert!(
        !codes(&mild)
            .iter()
            .any(|(c, _)| c.starts_with("intake-below")),
        "{:?}",
        codes(&mild)
    );
    let crash = cli_json(
        &text,
        "compare",
        &[
            "--add-scenario",
            "crash diet:diet_change_kcal_per_day=-1200",
        ],
    );
    let w = codes(&crash);
    for code in ["intake-below-rmr", "intake-below-floor"] {
        let hit = w
            .iter()
            .find(|(c, _)| c == code)
            .unwrap_or_else(|| panic!("warning {code} in {w:?}"));
        assert!(
            hit.1.contains("crash diet"),
            "names the scenario: {}",
            hit.1
        );
    }
    assert!(
        w.iter().any(|(_, m)| m.contains("1200 kcal/day")),
        "names the floor"
    );
}

#[test]
fn unknown_scenario_name_exits_2() {
    assert_usage_error(
        &compare_plan(),
        "schedule",
        &["--scenario", "nobody"],
        &["nobody"],
    );
}

#[test]
fn dose_response_is_monotone_and_equals_schedule_runs_of_the_edited_plan() {
    let text = compare_plan();
    let plan = parse(&text);
    let doses = [4.0, 8.0, 12.0, 16.0];
    let r = compare_report(&plan, &[], &doses).expect("compare with doses");
    let d = r.dose_response.as_ref().expect("a dose-response table");
    assert_eq!(d.dose_unit, "kcal_per_kg_week");
    assert_eq!(d.doses.len(), 4);
    let beta = plan.constants.tef_fraction;
    for (row, &dose) in d.doses.iter().zip(&doses) {
        assert_eq!(row.dose, dose);
        // Invariant: the table is `schedule` of the plan edited to that dose.
        let s = sim(&set_line(&text, "kcal_per_kg_week", &format!("{dose:.1}")));
        for (ds, run) in row.scenarios.iter().zip(&s.scenarios) {
            assert_eq!(ds.name, run.name);
            assert_eq!(ds.rows.len(), r.checkpoints.len());
            for p in &ds.rows {
                let w = &run.weeks[p.week as usize - 1];
                assert!(
                    (p.mass_change_kg - (w.end.mass_kg - s.baseline.mass_kg)).abs() < 1e-9,
                    "dose {dose} {} week {}",
                    ds.name,
                    p.week
                );
                assert!(
                    (p.fat_mass_change_kg - (w.end.fat_mass_kg - s.baseline.fat_mass_kg)).abs()
                        < 1e-9
                );
                assert_eq!(p.minutes_per_session, w.minutes_per_session);
            }
        }
    }
    // docs/model.md section 5: while c_I (1 - beta) + c_A < 1 every extra unit of dose adds deficit,
    // so loss is non-decreasing in the dose at each protocol checkpoint. (After the
    // protocol a lagged intake can overshoot, so follow-up weeks are not claimed.)
    for (j, sc) in plan.scenarios.iter().enumerate() {
        let c = &sc.compensation;
        assert!(c.intake_fraction * (1.0 - beta) + c.activity_fraction < 1.0);
        for (k, &week) in r.checkpoints.iter().enumerate() {
            if week > plan.protocol.weeks {
                continue;
            }
            let change: Vec<f64> = d
                .doses
                .iter()
                .map(|row| row.scenarios[j].rows[k].mass_change_kg)
                .collect();
            for pair in change.windows(2) {
                assert!(
                    pair[1] <= pair[0] + 1e-12,
                    "{} week {week}: {change:?} not monotone",
                    sc.name
                );
            }
            assert!(
                change[3] < change[0] - 0.1,
                "{} week {week}: 4x the dose loses clearly more: {change:?}",
                sc.name
            );
        }
    }

    // The binary prints the same table.
    let j = cli_json(&text, "compare", &["--doses", "4,8,12,16"]);
    let dr = &j["dose_response"];
    assert_eq!(s(dr, "dose_unit"), "kcal_per_kg_week");
    for (jrow, row) in arr(dr, "doses").iter().zip(&d.doses) {
        assert_eq!(num(jrow, "dose"), row.dose);
        for (js, ds) in arr(jrow, "scenarios").iter().zip(&row.scenarios) {
            assert_eq!(s(js, "name"), ds.name);
            for (jp, p) in arr(js, "rows").iter().zip(&ds.rows) {
                assert!((num(jp, "mass_change_kg") - p.mass_change_kg).abs() < 1e-4);
            }
        }
    }
    // Without --doses there is no table.
    assert!(cli_json(&text, "compare", &[])["dose_response"].is_null());
}

#[test]
fn compare_library_rows_equal_the_simulation() {
    // Invariant, library side: compare_report's rows are simulate's week ends.
    let text = compare_plan();
    let plan = parse(&text);
    let r = compare_report(&plan, &[9], &[]).expect("compare");
    let s = simulate(&plan).expect("simulate");
    assert_eq!(r.checkpoints, vec![4, 9, 12, 16, 24]);
    for (sc, run) in r.scenarios.iter().zip(&s.scenarios) {
        assert_eq!(sc.assumptions, run.assumptions);
        for row in &sc.rows {
            let w = &run.weeks[row.week as usize - 1];
            assert_eq!(row.mass_kg, w.end.mass_kg);
            assert_eq!(row.fat_mass_kg, w.end.fat_mass_kg);
            assert_eq!(row.fat_free_mass_kg, w.end.fat_free_mass_kg);
            assert_eq!(row.mass_change_kg, w.end.mass_kg - s.baseline.mass_kg);
            assert_eq!(row.dose_share, w.end.dose_share);
            assert_eq!(row.phase, w.phase);
            assert_eq!(row.phase == Phase::FollowUp, row.week > 16);
        }
    }
    // Library validation mirrors the binary's.
    assert!(compare_report(&plan, &[0], &[]).is_err());
    assert!(compare_report(&plan, &[25], &[]).is_err());
    assert!(compare_report(&plan, &[], &[0.4]).is_err());
}
