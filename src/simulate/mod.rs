//! The week-by-week driver: at the start of each week take the reference state,
//! re-prescribe the minutes, integrate the week, check the model's valid range, and
//! record what a report needs. Follow-up weeks run with no exercise.
//!
//! Reference: MODEL.md sections 4-6.

pub mod adherence;
pub mod band;
pub mod cohort;
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
use integrate::{State, body_of, integrate, state_of};
use observed::Observed;
use prescription::{OverMaxNote, Reference, prescribe};
use serde::Serialize;

/// Lowest fat mass the model accepts, kg (MODEL.md 6).
pub const MIN_FAT_KG: f64 = 2.0;
/// Lowest body mass the model accepts, kg (the plan's own lower limit, PLAN.md).
pub const MIN_MASS_KG: f64 = 30.0;
/// Lowest BMI the model accepts, kg/m^2 (the plan's own lower limit, PLAN.md).
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
/// sessions of `observed` up to its `as_of` date (MODEL.md 7). The no-exercise
/// counterfactual behind `dose_share` is not re-anchored.
pub fn simulate_observed(plan: &Plan, observed: Option<&Observed>) -> Result<Simulation, Error> {
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
                anchor: observed.is_some(),
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
        let h = splitmix64(self.key ^ splitmix64(u64::from(day) << 8 | u64::from(bout)));
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

/// The record of week `w` starting on `week_start` from its reference state, its
/// prescription (None in a week without exercise) and its end.
fn week_record(
    plan: &Plan,
    physiology: &Physiology,
    baseline: &Baseline,
    obs: Option<&Observed>,
    (w, week_start, reference): (u32, NaiveDate, &Reference),
    rx: Option<prescription::Prescription>,
    end: WeekEnd,
) -> WeekRecord {
    let (m_w, rmr_w) = (reference.mass_kg, reference.rmr_kcal_per_day);
    let start_day = 7 * (w - 1);
    let in_protocol = w <= plan.protocol.weeks;
    let sessions = session_records(plan, physiology, rx.as_ref(), m_w, rmr_w);
    let met_w = sessions
        .first()
        .map_or_else(|| plan.activity.intensity.met_at(m_w), |s| s.met);
    let measured = w == 1 || obs.is_some_and(|o| o.measured_near(start_day));
    let adherence = match (obs, &rx) {
        (Some(o), Some(r)) if start_day <= o.as_of_day => Some(adherence::week(
            plan,
            physiology,
            w,
            r,
            o,
            reference,
            baseline.mass_kg,
        )),
        _ => None,
    };
    WeekRecord {
        week: w,
        start: week_start,
        phase: if in_protocol {
            Phase::Protocol
        } else {
            Phase::FollowUp
        },
        reference_mass_kg: m_w,
        mass_source: if measured {
            MassSource::Measured
        } else {
            MassSource::Projected
        },
        reference_rmr_kcal_per_day: rmr_w,
        ramp_fraction: rx.as_ref().map_or(0.0, |r| r.ramp_fraction),
        minutes_per_session: rx.as_ref().map_or(0, |r| r.minutes_per_session),
        minutes_unrounded: rx.as_ref().map_or(0.0, |r| r.minutes_unrounded),
        sessions_per_week: rx
            .as_ref()
            .map_or(0, |r| (r.bouts.len() as u32) / r.bouts_per_session),
        bouts_per_session: rx.as_ref().map_or(0, |r| r.bouts_per_session),
        target_kcal_per_session: rx.as_ref().and_then(|r| r.target_kcal_per_session),
        met: if rx.is_some() { met_w } else { 0.0 },
        sessions,
        closed: rx.as_ref().map(|r| r.closed.clone()).unwrap_or_default(),
        make_up: rx.as_ref().and_then(|r| r.make_up.clone()),
        over_max: rx.and_then(|r| r.over_max),
        adherence,
        end,
    }
}

/// A week's sessions must fit in a day.
fn check_session_length(
    plan: &Plan,
    scenario: &Scenario,
    r: &prescription::Prescription,
    w: u32,
    start_day: u32,
    body: &BodyState,
) -> Result<(), Error> {
    let per_day = r.minutes_per_session;
    if f64::from(per_day) >= crate::model::energy::MINUTES_PER_DAY {
        return Err(range_error(
            plan,
            scenario,
            start_day,
            body,
            format!(
                "week {w} needs sessions of {per_day} min, a whole day or more (a session must be shorter than 1440 min){}",
                if matches!(plan.protocol.dose.amount, crate::plan::DoseAmount::MinutesPerWeek(_)) {
                    ""
                } else {
                    "; the activity is too light for the dose"
                }
            ),
        ));
    }
    Ok(())
}

/// The bouts to integrate in the week starting on day `start_day`: the prescribed
/// ones still to come (and delivered, with an attendance), and the logged ones.
fn week_bouts(
    plan: &Plan,
    rx: Option<&prescription::Prescription>,
    mode: &RunMode<'_>,
    start_day: u32,
) -> Vec<Bout> {
    let p = &plan.protocol;
    let obs = mode.observed;
    let as_of_day = obs.map(|o| o.as_of_day);
    let is_past = |date: &NaiveDate| {
        as_of_day.is_some_and(|a| ((*date - p.start).num_days() as u32) <= a)
    };
    let mut bouts: Vec<Bout> = rx
        .map(|r| {
            r.model_bouts(plan, |b| {
                !is_past(&b.date)
                    && mode.attendance.is_none_or(|a| {
                        a.delivered((b.date - p.start).num_days() as u32, b.bout.unwrap_or(1))
                    })
            })
        })
        .unwrap_or_default();
    if let (Some(o), true) = (obs, mode.exercise) {
        // A delivered session's minutes are its time at target; its warm-up and
        // cool-down are taken as done as planned.
        for s in o
            .sessions_in(start_day, start_day + 7)
            .filter(|s| s.minutes > 0.0)
        {
            bouts.push(Bout {
                minutes: s.minutes,
                intensity: s.intensity.clone(),
            });
            bouts.extend(prescription::easy_bouts(plan));
        }
    }
    bouts
}

/// Integrate the week starting on day `start_day` from `y`, in segments split at
/// mid-week weigh-ins (anchoring the state to them), appending the daily states.
fn integrate_week(
    (plan, physiology, scenario): (&Plan, &Physiology, &Scenario),
    mode: &RunMode<'_>,
    bouts: &[Bout],
    start_day: u32,
    body: &BodyState,
    y: &mut State,
    daily: &mut Vec<State>,
) -> Result<(), Error> {
    let comp = &scenario.compensation;
    let obs = mode.observed;
    let anchors = |day: u32| -> Vec<&observed::WeighIn> {
        match (obs, mode.anchor) {
            (Some(o), true) => o.weigh_ins_on(day).collect(),
            _ => Vec::new(),
        }
    };
    // Integrate the week in segments split at mid-week weigh-ins.
    let mut cuts: Vec<u32> = match (obs, mode.anchor) {
        (Some(o), true) => o
            .weigh_ins
            .iter()
            .filter(|wi| wi.day > start_day && wi.day < start_day + 7 && wi.day <= o.as_of_day)
            .map(|wi| wi.day)
            .collect(),
        _ => Vec::new(),
    };
    cuts.dedup();
    cuts.push(start_day + 7);
    let mut from = start_day;
    if daily.is_empty() {
        daily.push(*y);
    }
    for cut in cuts {
        let len = f64::from(cut - from);
        let samples =
            integrate::integrate_with(mode.integrator, physiology, comp, bouts, *y, len, 1.0)
                .map_err(|(t, why)| {
                let day = from + t.floor() as u32;
                range_error(
                    plan,
                    scenario,
                    day,
                    body,
                    format!("the ODE solver failed: {why}"),
                )
            })?;
        for (i, s) in samples.states.iter().enumerate() {
            check_state(plan, physiology, scenario, bouts, from + i as u32, s)?;
        }
        daily.extend(samples.states.iter().skip(1));
        *y = *samples.states.last().expect("dense output has points");
        if cut < start_day + 7 {
            for wi in anchors(cut) {
                *y = observed::anchor(y, wi, plan.constants.forbes_constant_kg);
            }
            *daily.last_mut().expect("a day was pushed") = *y;
        }
        from = cut;
    }
    Ok(())
}

/// The records of a week's prescribed sessions at the week's reference mass and RMR.
fn session_records(
    plan: &Plan,
    physiology: &Physiology,
    rx: Option<&prescription::Prescription>,
    m_w: f64,
    rmr_w: f64,
) -> Vec<SessionRecord> {
    let p = &plan.protocol;
    let easy: Vec<Bout> = prescription::easy_bouts(plan).collect();
    let easy_energy = |per_min: &dyn Fn(f64) -> f64| {
        easy.iter()
            .map(|b| b.minutes * per_min(b.intensity.met_at(m_w)))
            .fold(0.0, |a, b| a + b)
    };
    let gross = |met: f64| crate::activity::acsm::gross_kcal_per_min(met, m_w);
    let net = |met: f64| physiology.net_kcal_per_min(met, m_w, rmr_w);
    let (easy_gross, easy_net) = (easy_energy(&gross), easy_energy(&net));
    rx.map(|r| {
            r.bouts
                .iter()
                .map(|b| {
                    let mins = f64::from(b.minutes);
                    let activity = plan.activity_at(b.activity);
                    let met = activity.intensity.met_at(m_w);
                    let (gross_kcal, net_kcal) = if easy.is_empty() {
                        (mins * gross(met), mins * net(met))
                    } else {
                        (mins * gross(met) + easy_gross, mins * net(met) + easy_net)
                    };
                    SessionRecord {
                        date: b.date,
                        weekday: weekday_name(b.date.weekday()),
                        minutes: b.minutes,
                        bout: b.bout,
                        met,
                        gross_kcal,
                        net_kcal,
                        relative_intensity: physiology.relative_intensity(met, m_w, rmr_w),
                        activity: activity.label.clone(),
                        activity_index: b.activity,
                        warm_up_minutes: p.warm_up.map_or(0, |e| e.minutes),
                        cool_down_minutes: p.cool_down.map_or(0, |e| e.minutes),
                        session_minutes: b.minutes + p.easy_minutes(),
                    }
                })
                .collect()
        })
        .unwrap_or_default()
}

/// A run: the week records and the state at 00:00 of every day (`7 * weeks + 1` states).
#[derive(Debug, Clone)]
pub struct RunOutput {
    /// One record per week.
    pub weeks: Vec<WeekRecord>,
    /// Daily states, day 0 first.
    pub daily: Vec<State>,
}

/// Run one scenario week by week; `exercise = false` gives the same scenario with no
/// exercise (the counterfactual `dose_share` needs), whose deficits are passed back in.
pub fn run(
    plan: &Plan,
    physiology: &Physiology,
    baseline: &Baseline,
    scenario: &Scenario,
    mode: RunMode<'_>,
    deficits_without: Option<&[f64]>,
) -> Result<RunOutput, Error> {
    let comp = &scenario.compensation;
    let p = &plan.protocol;
    let b0 = BodyState {
        fat_kg: baseline.fat_mass_kg,
        lean_kg: baseline.fat_free_mass_kg,
        lagged_exercise_kcal_per_day: 0.0,
    };
    let mut y: State = state_of(&b0, 0.0);
    let total = mode.weeks.min(p.total_weeks());
    let mut weeks = Vec::with_capacity(total as usize);
    let mut daily: Vec<State> = Vec::with_capacity(7 * total as usize + 1);
    let obs = mode.observed;
    let anchors = |day: u32| -> Vec<&observed::WeighIn> {
        match (obs, mode.anchor) {
            (Some(o), true) => o.weigh_ins_on(day).collect(),
            _ => Vec::new(),
        }
    };
    for w in 1..=total {
        let start_day = 7 * (w - 1);
        let week_start = p.start + chrono::Days::new(u64::from(start_day));
        for wi in anchors(start_day) {
            y = observed::anchor(&y, wi, plan.constants.forbes_constant_kg);
            // The day's 00:00 state is the measured one.
            if let Some(last) = daily.last_mut() {
                *last = y;
            }
        }
        let body = body_of(&y);
        let m_w = body.mass_kg();
        let rmr_w = physiology.rmr(comp, body.fat_kg, body.lean_kg);
        let reference = Reference {
            mass_kg: m_w,
            rmr_kcal_per_day: rmr_w,
        };
        let in_protocol = w <= p.weeks;
        let exercising = in_protocol && mode.last_exercise_week.is_none_or(|last| w <= last);
        let rx = (mode.exercise && exercising).then(|| {
            prescribe(
                plan,
                physiology,
                w,
                week_start,
                baseline.mass_kg,
                &reference,
            )
        });
        if let Some(r) = &rx {
            check_session_length(plan, scenario, r, w, start_day, &body)?;
        }
        let bouts = week_bouts(plan, rx.as_ref(), &mode, start_day);
        let ctx = (plan, physiology, scenario);
        integrate_week(ctx, &mode, &bouts, start_day, &body, &mut y, &mut daily)?;
        if comp.intake_lag_days == 0.0 {
            // With no lag Xbar is X itself; keep the state in step for the next week.
            y[2] = physiology.fluxes(comp, &bouts, &body_of(&y)).exercise;
        }
        let end_body = body_of(&y);
        let flux_end = physiology.fluxes(comp, &bouts, &end_body);
        let deficit = -physiology.stored_energy_change(&b0, &end_body);
        let prescribed = y[3];
        let dose_share = match deficits_without {
            Some(d) if prescribed > 0.0 => (deficit - d[w as usize - 1]) / prescribed,
            _ => 0.0,
        };
        let end = WeekEnd {
            mass_kg: end_body.mass_kg(),
            fat_mass_kg: end_body.fat_kg,
            fat_free_mass_kg: end_body.lean_kg,
            rmr_kcal_per_day: flux_end.rmr,
            intake_kcal_per_day: flux_end.intake,
            prescribed_net_kcal: prescribed,
            achieved_deficit_kcal: deficit,
            dose_share,
        };
        let at = (w, week_start, &reference);
        weeks.push(week_record(plan, physiology, baseline, obs, at, rx, end));
    }
    Ok(RunOutput { weeks, daily })
}

fn range_error(
    plan: &Plan,
    scenario: &Scenario,
    day: u32,
    body: &BodyState,
    what: String,
) -> Error {
    Error::OutOfRange(RangeError {
        file: plan.source_name.clone(),
        scenario: scenario.name.clone(),
        day,
        date: plan.protocol.start + chrono::Days::new(u64::from(day)),
        what,
        fat_kg: body.fat_kg,
        lean_kg: body.lean_kg,
    })
}

/// MODEL.md 6: fat mass below 2 kg, RMR, activity or exercise net energy at or below
/// zero, intake below zero, or any non-finite value is out of range.
fn check_state(
    plan: &Plan,
    physiology: &Physiology,
    scenario: &Scenario,
    bouts: &[Bout],
    day: u32,
    y: &State,
) -> Result<(), Error> {
    let body = body_of(y);
    let bad = |what: String| Err(range_error(plan, scenario, day, &body, what));
    if !y.iter().all(|v| v.is_finite()) {
        return bad("a state value is not finite".to_string());
    }
    if body.fat_kg < MIN_FAT_KG {
        return bad(format!(
            "fat mass {:.3} kg is below {MIN_FAT_KG} kg",
            body.fat_kg
        ));
    }
    // The model is calibrated for the bodies a plan may describe (PLAN.md: mass 30 to
    // 350 kg, BMI 13 to 80); below that its equations are far outside their data.
    let m = body.mass_kg();
    let b = crate::model::composition::bmi(m, physiology.height_cm);
    if m < MIN_MASS_KG || b < MIN_BMI {
        return bad(format!(
            "body mass {m:.1} kg (BMI {b:.1}) is below the model's range (mass {MIN_MASS_KG} kg, BMI {MIN_BMI} kg/m^2)"
        ));
    }
    let f = physiology.fluxes(&scenario.compensation, bouts, &body);
    let checks = [
        (f.rmr, "RMR (kcal/day)", "at or below zero"),
        (
            f.activity,
            "non-exercise activity energy",
            "at or below zero (activity compensation larger than all other movement)",
        ),
        (
            f.min_net_kcal_per_min,
            "exercise energy above rest per minute",
            "at or below zero (the activity no longer costs more than rest)",
        ),
    ];
    for (v, name, why) in checks {
        if !v.is_finite() && v != f64::INFINITY {
            return bad(format!("{name} is not finite"));
        }
        if v <= 0.0 {
            return bad(format!("{name} is {v:.2}, {why}"));
        }
    }
    if f.intake < 0.0 {
        return bad(format!("intake is {:.0} kcal/day, below zero", f.intake));
    }
    Ok(())
}
