//! The `check` command (docs/commands.md): a valid plan is echoed with every resolved
//! assumption and default; a snapshot of the demo plan's check.
//!
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::schedule_contract::*;
use common::*;

#[test]
fn check_prints_the_resolved_assumptions_with_every_default() {
    let (_d, r) = run_plan(BASE, &["check"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    for words in [
        "plan.toml: the plan is valid.",
        "Participant T-001: female, 40 years, 165.0 cm",
        "fat mass 30.4 kg (38.0% body fat, measured)",
        "Dose: 1200 kcal/week, gross; sessions on mon wed fri; no maximum session length",
        "Protocol: 8 weeks from 2027-01-04, 0 follow-up weeks, ends 2027-03-01",
        "Ramp: none (full dose from week 1)",
        "Minutes round up to: 1 min",
        "RMR equation: mifflin-st-jeor",
        "exercise energy counted above: the participant's own RMR (own-rmr)",
        "TEF 0.10 of intake; fat 9500 kcal/kg; fat-free 1020 kcal/kg; Forbes constant 10.4 kg",
        "as prescribed: every session delivered as prescribed; nothing compensated",
        "Warnings: none",
    ] {
        assert!(
            r.stdout.contains(words),
            "check lacks {words:?}:\n{}",
            r.stdout
        );
    }
    for words in CAUTION_WORDS {
        assert!(r.stdout.contains(words));
    }
    // check does not print a schedule.
    assert!(!r.stdout.contains("| 2027-01-04 |"));
}

#[test]
fn snapshot_check_example_plan() {
    insta::assert_snapshot!(
        "check_demo_plan",
        demo_output(&["check", "plans/demo.toml"])
    );
}
