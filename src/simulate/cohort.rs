//! A cohort: every participant simulated in its arm (or in every arm, the
//! counterfactual view that isolates the dose effect), in parallel, and summarised
//! per arm and scenario over participants.
//!
//! Each participant's no-exercise run of a scenario is computed once and serves both
//! as the control arm and as the counterfactual of `dose_share` for the dosed arms.
//! Runs are collected in participant order and summarised sequentially, so results
//! do not depend on the number of threads. Percentiles interpolate linearly between
//! order statistics (Hyndman RJ, Fan Y 1996, Am Stat 50:361, definition 7).

use super::integrate::Integrator;
use super::{RunMode, ScenarioRun, calibrated, run};
use crate::error::Error;
use crate::plan::{Participant, Plan};
use crate::study::Study;
use rayon::prelude::*;
use serde::Serialize;

/// One participant of a cohort and the arm it is allocated to.
#[derive(Debug, Clone, PartialEq)]
pub struct Member {
    /// The participant.
    pub participant: Participant,
    /// The allocated arm, if any.
    pub arm: Option<usize>,
}

/// How to run a cohort.
#[derive(Debug, Clone)]
pub struct CohortRequest {
    /// Every participant in every arm (else each in its allocated arm).
    pub all_arms: bool,
    /// The integrator (MODEL.md 6).
    pub integrator: Integrator,
    /// Checkpoint weeks (end of week N), sorted, distinct.
    pub checkpoints: Vec<u32>,
}

/// What one participant's run in one arm and scenario contributes.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RunSummary {
    /// Arm index.
    pub arm: usize,
    /// Scenario index.
    pub scenario: usize,
    /// Mass change at each checkpoint, kg.
    pub mass_change_kg: Vec<f64>,
    /// Fat-mass change at each checkpoint, kg.
    pub fat_mass_change_kg: Vec<f64>,
    /// Mass change at the end of the protocol, kg.
    pub protocol_end_mass_change_kg: f64,
    /// Fat-mass change at the end of the protocol, kg.
    pub protocol_end_fat_mass_change_kg: f64,
    /// Share of the dose in the stores at the end of the protocol (None for a control).
    pub dose_share: Option<f64>,
    /// Minutes of the longest session in week 1.
    pub minutes_week1: u32,
    /// Minutes of the longest session in the last protocol week.
    pub minutes_last_week: u32,
    /// Minutes of the longest session in each protocol week.
    pub minutes_by_week: Vec<u32>,
    /// Whole-session minutes (warm-up, target, cool-down) of all sessions, per protocol week.
    pub session_minutes_by_week: Vec<u32>,
    /// Sessions (or bouts) over the maximum before the policy acted, in any week.
    pub over_max: bool,
    /// Prescribed net exercise energy over the protocol, kcal.
    pub prescribed_net_kcal: f64,
}

/// One participant's runs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MemberResult {
    /// Baseline mass, kg.
    pub baseline_mass_kg: f64,
    /// Runs, arm-major then scenario.
    pub runs: Vec<RunSummary>,
}

/// The arms a member is simulated in.
fn arms_of(study: &Study, m: &Member, all_arms: bool) -> Vec<usize> {
    match (all_arms, m.arm) {
        (false, Some(a)) => vec![a],
        _ => (0..study.arms.len()).collect(),
    }
}

/// Where a run belongs: arm and scenario indices, and whether the arm is a control.
#[derive(Clone, Copy)]
struct Slot {
    arm: usize,
    scenario: usize,
    control: bool,
}

fn summarise_run(
    plan: &Plan,
    slot: Slot,
    out: &super::RunOutput,
    baseline: &crate::model::Baseline,
    checkpoints: &[u32],
) -> RunSummary {
    let Slot {
        arm,
        scenario,
        control,
    } = slot;
    let (baseline_mass, baseline_fat) = (baseline.mass_kg, baseline.fat_mass_kg);
    let weeks = plan.protocol.weeks as usize;
    let w = &out.weeks;
    let at = |week: u32| &w[week as usize - 1].end;
    let end = at(plan.protocol.weeks);
    RunSummary {
        arm,
        scenario,
        mass_change_kg: checkpoints
            .iter()
            .map(|c| at(*c).mass_kg - baseline_mass)
            .collect(),
        fat_mass_change_kg: checkpoints
            .iter()
            .map(|c| at(*c).fat_mass_kg - baseline_fat)
            .collect(),
        protocol_end_mass_change_kg: end.mass_kg - baseline_mass,
        protocol_end_fat_mass_change_kg: end.fat_mass_kg - baseline_fat,
        dose_share: (!control).then_some(end.dose_share),
        minutes_week1: w[0].minutes_per_session,
        minutes_last_week: w[weeks - 1].minutes_per_session,
        minutes_by_week: w[..weeks].iter().map(|x| x.minutes_per_session).collect(),
        session_minutes_by_week: w[..weeks]
            .iter()
            .map(|x| x.sessions.iter().map(|s| s.session_minutes).sum())
            .collect(),
        over_max: w[..weeks].iter().any(|x| x.over_max.is_some()),
        prescribed_net_kcal: end.prescribed_net_kcal,
    }
}

/// Simulate one member in its arms and every scenario.
pub fn simulate_member(
    study: &Study,
    m: &Member,
    req: &CohortRequest,
) -> Result<MemberResult, Error> {
    let arms = arms_of(study, m, req.all_arms);
    let plans: Vec<Plan> = arms
        .iter()
        .map(|a| study.plan_for(&m.participant, *a))
        .collect();
    let (baseline, physiology) = calibrated(&plans[0])?;
    let mut runs = Vec::with_capacity(arms.len() * study.scenarios.len());
    let mut per_scenario: Vec<Vec<RunSummary>> = Vec::new();
    for (si, sc) in study.scenarios.iter().enumerate() {
        let mode = |plan: &Plan, exercise: bool| RunMode {
            exercise,
            integrator: req.integrator,
            ..RunMode::projection(plan)
        };
        let without = run(
            &plans[0],
            &physiology,
            &baseline,
            sc,
            mode(&plans[0], false),
            None,
        )?;
        let deficits: Vec<f64> = without
            .weeks
            .iter()
            .map(|w| w.end.achieved_deficit_kcal)
            .collect();
        let mut row = Vec::with_capacity(arms.len());
        for (a, plan) in arms.iter().zip(&plans) {
            let control = study.arms[*a].is_control();
            let slot = Slot {
                arm: *a,
                scenario: si,
                control,
            };
            let summary = if control {
                summarise_run(plan, slot, &without, &baseline, &req.checkpoints)
            } else {
                let out = run(
                    plan,
                    &physiology,
                    &baseline,
                    sc,
                    mode(plan, true),
                    Some(&deficits),
                )?;
                summarise_run(plan, slot, &out, &baseline, &req.checkpoints)
            };
            row.push(summary);
        }
        per_scenario.push(row);
    }
    // Arm-major order.
    for ai in 0..arms.len() {
        for row in &per_scenario {
            runs.push(row[ai].clone());
        }
    }
    Ok(MemberResult {
        baseline_mass_kg: baseline.mass_kg,
        runs,
    })
}

/// Simulate every member in parallel; `tick` is called once per member done. The
/// first error in member order is returned.
pub fn run_cohort(
    study: &Study,
    members: &[Member],
    req: &CohortRequest,
    tick: &(dyn Fn() + Sync),
) -> Result<Vec<MemberResult>, Error> {
    let results: Vec<Result<MemberResult, Error>> = members
        .par_iter()
        .map(|m| {
            let r = simulate_member(study, m, req);
            tick();
            r
        })
        .collect();
    results.into_iter().collect()
}

/// The same simulation as `schedule` runs for one participant, as a scenario run, for
/// checks that the cohort and the single plan agree.
pub fn single_plan_run(plan: &Plan, integrator: Integrator) -> Result<Vec<ScenarioRun>, Error> {
    let (baseline, physiology) = calibrated(plan)?;
    let mut out = Vec::new();
    for sc in &plan.scenarios {
        let mode = |exercise: bool| RunMode {
            exercise,
            integrator,
            ..RunMode::projection(plan)
        };
        let without = run(plan, &physiology, &baseline, sc, mode(false), None)?;
        let deficits: Vec<f64> = without
            .weeks
            .iter()
            .map(|w| w.end.achieved_deficit_kcal)
            .collect();
        let weeks = run(
            plan,
            &physiology,
            &baseline,
            sc,
            mode(true),
            Some(&deficits),
        )?
        .weeks;
        out.push(ScenarioRun {
            name: sc.name.clone(),
            assumptions: sc.assumptions(),
            compensation: sc.compensation,
            outcome: super::outcome(plan, &baseline, &weeks),
            weeks,
            adherence: None,
        });
    }
    Ok(out)
}

// ---------------------------------------------------------------------------
// Summaries
// ---------------------------------------------------------------------------

/// Percentile `q` (0..=1) of sorted values, linear between order statistics.
pub fn percentile(sorted: &[f64], q: f64) -> f64 {
    if sorted.is_empty() {
        return 0.0;
    }
    let h = (sorted.len() - 1) as f64 * q;
    let lo = h.floor() as usize;
    let hi = h.ceil() as usize;
    sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
}

/// Mean, SD (n - 1), median, 5th and 95th percentiles.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Spread {
    /// Mean.
    pub mean: f64,
    /// Sample SD (0 for one value).
    pub sd: f64,
    /// Median.
    pub median: f64,
    /// 5th percentile.
    pub p5: f64,
    /// 95th percentile.
    pub p95: f64,
}

impl Spread {
    /// The spread of `values` (summed in order, so the result does not depend on threads).
    pub fn of(values: &[f64]) -> Spread {
        let n = values.len() as f64;
        let mean = values.iter().fold(0.0, |a, b| a + b) / n.max(1.0);
        let ss = values.iter().fold(0.0, |a, b| a + (b - mean) * (b - mean));
        let sd = if values.len() > 1 {
            (ss / (n - 1.0)).sqrt()
        } else {
            0.0
        };
        let mut s = values.to_vec();
        s.sort_by(f64::total_cmp);
        Spread {
            mean: mean + 0.0,
            sd,
            median: percentile(&s, 0.5),
            p5: percentile(&s, 0.05),
            p95: percentile(&s, 0.95),
        }
    }
}

/// Median, 95th percentile and maximum of session minutes.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MinutesSpread {
    /// Median.
    pub median: f64,
    /// 95th percentile.
    pub p95: f64,
    /// Maximum.
    pub max: u32,
}

impl MinutesSpread {
    fn of(values: &[u32]) -> MinutesSpread {
        let mut s: Vec<f64> = values.iter().map(|v| f64::from(*v)).collect();
        s.sort_by(f64::total_cmp);
        MinutesSpread {
            median: percentile(&s, 0.5),
            p95: percentile(&s, 0.95),
            max: values.iter().copied().max().unwrap_or(0),
        }
    }
}

/// One checkpoint of an arm and scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CheckpointSpread {
    /// Week (the state at its end).
    pub week: u32,
    /// Mass change, kg.
    pub mass_change_kg: Spread,
    /// Fat-mass change, kg.
    pub fat_mass_change_kg: Spread,
}

/// Minutes per session in one week over participants.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct WeekMinutes {
    /// Week.
    pub week: u32,
    /// Median.
    pub median: f64,
    /// 5th percentile.
    pub p5: f64,
    /// 95th percentile.
    pub p95: f64,
}

/// Supervised session-hours per week (one participant per supervised session).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StaffHours {
    /// The busiest week's hours.
    pub peak_per_week: f64,
    /// The busiest week.
    pub peak_week: u32,
    /// All weeks' hours.
    pub total: f64,
    /// Hours of every protocol week.
    pub by_week: Vec<f64>,
}

impl StaffHours {
    fn of(minutes_by_week: &[u64]) -> StaffHours {
        let by_week: Vec<f64> = minutes_by_week.iter().map(|m| *m as f64 / 60.0).collect();
        let (peak_week, peak) =
            by_week.iter().enumerate().fold(
                (0, 0.0),
                |(bi, b), (i, h)| if *h > b { (i, *h) } else { (bi, b) },
            );
        StaffHours {
            peak_per_week: peak,
            peak_week: peak_week as u32 + 1,
            total: minutes_by_week.iter().sum::<u64>() as f64 / 60.0,
            by_week,
        }
    }
}

/// One arm and scenario over its participants.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScenarioSpread {
    /// Scenario name.
    pub name: String,
    /// Mass change at the end of the protocol, kg.
    pub mass_change_kg: Spread,
    /// Fat-mass change at the end of the protocol, kg.
    pub fat_mass_change_kg: Spread,
    /// Every checkpoint.
    pub checkpoints: Vec<CheckpointSpread>,
    /// Minutes of the longest session in week 1.
    pub minutes_week1: MinutesSpread,
    /// Minutes of the longest session in the last protocol week.
    pub minutes_last_week: MinutesSpread,
    /// Minutes per session week by week (median with a 5th-95th band).
    pub minutes_by_week: Vec<WeekMinutes>,
    /// Share of participants whose sessions exceed the maximum in some week.
    pub over_max_share: f64,
    /// Mean share of the dose in the stores at the end of the protocol (null for a control).
    pub dose_share_mean: Option<f64>,
    /// Mean prescribed net exercise energy over the protocol, kcal.
    pub prescribed_net_kcal_mean: f64,
    /// Every participant's mass change at the end of the protocol, in member order (for charts).
    #[serde(skip)]
    pub mass_changes: Vec<f64>,
}

/// One arm over its participants.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ArmSpread {
    /// Arm name.
    pub name: String,
    /// True for a control arm (no exercise).
    pub control: bool,
    /// Participants simulated in this arm.
    pub participants: usize,
    /// Participants expected to complete (everyone, until drop-out is modelled).
    pub completing: f64,
    /// Every scenario.
    pub scenarios: Vec<ScenarioSpread>,
    /// Supervised session-hours of this arm (first scenario's minutes).
    pub staff_hours: StaffHours,
}

/// Summaries of a cohort run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CohortSummary {
    /// Per arm.
    pub arms: Vec<ArmSpread>,
    /// Supervised session-hours of the allocated runs (or every run with `--all-arms`
    /// and no allocation), first scenario.
    pub staff_hours: StaffHours,
}

/// Summarise member results per arm and scenario.
pub fn summarise(
    study: &Study,
    members: &[Member],
    results: &[MemberResult],
    req: &CohortRequest,
) -> CohortSummary {
    let weeks = study.protocol.weeks as usize;
    let ns = study.scenarios.len();
    let allocated = members.iter().all(|m| m.arm.is_some());
    let mut staff_total = vec![0u64; weeks];
    let arms = study
        .arms
        .iter()
        .enumerate()
        .map(|(ai, arm)| {
            let runs: Vec<(usize, &RunSummary)> = results
                .iter()
                .enumerate()
                .flat_map(|(mi, r)| {
                    r.runs
                        .iter()
                        .filter(move |x| x.arm == ai)
                        .map(move |x| (mi, x))
                })
                .collect();
            let mut staff = vec![0u64; weeks];
            for (mi, r) in runs.iter().filter(|(_, r)| r.scenario == 0) {
                let counts = !allocated || members[*mi].arm == Some(ai);
                for (w, m) in r.session_minutes_by_week.iter().enumerate() {
                    staff[w] += u64::from(*m);
                    if counts {
                        staff_total[w] += u64::from(*m);
                    }
                }
            }
            let participants = runs.iter().filter(|(_, r)| r.scenario == 0).count();
            let scenarios = (0..ns)
                .map(|si| {
                    let rs: Vec<&RunSummary> = runs
                        .iter()
                        .filter(|(_, r)| r.scenario == si)
                        .map(|(_, r)| *r)
                        .collect();
                    let f =
                        |g: fn(&RunSummary) -> f64| rs.iter().map(|r| g(r)).collect::<Vec<f64>>();
                    let u =
                        |g: fn(&RunSummary) -> u32| rs.iter().map(|r| g(r)).collect::<Vec<u32>>();
                    let mass = f(|r| r.protocol_end_mass_change_kg);
                    let n = rs.len().max(1) as f64;
                    ScenarioSpread {
                        name: study.scenarios[si].name.clone(),
                        mass_change_kg: Spread::of(&mass),
                        fat_mass_change_kg: Spread::of(&f(|r| r.protocol_end_fat_mass_change_kg)),
                        checkpoints: req
                            .checkpoints
                            .iter()
                            .enumerate()
                            .map(|(ci, week)| CheckpointSpread {
                                week: *week,
                                mass_change_kg: Spread::of(
                                    &rs.iter().map(|r| r.mass_change_kg[ci]).collect::<Vec<_>>(),
                                ),
                                fat_mass_change_kg: Spread::of(
                                    &rs.iter()
                                        .map(|r| r.fat_mass_change_kg[ci])
                                        .collect::<Vec<_>>(),
                                ),
                            })
                            .collect(),
                        minutes_week1: MinutesSpread::of(&u(|r| r.minutes_week1)),
                        minutes_last_week: MinutesSpread::of(&u(|r| r.minutes_last_week)),
                        minutes_by_week: (0..weeks)
                            .map(|w| {
                                let mut v: Vec<f64> =
                                    rs.iter().map(|r| f64::from(r.minutes_by_week[w])).collect();
                                v.sort_by(f64::total_cmp);
                                WeekMinutes {
                                    week: w as u32 + 1,
                                    median: percentile(&v, 0.5),
                                    p5: percentile(&v, 0.05),
                                    p95: percentile(&v, 0.95),
                                }
                            })
                            .collect(),
                        over_max_share: rs.iter().filter(|r| r.over_max).count() as f64 / n,
                        dose_share_mean: (!arm.is_control()).then(|| {
                            rs.iter()
                                .map(|r| r.dose_share.unwrap_or(0.0))
                                .fold(0.0, |a, b| a + b)
                                / n
                        }),
                        prescribed_net_kcal_mean: f(|r| r.prescribed_net_kcal)
                            .iter()
                            .fold(0.0, |a, b| a + b)
                            / n,
                        mass_changes: mass,
                    }
                })
                .collect();
            ArmSpread {
                name: arm.name.clone(),
                control: arm.is_control(),
                participants,
                completing: participants as f64,
                scenarios,
                staff_hours: StaffHours::of(&staff),
            }
        })
        .collect();
    CohortSummary {
        arms,
        staff_hours: StaffHours::of(&staff_total),
    }
}
