//! The `pilot` command: read a pilot from a register (optionally importing a
//! measurement CSV first), analyse it, and print or write the report, the chart and
//! the `[[scenario]]` block for the next study (docs/pilot-analysis.md). The thin
//! shell around [`crate::pilot`]: the only place that reads files, the clock or
//! writes.

use crate::app::Printed;
use crate::error::Error;
use crate::files::write_atomic;
use crate::model::Constants;
use crate::pilot::{gather, import, report, scenario};
use crate::register::{SqliteStore, Stamp};
use chrono::Utc;
use clap::{Args, ValueEnum};
use std::path::PathBuf;

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

/// Run `pilot`.
pub fn run(args: &PilotArgs) -> Result<Printed, Error> {
    let mut stderr = String::new();
    let store = match &args.import {
        Some(file) => {
            let name = file.display().to_string();
            let text = std::fs::read_to_string(file).map_err(|e| Error::Unreadable {
                path: name.clone(),
                reason: e.to_string(),
            })?;
            let rows = import::parse_measurements(&name, &text)?;
            let mut store = SqliteStore::open(&args.register)?;
            let who = args.by.as_deref().unwrap_or_default();
            let (ids, warnings) =
                store.import_measurements(&rows, &Stamp::new(who, Utc::now())?)?;
            stderr.push_str(&format!(
                "imported {} measurement(s) from {name}\n",
                ids.len()
            ));
            for w in warnings {
                stderr.push_str(&format!("warning: {}\n", w.message));
            }
            store
        }
        None => SqliteStore::open_read_only(&args.register)?,
    };
    let participants = gather::from_register(&store)?;
    if participants.is_empty() {
        return Err(Error::Usage(format!(
            "{}: no participant has a body-composition measurement; import the measurements first (--import FILE --by WHO)",
            args.register.display()
        )));
    }
    let analysis = crate::pilot::analyse(&participants, &Constants::default())?;
    for w in &analysis.warnings {
        stderr.push_str(&format!("warning: {}\n", w.message));
    }
    if let Some(path) = &args.scenarios {
        write_atomic(
            path,
            scenario::scenario_block(&analysis, &args.name).as_bytes(),
            false,
        )?;
        stderr.push_str(&format!("wrote {}\n", path.display()));
    }
    if let Some(path) = &args.chart {
        write_atomic(
            path,
            report::chart_svg(&analysis, &args.name).as_bytes(),
            false,
        )?;
        stderr.push_str(&format!("wrote {}\n", path.display()));
    }
    let text = match args.format {
        PilotFormat::Markdown => report::markdown(&analysis, &args.name),
        PilotFormat::Json => {
            let mut s = serde_json::to_string_pretty(&analysis)
                .map_err(|e| Error::Internal(format!("pilot JSON: {e}")))?;
            s.push('\n');
            s
        }
    };
    let mut printed = Printed {
        stdout: String::new(),
        stderr,
    };
    match &args.out {
        Some(o) => {
            write_atomic(o, text.as_bytes(), false)?;
            printed.stderr.push_str(&format!("wrote {}\n", o.display()));
        }
        None => printed.stdout = text,
    }
    Ok(printed)
}
