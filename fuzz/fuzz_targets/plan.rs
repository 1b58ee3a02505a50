//! Fuzz target: arbitrary bytes as a plan file, then the whole `schedule` path.
//!
//! Bytes that are UTF-8 go through `parse_plan`; a plan that parses is simulated
//! (its horizon is bounded by validation, at most 520 weeks) and reported. Either
//! step may refuse the input, always with exit code 2; nothing may panic, and no
//! output may hold NaN or an infinity.

#![no_main]

use dosewright::Error;
use libfuzzer_sys::fuzz_target;

/// A word of `text` that is how Rust or a renderer spells a non-finite number.
fn non_finite_word(text: &str) -> Option<&str> {
    text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '.' || c == '-' || c == '+'))
        .map(|w| w.trim_matches(|c| c == '.' || c == '-' || c == '+'))
        .find(|w| matches!(*w, "NaN" | "nan" | "inf" | "Inf" | "infinity" | "Infinity"))
}

/// A refusal is bad input (exit 2). Input errors quote the user's own value (which
/// may be `inf`); a range error's state is the model's and must be finite.
fn refused(e: &Error) {
    assert_eq!(e.exit_code(), 2, "{e}");
    if let Error::OutOfRange(r) = e {
        assert!(r.fat_kg.is_finite() && r.lean_kg.is_finite(), "{e}");
    }
}

/// `text` with every double-quoted string emptied: JSON and Debug text quote every
/// string, and strings hold the user's own words, which may well be "inf".
fn without_strings(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut chars = text.chars();
    while let Some(c) = chars.next() {
        if c != '"' {
            out.push(c);
            continue;
        }
        while let Some(d) = chars.next() {
            match d {
                '\\' => {
                    chars.next();
                }
                '"' => break,
                _ => {}
            }
        }
        out.push_str("\"\"");
    }
    out
}

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let plan = match dosewright::plan::parse_plan("fuzz.toml", text) {
        Ok(plan) => plan,
        Err(e) => {
            assert!(matches!(e, Error::Input(_)), "{e}");
            return refused(&e);
        }
    };
    assert!((1..=520).contains(&plan.protocol.total_weeks()));
    let sim = match dosewright::simulate::simulate(&plan) {
        Ok(sim) => sim,
        Err(e) => {
            assert!(matches!(e, Error::OutOfRange(_)), "{e}");
            return refused(&e);
        }
    };
    // `schedule` adds the projection band; its variants may leave the range (they
    // are then left out) but must not fail the report.
    let band = dosewright::simulate::band::projection_band(&plan, &sim, None)
        .expect("the band of a simulated plan");
    let mut report = dosewright::report::ScheduleReport::new(&plan, sim);
    report.projection_band = Some(band);
    let json = dosewright::report::json::render(&report);
    assert!(!without_strings(&json).contains("NaN"), "NaN in the JSON");
    assert_eq!(non_finite_word(&without_strings(&json)), None, "JSON");
    serde_json::from_str::<serde_json::Value>(&json).expect("valid JSON");
    // The JSON renderer writes a non-finite number as null; the Debug text shows it.
    assert_eq!(
        non_finite_word(&without_strings(&format!("{report:?}"))),
        None,
        "report"
    );
    // The plain-text renderings show the user's words unquoted: check them word by
    // word only when those words are not themselves "inf" or "NaN".
    let mut user = vec![
        plan.source_name.as_str(),
        &plan.participant.id,
        &plan.activity.label,
    ];
    user.extend(plan.scenarios.iter().map(|s| s.name.as_str()));
    if user.iter().all(|u| non_finite_word(u).is_none()) {
        for i in 0..report.scenarios.len() {
            let table = dosewright::report::table::render(
                &report,
                i,
                dosewright::report::units::Units::default(),
            );
            assert_eq!(non_finite_word(&table), None, "table");
        }
        let csv = dosewright::report::csv::render(&report);
        assert_eq!(non_finite_word(&csv), None, "CSV");
    }
    // The same plan through the library's own entry point agrees.
    let again = dosewright::commands::schedule::schedule_report(&plan).expect("a plan that ran runs again");
    assert_eq!(again.scenarios, report.scenarios, "deterministic");
});
