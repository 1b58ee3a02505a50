//! Re-planning from a participant log (docs/model.md section 7): re-anchoring on the
//! measured mass along the Forbes curve, the energy invariant between weigh-ins, a
//! participant who follows the plan exactly, adherence per week and in total, and the
//! log on the command line (`log add`, `schedule`, `compare` and `goal` with `--log`).
//!
//! Expected values come from closed forms (docs/references.md section 5, the Forbes curve solved
//! with a Lambert W written here), from invariants (the first law on every stretch
//! between weigh-ins; an unchanged schedule when the weigh-ins equal the projection),
//! or from hand arithmetic on docs/model.md's equations. None is copied from the
//! program's own output.
//!
//! Every participant and every value here is invented; participant codes are
//! pseudonyms. The log file rules themselves are in tests/log.rs.

mod common;

use chrono::{Datelike, NaiveDate, Weekday};
use common::log_fixtures::*;
use common::{Scratch, array, num, text};
use dosewright::log::load_log;
use dosewright::model::energy::calibrate;
use dosewright::model::{BodyState, Bout};
use dosewright::plan::Plan;
use dosewright::simulate::integrate::State;
use dosewright::simulate::observed::{Observed, WeighIn, anchor};
use dosewright::simulate::{
    MassSource, RunMode, RunOutput, Simulation, WeekRecord, run, simulate, simulate_observed,
};

/// Forbes constant, kg (docs/model.md section 2 default; docs/references.md section 5, Forbes 1987).
const FORBES_KG: f64 = 10.4;

/// Principal branch of the Lambert W function for `x >= 0` by Newton's method on
/// `w e^w - x = 0` (written here, independent of the library's Halley iteration).
fn my_lambert_w0(x: f64) -> f64 {
    assert!(x >= 0.0 && x.is_finite());
    let mut w = (1.0 + x).ln(); // W0 is increasing and ln(1 + x) >= W0(x) for x >= 0
    for _ in 0..200 {
        let ew = w.exp();
        let step = (w * ew - x) / (ew * (w + 1.0));
        w -= step;
        if step.abs() < 1e-15 * w.abs().max(1e-300) {
            break;
        }
    }
    w
}

/// docs/references.md section 5, "Finite change along the Forbes curve" (derived row):
/// `FM1 = c W0[(FM0/c) exp((FM0 + dBW)/c)]`.
fn forbes_fm1(fm0: f64, dbw: f64, c: f64) -> f64 {
    c * my_lambert_w0(fm0 / c * ((fm0 + dbw) / c).exp())
}

/// The state a weigh-in should move `pre` to (docs/model.md section 7): the measured mass, with
/// `F = M %BF / 100` when body fat is measured, else along the Forbes curve.
fn expected_anchor(pre: &State, mass_kg: f64, body_fat_percent: Option<f64>) -> (f64, f64) {
    let fat = match body_fat_percent {
        Some(p) => mass_kg * p / 100.0,
        None => forbes_fm1(pre[0], mass_kg - (pre[0] + pre[1]), FORBES_KG),
    };
    (fat, mass_kg - fat)
}

fn day_of(plan: &Plan, date: NaiveDate) -> u32 {
    (date - plan.protocol.start).num_days() as u32
}

/// One scenario run with `run`, anchored at the weigh-ins of `obs` when given.
fn run_with(plan: &Plan, obs: Option<&Observed>) -> RunOutput {
    let (baseline, physiology) =
        calibrate(&plan.participant.subject, &plan.constants).expect("the baseline calibrates");
    let mode = RunMode {
        exercise: true,
        observed: obs,
        anchor: obs.is_some(),
        weeks: plan.protocol.total_weeks(),
        integrator: Default::default(),
        attendance: None,
        last_exercise_week: None,
    };
    run(plan, &physiology, &baseline, &plan.scenarios[0], mode, None).expect("the run succeeds")
}

/// `obs` without its weigh-in on `day`: the run then gives the state just before
/// that weigh-in would move it.
fn without_weigh_in(obs: &Observed, day: u32) -> Observed {
    let mut o = obs.clone();
    o.weigh_ins.retain(|w| w.day != day);
    o
}

/// Composite Newton-Cotes quadrature of samples one day apart: Simpson's rule on
/// pairs of intervals, Simpson's 3/8 rule for three (both exact to cubics).
fn quadrature(f: &[f64]) -> f64 {
    let n = f.len() - 1;
    assert!(
        n >= 2,
        "a stretch of at least two days is needed for the quadrature"
    );
    let mut total = 0.0;
    let mut i = 0;
    if n % 2 == 1 {
        total += 3.0 / 8.0 * (f[0] + 3.0 * f[1] + 3.0 * f[2] + f[3]);
        i = 3;
    }
    while i < n {
        total += (f[i] + 4.0 * f[i + 1] + f[i + 2]) / 3.0;
        i += 2;
    }
    total
}

#[test]
fn my_forbes_closed_form_gives_the_references_check_values() {
    // docs/references.md section 5, "Macroscopic Forbes check values" (derived with the closed
    // form): FM0 30, dBW -10 -> FM1 22.84, dFFM -2.84; FM0 16, dBW -5 -> dFM -2.91,
    // dFFM -2.09 (two decimals as printed there).
    let fm1 = forbes_fm1(30.0, -10.0, FORBES_KG);
    assert!((fm1 - 22.84).abs() < 0.005, "{fm1}");
    assert!((-10.0 - (fm1 - 30.0) - (-2.84)).abs() < 0.005);
    let fm1 = forbes_fm1(16.0, -5.0, FORBES_KG);
    assert!((fm1 - 16.0 - (-2.91)).abs() < 0.005, "{}", fm1 - 16.0);
    assert!((-5.0 - (fm1 - 16.0) - (-2.09)).abs() < 0.005);
    // Closed form: the curve's invariant L - c ln F is kept (L = M - F).
    for (fm0, m0, dbw) in [(30.0, 80.0, -10.0), (16.0, 70.0, -5.0), (45.0, 110.0, 3.0)] {
        let fm1 = forbes_fm1(fm0, dbw, FORBES_KG);
        let before = (m0 - fm0) - FORBES_KG * f64::ln(fm0);
        let after = (m0 + dbw - fm1) - FORBES_KG * fm1.ln();
        assert!((before - after).abs() < 1e-12, "{before} {after}");
    }
}

#[test]
fn the_librarys_lambert_w_satisfies_its_definition_and_my_newton_values() {
    // Closed form: W0(x) e^W0(x) = x; W0(e) = 1; W0(0) = 0.
    assert!((dosewright::model::composition::lambert_w0(std::f64::consts::E) - 1.0).abs() < 1e-14);
    assert!(dosewright::model::composition::lambert_w0(0.0).abs() < 1e-15);
    for x in [1e-6, 0.05, 0.5, 1.0, 3.7, 25.0, 1e3, 1e6, 1e12] {
        let w = dosewright::model::composition::lambert_w0(x);
        assert!(((w * w.exp()) - x).abs() <= 1e-12 * x, "x {x}: W {w}");
        assert!(
            (w - my_lambert_w0(x)).abs() <= 1e-12 * w.abs().max(1e-12),
            "x {x}"
        );
    }
}

#[test]
fn anchor_moves_along_the_forbes_curve_as_the_closed_form_says() {
    // Closed form (docs/references.md section 5) against `anchor`, including the two check cases
    // of that section: FM0 30 kg, dBW -10 kg -> FM1 22.84 kg; FM0 16, dBW -5 -> -2.91.
    let cases = [
        (30.0, 50.0, -10.0),
        (16.0, 54.0, -5.0),
        (41.3, 54.7, -0.8),
        (41.3, 54.7, 1.2),
        (8.0, 62.0, -2.0),
        (70.0, 75.0, -15.0),
    ];
    for (fat, lean, dbw) in cases {
        let y = State::new(fat, lean, 123.4, 5678.9);
        let w = WeighIn {
            day: 10,
            date: NaiveDate::from_ymd_opt(2027, 3, 11).unwrap(),
            mass_kg: fat + lean + dbw,
            body_fat_percent: None,
        };
        let moved = anchor(&y, &w, FORBES_KG);
        let fm1 = forbes_fm1(fat, dbw, FORBES_KG);
        assert!(
            (moved[0] - fm1).abs() < 1e-9,
            "F0 {fat} dBW {dbw}: {} vs {fm1}",
            moved[0]
        );
        assert!((moved[0] + moved[1] - w.mass_kg).abs() < 1e-9);
        // docs/model.md section 7: Xbar and the running integral stay as they were.
        assert_eq!((moved[2], moved[3]), (123.4, 5678.9));
    }
    assert!(
        (anchor(
            &State::new(30.0, 50.0, 0.0, 0.0),
            &weigh(70.0, None),
            FORBES_KG
        )[0] - 22.84)
            .abs()
            < 0.005
    );
    // docs/model.md section 7: with a measured body fat, F = M %BF / 100, whatever the state was.
    let moved = anchor(
        &State::new(41.0, 55.0, 7.0, 8.0),
        &weigh(95.9, Some(42.0)),
        FORBES_KG,
    );
    assert!((moved[0] - 95.9 * 0.42).abs() < 1e-12);
    assert!((moved[1] - 95.9 * 0.58).abs() < 1e-9);
    assert_eq!((moved[2], moved[3]), (7.0, 8.0));
}

/// An invented participant whose RMR follows Katch-McArdle (`370 + 21.6 L`, docs/model.md
/// 3), so that a week's reference RMR reveals its reference fat-free mass; every
/// compensation channel is on. Start Monday 2027-03-01, 8 weeks and 2 of follow-up.
const ANCHOR_PLAN: &str = r#"[participant]
id = "RA-552"
sex = "female"
age_years = 46
height_cm = 167.0
mass_kg = 96.0
body_fat_percent = 43.0
pal = 1.55

[protocol]
start = 2027-03-01
weeks = 8
follow_up_weeks = 2
session_days = ["mon", "wed", "fri"]

[protocol.dose]
kcal_per_week = 1500

[activity]
met = 5.0

[model]
rmr_equation = "katch-mcardle"

[[scenario]]
name = "partly compensated"
intake_fraction = 0.3
intake_lag_days = 14.0
activity_fraction = 0.1
rmr_adaptation_kcal_per_kg = 5.0
"#;

/// RMR adaptation of ANCHOR_PLAN, kcal/day per kg lost.
const ANCHOR_ADAPTATION: f64 = 5.0;

/// Weigh-ins (day, kg, body fat %): on week first days (0, 7, 21) and mid-week (10,
/// 17, 31), with and without a measured body fat; every stretch between weigh-ins
/// and week boundaries is at least 3 days long.
const ANCHOR_WEIGH_INS: [(u32, f64, Option<f64>); 6] = [
    (0, 96.4, None),
    (7, 95.6, None),
    (10, 95.9, Some(42.0)),
    (17, 95.1, None),
    (21, 94.8, Some(41.5)),
    (31, 94.3, None),
];

/// The last day of the log (a Thursday, an unplanned day with a session).
const ANCHOR_AS_OF: u32 = 38;

fn anchor_log(plan: &Plan) -> String {
    // Sessions: (day, minutes, MET); one missed (0), one day of two bouts, one at a
    // stated MET, one on a day the plan does not list.
    let sessions: [(u32, f64, Option<f64>); 18] = [
        (0, 30.0, None),
        (2, 32.0, Some(6.0)),
        (4, 0.0, None),
        (7, 35.0, None),
        (9, 35.0, None),
        (11, 36.0, None),
        (14, 36.0, None),
        (16, 20.0, None),
        (16, 18.0, None),
        (18, 37.0, None),
        (21, 38.0, None),
        (23, 38.0, None),
        (25, 38.0, None),
        (28, 38.0, None),
        (30, 38.0, None),
        (32, 39.0, None),
        (35, 40.0, None),
        (38, 40.0, None),
    ];
    let mut rows: Vec<(u32, u8, String)> = Vec::new();
    for (d, m, bf) in ANCHOR_WEIGH_INS {
        rows.push((d, 0, weigh_row(day_date(plan, d), m, bf)));
    }
    for (i, (d, minutes, met)) in sessions.iter().enumerate() {
        let row = session_row(day_date(plan, *d), *minutes, *met, None, None, "");
        rows.push((*d, 1 + i as u8, row));
    }
    rows.sort_by_key(|r| (r.0, r.1));
    log_text(&rows.into_iter().map(|r| r.2).collect::<Vec<_>>())
}

#[test]
fn re_anchoring_lands_on_the_measured_mass_and_moves_along_the_forbes_curve() {
    let plan = plan_of("anchor.toml", ANCHOR_PLAN);
    assert_eq!(plan.protocol.start.weekday(), Weekday::Mon);
    let obs = observed(&plan, &anchor_log(&plan), None);
    assert_eq!(obs.as_of_day, ANCHOR_AS_OF);
    let sim = simulate_observed(&plan, Some(&obs)).expect("the re-planned run succeeds");
    let weeks = &sim.scenarios[0].weeks;
    let full = run_with(&plan, Some(&obs));
    let (baseline, physiology) = calibrate(&plan.participant.subject, &plan.constants).unwrap();
    assert_eq!(physiology.rmr_factor, 1.0, "no measured RMR: k_R = 1");
    let m0 = baseline.mass_kg;

    for (day, mass, bf) in ANCHOR_WEIGH_INS {
        // The state just before the weigh-in: the same data without that weigh-in
        // (identical up to that day), or the plan's baseline on day 0.
        let pre = if day == 0 {
            State::new(baseline.fat_mass_kg, baseline.fat_free_mass_kg, 0.0, 0.0)
        } else {
            run_with(&plan, Some(&without_weigh_in(&obs, day))).daily[day as usize]
        };
        let (fat, lean) = expected_anchor(&pre, mass, bf);
        if day % 7 == 0 {
            // Week's first day: the week's reference state is the measured one.
            let w = &weeks[(day / 7) as usize];
            assert!(
                (w.reference_mass_kg - mass).abs() < 1e-9,
                "week {}: reference {} vs measured {mass}",
                w.week,
                w.reference_mass_kg
            );
            assert_eq!(w.mass_source, MassSource::Measured);
            // Katch-McArdle (docs/model.md section 3) with adaptation (docs/model.md section 5) inverted for L.
            let lean_ref = (w.reference_rmr_kcal_per_day
                + ANCHOR_ADAPTATION * (m0 - w.reference_mass_kg).max(0.0)
                - 370.0)
                / 21.6;
            assert!(
                (lean_ref - lean).abs() < 1e-8,
                "week {}: reference fat-free mass {lean_ref} vs closed form {lean}",
                w.week
            );
        } else {
            // Mid-week: the daily state of that day is the measured one.
            let y = full.daily[day as usize];
            assert!(
                (y[0] + y[1] - mass).abs() < 1e-9,
                "day {day}: {} vs {mass}",
                y[0] + y[1]
            );
            assert!(
                (y[0] - fat).abs() < 1e-7,
                "day {day}: fat {} vs closed form {fat}",
                y[0]
            );
            // docs/model.md section 7: Xbar stays as it was (the solver's dense output aside).
            assert!(
                (y[2] - pre[2]).abs() < 1e-6,
                "day {day}: Xbar {} vs {}",
                y[2],
                pre[2]
            );
        }
    }
    // The measured mass moves the projection: a stretch later the state differs
    // from the run without any weigh-in.
    let plain = run_with(&plan, None);
    assert!((plain.daily[17][0] + plain.daily[17][1] - 95.1).abs() > 0.1);
}

/// The week's bouts as `run` integrates them (docs/model.md section 7): the delivered sessions on
/// days up to as-of, the planned ones after it.
fn bouts_of_week(plan: &Plan, obs: &Observed, week: &WeekRecord) -> Vec<Bout> {
    let s = 7 * (week.week - 1);
    let mut bouts: Vec<Bout> = week
        .sessions
        .iter()
        .filter(|r| day_of(plan, r.date) > obs.as_of_day)
        .map(|r| Bout {
            minutes: f64::from(r.minutes),
            intensity: plan.activity.intensity.clone(),
        })
        .collect();
    bouts.extend(
        obs.sessions
            .iter()
            .filter(|d| d.day >= s && d.day < s + 7 && d.day <= obs.as_of_day && d.minutes > 0.0)
            .map(|d| Bout {
                minutes: d.minutes,
                intensity: d.intensity.clone(),
            }),
    );
    bouts
}

#[test]
fn the_energy_invariant_holds_on_every_stretch_between_weigh_ins() {
    // docs/model.md sections 2 and 6: rho_F dF + rho_L dL equals the integral of EI - EE, by an
    // independent quadrature (Simpson / 3-8 rule over the daily states, with
    // `Physiology::fluxes`), on each stretch between weigh-ins and week boundaries.
    let plan = plan_of("anchor.toml", ANCHOR_PLAN);
    let obs = observed(&plan, &anchor_log(&plan), None);
    let full = run_with(&plan, Some(&obs));
    let (baseline, physiology) = calibrate(&plan.participant.subject, &plan.constants).unwrap();
    let comp = plan.scenarios[0].compensation;
    let (rho_f, rho_l) = (
        plan.constants.fat_kcal_per_kg,
        plan.constants.lean_kcal_per_kg,
    );
    let anchor_days: Vec<u32> = ANCHOR_WEIGH_INS.iter().map(|w| w.0).collect();
    let pre_of = |day: u32| -> State {
        if day == 0 {
            State::new(baseline.fat_mass_kg, baseline.fat_free_mass_kg, 0.0, 0.0)
        } else {
            run_with(&plan, Some(&without_weigh_in(&obs, day))).daily[day as usize]
        }
    };
    let mut stretches = 0;
    for week in &full.weeks {
        let s = 7 * (week.week - 1);
        let bouts = bouts_of_week(&plan, &obs, week);
        let mut cuts: Vec<u32> = anchor_days
            .iter()
            .copied()
            .filter(|d| *d > s && *d < s + 7)
            .collect();
        cuts.insert(0, s);
        cuts.push(s + 7);
        for pair in cuts.windows(2) {
            let (a, b) = (pair[0], pair[1]);
            let mut states: Vec<State> = Vec::new();
            // Start: just after the weigh-in on day a, if there is one.
            states.push(match ANCHOR_WEIGH_INS.iter().find(|w| w.0 == a) {
                Some(&(_, m, bf)) => {
                    let pre = pre_of(a);
                    let (f, l) = expected_anchor(&pre, m, bf);
                    State::new(f, l, pre[2], pre[3])
                }
                None => full.daily[a as usize],
            });
            for d in a + 1..b {
                states.push(full.daily[d as usize]);
            }
            // End: just before the weigh-in on day b, if there is one.
            states.push(if anchor_days.contains(&b) {
                pre_of(b)
            } else {
                full.daily[b as usize]
            });
            let balance: Vec<f64> = states
                .iter()
                .map(|y| {
                    let body = BodyState {
                        fat_kg: y[0],
                        lean_kg: y[1],
                        lagged_exercise_kcal_per_day: y[2],
                    };
                    let f = physiology.fluxes(&comp, &bouts, &body);
                    f.intake - f.expenditure
                })
                .collect();
            let integral = quadrature(&balance);
            let scale = quadrature(&balance.iter().map(|x| x.abs()).collect::<Vec<_>>());
            let (y0, y1) = (states[0], states[states.len() - 1]);
            let stored = rho_f * (y1[0] - y0[0]) + rho_l * (y1[1] - y0[1]);
            assert!(
                (stored - integral).abs() <= 1e-6 * scale + 1e-6,
                "days {a}-{b}: stored {stored} kcal, integral of EI - EE {integral} kcal"
            );
            assert!(
                scale > 10.0,
                "days {a}-{b}: the stretch carries an imbalance"
            );
            stretches += 1;
        }
    }
    // 10 weeks, and mid-week weigh-ins split weeks 2, 3 and 5.
    assert_eq!(stretches, 13);
}

#[test]
fn the_daily_state_on_every_weigh_in_day_is_the_measured_one() {
    // docs/model.md section 7: a weigh-in dated D is the state at 00:00 of D; RunOutput.daily is
    // documented as the state at 00:00 of every day. Both kinds of weigh-in day
    // (week start and mid-week) must then hold the measured mass.
    let plan = plan_of("anchor.toml", ANCHOR_PLAN);
    let obs = observed(&plan, &anchor_log(&plan), None);
    let full = run_with(&plan, Some(&obs));
    for (day, mass, _) in ANCHOR_WEIGH_INS {
        let y = full.daily[day as usize];
        assert!(
            (y[0] + y[1] - mass).abs() < 1e-9,
            "day {day}: daily mass {} vs measured {mass}",
            y[0] + y[1]
        );
    }
}

/// An invented participant with an estimated body fat, a net dose (so minutes depend
/// on the reference mass and RMR), a ramp, four session days and an eating-back
/// scenario with a lag.
const FOLLOW_PLAN: &str = r#"[participant]
id = "RP-730"
sex = "male"
age_years = 52
height_cm = 176.0
mass_kg = 101.0
pal = 1.45

[protocol]
start = 2027-01-04
weeks = 16
follow_up_weeks = 4
session_days = ["mon", "wed", "fri", "sat"]
max_session_minutes = 90

[protocol.dose]
kcal_per_week = 1600
basis = "net"

[protocol.ramp]
weeks = 4

[activity]
compendium_code = "17200"

[[scenario]]
name = "eats some back"
intake_fraction = 0.2
intake_lag_days = 10.0
"#;

#[test]
fn a_participant_who_follows_the_plan_exactly_gets_the_same_schedule() {
    // Invariant (docs/model.md section 7): sessions delivered as prescribed and weigh-ins equal
    // to the projection (full precision) leave every week as the plain run has it.
    let plan = plan_of("follow.toml", FOLLOW_PLAN);
    let plain = simulate(&plan).unwrap();
    let projection = run_with(&plan, None);
    let as_of = 80u32; // Thursday of week 12
    let weigh_days = [0u32, 7, 14, 24, 35, 45, 56, 63, 77];
    let mut rows = Vec::new();
    for w in &plain.scenarios[0].weeks {
        let s = 7 * (w.week - 1);
        for d in s..s + 7 {
            if weigh_days.contains(&d) {
                let y = projection.daily[d as usize];
                rows.push(weigh_row(day_date(&plan, d), y[0] + y[1], None));
            }
            for session in w.sessions.iter().filter(|x| day_of(&plan, x.date) == d) {
                if d <= as_of {
                    rows.push(plain_session(session.date, f64::from(session.minutes)));
                }
            }
        }
    }
    let obs = observed(&plan, &log_text(&rows), Some(day_date(&plan, as_of)));
    let logged = simulate_observed(&plan, Some(&obs)).unwrap();
    let (a, b) = (&plain.scenarios[0].weeks, &logged.scenarios[0].weeks);
    assert_eq!(a.len(), 20);
    assert_eq!(a.len(), b.len());
    for (p, l) in a.iter().zip(b) {
        assert_eq!(
            p.minutes_per_session, l.minutes_per_session,
            "week {}",
            p.week
        );
        let dates = |w: &WeekRecord| {
            w.sessions
                .iter()
                .map(|s| (s.date, s.minutes))
                .collect::<Vec<_>>()
        };
        assert_eq!(dates(p), dates(l), "week {}", p.week);
        assert!(
            (p.reference_mass_kg - l.reference_mass_kg).abs() < 1e-6,
            "week {}: {} vs {}",
            p.week,
            p.reference_mass_kg,
            l.reference_mass_kg
        );
        assert!(
            (p.end.mass_kg - l.end.mass_kg).abs() < 1e-6,
            "week {}",
            p.week
        );
        // docs/model.md section 4: measured when a weigh-in falls on the week's first day or in
        // the 6 days before (the log holds weigh-ins up to as-of only).
        let s = 7 * (l.week - 1);
        let measured = weigh_days.iter().any(|d| *d <= s && d + 6 >= s);
        let want = if measured {
            MassSource::Measured
        } else {
            MassSource::Projected
        };
        assert_eq!(l.mass_source, want, "week {}", l.week);
    }
    assert!(
        (plain.scenarios[0].outcome.mass_kg - logged.scenarios[0].outcome.mass_kg).abs() < 1e-6
    );
    // The rule gives a mix here, so both kinds are checked.
    assert!(
        b.iter()
            .any(|w| w.mass_source == MassSource::Projected && w.week < 12)
    );
    assert!(
        b.iter()
            .filter(|w| w.mass_source == MassSource::Measured)
            .count()
            >= 6
    );
}

/// Two weeks: week 1 misses Friday with no row; week 2 records Wednesday as missed
/// (0 minutes) and does Friday as two bouts; one session at a stated 6 MET.
const TWO_WEEK_LOG: &str =
    "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note
2027-01-04,weigh-in,90.0,,,,,,,baseline
2027-01-04,session,,,40,,,120,12,
2027-01-06,session,,,35,,6.0,132,14,hill intervals
2027-01-11,weigh-in,89.2,,,,,,,
2027-01-11,session,,,39,,,125,13,
2027-01-13,session,,,0,,,,,missed: travel
2027-01-15,session,,,20,,,128,15,
2027-01-15,session,,,20,,,,16,second bout
2027-01-17,weigh-in,88.9,,,,,,,
";

/// The hand-computed adherence of one week.
struct Hand {
    planned: u32,
    delivered: u32,
    min_presc: f64,
    min_deliv: f64,
    net_presc: f64,
    net_deliv: f64,
    dose_presc: f64,
    dose_deliv: f64,
    rpe: f64,
    hr: f64,
}

/// Weeks 1 and 2 of TWO_WEEK_LOG; `dose_of(energy_on_basis)` turns energy into the
/// plan's unit, `per_min(met, m)` is the plan's basis, `target` the energy per session.
fn hand_weeks(
    target: impl Fn(f64) -> f64,
    per_min: fn(f64, f64) -> f64,
    dose_of: impl Fn(f64) -> f64,
) -> [Hand; 2] {
    // Reference masses: the weigh-ins on the weeks' first days (re-anchored).
    let (m1, m2) = (90.0, 89.2);
    let minutes = |m: f64| (target(m) / per_min(5.0, m) - 1e-9).ceil();
    let (d1, d2) = (minutes(m1), minutes(m2));
    [
        Hand {
            planned: 3,
            delivered: 2,
            min_presc: 3.0 * d1,
            min_deliv: 75.0,
            net_presc: 3.0 * d1 * net(5.0, m1),
            net_deliv: 40.0 * net(5.0, m1) + 35.0 * net(6.0, m1),
            dose_presc: dose_of(3.0 * d1 * per_min(5.0, m1)),
            dose_deliv: dose_of(40.0 * per_min(5.0, m1) + 35.0 * per_min(6.0, m1)),
            rpe: (12.0 + 14.0) / 2.0,
            hr: (120.0 + 132.0) / 2.0,
        },
        Hand {
            planned: 3,
            delivered: 2,
            min_presc: 3.0 * d2,
            min_deliv: 79.0,
            net_presc: 3.0 * d2 * net(5.0, m2),
            net_deliv: 79.0 * net(5.0, m2),
            dose_presc: dose_of(3.0 * d2 * per_min(5.0, m2)),
            dose_deliv: dose_of(79.0 * per_min(5.0, m2)),
            rpe: (13.0 + 15.0 + 16.0) / 3.0,
            hr: (125.0 + 128.0) / 2.0,
        },
    ]
}

fn check_adherence(sim: &Simulation, hand: &[Hand; 2], tol: f64) {
    let sc = &sim.scenarios[0];
    for (i, h) in hand.iter().enumerate() {
        let a = sc.weeks[i]
            .adherence
            .as_ref()
            .expect("a covered week has adherence");
        assert_eq!(a.week, i as u32 + 1);
        assert_eq!(a.days_covered, 7);
        assert_eq!(a.sessions_planned, h.planned, "week {}", i + 1);
        assert_eq!(a.sessions_delivered, h.delivered, "week {}", i + 1);
        close(a.minutes_prescribed, h.min_presc, tol, "minutes prescribed");
        close(a.minutes_delivered, h.min_deliv, tol, "minutes delivered");
        close(a.net_kcal_prescribed, h.net_presc, tol, "net prescribed");
        close(a.net_kcal_delivered, h.net_deliv, tol, "net delivered");
        close(a.dose_prescribed, h.dose_presc, tol, "dose prescribed");
        close(a.dose_delivered, h.dose_deliv, tol, "dose delivered");
        close(a.mean_rpe.unwrap(), h.rpe, tol, "mean RPE");
        close(a.mean_hr_bpm.unwrap(), h.hr, tol, "mean HR");
        assert_eq!(
            f64::from(sc.weeks[i].minutes_per_session) * 3.0,
            h.min_presc,
            "the prescription itself (docs/model.md section 4, step 3)"
        );
    }
    assert!(
        sc.weeks[2].adherence.is_none(),
        "week 3 starts after the log's last date"
    );
    let t = sc.adherence.as_ref().expect("a logged run has totals");
    assert_eq!(t.weeks, 2);
    assert_eq!(t.sessions_planned, 6);
    assert_eq!(t.sessions_delivered, 4);
    let sum = |f: fn(&Hand) -> f64| hand.iter().map(f).sum::<f64>();
    close(
        t.minutes_prescribed,
        sum(|h| h.min_presc),
        tol,
        "total minutes prescribed",
    );
    close(t.minutes_delivered, 154.0, tol, "total minutes delivered");
    close(
        t.net_kcal_prescribed,
        sum(|h| h.net_presc),
        tol,
        "total net prescribed",
    );
    close(
        t.net_kcal_delivered,
        sum(|h| h.net_deliv),
        tol,
        "total net delivered",
    );
    close(
        t.dose_prescribed_per_week,
        sum(|h| h.dose_presc) / 2.0,
        tol,
        "weekly dose prescribed",
    );
    close(
        t.dose_delivered_per_week,
        sum(|h| h.dose_deliv) / 2.0,
        tol,
        "weekly dose delivered",
    );
    // Over every session that records one (not the mean of the weekly means).
    close(
        t.mean_rpe.unwrap(),
        (12.0 + 14.0 + 13.0 + 15.0 + 16.0) / 5.0,
        tol,
        "mean RPE",
    );
    close(
        t.mean_hr_bpm.unwrap(),
        (120.0 + 132.0 + 125.0 + 128.0) / 4.0,
        tol,
        "mean HR",
    );
}

#[test]
fn adherence_per_week_and_in_total_matches_hand_arithmetic() {
    // kcal_per_kg_week = 10 on baseline mass, gross: 300 kcal a session; the dose in
    // the plan's unit is the week's gross energy over the baseline mass.
    let plan = plan_of("adherence.toml", ADHERENCE_PLAN);
    let obs = observed(&plan, TWO_WEEK_LOG, None);
    let sim = simulate_observed(&plan, Some(&obs)).unwrap();
    let hand = hand_weeks(|_| 10.0 * 90.0 / 3.0, gross, |e| e / 90.0);
    check_adherence(&sim, &hand, 1e-9);
}

#[test]
fn adherence_of_a_net_per_session_dose_is_in_kcal_per_session() {
    // kcal_per_session = 300 on the net basis: the dose delivered is the week's net
    // energy per planned session.
    let text = common::edit(
        ADHERENCE_PLAN,
        &[(
            "kcal_per_kg_week = 10.0",
            "kcal_per_session = 300\nbasis = \"net\"",
        )],
    );
    let plan = plan_of("adherence-net.toml", &text);
    let obs = observed(&plan, TWO_WEEK_LOG, None);
    let sim = simulate_observed(&plan, Some(&obs)).unwrap();
    let hand = hand_weeks(|_| 300.0, net, |e| e / 3.0);
    check_adherence(&sim, &hand, 1e-9);
}

#[test]
fn schedule_json_carries_the_same_adherence() {
    let dir = Scratch::new("replan-adherence");
    dir.write("plan.toml", ADHERENCE_PLAN);
    dir.write("log.csv", TWO_WEEK_LOG);
    let r = common::run(dir.cmd().args([
        "schedule",
        "plan.toml",
        "--log",
        "log.csv",
        "--format",
        "json",
    ]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let j: serde_json::Value = serde_json::from_str(&r.stdout).unwrap();
    let sc = &array(&j, "scenarios")[0];
    let hand = hand_weeks(|_| 300.0, gross, |e| e / 90.0);
    for (i, h) in hand.iter().enumerate() {
        let a = &array(sc, "weeks")[i]["adherence"];
        assert_eq!(num(a, "sessions_planned"), f64::from(h.planned));
        assert_eq!(num(a, "sessions_delivered"), f64::from(h.delivered));
        close(num(a, "minutes_delivered"), h.min_deliv, 1e-3, "minutes");
        close(num(a, "net_kcal_delivered"), h.net_deliv, 1e-3, "net");
        close(num(a, "dose_delivered"), h.dose_deliv, 1e-3, "dose");
        close(num(a, "mean_rpe"), h.rpe, 1e-3, "RPE");
        close(num(a, "mean_hr_bpm"), h.hr, 1e-3, "HR");
    }
    let t = &sc["adherence"];
    close(num(t, "sessions_delivered"), 4.0, 0.0, "sessions");
    close(num(t, "mean_rpe"), 14.0, 1e-3, "RPE");
    close(num(t, "mean_hr_bpm"), 126.25, 1e-3, "HR");
    let weeks = array(sc, "weeks");
    assert_eq!(text(&weeks[1], "mass_source"), "measured");
    close(
        num(&weeks[1], "reference_mass_kg"),
        89.2,
        1e-4,
        "week 2 reference mass",
    );
}

#[test]
fn log_add_appends_rows_that_schedule_then_uses() {
    // docs/file-formats.md section 3 ("The participant log"); docs/model.md section 7 for as-of.
    let dir = Scratch::new("replan-log-add");
    dir.write("plan.toml", ADHERENCE_PLAN);
    let first = "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note
2027-01-04,weigh-in,90.0,,,,,,,
2027-01-04,session,,,39,,,,,
2027-01-06,session,,,39,,,,,
2027-01-08,session,,,39,,,,,
";
    let path = dir.write("log.csv", first);
    let add = |args: &[&str]| {
        common::run(
            dir.cmd()
                .args(["log", "add", "plan.toml", "--log", "log.csv"])
                .args(args),
        )
    };
    let r = add(&["--date", "2027-01-11", "--weigh-in", "89.4"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stdout, "");
    let r = add(&[
        "--date",
        "2027-01-11",
        "--session",
        "35",
        "--hr",
        "130",
        "--rpe",
        "13",
    ]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stdout, "");
    // docs/file-formats.md section 3 columns: the earlier bytes kept, two rows after them.
    let now = std::fs::read_to_string(&path).unwrap();
    assert_eq!(
        now,
        format!("{first}2027-01-11,weigh-in,89.4,,,,,,,\n2027-01-11,session,,,35,,,130,13,\n")
    );
    let plan = plan_of("plan.toml", ADHERENCE_PLAN);
    let (log, warnings) = load_log(&path, &plan, None).expect("the appended log parses");
    assert!(warnings.is_empty());
    assert_eq!(log.rows.len(), 6);

    // A failed add (RPE off the Borg 6-20 scale; a date before the start) changes
    // nothing and exits 2 with nothing on standard output.
    let before = std::fs::read(&path).unwrap();
    for args in [
        &["--date", "2027-01-13", "--session", "30", "--rpe", "25"][..],
        &["--date", "2027-01-03", "--weigh-in", "89.0"],
    ] {
        let r = add(args);
        assert_eq!(r.code, Some(2), "{args:?}: {}", r.stderr);
        assert_eq!(r.stdout, "", "{args:?}");
        assert!(!r.stderr.is_empty());
        assert_eq!(
            std::fs::read(&path).unwrap(),
            before,
            "{args:?}: the file is unchanged"
        );
    }
    assert!(
        add(&["--date", "2027-01-13", "--session", "30", "--rpe", "25"])
            .stderr
            .contains("rpe")
    );
    assert!(
        add(&["--date", "2027-01-03", "--weigh-in", "89.0"])
            .stderr
            .contains("before the protocol start")
    );
    assert_eq!(dir.listing(), vec!["log.csv", "plan.toml"]);

    // schedule --log: as-of defaults to the last row; week 2 is re-anchored at the
    // new weigh-in and its adherence counts the new session.
    let r = common::run(dir.cmd().args([
        "schedule",
        "plan.toml",
        "--log",
        "log.csv",
        "--format",
        "json",
    ]));
    let j = json_of(&r, "schedule --log");
    assert_eq!(text(&j["log"], "as_of"), "2027-01-11");
    let week2 = &array(&array(&j, "scenarios")[0], "weeks")[1];
    close(
        num(week2, "reference_mass_kg"),
        89.4,
        1e-4,
        "re-anchored reference mass",
    );
    assert_eq!(text(week2, "mass_source"), "measured");
    let a = &week2["adherence"];
    assert_eq!(num(a, "days_covered"), 1.0);
    assert_eq!(num(a, "sessions_planned"), 1.0);
    assert_eq!(num(a, "sessions_delivered"), 1.0);
    close(num(a, "minutes_delivered"), 35.0, 0.0, "minutes");
    close(num(a, "mean_rpe"), 13.0, 0.0, "RPE");
    close(num(a, "mean_hr_bpm"), 130.0, 0.0, "HR");

    // --as-of before the last row: rows after as-of are an error (docs/design.md section 1, "`--as-of` and the log's last row").
    let r = common::run(dir.cmd().args([
        "schedule",
        "plan.toml",
        "--log",
        "log.csv",
        "--as-of",
        "2027-01-08",
        "--format",
        "json",
    ]));
    assert_eq!(r.code, Some(2), "{}", r.stderr);
    assert_eq!(r.stdout, "");
    assert!(r.stderr.contains("after the as-of date"), "{}", r.stderr);
    // --as-of after the last row: the days between count, planned sessions with no
    // row are missed (docs/model.md section 7).
    let r = common::run(dir.cmd().args([
        "schedule",
        "plan.toml",
        "--log",
        "log.csv",
        "--as-of",
        "2027-01-20",
        "--format",
        "json",
    ]));
    let j = json_of(&r, "schedule --as-of");
    assert_eq!(text(&j["log"], "as_of"), "2027-01-20");
    let weeks = array(&array(&j, "scenarios")[0], "weeks");
    let (w2, w3) = (&weeks[1]["adherence"], &weeks[2]["adherence"]);
    assert_eq!(
        (num(w2, "days_covered"), num(w2, "sessions_planned")),
        (7.0, 3.0)
    );
    assert_eq!(num(w2, "sessions_delivered"), 1.0);
    assert_eq!(
        (num(w3, "days_covered"), num(w3, "sessions_planned")),
        (3.0, 2.0)
    );
    assert_eq!(num(w3, "sessions_delivered"), 0.0);
    assert!(weeks[3].get("adherence").is_none_or(|a| a.is_null()));
}

/// ADHERENCE_PLAN's participant followed exactly for three weeks, then weighed
/// 1.0 kg above the projection on the first day of week 4, before that day's
/// session (delivered as the plain schedule has it).
fn offset_log(plan: &Plan) -> String {
    let sim = simulate(plan).unwrap();
    let weeks = &sim.scenarios[0].weeks;
    let mut rows = vec![weigh_row(plan.protocol.start, 90.0, None)];
    for w in &weeks[..3] {
        for s in &w.sessions {
            rows.push(plain_session(s.date, f64::from(s.minutes)));
        }
    }
    rows.push(weigh_row(weeks[3].start, weeks[2].end.mass_kg + 1.0, None));
    let monday = &weeks[3].sessions[0];
    assert_eq!(monday.date, weeks[3].start);
    rows.push(plain_session(monday.date, f64::from(monday.minutes)));
    log_text(&rows)
}

/// ADHERENCE_PLAN with minutes rounded up to 5: 40 min a session for any reference
/// mass from 88 to 91 kg, so the offset below changes no prescription.
fn five_minute_plan() -> String {
    common::edit(
        ADHERENCE_PLAN,
        &[(
            "session_days = [\"mon\", \"wed\", \"fri\"]",
            "session_days = [\"mon\", \"wed\", \"fri\"]\nround_minutes_to = 5",
        )],
    )
}

#[test]
fn compare_and_goal_take_the_log() {
    let dir = Scratch::new("replan-compare-goal");
    let plan_text = five_minute_plan();
    dir.write("plan.toml", &plan_text);
    let plan = plan_of("plan.toml", &plan_text);
    dir.write("log.csv", offset_log(&plan));
    let row10 = |j: &serde_json::Value| -> f64 {
        let rows = array(&array(j, "scenarios")[0], "rows");
        let r = rows
            .iter()
            .find(|r| num(r, "week") == 10.0)
            .expect("the follow-up end is a checkpoint");
        num(r, "mass_kg")
    };
    let with_log = json_of(
        &common::run(dir.cmd().args([
            "compare",
            "plan.toml",
            "--log",
            "log.csv",
            "--format",
            "json",
        ])),
        "compare --log",
    );
    let without = json_of(
        &common::run(dir.cmd().args(["compare", "plan.toml", "--format", "json"])),
        "compare",
    );
    let minutes: Vec<u32> = array(&array(&with_log, "scenarios")[0], "rows")
        .iter()
        .filter(|r| num(r, "week") <= 8.0)
        .map(|r| num(r, "minutes_per_session") as u32)
        .collect();
    assert!(minutes.iter().all(|m| *m == 40), "{minutes:?}");
    // docs/model.md section 6, linearised: an offset of mass relaxes as exp(-t k / rho_eff), k the
    // extra expenditure per kg: Mifflin's 10 kcal/kg/day plus delta (section 3), and
    // while sessions run the extra net energy of the same minutes at a heavier mass
    // (section 4; 3 x 40 min a week at 5 MET); rho_eff of the Forbes partition
    // (section 2). From day 21 to day 70, sessions until day 56.
    let rmr0 = rmr_ad(90.0);
    let delta = (1.5 * rmr0 - rmr0 - 0.10 * 1.5 * rmr0) / 90.0;
    let exercise_per_kg = 120.0 / 7.0 * (5.0 * 3.5 / 200.0 - 10.0 / 1440.0);
    let fat = 36.0;
    let rho_eff = (9500.0 * fat + 1020.0 * FORBES_KG) / (fat + FORBES_KG);
    let expected = (-(49.0 * (10.0 + delta) + 35.0 * exercise_per_kg) / rho_eff).exp();
    let offset = row10(&with_log) - row10(&without);
    assert!(
        (offset - expected).abs() < 0.01,
        "offset {offset} kg vs {expected} kg"
    );

    // goal --log: the participant is 1 kg behind, so the dose that reaches the goal
    // is larger with the log than without, and that dose does reach it.
    let goal = |log: bool| {
        let mut c = dir.cmd();
        c.args([
            "goal",
            "plan.toml",
            "--lose-kg",
            "3",
            "--by-week",
            "8",
            "--format",
            "json",
        ]);
        if log {
            c.args(["--log", "log.csv"]);
        }
        let j = json_of(&common::run(&mut c), "goal");
        let s = array(&j, "scenarios")[0].clone();
        assert_eq!(s["reachable"], serde_json::Value::Bool(true), "{s}");
        assert_eq!(text(&s, "dose_unit"), "kcal_per_kg_week");
        num(&s, "dose")
    };
    let (d_log, d_plain) = (goal(true), goal(false));
    assert!(d_log > d_plain, "{d_log} vs {d_plain}");
    let dosed = common::edit(
        &plan_text,
        &[(
            "kcal_per_kg_week = 10.0",
            &format!("kcal_per_kg_week = {d_log}"),
        )],
    );
    dir.write("dosed.toml", &dosed);
    let j = json_of(
        &common::run(dir.cmd().args([
            "schedule",
            "dosed.toml",
            "--log",
            "log.csv",
            "--format",
            "json",
        ])),
        "schedule at the goal dose",
    );
    let week8 = &array(&array(&j, "scenarios")[0], "weeks")[7];
    assert!(
        num(&week8["end"], "mass_kg") <= 90.0 - 3.0 + 5e-4,
        "{week8}"
    );
}

#[test]
fn a_part_week_counts_for_its_planned_sessions_in_the_weekly_dose() {
    // docs/model.md, Adherence: every session delivered as planned, the weekly dose
    // is a weighted mean of the covered weeks' doses whatever the as-of date, so it
    // lies between the smallest and the largest whole week's dose (an invariant).
    // Counting a part-week by its days (the covered days over 7) broke it: FOLLOW_PLAN
    // sessions on Monday, Wednesday, Friday and Saturday, a log ending on a Monday
    // counted one session of four as one seventh of a week.
    // No ramp, so every whole week prescribes about the same dose.
    let text = common::edit(FOLLOW_PLAN, &[("[protocol.ramp]\nweeks = 4\n", "")]);
    let plan = plan_of("follow.toml", &text);
    let plain = simulate(&plan).unwrap();
    let weeks = &plain.scenarios[0].weeks;
    // Every planned session delivered as planned up to `as_of`.
    let logged = |as_of: u32| {
        let rows: Vec<String> = weeks
            .iter()
            .flat_map(|x| x.sessions.iter())
            .filter(|s| day_of(&plan, s.date) <= as_of)
            .map(|s| plain_session(s.date, f64::from(s.minutes)))
            .collect();
        let obs = observed(&plan, &log_text(&rows), Some(day_date(&plan, as_of)));
        simulate_observed(&plan, Some(&obs)).unwrap()
    };
    // Whole weeks' doses (as of each week's Sunday).
    let whole: Vec<f64> = (1..=8u32)
        .map(|w| {
            logged(7 * w - 1).scenarios[0].weeks[w as usize - 1]
                .adherence
                .as_ref()
                .unwrap()
                .dose_prescribed
        })
        .collect();
    for as_of in 14u32..56 {
        let sim = logged(as_of);
        let t = sim.scenarios[0].adherence.as_ref().unwrap();
        let covered = &whole[..=(as_of / 7) as usize];
        let lo = covered.iter().cloned().fold(f64::INFINITY, f64::min);
        let hi = covered.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
        assert!(
            t.dose_prescribed_per_week >= lo - 1e-9 && t.dose_prescribed_per_week <= hi + 1e-9,
            "as of day {as_of}: {} outside [{lo}, {hi}]",
            t.dose_prescribed_per_week
        );
        close(
            t.dose_delivered_per_week,
            t.dose_prescribed_per_week,
            1e-9,
            "delivered as planned",
        );
    }
    // A whole week's dose is the plan's 1600 kcal (net) to the rounding of the
    // minutes (at most half a minute a session at the week's rate).
    for d in &whole {
        assert!((d - 1600.0).abs() < 0.03 * 1600.0, "{d}");
    }
}
