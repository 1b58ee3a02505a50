//! A cohort's summaries: the weekly minutes counted as runs finish, and the spreads
//! per arm and scenario over participants.

use super::*;
use crate::stats::{percentile, percentile_of};

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
    fn of(s: &SlotRuns) -> RiskShares {
        use super::table::flag;
        let n = s.len().max(1) as f64;
        let share = |bit: u8| s.count(bit) as f64 / n;
        RiskShares {
            loss_rate_over_1_percent: share(flag::LOSS),
            weekly_minutes_over_300: share(flag::MINUTES_300),
            intake_below_rmr: share(flag::BELOW_RMR),
            intake_below_floor: share(flag::BELOW_FLOOR),
            bmi_below_18_5: share(flag::BMI),
        }
    }
}

/// Week-by-week minutes of a cohort, counted run by run as the runs finish: per arm
/// and scenario a count of each week's session minutes, and per arm the whole-session
/// minutes of the first scenario (staff hours). All counts are whole numbers, so
/// they add up the same in any order and on any number of threads.
#[derive(Debug, Clone, Default, PartialEq, Serialize, serde::Deserialize)]
pub struct MinuteTally {
    /// `[arm][scenario][week]`: how many runs had each minutes per session.
    pub(super) minutes: Vec<Vec<Vec<MinuteCounts>>>,
    /// `[arm][week]`: whole-session minutes of every run of the first scenario.
    pub(super) staff: Vec<Vec<u64>>,
    /// `[week]`: the same over the allocated runs only (every run when none is allocated).
    pub(super) staff_allocated: Vec<u64>,
    /// The allocated runs' weeks for the site's need (`study::staffing`).
    pub(super) site: crate::study::staffing::SiteTally,
}

impl MinuteTally {
    pub(super) fn new(study: &Study) -> MinuteTally {
        let weeks = study.protocol.weeks as usize;
        let arms = study.arms.len();
        MinuteTally {
            minutes: vec![vec![vec![MinuteCounts::default(); weeks]; study.scenarios.len()]; arms],
            staff: vec![vec![0; weeks]; arms],
            staff_allocated: vec![0; weeks],
            site: crate::study::staffing::SiteTally::new(&study.protocol),
        }
    }

    /// Count the weeks of one run in arm and scenario `slot`: its minutes per session
    /// and whole-session minutes of every protocol week; `allocated` when the run is
    /// its member's allocated arm (or no member is allocated).
    pub(super) fn add_run(
        &mut self,
        (arm, scenario): (usize, usize),
        allocated: bool,
        minutes: &[u32],
        session_minutes: &[u32],
    ) {
        for (c, v) in self.minutes[arm][scenario].iter_mut().zip(minutes) {
            c.add(*v);
        }
        if scenario == 0 {
            if allocated {
                self.site.add(session_minutes);
            }
            for (w, v) in session_minutes.iter().enumerate() {
                self.staff[arm][w] += u64::from(*v);
                if allocated {
                    self.staff_allocated[w] += u64::from(*v);
                }
            }
        }
    }

    /// True when the tally has the study's arms, scenarios and weeks (one read from
    /// a shard file is checked with it).
    pub fn fits(&self, study: &Study) -> bool {
        let weeks = study.protocol.weeks as usize;
        self.minutes.len() == study.arms.len()
            && self
                .minutes
                .iter()
                .all(|a| a.len() == study.scenarios.len() && a.iter().all(|s| s.len() == weeks))
            && self
                .minutes
                .iter()
                .flatten()
                .flatten()
                .all(|c| c.n == c.counts.iter().sum::<u64>())
            && self.staff.len() == study.arms.len()
            && self.staff.iter().all(|s| s.len() == weeks)
            && self.staff_allocated.len() == weeks
            && self.site.fits(&study.protocol)
    }

    /// Add another tally's counts (another group's or shard's runs).
    pub fn merge(mut self, other: MinuteTally) -> MinuteTally {
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
        self.site = self.site.merge(other.site);
        self
    }

    /// The allocated runs' weeks for the site's need.
    pub fn site(&self) -> &crate::study::staffing::SiteTally {
        &self.site
    }
}

// ---------------------------------------------------------------------------
// Summaries
// ---------------------------------------------------------------------------

/// Whole minutes counted by value: the percentiles of [`percentile`] without sorting.
#[derive(Debug, Clone, Default, PartialEq, Serialize, serde::Deserialize)]
pub(super) struct MinuteCounts {
    counts: Vec<u64>,
    n: u64,
}

impl MinuteCounts {
    pub(super) fn add(&mut self, v: u32) {
        let i = v as usize;
        if i >= self.counts.len() {
            self.counts.resize(i + 1, 0);
        }
        self.counts[i] += 1;
        self.n += 1;
    }

    pub(super) fn merge(&mut self, other: &MinuteCounts) {
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
        percentile_of(self.n as usize, q, |k| self.nth(k as u64))
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

/// Supervised session-hours per week of the sessions participants are expected to
/// attend (one participant per supervised session).
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
    /// Every pair of arms compared, with the participants per arm to recruit.
    pub comparisons: Vec<crate::simulate::arm_comparison::Comparison>,
}

/// Summarise a cohort's runs per arm and scenario. Arms are summarised in parallel;
/// each summary is computed in stream order, so the result does not depend on threads.
pub fn summarise(study: &Study, runs: &CohortRuns, req: &CohortRequest) -> CohortSummary {
    let tally = &runs.tally;
    let draws = f64::from(req.draws.max(1));
    // Expected attended sessions (docs/design.md): planned minutes x attendance.
    let per = draws / crate::study::staffing::attendance(study);
    let arms: Vec<ArmSpread> = study
        .arms
        .par_iter()
        .enumerate()
        .map(|(ai, arm)| {
            let slots = &runs.slots.slots[ai];
            let participants = slots.first().map_or(0, |s| s.first_draws);
            let completed = slots
                .first()
                .map_or(0, |s| s.count(super::table::flag::COMPLETED));
            // An arm nobody is in has nothing to summarise: no scenario rows (not zeros).
            let ns = if participants == 0 { 0 } else { slots.len() };
            let scenarios = (0..ns)
                .map(|si| scenario_spread(study, runs, req, (ai, si)))
                .collect();
            ArmSpread {
                name: arm.name.clone(),
                control: arm.is_control(),
                participants,
                completing: completed as f64 / draws,
                scenarios,
                staff_hours: StaffHours::of(&tally.staff[ai], per),
            }
        })
        .collect();
    CohortSummary {
        comparisons: crate::simulate::arm_comparison::comparisons(&arms),
        arms,
        staff_hours: StaffHours::of(&tally.staff_allocated, per),
    }
}

/// One arm and scenario over its runs.
fn scenario_spread(
    study: &Study,
    runs: &CohortRuns,
    req: &CohortRequest,
    (ai, si): (usize, usize),
) -> ScenarioSpread {
    use super::table::flag;
    let s = &runs.slots.slots[ai][si];
    let counts = &runs.tally.minutes[ai][si];
    let mass = s.end_mass(&runs.slots);
    let completers: Vec<f64> = mass
        .iter()
        .zip(&s.flags)
        .filter(|(_, f)| *f & flag::COMPLETED != 0)
        .map(|(m, _)| *m)
        .collect();
    let n = s.len().max(1) as f64;
    ScenarioSpread {
        name: study.scenarios[si].name.clone(),
        mass_change_kg: Spread::of(mass),
        mass_change_completers_kg: (!completers.is_empty()).then(|| Spread::of(&completers)),
        fat_mass_change_kg: Spread::of(s.end_fat(&runs.slots)),
        checkpoints: req
            .checkpoints
            .iter()
            .enumerate()
            .map(|(ci, week)| CheckpointSpread {
                week: *week,
                mass_change_kg: Spread::of(&s.mass_kg[ci]),
                fat_mass_change_kg: Spread::of(&s.fat_kg[ci]),
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
        over_max_share: s.count(flag::OVER_MAX) as f64 / n,
        risk_shares: RiskShares::of(s),
        dose_share_mean: (!study.arms[ai].is_control()).then(|| s.dose_share_sum / n),
        prescribed_net_kcal_mean: s.prescribed_sum / n,
        mass_changes: mass.to_vec(),
    }
}
