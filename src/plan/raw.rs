#![allow(missing_docs)] // fields are the plan keys, documented in docs/file-formats.md section 1
//! Raw plan structs: exactly the TOML file, every value with its byte span, unknown
//! keys refused. Validation into [`crate::plan::Plan`] happens in one place.

use serde::Deserialize;
use toml::Spanned;

/// A value with its position in the file.
pub type S<T> = Spanned<T>;

/// A TOML value that should be a number, kept loose so the validator can say what
/// was wrong in the user's terms.
pub type Num = S<f64>;

/// The whole file.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawPlan {
    /// `[participant]`.
    pub participant: Option<S<RawParticipant>>,
    /// `[protocol]`.
    pub protocol: Option<S<RawProtocol>>,
    /// `[activity]`.
    pub activity: Option<S<RawActivity>>,
    /// `[model]`.
    pub model: Option<S<RawModel>>,
    /// `[[scenario]]`.
    pub scenario: Option<Vec<S<RawScenario>>>,
    /// `[[rotation]]`: other activities on named session days.
    pub rotation: Option<Vec<S<RawRotation>>>,
    /// `[calendar]`: time of day, time zone and place for calendar files.
    pub calendar: Option<S<RawCalendar>>,
}

/// `[participant]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawParticipant {
    pub id: Option<S<String>>,
    pub sex: Option<S<String>>,
    pub age_years: Option<Num>,
    pub height_cm: Option<Num>,
    pub mass_kg: Option<Num>,
    pub body_fat_percent: Option<Num>,
    pub rmr_kcal_per_day: Option<Num>,
    pub intake_kcal_per_day: Option<Num>,
    pub pal: Option<Num>,
    pub screening: Option<S<RawScreening>>,
    pub fitness: Option<S<RawFitness>>,
}

/// `[participant.fitness]`: measured peak oxygen uptake and heart rates.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawFitness {
    pub vo2peak_ml_kg_min: Option<Num>,
    pub vo2peak_test_mass_kg: Option<Num>,
    pub vo2peak_l_min: Option<Num>,
    pub hr_rest_bpm: Option<Num>,
    pub hr_max_bpm: Option<Num>,
    pub hr_max_formula: Option<S<String>>,
}

/// `[participant.screening]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawScreening {
    pub exercises_regularly: Option<S<bool>>,
    pub known_disease: Option<S<bool>>,
    pub signs_or_symptoms: Option<S<bool>>,
    pub medical_clearance: Option<S<bool>>,
}

/// A date: a TOML local date, or a quoted ISO string.
#[derive(Debug, Deserialize)]
#[serde(untagged)]
pub enum RawDate {
    /// `2027-01-04`.
    Toml(toml::value::Datetime),
    /// `"2027-01-04"`.
    Text(String),
}

/// `[protocol]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawProtocol {
    pub start: Option<S<RawDate>>,
    pub weeks: Option<Num>,
    pub follow_up_weeks: Option<Num>,
    pub session_days: Option<S<Vec<S<String>>>>,
    pub spare_days: Option<S<Vec<S<String>>>>,
    pub max_session_minutes: Option<Num>,
    pub over_max: Option<S<String>>,
    pub round_minutes_to: Option<Num>,
    pub dose: Option<S<RawDose>>,
    pub ramp: Option<S<RawRamp>>,
    pub warm_up: Option<S<RawEasy>>,
    pub cool_down: Option<S<RawEasy>>,
    pub closures: Option<S<Vec<S<RawDate>>>>,
    pub make_up: Option<S<String>>,
}

/// `[protocol.warm_up]` / `[protocol.cool_down]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawEasy {
    pub minutes: Option<Num>,
    pub met: Option<Num>,
}

/// `[protocol.dose]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDose {
    pub kcal_per_session: Option<Num>,
    pub kcal_per_week: Option<Num>,
    pub kcal_per_kg_week: Option<Num>,
    pub minutes_per_week: Option<Num>,
    pub basis: Option<S<String>>,
    pub mass_basis: Option<S<String>>,
}

/// `[protocol.ramp]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawRamp {
    pub weeks: Option<Num>,
    pub start_fraction: Option<Num>,
}

/// A compendium code: a string, or (wrongly) a number the validator explains.
#[derive(Debug, Deserialize)]
#[serde(untagged)]
pub enum RawCode {
    /// `"02010"`.
    Text(String),
    /// `2010`: refused with a hint.
    Integer(i64),
    /// `20.10`: refused.
    Float(f64),
}

/// `walking = { ... }` / `running = { ... }`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawGait {
    pub speed_kmh: Option<Num>,
    pub grade_percent: Option<Num>,
}

/// `[activity]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawActivity {
    pub compendium_code: Option<S<RawCode>>,
    pub met: Option<Num>,
    pub walking: Option<S<RawGait>>,
    pub running: Option<S<RawGait>>,
    pub cycling_watts: Option<Num>,
    pub vo2_reserve_percent: Option<Num>,
    pub label: Option<S<String>>,
}

/// `[[rotation]]`: the days it covers and one way to give the intensity, as in
/// `[activity]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawRotation {
    pub days: Option<S<Vec<S<String>>>>,
    pub compendium_code: Option<S<RawCode>>,
    pub met: Option<Num>,
    pub walking: Option<S<RawGait>>,
    pub running: Option<S<RawGait>>,
    pub cycling_watts: Option<Num>,
    pub vo2_reserve_percent: Option<Num>,
    pub label: Option<S<String>>,
}

impl RawRotation {
    /// The days and the activity part.
    pub fn split(self) -> (Option<S<Vec<S<String>>>>, RawActivity) {
        (
            self.days,
            RawActivity {
                compendium_code: self.compendium_code,
                met: self.met,
                walking: self.walking,
                running: self.running,
                cycling_watts: self.cycling_watts,
                vo2_reserve_percent: self.vo2_reserve_percent,
                label: self.label,
            },
        )
    }
}

/// `[calendar]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCalendar {
    pub session_time: Option<S<String>>,
    pub second_bout_time: Option<S<String>>,
    pub time_zone: Option<S<String>>,
    pub location: Option<S<String>>,
}

/// `[model]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawModel {
    pub rmr_equation: Option<S<String>>,
    pub rest_for_net: Option<S<String>>,
    pub tef_fraction: Option<Num>,
    pub fat_kcal_per_kg: Option<Num>,
    pub lean_kcal_per_kg: Option<Num>,
    pub forbes_constant_kg: Option<Num>,
}

/// `[[scenario]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawScenario {
    pub name: Option<S<String>>,
    pub intake_fraction: Option<Num>,
    pub intake_lag_days: Option<Num>,
    pub activity_fraction: Option<Num>,
    pub rmr_adaptation_kcal_per_kg: Option<Num>,
    pub diet_change_kcal_per_day: Option<Num>,
}
