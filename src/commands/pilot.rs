//! `pilot`: read a pilot from a register (optionally importing a measurement CSV
//! first), analyse it, and print or write the report, the chart and the
//! `[[scenario]]` block for the next study (docs/pilot-analysis.md). The thin shell
//! around [`crate::pilot`]: the clock is read here, files go through the one reader
//! and the one writer, and every output target is checked before any work.

use super::{Printed, check_outputs, deliver, write_output};
use crate::cli::{PilotArgs, PilotFormat};
use crate::error::Error;
use crate::model::Constants;
use crate::pilot::{gather, import, report, scenario};
use crate::register::{SqliteStore, Stamp};
use chrono::Utc;
use std::path::Path;

/// Run `pilot`.
pub fn run(args: &PilotArgs) -> Result<Printed, Error> {
    let inputs: Vec<&Path> = std::iter::once(args.register.as_path())
        .chain(args.import.as_deref())
        .collect();
    check_outputs(args.out.as_deref(), None, &inputs)?;
    for extra in [&args.scenarios, &args.chart].into_iter().flatten() {
        check_outputs(Some(extra), None, &inputs)?;
    }
    let mut stderr = String::new();
    let store = match &args.import {
        Some(file) => {
            let f = crate::input::read(file)?;
            let rows = import::parse_measurements(&f.name, &f.text())?;
            let mut store = SqliteStore::open(&args.register)?;
            let who = args.by.as_deref().unwrap_or_default();
            let (ids, warnings) =
                store.import_measurements(&rows, &Stamp::new(who, Utc::now())?)?;
            stderr.push_str(&format!(
                "imported {} measurement(s) from {}\n",
                ids.len(),
                f.name
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
    // Each participant is analysed with their own plan's `[model]` constants
    // (gathered with them); the defaults only stand in for a participant without.
    let analysis = crate::pilot::analyse(&participants, &Constants::default())?;
    for w in &analysis.warnings {
        stderr.push_str(&format!("warning: {}\n", w.message));
    }
    if let Some(path) = &args.scenarios {
        let block = scenario::scenario_block(&analysis, &args.name);
        write_output(path, block.as_bytes(), false)?;
        stderr.push_str(&format!("wrote {}\n", path.display()));
    }
    if let Some(path) = &args.chart {
        let svg = report::chart_svg(&analysis, &args.name);
        write_output(path, svg.as_bytes(), false)?;
        stderr.push_str(&format!("wrote {}\n", path.display()));
    }
    let text = match args.format {
        PilotFormat::Markdown => report::markdown(&analysis, &args.name),
        PilotFormat::Json => {
            stderr.push_str(&report::side_notes(&analysis));
            let mut s = serde_json::to_string_pretty(&analysis)
                .map_err(|e| Error::Internal(format!("pilot JSON: {e}")))?;
            s.push('\n');
            s
        }
    };
    let printed = Printed {
        stdout: String::new(),
        stderr,
    };
    deliver(printed, text, args.out.as_deref())
}
