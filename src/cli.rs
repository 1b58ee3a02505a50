//! The command line: the clap definition and nothing else.

use chrono::NaiveDate;
use clap::{Args, Parser, Subcommand, ValueEnum};
use std::net::SocketAddr;
use std::path::PathBuf;

pub mod values;

mod cohort;
pub use cohort::{
    BasisArg, CohortArgs, CohortCsvTable, CohortFormat, CohortMergeArgs, CohortOutputArgs,
    DEFAULT_SEED, IntegratorArg, MultiplicityArg, Shard,
};

mod register;
pub use register::{
    ByArgs, CorrectArgs, DayArgs, DayFormat, FromRegisterArgs, ListFormat, RegisterAction,
    RegisterArgs,
};

/// Plan exercise as a dose of energy, re-prescribe session minutes as body mass
/// falls, and project body composition under stated compensation assumptions.
#[derive(Debug, Parser)]
#[command(name = "dosewright", version, about, propagate_version = true)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// A number within `lo..=hi` (or, with `open`, strictly between them); `what` words
/// the range for the message.
fn float_within(s: &str, lo: f64, hi: f64, open: bool, what: &str) -> Result<f64, String> {
    let x: f64 = match s.trim().parse() {
        Ok(x) => x,
        Err(_) => values::number(s).map_err(|e| format!("{e}; {what}"))?,
    };
    let inside = if open {
        x > lo && x < hi
    } else {
        (lo..=hi).contains(&x)
    };
    if x.is_finite() && inside {
        Ok(x)
    } else {
        Err(what.to_string())
    }
}

/// `--met-min` and `--met-max`: 0 to 25 MET.
fn met_bound(s: &str) -> Result<f64, String> {
    float_within(s, 0.0, 25.0, false, "allowed 0 to 25 MET")
}

/// `--lose-percent`: above 0 and below 100.
fn loss_percent(s: &str) -> Result<f64, String> {
    float_within(
        s,
        0.0,
        100.0,
        true,
        "allowed above 0 and below 100 (percent of baseline mass)",
    )
}

/// Output formats of `schedule`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FormatArg {
    /// Human-readable tables with warnings and cautions.
    Table,
    /// One row per session.
    Csv,
    /// Machine-readable, keys as documented in docs/file-formats.md section 4.
    Json,
}

/// Output formats of `compare`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum CompareFormat {
    /// Human-readable tables with warnings and cautions.
    Table,
    /// One row per scenario and checkpoint.
    Csv,
    /// Machine-readable, keys as documented in docs/file-formats.md section 4.
    Json,
    /// Markdown tables for documents.
    Markdown,
}

/// Output formats of `goal`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum GoalFormat {
    /// Human-readable table with warnings and cautions.
    Table,
    /// Machine-readable, keys as documented in docs/file-formats.md section 4.
    Json,
}

/// Output formats of `sheets`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum SheetsFormat {
    /// One self-contained HTML file to print, one page per week (needs --out).
    Html,
    /// The same content as plain text.
    Text,
}

/// The paper the HTML sheets are laid out for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum PaperArg {
    /// ISO A4, 210 x 297 mm.
    A4,
    /// US Letter, 8.5 x 11 in.
    Letter,
}

/// Parameters `fit` can estimate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FitParameterArg {
    /// Share of exercise energy eaten back.
    #[value(name = "intake_fraction")]
    IntakeFraction,
    /// Share of exercise energy lost from other movement.
    #[value(name = "activity_fraction")]
    ActivityFraction,
}

/// `log` subcommands.
#[derive(Debug, Subcommand)]
pub enum LogAction {
    /// Append one validated row (a weigh-in or a delivered session) to the log.
    Add(LogAddArgs),
}

/// Append one validated row (a weigh-in or a delivered session) to the log.
#[derive(Debug, Clone, Args)]
#[command(group = clap::ArgGroup::new("kind").required(true).args(["weigh_in", "session"]))]
#[command(group = clap::ArgGroup::new("log_source").required(true).args(["log", "register"]))]
pub struct LogAddArgs {
    /// The plan the log belongs to (not with --register: the register holds it).
    #[arg(required_unless_present = "register")]
    pub plan: Option<PathBuf>,
    /// The log file (created with its header if missing).
    #[arg(long, value_name = "FILE")]
    pub log: Option<PathBuf>,
    /// Record in a trial register instead of a CSV log.
    #[command(flatten)]
    pub from: FromRegisterArgs,
    /// With --register: who records.
    #[command(flatten)]
    pub by: ByArgs,
    /// The row's date (YYYY-MM-DD; default: today). The row goes to its place by date.
    #[arg(long, value_name = "DATE", value_parser = values::date)]
    pub date: Option<NaiveDate>,
    /// A weigh-in: the measured mass, kg (lb with --units us).
    #[arg(
        long = "weigh-in",
        value_name = "MASS",
        allow_negative_numbers = true,
        value_parser = values::number
    )]
    pub weigh_in: Option<f64>,
    /// Units of --weigh-in: metric (kg) or us (lb, stored as kg).
    #[arg(long, value_enum, default_value_t = UnitsArg::Metric)]
    pub units: UnitsArg,
    /// Add a weigh-in even when it is implausibly far from the previous or next
    /// weigh-in or from the plan's baseline.
    #[arg(long = "accept-jump", requires = "weigh_in")]
    pub accept_jump: bool,
    /// With --weigh-in: measured body fat, percent.
    #[arg(
        long = "body-fat",
        value_name = "PERCENT",
        requires = "weigh_in",
        allow_negative_numbers = true,
        value_parser = values::number
    )]
    pub body_fat: Option<f64>,
    /// With --body-fat: how it was measured (DXA, bioimpedance, ...).
    #[arg(long = "body-fat-method", value_name = "TEXT", requires = "body_fat")]
    pub body_fat_method: Option<String>,
    /// A delivered session: its minutes (0 for a missed session).
    #[arg(
        long,
        value_name = "MINUTES",
        allow_negative_numbers = true,
        value_parser = values::number
    )]
    pub session: Option<f64>,
    /// With --session: the activity's compendium code (default: the plan's activity).
    #[arg(
        long,
        value_name = "CODE",
        requires = "session",
        conflicts_with = "met"
    )]
    pub code: Option<String>,
    /// With --session: the activity's MET (default: the plan's activity).
    #[arg(
        long,
        value_name = "MET",
        requires = "session",
        allow_negative_numbers = true,
        value_parser = values::number
    )]
    pub met: Option<f64>,
    /// With --session: average heart rate, beats/min.
    #[arg(
        long,
        value_name = "BPM",
        requires = "session",
        allow_negative_numbers = true,
        value_parser = values::number
    )]
    pub hr: Option<f64>,
    /// With --session: Borg RPE, 6-20.
    #[arg(
        long,
        value_name = "RPE",
        requires = "session",
        allow_negative_numbers = true,
        value_parser = values::number
    )]
    pub rpe: Option<f64>,
    /// With --session: the ergometer power actually used, W.
    #[arg(
        long,
        value_name = "W",
        requires = "session",
        allow_negative_numbers = true,
        value_parser = values::number
    )]
    pub watts: Option<f64>,
    /// With --session: the speed actually used (treadmill, track), km/h.
    #[arg(
        long,
        value_name = "KMH",
        requires = "session",
        allow_negative_numbers = true,
        value_parser = values::number
    )]
    pub speed: Option<f64>,
    /// A note (one line).
    #[arg(long, value_name = "TEXT")]
    pub note: Option<String>,
}

/// The optional participant log of `schedule`, `calendar`, `compare` and `goal`: a
/// CSV log, or a participant in a register.
#[derive(Debug, Clone, Args)]
#[command(group = clap::ArgGroup::new("log_source").args(["log", "register"]))]
pub struct LogArgs {
    /// A participant log (CSV): re-plan from its weigh-ins and delivered sessions.
    #[arg(long, value_name = "FILE")]
    pub log: Option<PathBuf>,
    /// Use the log up to this date (YYYY-MM-DD; default: the log's last date).
    #[arg(long = "as-of", value_name = "DATE", value_parser = values::date, requires = "log_source")]
    pub as_of: Option<NaiveDate>,
    /// Or a participant in a register.
    #[command(flatten)]
    pub from: FromRegisterArgs,
}

/// Units of mass, speed and height in human-facing output.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum UnitsArg {
    /// kg, km/h, cm.
    Metric,
    /// US customary: lb, mph, in.
    Us,
}

/// Unit of energy in human-facing output.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum EnergyArg {
    /// Kilocalories (thermochemical).
    Kcal,
    /// Kilojoules (1 kcal = 4.184 kJ).
    Kj,
}

/// The display units of the tables, text and charts of `schedule`, `compare`, `goal`,
/// `fit` and `check`.
#[derive(Debug, Clone, Args)]
pub struct DisplayArgs {
    /// Units of mass, speed and height in tables, text and charts (JSON and CSV are always metric).
    #[arg(long, value_enum, default_value_t = UnitsArg::Metric)]
    pub units: UnitsArg,
    /// Energy unit in tables, text and charts; per-kg doses stay per kg (JSON and CSV are always kcal).
    #[arg(long, value_enum, default_value_t = EnergyArg::Kcal)]
    pub energy: EnergyArg,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Print the dated, week-by-week re-prescribed session schedule and the projected outcome.
    Schedule(ScheduleArgs),
    /// Write the planned sessions as an iCalendar file (.ics), one event per session or bout.
    Calendar(CalendarArgs),
    /// Print weekly session sheets for the supervising trainer: one page per week.
    Sheets(SheetsArgs),
    /// Compare every scenario side by side at checkpoint weeks, optionally for several doses.
    Compare(CompareArgs),
    /// Find, per scenario, the smallest dose of the plan's kind that reaches a loss by a week.
    Goal(GoalArgs),
    /// Estimate from the log's weigh-ins how much of the dose is not reaching the stores.
    Fit(FitArgs),
    /// Keep the participant log: weigh-ins and delivered sessions.
    Log {
        /// What to do with the log.
        #[command(subcommand)]
        action: LogAction,
    },
    /// Validate a plan and print its resolved assumptions.
    Check(CheckArgs),
    /// Write a commented starter plan (to FILE, or to standard output).
    Init(InitArgs),
    /// Simulate a study's cohort: every participant in its arm (or every arm), summarised per arm.
    #[command(group = clap::ArgGroup::new("who").required(true).args(["roster", "synthetic"]))]
    Cohort(CohortArgs),
    /// Combine the shard files of `cohort --shard K/N` into the report of the whole cohort (the same bytes).
    CohortMerge(CohortMergeArgs),
    /// Analyse a pilot in a register: achieved against delivered energy, intake balance, the gap's causes; scenarios for the next study.
    Pilot(PilotArgs),
    /// The trainer's desk: a local web server over a register, its accounts, and a demo register.
    Desk(DeskArgs),
    /// The site's trial register: participants, weigh-ins, sessions, corrections and their audit, the day view.
    Register(RegisterArgs),
    /// List or search the built-in activity table and show the ACSM equations.
    Activities(ActivitiesArgs),
}

/// Print the dated, week-by-week re-prescribed session schedule and the projected outcome.
#[derive(Debug, Clone, Args)]
pub struct ScheduleArgs {
    /// The plan file (TOML). Without one, a built-in demo plan runs.
    pub plan: Option<PathBuf>,
    /// Whose schedule the table shows (default: the first scenario; CSV and JSON carry every scenario).
    #[arg(long)]
    pub scenario: Option<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = FormatArg::Table)]
    pub format: FormatArg,
    /// Write the output to this file (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Also write SVG charts into this folder.
    #[arg(long, value_name = "DIR")]
    pub chart: Option<PathBuf>,
    /// The participant log to re-plan from.
    #[command(flatten)]
    pub logged: LogArgs,
    /// Display units.
    #[command(flatten)]
    pub display: DisplayArgs,
}

/// Write the planned sessions as an iCalendar file (.ics), one event per session or bout.
#[derive(Debug, Clone, Args)]
pub struct CalendarArgs {
    /// The plan file (TOML). Without one, a built-in demo plan runs.
    pub plan: Option<PathBuf>,
    /// Whose sessions the calendar holds (default: the first scenario).
    #[arg(long)]
    pub scenario: Option<String>,
    /// The calendar file to write (atomically), e.g. sessions.ics.
    #[arg(long, value_name = "FILE")]
    pub out: PathBuf,
    /// DTSTAMP of every event, RFC 3339 in UTC or with an offset (default: the protocol start, 00:00 UTC).
    #[arg(long, value_name = "DATETIME")]
    pub stamp: Option<String>,
    /// Only sessions on or after this date (YYYY-MM-DD).
    #[arg(long, value_name = "DATE", value_parser = values::date)]
    pub from: Option<NaiveDate>,
    /// Only sessions on or before this date (YYYY-MM-DD).
    #[arg(long, value_name = "DATE", value_parser = values::date)]
    pub to: Option<NaiveDate>,
    /// The participant log to re-plan from.
    #[command(flatten)]
    pub logged: LogArgs,
    /// Display units of the event descriptions.
    #[command(flatten)]
    pub display: DisplayArgs,
}

/// Print weekly session sheets for the supervising trainer: one page per week.
#[derive(Debug, Clone, Args)]
#[command(group = clap::ArgGroup::new("weeks").required(true).args(["week", "from"]))]
pub struct SheetsArgs {
    /// The plan file (TOML). Without one, the built-in demo plan runs.
    pub plan: Option<PathBuf>,
    /// The protocol week to print.
    #[arg(long, value_name = "N", allow_negative_numbers = true, value_parser = values::week)]
    pub week: Option<u32>,
    /// Print every protocol week that overlaps --from to --to (YYYY-MM-DD).
    #[arg(long, value_name = "DATE", value_parser = values::date, requires = "to")]
    pub from: Option<NaiveDate>,
    /// The last date of the range (YYYY-MM-DD), with --from.
    #[arg(long, value_name = "DATE", value_parser = values::date, requires = "from")]
    pub to: Option<NaiveDate>,
    /// Whose minutes the sheets show (default: the first scenario).
    #[arg(long)]
    pub scenario: Option<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = SheetsFormat::Html)]
    pub format: SheetsFormat,
    /// Write the sheets to this file (atomically); required with --format html.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// The paper the HTML asks the browser for (the layout fits both).
    #[arg(long, value_enum, default_value_t = PaperArg::A4)]
    pub paper: PaperArg,
    /// The participant log to re-plan from.
    #[command(flatten)]
    pub logged: LogArgs,
    /// PLAN is a study file: print every participant of this roster in its arm, in roster order.
    #[arg(long, value_name = "FILE", requires = "plan", conflicts_with_all = ["log", "register"])]
    pub roster: Option<PathBuf>,
    /// With --roster: assign arms by permuted blocks stratified by sex (as `cohort --randomise`).
    #[arg(long, requires = "roster")]
    pub randomise: bool,
    /// With --roster --randomise: the random seed.
    #[arg(long, requires = "randomise", default_value_t = DEFAULT_SEED)]
    pub seed: u64,
    /// Display units.
    #[command(flatten)]
    pub display: DisplayArgs,
}

/// Compare every scenario side by side at checkpoint weeks, optionally for several doses.
#[derive(Debug, Clone, Args)]
pub struct CompareArgs {
    /// The plan file (TOML; not with --register). Without one, the built-in demo plan runs.
    pub plan: Option<PathBuf>,
    /// Add a checkpoint week (repeatable); weeks 4, 12, 26 and the ends are always shown.
    #[arg(long = "at-week", value_name = "N", allow_negative_numbers = true, value_parser = values::week)]
    pub at_week: Vec<u32>,
    /// Add a scenario without editing the plan: "NAME:key=value,key=value" (repeatable).
    #[arg(long = "add-scenario", value_name = "SPEC")]
    pub add_scenario: Vec<String>,
    /// A dose-response table for these doses, in the plan's dose unit: e.g. 4,8,12,16.
    #[arg(long, value_name = "LIST", value_delimiter = ',')]
    pub doses: Vec<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = CompareFormat::Table)]
    pub format: CompareFormat,
    /// Write the output to this file (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Also write SVG charts into this folder.
    #[arg(long, value_name = "DIR")]
    pub chart: Option<PathBuf>,
    /// The participant log to re-plan from.
    #[command(flatten)]
    pub logged: LogArgs,
    /// Display units.
    #[command(flatten)]
    pub display: DisplayArgs,
}

/// Find, per scenario, the smallest dose of the plan's kind that reaches a loss by a week.
#[derive(Debug, Clone, Args)]
#[command(group = clap::ArgGroup::new("loss").required(true).args(["lose_kg", "lose_percent"]))]
pub struct GoalArgs {
    /// The plan file (TOML; not with --register). Without one, the built-in demo plan runs.
    pub plan: Option<PathBuf>,
    /// Loss wanted, kg.
    #[arg(long, value_name = "KG", allow_negative_numbers = true, value_parser = values::positive)]
    pub lose_kg: Option<f64>,
    /// Loss wanted, percent of baseline mass (above 0 and below 100).
    #[arg(long, value_name = "PERCENT", allow_negative_numbers = true, value_parser = loss_percent)]
    pub lose_percent: Option<f64>,
    /// By the end of this protocol week.
    #[arg(long, value_name = "N", allow_negative_numbers = true, value_parser = values::week)]
    pub by_week: u32,
    /// Add a scenario without editing the plan: "NAME:key=value,key=value" (repeatable).
    #[arg(long = "add-scenario", value_name = "SPEC")]
    pub add_scenario: Vec<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = GoalFormat::Table)]
    pub format: GoalFormat,
    /// Write the output to this file (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// The participant log to re-plan from.
    #[command(flatten)]
    pub logged: LogArgs,
    /// Display units.
    #[command(flatten)]
    pub display: DisplayArgs,
}

/// Estimate from the log's weigh-ins how much of the dose is not reaching the stores.
#[derive(Debug, Clone, Args)]
#[command(group = clap::ArgGroup::new("log_source").required(true).args(["log", "register"]))]
pub struct FitArgs {
    /// The plan file (TOML; not with --register). Without one, the built-in demo plan runs.
    pub plan: Option<PathBuf>,
    /// The participant log (CSV).
    #[arg(long, value_name = "FILE")]
    pub log: Option<PathBuf>,
    /// Use the log up to this date (YYYY-MM-DD; default: the log's last date).
    #[arg(long = "as-of", value_name = "DATE", value_parser = values::date)]
    pub as_of: Option<NaiveDate>,
    /// Or a participant in a register.
    #[command(flatten)]
    pub from: FromRegisterArgs,
    /// Which scenario parameter to estimate.
    #[arg(long, value_enum, default_value_t = FitParameterArg::IntakeFraction)]
    pub parameter: FitParameterArg,
    /// Whose other assumptions are held (default: the first scenario).
    #[arg(long)]
    pub scenario: Option<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = GoalFormat::Table)]
    pub format: GoalFormat,
    /// Write the output to this file (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Also write the measured-against-modelled chart (SVG) into this folder.
    #[arg(long, value_name = "DIR")]
    pub chart: Option<PathBuf>,
    /// Display units.
    #[command(flatten)]
    pub display: DisplayArgs,
}

/// Validate a plan and print its resolved assumptions.
#[derive(Debug, Clone, Args)]
pub struct CheckArgs {
    /// The plan file (TOML), or a study file (validated, with its arms and screening). Without one, the built-in demo plan is checked.
    pub plan: Option<PathBuf>,
    /// Display units.
    #[command(flatten)]
    pub display: DisplayArgs,
}

/// Write a commented starter plan (to FILE, or to standard output).
#[derive(Debug, Clone, Args)]
pub struct InitArgs {
    /// Where to write it; an existing file is never overwritten.
    pub file: Option<PathBuf>,
}

/// List or search the built-in activity table and show the ACSM equations.
#[derive(Debug, Clone, Args)]
pub struct ActivitiesArgs {
    /// A code (or its first digits) or words of the label, e.g. "cycling".
    pub text: Option<String>,
    /// Lowest MET to list (0 to 25).
    #[arg(long, value_name = "MET", allow_negative_numbers = true, value_parser = met_bound)]
    pub met_min: Option<f64>,
    /// Highest MET to list (0 to 25).
    #[arg(long, value_name = "MET", allow_negative_numbers = true, value_parser = met_bound)]
    pub met_max: Option<f64>,
    /// Units of the equations' speed ranges.
    #[arg(long, value_enum, default_value_t = UnitsArg::Metric)]
    pub units: UnitsArg,
}

/// Output format of `pilot`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum PilotFormat {
    /// The report as Markdown (tables, decomposition, assumptions and cautions).
    Markdown,
    /// Every number as JSON.
    Json,
}

/// `dosewright pilot REGISTER ...`
#[derive(Debug, Args)]
pub struct PilotArgs {
    /// The trial register: participants (plans, arms), delivered sessions and measurements.
    pub register: PathBuf,
    /// First import this measurement CSV into the register, all rows or none
    /// (columns: participant, kind, date, last_date, fat_kg, fat_free_kg, mass_kg,
    /// kcal_per_day, method, fat_sd_kg, fat_free_sd_kg, sd_kcal_per_day, note).
    #[arg(long, value_name = "FILE", requires = "by")]
    pub import: Option<PathBuf>,
    /// Who is importing (the person or desk account), with --import.
    #[arg(long, value_name = "WHO", requires = "import")]
    pub by: Option<String>,
    /// The pilot's name, in the report and the scenario names.
    #[arg(long, default_value = "pilot")]
    pub name: String,
    /// Output format.
    #[arg(long, value_enum, default_value_t = PilotFormat::Markdown)]
    pub format: PilotFormat,
    /// Write the report to this file (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Write the `[[scenario]]` block for the next study file to this file.
    #[arg(long, value_name = "FILE")]
    pub scenarios: Option<PathBuf>,
    /// Write the chart of achieved against delivered energy (SVG) to this file.
    #[arg(long, value_name = "FILE")]
    pub chart: Option<PathBuf>,
}

/// `dosewright desk ...`
#[derive(Debug, Clone, Args)]
pub struct DeskArgs {
    /// What to do.
    #[command(subcommand)]
    pub action: DeskAction,
}

/// The desk's actions.
#[derive(Debug, Clone, Subcommand)]
pub enum DeskAction {
    /// Serve the desk over a register until Ctrl-C (on 127.0.0.1 unless --listen says otherwise).
    Serve {
        /// The register (SQLite file).
        register: PathBuf,
        /// Listen on this address and port instead of 127.0.0.1:8470 (anything but loopback prints a warning).
        #[arg(long, value_name = "ADDR:PORT")]
        listen: Option<SocketAddr>,
        /// Listen on this port of 127.0.0.1.
        #[arg(long, value_name = "PORT", conflicts_with = "listen")]
        port: Option<u16>,
        /// End a session after this many minutes without a request.
        #[arg(long, value_name = "MINUTES", default_value_t = 30)]
        idle_minutes: u64,
        /// The desk is reached over HTTPS through a proxy that terminates TLS: mark cookies Secure.
        #[arg(long)]
        behind_tls: bool,
    },
    /// Create the demo register from the built-in example study and roster (invented participants).
    Demo {
        /// The new register (must not exist).
        register: PathBuf,
        /// The protocol's first day (default: this week's Monday).
        #[arg(long, value_name = "DATE", value_parser = values::date)]
        start: Option<chrono::NaiveDate>,
    },
    /// Manage accounts.
    Account {
        /// What to do.
        #[command(subcommand)]
        action: AccountAction,
    },
}

/// Account actions.
#[derive(Debug, Clone, Subcommand)]
pub enum AccountAction {
    /// Create an account (the password is asked for without echo, or read from standard input).
    Add {
        /// The register.
        register: PathBuf,
        /// The sign-in name (letters, digits, '.', '_', '-').
        #[arg(long)]
        name: String,
        /// trainer (record, correct, print), dietitian (read, fit), designer (read, export) or admin (accounts).
        #[arg(long)]
        role: String,
        /// Read the password from the first line of standard input instead of asking.
        #[arg(long)]
        password_stdin: bool,
    },
    /// Set a new password.
    Password {
        /// The register.
        register: PathBuf,
        /// The account.
        #[arg(long)]
        name: String,
        /// Read the password from the first line of standard input instead of asking.
        #[arg(long)]
        password_stdin: bool,
    },
    /// Disable an account (its sessions end at their next request).
    Disable {
        /// The register.
        register: PathBuf,
        /// The account.
        #[arg(long)]
        name: String,
    },
    /// Enable a disabled account.
    Enable {
        /// The register.
        register: PathBuf,
        /// The account.
        #[arg(long)]
        name: String,
    },
    /// List the accounts.
    List {
        /// The register.
        register: PathBuf,
    },
}
