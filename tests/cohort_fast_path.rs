//! The cohort's fast path (allocation-free RK4 loop) against the general driver with
//! the same integrator: the same masses, minutes and energies, for plans with a ramp,
//! warm-up and cool-down, a cap, per-kg and minutes doses, net and gross bases,
//! lagged intake compensation, attendance and drop-out. The participant is invented.

use dosewright::plan::{Plan, parse_plan};
use dosewright::simulate::fast::{eligible, fast_run};
use dosewright::simulate::integrate::Integrator;
use dosewright::simulate::{Attendance, RunMode, calibrated, run};

const PLAN: &str = r#"
[participant]
id = "FP-01"
sex = "male"
age_years = 50
height_cm = 178.0
mass_kg = 102.0
pal = 1.5

[protocol]
start = 2027-01-06
weeks = 40
follow_up_weeks = 8
session_days = ["mon", "wed", "fri", "sat"]
max_session_minutes = 50
over_max = "cap"

[protocol.dose]
kcal_per_kg_week = 16.0
mass_basis = "current"

[protocol.ramp]
weeks = 5

[protocol.warm_up]
minutes = 5

[protocol.cool_down]
minutes = 4
met = 2.0

[activity]
compendium_code = "17200"

[[scenario]]
name = "lagged intake, adaptation"
intake_fraction = 0.4
intake_lag_days = 10.0
activity_fraction = 0.1
rmr_adaptation_kcal_per_kg = 4.0
"#;

fn check(plan: &Plan, attendance: Option<Attendance>, last: Option<u32>) {
    assert!(eligible(plan));
    let (b, ph) = calibrated(plan).unwrap();
    let sc = &plan.scenarios[0];
    let mode = RunMode {
        integrator: Integrator::Rk4,
        attendance,
        last_exercise_week: last,
        ..RunMode::projection(plan)
    };
    let full = run(plan, &ph, &b, sc, mode, None).unwrap();
    let fast = fast_run(plan, &ph, &b, &sc.compensation, true, attendance, last).unwrap();
    assert_eq!(full.weeks.len(), fast.mass_kg.len());
    for (i, w) in full.weeks.iter().enumerate() {
        assert!(
            (w.end.mass_kg - fast.mass_kg[i]).abs() < 1e-9,
            "week {}: {} vs {}",
            w.week,
            w.end.mass_kg,
            fast.mass_kg[i]
        );
        assert!((w.end.fat_mass_kg - fast.fat_kg[i]).abs() < 1e-9);
        assert!(
            (w.end.prescribed_net_kcal - fast.prescribed_net_kcal[i]).abs()
                < 1e-6 * w.end.prescribed_net_kcal.max(1.0)
        );
        assert!((w.end.achieved_deficit_kcal - fast.deficit_kcal[i]).abs() < 1e-5);
        if w.week <= plan.protocol.weeks {
            assert_eq!(w.minutes_per_session, fast.minutes[i], "week {}", w.week);
        }
    }
}

/// The plan with a minutes dose (150 min a week) in place of the energy dose.
fn minutes_plan() -> Plan {
    parse_plan(
        "fast.toml",
        &PLAN.replace(
            "kcal_per_kg_week = 16.0\nmass_basis = \"current\"",
            "minutes_per_week = 150",
        ),
    )
    .unwrap()
}

#[test]
fn the_fast_path_equals_the_general_driver_with_rk4() {
    let plan = parse_plan("fast.toml", PLAN).unwrap();
    check(&plan, None, None);
    check(
        &plan,
        Some(Attendance {
            probability: 0.7,
            key: 42,
        }),
        None,
    );
    check(
        &plan,
        Some(Attendance {
            probability: 0.9,
            key: 7,
        }),
        Some(17),
    );
    let net = parse_plan(
        "fast.toml",
        &PLAN.replace("mass_basis = \"current\"", "basis = \"net\""),
    )
    .unwrap();
    check(&net, None, Some(3));
    let minutes = minutes_plan();
    check(
        &minutes,
        Some(Attendance {
            probability: 0.5,
            key: 1,
        }),
        None,
    );
}

/// Lanes integrated side by side (packed four to a vector, a short chunk padded)
/// give each lane exactly what it gives alone: the lanes share nothing but the
/// participant and scenario. Six lanes make one full chunk and one padded one.
#[test]
fn lanes_side_by_side_equal_each_lane_alone() {
    use dosewright::simulate::fast::{Lane, fast_runs};
    let plan = parse_plan("fast.toml", PLAN).unwrap();
    let minutes = minutes_plan();
    let (b, ph) = calibrated(&plan).unwrap();
    let comp = &plan.scenarios[0].compensation;
    let at = |probability, key| Some(Attendance { probability, key });
    let lanes = [
        Lane {
            plan: &plan,
            exercise: false,
            attendance: None,
            last_exercise_week: None,
        },
        Lane {
            plan: &plan,
            exercise: true,
            attendance: None,
            last_exercise_week: None,
        },
        Lane {
            plan: &minutes,
            exercise: true,
            attendance: at(0.6, 3),
            last_exercise_week: None,
        },
        Lane {
            plan: &plan,
            exercise: true,
            attendance: at(0.8, 11),
            last_exercise_week: Some(9),
        },
        Lane {
            plan: &minutes,
            exercise: true,
            attendance: None,
            last_exercise_week: Some(30),
        },
        Lane {
            plan: &plan,
            exercise: true,
            attendance: at(0.95, 5),
            last_exercise_week: None,
        },
    ];
    for n in 1..=lanes.len() {
        let together = fast_runs(&lanes[..n], &ph, &b, comp).unwrap();
        assert_eq!(together.len(), n);
        for (l, got) in lanes[..n].iter().zip(&together) {
            let alone = fast_run(
                l.plan,
                &ph,
                &b,
                comp,
                l.exercise,
                l.attendance,
                l.last_exercise_week,
            )
            .unwrap();
            // Bit for bit: the same operations in the same order for every lane.
            assert_eq!(&alone, got, "{n} lanes");
        }
    }
    // The lanes differ, so a mix-up between them could not pass unseen.
    let all = fast_runs(&lanes, &ph, &b, comp).unwrap();
    assert!(all[1].mass_kg != all[3].mass_kg && all[2].minutes != all[4].minutes);
}
