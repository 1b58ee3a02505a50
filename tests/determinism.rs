//! Determinism: every command, format and chart gives byte-identical output across
//! runs, locales and time zones, and a cohort's outputs do not depend on the number of
//! threads (docs/design.md section 1).
//!
//! Every case runs the real binary in a fresh scratch folder holding a copy of the
//! demo plan (`plan.toml`), the demo log (`log.csv`), a small study (`study.toml`)
//! and two rosters for it (`roster.csv` with arms, `roster-no-arms.csv` without);
//! all are invented data.
#![cfg(unix)]

mod common;

use common::hard_edges::*;
use std::collections::BTreeSet;

/// The demo plan's first and last dates (start, and the morning after follow-up).
const PLAN_FIRST: &str = "2027-01-11";
const PLAN_LAST: &str = "2027-09-20";

const ENVIRONMENTS: [&[(&str, &str)]; 5] = [
    &[("LC_ALL", "C")],
    &[("LC_ALL", "de_DE.UTF-8")],
    &[("LANG", "fr_FR.UTF-8")],
    &[("TZ", "Pacific/Kiritimati")],
    &[("TZ", "America/Anchorage")],
];

#[test]
fn every_output_is_byte_identical_across_runs_locales_and_time_zones() {
    let today = chrono::Local::now().date_naive();
    let near_today: Vec<String> = [-1i64, 0, 1]
        .iter()
        .map(|d| (today + chrono::Duration::days(*d)).to_string())
        .collect();
    let in_plan = |d: &String| d.as_str() >= PLAN_FIRST && d.as_str() <= PLAN_LAST;
    if near_today.iter().any(in_plan) {
        eprintln!("note: today falls within the demo plan's dates; the clock check is skipped");
    }
    for (name, _, args) in outputs() {
        let first = outcome(&args, &[]);
        assert_eq!(first.0, Some(0), "{name}: {}", first.2);
        let again = outcome(&args, &[]);
        assert!(first == again, "{name}: a second run differs");
        for env in ENVIRONMENTS {
            let other = outcome(&args, env);
            assert!(
                first == other,
                "{name}: the output under {env:?} differs from the plain run"
            );
        }
        let mut texts = vec![first.1.clone(), first.2.clone()];
        texts.extend(
            first
                .3
                .values()
                .map(|b| String::from_utf8_lossy(b).into_owned()),
        );
        for d in near_today.iter().filter(|d| !in_plan(d)) {
            for t in &texts {
                assert!(
                    !t.contains(d.as_str()),
                    "{name}: prints the clock's date {d}"
                );
            }
        }
    }
}

#[test]
fn the_determinism_runs_cover_every_command_format_and_chart() {
    let covered: BTreeSet<(String, String)> = outputs()
        .iter()
        .flat_map(|(_, kinds, _)| kinds.iter())
        .map(|(c, f)| (c.to_string(), f.to_string()))
        .collect();
    let missing: Vec<_> = output_kinds()
        .difference(&covered)
        .filter(|(c, f)| !CLOCKED.contains(&(c.as_str(), f.as_str())))
        .cloned()
        .collect();
    assert!(missing.is_empty(), "outputs not in outputs(): {missing:?}");
    for (name, kinds, args) in outputs() {
        for (cmd, kind) in kinds.iter() {
            if *kind == DISPLAY_UNITS {
                let lacking = display_units_missing(cmd, &args);
                assert!(lacking.is_empty(), "{name}: does not pass {lacking:?}");
            }
        }
    }
}

#[test]
fn cohort_outputs_do_not_depend_on_the_number_of_threads() {
    // Summaries are computed sequentially on the results collected in participant
    // order, so every byte (table, charts, CSV, JSON) is the same with 1, 2 or 5
    // worker threads and with the thread count from RAYON_NUM_THREADS.
    let runs: [&[&str]; 3] = [
        &["--chart", "charts"],
        &["--format", "csv"],
        &["--format", "json"],
    ];
    for extra in runs {
        let base: Vec<&str> = ["cohort", "study.toml", "--synthetic", "40", "--all-arms"]
            .into_iter()
            .chain(extra.iter().copied())
            .collect();
        let with = |threads: &str| {
            let mut a = base.clone();
            a.extend(["--threads", threads]);
            outcome(&a, &[])
        };
        let one = with("1");
        assert_eq!(one.0, Some(0), "{extra:?}: {}", one.2);
        assert!(!one.1.is_empty(), "{extra:?}: prints the output");
        for n in ["2", "5"] {
            assert!(
                one == with(n),
                "{extra:?}: --threads {n} differs from --threads 1"
            );
        }
        let from_env = outcome(&base, &[("RAYON_NUM_THREADS", "3")]);
        assert!(
            one == from_env,
            "{extra:?}: RAYON_NUM_THREADS=3 differs from --threads 1"
        );
    }
}

/// Outputs that record the clock by design, so no two runs are byte-identical: the
/// desk's commands write registers and accounts stamped with the time of the change
/// (docs/register.md, "Audit rules"), and `desk serve` runs until stopped; so do
/// the register's writing commands (their reads are in `outputs()`).
const CLOCKED: &[(&str, &str)] = &[
    ("desk serve", ""),
    ("desk demo", ""),
    ("desk account", ""),
    ("register create", ""),
    ("register enrol", ""),
    ("register correct", ""),
    ("register correct", "display units"),
    ("register void", ""),
    ("register import", ""),
];
