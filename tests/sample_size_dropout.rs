//! Sample sizes of `cohort --draws` for a study with drop-out, on both bases, against
//! the two-sample formula computed here (docs/commands.md, cohort; docs/file-formats.md,
//! `[uncertainty]`).
//!
//! The formula: n per arm = 2 (z_{1-alpha/2} + z_{1-beta})^2 sigma^2 / delta^2 (Altman DG
//! 1991, Practical Statistics for Medical Research, section 15.3), with the z values
//! from the standard normal table written out below, not taken from the program.
//! Intention to treat: the drop-outs are in the difference and the SD already, so n is
//! only rounded up; completers: the completers' n divided by the completion rate, then
//! rounded up.

mod common;

use common::{Scratch, array, manifest_dir, num, run};
use serde_json::Value;

/// Standard normal quantiles (table values to 6 decimals).
const Z975: f64 = 1.959964;
const Z80: f64 = 0.841621;
const Z90: f64 = 1.281552;

fn n_formula(delta: f64, sigma: f64, z_alpha: f64, z_power: f64) -> f64 {
    2.0 * (z_alpha + z_power).powi(2) * sigma * sigma / (delta * delta)
}

#[test]
fn a_textbook_example_five_mmhg_with_sd_ten_at_power_ninety() {
    // A difference of 5 mmHg in blood pressure with an SD of 10 mmHg, two-sided 0.05,
    // power 0.9: 2 (1.96 + 1.2816)^2 x 100 / 25 = 84.06, so 85 per arm by the normal
    // approximation (Julious SA 2004, Stat Med 23:1921, "Sample sizes for clinical
    // trials with Normal data", the table for a standardised difference of 0.5:
    // 85 per arm, 86 with the t correction -- from memory, not confirmed).
    let by_hand = n_formula(5.0, 10.0, Z975, Z90);
    assert!((by_hand - 84.06).abs() < 0.01, "{by_hand}");
    let n = dosewright::stats::n_per_arm_at(5.0, 10.0, 0.9, 0.05).unwrap();
    assert!((n - by_hand).abs() < 1e-3, "{n} vs {by_hand}");
    assert_eq!(dosewright::stats::recruit(n, 1.0), 85.0);
    // With 80% completing, the completers' 84.06 are 105.07 recruits: 106.
    assert_eq!(dosewright::stats::recruit(n, 0.8), 106.0);
    assert!((by_hand / 0.8 - 105.07).abs() < 0.01);
}

/// The example pilot with drop-out and attendance added and the eating-back scenario
/// drawn per participant, drawn synthetically.
fn dropout_cohort(dir: &Scratch, extra: &[&str]) -> Value {
    let text = std::fs::read_to_string(manifest_dir().join("plans/study-pilot.toml"))
        .unwrap()
        // Compensation that varies between participants, so that the completers'
        // difference needs more than the minimum of 2 completers.
        .replacen(
            "intake_fraction = 0.3",
            "intake_fraction = { dist = \"uniform\", min = 0.0, max = 0.9 }",
            1,
        );
    assert!(text.contains("max = 0.9 }"));
    dir.write(
        "study.toml",
        format!("{text}\n[uncertainty]\nattendance = 0.9\ndropout_per_week = {H}\n"),
    );
    let r = run(dir
        .cmd()
        .args([
            "cohort",
            "study.toml",
            "--synthetic",
            "60",
            "--draws",
            "10",
            "--seed",
            "11",
            "--format",
            "json",
            "--quiet",
        ])
        .args(extra));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap()
}

/// The weekly drop-out hazard; the pilot runs 24 protocol weeks.
const H: f64 = 0.03;
const WEEKS: i32 = 24;

fn scenario<'a>(j: &'a Value, arm: &str, sc: &str) -> (&'a Value, f64, f64) {
    let a = array(j, "arms").iter().find(|a| a["name"] == arm).unwrap();
    let s = array(a, "scenarios")
        .iter()
        .find(|s| s["name"] == sc)
        .unwrap();
    (s, num(a, "completing"), num(a, "participants"))
}

fn pooled(a: &Value, b: &Value) -> (f64, f64) {
    (
        num(b, "mean") - num(a, "mean"),
        ((num(a, "sd").powi(2) + num(b, "sd").powi(2)) / 2.0).sqrt(),
    )
}

#[test]
fn with_drop_out_both_bases_follow_the_formula_and_only_completers_are_divided() {
    let dir = Scratch::new("sample-size-dropout");
    let j = dropout_cohort(&dir, &[]);
    // Every participant stays with probability (1 - h)^24 = 0.481 (the hazard is tried
    // in each protocol week); the draws' share completing is near it.
    let stay = (1.0 - H).powi(WEEKS);
    assert!((stay - 0.4814).abs() < 1e-4);
    let comps = array(&j, "comparisons");
    assert!(!comps.is_empty());
    let mut divided = 0;
    for c in comps {
        if num(c, "week") != 24.0 {
            continue;
        }
        let arms = array(c, "arms");
        let sc = c["scenario"].as_str().unwrap();
        let (a, ca, na) = scenario(&j, arms[0].as_str().unwrap(), sc);
        let (b, cb, nb) = scenario(&j, arms[1].as_str().unwrap(), sc);
        let rate = (ca / na).min(cb / nb);
        // Binomial: ~20 participants x 10 draws per arm; 4 standard errors.
        let se = (stay * (1.0 - stay) / (nb.min(na) * 10.0)).sqrt();
        assert!((rate - stay).abs() < 4.0 * se, "{rate} vs {stay}");
        assert!((num(c, "completion_rate") - rate).abs() < 1e-4);

        // Intention to treat: everyone's difference and SD, rounded up, not divided.
        let (d, sd) = pooled(&a["mass_change_kg"], &b["mass_change_kg"]);
        let itt = &c["intention_to_treat"];
        assert!((num(itt, "mean_difference_kg") - d).abs() < 2e-4);
        assert!((num(itt, "sd_kg") - sd).abs() < 2e-4);
        for (key, zp) in [("n_per_arm_power80", Z80), ("n_per_arm_power90", Z90)] {
            let n = n_formula(d, sd, Z975, zp).max(2.0);
            let got = num(itt, key);
            // Rounded up (one participant of slack for the 4-decimal JSON inputs).
            assert!(
                got >= n.ceil() - 1.0 && got <= n.ceil() + 1.0,
                "{key}: {got} vs {n}"
            );
        }

        // Completers: their own difference and SD; n over the completion rate.
        let (dc, sdc) = pooled(
            &a["mass_change_completers_kg"],
            &b["mass_change_completers_kg"],
        );
        let comp = &c["completers"];
        assert!((num(comp, "mean_difference_kg") - dc).abs() < 2e-4);
        for (key, zp) in [("n_per_arm_power80", Z80), ("n_per_arm_power90", Z90)] {
            let n = n_formula(dc, sdc, Z975, zp).max(2.0);
            let got = num(comp, key);
            let want = n / rate;
            assert!(
                got >= want.ceil() - 1.0 && got <= want.ceil() + 1.0,
                "{key}: {got} vs {want}"
            );
            // What is reported is the completers' n divided by the completion rate: at
            // half the participants completing, about twice the completers' n.
            assert!(
                got * rate >= n - 1.0 && (got - 1.0) * rate < n + 1.0,
                "{key}"
            );
            if n > 4.0 {
                divided += 1;
                assert!(got > n * 1.5, "{key}: {got} for {n} completers at {rate}");
            }
        }
        assert_eq!(c["basis"], "intention_to_treat");
        assert_eq!(c["n_per_arm_power80"], itt["n_per_arm_power80"]);
    }
    assert!(divided > 0, "some comparison needs more than a handful");
    // Chosen as the basis, the completers' numbers are the top-level ones.
    let j = dropout_cohort(&dir, &["--basis", "completers"]);
    for c in array(&j, "comparisons") {
        if num(c, "week") == 24.0 {
            assert_eq!(c["basis"], "completers");
            assert_eq!(c["n_per_arm_power90"], c["completers"]["n_per_arm_power90"]);
            assert_eq!(
                c["mean_difference_kg"],
                c["completers"]["mean_difference_kg"]
            );
        }
    }
}
