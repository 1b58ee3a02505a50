//! The command line of `register`: a site's trial register (docs/register.md).

use super::UnitsArg;
use chrono::NaiveDate;
use clap::{Args, Subcommand, ValueEnum};
use std::path::PathBuf;

/// A participant in a register, in place of a plan file and a CSV log: the plan
/// and the current rows are read from the register (`schedule`, `calendar`,
/// `sheets`, `compare`, `goal`, `fit`).
#[derive(Debug, Clone, Args)]
pub struct FromRegisterArgs {
    /// A trial register (SQLite): re-plan --participant from the plan and rows kept there, in place of PLAN and --log.
    #[arg(
        long,
        value_name = "FILE",
        conflicts_with_all = ["log", "plan"],
        requires = "participant"
    )]
    pub register: Option<PathBuf>,
    /// With --register: the participant's code (the plan's participant.id).
    #[arg(long, value_name = "CODE", requires = "register")]
    pub participant: Option<String>,
}

/// Who records: the OS user unless `--by` names the person.
#[derive(Debug, Clone, Args)]
pub struct ByArgs {
    /// Who is making the change (default: the OS user, as os:NAME).
    #[arg(long, value_name = "NAME")]
    pub by: Option<String>,
}

/// `dosewright register ...`
#[derive(Debug, Clone, Args)]
pub struct RegisterArgs {
    /// What to do.
    #[command(subcommand)]
    pub action: RegisterAction,
}

/// Table or CSV.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ListFormat {
    /// A table for people.
    Table,
    /// CSV (ISO 8601 UTC times, stable row ids).
    Csv,
}

/// Formats of the day view.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum DayFormat {
    /// A table with the screening results and cautions.
    Table,
    /// One line per session due or row recorded.
    Csv,
    /// A printable page with the screening results and cautions.
    Html,
}

/// The register's actions.
#[derive(Debug, Clone, Subcommand)]
pub enum RegisterAction {
    /// Create an empty register (a new SQLite file readable by its owner only).
    Create {
        /// The new register (must not exist).
        register: PathBuf,
    },
    /// Enrol participants: from plan files, or from a study and its roster (with arms).
    #[command(group = clap::ArgGroup::new("from").required(true).args(["plans", "study"]))]
    Enrol {
        /// The register.
        register: PathBuf,
        /// Plan files (TOML), one participant each (code: participant.id).
        plans: Vec<PathBuf>,
        /// A study file: enrol each roster participant of a dosed arm under its arm.
        #[arg(
            long,
            value_name = "FILE",
            requires = "roster",
            conflicts_with = "plans"
        )]
        study: Option<PathBuf>,
        /// With --study: the roster (CSV with an arm column).
        #[arg(long, value_name = "FILE", requires = "study")]
        roster: Option<PathBuf>,
        /// The arm of plan files' participants.
        #[arg(long, value_name = "NAME", conflicts_with = "study")]
        arm: Option<String>,
        /// Who enrols.
        #[command(flatten)]
        by: ByArgs,
    },
    /// List the participants enrolled.
    Participants {
        /// The register.
        register: PathBuf,
        /// Output format.
        #[arg(long, value_enum, default_value_t = ListFormat::Table)]
        format: ListFormat,
    },
    /// List weigh-ins and sessions (the current rows, or every version with --all).
    List {
        /// The register.
        register: PathBuf,
        /// Only this participant.
        #[arg(long, value_name = "CODE")]
        participant: Option<String>,
        /// Every version: corrected and voided rows too.
        #[arg(long)]
        all: bool,
        /// Output format.
        #[arg(long, value_enum, default_value_t = ListFormat::Table)]
        format: ListFormat,
    },
    /// Correct a row: a new version replaces it, the original is kept (reason required).
    Correct(CorrectArgs),
    /// Void a row: it no longer counts but stays in the audit (reason required).
    Void {
        /// The register.
        register: PathBuf,
        /// The row id (from `register list`).
        row: i64,
        /// Why (required).
        #[arg(long, value_name = "TEXT")]
        reason: String,
        /// Who voids.
        #[command(flatten)]
        by: ByArgs,
    },
    /// Show the audit trail of one participant: every change, who, when and why.
    Audit {
        /// The register.
        register: PathBuf,
        /// The participant.
        #[arg(long, value_name = "CODE")]
        participant: String,
        /// Output format.
        #[arg(long, value_enum, default_value_t = ListFormat::Table)]
        format: ListFormat,
    },
    /// Import a participant's CSV log into the register, all rows or none.
    Import {
        /// The register.
        register: PathBuf,
        /// The CSV log.
        log: PathBuf,
        /// The participant the log belongs to.
        #[arg(long, value_name = "CODE")]
        participant: String,
        /// Who imports.
        #[command(flatten)]
        by: ByArgs,
    },
    /// Export tidy CSV tables (weigh-ins, sessions, changes) and each participant's CSV log into a folder.
    Export {
        /// The register.
        register: PathBuf,
        /// The folder to write into (created if missing; files there are replaced).
        #[arg(long, value_name = "DIR")]
        to: PathBuf,
        /// Only this participant.
        #[arg(long, value_name = "CODE")]
        participant: Option<String>,
    },
    /// Copy the register consistently while others may be writing (SQLite's online backup).
    Backup {
        /// The register.
        register: PathBuf,
        /// The copy (must not exist).
        copy: PathBuf,
    },
    /// Check the register's integrity and schema (exit 2 with the findings when anything is wrong).
    Check {
        /// The register.
        register: PathBuf,
    },
    /// The day view: every participant due a session on a date, re-planned minutes, target heart rate, what is recorded.
    Day(DayArgs),
}

/// `register correct`: the row's values, with the ones given replaced.
#[derive(Debug, Clone, Args)]
pub struct CorrectArgs {
    /// The register.
    pub register: PathBuf,
    /// The row id (from `register list`).
    pub row: i64,
    /// Why (required).
    #[arg(long, value_name = "TEXT")]
    pub reason: String,
    /// A new date (YYYY-MM-DD).
    #[arg(long, value_name = "DATE")]
    pub date: Option<NaiveDate>,
    /// A weigh-in's mass, kg (lb with --units us).
    #[arg(long = "weigh-in", value_name = "MASS", allow_negative_numbers = true)]
    pub weigh_in: Option<f64>,
    /// Units of --weigh-in: metric (kg) or us (lb, stored as kg).
    #[arg(long, value_enum, default_value_t = UnitsArg::Metric)]
    pub units: UnitsArg,
    /// A weigh-in's body fat, percent.
    #[arg(
        long = "body-fat",
        value_name = "PERCENT",
        allow_negative_numbers = true
    )]
    pub body_fat: Option<f64>,
    /// A session's minutes at target.
    #[arg(long, value_name = "MINUTES", allow_negative_numbers = true)]
    pub session: Option<f64>,
    /// A session's average heart rate, beats/min.
    #[arg(long, value_name = "BPM", allow_negative_numbers = true)]
    pub hr: Option<f64>,
    /// A session's Borg RPE, 6-20.
    #[arg(long, value_name = "RPE", allow_negative_numbers = true)]
    pub rpe: Option<f64>,
    /// A session's ergometer power actually used, W.
    #[arg(long, value_name = "W", allow_negative_numbers = true)]
    pub watts: Option<f64>,
    /// A session's speed actually used, km/h.
    #[arg(long, value_name = "KMH", allow_negative_numbers = true)]
    pub speed: Option<f64>,
    /// A weigh-in's body-fat method (DXA, bioimpedance, ...).
    #[arg(long = "body-fat-method", value_name = "TEXT")]
    pub body_fat_method: Option<String>,
    /// A new note (one line).
    #[arg(long, value_name = "TEXT")]
    pub note: Option<String>,
    /// Who corrects.
    #[command(flatten)]
    pub by: ByArgs,
}

/// `register day`.
#[derive(Debug, Clone, Args)]
pub struct DayArgs {
    /// The register.
    pub register: PathBuf,
    /// The date (YYYY-MM-DD; default: today).
    #[arg(long, value_name = "DATE")]
    pub date: Option<NaiveDate>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = DayFormat::Table)]
    pub format: DayFormat,
    /// Write the output to this file (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
}
