//! The week-by-week driver: at the start of each week take the reference state,
//! re-prescribe the minutes, integrate the week, check the model's valid range, and
//! record what a report needs. Follow-up weeks run with no exercise.
//!
//! Reference: docs/model.md sections 4-6.

pub mod adherence;
pub mod arm_comparison;
pub mod band;
pub mod cohort;
pub mod dose_response;
mod driver;
pub mod fast;
pub mod fit;
pub mod goal;
pub mod integrate;
pub mod observed;
pub mod prescription;
pub mod warnings;

use crate::error::{Error, RangeError};
use crate::model::energy::calibrate;
use crate::model::{Baseline, BodyState, Bout, Compensation, Physiology};
use crate::plan::{Plan, Scenario, weekday_name};
pub use crate::study::randomise::splitmix64;
use chrono::{Datelike, NaiveDate};
pub use driver::run;
use integrate::{State, body_of, integrate, state_of};
use observed::Observed;
use prescription::{OverMaxNote, Reference, prescribe_resumed};
use serde::Serialize;

/// Lowest fat mass the model accepts, kg (docs/model.md section 6).
pub const MIN_FAT_KG: f64 = 2.0;
/// Lowest body mass the model accepts, kg (the plan's own lower limit, docs/file-formats.md section 1).
pub const MIN_MASS_KG: f64 = 30.0;
/// Lowest BMI the model accepts, kg/m^2 (the plan's own lower limit, docs/file-formats.md section 1).
pub const MIN_BMI: f64 = 13.0;

/// Whether a week's reference mass was measured or projected.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum MassSource {
    /// A weigh-in on the week's first day or in the 6 days before (the baseline
    /// measurement counts for week 1).
    Measured,
    /// The model's projection.
    Projected,
}

/// Protocol or follow-up.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Phase {
    /// Exercise weeks.
    Protocol,
    /// Weeks after exercise stops.
    FollowUp,
}

/// One dated session (or bout), energies at the week's reference state.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SessionRecord {
    /// Date.
    pub date: NaiveDate,
    /// Weekday (`mon` ... `sun`).
    pub weekday: &'static str,
    /// Minutes.
    pub minutes: u32,
    /// Bout number within the session's day (1 or 2) when sessions are split.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bout: Option<u32>,
    /// MET at the reference mass.
    pub met: f64,
    /// Gross energy, kcal.
    pub gross_kcal: f64,
    /// Energy above rest, kcal.
    pub net_kcal: f64,
    /// Cost in multiples of the participant's own RMR.
    pub relative_intensity: f64,
    /// The activity's label.
    pub activity: String,
    /// Index of the activity in the plan's activities (0 = `[activity]`, then the
    /// `[[rotation]]` entries).
    pub activity_index: usize,
    /// Warm-up minutes before the time at target.
    pub warm_up_minutes: u32,
    /// Cool-down minutes after it.
    pub cool_down_minutes: u32,
    /// Whole session (or bout) time: warm-up, time at target and cool-down.
    pub session_minutes: u32,
}

/// The body at the end of a week, and the running energy account.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WeekEnd {
    /// Body mass, kg.
    pub mass_kg: f64,
    /// Fat mass, kg.
    pub fat_mass_kg: f64,
    /// Fat-free mass, kg.
    pub fat_free_mass_kg: f64,
    /// RMR, kcal/day.
    pub rmr_kcal_per_day: f64,
    /// Intake, kcal/day.
    pub intake_kcal_per_day: f64,
    /// Prescribed net exercise energy so far, kcal.
    pub prescribed_net_kcal: f64,
    /// Energy lost from the stores so far, kcal.
    pub achieved_deficit_kcal: f64,
    /// Deficit the exercise added, over the prescribed net energy, so far.
    pub dose_share: f64,
}

/// One week of one scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WeekRecord {
    /// Week number, 1-based; follow-up weeks go on counting.
    pub week: u32,
    /// First day.
    pub start: NaiveDate,
    /// Protocol or follow-up.
    pub phase: Phase,
    /// `M_w`, kg.
    pub reference_mass_kg: f64,
    /// Measured or projected.
    pub mass_source: MassSource,
    /// RMR at the reference state, kcal/day.
    pub reference_rmr_kcal_per_day: f64,
    /// `r_w` (0 in follow-up).
    pub ramp_fraction: f64,
    /// Minutes at target of the week's longest session (0 in follow-up).
    pub minutes_per_session: u32,
    /// Minutes of the longest session before rounding.
    pub minutes_unrounded: f64,
    /// Sessions this week.
    pub sessions_per_week: u32,
    /// Bouts per session.
    pub bouts_per_session: u32,
    /// Energy target per planned session on the plan's basis, kcal.
    pub target_kcal_per_session: Option<f64>,
    /// MET at the reference mass.
    pub met: f64,
    /// Sessions (bouts), date order.
    pub sessions: Vec<SessionRecord>,
    /// What the over-maximum policy did.
    pub over_max: Option<OverMaxNote>,
    /// Session dates lost to closures.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub closed: Vec<NaiveDate>,
    /// What the make-up rule did in a week with closures.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub make_up: Option<prescription::MakeUpNote>,
    /// The step-down after an absence, in a week it lowered (docs/model.md section 4).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub step_down: Option<prescription::StepDownNote>,
    /// Sessions delivered against those planned, for weeks the log covers.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub adherence: Option<adherence::WeekAdherence>,
    /// State at the end of the week (day 7w).
    pub end: WeekEnd,
}

/// The state at the end of the last listed week.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Outcome {
    /// The morning after the last day.
    pub end_date: NaiveDate,
    /// Body mass, kg.
    pub mass_kg: f64,
    /// Fat mass, kg.
    pub fat_mass_kg: f64,
    /// Fat-free mass, kg.
    pub fat_free_mass_kg: f64,
    /// Mass change from baseline, kg.
    pub mass_change_kg: f64,
    /// Fat-mass change, kg.
    pub fat_mass_change_kg: f64,
    /// Fat-free-mass change, kg.
    pub fat_free_mass_change_kg: f64,
    /// Prescribed net exercise energy, kcal.
    pub prescribed_net_kcal: f64,
    /// Energy lost from the stores, kcal.
    pub achieved_deficit_kcal: f64,
    /// Share of the dose that reached the stores.
    pub dose_share: f64,
    /// Mass at the end of the protocol (before follow-up), kg.
    pub protocol_end_mass_kg: f64,
    /// Mass change at the end of the protocol, kg.
    pub protocol_end_mass_change_kg: f64,
    /// Share of the dose in the stores at the end of the protocol (before any regain).
    pub protocol_end_dose_share: f64,
}

/// One scenario's projection.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScenarioRun {
    /// Name.
    pub name: String,
    /// Assumptions in plain words.
    pub assumptions: String,
    /// The numbers behind them.
    pub compensation: Compensation,
    /// Protocol then follow-up weeks.
    pub weeks: Vec<WeekRecord>,
    /// The end state.
    pub outcome: Outcome,
    /// Adherence totals over the weeks the log covers (None without a log).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub adherence: Option<adherence::AdherenceTotal>,
}

/// The simulation of a plan: baseline and every scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Simulation {
    /// The calibrated baseline.
    pub baseline: Baseline,
    /// The calibrated physiology.
    pub physiology: Physiology,
    /// Mass change over 4 weeks with no exercise and no compensation, kg (the drift).
    pub drift_mass_4_weeks_kg: f64,
    /// Every scenario, in plan order.
    pub scenarios: Vec<ScenarioRun>,
}

/// The calibrated baseline of a validated plan. Validation has already calibrated
/// it once, so a failure here is a bug, reported as such rather than as bad input.
pub fn calibrated(plan: &Plan) -> Result<(Baseline, Physiology), Error> {
    calibrate(&plan.participant.subject, &plan.constants).map_err(|e| {
        Error::Internal(format!(
            "{}: the baseline cannot be calibrated after validation: {e:?}",
            plan.source_name
        ))
    })
}

/// Simulate every scenario of a validated plan.
pub fn simulate(plan: &Plan) -> Result<Simulation, Error> {
    simulate_observed(plan, None)
}

/// Simulate every scenario, re-anchored at the weigh-ins and with the delivered
/// sessions of `observed` up to its `as_of` date (docs/model.md section 7). The no-exercise
/// counterfactual behind `dose_share` is not re-anchored.
pub fn simulate_observed(plan: &Plan, observed: Option<&Observed>) -> Result<Simulation, Error> {
    simulate_runs(plan, observed, observed.is_some())
}

/// Simulate every scenario with the delivered sessions of `observed` up to its
/// `as_of` date, from the baseline and never re-anchored at the weigh-ins: one
/// continuous projection to set the weigh-ins beside (the charts with a log,
/// docs/design.md), whose energy is the model's and never the scale's noise.
pub fn simulate_delivered(plan: &Plan, observed: &Observed) -> Result<Simulation, Error> {
    simulate_runs(plan, Some(observed), false)
}

/// [`simulate_observed`] with re-anchoring at the weigh-ins on (`anchor`) or off.
fn simulate_runs(
    plan: &Plan,
    observed: Option<&Observed>,
    anchor: bool,
) -> Result<Simulation, Error> {
    let (baseline, physiology) = calibrated(plan)?;
    let start_body = BodyState {
        fat_kg: baseline.fat_mass_kg,
        lean_kg: baseline.fat_free_mass_kg,
        lagged_exercise_kcal_per_day: 0.0,
    };
    let drift = integrate(
        &physiology,
        &Compensation::default(),
        &[],
        state_of(&start_body, 0.0),
        28.0,
        28.0,
    )
    .map(|s| {
        body_of(s.states.last().expect("dense output has points")).mass_kg() - baseline.mass_kg
    })
    .unwrap_or(0.0);
    let mut scenarios = Vec::with_capacity(plan.scenarios.len());
    for sc in &plan.scenarios {
        let without = run(
            plan,
            &physiology,
            &baseline,
            sc,
            RunMode::without_exercise(plan),
            None,
        );
        let deficits: Option<Vec<f64>> = without.as_ref().ok().map(|w| {
            w.weeks
                .iter()
                .map(|w| w.end.achieved_deficit_kcal)
                .collect()
        });
        // The projection's own range error comes first: when both runs leave the
        // valid range, the day and state reported are those of the plan as
        // prescribed, not of the no-exercise comparison.
        let weeks = run(
            plan,
            &physiology,
            &baseline,
            sc,
            RunMode {
                observed,
                anchor,
                ..RunMode::projection(plan)
            },
            deficits.as_deref(),
        )?
        .weeks;
        without?;
        let outcome = outcome(plan, &baseline, &weeks);
        let adherence = observed.map(|o| {
            let covered: Vec<&adherence::WeekAdherence> =
                weeks.iter().filter_map(|w| w.adherence.as_ref()).collect();
            adherence::total(&covered, o)
        });
        scenarios.push(ScenarioRun {
            name: sc.name.clone(),
            assumptions: sc.assumptions(),
            compensation: sc.compensation,
            weeks,
            outcome,
            adherence,
        });
    }
    Ok(Simulation {
        baseline,
        physiology,
        drift_mass_4_weeks_kg: drift,
        scenarios,
    })
}

/// The end state of a run's weeks.
pub fn outcome(plan: &Plan, baseline: &Baseline, weeks: &[WeekRecord]) -> Outcome {
    let last = weeks.last().expect("a plan has at least one week");
    let protocol_end = &weeks[plan.protocol.weeks as usize - 1];
    Outcome {
        end_date: plan.protocol.end_date(),
        mass_kg: last.end.mass_kg,
        fat_mass_kg: last.end.fat_mass_kg,
        fat_free_mass_kg: last.end.fat_free_mass_kg,
        mass_change_kg: last.end.mass_kg - baseline.mass_kg,
        fat_mass_change_kg: last.end.fat_mass_kg - baseline.fat_mass_kg,
        fat_free_mass_change_kg: last.end.fat_free_mass_kg - baseline.fat_free_mass_kg,
        prescribed_net_kcal: last.end.prescribed_net_kcal,
        achieved_deficit_kcal: last.end.achieved_deficit_kcal,
        dose_share: last.end.dose_share,
        protocol_end_mass_kg: protocol_end.end.mass_kg,
        protocol_end_mass_change_kg: protocol_end.end.mass_kg - baseline.mass_kg,
        protocol_end_dose_share: protocol_end.end.dose_share,
    }
}

/// End-of-week masses of every scenario with no exercise at all (the counterfactual
/// of `dose_share`), with the baseline.
pub fn no_exercise_masses(plan: &Plan) -> Result<(Baseline, Vec<Vec<f64>>), Error> {
    let (baseline, physiology) = calibrated(plan)?;
    let masses = plan
        .scenarios
        .iter()
        .map(|sc| {
            Ok(run(
                plan,
                &physiology,
                &baseline,
                sc,
                RunMode::without_exercise(plan),
                None,
            )?
            .weeks
            .iter()
            .map(|w| w.end.mass_kg)
            .collect())
        })
        .collect::<Result<Vec<Vec<f64>>, Error>>()?;
    Ok((baseline, masses))
}

/// How a run uses exercise and measured data.
#[derive(Debug, Clone, Copy)]
pub struct RunMode<'a> {
    /// Exercise at all (false: the no-exercise counterfactual).
    pub exercise: bool,
    /// Measured data: delivered sessions replace planned ones up to `as_of`.
    pub observed: Option<&'a Observed>,
    /// Re-anchor the state at each weigh-in.
    pub anchor: bool,
    /// Weeks to run (at most the plan's protocol plus follow-up).
    pub weeks: u32,
    /// The integrator.
    pub integrator: integrate::Integrator,
    /// Planned sessions delivered with this probability, drawn per session from the key
    /// (None: every session delivered).
    pub attendance: Option<Attendance>,
    /// The last week with exercise (a participant who drops out stops exercising
    /// and goes on being simulated); None: every protocol week.
    pub last_exercise_week: Option<u32>,
}

/// Session attendance of one draw: each planned bout is delivered with probability
/// `probability`, decided by a hash of `key`, its day and bout number, so the same
/// draw misses the same sessions in every arm (common random numbers).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Attendance {
    /// Probability a planned session is delivered.
    pub probability: f64,
    /// The draw's key.
    pub key: u64,
}

impl Attendance {
    /// Whether the bout on `day` (days from the start) with number `bout` is delivered.
    pub fn delivered(&self, day: u32, bout: u32) -> bool {
        self.delivered_on(Attendance::day_key(day, bout))
    }

    /// The part of [`Attendance::delivered`]'s hash that depends on the day and the
    /// bout alone, the same for every draw (the lane loop works it out once a week
    /// for all its lanes).
    #[inline(always)]
    pub fn day_key(day: u32, bout: u32) -> u64 {
        splitmix64(u64::from(day) << 8 | u64::from(bout))
    }

    /// Whether the bout whose [`Attendance::day_key`] is `day_key` is delivered.
    #[inline(always)]
    pub fn delivered_on(&self, day_key: u64) -> bool {
        let h = splitmix64(self.key ^ day_key);
        // The top 53 bits as a uniform number in [0, 1).
        ((h >> 11) as f64) / ((1u64 << 53) as f64) < self.probability
    }
}

impl RunMode<'_> {
    /// The same weeks with no exercise at all (the counterfactual of `dose_share`).
    pub fn without_exercise(plan: &Plan) -> RunMode<'static> {
        RunMode {
            exercise: false,
            ..RunMode::projection(plan)
        }
    }

    /// The plain projection of every week.
    pub fn projection(plan: &Plan) -> RunMode<'static> {
        RunMode {
            exercise: true,
            observed: None,
            anchor: false,
            weeks: plan.protocol.total_weeks(),
            integrator: integrate::Integrator::Dopri5,
            attendance: None,
            last_exercise_week: None,
        }
    }
}

/// A run: the week records and the state at 00:00 of every day (`7 * weeks + 1` states).
#[derive(Debug, Clone)]
pub struct RunOutput {
    /// One record per week.
    pub weeks: Vec<WeekRecord>,
    /// Daily states, day 0 first.
    pub daily: Vec<State>,
}
