//! One member's runs: each arm, scenario and draw, by the lane loop where the plan
//! allows it and by the general driver otherwise, each summarised to its scalars.

use super::draws::{Draw, draw};
use super::*;

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
    use crate::simulate::fast::{Lane, fast_runs};
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
    let arms = arms_of(study, m, req.all_arms);
    let random = study.has_uncertainty();
    let mut runs = Vec::with_capacity(arms.len() * study.scenarios.len() * draws.len());
    let mut baseline_mass_kg = m.participant.subject.mass_kg;
    // The plans differ between draws only in the participant's calibration and the
    // scenarios, which the runs take from the draw.
    let base_plans: Vec<Plan> = arms
        .iter()
        .map(|a| study.plan_for(&m.participant, *a))
        .collect();
    let first_draw = draws.start;
    for d in draws {
        if d > first_draw && !random {
            // Nothing varies: every draw is the first.
            let first: Vec<RunSummary> = runs[..arms.len() * study.scenarios.len()].to_vec();
            runs.extend(first.into_iter().map(|r| RunSummary { draw: d, ..r }));
            continue;
        }
        let dr = draw(study, m, index, d, req.seed);
        let plans = &base_plans;
        let (baseline, physiology) = crate::model::energy::calibrate(&dr.participant.subject, &study.constants)
            .map_err(|e| Error::Usage(format!("{}: participant {} (draw {}) cannot be calibrated: {e:?}; narrow the [uncertainty] errors", study.source_name, m.participant.id, d + 1)))?;
        if d == first_draw {
            baseline_mass_kg = baseline.mass_kg;
        }
        let mut per_scenario: Vec<Vec<RunSummary>> = Vec::new();
        for (si, sc) in dr.scenarios.iter().enumerate() {
            let fast = (req.integrator == Integrator::Rk4
                && plans.iter().all(crate::simulate::fast::eligible))
            .then(|| {
                fast_row(
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
            })
            .flatten();
            let row = match fast {
                Some(row) => row,
                None => full_row(
                    study,
                    &arms,
                    plans,
                    (&physiology, &baseline),
                    sc,
                    &dr,
                    si,
                    req,
                )?,
            };
            per_scenario.push(
                row.into_iter()
                    .map(|mut s| {
                        s.draw = d;
                        s.completed = dr.last_exercise_week.is_none();
                        s
                    })
                    .collect(),
            );
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
