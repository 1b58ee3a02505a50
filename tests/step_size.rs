//! The RK4 step from the dynamics (docs/model.md section 6): steps per week from the
//! intake lag, checked against Dormand-Prince (tolerances 1e-10) over ten years with
//! full intake compensation at lags of 3, 7, 14 and 21 days and with none, and the
//! cohort's fast loop held to the general RK4 driver at each of those lags.

use dosewright::simulate::fast::{eligible, fast_run};
use dosewright::simulate::integrate::{Integrator, rk4_steps_per_week};
use dosewright::simulate::{RunMode, calibrated, run as sim_run};

/// An invented participant over 520 weeks, a dose following the current mass, full
/// intake compensation with lag `{LAG}` and a diet so that the mass moves.
const TEN_YEARS: &str = r#"[participant]
id = "ST-001"
sex = "male"
age_years = 51
height_cm = 178.0
mass_kg = 104.0
body_fat_percent = 33.0
pal = 1.45

[protocol]
start = 2027-01-04
weeks = {WEEKS}
follow_up_weeks = {FOLLOW}
session_days = ["mon", "wed", "fri"]

[protocol.dose]
kcal_per_kg_week = 16.0
basis = "net"
mass_basis = "current"

[protocol.ramp]
weeks = 6

[activity]
compendium_code = "17200"

[[scenario]]
name = "eats it all back, with a diet"
intake_fraction = 1.0
intake_lag_days = {LAG}
diet_change_kcal_per_day = -400.0
"#;

fn plan(lag: f64, weeks: u32, follow: u32) -> dosewright::plan::Plan {
    let text = TEN_YEARS
        .replace("{WEEKS}", &weeks.to_string())
        .replace("{FOLLOW}", &follow.to_string())
        .replace("{LAG}", &format!("{lag:.1}"));
    dosewright::plan::parse_plan("step-size.toml", &text).unwrap()
}

#[test]
fn the_rule_takes_a_quarter_of_the_lag_between_one_and_seven_steps_a_week() {
    // A step of at most lag/4 days: 7 / (lag/4) steps a week, rounded up, in [1, 7].
    assert_eq!(rk4_steps_per_week(0.0), 1);
    assert_eq!(rk4_steps_per_week(1.0), 7);
    assert_eq!(rk4_steps_per_week(3.0), 7); // 9.33 -> 7
    assert_eq!(rk4_steps_per_week(4.0), 7);
    assert_eq!(rk4_steps_per_week(7.0), 4);
    assert_eq!(rk4_steps_per_week(14.0), 2);
    assert_eq!(rk4_steps_per_week(21.0), 2); // 1.33 -> 2
    assert_eq!(rk4_steps_per_week(28.0), 1);
    assert_eq!(rk4_steps_per_week(200.0), 1);
    for lag in [0.5, 2.0, 3.0, 5.0, 7.0, 10.0, 14.0, 21.0, 30.0] {
        let n = rk4_steps_per_week(lag);
        assert!((1..=7).contains(&n));
        // At most a quarter of the lag, unless the week's 7 steps are already reached.
        assert!(7.0 / n as f64 <= lag / 4.0 + 1e-12 || n == 7, "lag {lag}");
    }
}

#[test]
fn rk4_with_the_lag_step_is_within_1e_4_kg_of_dopri5_over_ten_years() {
    for lag in [0.0, 3.0, 7.0, 14.0, 21.0] {
        for (weeks, follow) in [(520, 0), (260, 260)] {
            let plan = plan(lag, weeks, follow);
            let (baseline, physiology) = calibrated(&plan).unwrap();
            let sc = &plan.scenarios[0];
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
                let what = format!("lag {lag}, {weeks}+{follow}, week {}", a.week);
                for (x, y) in [
                    (a.end.mass_kg, b.end.mass_kg),
                    (a.end.fat_mass_kg, b.end.fat_mass_kg),
                ] {
                    assert!((x - y).abs() <= 1e-4, "{what}: {x} vs {y}");
                }
                assert_eq!(a.minutes_per_session, b.minutes_per_session, "{what}");
                worst = worst.max((a.end.mass_kg - b.end.mass_kg).abs());
            }
            // The run must move, or the comparison would pass trivially.
            let lowest = d
                .weeks
                .iter()
                .map(|w| w.end.mass_kg)
                .fold(f64::INFINITY, f64::min);
            assert!(baseline.mass_kg - lowest > 5.0, "lag {lag}: {lowest} kg");
            eprintln!(
                "lag {lag} ({} steps a week), {weeks}+{follow}: largest |RK4 - Dopri5| {worst:e} kg",
                rk4_steps_per_week(lag)
            );
        }
    }
}

#[test]
fn the_fast_loop_equals_the_general_rk4_driver_at_every_lag() {
    for lag in [0.0, 3.0, 7.0, 14.0, 21.0] {
        let plan = plan(lag, 52, 26);
        assert!(eligible(&plan));
        let (baseline, physiology) = calibrated(&plan).unwrap();
        let sc = &plan.scenarios[0];
        let mode = RunMode {
            integrator: Integrator::Rk4,
            ..RunMode::projection(&plan)
        };
        let full = sim_run(&plan, &physiology, &baseline, sc, mode, None).unwrap();
        let fast = fast_run(
            &plan,
            &physiology,
            &baseline,
            &sc.compensation,
            true,
            None,
            None,
        )
        .unwrap();
        assert_eq!(full.weeks.len(), fast.mass_kg.len());
        for (i, w) in full.weeks.iter().enumerate() {
            assert!(
                (w.end.mass_kg - fast.mass_kg[i]).abs() < 1e-9,
                "lag {lag}, week {}: {} vs {}",
                w.week,
                w.end.mass_kg,
                fast.mass_kg[i]
            );
            assert!((w.end.fat_mass_kg - fast.fat_kg[i]).abs() < 1e-9);
            if let Some(&m) = fast.minutes.get(i) {
                assert_eq!(w.minutes_per_session, m, "lag {lag}, week {}", w.week);
            }
        }
    }
}
