#![allow(missing_docs)] // fields are the study keys, documented in docs/file-formats.md section 2
//! Raw study structs: exactly the TOML file, every value with its byte span, unknown
//! keys refused. The shared protocol tables are the plan's own raw structs.

use crate::plan::raw::{
    Num, RawActivity, RawCalendar, RawDose, RawModel, RawProtocol, RawRotation, S,
};
use serde::Deserialize;

/// The whole study file.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStudy {
    pub study: Option<S<RawStudyMeta>>,
    pub protocol: Option<S<RawProtocol>>,
    pub activity: Option<S<RawActivity>>,
    pub rotation: Option<Vec<S<RawRotation>>>,
    pub model: Option<S<RawModel>>,
    pub scenario: Option<Vec<S<RawStudyScenario>>>,
    pub calendar: Option<S<RawCalendar>>,
    pub arm: Option<Vec<S<RawArm>>>,
    pub synthetic: Option<S<RawSynthetic>>,
    pub uncertainty: Option<S<RawUncertainty>>,
    pub staffing: Option<S<RawStaffing>>,
}

/// `[staffing]`: the site's supervision model and opening hours.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStaffing {
    pub group_size: Option<Num>,
    pub stations: Option<Num>,
    pub opening_hours: Option<S<RawOpeningHours>>,
}

/// `opening_hours = { mon = "07:00-12:00", ... }`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawOpeningHours {
    pub mon: Option<S<String>>,
    pub tue: Option<S<String>>,
    pub wed: Option<S<String>>,
    pub thu: Option<S<String>>,
    pub fri: Option<S<String>>,
    pub sat: Option<S<String>>,
    pub sun: Option<S<String>>,
}

/// `[[scenario]]` of a study: each value fixed or a distribution.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStudyScenario {
    pub name: Option<S<String>>,
    pub intake_fraction: Option<S<RawValue>>,
    pub intake_lag_days: Option<S<RawValue>>,
    pub activity_fraction: Option<S<RawValue>>,
    pub rmr_adaptation_kcal_per_kg: Option<S<RawValue>>,
    pub diet_change_kcal_per_day: Option<S<RawValue>>,
}

impl RawStudyScenario {
    /// The values by scenario key, in `SCENARIO_KEYS` order.
    pub fn values(&self) -> [&Option<S<RawValue>>; 5] {
        [
            &self.intake_fraction,
            &self.intake_lag_days,
            &self.activity_fraction,
            &self.rmr_adaptation_kcal_per_kg,
            &self.diet_change_kcal_per_day,
        ]
    }
}

/// `[uncertainty]`: individual variation, attendance and drop-out for `--draws`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawUncertainty {
    pub rmr_error: Option<S<RawRmrError>>,
    pub body_fat_error_percent: Option<Num>,
    pub attendance: Option<Num>,
    pub dropout_per_week: Option<Num>,
}

/// `rmr_error = "published"` or a relative SD such as 0.1.
#[derive(Debug, Deserialize)]
#[serde(untagged)]
pub enum RawRmrError {
    /// A relative SD.
    Sd(f64),
    /// A word.
    Word(String),
}

/// `[study]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStudyMeta {
    pub name: Option<S<String>>,
    pub block_size: Option<Num>,
}

/// `[[arm]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawArm {
    pub name: Option<S<String>>,
    pub dose: Option<S<RawDose>>,
}

/// A number, or a distribution table `{ dist = "normal", ... }`.
#[derive(Debug, Deserialize)]
#[serde(untagged)]
pub enum RawValue {
    /// A fixed value.
    Fixed(f64),
    /// A distribution.
    Dist(RawDist),
}

/// `{ dist = "normal" | "uniform" | "beta", mean, sd, min, max, alpha, beta }`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDist {
    pub dist: String,
    pub mean: Option<f64>,
    pub sd: Option<f64>,
    pub min: Option<f64>,
    pub max: Option<f64>,
    pub alpha: Option<f64>,
    pub beta: Option<f64>,
}

/// `[synthetic]`: the population participants are drawn from.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSynthetic {
    pub female_fraction: Option<Num>,
    pub age_years: Option<S<RawValue>>,
    pub height_cm_female: Option<S<RawValue>>,
    pub height_cm_male: Option<S<RawValue>>,
    pub bmi: Option<S<RawValue>>,
    pub body_fat_percent: Option<S<RawValue>>,
    pub pal: Option<S<RawValue>>,
}
