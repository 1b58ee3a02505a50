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

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Print the dated, week-by-week re-prescribed session schedule and the projected outcome.
    Schedule {
        /// The plan file (TOML). Without one, a built-in demo plan runs.
        plan: Option<PathBuf>,
        /// Whose schedule the table and CSV show (default: the first scenario).
        #[arg(long)]
        scenario: Option<String>,
        /// Output format.
        #[arg(long, value_enum, default_value_t = FormatArg::Table)]
        format: FormatArg,
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
