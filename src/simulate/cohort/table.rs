//! A cohort's runs kept compactly: per arm and scenario only what the summaries need
//! (the mass and fat-mass changes at the recorded weeks as plain `f64` columns, one
//! byte of signs, and the two means folded in run order), and, for the
//! per-participant CSV and shard files, every run's scalars as columns (docs/speed.md,
//! "Bounded memory").
//!
//! Runs arrive in stream order (member, then draw, then arm, then scenario), the
//! order of the unsharded run, whether they come from the simulation or from shard
//! files; every statistic is computed from them in that order, so the bytes do not
//! depend on threads or shards.

use super::*;
use serde::Deserialize;

/// Bits of [`RunTable::flags`] and [`SlotRuns::flags`].
pub(super) mod flag {
    pub const COMPLETED: u8 = 1;
    pub const OVER_MAX: u8 = 1 << 1;
    pub const LOSS: u8 = 1 << 2;
    pub const MINUTES_300: u8 = 1 << 3;
    pub const BELOW_RMR: u8 = 1 << 4;
    pub const BELOW_FLOOR: u8 = 1 << 5;
    pub const BMI: u8 = 1 << 6;
    pub const DOSED: u8 = 1 << 7;
}

fn flags_of(r: &RunSummary) -> u8 {
    let bit = |b: bool, f: u8| if b { f } else { 0 };
    bit(r.completed, flag::COMPLETED)
        | bit(r.over_max, flag::OVER_MAX)
        | bit(r.risks.loss_rate_over_1_percent, flag::LOSS)
        | bit(r.risks.weekly_minutes_over_300, flag::MINUTES_300)
        | bit(r.risks.intake_below_rmr, flag::BELOW_RMR)
        | bit(r.risks.intake_below_floor, flag::BELOW_FLOOR)
        | bit(r.risks.bmi_below_18_5, flag::BMI)
        | bit(r.dose_share.is_some(), flag::DOSED)
}

/// Every run's scalars in stream order, as columns (the per-participant CSV and
/// shard files). Checkpoint values are `checkpoints` per run, run after run.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct RunTable {
    /// Member index of each run.
    pub member: Vec<u32>,
    /// Baseline mass of each run's member, kg.
    pub baseline_mass_kg: Vec<f64>,
    /// Draw (0-based).
    pub draw: Vec<u32>,
    /// Arm index.
    pub arm: Vec<u16>,
    /// Scenario index.
    pub scenario: Vec<u16>,
    /// Completed, over the maximum, the five risk signs and whether a dose share exists.
    pub flags: Vec<u8>,
    /// Mass change at the end of the protocol, kg.
    pub end_mass_kg: Vec<f64>,
    /// Fat-mass change at the end of the protocol, kg.
    pub end_fat_kg: Vec<f64>,
    /// Dose share (0 where there is none, see `flags`).
    pub dose_share: Vec<f64>,
    /// Prescribed net exercise energy, kcal.
    pub prescribed_net_kcal: Vec<f64>,
    /// Longest session in week 1, minutes.
    pub minutes_week1: Vec<u32>,
    /// Longest session in the last week, minutes.
    pub minutes_last_week: Vec<u32>,
    /// Whole-session minutes over the protocol.
    pub session_minutes_total: Vec<u32>,
    /// Mass change at each checkpoint, run after run.
    pub checkpoint_mass_kg: Vec<f64>,
    /// Fat-mass change at each checkpoint, run after run.
    pub checkpoint_fat_kg: Vec<f64>,
}

impl RunTable {
    /// Runs in the table.
    pub fn len(&self) -> usize {
        self.member.len()
    }

    /// True when the table holds no run.
    pub fn is_empty(&self) -> bool {
        self.member.is_empty()
    }

    pub(super) fn push(&mut self, member: usize, baseline_mass_kg: f64, r: &RunSummary) {
        self.member.push(member as u32);
        self.baseline_mass_kg.push(baseline_mass_kg);
        self.draw.push(r.draw);
        self.arm.push(r.arm as u16);
        self.scenario.push(r.scenario as u16);
        self.flags.push(flags_of(r));
        self.end_mass_kg.push(r.protocol_end_mass_change_kg);
        self.end_fat_kg.push(r.protocol_end_fat_mass_change_kg);
        self.dose_share.push(r.dose_share.unwrap_or(0.0));
        self.prescribed_net_kcal.push(r.prescribed_net_kcal);
        self.minutes_week1.push(r.minutes_week1);
        self.minutes_last_week.push(r.minutes_last_week);
        self.session_minutes_total.push(r.session_minutes_total);
        self.checkpoint_mass_kg.extend(&r.mass_change_kg);
        self.checkpoint_fat_kg.extend(&r.fat_mass_change_kg);
    }

    /// Append another table's runs (the next shard's).
    pub fn extend(&mut self, o: RunTable) {
        self.member.extend(o.member);
        self.baseline_mass_kg.extend(o.baseline_mass_kg);
        self.draw.extend(o.draw);
        self.arm.extend(o.arm);
        self.scenario.extend(o.scenario);
        self.flags.extend(o.flags);
        self.end_mass_kg.extend(o.end_mass_kg);
        self.end_fat_kg.extend(o.end_fat_kg);
        self.dose_share.extend(o.dose_share);
        self.prescribed_net_kcal.extend(o.prescribed_net_kcal);
        self.minutes_week1.extend(o.minutes_week1);
        self.minutes_last_week.extend(o.minutes_last_week);
        self.session_minutes_total.extend(o.session_minutes_total);
        self.checkpoint_mass_kg.extend(o.checkpoint_mass_kg);
        self.checkpoint_fat_kg.extend(o.checkpoint_fat_kg);
    }

    /// True when every column has one entry per run (`checkpoints` per run for the
    /// checkpoint columns): a table read from a file is checked with it.
    pub fn is_consistent(&self, checkpoints: usize) -> bool {
        let n = self.len();
        [
            self.baseline_mass_kg.len(),
            self.draw.len(),
            self.arm.len(),
            self.scenario.len(),
            self.flags.len(),
            self.end_mass_kg.len(),
            self.end_fat_kg.len(),
            self.dose_share.len(),
            self.prescribed_net_kcal.len(),
            self.minutes_week1.len(),
            self.minutes_last_week.len(),
            self.session_minutes_total.len(),
        ]
        .iter()
        .all(|l| *l == n)
            && self.checkpoint_mass_kg.len() == n * checkpoints
            && self.checkpoint_fat_kg.len() == n * checkpoints
    }

    /// Run `j` as a summary (without its weeks, which the tally holds).
    pub fn run(&self, j: usize, checkpoints: usize) -> RunSummary {
        let f = self.flags[j];
        let has = |b: u8| f & b != 0;
        let cp = j * checkpoints..(j + 1) * checkpoints;
        RunSummary {
            arm: usize::from(self.arm[j]),
            scenario: usize::from(self.scenario[j]),
            mass_change_kg: self.checkpoint_mass_kg[cp.clone()].to_vec(),
            fat_mass_change_kg: self.checkpoint_fat_kg[cp].to_vec(),
            protocol_end_mass_change_kg: self.end_mass_kg[j],
            protocol_end_fat_mass_change_kg: self.end_fat_kg[j],
            dose_share: has(flag::DOSED).then_some(self.dose_share[j]),
            minutes_week1: self.minutes_week1[j],
            minutes_last_week: self.minutes_last_week[j],
            minutes_by_week: Vec::new(),
            session_minutes_by_week: Vec::new(),
            session_minutes_total: self.session_minutes_total[j],
            over_max: has(flag::OVER_MAX),
            risks: RunRisks {
                loss_rate_over_1_percent: has(flag::LOSS),
                weekly_minutes_over_300: has(flag::MINUTES_300),
                intake_below_rmr: has(flag::BELOW_RMR),
                intake_below_floor: has(flag::BELOW_FLOOR),
                bmi_below_18_5: has(flag::BMI),
            },
            prescribed_net_kcal: self.prescribed_net_kcal[j],
            draw: self.draw[j],
            completed: has(flag::COMPLETED),
        }
    }

    /// The runs grouped by member, in member order (members without runs left out).
    pub fn member_results(&self, checkpoints: usize) -> Vec<(usize, MemberResult)> {
        let mut out: Vec<(usize, MemberResult)> = Vec::new();
        for j in 0..self.len() {
            let m = self.member[j] as usize;
            if out.last().is_none_or(|(i, _)| *i != m) {
                out.push((
                    m,
                    MemberResult {
                        baseline_mass_kg: self.baseline_mass_kg[j],
                        runs: Vec::new(),
                    },
                ));
            }
            let run = self.run(j, checkpoints);
            out.last_mut().expect("pushed").1.runs.push(run);
        }
        out
    }
}

/// One arm and scenario's runs as the summaries need them, in stream order.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SlotRuns {
    /// Mass change at each checkpoint (`[checkpoint][run]`), kg.
    pub mass_kg: Vec<Vec<f64>>,
    /// Fat-mass change at each checkpoint, kg.
    pub fat_kg: Vec<Vec<f64>>,
    /// Mass change at the end of the protocol (empty when it is a checkpoint's column).
    pub end_mass_kg: Vec<f64>,
    /// Fat-mass change at the end of the protocol (empty when a checkpoint's column).
    pub end_fat_kg: Vec<f64>,
    /// The signs of each run (bits as [`RunTable::flags`]).
    pub flags: Vec<u8>,
    /// Runs of draw 0 (participants).
    pub first_draws: usize,
    /// Dose shares (0 for none), summed in run order.
    pub dose_share_sum: f64,
    /// Prescribed net exercise energy, summed in run order, kcal.
    pub prescribed_sum: f64,
}

/// Every arm and scenario's runs, filled run by run in stream order.
#[derive(Debug, Clone, PartialEq)]
pub struct Slots {
    /// `[arm][scenario]`.
    pub slots: Vec<Vec<SlotRuns>>,
    /// Index of the protocol's end among the checkpoints, if it is one.
    pub end_checkpoint: Option<usize>,
}

impl Slots {
    pub(super) fn new(study: &Study, req: &CohortRequest) -> Slots {
        let nc = req.checkpoints.len();
        let slot = SlotRuns {
            mass_kg: vec![Vec::new(); nc],
            fat_kg: vec![Vec::new(); nc],
            ..SlotRuns::default()
        };
        Slots {
            slots: vec![vec![slot; study.scenarios.len()]; study.arms.len()],
            end_checkpoint: req
                .checkpoints
                .iter()
                .position(|w| *w == study.protocol.weeks),
        }
    }

    /// Reserve room for `runs[arm]` runs of each scenario of each arm.
    pub(super) fn reserve(&mut self, runs: &[usize]) {
        let end = self.end_checkpoint;
        for (arm, n) in self.slots.iter_mut().zip(runs) {
            for s in arm {
                s.mass_kg.iter_mut().for_each(|c| c.reserve_exact(*n));
                s.fat_kg.iter_mut().for_each(|c| c.reserve_exact(*n));
                if end.is_none() {
                    s.end_mass_kg.reserve_exact(*n);
                    s.end_fat_kg.reserve_exact(*n);
                }
                s.flags.reserve_exact(*n);
            }
        }
    }

    /// Add the next run in stream order.
    pub(super) fn push(&mut self, r: &RunSummary) {
        let end = self.end_checkpoint;
        let s = &mut self.slots[r.arm][r.scenario];
        for (c, v) in s.mass_kg.iter_mut().zip(&r.mass_change_kg) {
            c.push(*v);
        }
        for (c, v) in s.fat_kg.iter_mut().zip(&r.fat_mass_change_kg) {
            c.push(*v);
        }
        if end.is_none() {
            s.end_mass_kg.push(r.protocol_end_mass_change_kg);
            s.end_fat_kg.push(r.protocol_end_fat_mass_change_kg);
        }
        s.flags.push(flags_of(r));
        s.first_draws += usize::from(r.draw == 0);
        s.dose_share_sum += r.dose_share.unwrap_or(0.0);
        s.prescribed_sum += r.prescribed_net_kcal;
    }
}

impl SlotRuns {
    /// Runs in this arm and scenario.
    pub fn len(&self) -> usize {
        self.flags.len()
    }

    /// True when nobody ran in this arm and scenario.
    pub fn is_empty(&self) -> bool {
        self.flags.is_empty()
    }

    /// Mass change at the end of the protocol, run by run.
    pub fn end_mass<'a>(&'a self, slots: &Slots) -> &'a [f64] {
        slots
            .end_checkpoint
            .map_or(&self.end_mass_kg, |c| &self.mass_kg[c])
    }

    /// Fat-mass change at the end of the protocol, run by run.
    pub fn end_fat<'a>(&'a self, slots: &Slots) -> &'a [f64] {
        slots
            .end_checkpoint
            .map_or(&self.end_fat_kg, |c| &self.fat_kg[c])
    }

    /// Runs with every bit of `bits`.
    pub fn count(&self, bits: u8) -> usize {
        self.flags.iter().filter(|f| *f & bits == bits).count()
    }
}
