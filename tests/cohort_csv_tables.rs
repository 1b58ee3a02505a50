//! `cohort --format csv --csv-table comparisons`: the pairwise differences and sample
//! sizes of the table and JSON as a CSV table, one row per pair of arms, scenario and
//! endpoint week (docs/file-formats.md, "Cohort CSV"). Checked cell by cell against
//! the JSON of the same run, and the default CSV unchanged.

mod common;

use common::{array, dosewright, manifest_dir, run};
use serde_json::Value;

fn cohort(extra: &[&str]) -> common::Run {
    let r = run(dosewright()
        .current_dir(manifest_dir())
        .args([
            "cohort",
            "plans/study-pilot.toml",
            "--roster",
            "demo-data/pilot-roster-allocated.csv",
            "--quiet",
        ])
        .args(extra));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    r
}

fn cell(v: &Value) -> String {
    match v {
        Value::Null => String::new(),
        Value::String(s) => s.clone(),
        Value::Number(n) => {
            let x = n.as_f64().unwrap();
            // The csv crate writes whole floats with ".0".
            if x.fract() == 0.0 && !n.is_u64() {
                format!("{x:.1}")
            } else {
                n.to_string()
            }
        }
        other => other.to_string(),
    }
}

#[test]
fn the_comparisons_table_equals_the_json() {
    let opts = [
        "--draws",
        "3",
        "--at-week",
        "8",
        "--multiplicity",
        "holm",
        "--basis",
        "completers",
    ];
    let j: Value =
        serde_json::from_str(&cohort(&[&opts[..], &["--format", "json"]].concat()).stdout).unwrap();
    let c = cohort(
        &[
            &opts[..],
            &["--format", "csv", "--csv-table", "comparisons"],
        ]
        .concat(),
    );
    let mut rd = csv::Reader::from_reader(c.stdout.as_bytes());
    let head: Vec<String> = rd.headers().unwrap().iter().map(String::from).collect();
    let rows: Vec<csv::StringRecord> = rd.records().map(|x| x.unwrap()).collect();
    let comps = array(&j, "comparisons");
    assert!(comps.len() >= 6, "pairs x scenarios x weeks");
    assert_eq!(rows.len(), comps.len());
    for (row, c) in rows.iter().zip(comps) {
        let get = |name: &str| &row[head.iter().position(|h| h == name).unwrap()];
        assert_eq!(get("arm_a"), c["arms"][0].as_str().unwrap());
        assert_eq!(get("arm_b"), c["arms"][1].as_str().unwrap());
        for (col, v) in [
            ("scenario", &c["scenario"]),
            ("week", &c["week"]),
            ("basis", &c["basis"]),
            ("multiplicity", &c["multiplicity"]),
        ] {
            assert_eq!(get(col), cell(v), "{col}");
        }
        for (col, v) in [
            ("alpha", &c["alpha"]),
            ("completion_rate", &c["completion_rate"]),
            ("mean_difference_kg", &c["mean_difference_kg"]),
            ("sd_kg", &c["sd_kg"]),
            ("n_per_arm_power80", &c["n_per_arm_power80"]),
            ("n_per_arm_power90", &c["n_per_arm_power90"]),
            (
                "itt_mean_difference_kg",
                &c["intention_to_treat"]["mean_difference_kg"],
            ),
            ("itt_sd_kg", &c["intention_to_treat"]["sd_kg"]),
            (
                "itt_n_per_arm_power80",
                &c["intention_to_treat"]["n_per_arm_power80"],
            ),
            (
                "itt_n_per_arm_power90",
                &c["intention_to_treat"]["n_per_arm_power90"],
            ),
            (
                "completers_mean_difference_kg",
                &c["completers"]["mean_difference_kg"],
            ),
            ("completers_sd_kg", &c["completers"]["sd_kg"]),
            (
                "completers_n_per_arm_power80",
                &c["completers"]["n_per_arm_power80"],
            ),
            (
                "completers_n_per_arm_power90",
                &c["completers"]["n_per_arm_power90"],
            ),
        ] {
            let got = get(col);
            match v.as_f64() {
                Some(x) => assert_eq!(got.parse::<f64>().unwrap(), x, "{col}"),
                None => assert!(got.is_empty(), "{col}: {got}"),
            }
        }
    }
    // A checkpoint before the end has no completers' basis: those cells are empty.
    assert!(rows.iter().any(|r| &r[3] == "8"));
}

#[test]
fn one_row_per_comparison_without_draws_and_the_default_table_unchanged() {
    let j: Value = serde_json::from_str(&cohort(&["--format", "json"]).stdout).unwrap();
    let c = cohort(&["--format", "csv", "--csv-table", "comparisons"]);
    assert!(c.stdout.starts_with("arm_a,arm_b,scenario,week,basis,"));
    assert_eq!(c.stdout.lines().count(), 1 + array(&j, "comparisons").len());
    let plain = cohort(&["--format", "csv"]);
    let named = cohort(&["--format", "csv", "--csv-table", "participants"]);
    assert_eq!(plain.stdout, named.stdout);
    assert!(plain.stdout.starts_with("id,arm,allocated,scenario,draw,"));
}
