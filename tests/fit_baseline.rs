//! `fit` treats the baseline as a measurement (docs/model.md section 7): the starting
//! offset is estimated with the compensation from every weigh-in, the start date's
//! included, and the nominal 95% interval is checked for coverage by simulation with
//! a baseline that carries the same scale noise as every other weigh-in.
//!
//! Truth comes from a simulated participant whose parameters are known; the noise
//! is drawn here (SplitMix64, Steele, Lea and Flood 2014, OOPSLA, and the Box-Muller
//! transform, Box and Muller 1958, Ann Math Stat 29:610). Every participant and value
//! is invented.

use chrono::{Days, NaiveDate};
use dosewright::log::parse_log;
use dosewright::plan::{Plan, parse_plan};
use dosewright::simulate::fit::{FitParameter, FitResult, fit};
use dosewright::simulate::observed::Observed;
use dosewright::simulate::{Simulation, simulate};

const HEADER: &str =
    "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note";

/// An invented participant: 16 weeks, 4 sessions a week at a stated 6 MET.
const PLAN: &str = r#"[participant]
id = "FB-207"
sex = "female"
age_years = 44
height_cm = 168.0
mass_kg = 92.0
body_fat_percent = 40.0
pal = 1.5

[protocol]
start = 2027-01-04
weeks = 16
session_days = ["mon", "wed", "fri", "sat"]

[protocol.dose]
kcal_per_week = 2000

[protocol.ramp]
weeks = 2

[activity]
met = 6.0

[[scenario]]
name = "participant"
intake_fraction = INTAKE
intake_lag_days = 0.0
"#;

fn plan_text(mass_kg: f64, intake: f64) -> String {
    PLAN.replace("mass_kg = 92.0", &format!("mass_kg = {mass_kg:?}"))
        .replace("INTAKE", &format!("{intake:?}"))
}

fn plan_of(text: &str) -> Plan {
    parse_plan("p.toml", text).unwrap_or_else(|e| panic!("the test plan is valid: {e}"))
}

struct Noise(u64);

impl Noise {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
    fn normal(&mut self) -> f64 {
        let (u, v) = (self.uniform(), self.uniform());
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}

/// Round to the 0.1 kg of a scale.
fn scale(m: f64) -> f64 {
    (m * 10.0).round() / 10.0
}

/// The log of the simulated truth: every planned session delivered, a weigh-in on
/// the start date equal to `baseline_kg` and at the start of every later week and the
/// morning after the last one, the true mass plus noise from `noise`.
fn log_of(sim: &Simulation, baseline_kg: f64, sd: f64, noise: &mut Noise) -> String {
    let weeks = &sim.scenarios[0].weeks;
    let mut s = format!("{HEADER}\n");
    let weigh = |s: &mut String, d: NaiveDate, m: f64| {
        s.push_str(&format!("{d},weigh-in,{m},,,,,,,\n"));
    };
    weigh(&mut s, weeks[0].start, baseline_kg);
    for (i, w) in weeks.iter().enumerate() {
        if i > 0 {
            let m = scale(weeks[i - 1].end.mass_kg + sd * noise.normal());
            weigh(&mut s, w.start, m);
        }
        for x in &w.sessions {
            s.push_str(&format!("{},session,,,{},,,,,\n", x.date, x.minutes));
        }
    }
    let last = weeks.last().unwrap();
    let m = scale(last.end.mass_kg + sd * noise.normal());
    weigh(&mut s, last.start + Days::new(7), m);
    s
}

fn observed(plan: &Plan, log: &str) -> Observed {
    let (log, _) = parse_log("log.csv", log, plan, None).expect("the log parses");
    Observed::from_log(plan, &log, None)
}

/// One replicate: the true start is 92.0 kg and the true intake fraction `truth`;
/// the plan's baseline is the start-date weigh-in, noisy like the others.
fn replicate(sim: &Simulation, truth: f64, sd: f64, noise: &mut Noise) -> FitResult {
    let _ = truth;
    let baseline = scale(92.0 + sd * noise.normal());
    let log = log_of(sim, baseline, sd, noise);
    let plan = plan_of(&plan_text(baseline, 0.0));
    let obs = observed(&plan, &log);
    fit(&plan, &obs, 0, FitParameter::IntakeFraction).expect("the fit succeeds")
}

#[test]
fn every_weigh_in_counts_and_an_exact_log_gives_back_the_truth_and_the_start() {
    // Without noise the truth (c_I = 0.3, start 92.0 kg) is recovered whatever the
    // plan's baseline says: a plan 0.4 kg off is read as an offset of -0.4 kg.
    let sim = simulate(&plan_of(&plan_text(92.0, 0.3))).unwrap();
    let mut quiet = Noise(1);
    let log = log_of(&sim, 92.0, 0.0, &mut quiet);
    for plan_mass in [92.0, 92.4, 91.6] {
        let plan = plan_of(&plan_text(plan_mass, 0.0));
        let f = fit(
            &plan,
            &observed(&plan, &log),
            0,
            FitParameter::IntakeFraction,
        )
        .unwrap();
        assert_eq!(
            f.weigh_ins, 17,
            "the start date's weigh-in counts: 1 + 15 weekly + 1"
        );
        assert!(
            (f.estimate - 0.3).abs() < 0.03,
            "{plan_mass}: {}",
            f.estimate
        );
        assert!(
            (f.baseline_estimate_kg - 92.0).abs() < 0.05,
            "{plan_mass}: {}",
            f.baseline_estimate_kg
        );
        assert!((f.baseline_offset_kg - (92.0 - plan_mass)).abs() < 0.05);
    }
}

#[test]
fn a_shift_of_the_plans_baseline_by_one_weigh_ins_scatter_barely_moves_the_estimate() {
    // The example in the issue this answers: a 0.4 kg shift of the plan's mass moved
    // the old estimate from 0.43 to 1.02 or 0.00. With the offset estimated, the same
    // noisy log gives nearly the same estimate for all three plan masses.
    let sim = simulate(&plan_of(&plan_text(92.0, 0.3))).unwrap();
    let mut noise = Noise(0x2027_0104);
    let log = log_of(&sim, 92.1, 0.4, &mut noise);
    let fits: Vec<f64> = [92.1, 92.5, 91.7]
        .iter()
        .map(|m| {
            let plan = plan_of(&plan_text(*m, 0.0));
            fit(
                &plan,
                &observed(&plan, &log),
                0,
                FitParameter::IntakeFraction,
            )
            .unwrap()
            .estimate
        })
        .collect();
    for f in &fits[1..] {
        assert!((f - fits[0]).abs() < 0.05, "{fits:?}");
    }
}

#[test]
fn the_nominal_95_percent_interval_covers_the_truth_in_at_least_90_percent_of_200_noisy_logs() {
    // Coverage by simulation (the issue's check; docs/model.md section 7 states the
    // measured value): 200 logs, weigh-ins with SD 0.4 kg on a 0.1 kg scale, the
    // baseline included; the plan's mass is the noisy start-date weigh-in. The profile
    // t interval of Bates and Watts 1988 (Nonlinear Regression Analysis and Its
    // Applications, section 6.1) with n - 2 degrees of freedom. Measured when written:
    // see the assertion message (197/200 = 98.5% with this seed at the time of writing;
    // the old interval from a fixed baseline covered 62% in the same set-up).
    let truth = 0.3;
    let sim = simulate(&plan_of(&plan_text(92.0, truth))).unwrap();
    let mut noise = Noise(0x5EED_0014);
    let n = 200;
    let mut covered = 0;
    for _ in 0..n {
        let f = replicate(&sim, truth, 0.4, &mut noise);
        if f.interval[0] <= truth && truth <= f.interval[1] {
            covered += 1;
        }
    }
    let coverage = covered as f64 / n as f64;
    eprintln!("coverage {covered}/{n} = {coverage}");
    assert!(coverage >= 0.90, "coverage {covered}/{n}");
}
