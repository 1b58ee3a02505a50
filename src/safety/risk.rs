//! The risky-plan thresholds, written once, and the classification of one run's signs
//! over plain numbers: `schedule`'s warnings (`safety::warnings`) and the cohort's
//! counts (`simulate::cohort`) both call these.
//!
//! A leaf: it reads only the model's BMI and sex.
//!
//! Thresholds: 300 min/week (US Physical Activity Guidelines 2018 upper range);
//! loss over 1% of body mass a week (common practice as a ceiling without clinical
//! supervision); BMI 18.5 (WHO underweight cut-off); intake below RMR, or below the
//! unsupervised floor, with a planned diet change.

use crate::model::Sex;
use crate::model::composition::bmi;
use serde::Serialize;

/// Minutes of exercise in a week above which a plan is flagged.
pub const WEEKLY_MINUTES_LIMIT: u32 = 300;
/// Share of body mass lost in one week above which a plan is flagged.
pub const WEEKLY_LOSS_FRACTION: f64 = 0.01;
/// BMI below which the body is underweight, kg/m^2 (WHO).
pub const UNDERWEIGHT_BMI: f64 = 18.5;

/// Unsupervised intake floors, kcal/day: 1,200 (women) and 1,500 (men) (common
/// practice; docs/references.md section 6.4, with the 2013 AHA/ACC/TOS guideline's 1,200-1,500 and
/// 1,500-1,800 kcal/day prescriptions, Jensen et al. 2014, Circulation 129:S102).
pub fn intake_floor_kcal_per_day(sex: Sex) -> f64 {
    match sex {
        Sex::Female => 1200.0,
        Sex::Male => 1500.0,
    }
}

/// More than [`WEEKLY_MINUTES_LIMIT`] minutes of exercise in a week.
pub fn weekly_minutes_over(minutes: u32) -> bool {
    minutes > WEEKLY_MINUTES_LIMIT
}

/// A week whose loss, from `previous_kg` to `mass_kg`, exceeds
/// [`WEEKLY_LOSS_FRACTION`] of `previous_kg`.
pub fn loss_too_fast(previous_kg: f64, mass_kg: f64) -> bool {
    previous_kg - mass_kg > WEEKLY_LOSS_FRACTION * previous_kg
}

/// A mass that puts a body of `height_cm` below [`UNDERWEIGHT_BMI`].
pub fn underweight(mass_kg: f64, height_cm: f64) -> bool {
    bmi(mass_kg, height_cm) < UNDERWEIGHT_BMI
}

/// Whether an intake is screened at all: only with a planned cut (a negative diet
/// change) do the intake signs apply.
pub fn intake_screened(diet_change_kcal_per_day: f64) -> bool {
    diet_change_kcal_per_day < 0.0
}

/// Intake below the resting rate.
pub fn intake_below_rmr(intake_kcal_per_day: f64, rmr_kcal_per_day: f64) -> bool {
    intake_kcal_per_day < rmr_kcal_per_day
}

/// Intake below the unsupervised floor of `sex`.
pub fn intake_below_floor(intake_kcal_per_day: f64, sex: Sex) -> bool {
    intake_kcal_per_day < intake_floor_kcal_per_day(sex)
}

/// The participant a run's signs are read against.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RiskSubject {
    /// Baseline mass, kg.
    pub baseline_mass_kg: f64,
    /// Height, cm.
    pub height_cm: f64,
    /// Sex.
    pub sex: Sex,
    /// The scenario's diet change, kcal/day.
    pub diet_change_kcal_per_day: f64,
}

/// The risky-plan signs of one run, as `schedule` warns of them for one plan
/// (docs/warnings.md): the cohort counts the runs that have each.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
pub struct RunRisks {
    /// Projected loss above 1% of body mass in some week (`loss-rate-over-1-percent`).
    pub loss_rate_over_1_percent: bool,
    /// More than 300 minutes at target in some week (`weekly-minutes-over-300`).
    pub weekly_minutes_over_300: bool,
    /// With a negative diet change, intake below RMR at the end of some week.
    pub intake_below_rmr: bool,
    /// With a negative diet change, intake below the unsupervised floor in some week.
    pub intake_below_floor: bool,
    /// BMI below 18.5 kg/m^2 at the end of some week.
    pub bmi_below_18_5: bool,
}

impl RunRisks {
    /// The signs of a run from its week-end masses, intakes and RMRs, and the minutes
    /// of each protocol week.
    pub fn of(
        who: &RiskSubject,
        mass: impl Iterator<Item = f64>,
        intake_rmr: impl Iterator<Item = (f64, f64)>,
        mut weekly_minutes: impl Iterator<Item = u32>,
    ) -> RunRisks {
        let mut r = RunRisks::default();
        let mut prev = who.baseline_mass_kg;
        for m in mass {
            r.loss_rate_over_1_percent |= loss_too_fast(prev, m);
            r.bmi_below_18_5 |= underweight(m, who.height_cm);
            prev = m;
        }
        if intake_screened(who.diet_change_kcal_per_day) {
            for (intake, rmr) in intake_rmr {
                r.intake_below_rmr |= intake_below_rmr(intake, rmr);
                r.intake_below_floor |= intake_below_floor(intake, who.sex);
            }
        }
        r.weekly_minutes_over_300 = weekly_minutes.any(weekly_minutes_over);
        r
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn thresholds_at_their_edges() {
        // BMI 18.5 at 170 cm is 18.5 x 1.7^2 = 53.465 kg (WHO cut-off, computed here).
        assert!(underweight(53.4, 170.0));
        assert!(!underweight(53.5, 170.0));
        // 1% of 100 kg is 1 kg a week.
        assert!(loss_too_fast(100.0, 98.9));
        assert!(!loss_too_fast(100.0, 99.1));
        assert!(weekly_minutes_over(301));
        assert!(!weekly_minutes_over(300));
        assert!(intake_below_floor(1199.0, Sex::Female));
        assert!(!intake_below_floor(1200.0, Sex::Female));
        assert!(intake_below_floor(1499.0, Sex::Male));
    }

    #[test]
    fn intake_signs_need_a_planned_cut() {
        let who = |diet: f64| RiskSubject {
            baseline_mass_kg: 80.0,
            height_cm: 175.0,
            sex: Sex::Female,
            diet_change_kcal_per_day: diet,
        };
        let low = || [(1000.0, 1400.0)].into_iter();
        let without = RunRisks::of(&who(0.0), [80.0].into_iter(), low(), [0].into_iter());
        assert!(!without.intake_below_rmr && !without.intake_below_floor);
        let cut = RunRisks::of(&who(-300.0), [80.0].into_iter(), low(), [0].into_iter());
        assert!(cut.intake_below_rmr && cut.intake_below_floor);
        assert!(!cut.loss_rate_over_1_percent && !cut.bmi_below_18_5);
    }
}
