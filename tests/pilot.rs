//! Pilot analysis: synthetic pilots made with the project's model (its calibration
//! and its right-hand side `Physiology::fluxes`), with known compensation drawn from
//! a known distribution and measurement error added to every measurement.
//!
//! The synthetic participants are integrated here by classic RK4 (Kutta 1901) on the
//! model's own right-hand side, with the running integrals of intake, expenditure
//! and exercise energy carried beside the body state, so that the TEE a synthetic
//! DLW study would measure is the model's mean expenditure over the period.

use chrono::NaiveDate;
use dosewright::activity::Intensity;
use dosewright::error::Location;
use dosewright::model::energy::calibrate;
use dosewright::model::{BodyState, Bout, Compensation, Constants, Physiology, Sex, Subject};
use dosewright::pilot::{
    Body, Delivered, PilotParticipant, RmrMeasure, TeeMeasure, Term, Visit, analyse,
    analyse_interval, check, precision,
};
use rand::SeedableRng;
use rand::rngs::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

fn day(d: i64) -> NaiveDate {
    NaiveDate::from_ymd_opt(2027, 1, 4).unwrap() + chrono::Duration::days(d)
}

fn at(row: usize) -> Location {
    Location {
        file: "synthetic.csv".into(),
        line: Some(row),
        column: None,
    }
}

/// Truth for one synthetic participant.
#[derive(Clone, Copy, Debug)]
struct Truth {
    intake_fraction: f64,
    activity_fraction: f64,
    rmr_adaptation: f64,
}

/// The model's state at one visit day.
struct Snap {
    fat: f64,
    lean: f64,
    rmr: f64,
}

/// What the model gives for one participant: states at the visit days, the mean
/// intake and expenditure over the whole protocol, baseline expenditure, the net
/// exercise energy of each week.
struct Run {
    snaps: Vec<Snap>,
    mean_intake: f64,
    mean_expenditure: f64,
    baseline_expenditure: f64,
    baseline_intake: f64,
    weekly_net: Vec<f64>,
    physiology: Physiology,
}

/// Integrate `weeks` weeks with `bouts` each week, RK4 with step `h` days; visits
/// at the days in `visit_days` (multiples of 7).
fn run(
    subject: &Subject,
    comp: &Compensation,
    bouts: &[Bout],
    weeks: usize,
    visit_days: &[usize],
) -> Run {
    let constants = Constants::default();
    let (baseline, ph) = calibrate(subject, &constants).expect("calibrates");
    let h = 0.5;
    let steps_per_day = 2;
    // y = (F, L, int EI, int EE, int X)
    let rhs = |y: &[f64; 5]| -> [f64; 5] {
        let s = BodyState {
            fat_kg: y[0],
            lean_kg: y[1],
            lagged_exercise_kcal_per_day: 0.0,
        };
        let fl = ph.fluxes(comp, bouts, &s);
        [fl.dfat, fl.dlean, fl.intake, fl.expenditure, fl.exercise]
    };
    let mut y = [
        baseline.fat_mass_kg,
        baseline.fat_free_mass_kg,
        0.0,
        0.0,
        0.0,
    ];
    let snap = |y: &[f64; 5]| Snap {
        fat: y[0],
        lean: y[1],
        rmr: ph.rmr(comp, y[0], y[1]),
    };
    let mut snaps = vec![];
    let mut weekly_net = vec![];
    let mut week_start_x = 0.0;
    let total_days = weeks * 7;
    for d in 0..=total_days {
        if visit_days.contains(&d) {
            snaps.push(snap(&y));
        }
        if d % 7 == 0 && d > 0 {
            weekly_net.push(y[4] - week_start_x);
            week_start_x = y[4];
        }
        if d == total_days {
            break;
        }
        for _ in 0..steps_per_day {
            let k1 = rhs(&y);
            let y2: [f64; 5] = std::array::from_fn(|i| y[i] + h / 2.0 * k1[i]);
            let k2 = rhs(&y2);
            let y3: [f64; 5] = std::array::from_fn(|i| y[i] + h / 2.0 * k2[i]);
            let k3 = rhs(&y3);
            let y4: [f64; 5] = std::array::from_fn(|i| y[i] + h * k3[i]);
            let k4 = rhs(&y4);
            for i in 0..5 {
                y[i] += h / 6.0 * (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i]);
            }
        }
    }
    let n = total_days as f64;
    Run {
        snaps,
        mean_intake: y[2] / n,
        mean_expenditure: y[3] / n,
        baseline_expenditure: baseline.tdee_kcal_per_day,
        baseline_intake: baseline.intake_kcal_per_day,
        weekly_net,
        physiology: ph,
    }
}

/// Measurement SDs of a synthetic pilot (zero for an exact one).
#[derive(Clone, Copy)]
struct Noise {
    on: bool,
}

fn subject(sex: Sex, age: f64, height: f64, mass: f64, fat_pct: f64, pal: f64) -> Subject {
    Subject {
        sex,
        age_years: age,
        height_cm: height,
        mass_kg: mass,
        body_fat_percent: Some(fat_pct),
        rmr_kcal_per_day: None,
        intake_kcal_per_day: None,
        pal: Some(pal),
    }
}

/// One synthetic participant measured: DXA at the visits, RMR at every visit, a
/// baseline DLW TEE (the 14 days before baseline) and one over the whole protocol,
/// the delivered sessions as one record per week (the model's net energy that week).
fn measure(
    code: &str,
    arm: &str,
    sub: &Subject,
    r: &Run,
    visit_days: &[usize],
    noise: Noise,
    rng: &mut ChaCha8Rng,
) -> PilotParticipant {
    let mut e = |sd: f64| {
        if noise.on && sd > 0.0 {
            Normal::new(0.0, sd).unwrap().sample(rng)
        } else {
            0.0
        }
    };
    let total = visit_days[visit_days.len() - 1] as i64;
    let mut visits = vec![];
    let mut rmr = vec![];
    for (k, (s, d)) in r.snaps.iter().zip(visit_days).enumerate() {
        visits.push(Visit {
            date: day(*d as i64),
            fat_kg: s.fat + e(precision::DXA_FAT.cv * s.fat),
            fat_free_kg: s.lean + e(precision::DXA_LEAN.cv * s.lean),
            weighed_kg: None,
            method: "DXA".into(),
            fat_sd_kg: None,
            fat_free_sd_kg: None,
            at: at(2 + k),
        });
        rmr.push(RmrMeasure {
            date: day(*d as i64),
            kcal_per_day: s.rmr + e(precision::RMR_INDIRECT_CALORIMETRY.cv * s.rmr),
            sd: None,
            at: at(20 + k),
        });
    }
    let cv = precision::TEE_DOUBLY_LABELLED_WATER.cv;
    let tee = vec![
        TeeMeasure {
            first: day(-14),
            last: day(-1),
            kcal_per_day: r.baseline_expenditure + e(cv * r.baseline_expenditure),
            method: "DLW".into(),
            sd: None,
            at: at(40),
        },
        TeeMeasure {
            first: day(0),
            last: day(total - 1),
            kcal_per_day: r.mean_expenditure + e(cv * r.mean_expenditure),
            method: "DLW".into(),
            sd: None,
            at: at(41),
        },
    ];
    let sessions = r
        .weekly_net
        .iter()
        .enumerate()
        .map(|(w, x)| Delivered {
            date: day(7 * w as i64),
            net_kcal: *x,
        })
        .collect();
    PilotParticipant {
        code: code.into(),
        arm: arm.into(),
        body: Body {
            sex: sub.sex,
            age_years: sub.age_years,
            height_cm: sub.height_cm,
        },
        visits,
        rmr,
        tee,
        sessions,
        baseline_intake: None,
        protocol: None,
        constants: None,
        screening: None,
    }
}

fn bouts(minutes: f64, met: f64, per_week: usize) -> Vec<Bout> {
    (0..per_week)
        .map(|_| Bout {
            minutes,
            intensity: Intensity::Met { met },
        })
        .collect()
}

/// With TEE and composition from the model itself, the intake found by the
/// energy balance equals the model's mean intake to 1e-6 relative; and with no
/// measurement error, intake_fraction and the RMR adaptation per kg are the
/// participant's own values to 1e-6, and activity_fraction is recovered to the
/// accuracy of the trapezoid mean of mass between visits.
#[test]
fn exact_measurements_recover_the_model() {
    let sub = subject(Sex::Female, 45.0, 165.0, 88.0, 40.0, 1.6);
    let comp = Compensation {
        intake_fraction: 0.35,
        activity_fraction: 0.15,
        rmr_adaptation_kcal_per_kg: 12.0,
        ..Compensation::default()
    };
    let visit_days: Vec<usize> = (0..=12).map(|w| 7 * w).collect();
    let b = bouts(50.0, 6.0, 5);
    let r = run(&sub, &comp, &b, 12, &visit_days);
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let p = measure(
        "S-1",
        "exercise",
        &sub,
        &r,
        &visit_days,
        Noise { on: false },
        &mut rng,
    );
    check(&p).expect("valid");
    let a = analyse_interval(&p, &Constants::default(), 0, visit_days.len() - 1).unwrap();
    let rel = |x: f64, y: f64| ((x - y) / y).abs();
    // The energy identity.
    let ei = a.intake.unwrap().value;
    assert!(rel(ei, r.mean_intake) < 1e-6, "{ei} vs {}", r.mean_intake);
    // Baseline intake = baseline TEE (weight-stable at baseline).
    assert!(rel(a.baseline_intake.unwrap().value, r.baseline_intake) < 1e-9);
    // Delivered = the model's integral of X.
    let x_model: f64 = r.weekly_net.iter().sum::<f64>() / 84.0;
    assert!(rel(a.delivered, x_model) < 1e-12);
    let ci = a.intake_fraction.unwrap().value;
    assert!((ci - 0.35).abs() < 1e-6, "intake_fraction {ci}");
    let ar = a.rmr_adaptation_per_kg.unwrap().value;
    assert!((ar - 12.0).abs() < 1e-6, "rmr adaptation per kg {ar}");
    let ca = a.activity_fraction.unwrap().value;
    assert!((ca - 0.15).abs() < 2e-3, "activity_fraction {ca}");
    // The split adds up: gap = intake + resting + rest.
    let d = &a.decomposition;
    let sum = d.intake.unwrap().value + d.resting.unwrap().value + d.rest.value;
    assert!((sum - a.gap.value).abs() < 1e-9);
    // With visits only at the ends the trapezoid is coarser but still close.
    let ends = [0usize, 84];
    let r2 = run(&sub, &comp, &b, 12, &ends);
    let p2 = measure(
        "S-2",
        "exercise",
        &sub,
        &r2,
        &ends,
        Noise { on: false },
        &mut rng,
    );
    let a2 = analyse_interval(&p2, &Constants::default(), 0, 1).unwrap();
    assert!((a2.intake_fraction.unwrap().value - 0.35).abs() < 1e-6);
    assert!((a2.rmr_adaptation_per_kg.unwrap().value - 12.0).abs() < 1e-6);
    assert!((a2.activity_fraction.unwrap().value - 0.15).abs() < 0.02);
    // Consistency of the model itself: mean intake = EI0 + c_I * mean X (no lag).
    assert!(rel(r.mean_intake, r.baseline_intake + 0.35 * x_model) < 1e-9);
    let _ = r.physiology;
}

/// One synthetic pilot: an exercise arm of `n` participants with compensation drawn
/// from the known normals, measured with realistic error.
fn synthetic_pilot(seed: u64, n: usize, means: Truth, sds: Truth) -> Vec<PilotParticipant> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let visit_days = [0usize, 42, 84];
    let mut out = vec![];
    for i in 0..n {
        let draw = |rng: &mut ChaCha8Rng, m: f64, s: f64| Normal::new(m, s).unwrap().sample(rng);
        let t = Truth {
            intake_fraction: draw(&mut rng, means.intake_fraction, sds.intake_fraction),
            activity_fraction: draw(&mut rng, means.activity_fraction, sds.activity_fraction),
            rmr_adaptation: draw(&mut rng, means.rmr_adaptation, sds.rmr_adaptation),
        };
        let female = i % 2 == 0;
        let sub = subject(
            if female { Sex::Female } else { Sex::Male },
            draw(&mut rng, 45.0, 8.0),
            if female { 164.0 } else { 178.0 },
            draw(&mut rng, if female { 88.0 } else { 100.0 }, 8.0),
            if female { 40.0 } else { 30.0 },
            1.6,
        );
        let comp = Compensation {
            intake_fraction: t.intake_fraction,
            activity_fraction: t.activity_fraction,
            rmr_adaptation_kcal_per_kg: t.rmr_adaptation,
            ..Compensation::default()
        };
        let r = run(&sub, &comp, &bouts(60.0, 6.5, 5), 12, &visit_days);
        out.push(measure(
            &format!("P{i:02}"),
            "exercise",
            &sub,
            &r,
            &visit_days,
            Noise { on: true },
            &mut rng,
        ));
    }
    out
}

/// Over 200 synthetic pilots of 16 participants, the true mean and between-
/// participant SD of each compensation term lie inside the analysis's 95 %
/// intervals in at least 90 % of the pilots.
#[test]
fn intervals_cover_the_truth_in_repeated_synthetic_pilots() {
    let means = Truth {
        intake_fraction: 0.3,
        activity_fraction: 0.1,
        rmr_adaptation: 10.0,
    };
    let sds = Truth {
        intake_fraction: 0.25,
        activity_fraction: 0.15,
        rmr_adaptation: 15.0,
    };
    let terms = [
        (
            Term::IntakeFraction,
            means.intake_fraction,
            sds.intake_fraction,
        ),
        (
            Term::ActivityFraction,
            means.activity_fraction,
            sds.activity_fraction,
        ),
        (
            Term::RmrAdaptationPerKg,
            means.rmr_adaptation,
            sds.rmr_adaptation,
        ),
    ];
    let pilots = 200;
    let mut mean_hits = [0usize; 3];
    let mut sd_hits = [0usize; 3];
    let mut widths = [(0.0f64, 0.0f64); 3];
    for seed in 0..pilots {
        let ps = synthetic_pilot(1000 + seed, 16, means, sds);
        let a = analyse(&ps, &Constants::default()).unwrap();
        let arm = &a.arms[0];
        for (k, (t, m, s)) in terms.iter().enumerate() {
            let sum = arm.term(*t).expect("estimated");
            let (lo, hi) = sum.mean_interval.unwrap();
            mean_hits[k] += usize::from(lo <= *m && *m <= hi);
            widths[k].0 += (hi - lo) / pilots as f64;
            let (lo, hi) = sum.between_sd_interval.unwrap();
            sd_hits[k] += usize::from(lo <= *s && *s <= hi);
            widths[k].1 += (hi - lo) / pilots as f64;
        }
    }
    let share = |h: usize| h as f64 / pilots as f64;
    let report: Vec<String> = terms
        .iter()
        .enumerate()
        .map(|(k, (t, ..))| {
            format!(
                "{}: mean {:.3} (mean width {:.3}), SD {:.3} (mean width {:.3})",
                t.label(),
                share(mean_hits[k]),
                widths[k].0,
                share(sd_hits[k]),
                widths[k].1
            )
        })
        .collect();
    eprintln!(
        "coverage over {pilots} synthetic pilots: {}",
        report.join("; ")
    );
    for k in 0..3 {
        assert!(share(mean_hits[k]) >= 0.9, "{}", report.join("; "));
        assert!(share(sd_hits[k]) >= 0.9, "{}", report.join("; "));
    }
}

/// The scenario block written from a synthetic pilot is accepted by the study
/// loader, and a cohort run on it (`cohort --draws`, the project's Monte Carlo
/// machinery) reproduces the pilot's mean achieved share within its interval.
#[test]
fn a_cohort_on_the_written_scenarios_reproduces_the_pilot_share() {
    use dosewright::pilot::scenario::scenario_block;
    use dosewright::simulate::cohort::{CohortRequest, Member, run_cohort};
    use dosewright::simulate::integrate::Integrator;
    let means = Truth {
        intake_fraction: 0.3,
        activity_fraction: 0.1,
        rmr_adaptation: 10.0,
    };
    let sds = Truth {
        intake_fraction: 0.15,
        activity_fraction: 0.08,
        rmr_adaptation: 5.0,
    };
    let ps = synthetic_pilot(77, 16, means, sds);
    let a = analyse(&ps, &Constants::default()).unwrap();
    let share = a.arms[0].term(Term::Share).unwrap();
    let (lo, hi) = share.mean_interval.unwrap();
    let block = scenario_block(&a, "synthetic");
    // The next study: the pilot's protocol (12 weeks, 5 sessions of 60 minutes at
    // 6.5 MET, no ramp) and population.
    let study_text = format!(
        r#"[study]
name = "next trial"

[protocol]
start = 2027-01-04
weeks = 12
session_days = ["mon", "tue", "wed", "thu", "fri"]
max_session_minutes = 90

[activity]
met = 6.5

[[arm]]
name = "exercise"
dose = {{ minutes_per_week = 300 }}

{block}
[synthetic]
female_fraction = 0.5
age_years = {{ dist = "normal", mean = 45, sd = 8, min = 25, max = 65 }}
height_cm_female = 164
height_cm_male = 178
bmi = {{ dist = "normal", mean = 32, sd = 2.5, min = 27, max = 38 }}
pal = 1.6
"#
    );
    let study = dosewright::study::parse_study("next.toml", &study_text)
        .unwrap_or_else(|e| panic!("{e}\n{study_text}"));
    let people = dosewright::study::synthetic::draw(&study, 40, 11).unwrap();
    let members: Vec<Member> = people
        .into_iter()
        .map(|participant| Member {
            participant,
            arm: Some(0),
        })
        .collect();
    let req = CohortRequest {
        all_arms: false,
        integrator: Integrator::Rk4,
        checkpoints: vec![],
        draws: 10,
        seed: 5,
    };
    let runs = run_cohort(&study, &members, &req, &|| {}).unwrap();
    let shares: Vec<f64> = runs
        .members(&req)
        .iter()
        .flat_map(|m| m.runs.iter().filter_map(|r| r.dose_share))
        .collect();
    let mean = shares.iter().sum::<f64>() / shares.len() as f64;
    eprintln!(
        "pilot share {:.3} ({lo:.3} to {hi:.3}); cohort on the written scenario {mean:.3} over {} runs",
        share.mean,
        shares.len()
    );
    assert!(
        lo <= mean && mean <= hi,
        "cohort {mean} outside the pilot's {lo}..{hi}"
    );
}
