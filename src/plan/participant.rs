//! The participant rules, written once: the allowed range of every participant field
//! and what is wrong with a value (docs/file-formats.md, `[participant]`). The plan's validator and
//! the study's roster both call these and place the message themselves (the plan at
//! its file, line, column and dotted key; the roster at its file, line and column).

use crate::model::Sex;
use crate::model::composition::bmi;

/// A number for a message: whole numbers without a fraction, very large or small
/// ones in exponent form.
pub fn fmt_num(v: f64) -> String {
    if v.is_finite() && v == v.trunc() && v.abs() < 1e15 {
        format!("{v:.0}")
    } else if v.is_finite() && (v.abs() >= 1e15 || (v != 0.0 && v.abs() < 1e-6)) {
        format!("{v:e}")
    } else {
        format!("{v}")
    }
}

/// A numeric participant field.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Field {
    /// `age_years`.
    Age,
    /// `height_cm`.
    Height,
    /// `mass_kg`.
    Mass,
    /// `body_fat_percent`.
    BodyFat,
    /// `rmr_kcal_per_day`.
    Rmr,
    /// `intake_kcal_per_day`.
    Intake,
    /// `pal`.
    Pal,
}

/// The BMI a participant's mass and height may give, kg/m^2: the bodies the model's
/// equations are meant for (docs/file-formats.md).
pub const BMI_RANGE: (f64, f64) = (13.0, 80.0);

/// The sexes a participant may give, by their word.
pub const SEXES: [(&str, Sex); 2] = [("female", Sex::Female), ("male", Sex::Male)];

/// The message for an empty pseudonymous code.
pub const EMPTY_ID: &str = "empty; give a pseudonymous code such as \"R-104\"";

impl Field {
    /// Every numeric field, in the order of the participant table.
    pub const ALL: [Field; 7] = [
        Field::Age,
        Field::Height,
        Field::Mass,
        Field::BodyFat,
        Field::Rmr,
        Field::Intake,
        Field::Pal,
    ];

    /// The key (plan) and column (roster).
    pub fn key(self) -> &'static str {
        match self {
            Field::Age => "age_years",
            Field::Height => "height_cm",
            Field::Mass => "mass_kg",
            Field::BodyFat => "body_fat_percent",
            Field::Rmr => "rmr_kcal_per_day",
            Field::Intake => "intake_kcal_per_day",
            Field::Pal => "pal",
        }
    }

    /// Whether every participant must give it.
    pub fn required(self) -> bool {
        matches!(self, Field::Age | Field::Height | Field::Mass)
    }

    /// The allowed range, both ends included, and its unit for messages.
    pub fn range(self) -> (f64, f64, &'static str) {
        match self {
            Field::Age => (18.0, 100.0, " years"),
            Field::Height => (120.0, 230.0, " cm"),
            Field::Mass => (30.0, 350.0, " kg"),
            Field::BodyFat => (3.0, 70.0, " %"),
            Field::Rmr => (600.0, 5000.0, " kcal/day"),
            Field::Intake => (500.0, 10000.0, " kcal/day"),
            Field::Pal => (1.1, 2.5, ""),
        }
    }

    /// "allowed 18 to 100 years".
    pub fn allowed(self) -> String {
        let (lo, hi, unit) = self.range();
        format!("allowed {} to {}{unit}", fmt_num(lo), fmt_num(hi))
    }

    /// Check one value: finite, not in the wrong unit (a height in metres, a body fat
    /// as a fraction), within the range. The error is the message without its place.
    pub fn check(self, x: f64) -> Result<f64, String> {
        let (lo, hi, _) = self.range();
        if !x.is_finite() {
            return Err(format!(
                "value {x} is not a finite number; {}",
                self.allowed()
            ));
        }
        if self == Field::Height && (1.2..=2.3).contains(&x) {
            return Err(format!(
                "value {x} looks like metres; give the height in centimetres (e.g. {:.0}); {}",
                x * 100.0,
                self.allowed()
            ));
        }
        if self == Field::BodyFat && x > 0.0 && x < 1.0 {
            return Err(format!(
                "value {x} looks like a fraction; give a percent (e.g. {:.0}); allowed 3 to 70",
                x * 100.0
            ));
        }
        if x < lo || x > hi {
            return Err(format!(
                "value {} is out of range; {}",
                fmt_num(x),
                self.allowed()
            ));
        }
        Ok(x)
    }
}

/// Check that mass and height give a BMI the model is meant for; the error belongs to
/// the mass.
pub fn check_bmi(mass_kg: f64, height_cm: f64) -> Result<(), String> {
    let b = bmi(mass_kg, height_cm);
    let (lo, hi) = BMI_RANGE;
    if (lo..=hi).contains(&b) {
        return Ok(());
    }
    Err(format!(
        "value {} with height {} cm gives BMI {b:.1}, outside the allowed {} to {} kg/m^2; check the units (kg, cm; a mass in pounds must be converted)",
        fmt_num(mass_kg),
        fmt_num(height_cm),
        fmt_num(lo),
        fmt_num(hi)
    ))
}

/// The sex named by `word`.
pub fn sex(word: &str) -> Result<Sex, String> {
    SEXES
        .iter()
        .find(|(n, _)| *n == word)
        .map(|(_, s)| *s)
        .ok_or_else(|| format!("unknown value \"{word}\"; allowed {}", sex_words()))
}

/// "female, male".
pub fn sex_words() -> String {
    SEXES.iter().map(|s| s.0).collect::<Vec<_>>().join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_field_checks_its_range_and_its_wrong_units() {
        assert_eq!(Field::Age.check(18.0), Ok(18.0));
        assert_eq!(
            Field::Age.check(17.5),
            Err("value 17.5 is out of range; allowed 18 to 100 years".to_string())
        );
        assert!(
            Field::Height
                .check(1.75)
                .unwrap_err()
                .contains("looks like metres")
        );
        assert!(
            Field::BodyFat
                .check(0.25)
                .unwrap_err()
                .contains("looks like a fraction")
        );
        assert!(
            Field::Pal
                .check(f64::NAN)
                .unwrap_err()
                .contains("not a finite number")
        );
        // BMI 13 to 80: 60 kg at 170 cm is 20.8 kg/m^2; 20 kg at 170 cm is 6.9.
        assert!(check_bmi(60.0, 170.0).is_ok());
        assert!(check_bmi(20.0, 170.0).unwrap_err().contains("BMI 6.9"));
        assert_eq!(sex("male"), Ok(Sex::Male));
        assert!(sex("m").is_err());
    }
}
