//! ACSM 2015 exercise pre-participation health screening, from the plan's answers.
//!
//! Reference: Riebe D et al. 2015, Updating ACSM's recommendations for exercise
//! preparticipation health screening, Med Sci Sports Exerc 47(11):2473-2479
//! (bibliographic details from memory); the six-cell grid of docs/references.md
//! section 6.2, as printed in docs/warnings.md ("Cautions and the screening grid").

use crate::plan::Screening;
use serde::Serialize;

/// MET at or above which an activity is vigorous (US Physical Activity Guidelines
/// 2018: light < 3.0, moderate 3.0 to < 6.0, vigorous >= 6.0 MET).
pub const VIGOROUS_MET: f64 = 6.0;

/// Which clearance the grid asks for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Clearance {
    /// No medical clearance needed.
    NotNeeded,
    /// Clearance before any exercise.
    BeforeAnyExercise,
    /// Clearance before vigorous exercise only.
    BeforeVigorous,
    /// Stop exercising; clearance before resuming.
    StopAndClear,
}

/// The screening result and what it means for this plan.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct ScreeningOutcome {
    /// False when the plan has no screening block.
    pub recorded: bool,
    /// The grid's recommendation in words.
    pub recommendation: String,
    /// Which clearance applies.
    pub clearance: Option<Clearance>,
    /// Clearance recorded as on file.
    pub medical_clearance_on_file: bool,
    /// The clearance the plan's intensity needs is missing.
    pub clearance_missing: bool,
}

/// Screen the answers for a plan that reaches vigorous intensity or not.
pub fn screen(answers: Option<&Screening>, vigorous: bool) -> ScreeningOutcome {
    let Some(s) = answers else {
        return ScreeningOutcome {
            recorded: false,
            recommendation: "screening not recorded: complete the ACSM pre-participation screening before the first session".to_string(),
            clearance: None,
            medical_clearance_on_file: false,
            clearance_missing: false,
        };
    };
    let (clearance, text) = match (s.exercises_regularly, s.known_disease, s.signs_or_symptoms) {
        (false, false, false) => (
            Clearance::NotNeeded,
            "no medical clearance needed; start at light to moderate intensity and progress gradually",
        ),
        (false, true, false) => (
            Clearance::BeforeAnyExercise,
            "medical clearance recommended before any exercise (known cardiovascular, metabolic or renal disease; not exercising regularly)",
        ),
        (false, _, true) => (
            Clearance::BeforeAnyExercise,
            "medical clearance recommended before any exercise (signs or symptoms; not exercising regularly)",
        ),
        (true, false, false) => (
            Clearance::NotNeeded,
            "no medical clearance needed; continue and progress gradually",
        ),
        (true, true, false) => (
            Clearance::BeforeVigorous,
            "no clearance needed for moderate exercise; medical clearance recommended before vigorous exercise",
        ),
        (true, _, true) => (
            Clearance::StopAndClear,
            "stop exercising and obtain medical clearance before resuming (signs or symptoms)",
        ),
    };
    let needed = match clearance {
        Clearance::NotNeeded => false,
        Clearance::BeforeAnyExercise | Clearance::StopAndClear => true,
        Clearance::BeforeVigorous => vigorous,
    };
    ScreeningOutcome {
        recorded: true,
        recommendation: text.to_string(),
        clearance: Some(clearance),
        medical_clearance_on_file: s.medical_clearance,
        clearance_missing: needed && !s.medical_clearance,
    }
}
