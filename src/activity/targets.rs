//! Relative-intensity targets for the session sheets: the VO2-reserve method, the
//! maximum heart rate (measured or by an age formula), the Karvonen heart-rate
//! reserve, the ACSM intensity classes with their RPE ranges, and the talk test.
//!
//! References: ACSM's Guidelines for Exercise Testing and Prescription, 10th ed.
//! (intensity classes, %HRR and %VO2R equivalence; Swain DP, Leutholtz BC 1997, Med Sci
//! Sports Exerc 29:410); Karvonen MJ, Kentala E, Mustala O 1957, Ann Med Exp Biol Fenn
//! 35:307; Tanaka H, Monahan KD, Seals DR 2001, J Am Coll Cardiol 37:153; Borg GA 1982,
//! Med Sci Sports Exerc 14:377 (the 6-20 scale).

use super::acsm::ML_O2_PER_MET;
use serde::Serialize;

/// How the maximum heart rate is known.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind", content = "bpm")]
pub enum HrMaxSource {
    /// Measured in a maximal test, beats/min.
    Measured(f64),
    /// 208 - 0.7 x age (Tanaka, Monahan and Seals 2001, J Am Coll Cardiol 37:153).
    Tanaka,
    /// 220 - age (the traditional estimate).
    TwoTwentyMinusAge,
}

impl HrMaxSource {
    /// The plan-file word.
    pub fn name(self) -> &'static str {
        match self {
            HrMaxSource::Measured(_) => "measured",
            HrMaxSource::Tanaka => "tanaka",
            HrMaxSource::TwoTwentyMinusAge => "220-age",
        }
    }
}

/// Measured fitness: peak oxygen uptake and heart rates.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Fitness {
    /// Peak oxygen uptake, l/min (held as mass changes).
    pub vo2peak_l_min: Option<f64>,
    /// Resting heart rate, beats/min.
    pub hr_rest_bpm: Option<f64>,
    /// Where the maximum heart rate comes from.
    pub hr_max: HrMaxSource,
}

/// Oxygen uptake at a fraction of the VO2 reserve, ml/kg/min:
/// `VO2 = f (VO2peak - 3.5) + 3.5` (ACSM GETP 10th ed.).
pub fn vo2_reserve_vo2(fraction: f64, vo2peak_ml_kg_min: f64) -> f64 {
    fraction * (vo2peak_ml_kg_min - ML_O2_PER_MET) + ML_O2_PER_MET
}

/// The fraction of the VO2 reserve that `met` is for a peak of `vo2peak_ml_kg_min`
/// (the inverse of [`vo2_reserve_vo2`]).
pub fn vo2_reserve_fraction(met: f64, vo2peak_ml_kg_min: f64) -> f64 {
    (met * ML_O2_PER_MET - ML_O2_PER_MET) / (vo2peak_ml_kg_min - ML_O2_PER_MET)
}

/// The maximum heart rate at `age_years`, beats/min.
pub fn hr_max(source: HrMaxSource, age_years: f64) -> f64 {
    match source {
        HrMaxSource::Measured(b) => b,
        HrMaxSource::Tanaka => 208.0 - 0.7 * age_years,
        HrMaxSource::TwoTwentyMinusAge => 220.0 - age_years,
    }
}

/// How the maximum heart rate was found, for the sheet.
pub fn hr_max_words(source: HrMaxSource) -> &'static str {
    match source {
        HrMaxSource::Measured(_) => "measured",
        HrMaxSource::Tanaka => "age-predicted, Tanaka 208 - 0.7 x age",
        HrMaxSource::TwoTwentyMinusAge => "age-predicted, 220 - age",
    }
}

/// Karvonen target heart rate: `HRrest + f (HRmax - HRrest)`.
pub fn karvonen(hr_rest: f64, hr_max: f64, fraction: f64) -> f64 {
    hr_rest + fraction * (hr_max - hr_rest)
}

/// `x` rounded to 6 decimals, so that a value at a class boundary stays there after a
/// round trip through the equations (60% of VO2 reserve to MET and back gives
/// 0.5999999999999999, which must still be vigorous).
fn without_float_noise(x: f64) -> f64 {
    (x * 1e6).round() / 1e6
}

/// The ACSM intensity classes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum IntensityClass {
    /// Below light: under 2 MET, under 30 %HRR (ACSM table, from memory).
    VeryLight,
    /// 2.0-2.9 MET, 30-39 %HRR or %VO2R.
    Light,
    /// 3.0-5.9 MET, 40-59 %.
    Moderate,
    /// 6.0 MET and above, 60-89 %.
    Vigorous,
}

impl IntensityClass {
    /// The class of an absolute intensity in MET.
    pub fn of_met(met: f64) -> IntensityClass {
        let met = without_float_noise(met);
        if met < 2.0 {
            IntensityClass::VeryLight
        } else if met < 3.0 {
            IntensityClass::Light
        } else if met < 6.0 {
            IntensityClass::Moderate
        } else {
            IntensityClass::Vigorous
        }
    }

    /// The class of a relative intensity, a fraction of the HR or VO2 reserve.
    pub fn of_reserve(fraction: f64) -> IntensityClass {
        let fraction = without_float_noise(fraction);
        if fraction < 0.30 {
            IntensityClass::VeryLight
        } else if fraction < 0.40 {
            IntensityClass::Light
        } else if fraction < 0.60 {
            IntensityClass::Moderate
        } else {
            IntensityClass::Vigorous
        }
    }

    /// The word.
    pub fn name(self) -> &'static str {
        match self {
            IntensityClass::VeryLight => "very light",
            IntensityClass::Light => "light",
            IntensityClass::Moderate => "moderate",
            IntensityClass::Vigorous => "vigorous",
        }
    }

    /// The RPE range (Borg 6-20) of the class (docs/references.md section 6.2: ACSM GETP 10th ed.;
    /// very light below 9 and vigorous up to 17 from memory).
    pub fn rpe(self) -> (u32, u32) {
        match self {
            IntensityClass::VeryLight => (6, 8),
            IntensityClass::Light => (9, 11),
            IntensityClass::Moderate => (12, 13),
            IntensityClass::Vigorous => (14, 17),
        }
    }

    /// The %HRR range of the class as fractions (ACSM GETP 10th ed.; the vigorous
    /// upper bound of 89% from memory).
    pub fn reserve_range(self) -> (f64, f64) {
        match self {
            IntensityClass::VeryLight => (0.20, 0.29),
            IntensityClass::Light => (0.30, 0.39),
            IntensityClass::Moderate => (0.40, 0.59),
            IntensityClass::Vigorous => (0.60, 0.89),
        }
    }

    /// The talk test for the class (common practice, no source).
    pub fn talk_test(self) -> &'static str {
        match self {
            IntensityClass::VeryLight | IntensityClass::Light => "can talk and sing comfortably",
            IntensityClass::Moderate => "can talk in full sentences, but not sing",
            IntensityClass::Vigorous => "can say only a few words without pausing for breath",
        }
    }
}

/// A target heart-rate range and how it was found.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HeartRateTarget {
    /// Low end, beats/min (rounded to whole beats).
    pub low_bpm: u32,
    /// High end, beats/min.
    pub high_bpm: u32,
    /// The %HRR range, as fractions.
    pub reserve: (f64, f64),
    /// Resting heart rate used, beats/min.
    pub hr_rest_bpm: f64,
    /// Maximum heart rate used, beats/min.
    pub hr_max_bpm: f64,
    /// How HRmax was found ("measured", or the age formula).
    pub hr_max_source: &'static str,
}

/// Width of the %HRR band around a known %VO2R, either side (common practice).
pub const RESERVE_BAND: f64 = 0.05;

/// The intensity of a session relative to the participant, for the sheet.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RelativeTargets {
    /// The ACSM class.
    pub class: IntensityClass,
    /// The fraction of the VO2 reserve, where VO2peak is known.
    pub vo2_reserve_fraction: Option<f64>,
    /// RPE range (6-20).
    pub rpe: (u32, u32),
    /// The talk test.
    pub talk_test: &'static str,
    /// The Karvonen heart-rate range, where a resting heart rate is known.
    pub heart_rate: Option<HeartRateTarget>,
}

/// The relative targets of a session at `met` for a participant of `mass_kg` and
/// `age_years` with `fitness`. With a known VO2peak the class and heart-rate range
/// follow from the %VO2R (taken equal to %HRR, ACSM) within +-5 points; without one
/// they follow from the absolute MET class.
pub fn relative_targets(
    met: f64,
    mass_kg: f64,
    age_years: f64,
    fitness: Option<&Fitness>,
) -> RelativeTargets {
    let vo2r = fitness
        .and_then(|f| f.vo2peak_l_min)
        .map(|l| vo2_reserve_fraction(met, l * 1000.0 / mass_kg));
    let class = match vo2r {
        Some(f) => IntensityClass::of_reserve(f),
        None => IntensityClass::of_met(met),
    };
    let reserve = match vo2r {
        Some(f) => (
            (f - RESERVE_BAND).clamp(0.0, 1.0),
            (f + RESERVE_BAND).clamp(0.0, 1.0),
        ),
        None => class.reserve_range(),
    };
    let heart_rate = fitness.and_then(|f| {
        let rest = f.hr_rest_bpm?;
        let max = hr_max(f.hr_max, age_years);
        Some(HeartRateTarget {
            low_bpm: karvonen(rest, max, reserve.0).round() as u32,
            high_bpm: karvonen(rest, max, reserve.1).round() as u32,
            reserve,
            hr_rest_bpm: rest,
            hr_max_bpm: max,
            hr_max_source: hr_max_words(f.hr_max),
        })
    });
    RelativeTargets {
        class,
        vo2_reserve_fraction: vo2r,
        rpe: class.rpe(),
        talk_test: class.talk_test(),
        heart_rate,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn classes_follow_the_acsm_table() {
        // ACSM GETP 10th ed. (docs/references.md section 6.2): light 2.0-2.9 MET, moderate 3.0-5.9,
        // vigorous >= 6.0; 30-39 / 40-59 / >= 60 %HRR.
        assert_eq!(IntensityClass::of_met(2.9), IntensityClass::Light);
        assert_eq!(IntensityClass::of_met(3.0), IntensityClass::Moderate);
        assert_eq!(IntensityClass::of_met(6.0), IntensityClass::Vigorous);
        assert_eq!(IntensityClass::of_reserve(0.39), IntensityClass::Light);
        assert_eq!(IntensityClass::of_reserve(0.40), IntensityClass::Moderate);
        assert_eq!(IntensityClass::of_reserve(0.60), IntensityClass::Vigorous);
        assert_eq!(IntensityClass::Moderate.rpe(), (12, 13));
    }

    #[test]
    fn a_class_boundary_survives_a_round_trip_through_the_equations() {
        // 60% of VO2 reserve is vigorous (ACSM GETP 10th ed., docs/references.md section 6.2) for
        // any peak: to MET by the VO2-reserve equation and back to the fraction.
        let mut below = 0;
        for peak in [15.0, 22.5, 22.547_4, 31.3, 48.0] {
            let met = vo2_reserve_vo2(0.60, peak) / ML_O2_PER_MET;
            let f = vo2_reserve_fraction(met, peak);
            assert!((f - 0.60).abs() < 1e-12, "{peak}: {f}");
            below += usize::from(f < 0.60);
            assert_eq!(
                IntensityClass::of_reserve(f),
                IntensityClass::Vigorous,
                "{peak}"
            );
        }
        // The check means something: at least one round trip lands just below 0.60.
        assert!(below > 0);
        assert_eq!(
            IntensityClass::of_reserve(0.6 - 1e-12),
            IntensityClass::Vigorous
        );
        assert_eq!(
            IntensityClass::of_met(3.0 - 1e-12),
            IntensityClass::Moderate
        );
        // A real step below the boundary is still below it.
        assert_eq!(IntensityClass::of_reserve(0.599), IntensityClass::Moderate);
    }
}
