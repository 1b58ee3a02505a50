//! The planned sessions of one participant as the trainer needs them: for each
//! week its dates, each session's activity and intensity, warm-up and cool-down,
//! minutes and energy at target, and the relative targets (MET class, RPE, talk
//! test, Karvonen heart-rate range). Session sheets and calendar files render this.
//!
//! Reference: ACSM's Guidelines for Exercise Testing and Prescription, 10th ed.
//! (intensity classes and the heart-rate reserve); see `activity::targets`.

use crate::activity::Intensity;
use crate::activity::targets::{RelativeTargets, relative_targets};
use crate::plan::{EnergyBasis, Plan, weekday_name};
use crate::simulate::{MassSource, Phase, ScenarioRun, WeekRecord};
use chrono::{Datelike, NaiveDate};
use serde::Serialize;

/// One planned session (or bout) with everything a sheet or calendar shows.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlannedSession {
    /// Date.
    pub date: NaiveDate,
    /// Weekday (`mon` ... `sun`).
    pub weekday: &'static str,
    /// 1-based index of this session (or bout) among those on its date.
    pub index_on_date: u32,
    /// Bout number with `split`.
    pub bout: Option<u32>,
    /// Activity label.
    pub activity: String,
    /// The intensity as given in the plan.
    pub intensity: Intensity,
    /// The intensity in words (equation and settings).
    pub intensity_text: String,
    /// MET at the week's reference mass.
    pub met: f64,
    /// Warm-up minutes and MET.
    pub warm_up: Option<(u32, f64)>,
    /// Cool-down minutes and MET.
    pub cool_down: Option<(u32, f64)>,
    /// Minutes at target.
    pub minutes: u32,
    /// Whole session time, minutes.
    pub session_minutes: u32,
    /// Energy of the whole session on the plan's basis (gross or net), kcal.
    pub energy_kcal: f64,
    /// Gross energy of the whole session, kcal.
    pub gross_kcal: f64,
    /// Net energy of the whole session (above rest, `model.rest_for_net`), kcal.
    pub net_kcal: f64,
    /// The relative targets at the week's reference mass.
    pub targets: RelativeTargets,
}

/// One week of sessions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlannedWeek {
    /// Week number.
    pub week: u32,
    /// First day.
    pub start: NaiveDate,
    /// Last day.
    pub end: NaiveDate,
    /// The reference mass the minutes are computed from, kg.
    pub reference_mass_kg: f64,
    /// Measured or projected.
    pub mass_source: MassSource,
    /// Sessions in date order.
    pub sessions: Vec<PlannedSession>,
    /// Session dates lost to closures.
    pub closed: Vec<NaiveDate>,
    /// The make-up note in words, when sessions were closed.
    pub make_up: Option<String>,
    /// The over-maximum note in words.
    pub over_max: Option<String>,
    /// The step-down after an absence in words (docs/model.md section 4).
    pub step_down: Option<String>,
}

/// A participant's planned sessions under one scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SessionPlan {
    /// Pseudonymous participant code.
    pub participant_id: String,
    /// The plan file.
    pub plan: String,
    /// The scenario the reference masses come from.
    pub scenario: String,
    /// gross or net: the basis of `energy_kcal`.
    pub basis: EnergyBasis,
    /// Protocol weeks only.
    pub weeks: Vec<PlannedWeek>,
}

/// The planned sessions of `run` (one scenario of a simulated `plan`).
pub fn session_plan(plan: &Plan, run: &ScenarioRun) -> SessionPlan {
    let p = &plan.protocol;
    let weeks = run
        .weeks
        .iter()
        .filter(|w| w.phase == Phase::Protocol)
        .map(|w| planned_week(plan, w))
        .collect();
    SessionPlan {
        participant_id: plan.participant.id.clone(),
        plan: plan.source_name.clone(),
        scenario: run.name.clone(),
        basis: p.dose.basis,
        weeks,
    }
}

/// The planned sessions of one simulated protocol week `w` of `plan`: what
/// [`session_plan`] gives for each protocol week, and the day view for the week
/// holding its date.
pub fn planned_week(plan: &Plan, w: &WeekRecord) -> PlannedWeek {
    let p = &plan.protocol;
    let age = plan.participant.subject.age_years;
    let fitness = plan.participant.fitness.as_ref();
    let mut sessions: Vec<PlannedSession> = Vec::with_capacity(w.sessions.len());
    for s in &w.sessions {
        let index_on_date = sessions.iter().filter(|o| o.date == s.date).count() as u32 + 1;
        let activity = plan.activity_at(s.activity_index);
        sessions.push(PlannedSession {
            date: s.date,
            weekday: weekday_name(s.date.weekday()),
            index_on_date,
            bout: s.bout,
            activity: activity.label.clone(),
            intensity: activity.intensity.clone(),
            intensity_text: activity.intensity.describe(),
            met: s.met,
            warm_up: p.warm_up.map(|e| (e.minutes, e.met)),
            cool_down: p.cool_down.map(|e| (e.minutes, e.met)),
            minutes: s.minutes,
            session_minutes: s.session_minutes,
            energy_kcal: match p.dose.basis {
                EnergyBasis::Gross => s.gross_kcal,
                EnergyBasis::Net => s.net_kcal,
            },
            gross_kcal: s.gross_kcal,
            net_kcal: s.net_kcal,
            targets: relative_targets(s.met, w.reference_mass_kg, age, fitness),
        });
    }
    PlannedWeek {
        week: w.week,
        start: w.start,
        end: w.start + chrono::Days::new(6),
        reference_mass_kg: w.reference_mass_kg,
        mass_source: w.mass_source,
        sessions,
        closed: w.closed.clone(),
        make_up: w.make_up.as_ref().map(|m| {
            let n = m.sessions_lost;
            let lost = format!("{:.0} {}", m.lost, m.unit);
            match m.rule {
                crate::plan::MakeUp::None => format!(
                    "{n} session(s) closed; {lost} not made up (make_up = \"none\")"
                ),
                crate::plan::MakeUp::Spread => format!(
                    "{n} session(s) closed; {:.0} of {lost} spread over the week's other sessions (make_up = \"spread\", within the maximum)",
                    m.made_up
                ),
            }
        }),
        over_max: w.over_max.as_ref().map(|o| {
            let mut t = format!(
                "sessions of {} min are over the maximum; policy \"{}\"",
                o.minutes_before,
                o.policy.name()
            );
            if o.added_sessions > 0 {
                t.push_str(&format!(", {} session(s) added", o.added_sessions));
            }
            if o.shortfall_kcal > 0.0 {
                t.push_str(&format!(", {:.0} kcal short", o.shortfall_kcal));
            }
            if o.still_over {
                t.push_str(", still over");
            }
            t
        }),
        step_down: w.step_down.map(|n| n.to_string()),
    }
}

impl SessionPlan {
    /// The weeks that overlap `from..=to`.
    pub fn weeks_between(&self, from: NaiveDate, to: NaiveDate) -> Vec<&PlannedWeek> {
        self.weeks
            .iter()
            .filter(|w| w.end >= from && w.start <= to)
            .collect()
    }
}
