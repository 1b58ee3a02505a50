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

fn refused(e: &Error) {
    assert_eq!(e.exit_code(), 2, "{e}");
    assert_eq!(non_finite_word(&e.to_string()), None, "{e}");
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
    assert!(!json.contains("NaN"), "NaN in the JSON");
    assert_eq!(non_finite_word(&json), None, "JSON");
    serde_json::from_str::<serde_json::Value>(&json).expect("valid JSON");
    // The JSON renderer writes a non-finite number as null; the Debug text shows it.
    assert_eq!(non_finite_word(&format!("{report:?}")), None, "report");
    for i in 0..report.scenarios.len() {
        assert_eq!(
            non_finite_word(&dosewright::report::table::render(&report, i)),
            None
        );
    }
    assert_eq!(
        non_finite_word(&dosewright::report::csv::render(&report)),
        None
    );
    // The same plan through the library's own entry point agrees.
    let again = dosewright::app::schedule_report(&plan).expect("a plan that ran runs again");
    assert_eq!(again.scenarios, report.scenarios, "deterministic");
});
