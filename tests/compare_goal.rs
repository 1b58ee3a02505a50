//! `compare` and `goal` (issue 3): the dose a goal needs, round-tripped through the
//! plan; the scenario comparison and its JSON contract (docs/file-formats.md section 4), cross-checked with
//! `schedule`; the dose-response table; the projection band; and the physiology
//! checks of docs/model.md section 5.
//!
//! Numbers come from library calls; command-line behaviour from the real binary.
//! Every participant here is invented and goes by a pseudonymous code.

use dosewright::commands::compare::{compare_report, with_added_scenarios};
use dosewright::model::energy::calibrate;
use dosewright::model::{BodyState, Bout, Compensation};
use dosewright::plan::{Plan, parse_plan};
use dosewright::simulate::goal::{GoalAnswer, GoalRequest, allowed_range, solve};
use dosewright::simulate::{Phase, Simulation, simulate};
use serde_json::Value;

// ---------------------------------------------------------------------------
// Plans as TOML text
// ---------------------------------------------------------------------------

/// An invented participant with body fat and RMR estimated (so the band has width).
const PARTICIPANT_ESTIMATED: &str = r#"[participant]
id = "CG-114"
sex = "female"
age_years = 45
height_cm = 166.0
mass_kg = 88.0
pal = 1.5
"#;

/// An invented participant with body fat and RMR both measured (a zero-width band).
const PARTICIPANT_MEASURED: &str = r#"[participant]
id = "CG-207"
sex = "male"
age_years = 52
height_cm = 180.0
mass_kg = 101.0
body_fat_percent = 31.0
rmr_kcal_per_day = 1850
pal = 1.5
"#;

/// The four scenarios most tests run: none compensated, lagged eating back, a mix, and
/// moving less. Each has `c_I (1 - beta) + c_A < 1`, so loss rises with the dose
/// (docs/model.md section 5).
const SCENARIOS: &str = r#"
[[scenario]]
name = "as prescribed"

[[scenario]]
name = "eats back 40%"
intake_fraction = 0.4
intake_lag_days = 21.0

[[scenario]]
name = "mixed"
intake_fraction = 0.25
intake_lag_days = 14.0
activity_fraction = 0.15
rmr_adaptation_kcal_per_kg = 5.0

[[scenario]]
name = "moves less 30%"
activity_fraction = 0.3
"#;

/// A whole plan: participant, protocol lines, the dose table's lines, optional ramp
/// and activity lines, then the scenarios.
fn plan_text(
    participant: &str,
    protocol: &str,
    dose: &str,
    ramp: &str,
    activity: &str,
    scenarios: &str,
) -> String {
    let ramp = if ramp.is_empty() {
        String::new()
    } else {
        format!("\n[protocol.ramp]\n{ramp}\n")
    };
    format!(
        "{participant}\n[protocol]\nstart = 2027-03-01\n{protocol}\n\n[protocol.dose]\n{dose}\n{ramp}\n[activity]\n{activity}\n{scenarios}"
    )
}

/// `text` with the one line that starts with `key =` replaced by `key = value`.
fn set_line(text: &str, key: &str, value: &str) -> String {
    let prefix = format!("{key} =");
    let hits = text.lines().filter(|l| l.starts_with(&prefix)).count();
    assert_eq!(hits, 1, "the line {prefix:?} must occur exactly once");
    text.lines()
        .map(|l| {
            if l.starts_with(&prefix) {
                format!("{key} = {value}")
            } else {
                l.to_string()
            }
        })
        .collect::<Vec<_>>()
        .join("\n")
        + "\n"
}

fn parse(text: &str) -> Plan {
    parse_plan("test.toml", text).unwrap_or_else(|e| panic!("the test plan is valid: {e}\n{text}"))
}

fn sim(text: &str) -> Simulation {
    simulate(&parse(text)).expect("the test plan simulates")
}

/// A dose written with the resolution's decimals (0.1 for kcal/kg/week, else 1).
fn dose_str(d: f64, resolution: f64) -> String {
    if resolution < 1.0 {
        format!("{d:.1}")
    } else {
        format!("{d:.0}")
    }
}

// ---------------------------------------------------------------------------
// The binary
// ---------------------------------------------------------------------------

struct Out {
    code: Option<i32>,
    stdout: String,
    stderr: String,
}

/// A scratch folder that removes itself.
struct Scratch(tempfile::TempDir);

impl Scratch {
    fn new() -> Scratch {
        let dir = tempfile::Builder::new()
            .prefix("dosewright-compare-goal-")
            .tempdir()
            .expect("create a scratch folder");
        Scratch(dir)
    }
}

/// `dosewright SUBCOMMAND plan.toml ARGS...` with `plan` written to a scratch folder.
fn cli(plan: &str, subcommand: &str, args: &[&str]) -> Out {
    let dir = Scratch::new();
    std::fs::write(dir.0.path().join("plan.toml"), plan).expect("write the plan");
    let out = assert_cmd::Command::cargo_bin("dosewright")
        .expect("the dosewright binary is built")
        .current_dir(dir.0.path())
        .env("NO_COLOR", "1")
        .arg(subcommand)
        .arg("plan.toml")
        .args(args)
        .output()
        .expect("the binary runs");
    Out {
        code: out.status.code(),
        stdout: String::from_utf8(out.stdout).expect("stdout is UTF-8"),
        stderr: String::from_utf8(out.stderr).expect("stderr is UTF-8"),
    }
}

/// A run that must succeed with JSON on standard output.
fn cli_json(plan: &str, subcommand: &str, args: &[&str]) -> Value {
    let mut a = args.to_vec();
    a.extend(["--format", "json"]);
    let r = cli(plan, subcommand, &a);
    assert_eq!(
        r.code,
        Some(0),
        "{subcommand} {args:?} failed: {}",
        r.stderr
    );
    serde_json::from_str(&r.stdout).expect("valid JSON")
}

/// A run that must be refused as bad input: exit 2, nothing on standard output, and a
/// message on standard error containing every one of `needles`.
fn assert_usage_error(plan: &str, subcommand: &str, args: &[&str], needles: &[&str]) {
    let r = cli(plan, subcommand, args);
    assert_eq!(
        r.code,
        Some(2),
        "{subcommand} {args:?} must exit 2; stderr: {}",
        r.stderr
    );
    assert!(
        r.stdout.is_empty(),
        "{subcommand} {args:?} printed to stdout: {}",
        r.stdout
    );
    assert!(
        r.stderr.starts_with("error: "),
        "{args:?}: message starts with 'error: ': {}",
        r.stderr
    );
    for n in needles {
        assert!(
            r.stderr.contains(n),
            "{subcommand} {args:?}: message should mention {n:?}; got: {}",
            r.stderr
        );
    }
}

fn num(v: &Value, key: &str) -> f64 {
    let x = v
        .get(key)
        .unwrap_or_else(|| panic!("key {key:?} missing in {v}"))
        .as_f64()
        .unwrap_or_else(|| panic!("key {key:?} is not a number in {v}"));
    assert!(x.is_finite(), "{key} is finite");
    x
}

fn arr<'a>(v: &'a Value, key: &str) -> &'a Vec<Value> {
    v.get(key)
        .unwrap_or_else(|| panic!("key {key:?} missing"))
        .as_array()
        .unwrap_or_else(|| panic!("key {key:?} is not an array"))
}

fn s<'a>(v: &'a Value, key: &str) -> &'a str {
    v.get(key)
        .unwrap_or_else(|| panic!("key {key:?} missing in {v}"))
        .as_str()
        .unwrap_or_else(|| panic!("key {key:?} is not a string in {v}"))
}

// ---------------------------------------------------------------------------
// goal: the round trip
// ---------------------------------------------------------------------------

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
        assert_eq!(a.resolution, res, "{ctx}: resolution (issue 3)");
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
    // Issue 3: solved on the full model as `schedule` runs it, ramp included. A goal
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
    // Issue 3: 4 kg in 4 weeks from 88 kg is 1.14% a week; 1 kg in 12 weeks is not.
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

// ---------------------------------------------------------------------------
// compare
// ---------------------------------------------------------------------------

/// A 16 + 8 week plan at 12 kcal/kg/week, participant with estimates.
fn compare_plan() -> String {
    plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 16\nfollow_up_weeks = 8\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_kg_week = 12.0",
        "weeks = 4",
        "compendium_code = \"17200\"",
        SCENARIOS,
    )
}

const ROW_KEYS: [&str; 9] = [
    "week",
    "mass_kg",
    "fat_mass_kg",
    "fat_free_mass_kg",
    "mass_change_kg",
    "minutes_per_session",
    "prescribed_net_kcal",
    "achieved_deficit_kcal",
    "dose_share",
];

fn checkpoints_of(j: &Value) -> Vec<u64> {
    arr(j, "checkpoints")
        .iter()
        .map(|w| w.as_u64().expect("a week number"))
        .collect()
}

#[test]
fn compare_checkpoints_are_4_12_26_within_the_horizon_the_ends_and_at_week() {
    // Issue 3: weeks 4, 12, 26 (within the horizon), protocol end, follow-up end, --at-week.
    let j = cli_json(&compare_plan(), "compare", &[]);
    assert_eq!(checkpoints_of(&j), vec![4, 12, 16, 24]);
    let j = cli_json(
        &compare_plan(),
        "compare",
        &["--at-week", "7", "--at-week", "20"],
    );
    assert_eq!(checkpoints_of(&j), vec![4, 7, 12, 16, 20, 24]);
    // A checkpoint that is already there is not repeated.
    let j = cli_json(&compare_plan(), "compare", &["--at-week", "12"]);
    assert_eq!(checkpoints_of(&j), vec![4, 12, 16, 24]);

    let long = compare_plan().replacen(
        "weeks = 16\nfollow_up_weeks = 8",
        "weeks = 20\nfollow_up_weeks = 10",
        1,
    );
    assert!(long.contains("weeks = 20"));
    let j = cli_json(&long, "compare", &[]);
    assert_eq!(checkpoints_of(&j), vec![4, 12, 20, 26, 30]);

    let short = plan_text(
        PARTICIPANT_ESTIMATED,
        "weeks = 3\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_kg_week = 12.0",
        "",
        "met = 5.0",
        "",
    );
    let j = cli_json(&short, "compare", &[]);
    assert_eq!(
        checkpoints_of(&j),
        vec![3],
        "no checkpoint beyond the horizon"
    );
    let sc = &arr(&j, "scenarios")[0];
    assert_eq!(
        s(sc, "name"),
        "as prescribed",
        "no scenarios: one named as prescribed"
    );
}

#[test]
fn compare_rows_equal_the_schedule_end_states() {
    // Invariant: row N is the state at the end of week N (docs/file-formats.md section 4.2), the same run that
    // `schedule` prints as weeks[N-1].end.
    let text = compare_plan();
    let c = cli_json(&text, "compare", &["--at-week", "7"]);
    let sch = cli_json(&text, "schedule", &[]);
    let m0 = num(&sch["baseline"], "mass_kg");
    let cs = arr(&c, "scenarios");
    let ss = arr(&sch, "scenarios");
    assert_eq!(cs.len(), 4);
    assert_eq!(cs.len(), ss.len());
    let weeks = checkpoints_of(&c);
    for (a, b) in cs.iter().zip(ss) {
        assert_eq!(s(a, "name"), s(b, "name"));
        assert!(!s(a, "assumptions").is_empty());
        let rows = arr(a, "rows");
        assert_eq!(rows.len(), weeks.len(), "one row per checkpoint");
        for (row, &n) in rows.iter().zip(&weeks) {
            for key in ROW_KEYS {
                assert!(row.get(key).is_some(), "JSON contract key {key:?} in {row}");
            }
            assert_eq!(row["week"].as_u64(), Some(n));
            let w = &arr(b, "weeks")[n as usize - 1];
            assert_eq!(w["week"].as_u64(), Some(n));
            let end = &w["end"];
            for key in ["mass_kg", "fat_mass_kg", "fat_free_mass_kg"] {
                assert!(
                    (num(row, key) - num(end, key)).abs() < 1e-9,
                    "{} week {n} {key}: compare {} vs schedule {}",
                    s(a, "name"),
                    num(row, key),
                    num(end, key)
                );
            }
            for key in ["prescribed_net_kcal", "achieved_deficit_kcal", "dose_share"] {
                if end.get(key).is_some() {
                    assert!(
                        (num(row, key) - num(end, key)).abs() < 1e-9,
                        "week {n} {key}"
                    );
                }
            }
            assert_eq!(
                row["minutes_per_session"], w["minutes_per_session"],
                "week {n} minutes"
            );
            // Closed form: change from baseline (both rounded to 4 decimals).
            assert!((num(row, "mass_change_kg") - (num(end, "mass_kg") - m0)).abs() < 2e-4);
            // Invariant: mass is fat plus fat-free mass.
            assert!(
                (num(row, "mass_kg") - num(row, "fat_mass_kg") - num(row, "fat_free_mass_kg"))
                    .abs()
                    < 2e-4
            );
        }
        // Follow-up checkpoints have no minutes (docs/file-formats.md section 4.2).
        let last = rows.last().expect("rows");
        assert_eq!(last["minutes_per_session"].as_u64(), Some(0));
    }
}

#[test]
fn compare_band_brackets_the_central_mass() {
    // Invariant: the band is the lowest and highest of runs that include the central one.
    let j = cli_json(&compare_plan(), "compare", &["--at-week", "2"]);
    let mut widest: f64 = 0.0;
    for sc in arr(&j, "scenarios") {
        for row in arr(sc, "rows") {
            let (lo, m, hi) = (
                num(row, "mass_low_kg"),
                num(row, "mass_kg"),
                num(row, "mass_high_kg"),
            );
            assert!(lo <= m && m <= hi, "{}: {lo} <= {m} <= {hi}", s(sc, "name"));
            widest = widest.max(hi - lo);
        }
    }
    // With RMR and body fat both estimated the band has width (issue 3).
    assert!(
        widest > 0.01,
        "band width {widest} kg with estimated RMR and body fat"
    );
    // Say what the band is made of: the RMR equation's error and Deurenberg's SEE.
    let sources: Vec<&str> = arr(&j, "band_sources")
        .iter()
        .map(|v| v.as_str().expect("a string"))
        .collect();
    assert!(
        sources
            .iter()
            .any(|x| x.contains("RMR") && x.contains("scaled by")),
        "{sources:?}"
    );
    assert!(
        sources.iter().any(|x| x.contains("Deurenberg")),
        "{sources:?}"
    );
    assert!(s(&j, "band_meaning").contains("not a confidence interval"));
}

#[test]
fn compare_band_has_zero_width_when_rmr_and_body_fat_are_measured() {
    // Issue 3: the band comes only from the RMR equation's error and Deurenberg's
    // error; with both measured neither applies.
    let text = plan_text(
        PARTICIPANT_MEASURED,
        "weeks = 16\nfollow_up_weeks = 8\nsession_days = [\"mon\", \"wed\", \"fri\"]",
        "kcal_per_kg_week = 12.0",
        "",
        "met = 5.0",
        SCENARIOS,
    );
    let j = cli_json(&text, "compare", &[]);
    for sc in arr(&j, "scenarios") {
        for row in arr(sc, "rows") {
            assert_eq!(num(row, "mass_low_kg"), num(row, "mass_kg"));
            assert_eq!(num(row, "mass_high_kg"), num(row, "mass_kg"));
        }
    }
    let sources: Vec<&str> = arr(&j, "band_sources")
        .iter()
        .map(|v| v.as_str().expect("a string"))
        .collect();
    assert!(
        sources.iter().all(|x| x.contains("measured")),
        "{sources:?}"
    );
    // Library: exactly the central masses.
    let r = compare_report(&parse(&text), &[], &[]).expect("compare");
    for sc in &r.scenarios {
        for row in &sc.rows {
            assert_eq!(row.mass_low_kg, row.mass_kg);
            assert_eq!(row.mass_high_kg, row.mass_kg);
        }
    }
}

#[test]
fn compare_markdown_and_csv_formats() {
    let text = compare_plan();
    let j = cli_json(&text, "compare", &[]);
    let weeks = checkpoints_of(&j);

    let md = cli(&text, "compare", &["--format", "markdown"]);
    assert_eq!(md.code, Some(0), "{}", md.stderr);
    assert!(md.stdout.starts_with("# "), "a Markdown heading first");
    let header = md
        .stdout
        .lines()
        .find(|l| l.starts_with('|') && l.contains("quantity"))
        .expect("a Markdown table header");
    for sc in arr(&j, "scenarios") {
        assert!(
            header.contains(s(sc, "name")),
            "column for {}",
            s(sc, "name")
        );
        assert!(
            md.stdout.contains(s(sc, "assumptions")),
            "assumptions printed"
        );
    }
    assert!(
        md.stdout
            .lines()
            .any(|l| l.starts_with("|-") || l.starts_with("| -") || l.starts_with("|:"))
    );
    assert!(md.stdout.contains("protocol ends"));

    let c = cli(&text, "compare", &["--format", "csv"]);
    assert_eq!(c.code, Some(0), "{}", c.stderr);
    let mut rd = csv::Reader::from_reader(c.stdout.as_bytes());
    let headers = rd.headers().expect("a header row").clone();
    for key in [
        "scenario",
        "week",
        "mass_kg",
        "mass_low_kg",
        "mass_high_kg",
        "dose_share",
    ] {
        assert!(headers.iter().any(|h| h == key), "CSV column {key}");
    }
    let col = |k: &str| headers.iter().position(|h| h == k).expect(k);
    let rows: Vec<csv::StringRecord> = rd.records().map(|r| r.expect("a CSV row")).collect();
    assert_eq!(
        rows.len(),
        4 * weeks.len(),
        "one row per scenario and checkpoint"
    );
    for sc in arr(&j, "scenarios") {
        for row in arr(sc, "rows") {
            let week = row["week"].as_u64().expect("week").to_string();
            let r = rows
                .iter()
                .find(|r| &r[col("scenario")] == s(sc, "name") && r[col("week")] == week)
                .expect("the CSV has the row");
            let m: f64 = r[col("mass_kg")].parse().expect("a number");
            assert!(
                (m - num(row, "mass_kg")).abs() < 1e-3,
                "CSV mass matches JSON"
            );
        }
    }

    let t = cli(&text, "compare", &[]);
    assert_eq!(t.code, Some(0), "{}", t.stderr);
    assert!(
        t.stdout.contains("(protocol ends)"),
        "the table marks the end of the protocol"
    );
    assert!(t.stdout.contains("(follow-up ends)"));
}

#[test]
fn compare_add_scenario_adds_a_column_with_plain_words() {
    let text = compare_plan();
    let j = cli_json(
        &text,
        "compare",
        &[
            "--add-scenario",
            "eats back 30%:intake_fraction=0.3",
            "--add-scenario",
            "late eater: intake_fraction = 0.4 , intake_lag_days=21",
            "--add-scenario",
            "plain",
        ],
    );
    let sc = arr(&j, "scenarios");
    assert_eq!(sc.len(), 7, "three columns added after the plan's four");
    assert_eq!(s(&sc[4], "name"), "eats back 30%");
    assert_eq!(
        s(&sc[4], "assumptions"),
        "intake rises by 30% of exercise energy at once"
    );
    assert_eq!(s(&sc[5], "name"), "late eater");
    assert_eq!(
        s(&sc[5], "assumptions"),
        "intake rises by 40% of exercise energy, reaching it with a 21-day lag"
    );
    assert_eq!(s(&sc[6], "name"), "plain");
    assert_eq!(
        s(&sc[6], "assumptions"),
        "every session delivered as prescribed; nothing compensated"
    );
    // docs/model.md section 5: eating back 30% at once leaves less of the dose than nothing eaten back.
    let last = |v: &Value| {
        num(
            arr(v, "rows")
                .iter()
                .find(|r| r["week"] == 16)
                .expect("week 16"),
            "mass_change_kg",
        )
    };
    assert!(last(&sc[4]) > last(&sc[0]), "eating back 30% loses less");
    // The ad-hoc column with nothing compensated is the plan's "as prescribed" (invariant).
    assert_eq!(arr(&sc[6], "rows"), arr(&sc[0], "rows"));

    let t = cli(
        &text,
        "compare",
        &["--add-scenario", "eats back 30%:intake_fraction=0.3"],
    );
    assert_eq!(t.code, Some(0));
    assert!(
        t.stdout
            .contains("- eats back 30%: intake rises by 30% of exercise energy at once"),
        "assumptions above the table:\n{}",
        t.stdout
    );
}

#[test]
fn compare_bad_add_scenario_strings_exit_2_naming_the_problem() {
    let text = compare_plan();
    let bad = |spec: &str, needles: &[&str]| {
        let mut n = vec!["--add-scenario"];
        n.extend(needles);
        assert_usage_error(&text, "compare", &["--add-scenario", spec], &n);
    };
    bad(":intake_fraction=0.3", &["name", "empty"]);
    bad("  :intake_fraction=0.3", &["name", "empty"]);
    bad("x:intake_fracton=0.3", &["unknown key", "intake_fracton"]);
    bad(
        "x:intake_fraction=1.6",
        &["intake_fraction", "out of range", "allowed -0.5 to 1.5"],
    );
    bad("x:intake_lag_days=-1", &["intake_lag_days", "out of range"]);
    bad(
        "x:diet_change_kcal_per_day=-3000",
        &["diet_change_kcal_per_day", "out of range"],
    );
    bad(
        "x:intake_fraction=lots",
        &["intake_fraction", "not a number"],
    );
    bad("x:intake_fraction=", &["intake_fraction", "not a number"]);
    bad("x:intake_fraction=nan", &["intake_fraction"]);
    bad("x:intake_fraction", &["no '='"]);
    bad(
        "x:intake_fraction=0.2,intake_fraction=0.3",
        &["intake_fraction", "twice"],
    );
    bad(
        "as prescribed:intake_fraction=0.3",
        &["already has a scenario named", "as prescribed"],
    );
    // Two added scenarios with one name.
    assert_usage_error(
        &text,
        "compare",
        &[
            "--add-scenario",
            "a:intake_fraction=0.1",
            "--add-scenario",
            "a:intake_fraction=0.2",
        ],
        &["already has a scenario named \"a\""],
    );
}

#[test]
fn compare_bad_weeks_and_doses_exit_2() {
    let text = compare_plan(); // 16 + 8 weeks, kcal_per_kg_week
    let c = |args: &[&str], needles: &[&str]| assert_usage_error(&text, "compare", args, needles);
    c(&["--at-week", "0"], &["--at-week 0", "allowed 1 to 24"]);
    c(&["--at-week", "25"], &["--at-week 25", "allowed 1 to 24"]);
    c(
        &["--doses", "0.4"],
        &["--doses", "0.4", "kcal_per_kg_week", "allowed 0.5 to 150"],
    );
    c(
        &["--doses", "4,151"],
        &["--doses", "151", "allowed 0.5 to 150"],
    );
    c(&["--doses", "4,nan"], &["--doses", "NaN"]);
    // Other dose kinds: their own ranges (docs/file-formats.md section 1).
    let per_session = text.replacen("kcal_per_kg_week = 12.0", "kcal_per_session = 300", 1);
    assert_usage_error(
        &per_session,
        "compare",
        &["--doses", "3001"],
        &["kcal_per_session", "allowed 10 to 3000"],
    );
    let minutes = text.replacen("kcal_per_kg_week = 12.0", "minutes_per_week = 150", 1);
    assert_usage_error(
        &minutes,
        "compare",
        &["--doses", "4"],
        &["minutes_per_week", "allowed 5 to 2100"],
    );
    // At the edges the doses are accepted.
    let ok = cli(
        &minutes,
        "compare",
        &["--doses", "5,2100", "--format", "json"],
    );
    assert_eq!(ok.code, Some(0), "{}", ok.stderr);
}

#[test]
fn compare_warns_when_a_diet_takes_intake_below_rmr_or_the_floor() {
    // Issue 3 / docs/references.md section 6.4 (common practice): unsupervised intake floors of
    // 1,200 kcal/day (women) and 1,500 (men), and never below RMR. CG-114's intake at
    // balance is PAL 1.5 x Mifflin-St Jeor 1,531.5 = 2,297 kcal/day (closed form);
    // -1,200 takes it to ~1,097 (below both), -500 to ~1,797 (below neither).
    let text = compare_plan();
    let codes = |j: &Value| -> Vec<(String, String)> {
        arr(j, "warnings")
            .iter()
            .map(|w| (s(w, "code").to_string(), s(w, "message").to_string()))
            .collect()
    };
    let mild = cli_json(
        &text,
        "compare",
        &["--add-scenario", "mild diet:diet_change_kcal_per_day=-500"],
    );
    assert!(
        !codes(&mild)
            .iter()
            .any(|(c, _)| c.starts_with("intake-below")),
        "{:?}",
        codes(&mild)
    );
    let crash = cli_json(
        &text,
        "compare",
        &[
            "--add-scenario",
            "crash diet:diet_change_kcal_per_day=-1200",
        ],
    );
    let w = codes(&crash);
    for code in ["intake-below-rmr", "intake-below-floor"] {
        let hit = w
            .iter()
            .find(|(c, _)| c == code)
            .unwrap_or_else(|| panic!("warning {code} in {w:?}"));
        assert!(
            hit.1.contains("crash diet"),
            "names the scenario: {}",
            hit.1
        );
    }
    assert!(
        w.iter().any(|(_, m)| m.contains("1200 kcal/day")),
        "names the floor"
    );
}

#[test]
fn unknown_scenario_name_exits_2() {
    assert_usage_error(
        &compare_plan(),
        "schedule",
        &["--scenario", "nobody"],
        &["nobody"],
    );
}

#[test]
fn dose_response_is_monotone_and_equals_schedule_runs_of_the_edited_plan() {
    let text = compare_plan();
    let plan = parse(&text);
    let doses = [4.0, 8.0, 12.0, 16.0];
    let r = compare_report(&plan, &[], &doses).expect("compare with doses");
    let d = r.dose_response.as_ref().expect("a dose-response table");
    assert_eq!(d.dose_unit, "kcal_per_kg_week");
    assert_eq!(d.doses.len(), 4);
    let beta = plan.constants.tef_fraction;
    for (row, &dose) in d.doses.iter().zip(&doses) {
        assert_eq!(row.dose, dose);
        // Invariant: the table is `schedule` of the plan edited to that dose.
        let s = sim(&set_line(&text, "kcal_per_kg_week", &format!("{dose:.1}")));
        for (ds, run) in row.scenarios.iter().zip(&s.scenarios) {
            assert_eq!(ds.name, run.name);
            assert_eq!(ds.rows.len(), r.checkpoints.len());
            for p in &ds.rows {
                let w = &run.weeks[p.week as usize - 1];
                assert!(
                    (p.mass_change_kg - (w.end.mass_kg - s.baseline.mass_kg)).abs() < 1e-9,
                    "dose {dose} {} week {}",
                    ds.name,
                    p.week
                );
                assert!(
                    (p.fat_mass_change_kg - (w.end.fat_mass_kg - s.baseline.fat_mass_kg)).abs()
                        < 1e-9
                );
                assert_eq!(p.minutes_per_session, w.minutes_per_session);
            }
        }
    }
    // docs/model.md section 5: while c_I (1 - beta) + c_A < 1 every extra unit of dose adds deficit,
    // so loss is non-decreasing in the dose at each protocol checkpoint. (After the
    // protocol a lagged intake can overshoot, so follow-up weeks are not claimed.)
    for (j, sc) in plan.scenarios.iter().enumerate() {
        let c = &sc.compensation;
        assert!(c.intake_fraction * (1.0 - beta) + c.activity_fraction < 1.0);
        for (k, &week) in r.checkpoints.iter().enumerate() {
            if week > plan.protocol.weeks {
                continue;
            }
            let change: Vec<f64> = d
                .doses
                .iter()
                .map(|row| row.scenarios[j].rows[k].mass_change_kg)
                .collect();
            for pair in change.windows(2) {
                assert!(
                    pair[1] <= pair[0] + 1e-12,
                    "{} week {week}: {change:?} not monotone",
                    sc.name
                );
            }
            assert!(
                change[3] < change[0] - 0.1,
                "{} week {week}: 4x the dose loses clearly more: {change:?}",
                sc.name
            );
        }
    }

    // The binary prints the same table.
    let j = cli_json(&text, "compare", &["--doses", "4,8,12,16"]);
    let dr = &j["dose_response"];
    assert_eq!(s(dr, "dose_unit"), "kcal_per_kg_week");
    for (jrow, row) in arr(dr, "doses").iter().zip(&d.doses) {
        assert_eq!(num(jrow, "dose"), row.dose);
        for (js, ds) in arr(jrow, "scenarios").iter().zip(&row.scenarios) {
            assert_eq!(s(js, "name"), ds.name);
            for (jp, p) in arr(js, "rows").iter().zip(&ds.rows) {
                assert!((num(jp, "mass_change_kg") - p.mass_change_kg).abs() < 1e-4);
            }
        }
    }
    // Without --doses there is no table.
    assert!(cli_json(&text, "compare", &[])["dose_response"].is_null());
}

#[test]
fn compare_library_rows_equal_the_simulation() {
    // Invariant, library side: compare_report's rows are simulate's week ends.
    let text = compare_plan();
    let plan = parse(&text);
    let r = compare_report(&plan, &[9], &[]).expect("compare");
    let s = simulate(&plan).expect("simulate");
    assert_eq!(r.checkpoints, vec![4, 9, 12, 16, 24]);
    for (sc, run) in r.scenarios.iter().zip(&s.scenarios) {
        assert_eq!(sc.assumptions, run.assumptions);
        for row in &sc.rows {
            let w = &run.weeks[row.week as usize - 1];
            assert_eq!(row.mass_kg, w.end.mass_kg);
            assert_eq!(row.fat_mass_kg, w.end.fat_mass_kg);
            assert_eq!(row.fat_free_mass_kg, w.end.fat_free_mass_kg);
            assert_eq!(row.mass_change_kg, w.end.mass_kg - s.baseline.mass_kg);
            assert_eq!(row.dose_share, w.end.dose_share);
            assert_eq!(row.phase, w.phase);
            assert_eq!(row.phase == Phase::FollowUp, row.week > 16);
        }
    }
    // Library validation mirrors the binary's.
    assert!(compare_report(&plan, &[0], &[]).is_err());
    assert!(compare_report(&plan, &[25], &[]).is_err());
    assert!(compare_report(&plan, &[], &[0.4]).is_err());
}

// ---------------------------------------------------------------------------
// Physiology (docs/model.md section 5)
// ---------------------------------------------------------------------------

#[test]
fn follow_up_regains_toward_baseline_as_prescribed() {
    // docs/model.md section 5 / issue 3: after the dose stops, intake stays at EI0 while expenditure
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

fn compensation(c_i: f64, c_a: f64) -> Compensation {
    Compensation {
        intake_fraction: c_i,
        activity_fraction: c_a,
        ..Compensation::default()
    }
}

#[test]
fn start_deficit_ratio_is_one_minus_ci_times_one_minus_beta_minus_ca() {
    // docs/model.md section 5 (issue 3 check): at the start, no lag, no adaptation, the deficit rate
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
    // docs/model.md section 5 (issue 3 check): c_I = 1, no lag: the extra food carries its own TEF,
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
