//! The commands, as library calls: each returns what to print, or an error.

use crate::activity::compendium;
use crate::cli::{Command, FormatArg};
use crate::error::Error;
use crate::files::{refuse_overwriting_inputs, write_atomic};
use crate::plan::{self, Plan};
use crate::report::{self, ScheduleReport};
use crate::simulate::simulate;
use std::path::Path;

/// What a successful command prints.
#[derive(Debug, Default, Clone, PartialEq, Eq)]
pub struct Printed {
    /// Standard output.
    pub stdout: String,
    /// Standard error (notes and warnings beside machine-readable output).
    pub stderr: String,
}

/// Load a plan file, or the built-in demo when none is named.
pub fn load(path: Option<&Path>) -> Result<Plan, Error> {
    match path {
        Some(p) => plan::load_plan(p),
        None => plan::parse_plan(plan::starter::DEMO_NAME, plan::starter::DEMO_PLAN),
    }
}

/// Validate, simulate and assemble the schedule report of a plan.
pub fn schedule_report(plan: &Plan) -> Result<ScheduleReport, Error> {
    let sim = simulate(plan)?;
    Ok(ScheduleReport::new(plan, sim))
}

/// Run one command.
pub fn run(command: &Command) -> Result<Printed, Error> {
    match command {
        Command::Schedule {
            plan,
            scenario,
            format,
            out,
        } => {
            if let (Some(o), Some(p)) = (out, plan) {
                refuse_overwriting_inputs(o, &[p.as_path()])?;
            }
            let plan = load(plan.as_deref())?;
            let r = schedule_report(&plan)?;
            let index = r.scenario_index(scenario.as_deref())?;
            let mut printed = Printed::default();
            let text = match format {
                FormatArg::Table => report::table::render(&r, index),
                FormatArg::Json => report::json::render(&r),
                FormatArg::Csv => {
                    printed.stderr = side_notes(&r);
                    report::csv::render(&r)
                }
            };
            match out {
                Some(o) => {
                    write_atomic(o, text.as_bytes(), false)?;
                    printed.stderr.push_str(&format!("wrote {}\n", o.display()));
                }
                None => printed.stdout = text,
            }
            Ok(printed)
        }
        Command::Check { plan } => {
            let plan = load(Some(plan))?;
            let r = schedule_report(&plan)?;
            Ok(Printed {
                stdout: report::check::render(&plan, &r),
                stderr: String::new(),
            })
        }
        Command::Init { file } => {
            let text = plan::starter::STARTER_PLAN;
            // The starter must itself be a valid plan (tested); check before writing.
            plan::parse_plan("starter plan", text)?;
            match file {
                Some(f) => {
                    write_atomic(f, text.as_bytes(), true)?;
                    Ok(Printed {
                        stdout: String::new(),
                        stderr: format!(
                            "wrote {}; edit it, then run `dosewright check {}`\n",
                            f.display(),
                            f.display()
                        ),
                    })
                }
                None => Ok(Printed {
                    stdout: text.to_string(),
                    stderr: String::new(),
                }),
            }
        }
        Command::Activities {
            text,
            met_min,
            met_max,
        } => {
            let lo = met_min.unwrap_or(0.0);
            let hi = met_max.unwrap_or(f64::INFINITY);
            for (v, name) in [(met_min, "--met-min"), (met_max, "--met-max")] {
                if let Some(x) = v {
                    if !x.is_finite() || *x < 0.0 || *x > 25.0 {
                        return Err(Error::Usage(format!("{name} {x}: allowed 0 to 25 MET")));
                    }
                }
            }
            if lo > hi {
                return Err(Error::Usage(format!(
                    "--met-min {lo} is above --met-max {hi}"
                )));
            }
            let rows = compendium::search(text.as_deref(), lo, hi);
            let mut query = String::new();
            if let Some(t) = text {
                query.push_str(&format!("matching \"{t}\""));
            }
            if met_min.is_some() || met_max.is_some() {
                let hi_s = if hi.is_finite() {
                    format!("{hi}")
                } else {
                    "any".to_string()
                };
                query.push_str(&format!(" between {lo} and {hi_s} MET"));
            }
            let query = if query.is_empty() {
                "in the built-in table".to_string()
            } else {
                query.trim().to_string()
            };
            Ok(Printed {
                stdout: report::activities::render(&rows, &query),
                stderr: String::new(),
            })
        }
    }
}

/// Warnings and cautions for standard error beside machine-readable output.
fn side_notes(r: &ScheduleReport) -> String {
    let mut s = report::table::warnings_text(r);
    s.push_str(&report::cautions_text(&r.screening));
    s
}
