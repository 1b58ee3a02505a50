//! Sample sizes of `cohort --draws` on both bases and with a multiplicity adjustment
//! (docs/commands.md, cohort; src/stats.rs).
//!
//! Independent computation: the two-sample normal formula
//! `n = 2 (z_{1-alpha/2} + z_{power})^2 SD^2 / difference^2` (Altman DG 1991, Practical
//! Statistics for Medical Research, section 15.3) with z values from the standard
//! normal table (z_0.975 = 1.959964, z_0.8 = 0.841621, z_0.9 = 1.281552,
//! z_{1-0.05/6} = 2.393980), written out here; intention to treat is not divided by
//! the completion rate, completers are. Holm S 1979, Scand J Statist 6:65.

mod common;

use common::{array, dosewright, manifest_dir, num, run};
use serde_json::Value;

const Z975: f64 = 1.959964;
const Z80: f64 = 0.841621;
const Z90: f64 = 1.281552;

fn n_hand(delta: f64, sd: f64, z_alpha: f64, z_power: f64) -> f64 {
    2.0 * (z_alpha + z_power).powi(2) * sd * sd / (delta * delta)
}

fn recruit(n: f64, rate: f64) -> f64 {
    (n.max(2.0) / rate - 1e-9).ceil()
}

#[test]
fn a_textbook_example_half_an_sd_needs_63_per_arm_and_84_at_bonferroni_over_three() {
    // Difference 0.5 SD, power 0.8, two-sided 0.05: 2 (1.96 + 0.8416)^2 / 0.25 = 62.8,
    // so 63 per arm by the normal approximation (Altman 1991, section 15.3; Cohen J
    // 1988, Statistical Power Analysis, table 2.4.1 gives 64 with the t correction,
    // from memory). At alpha 0.05/3: 2 (2.3940 + 0.8416)^2 / 0.25 = 83.7.
    let n = dosewright::stats::n_per_arm_at(0.5, 1.0, 0.8, 0.05).unwrap();
    assert!((n - 62.79).abs() < 0.01, "{n}");
    let b = dosewright::stats::n_per_arm_at(0.5, 1.0, 0.8, 0.05 / 3.0).unwrap();
    assert!((b - 83.74).abs() < 0.02, "{b}");
}

fn cohort(extra: &[&str]) -> Value {
    let r = run(dosewright()
        .current_dir(manifest_dir())
        .args([
            "cohort",
            "plans/study-pilot.toml",
            "--roster",
            "demo-data/pilot-roster-allocated.csv",
            "--draws",
            "3",
            "--format",
            "json",
            "--quiet",
        ])
        .args(extra));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap()
}

fn spread<'a>(j: &'a Value, arm: &str, scenario: &str) -> (&'a Value, f64) {
    let a = array(j, "arms")
        .iter()
        .find(|a| a["name"] == arm)
        .expect("the arm");
    let rate = num(a, "completing") / a["participants"].as_f64().unwrap();
    let s = array(a, "scenarios")
        .iter()
        .find(|s| s["name"] == scenario)
        .expect("the scenario");
    (s, rate)
}

#[test]
fn both_bases_against_the_two_sample_formula() {
    let j = cohort(&[]);
    let comps = array(&j, "comparisons");
    assert!(!comps.is_empty());
    for c in comps {
        let arms = array(c, "arms");
        let sc = c["scenario"].as_str().unwrap();
        let (a, ra) = spread(&j, arms[0].as_str().unwrap(), sc);
        let (b, rb) = spread(&j, arms[1].as_str().unwrap(), sc);
        let rate = ra.min(rb);
        assert_eq!(c["basis"], "intention_to_treat");
        assert_eq!(num(c, "alpha"), 0.05);
        let pooled = |k: &str| {
            let (x, y) = (&a[k], &b[k]);
            (
                num(y, "mean") - num(x, "mean"),
                ((num(x, "sd").powi(2) + num(y, "sd").powi(2)) / 2.0).sqrt(),
            )
        };
        let (d, sd) = pooled("mass_change_kg");
        let itt = &c["intention_to_treat"];
        assert!((num(itt, "mean_difference_kg") - d).abs() < 1e-9);
        let want80 = recruit(n_hand(d, sd, Z975, Z80), 1.0);
        let want90 = recruit(n_hand(d, sd, Z975, Z90), 1.0);
        // Table z values to 6 decimals: allow a difference of one participant where
        // n sits on a whole number.
        assert!((num(itt, "n_per_arm_power80") - want80).abs() <= 1.0, "{c}");
        assert!((num(itt, "n_per_arm_power90") - want90).abs() <= 1.0, "{c}");
        assert_eq!(num(c, "n_per_arm_power80"), num(itt, "n_per_arm_power80"));
        if !a["mass_change_completers_kg"].is_null() && !b["mass_change_completers_kg"].is_null() {
            let (d, sd) = pooled("mass_change_completers_kg");
            let comp = &c["completers"];
            let want = recruit(n_hand(d, sd, Z975, Z80), rate);
            assert!((num(comp, "n_per_arm_power80") - want).abs() <= 1.0, "{c}");
        }
    }
    // The completers' basis puts the completers' numbers at the top level.
    let j = cohort(&["--basis", "completers"]);
    for c in array(&j, "comparisons") {
        if !c["completers"].is_null() {
            assert_eq!(c["basis"], "completers");
            assert_eq!(c["n_per_arm_power80"], c["completers"]["n_per_arm_power80"]);
        }
    }
}

#[test]
fn bonferroni_and_holm_levels() {
    // Bonferroni: each of k comparisons at 0.05 / k. Holm: the levels 0.05/k,
    // 0.05/(k-1), ..., 0.05 given in order of the standardised difference, largest first.
    let j = cohort(&["--multiplicity", "bonferroni"]);
    let comps = array(&j, "comparisons");
    let k = comps.len() as f64;
    for c in comps {
        // The JSON prints 4 decimals.
        assert!((num(c, "alpha") - 0.05 / k).abs() < 5e-5);
    }
    let j = cohort(&["--multiplicity", "holm"]);
    let comps = array(&j, "comparisons");
    let mut z: Vec<(f64, f64)> = comps
        .iter()
        .map(|c| {
            let itt = &c["intention_to_treat"];
            (
                num(itt, "mean_difference_kg").abs() / num(itt, "sd_kg"),
                num(c, "alpha"),
            )
        })
        .collect();
    z.sort_by(|a, b| b.0.total_cmp(&a.0));
    for (i, (_, alpha)) in z.iter().enumerate() {
        assert!((alpha - 0.05 / (k - i as f64)).abs() < 5e-5, "{z:?}");
    }
}

#[test]
fn at_week_adds_comparisons_at_that_week() {
    let j = cohort(&["--at-week", "4"]);
    let weeks: Vec<f64> = array(&j, "comparisons")
        .iter()
        .map(|c| num(c, "week"))
        .collect();
    assert!(weeks.contains(&4.0), "{weeks:?}");
    assert!(weeks.iter().any(|w| *w > 4.0), "{weeks:?}");
}
