//! One member's runs: each arm, scenario and draw, by the lane loop where the plan
//! allows it and by the general driver otherwise, each summarised to its scalars.

use super::draws::{Draw, draw};
use super::*;
use crate::simulate::fast::{FastRun, Lane, LaneRun, run_lanes};

/// The arms a member is simulated in.
pub(super) fn arms_of(study: &Study, m: &Member, all_arms: bool) -> Vec<usize> {
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
    out: &crate::simulate::RunOutput,
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

/// One scenario of one draw in every arm from its lanes' records `rs` (the
/// no-exercise run, then one per dosed arm, as [`draw_lanes`] lays them out).
#[allow(clippy::too_many_arguments)]
fn fast_row(
    study: &Study,
    arms: &[usize],
    physiology: &crate::model::Physiology,
    baseline: &crate::model::Baseline,
    comp: &crate::model::Compensation,
    dr: &Draw,
    si: usize,
    req: &CohortRequest,
    rs: &[FastRun],
    zeros: &[u32],
    mut counting: Option<&mut Counting>,
) -> Vec<RunSummary> {
    let without = &rs[0];
    let mut results = rs[1..].iter();
    let weeks = study.protocol.weeks as usize;
    let plan_sessions = study.protocol.session_days.len() as u32;
    let mut row = Vec::with_capacity(arms.len());
    for a in arms {
        let control = study.arms[*a].is_control();
        let r = if control {
            without
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
        let (minutes, session): (&[u32], &[u32]) = if control {
            (&zeros[..weeks], &zeros[..weeks])
        } else {
            (&r.minutes, &r.session_minutes)
        };
        // The weeks are counted here and not kept, or kept for the caller.
        let kept = match counting.as_mut() {
            Some(c) => {
                c.add_run((*a, si), minutes, session);
                false
            }
            None => true,
        };
        let risks = RunRisks::of(
            &RiskSubject {
                baseline_mass_kg: baseline.mass_kg,
                height_cm: physiology.height_cm,
                sex: dr.subject.sex,
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
            minutes_by_week: if kept { minutes.to_vec() } else { Vec::new() },
            session_minutes_total: session.iter().sum(),
            session_minutes_by_week: if kept { session.to_vec() } else { Vec::new() },
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
    row
}

/// The lanes of one scenario of one draw: the no-exercise run (the control arm and
/// the counterfactual of `dose_share`), then one lane per dosed arm.
fn draw_lanes<'a>(
    study: &Study,
    arms: &[usize],
    plans: &'a [Plan],
    (physiology, baseline): (&'a crate::model::Physiology, &'a crate::model::Baseline),
    comp: &'a crate::model::Compensation,
    dr: &Draw,
    lanes: &mut Vec<LaneRun<'a>>,
) {
    let run = |plan, exercise: bool| LaneRun {
        lane: Lane {
            plan,
            exercise,
            attendance: if exercise { dr.attendance } else { None },
            last_exercise_week: if exercise {
                dr.last_exercise_week
            } else {
                None
            },
        },
        ph: physiology,
        baseline,
        comp,
    };
    lanes.push(run(&plans[0], false));
    for (a, plan) in arms.iter().zip(plans) {
        if !study.arms[*a].is_control() {
            lanes.push(run(plan, true));
        }
    }
}

/// Buffers of one thread's members, reused from member to member.
#[derive(Debug, Default)]
pub struct Scratch {
    outs: Vec<FastRun>,
    ok: Vec<bool>,
    /// A control arm's minutes (none), every week.
    zeros: Vec<u32>,
}

/// Where a member's weekly minutes are counted as its runs are made (the runs then
/// keep no weeks).
pub(super) struct Counting<'a> {
    /// The counts.
    pub(super) tally: &'a mut MinuteTally,
    /// The member.
    pub(super) member: &'a Member,
    /// No member is allocated: every run counts as allocated.
    pub(super) counts_all: bool,
}

impl Counting<'_> {
    fn add_run(&mut self, slot: (usize, usize), minutes: &[u32], session: &[u32]) {
        let allocated = self.counts_all || self.member.arm == Some(slot.0);
        self.tally.add_run(slot, allocated, minutes, session);
    }

    /// Count a run's weeks and drop them.
    fn take(&mut self, run: &mut RunSummary) {
        let minutes = std::mem::take(&mut run.minutes_by_week);
        let session = std::mem::take(&mut run.session_minutes_by_week);
        self.add_run((run.arm, run.scenario), &minutes, &session);
    }
}

/// Simulate one member (at position `index`) in its arms, every scenario and every draw.
pub fn simulate_member(
    study: &Study,
    m: &Member,
    index: usize,
    req: &CohortRequest,
) -> Result<MemberResult, Error> {
    simulate_member_draws(study, m, index, req, 0..req.draws)
}

/// Simulate one member (at position `index`) in its arms, every scenario, for the
/// draws `draws` (each from its own stream, so any range gives the same runs as
/// the whole).
pub fn simulate_member_draws(
    study: &Study,
    m: &Member,
    index: usize,
    req: &CohortRequest,
    draws: std::ops::Range<u32>,
) -> Result<MemberResult, Error> {
    simulate_member_with(study, m, index, req, draws, &mut Scratch::default(), None)
}

/// Draws whose runs go through the lane loop together (their records held at once,
/// about 3 KB a run): enough to fill the lanes, few enough to stay in the caches.
const DRAWS_AT_ONCE: u32 = 64;

/// One member, its arms and plans, as [`simulate_member_with`] runs them.
struct Who<'a> {
    study: &'a Study,
    m: &'a Member,
    index: usize,
    req: &'a CohortRequest,
    arms: &'a [usize],
    plans: &'a [Plan],
}

impl Who<'_> {
    /// Simulate the draws `draws` (a batch), adding their runs to `runs` in stream
    /// order; returns the first draw's calibrated baseline mass.
    fn draws(
        &self,
        draws: std::ops::Range<u32>,
        scratch: &mut Scratch,
        mut inline: Option<&mut Counting>,
        runs: &mut Vec<RunSummary>,
    ) -> Result<f64, Error> {
        let Who {
            study,
            m,
            index,
            req,
            arms,
            plans,
        } = *self;
        let mut first_mass = m.participant.subject.mass_kg;
        let first_draw = draws.start;
        let drawn: Vec<Drawn> = draws
        .map(|d| {
            let dr = draw(study, m, index, d, req.seed);
            let cal = crate::model::energy::calibrate(&dr.subject, &study.constants)
                .map_err(|e| Error::Usage(format!("{}: participant {} (draw {}) cannot be calibrated: {e:?}; narrow the [uncertainty] errors", study.source_name, m.participant.id, d + 1)));
            (d, dr, cal)
        })
        .collect();
        let fast =
            req.integrator == Integrator::Rk4 && plans.iter().all(crate::simulate::fast::eligible);
        let per_row = 1 + arms
            .iter()
            .filter(|a| !study.arms[**a].is_control())
            .count();
        if fast {
            let mut lanes = Vec::with_capacity(drawn.len() * study.scenarios.len() * per_row);
            for (_, dr, cal) in &drawn {
                if let Ok((baseline, physiology)) = cal {
                    for comp in &dr.compensations {
                        let ends = (physiology, baseline);
                        draw_lanes(study, arms, plans, ends, comp, dr, &mut lanes);
                    }
                }
            }
            run_lanes(&lanes, &mut scratch.outs, &mut scratch.ok);
        }
        let mut lane = 0;
        for (d, dr, cal) in drawn {
            let (baseline, physiology) = &cal?;
            if d == first_draw {
                first_mass = baseline.mass_kg;
            }
            let mut per_scenario: Vec<std::vec::IntoIter<RunSummary>> = Vec::new();
            for (si, comp) in dr.compensations.iter().enumerate() {
                let lanes = lane..lane + per_row;
                let row = if fast && scratch.ok[lanes.clone()].iter().all(|o| *o) {
                    let (rs, zeros) = (&scratch.outs[lanes], &scratch.zeros[..]);
                    let c = inline.as_deref_mut();
                    fast_row(
                        study, arms, physiology, baseline, comp, &dr, si, req, rs, zeros, c,
                    )
                } else {
                    let ends = (physiology, baseline);
                    let sc = crate::plan::Scenario {
                        compensation: *comp,
                        ..study.scenarios[si].clone()
                    };
                    let mut row = full_row(study, arms, plans, ends, &sc, &dr, si, req)?;
                    if let Some(c) = inline.as_deref_mut() {
                        row.iter_mut().for_each(|r| c.take(r));
                    }
                    row
                };
                if fast {
                    lane += per_row;
                }
                per_scenario.push(row.into_iter());
            }
            for _ in 0..arms.len() {
                for row in &mut per_scenario {
                    let mut s = row.next().expect("one run per arm");
                    s.draw = d;
                    s.completed = dr.last_exercise_week.is_none();
                    runs.push(s);
                }
            }
        }
        Ok(first_mass)
    }
}

/// A draw with its calibration (or why it cannot be calibrated).
type Drawn = (
    u32,
    Draw,
    Result<(crate::model::Baseline, crate::model::Physiology), Error>,
);

/// [`simulate_member_draws`] with a thread's buffers. Every draw's and scenario's
/// lanes run side by side in the lane loop (full vectors whatever the number of
/// arms); a draw and scenario any of whose lanes leaves the model's range, and
/// plans the lane loop does not take, run in the general driver. With `counting`,
/// the weeks of every run are counted there and not kept.
pub(super) fn simulate_member_with(
    study: &Study,
    m: &Member,
    index: usize,
    req: &CohortRequest,
    draws: std::ops::Range<u32>,
    scratch: &mut Scratch,
    mut counting: Option<Counting>,
) -> Result<MemberResult, Error> {
    let arms = arms_of(study, m, req.all_arms);
    let random = study.has_uncertainty();
    let per_draw = arms.len() * study.scenarios.len();
    let mut runs = Vec::with_capacity(per_draw * draws.len());
    let mut baseline_mass_kg = m.participant.subject.mass_kg;
    // The plans differ between draws only in the participant's calibration and the
    // scenarios, which the runs take from the draw.
    let plans: Vec<Plan> = arms
        .iter()
        .map(|a| study.plan_for(&m.participant, *a))
        .collect();
    let first_draw = draws.start;
    // Nothing varies without uncertainty: every draw is the first.
    let simulated = if random {
        draws.clone()
    } else {
        first_draw..draws.end.min(first_draw + 1)
    };
    let weeks = study.protocol.weeks as usize;
    if scratch.zeros.len() < weeks {
        scratch.zeros.resize(weeks, 0);
    }
    // Without uncertainty the first draw's runs are copied below, weeks and all, and
    // counted at the end.
    let mut inline = if random { counting.as_mut() } else { None };
    let member = Who {
        study,
        m,
        index,
        req,
        arms: &arms,
        plans: &plans,
    };
    let mut batch = simulated.start;
    while batch < simulated.end {
        let end = simulated.end.min(batch.saturating_add(DRAWS_AT_ONCE));
        let c = inline.as_deref_mut();
        let first = member.draws(batch..end, scratch, c, &mut runs)?;
        if batch == first_draw {
            baseline_mass_kg = first;
        }
        batch = end;
    }
    if !random && !draws.is_empty() {
        for d in first_draw + 1..draws.end {
            let first: Vec<RunSummary> = runs[..per_draw].to_vec();
            runs.extend(first.into_iter().map(|r| RunSummary { draw: d, ..r }));
        }
        if let Some(c) = counting.as_mut() {
            runs.iter_mut().for_each(|r| c.take(r));
        }
    }
    Ok(MemberResult {
        baseline_mass_kg,
        runs,
    })
}

/// One scenario of one draw in every arm by the general driver (with the draw's
/// integrator): the no-exercise run once, as the control arm and the counterfactual.
#[allow(clippy::too_many_arguments)]
fn full_row(
    study: &Study,
    arms: &[usize],
    plans: &[Plan],
    (physiology, baseline): (&crate::model::Physiology, &crate::model::Baseline),
    sc: &crate::plan::Scenario,
    dr: &Draw,
    si: usize,
    req: &CohortRequest,
) -> Result<Vec<RunSummary>, Error> {
    let mode = |plan: &Plan, exercise: bool| RunMode {
        exercise,
        integrator: req.integrator,
        attendance: dr.attendance,
        last_exercise_week: dr.last_exercise_week,
        ..RunMode::projection(plan)
    };
    let without = run(
        &plans[0],
        physiology,
        baseline,
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
        let summary = if control {
            summarise_run(
                plan,
                slot,
                &without,
                baseline,
                &req.checkpoints,
                &sc.compensation,
            )
        } else {
            let out = run(
                plan,
                physiology,
                baseline,
                sc,
                mode(plan, true),
                Some(&deficits),
            )?;
            summarise_run(
                plan,
                slot,
                &out,
                baseline,
                &req.checkpoints,
                &sc.compensation,
            )
        };
        row.push(summary);
    }
    Ok(row)
}
