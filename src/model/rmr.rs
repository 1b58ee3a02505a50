//! Resting metabolic rate equations, kcal/day, evaluated on the current body state.
//!
//! Mifflin-St Jeor `10 M + 6.25 H - 5 A + 5` (men) / `- 161` (women);
//! Harris-Benedict revised (Roza & Shizgal); Katch-McArdle `370 + 21.6 FFM`;
//! Cunningham `500 + 22 FFM`; Livingston-Kohlstadt `293 M^0.4330 - 5.92 A` (men),
//! `248 M^0.4356 - 5.09 A` (women).
//!
//! Reference: Mifflin MD et al. 1990, Am J Clin Nutr 51:241; Roza AM, Shizgal HM 1984,
//! Am J Clin Nutr 40:168; Cunningham JJ 1980, Am J Clin Nutr 33:2372; McArdle, Katch &
//! Katch, Exercise Physiology (textbook); Livingston EH, Kohlstadt I 2005, Obes Res
//! 13:1255 (coefficients from memory, unconfirmed).

use serde::Serialize;

/// Biological sex as the equations use it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Sex {
    /// Female.
    Female,
    /// Male.
    Male,
}

impl Sex {
    /// The plan-file word.
    pub fn name(self) -> &'static str {
        match self {
            Sex::Female => "female",
            Sex::Male => "male",
        }
    }
}

/// The published RMR equations a plan may choose.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum RmrEquation {
    /// Mifflin-St Jeor 1990 (simplified coefficients), the default.
    MifflinStJeor,
    /// Harris-Benedict as revised by Roza & Shizgal 1984.
    HarrisBenedictRevised,
    /// Katch-McArdle, from fat-free mass.
    KatchMcardle,
    /// Cunningham 1980, from fat-free (lean body) mass.
    Cunningham,
    /// Livingston-Kohlstadt 2005, a power law of mass.
    LivingstonKohlstadt,
}

impl RmrEquation {
    /// Every equation, with its plan-file name.
    pub const ALL: [(RmrEquation, &'static str); 5] = [
        (RmrEquation::MifflinStJeor, "mifflin-st-jeor"),
        (
            RmrEquation::HarrisBenedictRevised,
            "harris-benedict-revised",
        ),
        (RmrEquation::KatchMcardle, "katch-mcardle"),
        (RmrEquation::Cunningham, "cunningham"),
        (RmrEquation::LivingstonKohlstadt, "livingston-kohlstadt"),
    ];

    /// The plan-file name.
    pub fn name(self) -> &'static str {
        Self::ALL
            .iter()
            .find(|(e, _)| *e == self)
            .map(|(_, n)| *n)
            .unwrap_or("?")
    }

    /// The citation shown in reports.
    pub fn citation(self) -> &'static str {
        match self {
            RmrEquation::MifflinStJeor => "Mifflin et al. 1990, Am J Clin Nutr 51:241",
            RmrEquation::HarrisBenedictRevised => "Roza & Shizgal 1984, Am J Clin Nutr 40:168",
            RmrEquation::KatchMcardle => "McArdle, Katch & Katch, Exercise Physiology (textbook)",
            RmrEquation::Cunningham => "Cunningham 1980, Am J Clin Nutr 33:2372",
            RmrEquation::LivingstonKohlstadt => {
                "Livingston & Kohlstadt 2005, Obes Res 13:1255 (coefficients from memory)"
            }
        }
    }

    /// The equation's individual error as a standard deviation relative to its value
    /// at `rmr_kcal_per_day`, and where that figure comes from. Only the revised
    /// Harris-Benedict equation has a published figure to hand (95% limits of
    /// +/-213 kcal/day in men, +/-201 in women: Roza & Shizgal 1984, via a secondary
    /// copy); for the others 10% is used, the usual size of an equation's error for
    /// one person (FAO/WHO/UNU 2004; Frankenfield et al. 2005, J Am Diet Assoc 105:775).
    pub fn relative_error(self, sex: Sex, rmr_kcal_per_day: f64) -> (f64, &'static str) {
        match self {
            RmrEquation::HarrisBenedictRevised => {
                let limit = if sex == Sex::Male { 213.0 } else { 201.0 };
                (
                    limit / 1.96 / rmr_kcal_per_day,
                    "published 95% limits (Roza & Shizgal 1984) as a standard deviation",
                )
            }
            _ => (
                0.10,
                "10%, the common size of an equation's error for one person (FAO/WHO/UNU 2004; Frankenfield et al. 2005); no published figure for this equation is used",
            ),
        }
    }

    /// RMR in kcal/day for the given body; age is held at its baseline value by callers.
    pub fn kcal_per_day(
        self,
        sex: Sex,
        mass_kg: f64,
        fat_free_mass_kg: f64,
        height_cm: f64,
        age_years: f64,
    ) -> f64 {
        let male = sex == Sex::Male;
        match self {
            RmrEquation::MifflinStJeor => {
                10.0 * mass_kg + 6.25 * height_cm - 5.0 * age_years
                    + if male { 5.0 } else { -161.0 }
            }
            RmrEquation::HarrisBenedictRevised => {
                if male {
                    88.362 + 13.397 * mass_kg + 4.799 * height_cm - 5.677 * age_years
                } else {
                    447.593 + 9.247 * mass_kg + 3.098 * height_cm - 4.330 * age_years
                }
            }
            RmrEquation::KatchMcardle => 370.0 + 21.6 * fat_free_mass_kg,
            RmrEquation::Cunningham => 500.0 + 22.0 * fat_free_mass_kg,
            RmrEquation::LivingstonKohlstadt => {
                if male {
                    293.0 * mass_kg.powf(0.4330) - 5.92 * age_years
                } else {
                    248.0 * mass_kg.powf(0.4356) - 5.09 * age_years
                }
            }
        }
    }
}
