//! Invariants and analytic solutions of the model (docs/model.md section 6, "Checks the
//! tests make"): energy conservation against an independent quadrature, the analytic
//! steady state, zero dose at balance, minutes that exactly meet the target before
//! rounding, and the early `dose_share` / deficit-rate closed form
//! `1 - c_I (1 - beta) - c_A`.
//!
//! Every expected value is a closed form or an independent computation written out here,
//! never a number copied from the program's own output. Participants are invented
//! (pseudonymous codes).

use approx::{assert_abs_diff_eq, assert_relative_eq};
use dosewright::activity::Intensity;
use dosewright::model::energy::calibrate;
use dosewright::model::{BodyState, Bout, Compensation, Constants, RmrEquation, Sex, Subject};
use dosewright::plan::{Plan, parse_plan};
use dosewright::simulate::integrate::{State, body_of, integrate, state_of};
use dosewright::simulate::prescription::{Reference, prescribe};
use dosewright::simulate::simulate;

fn parse(text: &str) -> Plan {
    parse_plan("invariants.toml", text).unwrap_or_else(|e| panic!("plan parses: {e}\n{text}"))
}

/// Composite Simpson's rule over equally spaced samples (an even number of intervals).
fn simpson(values: &[f64], h: f64) -> f64 {
    let n = values.len() - 1;
    assert!(
        n >= 2 && n.is_multiple_of(2),
        "Simpson needs an even number of intervals"
    );
    let mut s = values[0] + values[n];
    for (i, v) in values.iter().enumerate().take(n).skip(1) {
        s += if i % 2 == 1 { 4.0 * v } else { 2.0 * v };
    }
    s * h / 3.0
}

/// A rich plan: an invented participant (code INV-07) with measured fat, RMR and intake,
/// a ramp, a current-mass per-kg dose, a split over the maximum, follow-up weeks, and a
/// scenario with lagged intake compensation, activity compensation and RMR adaptation.
const RICH_PLAN: &str = r#"
[participant]
id = "INV-07"
sex = "female"
age_years = 52
height_cm = 163.0
mass_kg = 91.4
body_fat_percent = 44.0
rmr_kcal_per_day = 1580
intake_kcal_per_day = 2300

[protocol]
start = 2027-01-04
weeks = 20
follow_up_weeks = 8
session_days = ["mon", "wed", "fri", "sat"]
max_session_minutes = 40
over_max = "split"
round_minutes_to = 5

[protocol.dose]
kcal_per_kg_week = 16.0
basis = "net"
mass_basis = "current"

[protocol.ramp]
weeks = 6
start_fraction = 0.5

[activity]
compendium_code = "17200"

[[scenario]]
name = "as prescribed"

[[scenario]]
name = "eats back, lagged"
intake_fraction = 0.45
intake_lag_days = 21.0
activity_fraction = 0.1
rmr_adaptation_kcal_per_kg = 6.0

[[scenario]]
name = "eats back at once, diet"
intake_fraction = 0.3
diet_change_kcal_per_day = -250.0
"#;

#[test]
fn energy_conservation_against_simpson_quadrature() {
    // docs/model.md section 6, "Energy invariant": rho_F dF + rho_L dL equals the integral of EI - EE,
    // computed independently (a quadrature over dense output), to 1e-6 relative.
    //
    // The plan is run by `simulate`; the same run is then rebuilt week by week from the
    // library's pieces (`prescribe`, `integrate` with half-day dense output,
    // `Physiology::fluxes`), shown to be the same run (minutes and week-end masses), and
    // EI - EE is integrated by Simpson's rule on the half-day grid.
    let plan = parse(RICH_PLAN);
    let sim = simulate(&plan).expect("plan simulates");
    let phys = &sim.physiology;
    let (rho_f, rho_l) = (
        phys.constants.fat_kcal_per_kg,
        phys.constants.lean_kcal_per_kg,
    );
    let b0 = BodyState {
        fat_kg: sim.baseline.fat_mass_kg,
        lean_kg: sim.baseline.fat_free_mass_kg,
        lagged_exercise_kcal_per_day: 0.0,
    };
    let h = 0.5;
    for (sc, run) in plan.scenarios.iter().zip(&sim.scenarios) {
        let comp = &sc.compensation;
        let mut y: State = state_of(&b0, 0.0);
        let mut imbalance = 0.0; // running integral of EI - EE, kcal
        let mut exercise = 0.0; // running integral of X, kcal
        for (i, week) in run.weeks.iter().enumerate() {
            let w = i as u32 + 1;
            let body = body_of(&y);
            let reference = Reference {
                mass_kg: body.mass_kg(),
                rmr_kcal_per_day: phys.rmr(comp, body.fat_kg, body.lean_kg),
            };
            let bouts: Vec<Bout> = if w <= plan.protocol.weeks {
                let rx = prescribe(&plan, phys, w, week.start, sim.baseline.mass_kg, &reference);
                assert_eq!(rx.minutes_per_session, week.minutes_per_session);
                rx.model_bouts(&plan, |_| true)
            } else {
                Vec::new()
            };
            let samples = integrate(phys, comp, &bouts, y, 7.0, h).expect("week integrates");
            assert_eq!(samples.states.len(), 15, "half-day grid over 7 days");
            let (mut gap, mut x, mut abs_gap) = (Vec::new(), Vec::new(), Vec::new());
            for s in &samples.states {
                let f = phys.fluxes(comp, &bouts, &body_of(s));
                gap.push(f.intake - f.expenditure);
                abs_gap.push((f.intake - f.expenditure).abs());
                x.push(f.exercise);
            }
            let week_gap = simpson(&gap, h);
            let week_turnover = simpson(&abs_gap, h);
            imbalance += week_gap;
            exercise += simpson(&x, h);
            let start = body_of(&y);
            y = *samples.states.last().unwrap();
            if comp.intake_lag_days == 0.0 {
                // The driver keeps Xbar = X when there is no lag (docs/model.md section 5).
                y[2] = phys.fluxes(comp, &bouts, &body_of(&y)).exercise;
            }
            let end = body_of(&y);
            // Same run as `simulate`.
            assert_relative_eq!(end.mass_kg(), week.end.mass_kg, max_relative = 1e-9);
            assert_relative_eq!(end.fat_kg, week.end.fat_mass_kg, max_relative = 1e-9);
            // The week's stored-energy change against its quadrature, relative to the
            // week's energy turnover (the change itself can pass through zero).
            let stored =
                rho_f * (end.fat_kg - start.fat_kg) + rho_l * (end.lean_kg - start.lean_kg);
            assert_abs_diff_eq!(stored, week_gap, epsilon = 1e-6 * week_turnover);
            // The reported running account, from the reported composition.
            let stored_total = rho_f * (week.end.fat_mass_kg - b0.fat_kg)
                + rho_l * (week.end.fat_free_mass_kg - b0.lean_kg);
            assert_relative_eq!(
                -week.end.achieved_deficit_kcal,
                stored_total,
                max_relative = 1e-9,
                epsilon = 1e-6
            );
            if w == plan.protocol.weeks || w as usize == run.weeks.len() {
                // The invariant proper: cumulative, to 1e-6 relative.
                assert_relative_eq!(
                    -week.end.achieved_deficit_kcal,
                    imbalance,
                    max_relative = 1e-6
                );
                // The prescribed net energy is the integral of X (docs/model.md section 4).
                assert_relative_eq!(week.end.prescribed_net_kcal, exercise, max_relative = 1e-6);
            }
        }
        assert!(
            imbalance < -5_000.0,
            "{}: the run lost a sizeable amount of energy, not {imbalance}",
            sc.name
        );
    }
}

/// The calibrated steady-state subject: an invented man (code SS-03), Mifflin-St Jeor,
/// no measured RMR, intake at balance (no measured intake).
fn steady_subject(pal: f64, body_fat: f64) -> Subject {
    Subject {
        sex: Sex::Male,
        age_years: 45.0,
        height_cm: 178.0,
        mass_kg: 98.0,
        body_fat_percent: Some(body_fat),
        rmr_kcal_per_day: None,
        intake_kcal_per_day: None,
        pal: Some(pal),
    }
}

#[test]
fn analytic_steady_state_after_ten_relaxation_times() {
    // docs/model.md section 6, "Analytic steady state": Mifflin-St Jeor (dRMR/dM = 10 kcal/day/kg;
    // Mifflin et al. 1990, Am J Clin Nutr 51:241), no measured RMR, intake at balance,
    // no exercise, no compensation, a constant intake change dEI:
    // dM -> dEI (1 - beta) / (10 + delta). Derivation: at balance EI0 = RMR0 + beta EI0 +
    // delta M0; at the new steady state EI0 + dEI = RMR0 + 10 dM + beta (EI0 + dEI) +
    // delta (M0 + dM); subtract. Relaxation time ~ rho_eff / (10 + delta) with rho_eff
    // at most rho_F = 9500 kcal/kg; 8000 days is more than ten of them.
    let constants = Constants::default();
    assert_eq!(constants.rmr_equation, RmrEquation::MifflinStJeor);
    let days = 8000.0;
    for (pal, fat, d_ei) in [
        (1.6, 30.0, -300.0),
        (1.45, 38.0, -500.0),
        (1.8, 25.0, 250.0),
    ] {
        let (baseline, phys) = calibrate(&steady_subject(pal, fat), &constants).unwrap();
        let beta = constants.tef_fraction;
        let delta = phys.activity_kcal_per_kg_day;
        // delta from its definition (docs/model.md section 3 step 4), computed here: AE0 = TDEE0 -
        // RMR0 - beta EI0 with TDEE0 = EI0 = pal RMR0 and RMR0 by Mifflin.
        let rmr0 = 10.0 * 98.0 + 6.25 * 178.0 - 5.0 * 45.0 + 5.0;
        assert_relative_eq!(
            delta,
            (pal * rmr0 - rmr0 - beta * pal * rmr0) / 98.0,
            max_relative = 1e-12
        );
        let relaxation = constants.fat_kcal_per_kg / (10.0 + delta);
        assert!(days >= 10.0 * relaxation, "at least ten relaxation times");
        let comp = Compensation {
            diet_change_kcal_per_day: d_ei,
            ..Compensation::default()
        };
        let b0 = BodyState {
            fat_kg: baseline.fat_mass_kg,
            lean_kg: baseline.fat_free_mass_kg,
            lagged_exercise_kcal_per_day: 0.0,
        };
        let out = integrate(&phys, &comp, &[], state_of(&b0, 0.0), days, days)
            .expect("long run integrates");
        let dm = body_of(out.states.last().unwrap()).mass_kg() - baseline.mass_kg;
        let expected = d_ei * (1.0 - beta) / (10.0 + delta);
        assert_relative_eq!(dm, expected, max_relative = 1e-3);
        // And after one relaxation time it is clearly not there yet (the run is long for
        // a reason): less than 80 % of the way.
        let early = integrate(&phys, &comp, &[], state_of(&b0, 0.0), 400.0, 400.0).unwrap();
        let dm_early = body_of(early.states.last().unwrap()).mass_kg() - baseline.mass_kg;
        assert!(dm_early / expected < 0.8 && dm_early / expected > 0.2);
    }
}

#[test]
fn zero_dose_at_balance_keeps_mass_constant() {
    // docs/model.md section 6: "Zero dose at balance keeps mass constant." Energy balance at baseline
    // by construction (docs/model.md section 3: EI0 = TDEE0), with every RMR equation, with and
    // without a measured RMR or a measured intake; compensation channels set but inert
    // (no exercise energy to compensate, no loss to adapt to). Ten years.
    let inert = Compensation {
        intake_fraction: 0.6,
        intake_lag_days: 30.0,
        activity_fraction: 0.4,
        rmr_adaptation_kcal_per_kg: 10.0,
        diet_change_kcal_per_day: 0.0,
    };
    let subjects = [
        // pal only
        Subject {
            sex: Sex::Female,
            age_years: 61.0,
            height_cm: 158.0,
            mass_kg: 84.0,
            body_fat_percent: Some(45.0),
            rmr_kcal_per_day: None,
            intake_kcal_per_day: None,
            pal: Some(1.55),
        },
        // measured intake only: weight-stable by assumption; estimated fat
        Subject {
            sex: Sex::Male,
            age_years: 33.0,
            height_cm: 185.0,
            mass_kg: 112.0,
            body_fat_percent: None,
            rmr_kcal_per_day: Some(2050.0),
            intake_kcal_per_day: Some(3100.0),
            pal: None,
        },
        // neither: default PAL 1.5
        Subject {
            sex: Sex::Female,
            age_years: 24.0,
            height_cm: 170.0,
            mass_kg: 70.0,
            body_fat_percent: Some(32.0),
            rmr_kcal_per_day: None,
            intake_kcal_per_day: None,
            pal: None,
        },
    ];
    for (eq, _) in RmrEquation::ALL {
        let constants = Constants {
            rmr_equation: eq,
            ..Constants::default()
        };
        for subject in &subjects {
            let (baseline, phys) = calibrate(subject, &constants).unwrap();
            let b0 = BodyState {
                fat_kg: baseline.fat_mass_kg,
                lean_kg: baseline.fat_free_mass_kg,
                lagged_exercise_kcal_per_day: 0.0,
            };
            for comp in [Compensation::default(), inert] {
                let out = integrate(&phys, &comp, &[], state_of(&b0, 0.0), 3650.0, 365.0)
                    .expect("integrates");
                for s in &out.states {
                    let b = body_of(s);
                    assert_abs_diff_eq!(b.mass_kg(), subject.mass_kg, epsilon = 1e-9);
                    assert_abs_diff_eq!(b.fat_kg, baseline.fat_mass_kg, epsilon = 1e-9);
                    assert_abs_diff_eq!(s[3], 0.0, epsilon = 1e-12);
                }
            }
        }
    }
}

/// A plan for the minutes checks: an invented participant (code MIN-12, Mifflin-St Jeor
/// by default), sessions on three days, no maximum.
fn minutes_plan(dose: &str, activity: &str, model: &str, step: u32, ramp: &str) -> String {
    format!(
        r#"
[participant]
id = "MIN-12"
sex = "male"
age_years = 47
height_cm = 178.0
mass_kg = 104.0
body_fat_percent = 36.5
pal = 1.45

[protocol]
start = 2027-01-11
weeks = 16
session_days = ["mon", "wed", "fri"]
round_minutes_to = {step}

[protocol.dose]
{dose}

{ramp}

[activity]
{activity}

[model]
{model}
"#
    )
}

#[test]
fn minutes_exactly_meet_the_target_before_rounding() {
    // docs/model.md section 4 steps 2-3: E_w = dose (per session, / n, or x M_basis / n) x r_w with
    // r_w = s + (1 - s)(w - 1)/R for w <= R, else 1; d_w = E_w / e_w with e_w the gross
    // per-minute energy MET x 3.5 x M_w / 200 (ACSM kcal/min formula) or that minus
    // RMR_w / 1440 (own rest) or minus 3.5 x M_w / 200 (one MET); rounded up to the step.
    // All of e_w, E_w and r_w are recomputed here from those formulas; RMR_w by
    // Mifflin-St Jeor written out (Mifflin et al. 1990, Am J Clin Nutr 51:241).
    let ramp = "[protocol.ramp]\nweeks = 5\nstart_fraction = 0.4";
    let cases: [(&str, &str, &str, u32, &str); 7] = [
        ("kcal_per_session = 350.0", "met = 5.5", "", 1, ""),
        ("kcal_per_week = 1400.0", "met = 6.3", "", 5, ramp),
        (
            "kcal_per_kg_week = 14.0\nmass_basis = \"current\"",
            "cycling_watts = 95.0",
            "",
            1,
            ramp,
        ),
        (
            "kcal_per_kg_week = 10.0\nbasis = \"net\"",
            "met = 4.8",
            "",
            2,
            "",
        ),
        (
            "kcal_per_session = 420.0\nbasis = \"net\"",
            "met = 7.5",
            "rest_for_net = \"one-met\"",
            5,
            ramp,
        ),
        (
            "kcal_per_week = 1800.0\nbasis = \"net\"",
            "cycling_watts = 120.0",
            "",
            10,
            ramp,
        ),
        ("minutes_per_week = 170.0", "met = 4.0", "", 5, ramp),
    ];
    for (dose, activity, model, step, ramp_text) in cases {
        let plan = parse(&minutes_plan(dose, activity, model, step, ramp_text));
        let sim = simulate(&plan).expect("simulates");
        let n = 3.0;
        let m0 = 104.0;
        for wk in &sim.scenarios[0].weeks {
            let w = f64::from(wk.week);
            let r = if ramp_text.is_empty() || wk.week > 5 {
                1.0
            } else {
                0.4 + 0.6 * (w - 1.0) / 5.0
            };
            assert_relative_eq!(wk.ramp_fraction, r, max_relative = 1e-12);
            let mw = wk.reference_mass_kg;
            let met = if let Some(watts) = activity.strip_prefix("cycling_watts = ") {
                let watts: f64 = watts.parse().unwrap();
                (7.0 + 1.8 * 6.12 * watts / mw) / 3.5
            } else {
                activity.strip_prefix("met = ").unwrap().parse().unwrap()
            };
            let gross = met * 3.5 * mw / 200.0;
            let rmr_w = 10.0 * mw + 6.25 * 178.0 - 5.0 * 47.0 + 5.0;
            let e = if !dose.contains("net") {
                gross
            } else if model.contains("one-met") {
                gross - 3.5 * mw / 200.0
            } else {
                gross - rmr_w / 1440.0
            };
            let value: f64 = dose
                .split('=')
                .nth(1)
                .unwrap()
                .split('\n')
                .next()
                .unwrap()
                .trim()
                .parse()
                .unwrap();
            if dose.starts_with("minutes_per_week") {
                assert!(wk.target_kcal_per_session.is_none());
                assert_relative_eq!(wk.minutes_unrounded, r * value / n, max_relative = 1e-12);
            } else {
                let target = if dose.starts_with("kcal_per_session") {
                    value * r
                } else if dose.starts_with("kcal_per_week") {
                    value / n * r
                } else if dose.contains("current") {
                    value * mw / n * r
                } else {
                    value * m0 / n * r
                };
                let t = wk
                    .target_kcal_per_session
                    .expect("an energy dose has a target");
                assert_relative_eq!(t, target, max_relative = 1e-12);
                // The invariant: minutes before rounding deliver the target exactly.
                assert_relative_eq!(wk.minutes_unrounded * e, target, max_relative = 1e-12);
            }
            // Rounding is ceil to the step: a multiple of the step, not below the
            // unrounded minutes, and less than one step above them.
            let d = f64::from(wk.minutes_per_session);
            let s = f64::from(step);
            assert_eq!(wk.minutes_per_session % step, 0);
            assert!(d >= wk.minutes_unrounded - 1e-9 * s, "week {}", wk.week);
            assert!(d < wk.minutes_unrounded + s, "week {}", wk.week);
            assert_eq!(wk.sessions.len(), 3);
            assert!(
                wk.sessions
                    .iter()
                    .all(|x| x.minutes == wk.minutes_per_session)
            );
        }
    }
}

#[test]
fn rounding_keeps_exact_minutes_and_rounds_up_otherwise() {
    // docs/model.md section 4 step 3: ceil(d/step - 1e-9) x step. 350 kcal at 5 MET and 80 kg: 5 x 3.5
    // x 80 / 200 = 7 kcal/min exactly -> 50 min exactly, which a step of 5 keeps and a
    // step of 3 takes to 51; 351 kcal -> 50.14 min -> 55 with a step of 5.
    let text = |kcal: f64, step: u32| {
        format!(
            r#"
[participant]
id = "RND-02"
sex = "female"
age_years = 38
height_cm = 170.0
mass_kg = 80.0
body_fat_percent = 35.0

[protocol]
start = 2027-02-01
weeks = 2
session_days = ["tue", "thu"]
round_minutes_to = {step}

[protocol.dose]
kcal_per_session = {kcal:.1}

[activity]
met = 5.0
"#
        )
    };
    for (kcal, step, expected) in [
        (350.0, 5, 50),
        (350.0, 1, 50),
        (350.0, 3, 51),
        (351.0, 5, 55),
        (351.0, 1, 51),
    ] {
        let plan = parse(&text(kcal, step));
        let sim = simulate(&plan).unwrap();
        let wk = &sim.scenarios[0].weeks[0];
        assert_relative_eq!(wk.minutes_unrounded, kcal / 7.0, max_relative = 1e-12);
        assert_eq!(wk.minutes_per_session, expected, "{kcal} kcal, step {step}");
    }
}

/// A plan with one scenario per (c_I, c_A) pair, no lag, no adaptation; an invented
/// participant (code DS-21).
fn dose_share_plan(pairs: &[(f64, f64)], tef: f64, rest: &str) -> String {
    let mut s = format!(
        r#"
[participant]
id = "DS-21"
sex = "female"
age_years = 44
height_cm = 166.0
mass_kg = 86.0
body_fat_percent = 41.0
pal = 1.6

[protocol]
start = 2027-03-01
weeks = 4
session_days = ["mon", "tue", "thu", "fri", "sat"]

[protocol.dose]
kcal_per_week = 2000.0

[activity]
met = 6.0

[model]
tef_fraction = {tef}
rest_for_net = "{rest}"
"#
    );
    for (i, (ci, ca)) in pairs.iter().enumerate() {
        s.push_str(&format!(
            "\n[[scenario]]\nname = \"s{i}\"\nintake_fraction = {ci}\nactivity_fraction = {ca}\n"
        ));
    }
    s
}

const PAIRS: [(f64, f64); 7] = [
    (0.0, 0.0),
    (0.4, 0.0),
    (0.0, 0.3),
    (0.5, 0.2),
    (1.0, 0.0),
    (0.8, 0.25),
    (1.3, 0.0),
];

#[test]
fn first_week_dose_share_matches_closed_form() {
    // docs/model.md section 5: early on, with no lag and no adaptation, dose_share = 1 - c_I (1 - beta)
    // - c_A (the extra food carries its own TEF); the closed form holds to 1e-2 in week 1 (docs/model.md section 5).
    for tef in [0.10, 0.20] {
        for rest in ["own-rmr", "one-met"] {
            let plan = parse(&dose_share_plan(&PAIRS, tef, rest));
            let sim = simulate(&plan).expect("simulates");
            for ((ci, ca), run) in PAIRS.iter().zip(&sim.scenarios) {
                let expected = 1.0 - ci * (1.0 - tef) - ca;
                let got = run.weeks[0].end.dose_share;
                assert_abs_diff_eq!(got, expected, epsilon = 1e-2);
            }
        }
    }
}

#[test]
fn initial_deficit_rate_ratio_matches_closed_form() {
    // docs/model.md section 5 at the start (baseline state, tau = 0): with EI = EI0 + c_I X,
    // TEF = beta EI, AE = delta M - c_A X, EE = RMR + TEF + AE + X, the deficit rate the
    // exercise adds is (EE - EI)_with - (EE - EI)_without = X (1 - c_I (1 - beta) - c_A).
    // Checked to 1e-9, both in kcal/day and as the rate of stored-energy loss.
    let plan = parse(&dose_share_plan(&PAIRS, 0.10, "own-rmr"));
    let sim = simulate(&plan).unwrap();
    let phys = &sim.physiology;
    let beta = phys.constants.tef_fraction;
    let (rho_f, rho_l) = (
        phys.constants.fat_kcal_per_kg,
        phys.constants.lean_kcal_per_kg,
    );
    let b0 = BodyState {
        fat_kg: sim.baseline.fat_mass_kg,
        lean_kg: sim.baseline.fat_free_mass_kg,
        lagged_exercise_kcal_per_day: 0.0,
    };
    let bouts: Vec<Bout> = (0..5)
        .map(|_| Bout {
            minutes: 45.0,
            intensity: Intensity::Met { met: 6.0 },
        })
        .collect();
    for (ci, ca) in PAIRS {
        let comp = Compensation {
            intake_fraction: ci,
            activity_fraction: ca,
            ..Compensation::default()
        };
        let with = phys.fluxes(&comp, &bouts, &b0);
        let without = phys.fluxes(&comp, &[], &b0);
        let x = with.exercise;
        assert!(x > 100.0);
        let added = (with.expenditure - with.intake) - (without.expenditure - without.intake);
        let expected = 1.0 - ci * (1.0 - beta) - ca;
        assert_relative_eq!(added / x, expected, max_relative = 1e-9, epsilon = 1e-12);
        let stored_rate = |f: &dosewright::model::Fluxes| rho_f * f.dfat + rho_l * f.dlean;
        let added_store = stored_rate(&without) - stored_rate(&with);
        assert_relative_eq!(
            added_store / x,
            expected,
            max_relative = 1e-9,
            epsilon = 1e-12
        );
        if ci == 1.0 && ca == 0.0 {
            // Full intake compensation leaves only the TEF of the extra food: beta X.
            assert_relative_eq!(added, beta * x, max_relative = 1e-9);
        }
        // With a lag the intake has not yet risen at the start (Xbar = 0): 1 - c_A.
        let lagged = Compensation {
            intake_lag_days: 14.0,
            ..comp
        };
        let with_l = phys.fluxes(&lagged, &bouts, &b0);
        let without_l = phys.fluxes(&lagged, &[], &b0);
        let added_l =
            (with_l.expenditure - with_l.intake) - (without_l.expenditure - without_l.intake);
        assert_relative_eq!(added_l / x, 1.0 - ca, max_relative = 1e-9, epsilon = 1e-12);
    }
}

#[test]
fn net_exercise_rate_is_the_weeks_sessions_over_seven_days() {
    // docs/model.md section 4: X is the week's sessions' net energy at the current M and RMR, divided
    // by 7: sum of minutes x (MET x 3.5 x M / 200 - RMR / 1440) / 7 (own rest).
    let plan = parse(&dose_share_plan(&[(0.0, 0.0)], 0.10, "own-rmr"));
    let sim = simulate(&plan).unwrap();
    let phys = &sim.physiology;
    let b0 = BodyState {
        fat_kg: sim.baseline.fat_mass_kg,
        lean_kg: sim.baseline.fat_free_mass_kg,
        lagged_exercise_kcal_per_day: 0.0,
    };
    let bouts = [
        Bout {
            minutes: 30.0,
            intensity: Intensity::Met { met: 6.0 },
        },
        Bout {
            minutes: 55.0,
            intensity: Intensity::Met { met: 3.2 },
        },
    ];
    let f = phys.fluxes(&Compensation::default(), &bouts, &b0);
    let m = 86.0;
    let rmr = f.rmr;
    // Mifflin-St Jeor, women (Mifflin et al. 1990, Am J Clin Nutr 51:241).
    assert_relative_eq!(
        rmr,
        10.0 * m + 6.25 * 166.0 - 5.0 * 44.0 - 161.0,
        max_relative = 1e-12
    );
    let expected = (30.0 * (6.0 * 3.5 * m / 200.0 - rmr / 1440.0)
        + 55.0 * (3.2 * 3.5 * m / 200.0 - rmr / 1440.0))
        / 7.0;
    assert_relative_eq!(f.exercise, expected, max_relative = 1e-12);
}

/// Classic fourth-order Runge-Kutta on `Physiology::fluxes` with `n` equal steps: an
/// independent reference integrator (docs/model.md section 6 names RK4 as the fixed-step method),
/// sharing nothing with `ode_solvers`.
fn rk4(
    phys: &dosewright::model::Physiology,
    comp: &Compensation,
    bouts: &[Bout],
    start: BodyState,
    days: f64,
    n: usize,
) -> BodyState {
    let h = days / n as f64;
    let rate = |s: &BodyState| {
        let f = phys.fluxes(comp, bouts, s);
        [f.dfat, f.dlean, f.dlagged]
    };
    let shift = |s: &BodyState, k: [f64; 3], a: f64| BodyState {
        fat_kg: s.fat_kg + a * k[0],
        lean_kg: s.lean_kg + a * k[1],
        lagged_exercise_kcal_per_day: s.lagged_exercise_kcal_per_day + a * k[2],
    };
    let mut b = start;
    for _ in 0..n {
        let k1 = rate(&b);
        let k2 = rate(&shift(&b, k1, h / 2.0));
        let k3 = rate(&shift(&b, k2, h / 2.0));
        let k4 = rate(&shift(&b, k3, h));
        let k = [0, 1, 2].map(|i| (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i]) / 6.0);
        b = shift(&b, k, h);
    }
    b
}

#[test]
fn integrate_end_state_does_not_depend_on_the_output_step() {
    // docs/model.md section 6: Dormand-Prince 5(4) at relative tolerance 1e-8 or tighter. The state
    // `integrate` returns at the end of a stretch must be the solution there whatever the
    // dense-output step, and agree with an independent RK4 reference (4096 steps; its
    // error here is far below 1e-9 of the change) to 1e-8 of the change. Stretches of one
    // week (as the driver runs) and four weeks (as the baseline drift is computed), with
    // exercise and a lagged intake.
    let plan = parse(RICH_PLAN);
    let sim = simulate(&plan).unwrap();
    let phys = &sim.physiology;
    let b0 = BodyState {
        fat_kg: sim.baseline.fat_mass_kg,
        lean_kg: sim.baseline.fat_free_mass_kg,
        lagged_exercise_kcal_per_day: 0.0,
    };
    let comp = plan.scenarios[1].compensation;
    let bouts: Vec<Bout> = (0..4)
        .map(|_| Bout {
            minutes: 50.0,
            intensity: plan.activity.intensity.clone(),
        })
        .collect();
    for days in [7.0, 28.0] {
        let reference = rk4(phys, &comp, &bouts, b0, days, 4096);
        let change = reference.mass_kg() - b0.mass_kg();
        assert!(change.abs() > 0.1);
        for step in [0.5, days / 7.0, days] {
            let out = integrate(phys, &comp, &bouts, state_of(&b0, 0.0), days, step).unwrap();
            let end = body_of(out.states.last().unwrap());
            let err = (end.mass_kg() - reference.mass_kg()) / change;
            assert!(
                err.abs() <= 1e-8,
                "{days} days in output steps of {step}: end mass {} kg, reference {} kg, error {err:.2e} of the change",
                end.mass_kg(),
                reference.mass_kg()
            );
        }
    }
}

#[test]
fn baseline_drift_matches_an_independent_integration() {
    // docs/model.md section 3 step 5: intake and PAL both given and different: the drift is the
    // projected mass change in 4 weeks with no exercise. Checked against the RK4
    // reference on the same calibrated physiology, to 1e-8 of the change (docs/model.md section 6
    // tolerance). An invented participant (code DR-05): intake 2600 kcal/day, PAL 1.4.
    let plan = parse(&RICH_PLAN.replace(
        "intake_kcal_per_day = 2300",
        "intake_kcal_per_day = 2600\npal = 1.4",
    ));
    let sim = simulate(&plan).unwrap();
    let b0 = BodyState {
        fat_kg: sim.baseline.fat_mass_kg,
        lean_kg: sim.baseline.fat_free_mass_kg,
        lagged_exercise_kcal_per_day: 0.0,
    };
    let reference = rk4(
        &sim.physiology,
        &Compensation::default(),
        &[],
        b0,
        28.0,
        4096,
    );
    let change = reference.mass_kg() - b0.mass_kg();
    // 2600 - 1.4 x 1580 = 388 kcal/day surplus: about +1.4 kg in 4 weeks.
    assert!(change > 1.0 && change < 2.0, "{change}");
    assert_abs_diff_eq!(
        sim.drift_mass_4_weeks_kg,
        change,
        epsilon = 1e-8 * change.abs()
    );
}
