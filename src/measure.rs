//! A pilot's physiological measurements as rows (body-composition visits, RMR,
//! TEE) and each row's own checks: units, ranges, precision, fat plus fat-free mass
//! against the weighed mass (docs/pilot-analysis.md). A leaf module: the register
//! stores these rows and the pilot analysis reads them, both through the same checks.

use crate::error::{Error, InputError, Location};
use crate::safety::Warning;
use chrono::NaiveDate;
use serde::Serialize;

/// Fat plus fat-free mass may differ from the weighed mass by this much before a
/// warning, kg (common practice, no source: scale and DXA totals usually agree
/// within about 1 kg).
pub const MASS_WARN_KG: f64 = 1.5;
/// ... and by this much before it is refused as a wrong unit or a typing error, kg.
pub const MASS_REFUSE_KG: f64 = 5.0;

/// A body-composition visit: the state at 00:00 of its date.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Visit {
    /// Date.
    pub date: NaiveDate,
    /// Fat mass, kg.
    pub fat_kg: f64,
    /// Fat-free mass, kg.
    pub fat_free_kg: f64,
    /// Body mass on the scale at the same visit, kg, if weighed.
    pub weighed_kg: Option<f64>,
    /// Method (`DXA`, `BIA`, ...).
    pub method: String,
    /// Precision (SD) of the fat mass, kg; None = the method's default.
    pub fat_sd_kg: Option<f64>,
    /// Precision (SD) of the fat-free mass, kg; None = the method's default.
    pub fat_free_sd_kg: Option<f64>,
    /// Where the row came from (file and row), for messages.
    #[serde(skip)]
    pub at: Location,
}

/// A measured RMR.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RmrMeasure {
    /// Date.
    pub date: NaiveDate,
    /// kcal/day.
    pub kcal_per_day: f64,
    /// Precision (SD), kcal/day; None = the default CV.
    pub sd: Option<f64>,
    /// Where the row came from.
    #[serde(skip)]
    pub at: Location,
}

/// Total energy expenditure over a period.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TeeMeasure {
    /// First day of the period.
    pub first: NaiveDate,
    /// Last day of the period (inclusive).
    pub last: NaiveDate,
    /// Average over the period, kcal/day.
    pub kcal_per_day: f64,
    /// Method (`DLW`, ...).
    pub method: String,
    /// Precision (SD), kcal/day; None = the method's default CV.
    pub sd: Option<f64>,
    /// Where the row came from.
    #[serde(skip)]
    pub at: Location,
}

impl TeeMeasure {
    /// The period's start (00:00 of `first`) and end (00:00 of the day after `last`).
    pub(crate) fn span(&self) -> (NaiveDate, NaiveDate) {
        (self.first, self.last + chrono::Days::new(1))
    }
}

pub(crate) fn input_error(at: &Location, key: &str, message: String) -> Error {
    Error::Input(InputError {
        location: at.clone(),
        key: Some(key.to_string()),
        message,
    })
}

pub(crate) fn warn(code: &'static str, message: String) -> Warning {
    Warning { code, message }
}

pub(crate) fn place(at: &Location) -> String {
    at.to_string()
}

/// Check one visit's values: kg not grams, ranges, precision, and fat plus
/// fat-free mass against the weighed mass.
pub fn check_visit(who: &str, v: &Visit) -> Result<Vec<Warning>, Error> {
    let mut warnings = Vec::new();
    for (key, x, lo, hi) in [
        ("fat_kg", v.fat_kg, 1.0, 300.0),
        ("fat_free_kg", v.fat_free_kg, 15.0, 250.0),
    ] {
        if !x.is_finite() || x > 500.0 {
            return Err(input_error(
                &v.at,
                key,
                format!(
                    "participant {who}, visit of {}: {x} looks like grams, not kg; give kilograms (e.g. {:.1})",
                    v.date,
                    x / 1000.0
                ),
            ));
        }
        if !(lo..=hi).contains(&x) {
            return Err(input_error(
                &v.at,
                key,
                format!(
                    "participant {who}, visit of {}: {x} kg is out of range; allowed {lo} to {hi} kg",
                    v.date
                ),
            ));
        }
    }
    for (key, sd) in [
        ("fat_sd_kg", v.fat_sd_kg),
        ("fat_free_sd_kg", v.fat_free_sd_kg),
    ] {
        if let Some(sd) = sd
            && !(sd.is_finite() && (0.0..=10.0).contains(&sd))
        {
            return Err(input_error(
                &v.at,
                key,
                format!(
                    "participant {who}, visit of {}: precision {sd} kg is out of range; allowed 0 to 10 kg",
                    v.date
                ),
            ));
        }
    }
    if let Some(w) = v.weighed_kg {
        if !w.is_finite() || w > 500.0 {
            return Err(input_error(
                &v.at,
                "mass_kg",
                format!(
                    "participant {who}, visit of {}: {w} looks like grams, not kg; give kilograms",
                    v.date
                ),
            ));
        }
        let diff = v.fat_kg + v.fat_free_kg - w;
        if diff.abs() > MASS_REFUSE_KG {
            return Err(input_error(
                &v.at,
                "mass_kg",
                format!(
                    "participant {who}, visit of {}: fat {} + fat-free {} = {:.1} kg is {:.1} kg from the weighed {w} kg; allowed within {MASS_REFUSE_KG} kg (check the units and columns)",
                    v.date,
                    v.fat_kg,
                    v.fat_free_kg,
                    v.fat_kg + v.fat_free_kg,
                    diff.abs()
                ),
            ));
        }
        if diff.abs() > MASS_WARN_KG {
            warnings.push(warn(
                "pilot-mass-mismatch",
                format!(
                    "{}: participant {who}, visit of {}: fat + fat-free = {:.1} kg differs from the weighed {w} kg by {:.1} kg (more than {MASS_WARN_KG} kg)",
                    place(&v.at),
                    v.date,
                    v.fat_kg + v.fat_free_kg,
                    diff.abs()
                ),
            ));
        }
    }
    Ok(warnings)
}

/// Check one RMR's values: kcal/day not MJ/day, range, precision.
pub fn check_rmr(who: &str, r: &RmrMeasure) -> Result<(), Error> {
    let x = r.kcal_per_day;
    if x.is_finite() && x > 0.0 && x < 30.0 {
        return Err(input_error(
            &r.at,
            "rmr_kcal_per_day",
            format!(
                "participant {who}, RMR of {}: {x} looks like MJ/day; give kcal/day ({x} MJ = {:.0} kcal)",
                r.date,
                x * KCAL_PER_MJ
            ),
        ));
    }
    if !(x.is_finite() && (500.0..=5000.0).contains(&x)) {
        return Err(input_error(
            &r.at,
            "rmr_kcal_per_day",
            format!(
                "participant {who}, RMR of {}: {x} kcal/day is out of range; allowed 500 to 5000",
                r.date
            ),
        ));
    }
    check_sd(&r.at, who, "rmr_sd", r.sd, 500.0)?;
    Ok(())
}

/// Check one TEE's values: kcal/day not MJ/day, range, precision, period order.
pub fn check_tee(who: &str, t: &TeeMeasure) -> Result<(), Error> {
    let x = t.kcal_per_day;
    if x.is_finite() && x > 0.0 && x < 40.0 {
        return Err(input_error(
            &t.at,
            "tee_kcal_per_day",
            format!(
                "participant {who}, TEE {} to {}: {x} looks like MJ/day; give kcal/day ({x} MJ = {:.0} kcal)",
                t.first,
                t.last,
                x * KCAL_PER_MJ
            ),
        ));
    }
    if !(x.is_finite() && (800.0..=8000.0).contains(&x)) {
        return Err(input_error(
            &t.at,
            "tee_kcal_per_day",
            format!(
                "participant {who}, TEE {} to {}: {x} kcal/day is out of range; allowed 800 to 8000",
                t.first, t.last
            ),
        ));
    }
    check_sd(&t.at, who, "tee_sd", t.sd, 1500.0)?;
    if t.last < t.first {
        return Err(input_error(
            &t.at,
            "last",
            format!(
                "participant {who}: TEE period ends ({}) before it begins ({})",
                t.last, t.first
            ),
        ));
    }
    Ok(())
}

/// kcal in one MJ (1 kcal = 4.184 kJ, the thermochemical calorie).
pub const KCAL_PER_MJ: f64 = 1000.0 / 4.184;

fn check_sd(at: &Location, who: &str, key: &str, sd: Option<f64>, max: f64) -> Result<(), Error> {
    if let Some(sd) = sd
        && !(sd.is_finite() && (0.0..=max).contains(&sd))
    {
        return Err(input_error(
            at,
            key,
            format!(
                "participant {who}: precision {sd} kcal/day is out of range; allowed 0 to {max}"
            ),
        ));
    }
    Ok(())
}
