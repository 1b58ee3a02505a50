//! The lane loop packs the runs of different participants, draws and scenarios side
//! by side (docs/speed.md): each lane carries its own constants of the one
//! right-hand side, so every run must come out exactly as it does alone, bit for
//! bit, whatever it shares a vector with; a run that leaves the model's range is
//! marked and leaves its neighbours untouched. The participants are invented.

use dosewright::model::{Baseline, Compensation, Physiology};
use dosewright::plan::{Plan, parse_plan};
use dosewright::simulate::Attendance;
use dosewright::simulate::calibrated;
use dosewright::simulate::fast::{FastRun, Lane, LaneRun, fast_run, run_lanes};

const PLAN: &str = r#"
[participant]
id = "LP-01"
sex = "male"
age_years = 50
height_cm = 178.0
mass_kg = 102.0
pal = 1.5

[protocol]
start = 2027-01-06
weeks = 30
follow_up_weeks = 6
session_days = ["mon", "wed", "fri"]
max_session_minutes = 60
over_max = "cap"

[protocol.dose]
kcal_per_kg_week = 16.0

[protocol.ramp]
weeks = 4

[protocol.warm_up]
minutes = 5

[activity]
compendium_code = "17200"

[[scenario]]
name = "lagged intake"
intake_fraction = 0.3
intake_lag_days = 14.0
"#;

/// The second invented participant: another sex, age, height and mass.
fn other(plan: &str) -> String {
    plan.replace("id = \"LP-01\"", "id = \"LP-02\"")
        .replace("sex = \"male\"", "sex = \"female\"")
        .replace("age_years = 50", "age_years = 33")
        .replace("height_cm = 178.0", "height_cm = 161.0")
        .replace("mass_kg = 102.0", "mass_kg = 84.0")
}

struct Who {
    plan: Plan,
    baseline: Baseline,
    ph: Physiology,
}

fn who(text: &str) -> Who {
    let plan = parse_plan("lanes.toml", text).unwrap();
    let (baseline, ph) = calibrated(&plan).unwrap();
    Who { plan, baseline, ph }
}

fn alone(r: &LaneRun) -> Option<FastRun> {
    let l = r.lane;
    fast_run(
        l.plan,
        r.ph,
        r.baseline,
        r.comp,
        l.exercise,
        l.attendance,
        l.last_exercise_week,
    )
}

#[test]
fn runs_of_different_participants_and_scenarios_side_by_side_equal_each_alone() {
    let a = who(PLAN);
    let b = who(&other(PLAN));
    // A different RMR calibration (as a draw of the RMR error gives).
    let mut b2 = who(&other(PLAN));
    b2.ph.rmr_factor *= 1.07;
    b2.ph.intake_kcal_per_day += 90.0;
    let comp = a.plan.scenarios[0].compensation;
    let comps = [
        comp,
        Compensation {
            intake_fraction: 0.55,
            activity_fraction: 0.1,
            ..comp
        },
        Compensation {
            rmr_adaptation_kcal_per_kg: 5.0,
            intake_fraction: 0.1,
            ..comp
        },
        // Another lag: another step, so another group of lanes.
        Compensation {
            intake_lag_days: 7.0,
            ..comp
        },
        // No lag at all.
        Compensation {
            intake_lag_days: 0.0,
            ..comp
        },
    ];
    let mut runs = Vec::new();
    for (k, c) in comps.iter().enumerate() {
        for (j, w) in [&a, &b, &b2].into_iter().enumerate() {
            for exercise in [false, true] {
                let key = (k * 7 + j * 3) as u64;
                runs.push(LaneRun {
                    lane: Lane {
                        plan: &w.plan,
                        exercise,
                        attendance: exercise.then_some(Attendance {
                            probability: 0.8,
                            key,
                        }),
                        last_exercise_week: (exercise && j == 1).then_some(20),
                    },
                    ph: &w.ph,
                    baseline: &w.baseline,
                    comp: c,
                });
            }
        }
    }
    // Every prefix: full chunks, short ones, and groups split by the lag.
    for n in [1, 2, 5, 12, 13, runs.len()] {
        let (mut outs, mut ok) = (Vec::new(), Vec::new());
        run_lanes(&runs[..n], &mut outs, &mut ok);
        assert_eq!((outs.len(), ok.len()), (n, n));
        for (i, r) in runs[..n].iter().enumerate() {
            assert!(ok[i], "lane {i} of {n} stays in the model's range");
            assert_eq!(alone(r).as_ref(), Some(&outs[i]), "lane {i} of {n}");
        }
    }
    // The runs differ, so a mix-up between lanes could not pass unseen.
    let (mut outs, mut ok) = (Vec::new(), Vec::new());
    run_lanes(&runs, &mut outs, &mut ok);
    assert!(outs[1].mass_kg != outs[3].mass_kg && outs[3].mass_kg != outs[5].mass_kg);
    assert!(outs[1].mass_kg != outs[7].mass_kg);
}

#[test]
fn a_run_that_leaves_the_range_is_marked_and_its_neighbours_are_untouched() {
    let a = who(PLAN);
    let comp = a.plan.scenarios[0].compensation;
    // A diet cut of 3,000 kcal/day takes the fat mass below the model's range within
    // the 36 weeks: the lane loop gives that run to the general driver.
    let starving = Compensation {
        diet_change_kcal_per_day: -3000.0,
        ..comp
    };
    let lane = |exercise, comp| LaneRun {
        lane: Lane {
            plan: &a.plan,
            exercise,
            attendance: None,
            last_exercise_week: None,
        },
        ph: &a.ph,
        baseline: &a.baseline,
        comp,
    };
    let runs = [
        lane(false, &comp),
        lane(true, &comp),
        lane(true, &starving),
        lane(true, &comp),
        lane(false, &starving),
    ];
    assert!(alone(&runs[2]).is_none() && alone(&runs[4]).is_none());
    let (mut outs, mut ok) = (Vec::new(), Vec::new());
    run_lanes(&runs, &mut outs, &mut ok);
    assert_eq!(ok, [true, true, false, true, false]);
    for i in [0, 1, 3] {
        assert_eq!(alone(&runs[i]).as_ref(), Some(&outs[i]), "lane {i}");
    }
}
