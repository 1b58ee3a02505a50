//! Adherence so far: sessions, minutes and energy delivered against those planned,
//! and the delivered dose in the plan's own unit, week by week.

use crate::activity::acsm::gross_kcal_per_min;
use crate::model::Physiology;
use crate::plan::{DoseAmount, EnergyBasis, MassBasis, Plan};
use crate::simulate::observed::Observed;
use crate::simulate::prescription::{Prescription, Reference, session_kcal};
use serde::Serialize;

/// One week's adherence, counting days up to the log's `as_of` date.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WeekAdherence {
    /// Week.
    pub week: u32,
    /// Days of the week the log covers (7 but for the week holding `as_of`).
    pub days_covered: u32,
    /// Session days planned on those days.
    pub sessions_planned: u32,
    /// Days with delivered exercise (minutes above zero).
    pub sessions_delivered: u32,
    /// Minutes prescribed on those days.
    pub minutes_prescribed: f64,
    /// Minutes delivered.
    pub minutes_delivered: f64,
    /// Net energy prescribed, kcal, at the week's reference state.
    pub net_kcal_prescribed: f64,
    /// Net energy delivered, kcal, at the week's reference state.
    pub net_kcal_delivered: f64,
    /// The prescribed dose in the plan's unit over those days.
    pub dose_prescribed: f64,
    /// The delivered dose in the plan's unit (e.g. kcal/kg/week actually delivered).
    pub dose_delivered: f64,
    /// Mean RPE of sessions that record one.
    pub mean_rpe: Option<f64>,
    /// Mean of the sessions' average heart rates, beats/min.
    pub mean_hr_bpm: Option<f64>,
    /// How much of a week this counts for in the weekly dose: the share of the
    /// week's planned sessions on the covered days (the covered days over 7 when
    /// the week has none planned); 1 for a whole week (docs/model.md, Adherence).
    #[serde(skip)]
    pub share_of_week: f64,
}

/// Totals over every covered week.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AdherenceTotal {
    /// Weeks covered.
    pub weeks: u32,
    /// Session days planned.
    pub sessions_planned: u32,
    /// Session days delivered.
    pub sessions_delivered: u32,
    /// Minutes prescribed.
    pub minutes_prescribed: f64,
    /// Minutes delivered.
    pub minutes_delivered: f64,
    /// Net energy prescribed, kcal.
    pub net_kcal_prescribed: f64,
    /// Net energy delivered, kcal.
    pub net_kcal_delivered: f64,
    /// Mean weekly prescribed dose, plan unit (a partly covered week counts for the
    /// share of its planned sessions on its covered days).
    pub dose_prescribed_per_week: f64,
    /// Mean weekly delivered dose, plan unit (as the prescribed one).
    pub dose_delivered_per_week: f64,
    /// Mean RPE over sessions that record one.
    pub mean_rpe: Option<f64>,
    /// Mean heart rate over sessions that record one, beats/min.
    pub mean_hr_bpm: Option<f64>,
}

fn mean(v: &[f64]) -> Option<f64> {
    (!v.is_empty()).then(|| v.iter().fold(0.0, |a, b| a + b) / v.len() as f64)
}

/// The dose, in the plan's unit, of `energy` kcal (on the plan's basis) and `minutes`.
fn in_plan_unit(plan: &Plan, energy: f64, minutes: f64, mass_basis_kg: f64) -> f64 {
    let n = plan.protocol.session_days.len() as f64;
    match plan.protocol.dose.amount {
        DoseAmount::KcalPerSession(_) => energy / n,
        DoseAmount::KcalPerWeek(_) => energy,
        DoseAmount::KcalPerKgWeek(_) => energy / mass_basis_kg,
        DoseAmount::MinutesPerWeek(_) => minutes,
    }
}

/// Adherence of week `week` from its prescription and the log.
pub fn week(
    plan: &Plan,
    physiology: &Physiology,
    week: u32,
    rx: &Prescription,
    obs: &Observed,
    r: &Reference,
    baseline_mass_kg: f64,
) -> WeekAdherence {
    let start_day = 7 * (week - 1);
    let last = (start_day + 6).min(obs.as_of_day);
    let day_of = |d: &chrono::NaiveDate| (*d - plan.protocol.start).num_days() as u32;
    let m = r.mass_kg;
    let basis_energy = |met: f64| match plan.protocol.dose.basis {
        EnergyBasis::Gross => gross_kcal_per_min(met, m),
        EnergyBasis::Net => physiology.net_kcal_per_min(met, m, r.rmr_kcal_per_day),
    };
    let net = |met: f64| physiology.net_kcal_per_min(met, m, r.rmr_kcal_per_day);
    let delivered: Vec<_> = obs.sessions_in(start_day, last + 1).collect();
    let planned: Vec<_> = rx
        .bouts
        .iter()
        .filter(|b| day_of(&b.date) <= last)
        .collect();
    let days_covered = last + 1 - start_day;
    let share_of_week = if rx.bouts.is_empty() {
        f64::from(days_covered) / 7.0
    } else {
        planned.len() as f64 / rx.bouts.len() as f64
    };
    let mut planned_days: Vec<u32> = planned.iter().map(|b| day_of(&b.date)).collect();
    planned_days.dedup();
    let minutes_prescribed: f64 = planned
        .iter()
        .map(|b| f64::from(b.minutes))
        .fold(0.0, |a, b| a + b)
        + 0.0;
    // One energy per session: minutes at target plus warm-up and cool-down
    // (prescription::session_kcal), as in the dose and the simulation.
    let prescribed_with = |per_min: &dyn Fn(f64) -> f64| {
        planned
            .iter()
            .map(|b| {
                let intensity = &plan.activity_at(b.activity).intensity;
                session_kcal(plan, f64::from(b.minutes), intensity, m, per_min)
            })
            .fold(0.0, |a, b| a + b)
    };
    let delivered_with = |per_min: &dyn Fn(f64) -> f64| {
        delivered
            .iter()
            .filter(|s| s.minutes > 0.0)
            .map(|s| session_kcal(plan, s.minutes, &s.intensity, m, per_min))
            .fold(0.0, |a, b| a + b)
    };
    let mut delivered_days: Vec<u32> = delivered
        .iter()
        .filter(|s| s.minutes > 0.0)
        .map(|s| s.day)
        .collect();
    delivered_days.dedup();
    let minutes_delivered: f64 = delivered.iter().map(|s| s.minutes).fold(0.0, |a, b| a + b);
    let basis_delivered = delivered_with(&basis_energy);
    let mass_basis = match plan.protocol.dose.mass_basis {
        MassBasis::Baseline => baseline_mass_kg,
        MassBasis::Current => m,
    };
    let rpes: Vec<f64> = delivered.iter().filter_map(|s| s.rpe).collect();
    let hrs: Vec<f64> = delivered.iter().filter_map(|s| s.avg_hr_bpm).collect();
    WeekAdherence {
        week,
        days_covered,
        sessions_planned: planned_days.len() as u32,
        sessions_delivered: delivered_days.len() as u32,
        minutes_prescribed,
        minutes_delivered,
        net_kcal_prescribed: prescribed_with(&net),
        net_kcal_delivered: delivered_with(&net),
        dose_prescribed: in_plan_unit(
            plan,
            prescribed_with(&basis_energy),
            minutes_prescribed,
            mass_basis,
        ),
        dose_delivered: in_plan_unit(plan, basis_delivered, minutes_delivered, mass_basis),
        mean_rpe: mean(&rpes),
        mean_hr_bpm: mean(&hrs),
        share_of_week,
    }
}

/// Totals over the weeks that have adherence; `rpes` and `hrs` are every session's values.
pub fn total(weeks: &[&WeekAdherence], obs: &Observed) -> AdherenceTotal {
    // Weeks of coverage: a partly covered last week counts for the share of its
    // planned sessions on its covered days (docs/model.md, Adherence).
    let n = weeks
        .iter()
        .map(|w| w.share_of_week)
        .fold(0.0, |a, b| a + b);
    let per_week = |x: f64| if n > 0.0 { x / n } else { 0.0 };
    // `+ 0.0` turns the -0.0 an empty float sum gives into 0.0.
    let sum = |f: fn(&WeekAdherence) -> f64| weeks.iter().map(|w| f(w)).fold(0.0, |a, b| a + b);
    let rpes: Vec<f64> = obs
        .sessions
        .iter()
        .filter(|s| s.day <= obs.as_of_day)
        .filter_map(|s| s.rpe)
        .collect();
    let hrs: Vec<f64> = obs
        .sessions
        .iter()
        .filter(|s| s.day <= obs.as_of_day)
        .filter_map(|s| s.avg_hr_bpm)
        .collect();
    AdherenceTotal {
        weeks: weeks.len() as u32,
        sessions_planned: weeks.iter().map(|w| w.sessions_planned).sum(),
        sessions_delivered: weeks.iter().map(|w| w.sessions_delivered).sum(),
        minutes_prescribed: sum(|w| w.minutes_prescribed),
        minutes_delivered: sum(|w| w.minutes_delivered),
        net_kcal_prescribed: sum(|w| w.net_kcal_prescribed),
        net_kcal_delivered: sum(|w| w.net_kcal_delivered),
        dose_prescribed_per_week: per_week(sum(|w| w.dose_prescribed)),
        dose_delivered_per_week: per_week(sum(|w| w.dose_delivered)),
        mean_rpe: mean(&rpes),
        mean_hr_bpm: mean(&hrs),
    }
}
