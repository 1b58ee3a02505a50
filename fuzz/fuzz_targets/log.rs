//! Fuzz target: arbitrary bytes as a participant log against a fixed valid plan
//! (the built-in demo plan, whose log `demo-data/demo-017-log.csv` is a good seed).
//!
//! The bytes are read as text (invalid UTF-8 replaced) and parsed with `parse_log`;
//! a log that parses re-plans the schedule. Nothing may panic, a refusal is exit
//! code 2, and no output may hold NaN or an infinity.

#![no_main]

use dosewright::Error;
use dosewright::commands::LogInput;
use dosewright::commands::schedule::schedule_report_logged;
use dosewright::simulate::observed::Observed;
use libfuzzer_sys::fuzz_target;
use std::sync::OnceLock;

fn plan() -> &'static dosewright::Plan {
    static PLAN: OnceLock<dosewright::Plan> = OnceLock::new();
    PLAN.get_or_init(|| dosewright::commands::load(None).expect("the demo plan is valid"))
}

fn non_finite_word(text: &str) -> Option<&str> {
    text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '.' || c == '-' || c == '+'))
        .map(|w| w.trim_matches(|c| c == '.' || c == '-' || c == '+'))
        .find(|w| matches!(*w, "NaN" | "nan" | "inf" | "Inf" | "infinity" | "Infinity"))
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
    let text = String::from_utf8_lossy(data);
    let plan = plan();
    let (log, warnings) = match dosewright::log::parse_log("fuzz.csv", &text, plan, None) {
        Ok(parsed) => parsed,
        Err(e) => {
            assert!(matches!(e, Error::Input(_)), "{e}");
            assert_eq!(e.exit_code(), 2);
            return;
        }
    };
    let input = LogInput {
        observed: Some(Observed::from_log(plan, &log, None)),
        warnings,
        summary: None,
    };
    match schedule_report_logged(plan, &input) {
        Ok(report) => {
            let json = dosewright::report::json::render(&report);
            assert!(!without_strings(&json).contains("NaN"), "NaN in the JSON");
            assert_eq!(non_finite_word(&without_strings(&json)), None, "JSON");
            assert_eq!(
                non_finite_word(&without_strings(&format!("{report:?}"))),
                None,
                "report"
            );
        }
        Err(e) => {
            assert!(matches!(e, Error::OutOfRange(_)), "{e}");
            assert_eq!(e.exit_code(), 2);
            if let Error::OutOfRange(r) = &e {
                assert!(r.fat_kg.is_finite() && r.lean_kg.is_finite(), "{e}");
            }
        }
    }
});
