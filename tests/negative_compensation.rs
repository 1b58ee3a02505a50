//! Negative compensation (docs/model.md section 5): intake that falls, or other
//! movement that rises, with exercise. Such an arm loses more than the prescribed
//! dose alone, and the model still conserves energy.
//!
//! Expected values: the early deficit-rate closed form `1 - c_I (1 - beta) - c_A`
//! (docs/model.md section 5), the first law against an independent Simpson
//! quadrature, and the allowed range of the scenario keys (docs/file-formats.md
//! section 1). Participants are invented.

use approx::assert_relative_eq;
use dosewright::model::{BodyState, Bout};
use dosewright::plan::{Plan, parse_plan};
use dosewright::simulate::integrate::{State, body_of, integrate, state_of};
use dosewright::simulate::prescription::{Reference, prescribe};
use dosewright::simulate::simulate;

const PLAN: &str = r#"
[participant]
id = "NEG-03"
sex = "male"
age_years = 38
height_cm = 178.0
mass_kg = 96.0
body_fat_percent = 30.0
pal = 1.5

[protocol]
start = 2027-01-04
weeks = 12
session_days = ["mon", "wed", "fri"]

[protocol.dose]
kcal_per_week = 1500

[activity]
met = 7.0

[[scenario]]
name = "as prescribed"

[[scenario]]
name = "eats less"
intake_fraction = -0.3

[[scenario]]
name = "moves more"
activity_fraction = -0.4
"#;

fn plan_of(text: &str) -> Plan {
    parse_plan("neg.toml", text).unwrap_or_else(|e| panic!("plan parses: {e}"))
}

/// Composite Simpson's rule over equally spaced samples.
fn simpson(values: &[f64], h: f64) -> f64 {
    let n = values.len() - 1;
    assert!(n >= 2 && n.is_multiple_of(2));
    let mut s = values[0] + values[n];
    for (i, v) in values.iter().enumerate().take(n).skip(1) {
        s += if i % 2 == 1 { 4.0 * v } else { 2.0 * v };
    }
    s * h / 3.0
}

#[test]
fn a_negative_fraction_loses_more_than_prescribed_by_the_closed_form_share() {
    let plan = plan_of(PLAN);
    let sim = simulate(&plan).expect("negative fractions simulate");
    let beta = plan.constants.tef_fraction;
    let loss_after =
        |s: usize, w: usize| sim.baseline.mass_kg - sim.scenarios[s].weeks[w].end.mass_kg;
    let none = loss_after(0, 0);
    // Early on (week 1, before the body's own adaptation matters) the loss scales with
    // the deficit share 1 - c_I (1 - beta) - c_A: 1 + 0.3 (1 - beta) and 1 + 0.4.
    for (s, share) in [(1, 1.0 + 0.3 * (1.0 - beta)), (2, 1.4)] {
        let l = loss_after(s, 0);
        assert!(l > none, "scenario {s}: {l} vs {none}");
        assert_relative_eq!(l / none, share, max_relative = 0.03);
        // And more than prescribed at the end as well.
        assert!(loss_after(s, 11) > loss_after(0, 11));
    }
}

#[test]
fn the_model_with_negative_fractions_conserves_energy() {
    // docs/model.md section 6, the energy invariant: rho_F dF + rho_L dL equals the
    // integral of EI - EE, computed here by Simpson's rule on a half-day grid.
    let plan = plan_of(PLAN);
    let sim = simulate(&plan).unwrap();
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
    for (sc, run) in plan.scenarios.iter().zip(&sim.scenarios).skip(1) {
        let comp = &sc.compensation;
        let mut y: State = state_of(&b0, 0.0);
        let mut imbalance = 0.0;
        for (i, week) in run.weeks.iter().enumerate() {
            let body = body_of(&y);
            let reference = Reference {
                mass_kg: body.mass_kg(),
                rmr_kcal_per_day: phys.rmr(comp, body.fat_kg, body.lean_kg),
            };
            let rx = prescribe(
                &plan,
                phys,
                i as u32 + 1,
                week.start,
                sim.baseline.mass_kg,
                &reference,
            );
            let bouts: Vec<Bout> = rx.model_bouts(&plan, |_| true);
            let samples = integrate(phys, comp, &bouts, y, 7.0, 0.5).unwrap();
            let gap: Vec<f64> = samples
                .states
                .iter()
                .map(|s| {
                    let f = phys.fluxes(comp, &bouts, &body_of(s));
                    f.intake - f.expenditure
                })
                .collect();
            imbalance += simpson(&gap, 0.5);
            y = *samples.states.last().unwrap();
            y[2] = phys.fluxes(comp, &bouts, &body_of(&y)).exercise;
            assert_relative_eq!(body_of(&y).mass_kg(), week.end.mass_kg, max_relative = 1e-9);
        }
        let end = body_of(&y);
        let stored = rho_f * (end.fat_kg - b0.fat_kg) + rho_l * (end.lean_kg - b0.lean_kg);
        assert!(stored < 0.0);
        assert_relative_eq!(stored, imbalance, max_relative = 1e-6);
    }
}

#[test]
fn the_fractions_stop_at_minus_one_half() {
    // docs/file-formats.md section 1: -0.5 is allowed, -0.6 is refused.
    let ok = PLAN.replace("intake_fraction = -0.3", "intake_fraction = -0.5");
    assert!(parse_plan("neg.toml", &ok).is_ok());
    for bad in [
        PLAN.replace("intake_fraction = -0.3", "intake_fraction = -0.6"),
        PLAN.replace("activity_fraction = -0.4", "activity_fraction = -0.6"),
    ] {
        let e = parse_plan("neg.toml", &bad).expect_err("out of range");
        assert!(e.to_string().contains("allowed -0.5 to"), "{e}");
    }
}
