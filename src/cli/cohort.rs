//! The command line of `cohort` and `cohort-merge`: a study's cohort, its shards.

use super::DisplayArgs;
use super::values;
use clap::builder::RangedU64ValueParser;
use clap::{Args, ValueEnum, value_parser};
use std::path::PathBuf;

/// Output formats of `cohort`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum CohortFormat {
    /// Summary tables with staffing and cautions.
    Table,
    /// One row per participant, arm and scenario.
    Csv,
    /// The summaries as JSON (keys per docs/file-formats.md section 4.5, "Cohort JSON").
    Json,
}

/// The tables of `cohort --format csv`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum CohortCsvTable {
    /// One row per participant, arm, scenario and draw.
    Participants,
    /// One row per pair of arms, scenario and endpoint week (the sample sizes).
    Comparisons,
    /// One row per arm and one for the trial as allocated (hours and the site's need).
    Staffing,
}

/// The basis of `cohort`'s sample sizes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum BasisArg {
    /// Every allocated participant.
    IntentionToTreat,
    /// Completers only, divided by the completion rate.
    Completers,
}

/// The multiplicity adjustment of `cohort`'s sample sizes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum MultiplicityArg {
    /// None: each comparison at 0.05.
    None,
    /// alpha / k for each of k comparisons.
    Bonferroni,
    /// Holm's step-down levels.
    Holm,
}

/// The integrator of `cohort` (docs/model.md section 6).
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum IntegratorArg {
    /// Classic Runge-Kutta 4, 1 to 7 steps a week set by the intake lag (fast; within 1e-4 kg of dopri5 over 10 years).
    Rk4,
    /// Dormand-Prince 5(4) with tight tolerances (what `schedule` uses).
    Dopri5,
}

/// One part of a cohort's streams: shard `k` of `n` (1-based).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// This shard, 1 to `n`.
    pub k: u32,
    /// Shards in all, 1 to 100000.
    pub n: u32,
}

/// `--shard K/N`: two whole numbers with 1 <= K <= N <= 100000.
fn parse_shard(s: &str) -> Result<Shard, String> {
    let bad = || {
        format!("\"{s}\" is not K/N; give two whole numbers with 1 <= K <= N <= 100000, as in 2/8")
    };
    let (k, n) = s.split_once('/').ok_or_else(bad)?;
    let k: u32 = k.trim().parse().map_err(|_| bad())?;
    let n: u32 = n.trim().parse().map_err(|_| bad())?;
    if k == 0 || k > n || n > 100_000 {
        return Err(bad());
    }
    Ok(Shard { k, n })
}

/// The options of `cohort-merge`.
#[derive(Debug, Clone, Args)]
pub struct CohortMergeArgs {
    /// The shard files written by `cohort --shard K/N` (every K of one N, in any order).
    #[arg(required = true, value_name = "SHARD")]
    pub shards: Vec<PathBuf>,
    /// The report's format and where it goes.
    #[command(flatten)]
    pub output: CohortOutputArgs,
    /// Worker threads for the summaries, 1 to 256.
    #[arg(long, value_name = "N", value_parser = RangedU64ValueParser::<usize>::new().range(1..=256))]
    pub threads: Option<usize>,
    /// Display units.
    #[command(flatten)]
    pub display: DisplayArgs,
}

/// The seed `cohort` uses when none is given.
pub const DEFAULT_SEED: u64 = 20_270_101;

/// The report's format and where it goes: the same for `cohort` and `cohort-merge`.
#[derive(Debug, Clone, Args)]
pub struct CohortOutputArgs {
    /// Output format.
    #[arg(long, value_enum, default_value_t = CohortFormat::Table)]
    pub format: CohortFormat,
    /// With --format csv: which table (participants: one row per run; comparisons: one row per pair of arms, scenario and week; staffing: one row per arm and the trial's site need).
    #[arg(long = "csv-table", value_enum, default_value_t = CohortCsvTable::Participants)]
    pub csv_table: CohortCsvTable,
    /// Write the output to this file (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Also write SVG charts into this folder.
    #[arg(long, value_name = "DIR")]
    pub chart: Option<PathBuf>,
}

/// The options of `cohort`.
#[derive(Debug, Clone, Args)]
pub struct CohortArgs {
    /// The study file (TOML).
    pub study: PathBuf,
    /// The roster (CSV with columns id, sex, age_years, height_cm, mass_kg, optional ones and arm).
    #[arg(long, value_name = "FILE")]
    pub roster: Option<PathBuf>,
    /// Draw N participants (1 to 100000) from the population of the study's synthetic table instead (seeded; arms by permuted blocks).
    #[arg(long, value_name = "N", value_parser = RangedU64ValueParser::<usize>::new().range(1..=100_000))]
    pub synthetic: Option<usize>,
    /// Assign arms by permuted blocks stratified by sex (for a roster without an arm column).
    #[arg(long)]
    pub randomise: bool,
    /// Random seed for synthetic draws and randomisation.
    #[arg(long, default_value_t = DEFAULT_SEED)]
    pub seed: u64,
    /// Simulate every participant in every arm (the counterfactual view of the dose effect).
    #[arg(long)]
    pub all_arms: bool,
    /// Draws per participant (1 to 10000).
    #[arg(long, default_value_t = 1, value_name = "K", value_parser = value_parser!(u32).range(1..=10_000))]
    pub draws: u32,
    /// Worker threads, 1 to 256 (default: RAYON_NUM_THREADS, else one per core).
    #[arg(long, value_name = "N", value_parser = RangedU64ValueParser::<usize>::new().range(1..=256))]
    pub threads: Option<usize>,
    /// The integrator.
    #[arg(long, value_enum, default_value_t = IntegratorArg::Rk4)]
    pub integrator: IntegratorArg,
    /// Add a checkpoint week (repeatable); the end of the protocol and of follow-up are always shown, and arms are also compared at each such week.
    #[arg(long = "at-week", value_name = "N", allow_negative_numbers = true, value_parser = values::week)]
    pub at_week: Vec<u32>,
    /// The difference the sample size rests on: intention to treat (drop-outs already in it) or completers (then divided by the completion rate).
    #[arg(long, value_enum, default_value_t = BasisArg::IntentionToTreat)]
    pub basis: BasisArg,
    /// Adjust the significance level for several comparisons (Holm 1979 or Bonferroni).
    #[arg(long, value_enum, default_value_t = MultiplicityArg::None)]
    pub multiplicity: MultiplicityArg,
    /// The report's format and where it goes.
    #[command(flatten)]
    pub output: CohortOutputArgs,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
    /// Run only part K of N of the (participant, draw) streams and write a shard file
    /// (JSON) instead of the report; `cohort-merge` combines the shards (docs/cluster.md).
    #[arg(long, value_name = "K/N", value_parser = parse_shard)]
    pub shard: Option<Shard>,
    /// Display units.
    #[command(flatten)]
    pub display: DisplayArgs,
}
