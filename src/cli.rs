//! The command line: the clap definition and nothing else.

use clap::{Parser, Subcommand, ValueEnum};
use std::path::PathBuf;

/// Plan exercise as a dose of energy, re-prescribe session minutes as body mass
/// falls, and project body composition under stated compensation assumptions.
#[derive(Debug, Parser)]
#[command(name = "dosewright", version, about, propagate_version = true)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// Output formats of `schedule`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FormatArg {
    /// Human-readable tables with warnings and cautions.
    Table,
    /// One row per session.
    Csv,
    /// Machine-readable, keys as documented in the README.
    Json,
}

/// Output formats of `compare`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum CompareFormat {
    /// Human-readable tables with warnings and cautions.
    Table,
    /// One row per scenario and checkpoint.
    Csv,
    /// Machine-readable, keys as documented in the README.
    Json,
    /// Markdown tables for documents.
    Markdown,
}

/// Output formats of `goal`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum GoalFormat {
    /// Human-readable table with warnings and cautions.
    Table,
    /// Machine-readable, keys as documented in the README.
    Json,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Print the dated, week-by-week re-prescribed session schedule and the projected outcome.
    Schedule {
        /// The plan file (TOML). Without one, a built-in demo plan runs.
        plan: Option<PathBuf>,
        /// Whose schedule the table shows (default: the first scenario; CSV and JSON carry every scenario).
        #[arg(long)]
        scenario: Option<String>,
        /// Output format.
        #[arg(long, value_enum, default_value_t = FormatArg::Table)]
        format: FormatArg,
        /// Write the output to this file (atomically) instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
        /// Also write SVG charts into this folder.
        #[arg(long, value_name = "DIR")]
        chart: Option<PathBuf>,
    },
    /// Compare every scenario side by side at checkpoint weeks, optionally for several doses.
    Compare {
        /// The plan file (TOML).
        plan: PathBuf,
        /// Add a checkpoint week (repeatable); weeks 4, 12, 26 and the ends are always shown.
        #[arg(long = "at-week", value_name = "N")]
        at_week: Vec<u32>,
        /// Add a scenario without editing the plan: "NAME:key=value,key=value" (repeatable).
        #[arg(long = "add-scenario", value_name = "SPEC")]
        add_scenario: Vec<String>,
        /// A dose-response table for these doses, in the plan's dose unit: e.g. 4,8,12,16.
        #[arg(long, value_name = "LIST", value_delimiter = ',')]
        doses: Vec<f64>,
        /// Output format.
        #[arg(long, value_enum, default_value_t = CompareFormat::Table)]
        format: CompareFormat,
        /// Write the output to this file (atomically) instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
        /// Also write SVG charts into this folder.
        #[arg(long, value_name = "DIR")]
        chart: Option<PathBuf>,
    },
    /// Find, per scenario, the smallest dose of the plan's kind that reaches a loss by a week.
    #[command(group = clap::ArgGroup::new("loss").required(true).args(["lose_kg", "lose_percent"]))]
    Goal {
        /// The plan file (TOML).
        plan: PathBuf,
        /// Loss wanted, kg.
        #[arg(long, value_name = "KG")]
        lose_kg: Option<f64>,
        /// Loss wanted, percent of baseline mass.
        #[arg(long, value_name = "PERCENT")]
        lose_percent: Option<f64>,
        /// By the end of this protocol week.
        #[arg(long, value_name = "N")]
        by_week: u32,
        /// Add a scenario without editing the plan: "NAME:key=value,key=value" (repeatable).
        #[arg(long = "add-scenario", value_name = "SPEC")]
        add_scenario: Vec<String>,
        /// Output format.
        #[arg(long, value_enum, default_value_t = GoalFormat::Table)]
        format: GoalFormat,
        /// Write the output to this file (atomically) instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
    },
    /// Validate a plan and print its resolved assumptions.
    Check {
        /// The plan file (TOML).
        plan: PathBuf,
    },
    /// Write a commented starter plan (to FILE, or to standard output).
    Init {
        /// Where to write it; an existing file is never overwritten.
        file: Option<PathBuf>,
    },
    /// List or search the built-in activity table and show the ACSM equations.
    Activities {
        /// A code (or its first digits) or words of the label, e.g. "cycling".
        text: Option<String>,
        /// Lowest MET to list.
        #[arg(long, value_name = "MET")]
        met_min: Option<f64>,
        /// Highest MET to list.
        #[arg(long, value_name = "MET")]
        met_max: Option<f64>,
    },
}
