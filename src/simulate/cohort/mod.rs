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
mod table;

pub use draws::draw_rng;
pub use runs::{simulate_member, simulate_member_draws};
pub use summaries::*;
pub use table::{RunTable, SlotRuns, Slots};

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

/// A cohort's runs, compactly (docs/speed.md, "Bounded memory"): per arm and
/// scenario the columns the summaries need, the week-by-week minutes counted as
/// the runs were simulated (no run keeps its weeks), and, when asked for (the
/// per-participant CSV, shard files), every run's scalars.
#[derive(Debug, Clone, PartialEq)]
pub struct CohortRuns {
    /// Per arm and scenario, in stream order.
    pub slots: Slots,
    /// The weekly minutes of every run.
    pub tally: MinuteTally,
    /// Every run's scalars in stream order, when kept.
    pub table: Option<RunTable>,
}

impl CohortRuns {
    /// Every member's runs, in member order (from the kept table; empty without one).
    pub fn members(&self, req: &CohortRequest) -> Vec<MemberResult> {
        self.table.as_ref().map_or_else(Vec::new, |t| {
            t.member_results(req.checkpoints.len())
                .into_iter()
                .map(|(_, r)| r)
                .collect()
        })
    }

    /// An empty collection for `study`, to be filled in stream order.
    pub fn empty(study: &Study, req: &CohortRequest, keep: bool) -> CohortRuns {
        CohortRuns {
            slots: Slots::new(study, req),
            tally: MinuteTally::new(study),
            table: keep.then(RunTable::default),
        }
    }

    /// Add one member's runs (the next in stream order).
    pub fn push_member(&mut self, index: usize, r: &MemberResult) {
        for run in &r.runs {
            self.slots.push(run);
            if let Some(t) = &mut self.table {
                t.push(index, r.baseline_mass_kg, run);
            }
        }
    }

    /// Add the weekly-minute counts of another group of runs (or a shard's).
    pub fn merge_tally(&mut self, t: MinuteTally) {
        self.tally = std::mem::take(&mut self.tally).merge(t);
    }

    /// Add the runs of a table (a shard's), in its order.
    pub fn push_table(&mut self, t: RunTable, checkpoints: usize) {
        for j in 0..t.len() {
            let run = t.run(j, checkpoints);
            self.slots.push(&run);
        }
        if let Some(own) = &mut self.table {
            own.extend(t);
        }
    }
}

/// The (member, draw) streams of a cohort, numbered member by member:
/// stream `member * draws + draw`.
pub fn stream_count(members: usize, draws: u32) -> u64 {
    members as u64 * u64::from(draws)
}

/// The streams of shard `k` of `n` (1-based): the k-th of n contiguous, disjoint
/// parts of nearly equal size that together cover every stream.
pub fn shard_streams(total: u64, k: u32, n: u32) -> std::ops::Range<u64> {
    let at = |i: u32| (u128::from(total) * u128::from(i) / u128::from(n)) as u64;
    at(k - 1)..at(k)
}

/// Simulate every member in parallel; `tick` is called once per member done. The
/// first error in member order is returned. Keeps every run's scalars (the table).
pub fn run_cohort(
    study: &Study,
    members: &[Member],
    req: &CohortRequest,
    tick: &(dyn Fn() + Sync),
) -> Result<CohortRuns, Error> {
    let all = 0..stream_count(members.len(), req.draws);
    run_cohort_streams(study, members, req, all, true, tick)
}

thread_local! {
    /// The lane loop's buffers of each worker thread, reused from member to member
    /// (about 3 KB per run of a member).
    static SCRATCH: std::cell::RefCell<runs::Scratch> = std::cell::RefCell::default();
}

/// Runs kept in flight at once, at most (members are simulated in groups of about
/// this many runs, then added in member order and dropped).
const RUNS_IN_FLIGHT: usize = 40_000;

/// Simulate the streams `streams` (see [`stream_count`]) of the members in parallel,
/// in groups, adding each group's runs in stream order; `keep` keeps every run's
/// scalars (the table). Each member's weekly minutes go into the tally as soon as
/// it is done and are then dropped. The first error in member order is returned.
pub fn run_cohort_streams(
    study: &Study,
    members: &[Member],
    req: &CohortRequest,
    streams: std::ops::Range<u64>,
    keep: bool,
    tick: &(dyn Fn() + Sync),
) -> Result<CohortRuns, Error> {
    let counts_all = !members.iter().all(|m| m.arm.is_some());
    let draws = u64::from(req.draws.max(1));
    let mut out = CohortRuns::empty(study, req, keep);
    // Room for every run of each arm, reserved up front (no doubling).
    let mut per_arm = vec![0usize; study.arms.len()];
    let draws_of = |i: usize| {
        let first = i as u64 * draws;
        let lo = streams.start.max(first) - first;
        let hi = streams.end.min(first + draws).saturating_sub(first);
        lo as u32..(hi.max(lo)) as u32
    };
    let wanted: Vec<usize> = (0..members.len())
        .filter(|i| !draws_of(*i).is_empty())
        .collect();
    for i in &wanted {
        for a in runs::arms_of(study, &members[*i], req.all_arms) {
            per_arm[a] += draws_of(*i).len();
        }
    }
    out.slots.reserve(&per_arm);
    let runs_per_member = (draws as usize * study.arms.len() * study.scenarios.len()).max(1);
    let group = (RUNS_IN_FLIGHT / runs_per_member).max(1);
    type Part = (Vec<(usize, Result<MemberResult, Error>)>, MinuteTally);
    for chunk in wanted.chunks(group) {
        let (mut results, tally): Part = chunk
            .par_iter()
            .fold(
                || (Vec::new(), MinuteTally::new(study)),
                |(mut done, mut tally), &i| {
                    let m = &members[i];
                    let counting = runs::Counting {
                        tally: &mut tally,
                        member: m,
                        counts_all,
                    };
                    // The thread's buffers: one set per thread, however rayon splits.
                    let r = SCRATCH.with_borrow_mut(|scratch| {
                        runs::simulate_member_with(
                            study,
                            m,
                            i,
                            req,
                            draws_of(i),
                            scratch,
                            Some(counting),
                        )
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
        for (i, r) in results {
            out.push_member(i, &r?);
        }
        out.merge_tally(tally);
    }
    Ok(out)
}

/// What a cohort request would take, estimated before it runs (docs/speed.md,
/// "Bounded memory").
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Estimate {
    /// Runs (participant x draw x arm x scenario).
    pub runs: u64,
    /// Peak memory, bytes.
    pub bytes: u64,
    /// Processor time, seconds (all threads together).
    pub cpu_seconds: f64,
}

/// Memory of the program and its inputs besides the runs, bytes (measured: about
/// 7 MB at 1,000 participants and one draw, rounded up).
const BASE_BYTES: u64 = 16_000_000;
/// Memory per member (the participant, its plans while it runs), bytes (an upper
/// estimate of the structures' sizes).
const MEMBER_BYTES: u64 = 4_096;
/// Memory per run of the per-participant CSV (its row and its text), bytes (measured
/// row lengths of the benchmark study's CSV, about 130 bytes of text, and the row's
/// strings).
const CSV_ROW_BYTES: u64 = 400;

/// Estimate the runs, peak memory and processor time of the streams `streams` of a
/// cohort; `csv` for the per-participant CSV, `shard` for a shard file.
pub fn estimate(
    study: &Study,
    members: &[Member],
    req: &CohortRequest,
    streams: std::ops::Range<u64>,
    csv: bool,
    shard: bool,
) -> Estimate {
    let d = u64::from(req.draws.max(1));
    let per_member = study.scenarios.len() as u64;
    let runs: u64 = members
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let first = i as u64 * d;
            let lo = streams.start.max(first);
            let hi = streams.end.min(first + d);
            hi.saturating_sub(lo) * runs::arms_of(study, m, req.all_arms).len() as u64 * per_member
        })
        .sum();
    let c = req.checkpoints.len() as u64;
    let end_kept = if req.checkpoints.contains(&study.protocol.weeks) {
        0
    } else {
        16
    };
    // The summaries' columns, their sorted copies and the charts' copy.
    let summaries = 16 * c + end_kept + 1 + 16;
    let table = 65 + 16 * c;
    let per_run = summaries
        + if csv || shard { table } else { 0 }
        + if csv { CSV_ROW_BYTES } else { 0 }
        // A shard file's text: base64 (4 characters per 3 bytes) of the table.
        + if shard { table * 4 / 3 + 1 } else { 0 };
    let us_per_week = match req.integrator {
        Integrator::Rk4 => RK4_US_PER_RUN_WEEK,
        Integrator::Dopri5 => DOPRI5_US_PER_RUN_WEEK,
    };
    Estimate {
        runs,
        bytes: BASE_BYTES + members.len() as u64 * MEMBER_BYTES + runs * per_run,
        cpu_seconds: runs as f64 * f64::from(study.protocol.total_weeks()) * us_per_week * 1e-6,
    }
}

/// Processor time per run and week with RK4, microseconds: about 0.05 measured in
/// the lane loop on this project's machine (docs/speed.md), kept at 0.25 so the
/// up-front refusal also holds for slower processors without AVX2 and for the
/// general driver's plans (a shard split that is too fine costs little).
const RK4_US_PER_RUN_WEEK: f64 = 0.25;
/// Processor time per run and week with Dormand-Prince (the general driver),
/// microseconds (measured on this project's machine, docs/speed.md, rounded up).
const DOPRI5_US_PER_RUN_WEEK: f64 = 10.0;
