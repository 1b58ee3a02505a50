//! Monte Carlo draws of a cohort (`cohort --draws`; docs/file-formats.md section 2,
//! "`[[scenario]]` values and `[uncertainty]`"): with every uncertainty off each draw
//! is the deterministic run; the mean over many draws of a normal `intake_fraction`
//! converges to the same model averaged by quadrature over the truncated normal; the
//! same seed gives the same bytes on 1 and 2 threads. The participants are invented and
//! go by pseudonymous codes.

mod common;

use common::*;
use dosewright::plan::parse_plan;
use dosewright::simulate::cohort::{CohortRequest, Member, simulate_member};
use dosewright::simulate::integrate::Integrator;
use dosewright::simulate::{RunMode, calibrated};
use dosewright::study::parse_study;

/// A two-arm study (control and 12 kcal/kg/week) for 20 weeks; `extra` adds tables.
fn study_text(scenario: &str, extra: &str) -> String {
    format!(
        r#"
[protocol]
start = 2027-01-04
weeks = 20
session_days = ["mon", "wed", "fri"]

[activity]
compendium_code = "17200"

[[arm]]
name = "control"

[[arm]]
name = "dose"
dose = {{ kcal_per_kg_week = 12.0 }}

[[scenario]]
name = "s"
{scenario}
{extra}
"#
    )
}

fn member() -> Member {
    let plan = parse_plan("p.toml", &base_with(&[("weeks = 8", "weeks = 20")], "")).unwrap();
    Member {
        participant: plan.participant,
        arm: None,
    }
}

fn request(draws: u32, seed: u64) -> CohortRequest {
    CohortRequest {
        all_arms: true,
        integrator: Integrator::Rk4,
        checkpoints: vec![20],
        draws,
        seed,
    }
}

/// With every uncertainty switched off (`[uncertainty]` with zero errors, full
/// attendance, no drop-out, and fixed scenario values) every draw equals the
/// deterministic run of the study without `[uncertainty]`.
#[test]
fn with_all_uncertainty_off_every_draw_is_the_deterministic_run() {
    let off = "[uncertainty]\nrmr_error = 0\nbody_fat_error_percent = 0\nattendance = 1\ndropout_per_week = 0\n";
    let s_off = parse_study("off.toml", &study_text("intake_fraction = 0.3", off)).unwrap();
    let s_det = parse_study("det.toml", &study_text("intake_fraction = 0.3", "")).unwrap();
    let m = member();
    let det = simulate_member(&s_det, &m, 0, &request(1, 9)).unwrap();
    let many = simulate_member(&s_off, &m, 0, &request(7, 9)).unwrap();
    assert_eq!(many.runs.len(), 7 * det.runs.len());
    for r in &many.runs {
        let d = det
            .runs
            .iter()
            .find(|x| x.arm == r.arm && x.scenario == r.scenario)
            .unwrap();
        assert_eq!(r.protocol_end_mass_change_kg, d.protocol_end_mass_change_kg);
        assert_eq!(r.minutes_by_week, d.minutes_by_week);
        assert_eq!(r.dose_share, d.dose_share);
        assert!(r.completed);
    }
}

/// The mean mass change over many draws of a normal `intake_fraction` (mean 0.3,
/// SD 0.2, truncated to 0 to 1) is within 4 standard errors of the same model
/// averaged by quadrature over the truncated distribution (composite Simpson, 200
/// intervals, the density renormalised on the bounds), and not of the untruncated
/// mean's run when the two differ by more than that.
#[test]
fn draws_converge_to_the_quadrature_over_the_truncated_normal() {
    let dist = "intake_fraction = { dist = \"normal\", mean = 0.3, sd = 0.2, min = 0.0, max = 1.0 }\nintake_lag_days = 7.0";
    let study = parse_study("mc.toml", &study_text(dist, "")).unwrap();
    let m = member();
    let k = 3000;
    let r = simulate_member(&study, &m, 0, &request(k, 20_270_101)).unwrap();
    let dosed: Vec<f64> = r
        .runs
        .iter()
        .filter(|x| x.arm == 1)
        .map(|x| x.protocol_end_mass_change_kg)
        .collect();
    assert_eq!(dosed.len(), k as usize);
    let n = dosed.len() as f64;
    let mean = dosed.iter().sum::<f64>() / n;
    let sd = (dosed.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
    let se = sd / n.sqrt();
    // The model's mass change at a fixed intake_fraction, by the general driver
    // with the same integrator.
    let plan = study.plan_for(&m.participant, 1);
    let (b, ph) = calibrated(&plan).unwrap();
    let change = |f: f64| {
        let mut sc = plan.scenarios[0].clone();
        sc.compensation.intake_fraction = f;
        let mode = RunMode {
            integrator: Integrator::Rk4,
            ..RunMode::projection(&plan)
        };
        let out = dosewright::simulate::run(&plan, &ph, &b, &sc, mode, None).unwrap();
        out.weeks[19].end.mass_kg - b.mass_kg
    };
    // Simpson over [0, 1] of g(x) phi((x - 0.3)/0.2), divided by the same integral
    // of the density alone.
    let intervals = 200;
    let h = 1.0 / f64::from(intervals);
    let (mut num, mut den) = (0.0, 0.0);
    for i in 0..=intervals {
        let x = f64::from(i) * h;
        let w = if i == 0 || i == intervals {
            1.0
        } else if i % 2 == 1 {
            4.0
        } else {
            2.0
        };
        let z = (x - 0.3) / 0.2;
        let phi = (-0.5 * z * z).exp();
        num += w * phi * change(x);
        den += w * phi;
    }
    let quad = num / den;
    assert!(
        (mean - quad).abs() < 4.0 * se,
        "mean {mean} vs quadrature {quad}, SE {se}"
    );
    assert!(sd > 0.0, "the draws vary");
    // The untruncated mean (0.3) is not the answer: the truncation at 0 lifts the
    // mean intake_fraction to about 0.328 (0.3 + 0.2 phi(1.5) / (Phi(3.5) - Phi(-1.5))).
    let at_mean = change(0.3);
    assert!(
        (mean - at_mean).abs() > 4.0 * se,
        "mean {mean} vs the run at the untruncated mean {at_mean}, SE {se}"
    );
}

/// The same seed gives byte-identical output with 1 and 2 threads, with every kind
/// of uncertainty on.
#[test]
fn the_same_seed_gives_the_same_bytes_on_one_and_two_threads() {
    let dir = Scratch::new("mc-threads");
    let text = study_text(
        "intake_fraction = { dist = \"beta\", alpha = 2, beta = 5, min = 0, max = 1 }",
        "[uncertainty]\nattendance = 0.8\ndropout_per_week = 0.02\n\n[synthetic]\nfemale_fraction = 0.5\nage_years = { dist = \"uniform\", min = 30, max = 60 }\nheight_cm_female = 163\nheight_cm_male = 177\nbmi = { dist = \"normal\", mean = 30, sd = 3, min = 25, max = 38 }\n",
    );
    dir.write("study.toml", &text);
    let out = |threads: &str, format: &str| {
        let r = run(dir.cmd().args([
            "cohort",
            "study.toml",
            "--synthetic",
            "40",
            "--draws",
            "12",
            "--seed",
            "5",
            "--quiet",
            "--threads",
            threads,
            "--format",
            format,
        ]));
        assert_eq!(r.code, Some(0), "{}", r.stderr);
        r.stdout
    };
    for format in ["json", "csv", "table"] {
        assert_eq!(out("1", format), out("2", format), "{format}");
    }
    // And the draws do vary: another seed gives other numbers.
    let other = run(dir.cmd().args([
        "cohort",
        "study.toml",
        "--synthetic",
        "40",
        "--draws",
        "12",
        "--seed",
        "6",
        "--quiet",
        "--format",
        "json",
    ]));
    assert_eq!(other.code, Some(0), "{}", other.stderr);
    assert!(other.stdout.starts_with('{'), "{}", other.stdout);
    assert_ne!(other.stdout, out("2", "json"));
}
