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

mod draws;
mod runs;
mod summaries;

pub use draws::draw_rng;
pub use runs::simulate_member;
pub use summaries::*;

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
    /// The integrator (docs/model.md section 6).
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

/// One participant's runs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MemberResult {
    /// Baseline mass, kg.
    pub baseline_mass_kg: f64,
    /// Runs, arm-major then scenario.
    pub runs: Vec<RunSummary>,
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
