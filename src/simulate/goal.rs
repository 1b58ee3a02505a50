//! The dose that reaches a goal: the smallest dose of the plan's kind whose loss at
//! the end of week N is at least X, found on the full model as `schedule` runs it
//! (ramp, rounding, caps and weekly re-prescription included).
//!
//! With minute rounding the loss is a staircase in the dose, so the search runs on
//! the grid of the reported resolution itself: the doses `k * resolution` are
//! bracketed by the plan's allowed range and bisected on the integer `k` (the loss
//! is non-decreasing in the dose while `c_I (1 - beta) + c_A < 1`, docs/model.md section 5). The
//! answer is then exact for the plan as printed: that dose reaches the goal and the
//! dose one step lower does not. (A continuous root-finder such as Brent's method
//! gains nothing on a staircase and still needs the settling step.)

use crate::error::Error;
use crate::plan::{DoseAmount, Plan, Scenario};
use crate::simulate::observed::Observed;
use crate::simulate::{WeekRecord, simulate_observed};
use serde::Serialize;

/// What the goal asks for.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct GoalRequest {
    /// Loss wanted, kg (positive).
    pub lose_kg: f64,
    /// By the end of this protocol week (day 7N).
    pub by_week: u32,
}

/// The answer for one scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GoalAnswer {
    /// Scenario name.
    pub name: String,
    /// Whether a dose within the plan's limits reaches the goal.
    pub reachable: bool,
    /// The dose in `dose_unit` (0 when no exercise is needed; None when out of reach).
    pub dose: Option<f64>,
    /// The plan's dose key.
    pub dose_unit: &'static str,
    /// Resolution the dose is rounded up to.
    pub resolution: f64,
    /// Minutes per session in week 1 at that dose.
    pub minutes_week1: Option<u32>,
    /// Minutes per session in the goal week at that dose.
    pub minutes_goal_week: Option<u32>,
    /// Loss at that dose by the goal week, kg.
    pub loss_kg: Option<f64>,
    /// Loss one resolution step lower, kg (shows the answer is the smallest; when the
    /// smallest allowed dose already reaches the goal, the loss with no exercise).
    pub loss_one_step_lower_kg: Option<f64>,
    /// Why it is out of reach, or a note (None when plainly reached).
    pub reason: Option<String>,
}

impl GoalAnswer {
    /// The answer for scenario `sc` before a search: not reached, nothing found.
    fn unreached(sc: &Scenario, amount: &DoseAmount) -> GoalAnswer {
        GoalAnswer {
            name: sc.name.clone(),
            reachable: false,
            dose: None,
            dose_unit: amount.key(),
            resolution: resolution(amount),
            minutes_week1: None,
            minutes_goal_week: None,
            loss_kg: None,
            loss_one_step_lower_kg: None,
            reason: None,
        }
    }
}

/// The resolution of the reported dose: 0.1 for kcal/kg/week, 1 for kcal and minutes.
pub fn resolution(amount: &DoseAmount) -> f64 {
    match amount {
        DoseAmount::KcalPerKgWeek(_) => 0.1,
        _ => 1.0,
    }
}

/// The allowed range of each dose kind: [`DoseAmount::range`] (kept for callers
/// outside the library core).
pub fn allowed_range(amount: &DoseAmount) -> (f64, f64) {
    amount.range()
}

/// The plan cut to `by_week` protocol weeks, with one scenario and the given dose.
fn variant(plan: &Plan, scenario: &Scenario, by_week: u32, dose: Option<f64>) -> Plan {
    let mut p = plan.clone();
    p.protocol.weeks = by_week;
    p.protocol.follow_up_weeks = 0;
    // The ramp keeps its own length: weeks up to N ramp exactly as in the full plan.
    p.scenarios = vec![scenario.clone()];
    if let Some(d) = dose {
        p.protocol.dose.amount = p.protocol.dose.amount.with_value(d);
    }
    p
}

struct Run {
    loss_kg: f64,
    weeks: Vec<WeekRecord>,
}

fn run(
    plan: &Plan,
    scenario: &Scenario,
    by_week: u32,
    dose: f64,
    obs: Option<&Observed>,
) -> Result<Run, Error> {
    let sim = simulate_observed(&variant(plan, scenario, by_week, Some(dose)), obs)?;
    let sc = sim.scenarios.into_iter().next().expect("one scenario");
    let m0 = sim.baseline.mass_kg;
    let end = sc.weeks[by_week as usize - 1].end.mass_kg;
    Ok(Run {
        loss_kg: m0 - end,
        weeks: sc.weeks,
    })
}

/// The loss by the goal week of the same scenario with no exercise at all.
fn loss_without(plan: &Plan, scenario: &Scenario, by_week: u32) -> Result<f64, Error> {
    let p = variant(plan, scenario, by_week, None);
    let (baseline, masses) = crate::simulate::no_exercise_masses(&p)?;
    Ok(baseline.mass_kg - masses[0][by_week as usize - 1])
}

/// What is wrong with a goal request, for the caller to word (the command line
/// names its options).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum RequestProblem {
    /// The loss is not a positive number of kg below the baseline mass.
    Loss(f64),
    /// The goal week is outside the protocol's weeks `1..=weeks`.
    Week {
        /// The week asked for.
        week: u32,
        /// The protocol's weeks.
        weeks: u32,
    },
}

/// The first problem of the request against the plan, if any.
pub fn request_problem(plan: &Plan, req: &GoalRequest) -> Option<RequestProblem> {
    let m0 = plan.participant.subject.mass_kg;
    if !req.lose_kg.is_finite() || req.lose_kg <= 0.0 || req.lose_kg >= m0 {
        return Some(RequestProblem::Loss(req.lose_kg));
    }
    if req.by_week < 1 || req.by_week > plan.protocol.weeks {
        return Some(RequestProblem::Week {
            week: req.by_week,
            weeks: plan.protocol.weeks,
        });
    }
    None
}

/// Validate the request against the plan (exit 2 for an invalid request).
pub fn check_request(plan: &Plan, req: &GoalRequest) -> Result<(), Error> {
    match request_problem(plan, req) {
        None => Ok(()),
        Some(RequestProblem::Loss(kg)) => Err(Error::Usage(format!(
            "the loss wanted must be above 0 kg and below the baseline mass ({} kg); got {} kg",
            crate::plan::participant::fmt_num(plan.participant.subject.mass_kg),
            crate::plan::participant::fmt_num(kg)
        ))),
        Some(RequestProblem::Week { week, weeks }) => Err(Error::Usage(format!(
            "the goal week {week} is outside the protocol; allowed 1 to {weeks} (the plan's weeks)"
        ))),
    }
}

/// Solve the goal for every scenario of the plan.
pub fn solve(plan: &Plan, req: &GoalRequest) -> Result<Vec<GoalAnswer>, Error> {
    solve_observed(plan, req, None)
}

/// [`solve`] with the log's delivered sessions and weigh-ins for the weeks it covers.
pub fn solve_observed(
    plan: &Plan,
    req: &GoalRequest,
    obs: Option<&Observed>,
) -> Result<Vec<GoalAnswer>, Error> {
    check_request(plan, req)?;
    plan.scenarios
        .iter()
        .map(|sc| solve_one(plan, sc, req, obs))
        .collect()
}

/// Why the goal is out of reach when even the largest dose the model accepts
/// (`largest`, with its unit; its run `top`) does not lose enough by week `n`.
fn out_of_reach(plan: &Plan, sc: &Scenario, n: u32, top: &Run, largest: &str) -> String {
    let c = &sc.compensation;
    let beta = plan.constants.tef_fraction;
    let eaten = c.intake_fraction * (1.0 - beta) + c.activity_fraction;
    if eaten >= 1.0 {
        format!(
            "compensation eats the dose: {:.0}% of exercise energy is offset (intake {:.0}% less its TEF, activity {:.0}%), so more exercise does not bring more loss",
            eaten * 100.0,
            c.intake_fraction * 100.0,
            c.activity_fraction * 100.0
        )
    } else {
        let capped = top.weeks.iter().any(|w| w.over_max.is_some());
        let minutes = top
            .weeks
            .iter()
            .map(|w| w.minutes_per_session)
            .max()
            .unwrap_or(0);
        let cap_note = match (
            capped,
            plan.protocol.over_max,
            plan.protocol.max_session_minutes,
        ) {
            (true, crate::plan::OverMax::Cap, Some(max)) => format!(
                "; the plan caps sessions at {max:.0} min, which limits the energy any dose can deliver"
            ),
            (true, _, _) => {
                format!("; sessions reach {minutes} min, beyond the plan's maximum")
            }
            _ => String::new(),
        };
        format!(
            "out of reach by week {n}: the largest dose the model accepts ({largest}) loses only {:.2} kg{cap_note}",
            top.loss_kg
        )
    }
}

fn solve_one(
    plan: &Plan,
    sc: &Scenario,
    req: &GoalRequest,
    obs: Option<&Observed>,
) -> Result<GoalAnswer, Error> {
    let amount = plan.protocol.dose.amount;
    let res = resolution(&amount);
    let per = (1.0 / res).round();
    let (lo, hi) = amount.range();
    let dose_at = |k: i64| k as f64 / per;
    let k_lo = (lo * per - 1e-9).ceil() as i64;
    let mut k_hi = (hi * per + 1e-9).floor() as i64;
    let n = req.by_week;
    let mut answer = GoalAnswer::unreached(sc, &amount);
    let without = loss_without(plan, sc, n)?;
    if without >= req.lose_kg {
        answer.reachable = true;
        answer.dose = Some(0.0);
        answer.minutes_week1 = Some(0);
        answer.minutes_goal_week = Some(0);
        answer.loss_kg = Some(without);
        answer.reason = Some(format!(
            "the goal is met with no exercise at all: the scenario alone loses {without:.2} kg by week {n}"
        ));
        return Ok(answer);
    }
    // The largest dose the model accepts (very high doses may leave its valid range).
    let valid = |k: i64| match run(plan, sc, n, dose_at(k), obs) {
        Ok(r) => Ok(Some(r)),
        Err(Error::OutOfRange(_)) => Ok(None),
        Err(e) => Err(e),
    };
    let first = valid(k_lo)?.ok_or_else(|| {
        Error::Usage(format!(
            "scenario \"{}\": even the smallest dose ({} {}) drives the model out of its valid range",
            sc.name,
            dose_at(k_lo),
            amount.unit()
        ))
    })?;
    let top = match valid(k_hi)? {
        Some(r) => r,
        None => {
            let (mut good, mut bad) = (k_lo, k_hi);
            while bad - good > 1 {
                let mid = good + (bad - good) / 2;
                if valid(mid)?.is_some() {
                    good = mid
                } else {
                    bad = mid
                }
            }
            k_hi = good;
            valid(good)?.expect("checked valid")
        }
    };
    if top.loss_kg < req.lose_kg {
        let largest = format!("{} {}", dose_at(k_hi), amount.unit());
        answer.reason = Some(out_of_reach(plan, sc, n, &top, &largest));
        return Ok(answer);
    }
    // Smallest k with loss >= X: invariant loss(k_low) < X <= loss(k_high).
    let (mut k_low, mut k_high) = (k_lo - 1, k_hi);
    let mut low_loss = if first.loss_kg >= req.lose_kg {
        without
    } else {
        first.loss_kg
    };
    if first.loss_kg >= req.lose_kg {
        k_high = k_lo;
    }
    let mut best = if k_high == k_lo { first } else { top };
    while k_high - k_low > 1 {
        let mid = k_low + (k_high - k_low) / 2;
        let r = valid(mid)?.expect("doses below a valid dose are valid");
        if r.loss_kg >= req.lose_kg {
            k_high = mid;
            best = r;
        } else {
            k_low = mid;
            low_loss = r.loss_kg;
        }
    }
    let w1 = best.weeks[0].minutes_per_session;
    let wn = best.weeks[n as usize - 1].minutes_per_session;
    let over: Vec<&WeekRecord> = best
        .weeks
        .iter()
        .filter(|w| w.over_max.as_ref().is_some_and(|o| o.still_over))
        .collect();
    answer.minutes_week1 = Some(w1);
    answer.minutes_goal_week = Some(wn);
    answer.loss_kg = Some(best.loss_kg);
    answer.loss_one_step_lower_kg = Some(low_loss);
    if let (Some(max), Some(worst)) = (
        plan.protocol.max_session_minutes,
        over.iter()
            .map(|w| w.minutes_per_session / w.bouts_per_session.max(1))
            .max(),
    ) {
        answer.reason = Some(format!(
            "needs {} {} with sessions of up to {worst} min, above the plan's maximum of {max:.0} min",
            dose_at(k_high),
            amount.unit()
        ));
        return Ok(answer);
    }
    answer.reachable = true;
    answer.dose = Some(dose_at(k_high));
    Ok(answer)
}
