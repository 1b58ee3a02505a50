//! The `goal` command (docs/commands.md, `goal`): the dose a goal needs, round-tripped
//! through the plan for every dose kind, under a cap or a split, inside the ramp, met
//! without exercise or out of reach; its JSON contract (docs/file-formats.md section 4.3)
//! and its messages.
//!
//! Numbers come from library calls; command-line behaviour from the real binary.
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::plan_text::*;
use dosewright::commands::compare::with_added_scenarios;
use dosewright::simulate::Simulation;
use dosewright::simulate::goal::{GoalAnswer, GoalRequest, allowed_range, solve};
use serde_json::Value;

/// A dose written with the resolution's decimals (0.1 for kcal/kg/week, else 1).
fn dose_str(d: f64, resolution: f64) -> String {
    if resolution < 1.0 {
        format!("{d:.1}")
    } else {
        format!("{d:.0}")
    }
}

/// One round-trip case: a plan, the key of its dose, and the goal.
struct GoalCase {
    what: &'static str,
    plan: String,
    key: &'static str,
    lose_kg: f64,
    by_week: u32,
}

/// Plans of each dose kind, each with something of the full model switched on
/// (rounding to 5 minutes, add-session over a maximum, a net per-current-kg dose, a
/// walking equation), all with ramps that end before the goal week.
fn goal_cases() -> Vec<GoalCase> {
    vec![
        GoalCase {
            what: "kcal_per_session, minutes rounded up to 5, ramp of 4 weeks",
            plan: plan_text(
                PARTICIPANT_ESTIMATED,
                "weeks = 16\nfollow_up_weeks = 8\nsession_days = [\"mon\", \"wed\", \"fri\"]\nround_minutes_to = 5",
                "kcal_per_session = 300",
                "weeks = 4\nstart_fraction = 0.5",
                "met = 5.0",
                SCENARIOS,
            ),
            key: "kcal_per_session",
            lose_kg: 2.5,
            by_week: 12,
        },
        GoalCase {
            what: "kcal_per_week, add-session over a 75-minute maximum",
            plan: plan_text(
                PARTICIPANT_MEASURED,
                "weeks = 20\nsession_days = [\"mon\", \"wed\", \"fri\"]\nspare_days = [\"tue\", \"thu\", \"sat\", \"sun\"]\nmax_session_minutes = 75\nover_max = \"add-session\"",
                "kcal_per_week = 1500",
                "",
                "met = 6.0",
                SCENARIOS,
            ),
            key: "kcal_per_week",
            lose_kg: 3.0,
            by_week: 16,
        },
        GoalCase {
            what: "kcal_per_kg_week, net basis, current mass, ramp of 6 weeks",
            plan: plan_text(
                PARTICIPANT_ESTIMATED,
                "weeks = 24\nfollow_up_weeks = 4\nsession_days = [\"tue\", \"thu\", \"sat\", \"sun\"]",
                "kcal_per_kg_week = 12.0\nbasis = \"net\"\nmass_basis = \"current\"",
                "weeks = 6\nstart_fraction = 0.4",
                "met = 4.5",
                SCENARIOS,
            ),
            key: "kcal_per_kg_week",
            lose_kg: 3.0,
            by_week: 20,
        },
        GoalCase {
            what: "minutes_per_week, ACSM walking equation, ramp of 2 weeks",
            plan: plan_text(
                PARTICIPANT_MEASURED,
                "weeks = 12\nsession_days = [\"mon\", \"tue\", \"thu\", \"fri\", \"sat\"]",
                "minutes_per_week = 150",
                "weeks = 2",
                "walking = { speed_kmh = 5.6, grade_percent = 4.0 }",
                SCENARIOS,
            ),
            key: "minutes_per_week",
            lose_kg: 1.5,
            by_week: 10,
        },
    ]
}

/// Loss by the end of week `n` (the mass at `weeks[n-1].end`) of scenario `name`.
fn loss_by(s: &Simulation, name: &str, n: u32) -> f64 {
    let sc = s
        .scenarios
        .iter()
        .find(|x| x.name == name)
        .unwrap_or_else(|| panic!("scenario {name:?} simulated"));
    s.baseline.mass_kg - sc.weeks[n as usize - 1].end.mass_kg
}

/// The round trip for one case: every scenario's dose, put back in the plan text,
/// reaches the goal; one resolution step lower does not. Returns the answers.
fn round_trip(c: &GoalCase) -> Vec<GoalAnswer> {
    let plan = parse(&c.plan);
    let req = GoalRequest {
        lose_kg: c.lose_kg,
        by_week: c.by_week,
    };
    let answers = solve(&plan, &req).expect("the goal solves");
    assert_eq!(
        answers.len(),
        plan.scenarios.len(),
        "{}: one answer per scenario",
        c.what
    );
    let (lo, _) = allowed_range(&plan.protocol.dose.amount);
    for a in &answers {
        let ctx = format!("{} / {}", c.what, a.name);
        assert!(
            a.reachable,
            "{ctx}: designed to be reachable; reason {:?}",
            a.reason
        );
        assert_eq!(a.dose_unit, c.key, "{ctx}: dose_unit is the plan's key");
        let res = if c.key == "kcal_per_kg_week" {
            0.1
        } else {
            1.0
        };
        assert_eq!(a.resolution, res, "{ctx}: resolution of the dose grid");
        let d = a.dose.expect("a reachable goal has a dose");
        assert!(d > 0.0, "{ctx}: these goals need exercise");
        // On the resolution grid (invariant of the reported rounding).
        assert!(
            ((d / res).round() * res - d).abs() < 1e-9,
            "{ctx}: {d} on the grid of {res}"
        );

        // Put back in the plan, simulated as `schedule` runs it: reaches the goal.
        let at = sim(&set_line(&c.plan, c.key, &dose_str(d, res)));
        let loss = loss_by(&at, &a.name, c.by_week);
        assert!(
            loss >= c.lose_kg,
            "{ctx}: dose {d} loses {loss} kg by week {}, less than the goal {}",
            c.by_week,
            c.lose_kg
        );
        // Invariant: the solver ran the same model, so it reports the same loss.
        let reported = a.loss_kg.expect("loss at the dose");
        assert!(
            (reported - loss).abs() < 1e-9,
            "{ctx}: reported loss {reported} vs {loss}"
        );
        let sc = at
            .scenarios
            .iter()
            .find(|x| x.name == a.name)
            .expect("scenario");
        assert_eq!(
            a.minutes_week1,
            Some(sc.weeks[0].minutes_per_session),
            "{ctx}: week-1 minutes"
        );
        assert_eq!(
            a.minutes_goal_week,
            Some(sc.weeks[c.by_week as usize - 1].minutes_per_session),
            "{ctx}: goal-week minutes"
        );

        // One step lower (still a valid plan) does not reach it.
        let lower = d - res;
        if lower >= lo - 1e-9 {
            let below = sim(&set_line(&c.plan, c.key, &dose_str(lower, res)));
            let loss_lower = loss_by(&below, &a.name, c.by_week);
            assert!(
                loss_lower < c.lose_kg,
                "{ctx}: one step lower ({lower}) already loses {loss_lower} kg >= {}: not the smallest dose",
                c.lose_kg
            );
            let reported_lower = a.loss_one_step_lower_kg.expect("loss one step lower");
            assert!(
                (reported_lower - loss_lower).abs() < 1e-9,
                "{ctx}: reported loss one step lower {reported_lower} vs {loss_lower}"
            );
        }
    }
    answers
}

#[test]
fn goal_round_trip_kcal_per_session() {
    round_trip(&goal_cases()[0]);
}

#[test]
fn goal_round_trip_kcal_per_week_with_add_session() {
    round_trip(&goal_cases()[1]);
}

#[test]
fn goal_round_trip_kcal_per_kg_week_net_current_mass() {
    round_trip(&goal_cases()[2]);
}

#[test]
fn goal_round_trip_minutes_per_week() {
    round_trip(&goal_cases()[3]);
}

/// Scenarios whose goals stay within a 30-minute maximum.
const LIGHT_SCENARIOS: &str = r#"
[[scenario]]
name = "as prescribed"

[[scenario]]
name = "eats back 20%"
intake_fraction = 0.2
intake_lag_days = 7.0
"#;

#[test]
fn goal_round_trip_with_sessions_capped_at_the_maximum() {
    // `cap` holds sessions at 30 min: the loss is flat above the cap's dose, and the
    // smallest dose below it still round-trips.
    round_trip(&GoalCase {
        what: "kcal_per_week, cap at 30 min",
        plan: plan_text(
            PARTICIPANT_ESTIMATED,
            "weeks = 12\nsession_days = [\"mon\", \"wed\", \"fri\"]\nmax_session_minutes = 30\nover_max = \"cap\"",
            "kcal_per_week = 600",
            "",
            "met = 5.0",
            LIGHT_SCENARIOS,
        ),
        key: "kcal_per_week",
        lose_kg: 0.5,
        by_week: 10,
    });
}

#[test]
fn goal_round_trip_with_sessions_split_in_two_bouts() {
    // `split` gives each session as two bouts, the 30-min maximum applying per bout.
    let answers = round_trip(&GoalCase {
        what: "kcal_per_kg_week, split at 30 min",
        plan: plan_text(
            PARTICIPANT_ESTIMATED,
            "weeks = 12\nsession_days = [\"mon\", \"wed\", \"fri\"]\nmax_session_minutes = 30\nover_max = \"split\"",
            "kcal_per_kg_week = 6.0",
            "",
            "met = 5.0",
            LIGHT_SCENARIOS,
        ),
        key: "kcal_per_kg_week",
        lose_kg: 1.0,
        by_week: 10,
    });
    assert!(
        answers
            .iter()
            .any(|a| a.minutes_goal_week.is_some_and(|m| m > 30)),
        "the case reaches the split: {:?}",
        answers
            .iter()
            .map(|a| a.minutes_goal_week)
            .collect::<Vec<_>>()
    );
}

#[test]
fn goal_out_of_reach_under_a_cap_says_the_cap_limits_it() {
    let text = plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 12\nsession_days = [\"mon\", \"wed\", \"fri\"]\nmax_session_minutes = 30\nover_max = \"cap\"",
        "kcal_per_week = 600",
        "",
        "met = 5.0",
        LIGHT_SCENARIOS,
    );
    let answers = solve(
        &parse(&text),
        &GoalRequest {
            lose_kg: 3.0,
            by_week: 10,
        },
    )
    .expect("solves");
    for a in &answers {
        assert!(!a.reachable);
        let r = a.reason.as_deref().expect("a reason");
        assert!(r.contains("30"), "{r}");
        assert!(
            !r.contains("beyond the plan's maximum"),
            "capped sessions are at, not beyond, the maximum: {r}"
        );
    }
}

#[test]
fn goal_more_compensation_needs_a_larger_dose() {
    // docs/model.md section 5: the share of the dose that reaches the stores falls with c_I and c_A,
    // so a scenario that eats back 40% (lagged) needs more than one that eats nothing back.
    let answers = round_trip(&goal_cases()[0]);
    let dose = |n: &str| {
        answers
            .iter()
            .find(|a| a.name == n)
            .and_then(|a| a.dose)
            .expect(n)
    };
    assert!(dose("eats back 40%") > dose("as prescribed"));
    assert!(dose("moves less 30%") > dose("as prescribed"));
}

#[test]
fn goal_round_trip_when_the_goal_week_falls_inside_the_ramp() {
    // docs/commands.md (`goal`): solved on the full model as `schedule` runs it, ramp included. A goal
    // at week 5 of a plan that ramps over 8 weeks must use the plan's ramp.
    let c = GoalCase {
        what: "kcal_per_week, goal week inside an 8-week ramp",
        plan: plan_text(
            PARTICIPANT_ESTIMATED,
            "weeks = 16\nsession_days = [\"mon\", \"wed\", \"fri\"]",
            "kcal_per_week = 1500",
            "weeks = 8\nstart_fraction = 0.3",
            "met = 5.0",
            SCENARIOS,
        ),
        key: "kcal_per_week",
        lose_kg: 1.0,
        by_week: 5,
    };
    round_trip(&c);
}

#[test]
fn goal_met_without_exercise_gives_dose_zero_and_says_so() {
    // A diet arm of -600 kcal/day loses about 600*56/7750 = 4 kg in 8 weeks on its own
    // (docs/model.md section 2, ~7,750 kcal/kg tissue), far beyond a 1 kg goal.
    let extra = "\n[[scenario]]\nname = \"diet -600\"\ndiet_change_kcal_per_day = -600\n";
    let text = plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 12\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_week = 1200",
        "",
        "met = 5.0",
        &format!("{SCENARIOS}{extra}"),
    );
    let answers = solve(
        &parse(&text),
        &GoalRequest {
            lose_kg: 1.0,
            by_week: 8,
        },
    )
    .expect("solves");
    let a = answers
        .iter()
        .find(|a| a.name == "diet -600")
        .expect("the diet arm");
    assert!(a.reachable);
    assert_eq!(a.dose, Some(0.0), "dose 0 when no exercise is needed");
    assert_eq!(a.minutes_week1, Some(0));
    let reason = a.reason.as_deref().expect("a reason says so");
    assert!(reason.contains("no exercise"), "reason: {reason}");
    // The exercising arms still need a dose (the participant is at balance).
    let b = answers
        .iter()
        .find(|a| a.name == "as prescribed")
        .expect("as prescribed");
    assert!(b.dose.expect("reachable") > 0.0);

    // The JSON says the same: dose 0, not null.
    let j = cli_json(&text, "goal", &["--lose-kg", "1", "--by-week", "8"]);
    let sc = arr(&j, "scenarios")
        .iter()
        .find(|x| s(x, "name") == "diet -600")
        .expect("in JSON");
    assert_eq!(sc["dose"].as_f64(), Some(0.0));
    assert_eq!(sc["reachable"], Value::Bool(true));
    assert!(s(sc, "reason").contains("no exercise"));
}

#[test]
fn goal_just_beyond_the_diet_alone_needs_the_smallest_allowed_dose() {
    // The edge of the bracket: a goal 1 g beyond what the diet arm loses with no
    // exercise is met by the smallest kcal_per_week the plan allows (10, docs/file-formats.md section 1):
    // even 3 one-minute sessions a week add ~0.02 kg in 8 weeks.
    let text = plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 12\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_week = 1200",
        "",
        "met = 5.0",
        "\n[[scenario]]\nname = \"diet -600\"\ndiet_change_kcal_per_day = -600\n",
    );
    let plan = parse(&text);
    let (b, masses) = dosewright::simulate::no_exercise_masses(&plan).expect("runs");
    let without = b.mass_kg - masses[0][7];
    assert!(without > 2.0, "the diet alone loses {without} kg by week 8");
    let goal = without + 0.001;
    let a = &solve(
        &plan,
        &GoalRequest {
            lose_kg: goal,
            by_week: 8,
        },
    )
    .expect("solves")[0];
    assert!(a.reachable, "{:?}", a.reason);
    assert_eq!(a.dose, Some(allowed_range(&plan.protocol.dose.amount).0));
    let loss = loss_by(
        &sim(&set_line(&text, "kcal_per_week", "10")),
        "diet -600",
        8,
    );
    assert!(loss >= goal, "10 kcal/week loses {loss} >= {goal}");
    assert!(a.loss_one_step_lower_kg.expect("reported") < goal);
}

#[test]
fn goal_out_of_reach_under_full_compensation() {
    // docs/model.md section 5: with c_I (1 - beta) + c_A >= 1 (here 1.2 * 0.9 = 1.08) more exercise
    // brings no more loss.
    let text = plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 12\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_week = 1200",
        "",
        "met = 5.0",
        "\n[[scenario]]\nname = \"eats back 120%\"\nintake_fraction = 1.2\n",
    );
    let answers = solve(
        &parse(&text),
        &GoalRequest {
            lose_kg: 2.0,
            by_week: 10,
        },
    )
    .expect("an unreachable goal is an answer, not an error");
    let a = &answers[0];
    assert!(!a.reachable);
    assert_eq!(a.dose, None);
    let reason = a.reason.as_deref().expect("a reason");
    assert!(
        reason.contains("compensation"),
        "reason names compensation: {reason}"
    );

    // The binary: exit 0, reachable false, dose null, the reason in words.
    let j = cli_json(&text, "goal", &["--lose-kg", "2", "--by-week", "10"]);
    let sc = &arr(&j, "scenarios")[0];
    assert_eq!(sc["reachable"], Value::Bool(false));
    assert!(sc["dose"].is_null(), "dose null when not reachable: {sc}");
    assert!(s(sc, "reason").contains("compensation"));

    // The table says it in words too.
    let table = cli(&text, "goal", &["--lose-kg", "2", "--by-week", "10"]);
    assert_eq!(table.code, Some(0), "{}", table.stderr);
    assert!(table.stdout.contains("out of reach"));
    assert!(table.stdout.contains("compensation eats the dose"));
}

#[test]
fn goal_out_of_reach_when_the_goal_is_huge() {
    // 40 kg in 4 weeks: beyond any dose in the allowed range (docs/file-formats.md section 1, 0.5-150
    // kcal/kg/week), whatever the scenario.
    let text = plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 12\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_kg_week = 12.0",
        "",
        "met = 5.0",
        SCENARIOS,
    );
    let answers = solve(
        &parse(&text),
        &GoalRequest {
            lose_kg: 40.0,
            by_week: 4,
        },
    )
    .expect("solves");
    for a in &answers {
        assert!(!a.reachable, "{}: 40 kg in 4 weeks is out of reach", a.name);
        assert_eq!(a.dose, None, "{}", a.name);
        assert!(
            a.reason.as_deref().is_some_and(|r| !r.is_empty()),
            "{}: a reason",
            a.name
        );
    }
    let j = cli_json(&text, "goal", &["--lose-kg", "40", "--by-week", "4"]);
    for sc in arr(&j, "scenarios") {
        assert_eq!(sc["reachable"], Value::Bool(false));
        assert!(sc["dose"].is_null());
        assert!(sc["reason"].is_string());
    }
}

#[test]
fn goal_json_has_the_plan_md_keys_and_matches_the_library() {
    let c = &goal_cases()[0];
    let text = c.plan.clone();
    let j = cli_json(
        &text,
        "goal",
        &[
            "--lose-kg",
            "2.5",
            "--by-week",
            "12",
            "--add-scenario",
            "eats back 120%:intake_fraction=1.2",
        ],
    );
    let answers = solve(
        &with_added_scenarios(
            parse(&text),
            &["eats back 120%:intake_fraction=1.2".to_string()],
        )
        .expect("the spec is valid"),
        &GoalRequest {
            lose_kg: 2.5,
            by_week: 12,
        },
    )
    .expect("solves");
    let scenarios = arr(&j, "scenarios");
    assert_eq!(scenarios.len(), 5, "four plan scenarios and the added one");
    for (sc, a) in scenarios.iter().zip(&answers) {
        for key in [
            "name",
            "reachable",
            "dose",
            "dose_unit",
            "minutes_week1",
            "minutes_goal_week",
            "reason",
        ] {
            assert!(sc.get(key).is_some(), "JSON contract key {key:?} in {sc}");
        }
        assert_eq!(s(sc, "name"), a.name);
        assert_eq!(s(sc, "dose_unit"), "kcal_per_session");
        assert_eq!(sc["reachable"].as_bool(), Some(a.reachable));
        assert!(sc["reason"].is_null() || sc["reason"].is_string());
        match a.dose {
            Some(d) => assert_eq!(sc["dose"].as_f64(), Some(d), "{}", a.name),
            None => assert!(
                sc["dose"].is_null(),
                "{}: dose null when not reachable",
                a.name
            ),
        }
        if a.reachable {
            assert_eq!(sc["minutes_week1"].as_u64(), a.minutes_week1.map(u64::from));
            assert_eq!(
                sc["minutes_goal_week"].as_u64(),
                a.minutes_goal_week.map(u64::from)
            );
        }
    }
    assert_eq!(scenarios[4]["reachable"], Value::Bool(false));
}

#[test]
fn goal_lose_percent_is_of_baseline_mass() {
    // 5% of 88 kg is 4.4 kg: the same answer as --lose-kg 4.4 (closed form).
    let text = &goal_cases()[0].plan;
    let a = cli_json(text, "goal", &["--lose-percent", "5", "--by-week", "16"]);
    let b = cli_json(text, "goal", &["--lose-kg", "4.4", "--by-week", "16"]);
    assert!((num(&a["request"], "lose_kg") - 4.4).abs() < 1e-9);
    assert_eq!(a["scenarios"], b["scenarios"]);
}

#[test]
fn goal_warns_when_the_rate_exceeds_one_percent_a_week() {
    // `goal-rate-over-1-percent` (docs/warnings.md): 4 kg in 4 weeks from 88 kg is 1.14% a week; 1 kg in 12 weeks is not.
    let text = &goal_cases()[0].plan;
    let codes = |j: &Value| -> Vec<String> {
        arr(j, "warnings")
            .iter()
            .map(|w| s(w, "code").to_string())
            .collect()
    };
    let fast = cli_json(text, "goal", &["--lose-kg", "4", "--by-week", "4"]);
    assert!(codes(&fast).iter().any(|c| c == "goal-rate-over-1-percent"));
    let slow = cli_json(text, "goal", &["--lose-kg", "1", "--by-week", "12"]);
    assert!(!codes(&slow).iter().any(|c| c == "goal-rate-over-1-percent"));
}

#[test]
fn goal_invalid_requests_exit_2_with_a_clear_message() {
    // The plan has 16 protocol weeks and 8 of follow-up: week 17 is outside the protocol.
    let text = &goal_cases()[0].plan;
    let g = |args: &[&str], needles: &[&str]| assert_usage_error(text, "goal", args, needles);
    g(
        &["--lose-kg", "0", "--by-week", "8"],
        &["positive", "got 0"],
    );
    g(&["--lose-kg=-1", "--by-week", "8"], &["positive", "got -1"]);
    g(&["--lose-kg", "nan", "--by-week", "8"], &["positive"]);
    g(
        &["--lose-kg", "2", "--by-week", "0"],
        &["--by-week 0", "allowed 1 to 16"],
    );
    g(
        &["--lose-kg", "2", "--by-week", "17"],
        &["--by-week 17", "allowed 1 to 16"],
    );
    g(
        &["--lose-percent", "150", "--by-week", "8"],
        &[
            "invalid value '150' for '--lose-percent <PERCENT>'",
            "below 100",
        ],
    );
    g(
        &["--lose-percent", "0", "--by-week", "8"],
        &[
            "invalid value '0' for '--lose-percent <PERCENT>'",
            "above 0",
        ],
    );
    // Both, and neither: clap refuses them (exit 2, usage on stderr).
    g(
        &["--lose-kg", "2", "--lose-percent", "2", "--by-week", "8"],
        &["--lose-kg", "cannot be used with", "--lose-percent"],
    );
    g(
        &["--by-week", "8"],
        &["required", "--lose-kg", "--lose-percent"],
    );
    g(&["--lose-kg", "2"], &["required", "--by-week"]);
    // A bad ad-hoc scenario is refused before any solving.
    g(
        &[
            "--lose-kg",
            "2",
            "--by-week",
            "8",
            "--add-scenario",
            "x:intake_fraction=2",
        ],
        &["--add-scenario", "intake_fraction", "out of range"],
    );
}

#[test]
fn goal_lose_kg_negative_as_a_separate_argument_exits_2() {
    // `--lose-kg -1` (a space, not '='): refused with exit 2 and nothing on stdout.
    let text = &goal_cases()[0].plan;
    assert_usage_error(
        text,
        "goal",
        &["--lose-kg", "-1", "--by-week", "8"],
        &["-1"],
    );
}

#[test]
fn goal_lose_kg_negative_as_a_separate_argument_says_it_must_be_positive() {
    let text = &goal_cases()[0].plan;
    assert_usage_error(
        text,
        "goal",
        &["--lose-kg", "-1", "--by-week", "8"],
        &["positive"],
    );
}
