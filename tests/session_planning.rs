//! The trainer's week (docs/file-formats.md section 1, `[[rotation]]`,
//! `[participant.fitness]`, warm-up and cool-down): activity rotation, relative
//! intensity by the VO2 reserve and the heart-rate reserve, warm-up and cool-down
//! counted in the energy, closures with the make-up rule.
//!
//! Expected values are published worked examples (docs/references.md section 6.3), formulas
//! computed by hand here, or invariants; never the program's own output. The
//! participants are invented and go by pseudonymous codes.

use approx::assert_relative_eq;
use dosewright::activity::Intensity;
use dosewright::activity::acsm::gross_kcal_per_min;
use dosewright::activity::targets::{
    IntensityClass, hr_max, karvonen, relative_targets, vo2_reserve_fraction, vo2_reserve_vo2,
};
use dosewright::plan::{Fitness, HrMaxSource, Plan, parse_plan};
use dosewright::simulate::{Simulation, simulate};

fn parse(text: &str) -> Plan {
    parse_plan("week.toml", text).unwrap_or_else(|e| panic!("plan parses: {e}\n{text}"))
}

fn sim(plan: &Plan) -> Simulation {
    simulate(plan).expect("the plan simulates")
}

/// An invented participant (code WK-01), three sessions a week, a 900 kcal/week gross
/// dose with a ramp, and a scenario with lagged intake compensation.
const PLAN: &str = r#"
[participant]
id = "WK-01"
sex = "female"
age_years = 56
height_cm = 165.0
mass_kg = 88.0
body_fat_percent = 42.0
pal = 1.4

[protocol]
start = 2027-03-01
weeks = 12
session_days = ["mon", "wed", "fri"]

[protocol.dose]
kcal_per_week = 900.0

[protocol.ramp]
weeks = 4

[activity]
compendium_code = "17200"
label = "treadmill walk"

[[scenario]]
name = "as prescribed"

[[scenario]]
name = "eats back 30%"
intake_fraction = 0.3
intake_lag_days = 14.0
"#;

fn with(extra_protocol: &str, tail: &str) -> String {
    PLAN.replacen(
        "session_days = [\"mon\", \"wed\", \"fri\"]\n",
        &format!("session_days = [\"mon\", \"wed\", \"fri\"]\n{extra_protocol}"),
        1,
    ) + tail
}

// ---------------------------------------------------------------------------
// Rotation
// ---------------------------------------------------------------------------

/// A rotation that names the same activity on a day is the single-activity plan:
/// every minute, energy and mass is identical (a plan with a one-entry rotation is the same plan without it).
#[test]
fn rotation_with_the_same_activity_equals_the_single_activity_plan() {
    let single = parse(PLAN);
    let rotated = parse(&with(
        "",
        "\n[[rotation]]\ndays = [\"wed\", \"fri\"]\ncompendium_code = \"17200\"\nlabel = \"treadmill walk\"\n",
    ));
    let (a, b) = (sim(&single), sim(&rotated));
    assert_eq!(a.scenarios.len(), b.scenarios.len());
    for (x, y) in a.scenarios.iter().zip(&b.scenarios) {
        assert_eq!(x.outcome, y.outcome, "{}", x.name);
        for (wx, wy) in x.weeks.iter().zip(&y.weeks) {
            assert_eq!(wx.minutes_per_session, wy.minutes_per_session);
            assert_eq!(wx.end, wy.end);
            for (sx, sy) in wx.sessions.iter().zip(&wy.sessions) {
                assert_eq!(
                    (sx.minutes, sx.met, sx.gross_kcal, sx.net_kcal),
                    (sy.minutes, sy.met, sy.gross_kcal, sy.net_kcal)
                );
            }
        }
    }
    // Only the index of the activity differs: Wednesday and Friday use entry 1.
    let idx: Vec<usize> = b.scenarios[0].weeks[0]
        .sessions
        .iter()
        .map(|s| s.activity_index)
        .collect();
    assert_eq!(idx, [0, 1, 1]);
}

/// With two activities each session's minutes are computed for its own activity, and
/// the week's gross energy meets the target: at least `E_w` per session before
/// rounding lifts it, and less than one rounding step of minutes above it.
#[test]
fn rotation_with_two_activities_meets_the_weekly_energy_target() {
    let plan = parse(&with(
        "",
        "\n[[rotation]]\ndays = [\"fri\"]\ncycling_watts = 75.0\nlabel = \"cycle ergometer\"\n",
    ));
    let s = sim(&plan);
    for run in &s.scenarios {
        for w in &run.weeks {
            // The ramp: 0.5 in week 1, linear to 1 in week 5 (docs/model.md section 4).
            let r = if w.week <= 4 {
                0.5 + 0.5 * f64::from(w.week - 1) / 4.0
            } else {
                1.0
            };
            let target = 900.0 * r / 3.0;
            let mut labels = Vec::new();
            let mut week_kcal = 0.0;
            for sess in &w.sessions {
                // Gross kcal/min = MET * 3.5 * M / 200 (ACSM; Ainsworth 2011).
                let per_min = gross_kcal_per_min(sess.met, w.reference_mass_kg);
                assert_relative_eq!(
                    sess.gross_kcal,
                    f64::from(sess.minutes) * per_min,
                    max_relative = 1e-12
                );
                assert!(sess.gross_kcal >= target - 1e-9, "week {}", w.week);
                assert!(sess.gross_kcal < target + per_min, "week {}", w.week);
                week_kcal += sess.gross_kcal;
                labels.push(sess.activity.as_str());
            }
            assert!(week_kcal >= 900.0 * r - 1e-9);
            assert_eq!(
                labels,
                ["treadmill walk", "treadmill walk", "cycle ergometer"]
            );
        }
    }
    // Compendium 17200 is 4.3 MET (Ainsworth 2011); 75 W on the leg-cycling equation
    // at 88 kg is (7 + 1.8 * 75 * 6.12 / 88) / 3.5 = 5.22 MET, so Friday is shorter.
    let w1 = &s.scenarios[0].weeks[0];
    let cyc_met = (7.0 + 1.8 * 75.0 * 6.12 / 88.0) / 3.5;
    assert_relative_eq!(w1.sessions[2].met, cyc_met, max_relative = 1e-12);
    assert!(w1.sessions[2].minutes < w1.sessions[0].minutes);
}

// ---------------------------------------------------------------------------
// Relative intensity
// ---------------------------------------------------------------------------

/// docs/references.md section 6.3 (derived check values): age 40 gives 180 by both 220 - age (Fox,
/// Naughton and Haskell 1971) and Tanaka 208 - 0.7 age (Tanaka, Monahan and Seals 2001,
/// J Am Coll Cardiol 37:153); age 60 gives 160 and 166. Karvonen (Karvonen, Kentala and
/// Mustala 1957, Ann Med Exp Biol Fenn 35:307), HRrest 70, 60 % HRR: 136 at 40 years;
/// 124 (220 - age) or 127.6 (Tanaka) at 60.
#[test]
fn karvonen_worked_examples() {
    assert_relative_eq!(hr_max(HrMaxSource::TwoTwentyMinusAge, 40.0), 180.0);
    assert_relative_eq!(hr_max(HrMaxSource::Tanaka, 40.0), 180.0);
    assert_relative_eq!(hr_max(HrMaxSource::TwoTwentyMinusAge, 60.0), 160.0);
    assert_relative_eq!(
        hr_max(HrMaxSource::Tanaka, 60.0),
        166.0,
        max_relative = 1e-12
    );
    assert_relative_eq!(hr_max(HrMaxSource::Measured(171.0), 60.0), 171.0);
    let at = |src, age| karvonen(70.0, hr_max(src, age), 0.6);
    assert_relative_eq!(at(HrMaxSource::TwoTwentyMinusAge, 40.0), 136.0);
    assert_relative_eq!(at(HrMaxSource::Tanaka, 40.0), 136.0, max_relative = 1e-12);
    assert_relative_eq!(at(HrMaxSource::TwoTwentyMinusAge, 60.0), 124.0);
    assert_relative_eq!(at(HrMaxSource::Tanaka, 60.0), 127.6, max_relative = 1e-12);
}

/// VO2-reserve method (ACSM's Guidelines for Exercise Testing and Prescription, 10th
/// ed.; Swain and Leutholtz 1997, Med Sci Sports Exerc 29:410): target VO2 =
/// pct (VO2peak - 3.5) + 3.5. By hand: VO2peak 30 ml/kg/min at 80 kg (2.4 l/min),
/// 60 % -> 0.6 * 26.5 + 3.5 = 19.4 ml/kg/min = 5.543 MET. Holding 2.4 l/min at 75 kg,
/// VO2peak is 32 ml/kg/min -> 0.6 * 28.5 + 3.5 = 20.6 ml/kg/min = 5.886 MET.
#[test]
fn vo2_reserve_worked_example_and_the_met_rises_as_mass_falls() {
    assert_relative_eq!(vo2_reserve_vo2(0.6, 30.0), 19.4, max_relative = 1e-12);
    let i = Intensity::Vo2Reserve {
        percent: 60.0,
        vo2peak_l_min: 2.4,
    };
    assert_relative_eq!(i.met_at(80.0), 19.4 / 3.5, max_relative = 1e-12);
    assert_relative_eq!(i.met_at(75.0), 20.6 / 3.5, max_relative = 1e-12);
    assert!(i.depends_on_mass());
    // The inverse gives the percentage back.
    assert_relative_eq!(
        vo2_reserve_fraction(19.4 / 3.5, 30.0),
        0.6,
        max_relative = 1e-12
    );
}

/// A plan at 60 % of VO2R from a relative VO2peak measured at another mass: the l/min
/// value is held, so the plan's MET at baseline is computed from VO2peak x test mass.
#[test]
fn vo2_reserve_plan_uses_the_test_mass_and_gives_sheet_targets() {
    let plan = parse(&PLAN.replacen(
        "compendium_code = \"17200\"",
        "vo2_reserve_percent = 60",
        1,
    ).replacen(
        "pal = 1.4\n",
        "pal = 1.4\n\n[participant.fitness]\nvo2peak_ml_kg_min = 22.0\nvo2peak_test_mass_kg = 90.0\nhr_rest_bpm = 72\n",
        1,
    ));
    // 22.0 ml/kg/min at 90 kg = 1.98 l/min; at the plan's 88 kg that is 22.5 ml/kg/min.
    let rel = 22.0 * 90.0 / 88.0;
    let met = (0.6 * (rel - 3.5) + 3.5) / 3.5;
    let s = sim(&plan);
    assert_relative_eq!(s.scenarios[0].weeks[0].met, met, max_relative = 1e-12);
    let f: &Fitness = plan.participant.fitness.as_ref().unwrap();
    let t = relative_targets(met, 88.0, 56.0, Some(f));
    // 60 % VO2R is vigorous (>= 60 %, ACSM); RPE 14-17; HR band 55-65 % HRR with
    // Tanaka HRmax 208 - 0.7 * 56 = 168.8: 72 + 0.55 * 96.8 = 125.2 and 72 + 0.65 * 96.8
    // = 134.9 beats/min.
    assert_relative_eq!(t.vo2_reserve_fraction.unwrap(), 0.6, max_relative = 1e-12);
    assert_eq!(t.class, IntensityClass::Vigorous);
    assert_eq!(t.rpe, (14, 17));
    let hr = t.heart_rate.unwrap();
    assert_eq!((hr.low_bpm, hr.high_bpm), (125, 135));
    // Without VO2peak the class comes from the absolute MET: 4.3 MET is moderate,
    // 40-59 % HRR, RPE 12-13.
    let f2 = Fitness {
        vo2peak_l_min: None,
        ..*f
    };
    let t2 = relative_targets(4.3, 88.0, 56.0, Some(&f2));
    assert_eq!(t2.class, IntensityClass::Moderate);
    assert_eq!(t2.rpe, (12, 13));
    let hr2 = t2.heart_rate.unwrap();
    assert_eq!(
        (hr2.low_bpm, hr2.high_bpm),
        (
            (72.0 + 0.40 * 96.8_f64).round() as u32,
            (72.0 + 0.59 * 96.8_f64).round() as u32
        )
    );
}

// ---------------------------------------------------------------------------
// Warm-up and cool-down
// ---------------------------------------------------------------------------

/// Warm-up and cool-down count in the session's energy: the time at target falls by
/// their energy over the activity's energy per minute, the whole session still meets
/// the target, and the session time is warm-up + target + cool-down.
#[test]
fn warm_up_and_cool_down_are_counted_in_the_energy() {
    let plain = sim(&parse(PLAN));
    let eased = sim(&parse(&with(
        "",
        "\n[protocol.warm_up]\nminutes = 5\nmet = 2.5\n\n[protocol.cool_down]\nminutes = 4\nmet = 2.0\n",
    )));
    for (a, b) in plain.scenarios[0]
        .weeks
        .iter()
        .zip(&eased.scenarios[0].weeks)
    {
        let m = b.reference_mass_kg;
        let e = gross_kcal_per_min(4.3, m);
        let easy = 5.0 * gross_kcal_per_min(2.5, m) + 4.0 * gross_kcal_per_min(2.0, m);
        let r = if b.week <= 4 {
            0.5 + 0.5 * f64::from(b.week - 1) / 4.0
        } else {
            1.0
        };
        let target = 300.0 * r;
        assert_relative_eq!(
            b.minutes_unrounded,
            (target - easy) / e,
            max_relative = 1e-9
        );
        for s in &b.sessions {
            assert_eq!(s.session_minutes, s.minutes + 9);
            assert!(s.gross_kcal >= target - 1e-9);
            assert_relative_eq!(
                s.gross_kcal,
                f64::from(s.minutes) * e + easy,
                max_relative = 1e-12
            );
        }
        assert!(b.minutes_per_session < a.minutes_per_session);
    }
}

// ---------------------------------------------------------------------------
// Closures and the make-up rule
// ---------------------------------------------------------------------------

/// A closed Wednesday in week 2 (2027-03-10): with `none` the week has two sessions of
/// the planned length and loses one session's energy; with `spread` the lost energy
/// goes to Monday and Friday, so the week's energy is met again.
#[test]
fn closures_drop_sessions_and_spread_makes_the_energy_up() {
    let none = sim(&parse(&with(
        "closures = [2027-03-10]\nmake_up = \"none\"\n",
        "",
    )));
    let spread = sim(&parse(&with(
        "closures = [2027-03-10]\nmake_up = \"spread\"\n",
        "",
    )));
    let open = sim(&parse(PLAN));
    let w = |s: &Simulation| s.scenarios[0].weeks[1].clone();
    let (wn, ws, wo) = (w(&none), w(&spread), w(&open));
    assert_eq!(wo.sessions.len(), 3);
    assert_eq!(wn.sessions.len(), 2);
    assert_eq!(
        wn.closed,
        [chrono::NaiveDate::from_ymd_opt(2027, 3, 10).unwrap()]
    );
    let dates: Vec<String> = wn.sessions.iter().map(|s| s.date.to_string()).collect();
    assert_eq!(dates, ["2027-03-08", "2027-03-12"]);
    assert_eq!(wn.sessions[0].minutes, wo.sessions[0].minutes);
    let note = wn.make_up.as_ref().unwrap();
    assert_relative_eq!(note.lost, wo.sessions[1].gross_kcal, max_relative = 1e-12);
    assert_eq!(note.made_up, 0.0);
    // Spread: the week's energy (ramp 0.625 of 900 kcal) is met, within one rounding
    // step of minutes per remaining session.
    let week_kcal: f64 = ws.sessions.iter().map(|s| s.gross_kcal).sum();
    let per_min = gross_kcal_per_min(4.3, ws.reference_mass_kg);
    assert!(week_kcal >= 900.0 * 0.625 - 1e-9, "{week_kcal}");
    assert!(week_kcal < 900.0 * 0.625 + 2.0 * per_min + 2.0 * per_min);
    let sn = ws.make_up.as_ref().unwrap();
    assert!(sn.made_up > 0.0 && sn.made_up <= sn.lost + 1e-9);
    // The other weeks are untouched.
    assert_eq!(
        none.scenarios[0].weeks[0].sessions,
        open.scenarios[0].weeks[0].sessions
    );
}

/// Spread stays within the maximum: a closure in a week whose sessions are near the
/// maximum gives the remaining sessions at most the maximum, and the rest is lost.
#[test]
fn spread_make_up_stays_within_the_maximum() {
    let s = sim(&parse(&with(
        "max_session_minutes = 75\nover_max = \"cap\"\nclosures = [2027-04-14]\nmake_up = \"spread\"\n",
        "",
    )));
    // Week 7 (2027-04-12): full dose, 300 kcal a session of about 49 min at 4.3 MET
    // and 88 kg; the lost 300 kcal would need about 24 more minutes a session: 73 fits.
    let w = &s.scenarios[0].weeks[6];
    assert_eq!(w.sessions.len(), 2);
    for x in &w.sessions {
        assert!(x.minutes <= 75);
    }
    let s2 = sim(&parse(&with(
        "max_session_minutes = 60\nover_max = \"cap\"\nclosures = [2027-04-14]\nmake_up = \"spread\"\n",
        "",
    )));
    let w2 = &s2.scenarios[0].weeks[6];
    assert!(w2.sessions.iter().all(|x| x.minutes == 60));
    let note = w2.make_up.as_ref().unwrap();
    assert!(note.made_up < note.lost, "{note:?}");
}
