//! The terms the pilot analysis estimates per participant and summarises per arm.

use serde::Serialize;

/// The terms summarised per arm.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Term {
    /// Delivered net exercise energy, kcal/day.
    Delivered,
    /// Achieved deficit, kcal/day.
    Achieved,
    /// Achieved share of the delivered energy.
    Share,
    /// Gap, kcal/day.
    Gap,
    /// Intake change from baseline, kcal/day.
    IntakeChange,
    /// `intake_fraction`.
    IntakeFraction,
    /// Resting term, kcal/day.
    Resting,
    /// Adaptation beyond the equation at the last visit, kcal/day.
    RmrAdaptation,
    /// `rmr_adaptation_kcal_per_kg`.
    RmrAdaptationPerKg,
    /// The rest, kcal/day.
    Rest,
    /// `activity_fraction`.
    ActivityFraction,
}

impl Term {
    /// Every term, in report order.
    pub const ALL: [Term; 11] = [
        Term::Delivered,
        Term::Achieved,
        Term::Share,
        Term::Gap,
        Term::IntakeChange,
        Term::IntakeFraction,
        Term::Resting,
        Term::RmrAdaptation,
        Term::RmrAdaptationPerKg,
        Term::Rest,
        Term::ActivityFraction,
    ];

    /// Name with unit, for tables.
    pub fn label(self) -> &'static str {
        match self {
            Term::Delivered => "delivered, kcal/day",
            Term::Achieved => "achieved deficit, kcal/day",
            Term::Share => "achieved share",
            Term::Gap => "gap, kcal/day",
            Term::IntakeChange => "intake change, kcal/day",
            Term::IntakeFraction => "intake_fraction",
            Term::Resting => "resting fall, kcal/day",
            Term::RmrAdaptation => "RMR adaptation, kcal/day",
            Term::RmrAdaptationPerKg => "rmr_adaptation_kcal_per_kg",
            Term::Rest => "rest (other movement, error), kcal/day",
            Term::ActivityFraction => "activity_fraction",
        }
    }
}
