//! `activities`: list or search the built-in activity table.

use super::{Printed, unit_system};
use crate::activity::compendium;
use crate::cli::ActivitiesArgs;
use crate::error::Error;
use crate::report;
use crate::report::units::Units;

/// Run `activities`.
pub fn run(args: &ActivitiesArgs) -> Result<Printed, Error> {
    let (met_min, met_max) = (args.met_min, args.met_max);
    let lo = met_min.unwrap_or(0.0);
    let hi = met_max.unwrap_or(f64::INFINITY);
    if lo > hi {
        return Err(Error::Usage(format!(
            "--met-min {lo} is above --met-max {hi}"
        )));
    }
    let rows = compendium::search(args.text.as_deref(), lo, hi);
    let mut query = String::new();
    if let Some(t) = &args.text {
        query.push_str(&format!("matching \"{t}\""));
    }
    match (met_min, met_max) {
        (Some(a), Some(b)) => query.push_str(&format!(" between {a} and {b} MET")),
        (Some(a), None) => query.push_str(&format!(" of at least {a} MET")),
        (None, Some(b)) => query.push_str(&format!(" of at most {b} MET")),
        (None, None) => {}
    }
    let query = if query.is_empty() {
        "in the built-in table".to_string()
    } else {
        query.trim().to_string()
    };
    Ok(Printed {
        stdout: report::activities::render(
            &rows,
            &query,
            Units {
                system: unit_system(args.units),
                ..Units::default()
            },
        ),
        stderr: String::new(),
    })
}
