//! The cohort ("trial designer's cohort"): a study file, a roster or a synthetic
//! population, permuted-block randomisation, the cohort runner and its summaries.
//!
//! Each check says where its expected value comes from: a hand computation shown
//! beside it, an invariant of the design, an independent computation written here,
//! or the single-plan `schedule`, which the cohort must reproduce exactly for one
//! participant (DEVELOPERS.md: "use the same integrator wherever two results must
//! agree exactly", docs/model.md section 6).
//!
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::*;
use dosewright::model::Sex;
use dosewright::simulate::cohort::{
    CohortRequest, Member, Spread, run_cohort, simulate_member, summarise,
};
use dosewright::simulate::integrate::Integrator;
use dosewright::simulate::{RunMode, calibrated, run as sim_run, simulate};
use dosewright::stats::percentile;
use dosewright::study::randomise::permuted_blocks;
use dosewright::study::roster::parse_roster;
use dosewright::study::{Study, parse_study, synthetic};
use serde_json::Value;
use std::collections::BTreeMap;

// ---------------------------------------------------------------------------
// Helpers
// ---------------------------------------------------------------------------

const PILOT: &str = "plans/study-pilot.toml";
const PILOT_ROSTER: &str = "demo-data/pilot-roster.csv";
const PILOT_ALLOCATED: &str = "demo-data/pilot-roster-allocated.csv";

/// A file of the repository as text.
fn repo_file(rel: &str) -> String {
    std::fs::read_to_string(manifest_dir().join(rel)).unwrap_or_else(|e| panic!("{rel}: {e}"))
}

/// The example pilot study, validated.
fn pilot_study() -> Study {
    parse_study(PILOT, &repo_file(PILOT)).expect("the example study is valid")
}

/// `|a - b| <= tol`, with both values in the message.
fn close(what: &str, a: f64, b: f64, tol: f64) {
    assert!(
        (a - b).abs() <= tol,
        "{what}: {a} vs {b} (difference {:e}, allowed {tol:e})",
        (a - b).abs()
    );
}

/// Run `cohort` with `args` in the crate root (so messages name files as given).
fn cohort_in_root(args: &[&str]) -> Run {
    run(dosewright()
        .current_dir(manifest_dir())
        .arg("cohort")
        .args(args)
        .arg("--quiet"))
}

/// `cohort` in the crate root, which must succeed; its standard output.
fn cohort_ok(args: &[&str]) -> String {
    let r = cohort_in_root(args);
    assert_eq!(r.code, Some(0), "cohort {args:?} failed: {}", r.stderr);
    r.stdout
}

/// `cohort ... --format json`, parsed.
fn cohort_json(args: &[&str]) -> Value {
    let mut a = args.to_vec();
    a.extend(["--format", "json"]);
    serde_json::from_str(&cohort_ok(&a)).expect("cohort --format json prints valid JSON")
}

/// The per-participant CSV as one map per row (header -> cell).
fn csv_rows(text: &str) -> Vec<BTreeMap<String, String>> {
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let header: Vec<String> = r.headers().unwrap().iter().map(str::to_string).collect();
    r.records()
        .map(|rec| {
            let rec = rec.expect("a CSV record");
            header
                .iter()
                .cloned()
                .zip(rec.iter().map(str::to_string))
                .collect()
        })
        .collect()
}

fn cell_f64(row: &BTreeMap<String, String>, key: &str) -> f64 {
    row[key]
        .parse()
        .unwrap_or_else(|_| panic!("{key} = {:?} is not a number", row[key]))
}

/// The arm of the JSON named `name`.
fn json_arm<'a>(j: &'a Value, name: &str) -> &'a Value {
    array(j, "arms")
        .iter()
        .find(|a| a["name"] == name)
        .unwrap_or_else(|| panic!("no arm {name:?}"))
}

// ---------------------------------------------------------------------------
// The example study and rosters run as they are
// ---------------------------------------------------------------------------

#[test]
fn the_example_study_runs_with_both_example_rosters_and_a_synthetic_population() {
    // The commands demo-data/README.md and the study's own comment give.
    for args in [
        &[PILOT, "--roster", PILOT_ROSTER, "--randomise"][..],
        &[PILOT, "--roster", PILOT_ALLOCATED][..],
        &[PILOT, "--roster", PILOT_ROSTER, "--all-arms"][..],
        &[PILOT, "--synthetic", "60", "--seed", "7"][..],
    ] {
        let out = cohort_ok(args);
        assert!(out.starts_with(
            "dosewright cohort: walking dose pilot (invented) (plans/study-pilot.toml)\n"
        ));
        assert!(
            out.contains("\nCautions\n"),
            "{args:?}: the cautions close the table"
        );
    }
}

#[test]
fn the_example_rosters_are_invented_pseudonymous_and_hold_the_same_participants() {
    let plain = csv_rows(&repo_file(PILOT_ROSTER));
    let allocated = csv_rows(&repo_file(PILOT_ALLOCATED));
    assert_eq!(plain.len(), 12);
    assert!(
        !plain[0].contains_key("arm"),
        "no arm column: --randomise is needed"
    );
    for (i, (p, a)) in plain.iter().zip(&allocated).enumerate() {
        assert_eq!(p["id"], format!("PIL-{:03}", i + 1));
        let mut without_arm = a.clone();
        assert!(!without_arm.remove("arm").unwrap().is_empty());
        assert_eq!(&without_arm, p, "row {} differs beyond the arm", i + 2);
    }
    // Optional columns are filled for some participants only, as in a real roster.
    for col in [
        "body_fat_percent",
        "rmr_kcal_per_day",
        "intake_kcal_per_day",
        "pal",
        "exercises_regularly",
    ] {
        let filled = plain.iter().filter(|r| !r[col].is_empty()).count();
        assert!(
            filled > 0 && filled < plain.len(),
            "{col}: {filled} of 12 filled"
        );
    }
}

#[test]
fn randomising_the_example_roster_gives_the_allocated_example_roster() {
    // demo-data/README.md: pilot-roster-allocated.csv holds the allocation that
    // `--randomise` gives with the default seed, so the two runs agree on everything
    // but the words for where the arms came from.
    let strip = |mut j: Value| {
        let o = j.as_object_mut().unwrap();
        o.remove("source");
        o.remove("allocation");
        j
    };
    let randomised = strip(cohort_json(&[
        PILOT,
        "--roster",
        PILOT_ROSTER,
        "--randomise",
    ]));
    let given = strip(cohort_json(&[PILOT, "--roster", PILOT_ALLOCATED]));
    assert_eq!(randomised, given);
    // 6 women and 6 men, blocks of 6 over 3 arms: each stratum is one complete block,
    // so every arm holds exactly 2 women and 2 men.
    let rows = csv_rows(&repo_file(PILOT_ALLOCATED));
    let study = pilot_study();
    for arm in &study.arms {
        for sex in ["female", "male"] {
            let n = rows
                .iter()
                .filter(|r| r["arm"] == arm.name && r["sex"] == sex)
                .count();
            assert_eq!(n, 2, "arm {:?}, {sex}", arm.name);
        }
    }
}

// ---------------------------------------------------------------------------
// One participant in one arm is the single-plan schedule
// ---------------------------------------------------------------------------

/// One roster row of an invented participant (PIL-002 of the example roster: every
/// optional column but intake given), in the 12 kcal/kg/week arm.
const ONE_ROW: &str = "id,sex,age_years,height_cm,mass_kg,body_fat_percent,rmr_kcal_per_day,pal,exercises_regularly,known_disease,signs_or_symptoms,medical_clearance,arm
PIL-002,male,51,179.0,98.6,31.5,1840,1.55,false,false,false,false,12 kcal/kg/week
";
const ONE_ARM: &str = "12 kcal/kg/week";

/// The plan file of that participant: the study's shared tables, the participant, and
/// the arm's dose as `[protocol.dose]` (built from the study text, so the two cannot
/// drift apart).
fn one_plan_text(study_text: &str) -> String {
    let mut t: toml::Table = toml::from_str(study_text).unwrap();
    let arms = t.remove("arm").unwrap();
    let dose = arms
        .as_array()
        .unwrap()
        .iter()
        .find(|a| a.get("name").and_then(toml::Value::as_str) == Some(ONE_ARM))
        .and_then(|a| a.get("dose"))
        .expect("the arm and its dose")
        .clone();
    // The study-only tables (docs/file-formats.md): not keys of a plan.
    for key in ["study", "synthetic", "uncertainty", "staffing"] {
        t.remove(key);
    }
    t.get_mut("protocol")
        .and_then(toml::Value::as_table_mut)
        .expect("[protocol]")
        .insert("dose".into(), dose);
    let participant: toml::Table = toml::from_str(
        r#"id = "PIL-002"
sex = "male"
age_years = 51
height_cm = 179.0
mass_kg = 98.6
body_fat_percent = 31.5
rmr_kcal_per_day = 1840
pal = 1.55
[screening]
exercises_regularly = false
known_disease = false
signs_or_symptoms = false
medical_clearance = false
"#,
    )
    .unwrap();
    t.insert("participant".into(), toml::Value::Table(participant));
    toml::to_string(&t).unwrap()
}

#[test]
fn one_participant_equals_the_single_plan_at_the_library_level() {
    let study = pilot_study();
    let entry = &parse_roster("one.csv", ONE_ROW, &study).unwrap()[0];
    let arm = study.arm_index(ONE_ARM).unwrap();
    assert_eq!(entry.arm, Some(arm));
    // The plan file written by hand from the same values is the plan the cohort runs.
    let mut from_file =
        dosewright::plan::parse_plan("plan.toml", &one_plan_text(&repo_file(PILOT))).unwrap();
    let cohort_plan = study.plan_for(&entry.participant, arm);
    from_file.source_name = cohort_plan.source_name.clone();
    assert_eq!(from_file, cohort_plan);

    let sim = simulate(&cohort_plan).unwrap();
    let weeks = study.protocol.weeks as usize;
    let total = study.protocol.total_weeks();
    let (fat0, mass0) = (sim.baseline.fat_mass_kg, sim.baseline.mass_kg);
    // In its own arm, and with --all-arms (where the no-exercise counterfactual comes
    // from the control arm's plan): both must give the single plan's numbers.
    for all_arms in [false, true] {
        let member = Member {
            participant: entry.participant.clone(),
            arm: entry.arm,
        };
        let req = CohortRequest {
            all_arms,
            integrator: Integrator::Dopri5,
            checkpoints: vec![12, weeks as u32, total],
            draws: 1,
            seed: 1,
        };
        let got = simulate_member(&study, &member, 0, &req).unwrap();
        close("baseline mass", got.baseline_mass_kg, mass0, 0.0);
        let runs: Vec<_> = got.runs.iter().filter(|r| r.arm == arm).collect();
        assert_eq!(runs.len(), sim.scenarios.len());
        for (run, sc) in runs.iter().zip(&sim.scenarios) {
            let what = |k: &str| format!("{} (all_arms {all_arms}): {k}", sc.name);
            let w = &sc.weeks;
            close(
                &what("end-of-protocol mass change"),
                run.protocol_end_mass_change_kg,
                sc.outcome.protocol_end_mass_change_kg,
                1e-9,
            );
            close(
                &what("end-of-protocol fat change"),
                run.protocol_end_fat_mass_change_kg,
                w[weeks - 1].end.fat_mass_kg - fat0,
                1e-9,
            );
            close(
                &what("dose_share"),
                run.dose_share.expect("a dosed arm has a dose share"),
                sc.outcome.protocol_end_dose_share,
                1e-9,
            );
            close(
                &what("prescribed net"),
                run.prescribed_net_kcal,
                w[weeks - 1].end.prescribed_net_kcal,
                1e-9,
            );
            for (k, c) in req.checkpoints.iter().enumerate() {
                let end = &w[*c as usize - 1].end;
                close(
                    &what("checkpoint mass"),
                    run.mass_change_kg[k],
                    end.mass_kg - mass0,
                    1e-9,
                );
                close(
                    &what("checkpoint fat"),
                    run.fat_mass_change_kg[k],
                    end.fat_mass_kg - fat0,
                    1e-9,
                );
            }
            assert_eq!(
                run.minutes_week1,
                w[0].minutes_per_session,
                "{}",
                what("week 1")
            );
            assert_eq!(
                run.minutes_last_week,
                w[weeks - 1].minutes_per_session,
                "{}",
                what("last week")
            );
            let by_week: Vec<u32> = w[..weeks].iter().map(|x| x.minutes_per_session).collect();
            assert_eq!(run.minutes_by_week, by_week);
            let whole: Vec<u32> = w[..weeks]
                .iter()
                .map(|x| x.sessions.iter().map(|s| s.session_minutes).sum())
                .collect();
            assert_eq!(run.session_minutes_by_week, whole);
        }
    }
}

/// A scratch folder with `study_text` as study.toml, the one participant as one.csv
/// and the same participant's plan as plan.toml, and `schedule`'s JSON of the plan.
fn one_participant_and_schedule(name: &str, study_text: &str) -> (Scratch, Value) {
    let dir = Scratch::new(name);
    dir.write("study.toml", study_text);
    dir.write("one.csv", ONE_ROW);
    dir.write("plan.toml", one_plan_text(study_text));
    let sched = run(dir
        .cmd()
        .args(["schedule", "plan.toml", "--format", "json"]));
    assert_eq!(sched.code, Some(0), "{}", sched.stderr);
    let s: Value = serde_json::from_str(&sched.stdout).unwrap();
    (dir, s)
}

#[test]
fn one_participant_equals_the_single_plan_on_the_command_line() {
    let (dir, s) = one_participant_and_schedule("cohort-one", &repo_file(PILOT));
    let base = [
        "cohort",
        "study.toml",
        "--roster",
        "one.csv",
        "--integrator",
        "dopri5",
        "--quiet",
        "--format",
    ];
    let c = run(dir.cmd().args(base).arg("json"));
    assert_eq!(c.code, Some(0), "{}", c.stderr);
    let c: Value = serde_json::from_str(&c.stdout).unwrap();
    let csv = run(dir.cmd().args(base).arg("csv"));
    assert_eq!(csv.code, Some(0), "{}", csv.stderr);
    let rows = csv_rows(&csv.stdout);

    assert_eq!(c["participants"], 1);
    assert_eq!(c["integrator"], "dopri5");
    let arm = json_arm(&c, ONE_ARM);
    assert_eq!(arm["participants"], 1);
    let weeks = 24;
    let fat0 = num(&s["baseline"], "fat_mass_kg");
    // Both JSON outputs round to 4 decimals (src/report/json.rs) the same exact
    // number, so they agree to one unit in the last place; the CSV keeps every digit
    // and agrees with the rounded schedule JSON to half a unit.
    let (json_tol, csv_tol) = (1e-4 + 1e-12, 5e-5 + 1e-12);
    for (si, ss) in array(&s, "scenarios").iter().enumerate() {
        let name = text(ss, "name");
        let cs = &array(arm, "scenarios")[si];
        assert_eq!(cs["name"], name);
        let out = &ss["outcome"];
        let dm = num(out, "protocol_end_mass_change_kg");
        let spread = &cs["mass_change_kg"];
        // One participant: mean, median, 5th and 95th percentiles are that value.
        for k in ["mean", "median", "p5", "p95"] {
            close(
                &format!("{name}: mass change {k}"),
                num(spread, k),
                dm,
                json_tol,
            );
        }
        assert_eq!(num(spread, "sd"), 0.0, "the SD of one value is 0");
        let share = num(out, "protocol_end_dose_share");
        close(
            &format!("{name}: dose share"),
            num(cs, "dose_share_mean"),
            share,
            json_tol,
        );
        let sw = array(ss, "weeks");
        let fat_end = num(&sw[weeks - 1]["end"], "fat_mass_kg");
        close(
            &format!("{name}: fat change"),
            num(&cs["fat_mass_change_kg"], "mean"),
            fat_end - fat0,
            2.0 * json_tol,
        );
        let m1 = sw[0]["minutes_per_session"].as_u64().unwrap();
        let ml = sw[weeks - 1]["minutes_per_session"].as_u64().unwrap();
        for k in ["median", "p95", "max"] {
            assert_eq!(
                num(&cs["minutes_week1"], k),
                m1 as f64,
                "{name}: week 1 {k}"
            );
            assert_eq!(
                num(&cs["minutes_last_week"], k),
                ml as f64,
                "{name}: last week {k}"
            );
        }
        // The week-36 checkpoint is the end of follow-up: the schedule's outcome.
        let cp = array(cs, "checkpoints")
            .iter()
            .find(|p| p["week"] == 36)
            .expect("the end of follow-up is always a checkpoint");
        close(
            &format!("{name}: week 36"),
            num(&cp["mass_change_kg"], "mean"),
            num(out, "mass_change_kg"),
            json_tol,
        );
        // The per-participant CSV, at full precision.
        let row = rows
            .iter()
            .find(|r| r["scenario"] == name && r["arm"] == ONE_ARM)
            .unwrap();
        assert_eq!(row["id"], "PIL-002");
        assert_eq!(row["allocated"], "true");
        close(
            &format!("{name}: CSV mass"),
            cell_f64(row, "mass_change_kg"),
            dm,
            csv_tol,
        );
        close(
            &format!("{name}: CSV share"),
            cell_f64(row, "dose_share"),
            share,
            csv_tol,
        );
        assert_eq!(row["minutes_week1"], m1.to_string());
        assert_eq!(row["minutes_last_week"], ml.to_string());
        // Whole-session hours: every session's minutes (warm-up, target, cool-down).
        let minutes: u64 = sw[..weeks]
            .iter()
            .flat_map(|w| array(w, "sessions").iter())
            .map(|x| x["session_minutes"].as_u64().unwrap())
            .sum();
        close(
            &format!("{name}: CSV session hours"),
            cell_f64(row, "session_hours"),
            minutes as f64 / 60.0,
            1e-9,
        );
    }
}

// ---------------------------------------------------------------------------
// docs/model.md section 6: RK4 with steps set by the intake lag against Dopri5 over 10 years
// ---------------------------------------------------------------------------

/// An invented participant with a 10-year (520-week) horizon, a dose that follows
/// the current mass, and compensation of every kind. `{WEEKS}` and `{FOLLOW}` are
/// filled in.
const TEN_YEARS: &str = r#"[participant]
id = "RK-010"
sex = "female"
age_years = 44
height_cm = 166.0
mass_kg = 92.0
body_fat_percent = 41.0
pal = 1.5

[protocol]
start = 2027-01-04
weeks = {WEEKS}
follow_up_weeks = {FOLLOW}
session_days = ["mon", "wed", "fri", "sat"]

[protocol.dose]
kcal_per_kg_week = 14.0
basis = "net"
mass_basis = "current"

[protocol.ramp]
weeks = 8

[protocol.warm_up]
minutes = 5
met = 2.5

[activity]
compendium_code = "17200"

[[scenario]]
name = "as prescribed"

[[scenario]]
name = "eats back 40%, 21-day lag"
intake_fraction = 0.4
intake_lag_days = 21.0

[[scenario]]
name = "eats back 50% at once"
intake_fraction = 0.5
intake_lag_days = 0.0

[[scenario]]
name = "mixed with a diet"
intake_fraction = 0.25
intake_lag_days = 14.0
activity_fraction = 0.15
rmr_adaptation_kcal_per_kg = 5.0
diet_change_kcal_per_day = -250.0
"#;

#[test]
fn rk4_with_one_day_steps_is_within_1e_4_kg_of_dopri5_over_ten_years() {
    // docs/model.md section 6: "A fixed-step method (classic RK4, step at most one day) may serve
    // where speed matters (the cohort) when a test shows it within 1e-4 kg of Dopri5
    // over 10 years". Every week's end state is compared, for sessions throughout and
    // for five years of sessions then five of follow-up (the step off the dose).
    for (weeks, follow) in [(520, 0), (260, 260)] {
        let text = TEN_YEARS
            .replace("{WEEKS}", &weeks.to_string())
            .replace("{FOLLOW}", &follow.to_string());
        let plan = dosewright::plan::parse_plan("ten-years.toml", &text).unwrap();
        assert_eq!(plan.protocol.total_weeks(), 520);
        let (baseline, physiology) = calibrated(&plan).unwrap();
        for sc in &plan.scenarios {
            let with = |integrator| {
                let mode = RunMode {
                    integrator,
                    ..RunMode::projection(&plan)
                };
                sim_run(&plan, &physiology, &baseline, sc, mode, None).unwrap()
            };
            let (d, r) = (with(Integrator::Dopri5), with(Integrator::Rk4));
            assert_eq!(d.weeks.len(), 520);
            assert_eq!(r.weeks.len(), 520);
            let mut worst = 0.0f64;
            for (a, b) in d.weeks.iter().zip(&r.weeks) {
                let what = format!("{weeks}+{follow} weeks, {}, week {}", sc.name, a.week);
                close(&what, b.end.mass_kg, a.end.mass_kg, 1e-4);
                close(&what, b.end.fat_mass_kg, a.end.fat_mass_kg, 1e-4);
                assert_eq!(a.minutes_per_session, b.minutes_per_session, "{what}");
                worst = worst.max((a.end.mass_kg - b.end.mass_kg).abs());
            }
            // The run must move: a plan that changed nothing would pass trivially.
            let change = d.weeks.last().unwrap().end.mass_kg - baseline.mass_kg;
            let lowest = d
                .weeks
                .iter()
                .map(|w| w.end.mass_kg)
                .fold(f64::INFINITY, f64::min);
            assert!(baseline.mass_kg - lowest > 1.0, "{}: {change} kg", sc.name);
            eprintln!(
                "{weeks}+{follow} {}: largest |RK4 - Dopri5| {worst:e} kg",
                sc.name
            );
        }
    }
}

// ---------------------------------------------------------------------------
// Randomisation: permuted blocks stratified by sex
// ---------------------------------------------------------------------------

/// 30 women and 17 men, interleaved irregularly (roster order).
fn mixed_sexes() -> Vec<Sex> {
    let mut v = Vec::new();
    let (mut f, mut m) = (0, 0);
    for i in 0.. {
        if f == 30 && m == 17 {
            break;
        }
        // Two women then a man, with an extra woman every fifth place.
        let woman = (i % 3 != 2 || i % 5 == 0) && f < 30 || m == 17;
        if woman {
            v.push(Sex::Female);
            f += 1;
        } else {
            v.push(Sex::Male);
            m += 1;
        }
    }
    v
}

/// The arms of the participants of `stratum`, in roster order.
fn stratum_arms(sexes: &[Sex], arms: &[usize], stratum: Sex) -> Vec<usize> {
    sexes
        .iter()
        .zip(arms)
        .filter(|(s, _)| **s == stratum)
        .map(|(_, a)| *a)
        .collect()
}

#[test]
fn every_complete_block_of_each_stratum_holds_each_arm_block_size_over_arms_times() {
    // Schulz KF, Grimes DA 2002, Lancet 359:515 (blocked randomisation): a block of 6
    // over 3 arms holds each arm 6/3 = 2 times. 30 women fill 5 complete blocks; 17
    // men fill 2 complete blocks and 5 places of a third, where no arm can appear
    // more than twice.
    let sexes = mixed_sexes();
    assert_eq!(sexes.iter().filter(|s| **s == Sex::Female).count(), 30);
    assert_eq!(sexes.len(), 47);
    for seed in [1, 2, 20_270_101, u64::MAX] {
        let arms = permuted_blocks(&sexes, 3, 6, seed);
        assert_eq!(arms.len(), 47);
        for (stratum, complete) in [(Sex::Female, 5), (Sex::Male, 2)] {
            let got = stratum_arms(&sexes, &arms, stratum);
            let blocks: Vec<&[usize]> = got.chunks(6).collect();
            for (b, block) in blocks.iter().enumerate() {
                let counts: Vec<usize> = (0..3)
                    .map(|a| block.iter().filter(|x| **x == a).count())
                    .collect();
                if b < complete {
                    assert_eq!(
                        counts,
                        [2, 2, 2],
                        "seed {seed}, {stratum:?} block {b}: {block:?}"
                    );
                } else {
                    assert!(
                        counts.iter().all(|c| *c <= 2),
                        "seed {seed}, {stratum:?} last block: {block:?}"
                    );
                }
            }
            assert_eq!(blocks.len(), complete + usize::from(stratum == Sex::Male));
        }
        // 30 women in complete blocks: exactly 10 in each arm.
        let women = stratum_arms(&sexes, &arms, Sex::Female);
        for a in 0..3 {
            assert_eq!(women.iter().filter(|x| **x == a).count(), 10);
        }
    }
}

#[test]
fn randomisation_is_reproducible_from_the_seed_and_changes_with_it() {
    let sexes = mixed_sexes();
    let a = permuted_blocks(&sexes, 3, 6, 11);
    assert_eq!(
        a,
        permuted_blocks(&sexes, 3, 6, 11),
        "same seed, same allocation"
    );
    // A different seed gives a different allocation: 7 complete blocks of 90 possible
    // orders each (6!/(2!2!2!)), so two seeds agree by chance with odds of about 1 in
    // 90^7.
    for other in [12, 13, 11 + (1 << 32)] {
        assert_ne!(a, permuted_blocks(&sexes, 3, 6, other), "seed {other}");
    }
    // Two arms, blocks of 4: every complete block holds each arm twice.
    let b = permuted_blocks(&sexes, 2, 4, 5);
    for s in [Sex::Female, Sex::Male] {
        for block in stratum_arms(&sexes, &b, s).chunks_exact(4) {
            assert_eq!(block.iter().filter(|x| **x == 0).count(), 2);
        }
    }
}

#[test]
fn strata_are_randomised_separately() {
    // Each stratum draws from its own stream of the seed (src/study/randomise.rs), so
    // the women's sequence is the same whether the men are there or not, and wherever
    // they stand in the roster.
    let sexes = mixed_sexes();
    let seed = 42;
    let arms = permuted_blocks(&sexes, 3, 6, seed);
    let only_women = vec![Sex::Female; 30];
    let only_men = vec![Sex::Male; 17];
    assert_eq!(
        stratum_arms(&sexes, &arms, Sex::Female),
        permuted_blocks(&only_women, 3, 6, seed)
    );
    assert_eq!(
        stratum_arms(&sexes, &arms, Sex::Male),
        permuted_blocks(&only_men, 3, 6, seed)
    );
    // Men first, then women: the same two sequences.
    let mut sorted = only_men.clone();
    sorted.extend(&only_women);
    let arms2 = permuted_blocks(&sorted, 3, 6, seed);
    assert_eq!(arms2[..17], permuted_blocks(&only_men, 3, 6, seed)[..]);
    assert_eq!(arms2[17..], permuted_blocks(&only_women, 3, 6, seed)[..]);
    // And the two strata do not simply repeat one sequence.
    assert_ne!(
        permuted_blocks(&only_women, 3, 6, seed)[..12],
        permuted_blocks(&[Sex::Male; 12], 3, 6, seed)[..]
    );
}

#[test]
fn a_block_is_any_of_its_orders_with_equal_chance() {
    // A Fisher-Yates shuffle gives every order of the block's multiset with the same
    // probability (Knuth, TAOCP vol. 2, 3.4.2, algorithm P; from memory, unconfirmed).
    // Over 9000 seeds the 90 orders of {0,0,1,1,2,2} each expect 100 blocks; a
    // chi-square with 89 degrees of freedom stays below 140 with probability above
    // 0.999 (the 0.999 quantile is about 136 by the Wilson-Hilferty approximation,
    // 89 (1 - 2/801 + 3.090 sqrt(2/801))^3 = 136.0, derived). The seeds are fixed, so the test is deterministic.
    let six = vec![Sex::Female; 6];
    let mut counts: BTreeMap<Vec<usize>, u32> = BTreeMap::new();
    let n = 9000u64;
    for seed in 0..n {
        *counts.entry(permuted_blocks(&six, 3, 6, seed)).or_default() += 1;
    }
    assert_eq!(counts.len(), 90, "every order occurs");
    let expected = n as f64 / 90.0;
    let chi2: f64 = counts
        .values()
        .map(|c| (f64::from(*c) - expected).powi(2) / expected)
        .sum();
    assert!(
        chi2 < 140.0,
        "chi-square {chi2:.1} over 89 degrees of freedom"
    );
}

// ---------------------------------------------------------------------------
// Staff hours
// ---------------------------------------------------------------------------

/// A minutes dose gives fixed minutes, so the session-hours can be worked by hand.
const STAFF_STUDY: &str = r#"[study]
name = "staff hours check (invented)"
block_size = 2

[protocol]
start = 2027-01-04
weeks = 8
session_days = ["mon", "wed", "fri"]

[protocol.ramp]
weeks = 2
start_fraction = 0.5

[activity]
met = 4.0

[[arm]]
name = "control"

[[arm]]
name = "150 min/week"
dose = { minutes_per_week = 150 }

[[scenario]]
name = "as prescribed"

[[scenario]]
name = "eats back 50%"
intake_fraction = 0.5
"#;

const STAFF_ROSTER: &str = "id,sex,age_years,height_cm,mass_kg,arm
ST-01,female,42,164.0,82.0,150 min/week
ST-02,male,55,176.0,95.0,control
ST-03,female,38,170.0,88.5,150 min/week
ST-04,male,47,181.0,101.0,150 min/week
ST-05,female,60,158.0,74.0,control
";

/// The staff hours of a JSON object: (peak, peak week, total, by week).
fn hours(v: &Value) -> (f64, u64, f64, Vec<f64>) {
    (
        num(v, "peak_per_week"),
        v["peak_week"].as_u64().unwrap(),
        num(v, "total"),
        array(v, "by_week")
            .iter()
            .map(|x| x.as_f64().unwrap())
            .collect(),
    )
}

/// `cohort study.toml --roster roster.csv --quiet --format FORMAT` and `extra` in `dir`.
fn roster_cohort(dir: &Scratch, format: &str, extra: &[&str]) -> Run {
    run(dir
        .cmd()
        .args([
            "cohort",
            "study.toml",
            "--roster",
            "roster.csv",
            "--quiet",
            "--format",
            format,
        ])
        .args(extra))
}

fn staff_run(study: &str, roster: &str, extra: &[&str]) -> Value {
    let dir = Scratch::new("cohort-staff");
    dir.write("study.toml", study);
    dir.write("roster.csv", roster);
    let r = roster_cohort(&dir, "json", extra);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap()
}

#[test]
fn staff_hours_are_the_scheduled_session_minutes_over_60() {
    // By hand: 150 min/week over 3 sessions is 50 min a session at the full dose. The
    // ramp (r_w = 0.5 + 0.5 (w - 1)/2, docs/model.md section 4) gives 25 min in week 1 and 37.5,
    // rounded up to 38, in week 2; weeks 3-8 are at 50. Three participants in the
    // dosed arm, 3 sessions a week each:
    //   week 1: 9 x 25 = 225 min = 3.75 h; week 2: 9 x 38 = 342 min = 5.7 h;
    //   weeks 3-8: 9 x 50 = 450 min = 7.5 h (the peak, first reached in week 3);
    //   total: 9 x (25 + 38 + 6 x 50) = 9 x 363 = 3267 min = 54.45 h.
    // The two controls have no sessions.
    let j = staff_run(STAFF_STUDY, STAFF_ROSTER, &[]);
    let by_hand = vec![3.75, 5.7, 7.5, 7.5, 7.5, 7.5, 7.5, 7.5];
    let (peak, week, total, by_week) = hours(&j["staff_hours"]);
    close("peak", peak, 7.5, 1e-9);
    assert_eq!(week, 3);
    close("total", total, 54.45, 1e-9);
    for (w, (a, b)) in by_week.iter().zip(&by_hand).enumerate() {
        close(&format!("week {}", w + 1), *a, *b, 1e-9);
    }
    let dosed = json_arm(&j, "150 min/week");
    assert_eq!(dosed["participants"], 3);
    let (p, w, t, _) = hours(&dosed["staff_hours"]);
    assert_eq!((p, w, t), (7.5, 3, 54.45));
    let control = json_arm(&j, "control");
    assert_eq!(control["participants"], 2);
    let (p, _, t, _) = hours(&control["staff_hours"]);
    assert_eq!((p, t), (0.0, 0.0));
    // The minutes themselves: week 1 is 25 and the last week 50 for everyone.
    let sc = &array(dosed, "scenarios")[0];
    assert_eq!(num(&sc["minutes_week1"], "max"), 25.0);
    assert_eq!(num(&sc["minutes_last_week"], "median"), 50.0);
}

#[test]
fn staff_hours_count_the_warm_up_and_the_cool_down() {
    // Adding 5 min of warm-up and 5 of cool-down to a minutes dose leaves the time at
    // target as it was (src/simulate/prescription.rs: "a minutes dose gives the time
    // at target, with warm-up and cool-down on top"): every session is 10 min longer.
    //   week 1: 9 x 35 = 315 min = 5.25 h; week 2: 9 x 48 = 432 min = 7.2 h;
    //   weeks 3-8: 9 x 60 = 540 min = 9 h; total 3267 + 8 x 9 x 10 = 3987 min = 66.45 h.
    let study = edit(
        STAFF_STUDY,
        &[(
            "[activity]",
            "[protocol.warm_up]\nminutes = 5\nmet = 2.5\n\n[protocol.cool_down]\nminutes = 5\nmet = 2.0\n\n[activity]",
        )],
    );
    let j = staff_run(&study, STAFF_ROSTER, &[]);
    let (peak, week, total, by_week) = hours(&j["staff_hours"]);
    close("peak", peak, 9.0, 1e-9);
    assert_eq!(week, 3);
    close("total", total, 66.45, 1e-9);
    close("week 1", by_week[0], 5.25, 1e-9);
    close("week 2", by_week[1], 7.2, 1e-9);
    // The minutes reported per session are the time at target, as before.
    let sc = &array(json_arm(&j, "150 min/week"), "scenarios")[0];
    assert_eq!(num(&sc["minutes_week1"], "max"), 25.0);
    // The per-participant CSV: 3 x (35 + 48 + 6 x 60) / 60 = 22.15 h each.
    let dir = Scratch::new("cohort-staff-csv");
    dir.write("study.toml", &study);
    dir.write("roster.csv", STAFF_ROSTER);
    let r = roster_cohort(&dir, "csv", &[]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    for row in csv_rows(&r.stdout) {
        let want = if row["arm"] == "control" { 0.0 } else { 22.15 };
        close(&row["id"], cell_f64(&row, "session_hours"), want, 1e-9);
    }
}

#[test]
fn staff_hours_with_all_arms_count_the_allocated_runs_for_the_trial() {
    // --all-arms with an allocated roster: each arm counts every participant run in
    // it (5 in the dosed arm: 5 x 3 x 363 / 60 = 90.75 h), but the trial as allocated
    // counts only the allocated runs (54.45 h, as above).
    let j = staff_run(STAFF_STUDY, STAFF_ROSTER, &["--all-arms"]);
    let dosed = json_arm(&j, "150 min/week");
    assert_eq!(dosed["participants"], 5);
    let (p, w, t, _) = hours(&dosed["staff_hours"]);
    close("arm peak", p, 12.5, 1e-9); // 15 sessions x 50 min
    assert_eq!(w, 3);
    close("arm total", t, 90.75, 1e-9);
    let (p, _, t, _) = hours(&j["staff_hours"]);
    close("trial peak", p, 7.5, 1e-9);
    close("trial total", t, 54.45, 1e-9);
    // With no allocation at all, every run counts: 90.75 h for the trial too.
    let no_arm: String = STAFF_ROSTER
        .lines()
        .map(|l| format!("{}\n", &l[..l.rfind(',').unwrap()]))
        .collect();
    let j = staff_run(STAFF_STUDY, &no_arm, &["--all-arms"]);
    assert_eq!(
        j["allocation"],
        "no allocation (every participant in every arm)"
    );
    close(
        "unallocated trial total",
        num(&j["staff_hours"], "total"),
        90.75,
        1e-9,
    );
}

// ---------------------------------------------------------------------------
// Synthetic participants
// ---------------------------------------------------------------------------

#[test]
fn synthetic_draws_are_reproducible_change_with_the_seed_and_keep_each_participant() {
    let study = pilot_study();
    let a = synthetic::draw(&study, 40, 7).unwrap();
    assert_eq!(
        a,
        synthetic::draw(&study, 40, 7).unwrap(),
        "same seed, same people"
    );
    // Another seed gives other people: every continuous draw differs.
    let b = synthetic::draw(&study, 40, 8).unwrap();
    for (x, y) in a.iter().zip(&b) {
        assert_eq!(x.id, y.id);
        assert_ne!(x.subject.age_years, y.subject.age_years, "{}", x.id);
        assert_ne!(x.subject.mass_kg, y.subject.mass_kg, "{}", x.id);
    }
    // One stream per participant: drawing more people leaves the first ones as they
    // were, and drawing fewer keeps a prefix.
    let more = synthetic::draw(&study, 100, 7).unwrap();
    assert_eq!(more[..40], a[..]);
    assert_eq!(synthetic::draw(&study, 1, 7).unwrap()[..], a[..1]);
    assert_eq!(a[0].id, "SYN-0001");
    assert_eq!(more[99].id, "SYN-0100");
}

#[test]
fn synthetic_draws_follow_the_population() {
    // plans/study-pilot.toml: female_fraction 0.5, truncated normals with bounds, a
    // uniform PAL on 1.4..1.7, mass = BMI x (height/100)^2, body fat not drawn.
    let study = pilot_study();
    let n = 4000;
    let ps = synthetic::draw(&study, n, 99).unwrap();
    let women = ps.iter().filter(|p| p.subject.sex == Sex::Female).count() as f64;
    // Binomial: SD of the share sqrt(0.25 / 4000) = 0.0079; allow 4 SD.
    close("female share", women / n as f64, 0.5, 4.0 * 0.0079);
    let mut pal_sum = 0.0;
    for p in &ps {
        let s = &p.subject;
        assert!(
            (30.0..=65.0).contains(&s.age_years),
            "{} age {}",
            p.id,
            s.age_years
        );
        let (lo, hi) = match s.sex {
            Sex::Female => (148.0, 182.0),
            Sex::Male => (160.0, 198.0),
        };
        assert!(
            (lo..=hi).contains(&s.height_cm),
            "{} height {}",
            p.id,
            s.height_cm
        );
        let bmi = s.mass_kg / (s.height_cm / 100.0).powi(2);
        assert!(
            (25.0 - 1e-9..=38.0 + 1e-9).contains(&bmi),
            "{} BMI {bmi}",
            p.id
        );
        assert_eq!(s.body_fat_percent, None);
        let pal = s.pal.expect("the population draws a PAL");
        assert!((1.4..=1.7).contains(&pal));
        pal_sum += pal;
        assert!(
            p.screening.is_none(),
            "synthetic people have no screening answers"
        );
    }
    // Uniform on 1.4..1.7: mean 1.55, SD 0.3/sqrt(12) = 0.0866, SE over 4000 = 0.00137.
    close("PAL mean", pal_sum / n as f64, 1.55, 4.0 * 0.00137);
}

#[test]
fn synthetic_participants_and_their_arms_do_not_change_when_more_are_drawn() {
    // On the command line: the first 12 rows of --synthetic 24 are --synthetic 12, arm
    // included (permuted blocks fill in roster order, one stream per stratum).
    let args = |n: &'static str| [PILOT, "--synthetic", n, "--seed", "3", "--format", "csv"];
    let small = csv_rows(&cohort_ok(&args("12")));
    let large = csv_rows(&cohort_ok(&args("24")));
    assert_eq!(small.len(), 12 * 2, "12 participants x 2 scenarios");
    assert_eq!(large[..small.len()], small[..]);
    let other = csv_rows(&cohort_ok(&[
        PILOT,
        "--synthetic",
        "12",
        "--seed",
        "4",
        "--format",
        "csv",
    ]));
    assert_ne!(other, small, "another seed, other participants");
}

// ---------------------------------------------------------------------------
// --all-arms against the allocated run, and the JSON contract
// ---------------------------------------------------------------------------

/// Every key docs/file-formats.md section 4.5 ("Cohort JSON") names, with the right type.
fn assert_cohort_json_contract(j: &Value) {
    for k in ["seed", "draws", "participants"] {
        assert!(j[k].is_u64(), "{k}: {}", j[k]);
    }
    assert!(j["staff_hours"]["peak_per_week"].is_number());
    assert!(j["staff_hours"]["total"].is_number());
    assert!(j["comparisons"].is_array());
    for c in array(j, "comparisons") {
        for k in [
            "arms",
            "scenario",
            "mean_difference_kg",
            "sd_kg",
            "n_per_arm_power80",
            "n_per_arm_power90",
        ] {
            assert!(c.get(k).is_some(), "comparisons: {k}");
        }
        // At least two completers per arm, more with drop-out (src/stats.rs).
        for k in ["n_per_arm_power80", "n_per_arm_power90"] {
            assert!(
                c[k].is_null() || c[k].as_f64().is_some_and(|n| n >= 2.0),
                "{k}: {}",
                c[k]
            );
        }
    }
    for a in array(j, "arms") {
        text(a, "name");
        assert!(a["participants"].is_u64());
        num(a, "completing");
        for s in array(a, "scenarios") {
            text(s, "name");
            for k in ["mean", "sd", "median", "p5", "p95"] {
                num(&s["mass_change_kg"], k);
            }
            for m in ["minutes_week1", "minutes_last_week"] {
                for k in ["median", "p95", "max"] {
                    num(&s[m], k);
                }
            }
            num(s, "over_max_share");
            assert!(
                s["dose_share_mean"].is_number() || s["dose_share_mean"].is_null(),
                "dose_share_mean"
            );
        }
    }
}

#[test]
fn all_arms_against_the_allocated_run() {
    let roster = csv_rows(&repo_file(PILOT_ALLOCATED));
    let allocated = cohort_json(&[PILOT, "--roster", PILOT_ALLOCATED]);
    let every = cohort_json(&[PILOT, "--roster", PILOT_ALLOCATED, "--all-arms"]);
    for j in [&allocated, &every] {
        assert_cohort_json_contract(j);
        assert_eq!(j["participants"], 12);
        assert_eq!(
            j["seed"], 20_270_101,
            "the default seed (src/cli.rs DEFAULT_SEED)"
        );
        assert_eq!(j["draws"], 1);
        // One comparison per pair of arms and scenario: 3 arms give 3 pairs.
        let arms = array(j, "arms").len();
        let scenarios = array(&array(j, "arms")[0], "scenarios").len();
        assert_eq!(
            array(j, "comparisons").len(),
            arms * (arms - 1) / 2 * scenarios,
            "every pair of arms in every scenario"
        );
    }
    assert_eq!(allocated["all_arms"], false);
    assert_eq!(every["all_arms"], true);
    for name in ["control", "8 kcal/kg/week", "12 kcal/kg/week"] {
        let in_roster = roster.iter().filter(|r| r["arm"] == name).count();
        assert_eq!(
            json_arm(&allocated, name)["participants"],
            in_roster,
            "{name}"
        );
        assert_eq!(json_arm(&every, name)["participants"], 12, "{name}");
        assert_eq!(num(json_arm(&every, name), "completing"), 12.0);
    }
    for j in [&allocated, &every] {
        let c = json_arm(j, "control");
        assert_eq!(c["control"], true);
        for s in array(c, "scenarios") {
            for m in ["minutes_week1", "minutes_last_week"] {
                for k in ["median", "p95", "max"] {
                    assert_eq!(num(&s[m], k), 0.0, "control {m} {k}");
                }
            }
            assert!(
                s["dose_share_mean"].is_null(),
                "a control has no dose share"
            );
            assert_eq!(num(s, "over_max_share"), 0.0);
            assert_eq!(num(s, "prescribed_net_kcal_mean"), 0.0);
        }
        assert_eq!(num(&c["staff_hours"], "total"), 0.0);
        for name in ["8 kcal/kg/week", "12 kcal/kg/week"] {
            for s in array(json_arm(j, name), "scenarios") {
                let share = num(s, "dose_share_mean");
                assert!(share > 0.3 && share < 1.0, "{name}: dose share {share}");
            }
        }
    }
    // The trial as allocated is the same in both views; only the arms' own hours grow.
    close(
        "trial hours",
        num(&every["staff_hours"], "total"),
        num(&allocated["staff_hours"], "total"),
        0.0,
    );
    // In the all-arms CSV each participant is allocated in exactly one arm per scenario.
    let rows = csv_rows(&cohort_ok(&[
        PILOT,
        "--roster",
        PILOT_ALLOCATED,
        "--all-arms",
        "--format",
        "csv",
    ]));
    assert_eq!(rows.len(), 12 * 3 * 2);
    for r in &roster {
        for sc in ["as prescribed", "eats back 30%"] {
            let mine: Vec<_> = rows
                .iter()
                .filter(|x| x["id"] == r["id"] && x["scenario"] == sc)
                .collect();
            assert_eq!(mine.len(), 3);
            let alloc: Vec<_> = mine.iter().filter(|x| x["allocated"] == "true").collect();
            assert_eq!(alloc.len(), 1);
            assert_eq!(alloc[0]["arm"], r["arm"]);
        }
    }
}

/// Hyndman and Fan (1996) definition 7, written here from the definition:
/// `h = (n - 1) p + 1` (1-based), `Q = x[floor h] + (h - floor h)(x[floor h + 1] - x[floor h])`.
fn hf7(sorted: &[f64], p: f64) -> f64 {
    let h = (sorted.len() - 1) as f64 * p + 1.0;
    let j = h.floor() as usize; // 1-based
    let g = h - h.floor();
    let lo = sorted[j - 1];
    let hi = if j < sorted.len() { sorted[j] } else { lo };
    lo + g * (hi - lo)
}

#[test]
fn the_summaries_are_the_statistics_of_the_per_participant_rows() {
    // Every arm and scenario's mass-change spread, recomputed here from the CSV's
    // full-precision rows (mean, SD with n - 1, and definition-7 percentiles), against
    // the JSON rounded to 4 decimals.
    for extra in [&[][..], &["--all-arms"][..]] {
        let mut args = vec![PILOT, "--roster", PILOT_ALLOCATED];
        args.extend(extra);
        let j = cohort_json(&args);
        args.extend(["--format", "csv"]);
        let rows = csv_rows(&cohort_ok(&args));
        for a in array(&j, "arms") {
            for s in array(a, "scenarios") {
                let mut v: Vec<f64> = rows
                    .iter()
                    .filter(|r| r["arm"] == text(a, "name") && r["scenario"] == text(s, "name"))
                    .map(|r| cell_f64(r, "mass_change_kg"))
                    .collect();
                assert_eq!(v.len() as u64, a["participants"].as_u64().unwrap());
                let n = v.len() as f64;
                let mean = v.iter().sum::<f64>() / n;
                let sd = (v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
                v.sort_by(f64::total_cmp);
                let m = &s["mass_change_kg"];
                let what = |k: &str| format!("{} / {}: {k}", a["name"], s["name"]);
                // JSON and the CSV rows are both rounded to 4 decimals: each value is
                // off by up to 5e-5, and the SD of 4 values by up to about 1e-4 more.
                let tol = 2e-4;
                close(&what("mean"), num(m, "mean"), mean, tol);
                close(&what("sd"), num(m, "sd"), sd, tol);
                close(&what("median"), num(m, "median"), hf7(&v, 0.5), tol);
                close(&what("p5"), num(m, "p5"), hf7(&v, 0.05), tol);
                close(&what("p95"), num(m, "p95"), hf7(&v, 0.95), tol);
            }
        }
    }
}

#[test]
fn minutes_of_a_baseline_per_kg_dose_are_worked_by_hand() {
    // plans/study-pilot.toml: kcal/kg/week of baseline mass, gross, over 3 sessions;
    // brisk treadmill walking, Compendium 17200 at 4.3 MET; warm-up 5 min at 2.5 MET
    // and cool-down 5 min at 2.0 MET, both counted in the session's energy. The ACSM
    // gross cost is MET x 3.5 x M / 200 kcal/min, so per kg of body mass:
    //   walk 4.3 x 0.0175 = 0.07525 kcal/kg/min; warm-up and cool-down
    //   (5 x 2.5 + 5 x 2.0) x 0.0175 = 0.39375 kcal/kg.
    // Week 1 (ramp 0.5, reference mass = baseline mass, so M cancels):
    //   8 kcal/kg/week: (8/3 x 0.5 - 0.39375) / 0.07525 = 12.49 -> 13 min;
    //   12 kcal/kg/week: (12/3 x 0.5 - 0.39375) / 0.07525 = 21.35 -> 22 min;
    // for every participant, whatever the mass.
    let j = cohort_json(&[PILOT, "--roster", PILOT_ROSTER, "--all-arms"]);
    for (arm, minutes) in [("8 kcal/kg/week", 13.0), ("12 kcal/kg/week", 22.0)] {
        for s in array(json_arm(&j, arm), "scenarios") {
            for k in ["median", "p95", "max"] {
                assert_eq!(num(&s["minutes_week1"], k), minutes, "{arm} {k}");
            }
            // At the full dose the same arithmetic at baseline mass gives 30.2 -> 31
            // and 47.9 -> 48; the mass falls, a baseline-mass dose stays, so later
            // weeks need at least as many minutes.
            let last = num(&s["minutes_last_week"], "median");
            let full = if minutes == 13.0 { 31.0 } else { 48.0 };
            assert!(last >= full && last <= full + 3.0, "{arm}: {last}");
        }
    }
}

// ---------------------------------------------------------------------------
// Threads
// ---------------------------------------------------------------------------

#[test]
fn one_thread_and_two_give_the_same_bytes() {
    // src/simulate/cohort.rs: runs are collected in participant order and summarised
    // sequentially, so the output does not depend on the number of threads.
    for who in [
        &["--synthetic", "45", "--seed", "5"][..],
        &["--roster", PILOT_ROSTER, "--all-arms"][..],
    ] {
        for format in ["json", "csv", "table"] {
            let out = |threads: &str| {
                let mut a = vec![PILOT];
                a.extend(who);
                a.extend(["--threads", threads, "--format", format]);
                cohort_ok(&a)
            };
            let one = out("1");
            assert!(!one.is_empty());
            assert_eq!(one, out("2"), "{who:?} --format {format}");
        }
    }
}

#[test]
fn the_library_runner_does_not_depend_on_the_thread_count() {
    let study = pilot_study();
    let members: Vec<Member> = synthetic::draw(&study, 30, 1)
        .unwrap()
        .into_iter()
        .map(|participant| Member {
            participant,
            arm: None,
        })
        .collect();
    let req = CohortRequest {
        all_arms: true,
        integrator: Integrator::Rk4,
        checkpoints: vec![24, 36],
        draws: 1,
        seed: 1,
    };
    let with = |threads| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        let runs = pool
            .install(|| run_cohort(&study, &members, &req, &|| {}))
            .unwrap();
        (pool.install(|| summarise(&study, &runs, &req)), runs)
    };
    assert_eq!(with(1), with(2));
}

// ---------------------------------------------------------------------------
// Bad rosters, study files and requests: exit code 2, the exact message
// ---------------------------------------------------------------------------

const H: &str = "id,sex,age_years,height_cm,mass_kg";

/// One bad run: the study (None: the pilot study), the roster text, the arguments
/// after `cohort study.toml`, and the full standard error.
struct Bad {
    name: &'static str,
    study: Option<String>,
    roster: String,
    args: &'static [&'static str],
    expected: String,
}

fn bad_roster(
    name: &'static str,
    roster: &str,
    args: &'static [&'static str],
    expected: &str,
) -> Bad {
    Bad {
        name,
        study: None,
        roster: roster.to_string(),
        args,
        expected: format!("error: {expected}\n"),
    }
}

/// The pilot study with each `(old, new)` replaced (each `old` exactly once).
fn pilot_with(edits: &[(&str, &str)]) -> String {
    edit(&repo_file(PILOT), edits)
}

fn bad_study(
    name: &'static str,
    study: String,
    args: &'static [&'static str],
    expected: &str,
) -> Bad {
    Bad {
        name,
        study: Some(study),
        roster: format!("{H}\nBS-01,female,40,165,80\n"),
        args,
        expected: format!("error: {expected}\n"),
    }
}

const RANDOMISE: &[&str] = &["--randomise"];
const ARMS_ALL: &str = "\"control\", \"8 kcal/kg/week\", \"12 kcal/kg/week\"";

fn bad_runs() -> Vec<Bad> {
    let pilot = repo_file(PILOT);
    let synthetic_at = pilot
        .find("\n# The population to draw")
        .expect("the [synthetic] comment");
    // The tables themselves (the file's opening comment names them too).
    let arms_at = pilot.find("\n[[arm]]\n").unwrap() + 1;
    let arms_end = pilot.find("\n[[scenario]]\n").unwrap() + 1;
    let no_arms = format!("{}{}", &pilot[..arms_at], &pilot[arms_end..]);
    let dose_8 =
        "dose = { kcal_per_kg_week = 8.0, basis = \"gross\", mass_basis = \"baseline\" }\n";
    let dose_12 =
        "dose = { kcal_per_kg_week = 12.0, basis = \"gross\", mass_basis = \"baseline\" }\n";
    let ramp = "[protocol.ramp]\nweeks = 4                      # full dose from week 5\nstart_fraction = 0.5\n";
    let line_of =
        |text: &str, needle: &str| text[..text.find(needle).unwrap()].matches('\n').count() + 1;
    let pal_line = line_of(&pilot, "pal = { dist");
    let bmi_line = line_of(&pilot, "bmi = { dist");
    vec![
        // Rosters. Line numbers are file lines (the header is line 1).
        bad_roster(
            "missing_column",
            "id,sex,age_years,height_cm\nR-1,female,40,165\n",
            RANDOMISE,
            "roster.csv:1: mass_kg: missing required column; the header needs id,sex,age_years,height_cm,mass_kg",
        ),
        bad_roster(
            "height_in_metres",
            &format!("{H}\nR-1,female,40,165,80\nR-2,male,50,1.78,90\n"),
            RANDOMISE,
            "roster.csv:3: height_cm: value 1.78 looks like metres; give the height in centimetres (e.g. 178); allowed 120 to 230 cm",
        ),
        bad_roster(
            "duplicate_code",
            &format!("{H}\nR-1,female,40,165,80\nR-2,male,50,175,90\nR-1,male,45,170,85\n"),
            RANDOMISE,
            "roster.csv:4: id: \"R-1\" is already used on line 2; codes must be unique",
        ),
        bad_roster(
            "unknown_arm",
            &format!("{H},arm\nR-1,female,40,165,80,control\nR-2,male,50,175,90,high dose\n"),
            &[],
            &format!(
                "roster.csv:3: arm: unknown arm \"high dose\"; the study's arms are {ARMS_ALL}"
            ),
        ),
        bad_roster(
            "arm_name_in_other_case",
            &format!("{H},arm\nR-1,female,40,165,80,Control\n"),
            &[],
            &format!("roster.csv:2: arm: unknown arm \"Control\"; the study's arms are {ARMS_ALL}"),
        ),
        bad_roster(
            "empty_file",
            "",
            RANDOMISE,
            "roster.csv: empty roster; the first line is the header, e.g. id,sex,age_years,height_cm,mass_kg",
        ),
        bad_roster(
            "only_blank_lines_and_comments",
            "\n# invented\n\n",
            RANDOMISE,
            "roster.csv: empty roster; the first line is the header, e.g. id,sex,age_years,height_cm,mass_kg",
        ),
        bad_roster(
            "header_only",
            &format!("{H}\n"),
            RANDOMISE,
            "roster.csv: the roster has a header but no participants; add one row per participant",
        ),
        bad_roster(
            "too_few_cells",
            &format!("{H}\nR-1,female,40,165,80\nR-2,male,50,175\n"),
            RANDOMISE,
            "roster.csv:3: 4 cells for 5 columns; every row needs one cell per header column (put a value that holds a comma in double quotes)",
        ),
        bad_roster(
            "too_many_cells",
            &format!("{H}\nR-1,female,40,165,80,1.5\n"),
            RANDOMISE,
            "roster.csv:2: 6 cells for 5 columns; every row needs one cell per header column (put a value that holds a comma in double quotes)",
        ),
        bad_roster(
            "mixed_arm_column",
            &format!(
                "{H},arm\nR-1,female,40,165,80,control\nR-2,male,50,175,90,\nR-3,male,52,172,88,control\n"
            ),
            &[],
            "roster.csv:3: arm: empty while other rows give an arm; give every participant an arm, or leave the column empty everywhere and have the arms randomised",
        ),
        bad_roster(
            "not_a_number",
            &format!("{H}\nR-1,female,forty,165,80\n"),
            RANDOMISE,
            "roster.csv:2: age_years: value \"forty\" is not a number; allowed 18 to 100 years",
        ),
        bad_roster(
            "comment_and_blank_lines_keep_file_line_numbers",
            &format!("# invented roster\n{H}\n\nR-1,female,40,165,80\nR-2,male,50,175,ninety\n"),
            RANDOMISE,
            "roster.csv:5: mass_kg: value \"ninety\" is not a number; allowed 30 to 350 kg",
        ),
        bad_roster(
            "windows_line_endings",
            &format!("{H}\r\nR-1,female,40,165,80\r\nR-2,male,50,175,x\r\n"),
            RANDOMISE,
            "roster.csv:3: mass_kg: value \"x\" is not a number; allowed 30 to 350 kg",
        ),
        bad_roster(
            "out_of_range",
            &format!("{H}\nR-1,female,17,165,80\n"),
            RANDOMISE,
            "roster.csv:2: age_years: value 17 is out of range; allowed 18 to 100 years",
        ),
        bad_roster(
            "mass_in_pounds",
            &format!("{H}\nR-1,female,40,165,300\n"),
            RANDOMISE,
            "roster.csv:2: mass_kg: value 300 with height 165 cm gives BMI 110.2, outside the allowed 13 to 80 kg/m^2; check the units (kg, cm; a mass in pounds must be converted)",
        ),
        bad_roster(
            "body_fat_as_a_fraction",
            &format!("{H},body_fat_percent\nR-1,female,40,165,80,0.38\n"),
            RANDOMISE,
            "roster.csv:2: body_fat_percent: value 0.38 looks like a fraction; give a percent (e.g. 38); allowed 3 to 70",
        ),
        bad_roster(
            "unknown_column",
            &format!("{H},weight_lb\nR-1,female,40,165,80,176\n"),
            RANDOMISE,
            "roster.csv:1: weight_lb: unknown column \"weight_lb\"; allowed columns id, sex, age_years, height_cm, mass_kg, body_fat_percent, rmr_kcal_per_day, intake_kcal_per_day, pal, exercises_regularly, known_disease, signs_or_symptoms, medical_clearance, arm",
        ),
        bad_roster(
            "column_twice",
            &format!("{H},mass_kg\nR-1,female,40,165,80,80\n"),
            RANDOMISE,
            "roster.csv:1: mass_kg: column \"mass_kg\" appears twice in the header",
        ),
        bad_roster(
            "unknown_sex",
            &format!("{H}\nR-1,F,40,165,80\n"),
            RANDOMISE,
            "roster.csv:2: sex: unknown value \"F\"; allowed female, male",
        ),
        bad_roster(
            "empty_code",
            &format!("{H}\n,female,40,165,80\n"),
            RANDOMISE,
            "roster.csv:2: id: empty; give a pseudonymous code such as \"R-104\"",
        ),
        bad_roster(
            "partial_screening",
            &format!(
                "{H},exercises_regularly,known_disease,signs_or_symptoms\nR-1,female,40,165,80,true,,false\n"
            ),
            RANDOMISE,
            "roster.csv:2: known_disease: empty while other screening answers are given; answer all three (true or false) or none",
        ),
        bad_roster(
            "pal_below_the_model",
            &format!("{H},pal\nR-1,female,40,165,80,1.1\n"),
            RANDOMISE,
            "roster.csv:2: pal: participant \"R-1\": PAL 1.10 leaves -15 kcal/day for non-exercise activity after the thermic effect of food; allowed a PAL above 1.11",
        ),
        // Allocation requests.
        bad_roster(
            "randomise_with_an_arm_column",
            &format!("{H},arm\nR-1,female,40,165,80,control\n"),
            RANDOMISE,
            "--randomise: the roster already gives every participant an arm; leave out --randomise, or empty the roster's arm column",
        ),
        bad_roster(
            "no_arms_and_no_allocation",
            &format!("{H}\nR-1,female,40,165,80\n"),
            &[],
            &format!(
                "the roster gives no arm; add an arm column (one of {ARMS_ALL}), or use --randomise or --all-arms"
            ),
        ),
        bad_roster(
            "empty_arm_column_and_no_allocation",
            &format!("{H},arm\nR-1,female,40,165,80,\n"),
            &[],
            &format!(
                "the roster gives no arm; add an arm column (one of {ARMS_ALL}), or use --randomise or --all-arms"
            ),
        ),
        // Study files. Positions are line:column of the offending value or table.
        bad_study(
            "dose_in_the_protocol",
            pilot_with(&[(
                "[protocol.ramp]",
                "[protocol.dose]\nkcal_per_week = 1000\n\n[protocol.ramp]",
            )]),
            RANDOMISE,
            &format!(
                "study.toml:{}:1: protocol.dose: a study gives the dose in each [[arm]], not in [protocol]; move it to an arm's dose = {{ ... }}",
                line_of(&pilot, "[protocol.ramp]")
            ),
        ),
        bad_study(
            "no_arm",
            no_arms,
            RANDOMISE,
            "study.toml: arm: no [[arm]]; give one [[arm]] per dose, each with a name and a dose = { kcal_per_kg_week = ... } (an arm with no dose is a control)",
        ),
        bad_study(
            "every_arm_a_control",
            pilot_with(&[(dose_8, ""), (dose_12, ""), (ramp, "")]),
            RANDOMISE,
            "study.toml: arm: every arm is a control with no exercise; give at least one arm a dose = { ... }",
        ),
        bad_study(
            "duplicate_arm_name",
            pilot_with(&[("name = \"12 kcal/kg/week\"", "name = \"8 kcal/kg/week\"")]),
            RANDOMISE,
            &format!(
                "study.toml:{}:8: arm[3].name: \"8 kcal/kg/week\" is used by an earlier arm; names must be unique",
                line_of(&pilot, "name = \"12 kcal/kg/week\"")
            ),
        ),
        bad_study(
            "block_size_not_a_multiple_of_the_arms",
            pilot_with(&[("block_size = 6 ", "block_size = 4 ")]),
            RANDOMISE,
            &format!(
                "study.toml:{}:14: study.block_size: value 4 is not a multiple of the 3 arms; allowed 3, 6, 9, ...",
                line_of(&pilot, "block_size = 6")
            ),
        ),
        bad_study(
            "unknown_distribution",
            pilot_with(&[(
                "dist = \"uniform\", min = 1.4",
                "dist = \"lognormal\", min = 1.4",
            )]),
            RANDOMISE,
            &format!(
                "study.toml:{pal_line}:7: synthetic.pal: unknown dist \"lognormal\"; allowed normal, uniform, beta"
            ),
        ),
        bad_study(
            "normal_with_sd_0",
            pilot_with(&[("mean = 30, sd = 3,", "mean = 30, sd = 0,")]),
            RANDOMISE,
            &format!(
                "study.toml:{bmi_line}:7: synthetic.bmi: mean 30 and sd 0: the mean must be finite and the sd above 0"
            ),
        ),
        bad_study(
            "bounds_keeping_under_5_percent",
            pilot_with(&[(
                "mean = 30, sd = 3, min = 25, max = 38",
                "mean = 30, sd = 3, min = 36, max = 38",
            )]),
            RANDOMISE,
            // Share kept: Phi((38-30)/3) - Phi((36-30)/3) = Phi(2.667) - Phi(2) =
            // 0.99617 - 0.97725 = 0.0189 (standard normal table; derived).
            &format!(
                "study.toml:{bmi_line}:7: synthetic.bmi: the bounds 36 to 38 keep 1.9% of a normal with mean 30 and sd 3; allowed bounds that keep at least 5% (check the mean and units)"
            ),
        ),
        bad_study(
            "heights_in_metres",
            pilot_with(&[(
                "height_cm_male = { dist = \"normal\", mean = 178, sd = 7, min = 160, max = 198 }",
                "height_cm_male = { dist = \"normal\", mean = 1.78, sd = 0.07 }",
            )]),
            RANDOMISE,
            &format!(
                "study.toml:{}:18: synthetic.height_cm_male: the bounds 120 to 230 keep 0.0% of a normal with mean 1.78 and sd 0.07; allowed bounds that keep at least 5% (check the mean and units)",
                line_of(&pilot, "height_cm_male")
            ),
        ),
        bad_study(
            "synthetic_without_a_population",
            pilot[..synthetic_at + 1].to_string(),
            &[],
            "--synthetic: study.toml has no [synthetic] table describing the population to draw from; add one, or give --roster FILE",
        ),
    ]
}

#[test]
fn bad_rosters_and_studies_name_the_place_and_exit_with_code_2() {
    let mut failures = Vec::new();
    for b in bad_runs() {
        let dir = Scratch::new("cohort-bad");
        dir.write(
            "study.toml",
            b.study.clone().unwrap_or_else(|| repo_file(PILOT)),
        );
        dir.write("roster.csv", &b.roster);
        let who: Vec<&str> = if b.name == "synthetic_without_a_population" {
            vec!["--synthetic", "5"]
        } else {
            vec!["--roster", "roster.csv"]
        };
        let r = run(dir
            .cmd()
            .args(["cohort", "study.toml"])
            .args(&who)
            .args(b.args)
            .arg("--quiet"));
        if r.code != Some(2) || !r.stdout.is_empty() || r.stderr != b.expected {
            failures.push(format!(
                "{}: exit {:?}, stdout {:?}\n  got:  {:?}\n  want: {:?}",
                b.name, r.code, r.stdout, r.stderr, b.expected
            ));
        }
        assert_eq!(
            dir.listing(),
            ["roster.csv", "study.toml"],
            "{}: nothing written",
            b.name
        );
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn bad_requests_exit_with_code_2() {
    for (args, msg) in [
        (
            &[PILOT, "--synthetic", "0"][..],
            "error: invalid value '0' for '--synthetic <N>': 0 is not in 1..=100000\n\nFor more information, try '--help'.\n",
        ),
        (
            &[PILOT, "--roster", PILOT_ALLOCATED, "--at-week", "37"][..],
            "error: --at-week 37: outside the study's weeks; allowed 1 to 36 (protocol and follow-up)\n",
        ),
        (
            &[PILOT, "--roster", PILOT_ALLOCATED, "--threads", "0"][..],
            "error: invalid value '0' for '--threads <N>': 0 is not in 1..=256\n\nFor more information, try '--help'.\n",
        ),
        (
            &[PILOT, "--roster", PILOT_ALLOCATED, "--draws", "0"][..],
            "error: invalid value '0' for '--draws <K>': 0 is not in 1..=10000\n\nFor more information, try '--help'.\n",
        ),
        (
            &[
                PILOT,
                "--roster",
                "demo-data/no-such-roster.csv",
                "--randomise",
            ][..],
            "error: demo-data/no-such-roster.csv: cannot read: no such file\n",
        ),
    ] {
        let r = cohort_in_root(args);
        assert_eq!(r.code, Some(2), "{args:?}: {}", r.stderr);
        assert_eq!(r.stdout, "");
        assert_eq!(r.stderr, msg);
    }
    // Exactly one of --roster and --synthetic (clap's own usage error, also code 2).
    for args in [
        &[PILOT][..],
        &[PILOT, "--roster", PILOT_ROSTER, "--synthetic", "4"][..],
    ] {
        let r = cohort_in_root(args);
        assert_eq!(r.code, Some(2), "{args:?}");
        assert_eq!(r.stdout, "");
        assert!(
            r.stderr.contains("--roster <FILE>|--synthetic <N>"),
            "{}",
            r.stderr
        );
    }
}

// ---------------------------------------------------------------------------
// Percentiles
// ---------------------------------------------------------------------------

#[test]
fn percentiles_follow_hyndman_and_fan_definition_7() {
    // Hyndman RJ, Fan Y 1996, Am Stat 50:361, definition 7 (as src/simulate/cohort.rs
    // cites it): h = (n - 1) p + 1, Q = x[floor h] + (h - floor h)(x[floor h + 1] -
    // x[floor h]). numpy.percentile's default method "linear" is this definition
    // (numpy.org docs, numpy.percentile: the methods listed by their H&F type, 7 =
    // "linear", the default), and so is R's quantile(type = 7), its default.
    // Worked by hand for x = 2, 3, 5, 7, 11 (n = 5):
    //   p = 0.05: h = 1.2 -> 2 + 0.2 x 1 = 2.2
    //   p = 0.25: h = 2   -> 3
    //   p = 0.50: h = 3   -> 5
    //   p = 0.90: h = 4.6 -> 7 + 0.6 x 4 = 9.4
    //   p = 0.95: h = 4.8 -> 7 + 0.8 x 4 = 10.2
    //   p = 0 and 1: the minimum 2 and the maximum 11.
    let x = [2.0, 3.0, 5.0, 7.0, 11.0];
    for (p, q) in [
        (0.0, 2.0),
        (0.05, 2.2),
        (0.25, 3.0),
        (0.5, 5.0),
        (0.9, 9.4),
        (0.95, 10.2),
        (1.0, 11.0),
    ] {
        close(&format!("p = {p}"), percentile(&x, p), q, 1e-12);
        close(&format!("hf7 p = {p}"), hf7(&x, p), q, 1e-12);
    }
    // An even count, x = 1, 2, 4, 8: median h = 2.5 -> 2 + 0.5 x 2 = 3;
    // p = 0.05: h = 1.15 -> 1 + 0.15 x 1 = 1.15; p = 0.95: h = 3.85 -> 4 + 0.85 x 4 = 7.4.
    let y = [1.0, 2.0, 4.0, 8.0];
    close("median of 4", percentile(&y, 0.5), 3.0, 1e-12);
    close("p5 of 4", percentile(&y, 0.05), 1.15, 1e-12);
    close("p95 of 4", percentile(&y, 0.95), 7.4, 1e-12);
    // One value is every percentile of itself.
    for p in [0.0, 0.05, 0.5, 0.95, 1.0] {
        assert_eq!(percentile(&[-1.25], p), -1.25);
    }
    // The spread of the same five values, in another order: mean 28/5 = 5.6; squared
    // deviations 12.96 + 6.76 + 0.36 + 1.96 + 29.16 = 51.2; SD with n - 1:
    // sqrt(51.2 / 4) = sqrt(12.8) = 3.577709.
    let s = Spread::of(&[7.0, 2.0, 11.0, 5.0, 3.0]);
    close("mean", s.mean, 5.6, 1e-12);
    close("sd", s.sd, 12.8f64.sqrt(), 1e-12);
    close("median", s.median, 5.0, 1e-12);
    close("p5", s.p5, 2.2, 1e-12);
    close("p95", s.p95, 10.2, 1e-12);
    assert_eq!(
        Spread::of(&[4.5]).sd,
        0.0,
        "one value has SD 0 (documented)"
    );
}

// ---------------------------------------------------------------------------
// Snapshot of the example study's table
// ---------------------------------------------------------------------------

#[test]
fn snapshot_pilot_allocated_table() {
    let r = run(dosewright().current_dir(manifest_dir()).args([
        "cohort",
        PILOT,
        "--roster",
        PILOT_ALLOCATED,
    ]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    insta::assert_snapshot!("pilot_allocated_table", r.stdout);
}

#[test]
fn a_quoted_roster_cell_is_read_without_its_quotes() {
    // A spreadsheet may save every text cell in double quotes (RFC 4180); the roster
    // reads them as the participant log does, without the quote marks.
    let dir = Scratch::new("cohort-quoted");
    dir.write("study.toml", repo_file(PILOT));
    dir.write(
        "roster.csv",
        format!("{H},arm\n\"PIL-001\",\"female\",40,165,\"80.0\",\"control\"\n"),
    );
    let r = roster_cohort(&dir, "csv", &[]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let rows = csv_rows(&r.stdout);
    assert_eq!(rows[0]["id"], "PIL-001");
    assert_eq!(rows[0]["baseline_mass_kg"], "80.0");
}

// ---------------------------------------------------------------------------
// Bugs found by review, each pinned by a test that was ignored until fixed
// ---------------------------------------------------------------------------

#[test]
fn an_arm_without_participants_reports_no_numbers() {
    // With nobody in the 12 kcal/kg/week arm there is nothing to summarise: the JSON
    // gives it no scenario summaries (not a 0.0 kg change and a 0% dose share that
    // no run produced), no comparison names it, the table says "no participants"
    // and the warning arm-empty says why.
    let dir = Scratch::new("cohort-empty-arm");
    dir.write("study.toml", repo_file(PILOT));
    dir.write(
        "roster.csv",
        format!("{H},arm\nEA-01,female,40,165,80,control\nEA-02,male,50,178,90,8 kcal/kg/week\n"),
    );
    let r = roster_cohort(&dir, "json", &[]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let j: Value = serde_json::from_str(&r.stdout).unwrap();
    let empty = json_arm(&j, "12 kcal/kg/week");
    assert_eq!(empty["participants"], 0);
    assert!(
        array(empty, "scenarios").is_empty(),
        "{}",
        empty["scenarios"]
    );
    // The arms with someone in them keep their summaries.
    assert!(!array(json_arm(&j, "8 kcal/kg/week"), "scenarios").is_empty());
    assert!(warning_codes(&j).iter().any(|c| c == "arm-empty"));
    for c in j["comparisons"].as_array().into_iter().flatten() {
        assert!(
            !c["arms"].to_string().contains("12 kcal"),
            "a comparison with an empty arm: {c}"
        );
    }
    let t = roster_cohort(&dir, "table", &[]);
    assert_eq!(t.code, Some(0), "{}", t.stderr);
    let row = t
        .stdout
        .lines()
        .find(|l| l.contains("12 kcal/kg/week"))
        .expect("the empty arm has a row");
    assert!(row.contains("no participants"), "{row}");
    assert!(!row.contains("+0.0") && !row.contains("0%"), "{row}");
}

#[test]
fn a_synthetic_value_of_the_wrong_shape_says_what_is_allowed() {
    for (old, new) in [
        (
            "pal = { dist = \"uniform\", min = 1.4, max = 1.7 }",
            "pal = \"high\"",
        ),
        (
            "pal = { dist = \"uniform\", min = 1.4, max = 1.7 }",
            "pal = { dist = \"uniform\", min = 1.4, max = 1.7, mode = 1.5 }",
        ),
    ] {
        let dir = Scratch::new("cohort-shape");
        dir.write("study.toml", pilot_with(&[(old, new)]));
        let r = run(dir
            .cmd()
            .args(["cohort", "study.toml", "--synthetic", "3", "--quiet"]));
        assert_eq!(r.code, Some(2));
        assert!(!r.stderr.contains("untagged enum"), "{}", r.stderr);
        assert!(
            r.stderr.contains("synthetic.pal") && r.stderr.contains("dist"),
            "names the key and the allowed forms: {}",
            r.stderr
        );
    }
}

#[test]
fn a_participant_out_of_balance_before_exercise_earns_the_drift_warning() {
    // docs/warnings.md: every output carries the warnings the plan earns. DR-01's intake (2400
    // kcal/day) is below the 2535 kcal/day her PAL implies (Mifflin-St Jeor RMR
    // 10 x 93.6 + 6.25 x 170.5 - 5 x 41 - 161 = 1635.6 kcal/day, x 1.55; derived), so
    // `schedule` warns intake-pal-drift, and so must the cohort, where she loses
    // about 2.5 kg in 24 weeks in the control arm.
    let dir = Scratch::new("cohort-drift");
    dir.write("study.toml", repo_file(PILOT));
    dir.write(
        "roster.csv",
        "id,sex,age_years,height_cm,mass_kg,intake_kcal_per_day,pal,arm\nDR-01,female,41,170.5,93.6,2400,1.55,control\n",
    );
    let r = roster_cohort(&dir, "json", &[]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let j: Value = serde_json::from_str(&r.stdout).unwrap();
    let control = &array(json_arm(&j, "control"), "scenarios")[0];
    assert!(
        num(&control["mass_change_kg"], "mean") < -2.0,
        "the drift is there"
    );
    assert!(
        warning_codes(&j).iter().any(|c| c == "intake-pal-drift"),
        "warnings: {:?}",
        warning_codes(&j)
    );
}

/// The cohort counts each run's weekly minutes as it finishes and then drops them
/// (docs/speed.md, "What each cohort optimisation bought": weekly minutes counted as each participant finishes). The streamed summaries must equal
/// those computed from every run kept whole: percentiles of the sorted minutes
/// (Hyndman and Fan 1996, definition 7, as `percentile`), the maximum, and staff
/// hours as the sum of whole-session minutes times the attendance over 60 and the draws. Checked with
/// draws, attendance and drop-out (the benchmark study), every member in every
/// arm, once unallocated and once allocated (where the trial's hours count the
/// allocated runs only).
#[test]
fn streamed_minute_summaries_equal_the_summaries_of_every_run_kept() {
    let text = repo_file("plans/benchmark-study.toml").replace("weeks = 52", "weeks = 20");
    let study = parse_study("benchmark-study.toml", &text).unwrap();
    let draws = 4;
    // Staff hours count the expected attended sessions: planned minutes x attendance.
    let attended = study.uncertainty.unwrap().attendance;
    assert!(attended < 1.0);
    let req = CohortRequest {
        all_arms: true,
        integrator: Integrator::Rk4,
        checkpoints: vec![10, 20],
        draws,
        seed: 5,
    };
    for allocated in [false, true] {
        let members: Vec<Member> = synthetic::draw(&study, 14, 3)
            .unwrap()
            .into_iter()
            .enumerate()
            .map(|(i, participant)| Member {
                participant,
                arm: allocated.then_some(i % 3),
            })
            .collect();
        let runs = run_cohort(&study, &members, &req, &|| {}).unwrap();
        assert!(
            runs.members(&req)
                .iter()
                .flat_map(|m| &m.runs)
                .all(|r| r.minutes_by_week.is_empty() && r.session_minutes_by_week.is_empty()),
            "the cohort keeps no run's weeks"
        );
        let summary = summarise(&study, &runs, &req);
        let whole: Vec<_> = members
            .iter()
            .enumerate()
            .map(|(i, m)| simulate_member(&study, m, i, &req).unwrap())
            .collect();
        let mut staff_trial = [0u64; 20];
        for (ai, arm) in summary.arms.iter().enumerate() {
            let kept: Vec<(usize, &_)> = whole
                .iter()
                .enumerate()
                .flat_map(|(mi, w)| w.runs.iter().map(move |r| (mi, r)))
                .filter(|(_, r)| r.arm == ai && r.scenario == 0)
                .collect();
            assert_eq!(kept.len(), members.len() * draws as usize);
            let s = &arm.scenarios[0];
            for week in 0..20 {
                let mut v: Vec<f64> = kept
                    .iter()
                    .map(|(_, r)| f64::from(r.minutes_by_week[week]))
                    .collect();
                v.sort_by(f64::total_cmp);
                let got = &s.minutes_by_week[week];
                assert_eq!(got.week, week as u32 + 1);
                assert_eq!(got.median, percentile(&v, 0.5), "arm {ai} week {week}");
                assert_eq!(got.p5, percentile(&v, 0.05), "arm {ai} week {week}");
                assert_eq!(got.p95, percentile(&v, 0.95), "arm {ai} week {week}");
                if week == 0 {
                    assert_eq!(s.minutes_week1.median, percentile(&v, 0.5));
                    assert_eq!(s.minutes_week1.p95, percentile(&v, 0.95));
                    assert_eq!(s.minutes_week1.max as f64, *v.last().unwrap());
                }
                if week == 19 {
                    assert_eq!(s.minutes_last_week.p95, percentile(&v, 0.95));
                    assert_eq!(s.minutes_last_week.max as f64, *v.last().unwrap());
                }
            }
            let mut by_week = [0u64; 20];
            for (mi, r) in &kept {
                assert_eq!(
                    r.session_minutes_total,
                    r.session_minutes_by_week.iter().sum::<u32>()
                );
                for (w, m) in r.session_minutes_by_week.iter().enumerate() {
                    by_week[w] += u64::from(*m);
                    if !allocated || members[*mi].arm == Some(ai) {
                        staff_trial[w] += u64::from(*m);
                    }
                }
            }
            let hours: Vec<f64> = by_week
                .iter()
                .map(|m| *m as f64 / 60.0 / (f64::from(draws) / attended))
                .collect();
            assert_eq!(arm.staff_hours.by_week, hours, "arm {ai}");
        }
        let hours: Vec<f64> = staff_trial
            .iter()
            .map(|m| *m as f64 / 60.0 / (f64::from(draws) / attended))
            .collect();
        assert_eq!(summary.staff_hours.by_week, hours, "allocated {allocated}");
        // The dosed arms do have sessions, so the comparison is not of zeros.
        assert!(summary.arms[2].staff_hours.total > 0.0);
        assert!(summary.arms[2].scenarios[0].minutes_week1.max > 0);
    }
}

/// The risky-plan warnings of `schedule` (docs/warnings.md) are counted by the
/// cohort too. For one participant in one arm the cohort must name exactly the codes
/// that `schedule` names for the same plan, with both integrators (RK4 takes the
/// fast loop, Dopri5 the general driver), and say that 100% of participants have
/// them. The pilot study is made risky here: a dose of 36 kcal/kg/week and a
/// scenario with a diet change of -1100 kcal/day (invented for the check).
#[test]
fn the_cohort_names_the_risky_plan_warnings_schedule_names() {
    const RISKS: [&str; 5] = [
        "loss-rate-over-1-percent",
        "weekly-minutes-over-300",
        "intake-below-rmr",
        "intake-below-floor",
        "bmi-below-18.5",
    ];
    let study_text = repo_file(PILOT)
        .replace(
            "kcal_per_kg_week = 12.0, basis",
            "kcal_per_kg_week = 36.0, basis",
        )
        .replace(
            "name = \"eats back 30%\"\nintake_fraction = 0.3",
            "name = \"eats back 30%\"\ndiet_change_kcal_per_day = -1100\nintake_fraction = 0.3",
        );
    assert!(study_text.contains("-1100") && study_text.contains("36.0"));
    let (dir, s) = one_participant_and_schedule("cohort-risks", &study_text);
    let mut want: Vec<String> = warning_codes(&s)
        .into_iter()
        .filter(|c| RISKS.contains(&c.as_str()))
        .collect();
    want.sort();
    want.dedup();
    assert!(
        want.len() >= 3,
        "the plan is risky enough to test: {want:?}"
    );
    for integrator in ["rk4", "dopri5"] {
        let c = run(dir.cmd().args([
            "cohort",
            "study.toml",
            "--roster",
            "one.csv",
            "--integrator",
            integrator,
            "--quiet",
            "--format",
            "json",
        ]));
        assert_eq!(c.code, Some(0), "{}", c.stderr);
        let j: Value = serde_json::from_str(&c.stdout).unwrap();
        let mut got: Vec<String> = warning_codes(&j)
            .into_iter()
            .filter(|c| RISKS.contains(&c.as_str()))
            .collect();
        got.sort();
        got.dedup();
        assert_eq!(got, want, "{integrator}");
        for w in array(&j, "warnings") {
            if RISKS.contains(&w["code"].as_str().unwrap()) {
                let m = w["message"].as_str().unwrap();
                assert!(m.contains("100% of participants"), "{m}");
            }
        }
    }
    // The study's own plan, without the changes, earns none of them.
    let plain = cohort_json(&[PILOT, "--roster", PILOT_ALLOCATED]);
    assert!(
        warning_codes(&plain)
            .iter()
            .all(|c| !RISKS.contains(&c.as_str())),
        "{:?}",
        warning_codes(&plain)
    );
}
