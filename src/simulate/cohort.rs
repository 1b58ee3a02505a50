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
use super::{RunMode, run};
use crate::error::Error;
use crate::plan::SCENARIO_KEYS;
use crate::plan::{Participant, Plan};
use crate::safety::risk::RiskSubject;
pub use crate::safety::risk::RunRisks;
use crate::study::RmrError;
use crate::study::Study;
use rand::rngs::ChaCha8Rng;
use rand::{RngExt, SeedableRng};
use rand_distr::{Distribution, Normal};
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
    /// Draws per participant.
    pub draws: u32,
    /// The seed every draw's stream derives from.
    pub seed: u64,
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
    /// The sum of `session_minutes_by_week` (kept when the cohort drops the weeks).
    pub session_minutes_total: u32,
    /// Sessions (or bouts) over the maximum before the policy acted, in any week.
    pub over_max: bool,
    /// The risky-plan signs of this run.
    pub risks: RunRisks,
    /// Prescribed net exercise energy over the protocol, kcal.
    pub prescribed_net_kcal: f64,
    /// The draw (0-based).
    pub draw: u32,
    /// Still exercising at the end of the protocol (did not drop out).
    pub completed: bool,
}

/// The share of an arm's runs (participants x draws) with each sign of [`RunRisks`].
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct RiskShares {
    /// Loss above 1% of body mass in some week.
    pub loss_rate_over_1_percent: f64,
    /// More than 300 minutes at target in some week.
    pub weekly_minutes_over_300: f64,
    /// Intake below RMR in some week (negative diet change only).
    pub intake_below_rmr: f64,
    /// Intake below the unsupervised floor in some week (negative diet change only).
    pub intake_below_floor: f64,
    /// BMI below 18.5 kg/m^2 in some week.
    pub bmi_below_18_5: f64,
}

impl RiskShares {
    fn of(rs: &[&RunSummary]) -> RiskShares {
        let n = rs.len().max(1) as f64;
        let share = |f: fn(&RunRisks) -> bool| rs.iter().filter(|r| f(&r.risks)).count() as f64 / n;
        RiskShares {
            loss_rate_over_1_percent: share(|r| r.loss_rate_over_1_percent),
            weekly_minutes_over_300: share(|r| r.weekly_minutes_over_300),
            intake_below_rmr: share(|r| r.intake_below_rmr),
            intake_below_floor: share(|r| r.intake_below_floor),
            bmi_below_18_5: share(|r| r.bmi_below_18_5),
        }
    }
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
    comp: &crate::model::Compensation,
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
        session_minutes_total: w[..weeks]
            .iter()
            .flat_map(|x| x.sessions.iter().map(|s| s.session_minutes))
            .sum(),
        over_max: w[..weeks].iter().any(|x| x.over_max.is_some()),
        risks: RunRisks::of(
            &RiskSubject {
                baseline_mass_kg: baseline_mass,
                height_cm: plan.participant.subject.height_cm,
                sex: plan.participant.subject.sex,
                diet_change_kcal_per_day: comp.diet_change_kcal_per_day,
            },
            w.iter().map(|x| x.end.mass_kg),
            w.iter()
                .map(|x| (x.end.intake_kcal_per_day, x.end.rmr_kcal_per_day)),
            w[..weeks]
                .iter()
                .map(|x| x.sessions.iter().map(|s| s.minutes).sum()),
        ),
        prescribed_net_kcal: end.prescribed_net_kcal,
        draw: 0,
        completed: true,
    }
}

/// The random stream of draw `draw` of member `index` for `seed`, apart from the
/// streams that draw synthetic participants.
pub fn draw_rng(seed: u64, index: usize, draw: u32) -> ChaCha8Rng {
    let mut r = ChaCha8Rng::seed_from_u64(super::splitmix64(seed ^ DRAW_DOMAIN));
    r.set_stream(((index as u64) << 32) | u64::from(draw));
    r
}

/// Mixed into the seed of draw streams, so they never coincide with the streams of
/// synthetic participants (an arbitrary odd constant).
const DRAW_DOMAIN: u64 = 0x5DEE_CE66_D1A4_F87D;

/// One draw of a member: the participant with the RMR equation's error and the
/// estimated body fat's error drawn, each scenario's compensation drawn, the
/// attendance key and the last week with exercise. With no uncertainty it is the
/// member itself, every draw alike.
struct Draw {
    participant: Participant,
    scenarios: Vec<crate::plan::Scenario>,
    attendance: Option<super::Attendance>,
    last_exercise_week: Option<u32>,
}

fn draw(study: &Study, m: &Member, index: usize, d: u32, seed: u64) -> Draw {
    let mut participant = m.participant.clone();
    let mut scenarios = study.scenarios.clone();
    let mut rng = draw_rng(seed, index, d);
    // The order of draws is fixed: scenarios, RMR, body fat, attendance, drop-out.
    for (sc, dists) in scenarios.iter_mut().zip(&study.scenario_dists) {
        for ((key, ..), dist) in SCENARIO_KEYS.iter().zip(dists) {
            if let Some(dist) = dist {
                sc.compensation.set(key, dist.sample(&mut rng));
            }
        }
    }
    let Some(u) = study.uncertainty else {
        return Draw {
            participant,
            scenarios,
            attendance: None,
            last_exercise_week: None,
        };
    };
    let s = &mut participant.subject;
    let b = crate::model::composition::bmi(s.mass_kg, s.height_cm);
    if s.body_fat_percent.is_none() && u.body_fat_error_percent > 0.0 {
        let est = crate::model::composition::deurenberg_percent_fat(b, s.age_years, s.sex);
        let n = Normal::new(0.0, u.body_fat_error_percent).expect("validated SD");
        // Truncated to the plan's range of body fat (rejection).
        let bf = loop {
            let x = est + n.sample(&mut rng);
            if (3.0..=70.0).contains(&x) {
                break x;
            }
        };
        s.body_fat_percent = Some(bf);
    }
    if s.rmr_kcal_per_day.is_none() {
        let fat = s.mass_kg
            * s.body_fat_percent.unwrap_or_else(|| {
                crate::model::composition::deurenberg_percent_fat(b, s.age_years, s.sex)
            })
            / 100.0;
        let eq = study.constants.rmr_equation.kcal_per_day(
            s.sex,
            s.mass_kg,
            s.mass_kg - fat,
            s.height_cm,
            s.age_years,
        );
        let sd = match u.rmr_error {
            RmrError::Published => study.constants.rmr_equation.relative_error(s.sex, eq).0,
            RmrError::Sd(x) => x,
        };
        if sd > 0.0 {
            let n = Normal::new(1.0, sd).expect("validated SD");
            // A multiplicative normal factor held within +-3 SD (and above 0.5).
            let f = loop {
                let x = n.sample(&mut rng);
                if (x - 1.0).abs() <= 3.0 * sd && x > 0.5 {
                    break x;
                }
            };
            s.rmr_kcal_per_day = Some(eq * f);
        }
    }
    let key = rng.random::<u64>();
    let attendance = (u.attendance < 1.0).then_some(super::Attendance {
        probability: u.attendance,
        key,
    });
    let weeks = study.protocol.weeks;
    let last_exercise_week = (u.dropout_per_week > 0.0)
        .then(|| {
            // The first week in which the weekly hazard strikes; exercise ends before it.
            (1..=weeks).find(|_| rng.random::<f64>() < u.dropout_per_week)
        })
        .flatten()
        .map(|w| w - 1);
    Draw {
        participant,
        scenarios,
        attendance,
        last_exercise_week,
    }
}

/// One scenario of one draw in every arm by the fast path; None when a run leaves
/// the model's range (the full run then reports it).
#[allow(clippy::too_many_arguments)]
fn fast_row(
    study: &Study,
    arms: &[usize],
    plans: &[Plan],
    physiology: &crate::model::Physiology,
    baseline: &crate::model::Baseline,
    sc: &crate::plan::Scenario,
    dr: &Draw,
    si: usize,
    req: &CohortRequest,
) -> Option<Vec<RunSummary>> {
    use super::fast::{Lane, fast_runs};
    let comp = &sc.compensation;
    // Lane 0 is the no-exercise run; then one lane per dosed arm, side by side.
    let mut lanes = vec![Lane {
        plan: &plans[0],
        exercise: false,
        attendance: None,
        last_exercise_week: None,
    }];
    for (a, plan) in arms.iter().zip(plans) {
        if !study.arms[*a].is_control() {
            lanes.push(Lane {
                plan,
                exercise: true,
                attendance: dr.attendance,
                last_exercise_week: dr.last_exercise_week,
            });
        }
    }
    let mut results = fast_runs(&lanes, physiology, baseline, comp)?.into_iter();
    let without = results.next().expect("lane 0 is the no-exercise run");
    let weeks = study.protocol.weeks as usize;
    let plan_sessions = study.protocol.session_days.len() as u32;
    let mut row = Vec::with_capacity(arms.len());
    for a in arms {
        let control = study.arms[*a].is_control();
        let r = if control {
            without.clone()
        } else {
            results.next().expect("one lane per dosed arm")
        };
        let at = |w: u32| w as usize - 1;
        let end = weeks - 1;
        let dose_share = (!control).then(|| {
            let p = r.prescribed_net_kcal[end];
            if p > 0.0 {
                (r.deficit_kcal[end] - without.deficit_kcal[end]) / p
            } else {
                0.0
            }
        });
        let minutes = if control {
            vec![0; weeks]
        } else {
            r.minutes.clone()
        };
        let session = if control {
            vec![0; weeks]
        } else {
            r.session_minutes.clone()
        };
        let risks = RunRisks::of(
            &RiskSubject {
                baseline_mass_kg: baseline.mass_kg,
                height_cm: physiology.height_cm,
                sex: dr.participant.subject.sex,
                diet_change_kcal_per_day: comp.diet_change_kcal_per_day,
            },
            r.mass_kg.iter().copied(),
            r.intake_kcal_per_day
                .iter()
                .copied()
                .zip(r.rmr_kcal_per_day.iter().copied()),
            minutes.iter().map(|m| m * plan_sessions),
        );
        row.push(RunSummary {
            arm: *a,
            scenario: si,
            mass_change_kg: req
                .checkpoints
                .iter()
                .map(|c| r.mass_kg[at(*c)] - baseline.mass_kg)
                .collect(),
            fat_mass_change_kg: req
                .checkpoints
                .iter()
                .map(|c| r.fat_kg[at(*c)] - baseline.fat_mass_kg)
                .collect(),
            protocol_end_mass_change_kg: r.mass_kg[end] - baseline.mass_kg,
            protocol_end_fat_mass_change_kg: r.fat_kg[end] - baseline.fat_mass_kg,
            dose_share,
            minutes_week1: minutes[0],
            minutes_last_week: minutes[end],
            minutes_by_week: minutes,
            session_minutes_total: session.iter().sum(),
            session_minutes_by_week: session,
            over_max: !control && r.over_max,
            risks,
            prescribed_net_kcal: if control {
                0.0
            } else {
                r.prescribed_net_kcal[end]
            },
            draw: 0,
            completed: true,
        });
    }
    Some(row)
}

/// Simulate one member (at position `index`) in its arms, every scenario and every draw.
pub fn simulate_member(
    study: &Study,
    m: &Member,
    index: usize,
    req: &CohortRequest,
) -> Result<MemberResult, Error> {
    let arms = arms_of(study, m, req.all_arms);
    let random = study.has_uncertainty();
    let mut runs = Vec::with_capacity(arms.len() * study.scenarios.len() * req.draws as usize);
    let mut baseline_mass_kg = m.participant.subject.mass_kg;
    // The plans differ between draws only in the participant's calibration and the
    // scenarios, which the runs take from the draw.
    let base_plans: Vec<Plan> = arms
        .iter()
        .map(|a| study.plan_for(&m.participant, *a))
        .collect();
    for d in 0..req.draws {
        if d > 0 && !random {
            // Nothing varies: every draw is the first.
            let first: Vec<RunSummary> = runs[..arms.len() * study.scenarios.len()].to_vec();
            runs.extend(first.into_iter().map(|r| RunSummary { draw: d, ..r }));
            continue;
        }
        let dr = draw(study, m, index, d, req.seed);
        let plans = &base_plans;
        let (baseline, physiology) = crate::model::energy::calibrate(&dr.participant.subject, &study.constants)
            .map_err(|e| Error::Usage(format!("{}: participant {} (draw {}) cannot be calibrated: {e:?}; narrow the [uncertainty] errors", study.source_name, m.participant.id, d + 1)))?;
        if d == 0 {
            baseline_mass_kg = baseline.mass_kg;
        }
        let mut per_scenario: Vec<Vec<RunSummary>> = Vec::new();
        for (si, sc) in dr.scenarios.iter().enumerate() {
            if req.integrator == Integrator::Rk4
                && plans.iter().all(super::fast::eligible)
                && let Some(row) = fast_row(
                    study,
                    &arms,
                    plans,
                    &physiology,
                    &baseline,
                    sc,
                    &dr,
                    si,
                    req,
                )
            {
                per_scenario.push(
                    row.into_iter()
                        .map(|mut s| {
                            s.draw = d;
                            s.completed = dr.last_exercise_week.is_none();
                            s
                        })
                        .collect(),
                );
                continue;
            }
            let mode = |plan: &Plan, exercise: bool| RunMode {
                exercise,
                integrator: req.integrator,
                attendance: dr.attendance,
                last_exercise_week: dr.last_exercise_week,
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
            for (a, plan) in arms.iter().zip(plans) {
                let control = study.arms[*a].is_control();
                let slot = Slot {
                    arm: *a,
                    scenario: si,
                    control,
                };
                let mut summary = if control {
                    summarise_run(
                        plan,
                        slot,
                        &without,
                        &baseline,
                        &req.checkpoints,
                        &sc.compensation,
                    )
                } else {
                    let out = run(
                        plan,
                        &physiology,
                        &baseline,
                        sc,
                        mode(plan, true),
                        Some(&deficits),
                    )?;
                    summarise_run(
                        plan,
                        slot,
                        &out,
                        &baseline,
                        &req.checkpoints,
                        &sc.compensation,
                    )
                };
                summary.draw = d;
                summary.completed = dr.last_exercise_week.is_none();
                row.push(summary);
            }
            per_scenario.push(row);
        }
        for ai in 0..arms.len() {
            for row in &per_scenario {
                runs.push(row[ai].clone());
            }
        }
    }
    Ok(MemberResult {
        baseline_mass_kg,
        runs,
    })
}

/// A cohort's runs: every member's scalars, in member order, and the week-by-week
/// minutes counted as they were simulated (no run keeps its weeks).
#[derive(Debug, Clone, PartialEq)]
pub struct CohortRuns {
    /// Every member's runs, in member order, with `minutes_by_week` and
    /// `session_minutes_by_week` emptied once counted in `tally`.
    pub members: Vec<MemberResult>,
    /// The weekly minutes of every run.
    pub tally: MinuteTally,
}

/// Week-by-week minutes of a cohort, counted run by run as the runs finish: per arm
/// and scenario a count of each week's session minutes, and per arm the whole-session
/// minutes of the first scenario (staff hours). All counts are whole numbers, so
/// they add up the same in any order and on any number of threads.
#[derive(Debug, Clone, PartialEq)]
pub struct MinuteTally {
    /// `[arm][scenario][week]`: how many runs had each minutes per session.
    minutes: Vec<Vec<Vec<MinuteCounts>>>,
    /// `[arm][week]`: whole-session minutes of every run of the first scenario.
    staff: Vec<Vec<u64>>,
    /// `[week]`: the same over the allocated runs only (every run when none is allocated).
    staff_allocated: Vec<u64>,
}

impl MinuteTally {
    fn new(study: &Study) -> MinuteTally {
        let weeks = study.protocol.weeks as usize;
        let arms = study.arms.len();
        MinuteTally {
            minutes: vec![vec![vec![MinuteCounts::default(); weeks]; study.scenarios.len()]; arms],
            staff: vec![vec![0; weeks]; arms],
            staff_allocated: vec![0; weeks],
        }
    }

    /// Count the weeks of member `m`'s runs; `counts_all` when no member is allocated.
    fn add(&mut self, m: &Member, r: &MemberResult, counts_all: bool) {
        for run in &r.runs {
            for (c, v) in self.minutes[run.arm][run.scenario]
                .iter_mut()
                .zip(&run.minutes_by_week)
            {
                c.add(*v);
            }
            if run.scenario == 0 {
                let allocated = counts_all || m.arm == Some(run.arm);
                for (w, v) in run.session_minutes_by_week.iter().enumerate() {
                    self.staff[run.arm][w] += u64::from(*v);
                    if allocated {
                        self.staff_allocated[w] += u64::from(*v);
                    }
                }
            }
        }
    }

    fn merge(mut self, other: MinuteTally) -> MinuteTally {
        for (a, b) in self.minutes.iter_mut().zip(other.minutes) {
            for (x, y) in a.iter_mut().zip(b) {
                for (c, d) in x.iter_mut().zip(y) {
                    c.merge(&d);
                }
            }
        }
        for (a, b) in self.staff.iter_mut().zip(other.staff) {
            for (x, y) in a.iter_mut().zip(b) {
                *x += y;
            }
        }
        for (x, y) in self.staff_allocated.iter_mut().zip(other.staff_allocated) {
            *x += y;
        }
        self
    }
}

/// Simulate every member in parallel; `tick` is called once per member done. Each
/// member's weekly minutes go into the tally as soon as it is done and are then
/// dropped, so memory grows with the runs' scalars only. The first error in member
/// order is returned.
pub fn run_cohort(
    study: &Study,
    members: &[Member],
    req: &CohortRequest,
    tick: &(dyn Fn() + Sync),
) -> Result<CohortRuns, Error> {
    let counts_all = !members.iter().all(|m| m.arm.is_some());
    type Part = (Vec<(usize, Result<MemberResult, Error>)>, MinuteTally);
    let (mut results, tally): Part = members
        .par_iter()
        .enumerate()
        .fold(
            || (Vec::new(), MinuteTally::new(study)),
            |(mut done, mut tally), (i, m)| {
                let r = simulate_member(study, m, i, req).map(|mut r| {
                    tally.add(m, &r, counts_all);
                    for run in &mut r.runs {
                        run.minutes_by_week = Vec::new();
                        run.session_minutes_by_week = Vec::new();
                    }
                    r
                });
                tick();
                done.push((i, r));
                (done, tally)
            },
        )
        .reduce(
            || (Vec::new(), MinuteTally::new(study)),
            |(mut a, ta), (b, tb)| {
                a.extend(b);
                (a, ta.merge(tb))
            },
        );
    results.sort_by_key(|(i, _)| *i);
    Ok(CohortRuns {
        members: results
            .into_iter()
            .map(|(_, r)| r)
            .collect::<Result<_, _>>()?,
        tally,
    })
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

/// Whole minutes counted by value: the percentiles of [`percentile`] without sorting.
#[derive(Debug, Clone, Default, PartialEq)]
struct MinuteCounts {
    counts: Vec<u64>,
    n: u64,
}

impl MinuteCounts {
    fn add(&mut self, v: u32) {
        let i = v as usize;
        if i >= self.counts.len() {
            self.counts.resize(i + 1, 0);
        }
        self.counts[i] += 1;
        self.n += 1;
    }

    fn merge(&mut self, other: &MinuteCounts) {
        if other.counts.len() > self.counts.len() {
            self.counts.resize(other.counts.len(), 0);
        }
        for (a, b) in self.counts.iter_mut().zip(&other.counts) {
            *a += b;
        }
        self.n += other.n;
    }

    /// The largest value counted (0 when none).
    fn max(&self) -> u32 {
        self.counts.iter().rposition(|c| *c > 0).unwrap_or(0) as u32
    }

    /// The `k`-th smallest value (0-based).
    fn nth(&self, k: u64) -> f64 {
        let mut seen = 0;
        for (v, c) in self.counts.iter().enumerate() {
            seen += c;
            if seen > k {
                return v as f64;
            }
        }
        0.0
    }

    /// As [`percentile`] on the sorted values.
    fn percentile(&self, q: f64) -> f64 {
        if self.n == 0 {
            return 0.0;
        }
        let h = (self.n - 1) as f64 * q;
        let (lo, hi) = (h.floor() as u64, h.ceil() as u64);
        let (a, b) = (self.nth(lo), self.nth(hi));
        a + (h - lo as f64) * (b - a)
    }
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
    fn of(counts: Option<&MinuteCounts>) -> MinutesSpread {
        let Some(c) = counts else {
            return MinutesSpread {
                median: 0.0,
                p95: 0.0,
                max: 0,
            };
        };
        MinutesSpread {
            median: c.percentile(0.5),
            p95: c.percentile(0.95),
            max: c.max(),
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
    /// Hours from the minutes of every run, averaged over `draws` draws.
    fn of(minutes_by_week: &[u64], draws: f64) -> StaffHours {
        let by_week: Vec<f64> = minutes_by_week
            .iter()
            .map(|m| *m as f64 / 60.0 / draws)
            .collect();
        let (peak_week, peak) =
            by_week.iter().enumerate().fold(
                (0, 0.0),
                |(bi, b), (i, h)| if *h > b { (i, *h) } else { (bi, b) },
            );
        StaffHours {
            peak_per_week: peak,
            peak_week: peak_week as u32 + 1,
            total: minutes_by_week.iter().sum::<u64>() as f64 / 60.0 / draws,
            by_week,
        }
    }
}

/// One arm and scenario over its participants.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScenarioSpread {
    /// Scenario name.
    pub name: String,
    /// Mass change at the end of the protocol, kg, over everyone (intention to treat).
    pub mass_change_kg: Spread,
    /// The same over completers only (None when nobody completes).
    pub mass_change_completers_kg: Option<Spread>,
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
    /// Shares of participants (over draws) with each risky-plan sign.
    pub risk_shares: RiskShares,
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
    /// Participants expected to complete (not dropping out), over draws.
    pub completing: f64,
    /// Every scenario; empty when nobody is in the arm (there is nothing to summarise).
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

/// Summarise member results per arm and scenario. Arms are summarised in parallel;
/// each summary is computed in member order, so the result does not depend on threads.
pub fn summarise(study: &Study, runs: &CohortRuns, req: &CohortRequest) -> CohortSummary {
    let results = &runs.members;
    let tally = &runs.tally;
    let ns = study.scenarios.len();
    let arms = study
        .arms
        .par_iter()
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
            let first = runs.iter().filter(|(_, r)| r.scenario == 0);
            let participants = first.clone().filter(|(_, r)| r.draw == 0).count();
            let completed = first.filter(|(_, r)| r.completed).count();
            let draws = f64::from(req.draws.max(1));
            // An arm nobody is in has nothing to summarise: no scenario rows (not zeros).
            let ns = if participants == 0 { 0 } else { ns };
            let scenarios = (0..ns)
                .map(|si| {
                    let counts = &tally.minutes[ai][si];
                    let rs: Vec<&RunSummary> = runs
                        .iter()
                        .filter(|(_, r)| r.scenario == si)
                        .map(|(_, r)| *r)
                        .collect();
                    let f =
                        |g: fn(&RunSummary) -> f64| rs.iter().map(|r| g(r)).collect::<Vec<f64>>();
                    let mass = f(|r| r.protocol_end_mass_change_kg);
                    let completers: Vec<f64> = rs
                        .iter()
                        .filter(|r| r.completed)
                        .map(|r| r.protocol_end_mass_change_kg)
                        .collect();
                    let n = rs.len().max(1) as f64;
                    ScenarioSpread {
                        name: study.scenarios[si].name.clone(),
                        mass_change_kg: Spread::of(&mass),
                        mass_change_completers_kg: (!completers.is_empty())
                            .then(|| Spread::of(&completers)),
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
                        minutes_week1: MinutesSpread::of(counts.first()),
                        minutes_last_week: MinutesSpread::of(counts.last()),
                        minutes_by_week: counts
                            .iter()
                            .enumerate()
                            .map(|(w, h)| WeekMinutes {
                                week: w as u32 + 1,
                                median: h.percentile(0.5),
                                p5: h.percentile(0.05),
                                p95: h.percentile(0.95),
                            })
                            .collect(),
                        over_max_share: rs.iter().filter(|r| r.over_max).count() as f64 / n,
                        risk_shares: RiskShares::of(&rs),
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
                completing: completed as f64 / draws,
                scenarios,
                staff_hours: StaffHours::of(&tally.staff[ai], draws),
            }
        })
        .collect();
    CohortSummary {
        arms,
        staff_hours: StaffHours::of(&tally.staff_allocated, f64::from(req.draws.max(1))),
    }
}
