//! The physiology checks of docs/model.md section 5: regain toward baseline in
//! follow-up, lagged intake compensation fading after the protocol, and the early share
//! of the dose a closed form gives for intake and activity compensation.
//!
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::plan_text::*;
use dosewright::model::energy::calibrate;
use dosewright::model::{BodyState, Bout, Compensation};

#[test]
fn follow_up_regains_toward_baseline_as_prescribed() {
    // docs/model.md section 5 ("Follow-up"): after the dose stops, intake stays at EI0 while expenditure
    // is lower at the lower mass, so mass climbs back toward, but not past, baseline.
    let s = sim(&compare_plan());
    let sc = &s.scenarios[0];
    assert_eq!(sc.name, "as prescribed");
    let protocol_end = sc.weeks[15].end.mass_kg;
    let follow_end = sc.weeks[23].end.mass_kg;
    assert!(
        protocol_end < s.baseline.mass_kg - 1.0,
        "the protocol lost mass"
    );
    assert!(
        follow_end > protocol_end,
        "regain in follow-up: {protocol_end} -> {follow_end}"
    );
    assert!(
        follow_end < s.baseline.mass_kg,
        "toward baseline, not past it"
    );
    for pair in sc.weeks[15..].windows(2) {
        assert!(
            pair[1].end.mass_kg > pair[0].end.mass_kg,
            "regain week by week"
        );
    }
    assert_eq!(sc.outcome.protocol_end_mass_kg, protocol_end);
}

#[test]
fn lagged_intake_compensation_fades_after_the_protocol() {
    // docs/model.md section 5: dXbar/dt = (X - Xbar)/tau_I and EI = EI0 + c_I Xbar; with X = 0 in
    // follow-up Xbar decays exactly as exp(-t/tau_I) (closed form), so the extra
    // intake after F follow-up weeks is the protocol-end extra times exp(-7F/tau_I).
    let text = plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 16\nfollow_up_weeks = 8\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_kg_week = 12.0",
        "weeks = 4",
        "met = 5.0",
        "\n[[scenario]]\nname = \"eats back half, lagged\"\nintake_fraction = 0.5\nintake_lag_days = 28\n",
    );
    let s = sim(&text);
    let sc = &s.scenarios[0];
    let ei0 = s.baseline.intake_kcal_per_day;
    let at_protocol_end = sc.weeks[15].end.intake_kcal_per_day;
    let at_follow_end = sc.weeks[23].end.intake_kcal_per_day;
    assert!(
        at_protocol_end > ei0 + 50.0,
        "extra intake during the protocol: {at_protocol_end} vs {ei0}"
    );
    assert!(
        at_follow_end < at_protocol_end,
        "extra intake fades: {at_protocol_end} -> {at_follow_end}"
    );
    assert!(at_follow_end > ei0, "fades with its lag, not at once");
    let expected = (at_protocol_end - ei0) * (-56.0f64 / 28.0).exp();
    let got = at_follow_end - ei0;
    assert!(
        ((got - expected) / expected).abs() < 1e-5,
        "closed form exp(-56/28): extra intake {got} vs {expected}"
    );
}

/// Baseline fluxes with and without a week of bouts, for compensation `c`.
fn start_deficit_ratio(text: &str, c: Compensation) -> (f64, f64) {
    let plan = parse(text);
    let (b, phys) = calibrate(&plan.participant.subject, &plan.constants).expect("calibrates");
    let state = BodyState {
        fat_kg: b.fat_mass_kg,
        lean_kg: b.fat_free_mass_kg,
        lagged_exercise_kcal_per_day: 0.0,
    };
    let bouts: Vec<Bout> = (0..3)
        .map(|_| Bout {
            minutes: 45.0,
            intensity: plan.activity.intensity.clone(),
        })
        .collect();
    let with = phys.fluxes(&c, &bouts, &state);
    let without = phys.fluxes(&c, &[], &state);
    let added = (with.expenditure - with.intake) - (without.expenditure - without.intake);
    assert!(with.exercise > 0.0);
    (added / with.exercise, with.exercise)
}

#[test]
fn start_deficit_ratio_is_one_minus_ci_times_one_minus_beta_minus_ca() {
    // docs/model.md section 5 (the early dose share, a closed form): at the start, no lag, no adaptation, the deficit rate
    // exercise adds over the net exercise rate is 1 - c_I (1 - beta) - c_A, to 1e-9;
    // the first week's dose_share is within 1e-2 of it.
    let base = compare_plan();
    let beta = parse(&base).constants.tef_fraction;
    for (c_i, c_a) in [
        (0.0, 0.0),
        (0.3, 0.0),
        (0.0, 0.2),
        (0.4, 0.15),
        (0.8, 0.1),
        (1.0, 0.0),
    ] {
        let want = 1.0 - c_i * (1.0 - beta) - c_a;
        let (ratio, _) = start_deficit_ratio(&base, compensation(c_i, c_a));
        assert!(
            (ratio - want).abs() < 1e-9,
            "c_I {c_i} c_A {c_a}: ratio {ratio} vs {want}"
        );

        let text = plan_text(
            PARTICIPANT_ESTIMATED,
            "weeks = 4\nsession_days = [\"mon\", \"wed\", \"fri\"]",
            "kcal_per_kg_week = 12.0",
            "",
            "met = 5.0",
            &format!(
                "\n[[scenario]]\nname = \"s\"\nintake_fraction = {c_i}\nactivity_fraction = {c_a}\n"
            ),
        );
        let s = sim(&text);
        let share = s.scenarios[0].weeks[0].end.dose_share;
        assert!(
            (share - want).abs() < 1e-2,
            "c_I {c_i} c_A {c_a}: week-1 dose_share {share} vs {want}"
        );
    }
}

#[test]
fn full_intake_compensation_leaves_beta_of_the_dose() {
    // docs/model.md section 5 (the early dose share, a closed form): c_I = 1, no lag: the extra food carries its own TEF,
    // so the deficit rate at the start is beta * X, and week 1's dose_share is near
    // beta = 0.10 (within 1e-2).
    let base = compare_plan();
    let beta = parse(&base).constants.tef_fraction;
    assert_eq!(beta, 0.10);
    let (ratio, x) = start_deficit_ratio(&base, compensation(1.0, 0.0));
    assert!(
        (ratio * x - beta * x).abs() < 1e-9 * x,
        "deficit rate {} vs beta*X {}",
        ratio * x,
        beta * x
    );

    let text = plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 8\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_kg_week = 12.0",
        "",
        "met = 5.0",
        "\n[[scenario]]\nname = \"eats it all back\"\nintake_fraction = 1.0\n",
    );
    let s = sim(&text);
    let share = s.scenarios[0].weeks[0].end.dose_share;
    assert!(
        (share - beta).abs() < 1e-2,
        "week-1 dose_share {share} vs beta {beta}"
    );
    // The compare JSON carries the same share.
    let j = cli_json(&text, "compare", &["--at-week", "1"]);
    let row = &arr(&arr(&j, "scenarios")[0], "rows")[0];
    assert_eq!(row["week"].as_u64(), Some(1));
    assert!((num(row, "dose_share") - share).abs() < 1e-4);
}
