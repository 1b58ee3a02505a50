//! The dose-response table: the plan simulated at each of several doses of its own
//! kind, the change from baseline read at checkpoint weeks.

use crate::error::Error;
use crate::plan::Plan;
use crate::simulate::observed::Observed;
use crate::simulate::simulate_observed;
use serde::Serialize;

/// One dose of a dose-response table: change at the checkpoints per scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DoseRow {
    /// The dose, in the plan's unit.
    pub dose: f64,
    /// Per scenario (empty when the dose is out of the model's range).
    pub scenarios: Vec<DoseScenario>,
    /// Why this dose drives the model out of its valid range (None when it does not):
    /// the scenario, day, date and what left the range. The other doses still run.
    pub out_of_range: Option<String>,
    /// Sessions (or bouts) over the protocol's `max_session_minutes` in some protocol
    /// week of some scenario, before the over-maximum policy acted.
    pub over_max: bool,
    /// The longest session (minutes at target) of any protocol week and scenario
    /// (None when out of range).
    pub longest_session_minutes: Option<u32>,
}

/// One scenario at one dose.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DoseScenario {
    /// Scenario name.
    pub name: String,
    /// Per checkpoint.
    pub rows: Vec<DosePoint>,
}

/// Change at one checkpoint.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DosePoint {
    /// Week.
    pub week: u32,
    /// Mass change from baseline, kg.
    pub mass_change_kg: f64,
    /// Fat-mass change, kg.
    pub fat_mass_change_kg: f64,
    /// Minutes per session that week.
    pub minutes_per_session: u32,
}

/// The dose-response table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DoseResponse {
    /// The plan's dose key.
    pub dose_unit: &'static str,
    /// One entry per dose, in the order asked.
    pub doses: Vec<DoseRow>,
    /// The protocol's longest session, minutes (None: no maximum).
    pub max_session_minutes: Option<f64>,
}

/// Simulate `plan` (re-planned from `observed`, if any) once per dose of `doses`, in
/// the plan's own dose kind and unit, and read the change from baseline at `weeks`
/// (1-based weeks of the simulation, each within the plan's total weeks). A dose that
/// drives the model out of its valid range gets a row saying why, and the others are
/// still given (docs/commands.md, compare); any other error stops the table.
pub fn dose_response(
    plan: &Plan,
    observed: Option<&Observed>,
    doses: &[f64],
    weeks: &[u32],
) -> Result<DoseResponse, Error> {
    let amount = plan.protocol.dose.amount;
    let mut rows = Vec::with_capacity(doses.len());
    for &d in doses {
        let mut p = plan.clone();
        p.protocol.dose.amount = amount.with_value(d);
        let sim = match simulate_observed(&p, observed) {
            Ok(sim) => sim,
            Err(Error::OutOfRange(e)) => {
                rows.push(DoseRow {
                    dose: d,
                    scenarios: Vec::new(),
                    out_of_range: Some(format!(
                        "scenario \"{}\" on day {} ({}): {}",
                        e.scenario, e.day, e.date, e.what
                    )),
                    over_max: false,
                    longest_session_minutes: None,
                });
                continue;
            }
            Err(e) => return Err(e),
        };
        let protocol_weeks = plan.protocol.weeks as usize;
        let over_max = sim.scenarios.iter().any(|sc| {
            sc.weeks[..protocol_weeks]
                .iter()
                .any(|w| w.over_max.is_some())
        });
        let longest = sim
            .scenarios
            .iter()
            .flat_map(|sc| {
                sc.weeks[..protocol_weeks]
                    .iter()
                    .map(|w| w.minutes_per_session)
            })
            .max();
        let m0 = sim.baseline.mass_kg;
        let f0 = sim.baseline.fat_mass_kg;
        let scenarios = sim
            .scenarios
            .iter()
            .map(|sc| DoseScenario {
                name: sc.name.clone(),
                rows: weeks
                    .iter()
                    .map(|&n| {
                        let w = &sc.weeks[n as usize - 1];
                        DosePoint {
                            week: n,
                            mass_change_kg: w.end.mass_kg - m0,
                            fat_mass_change_kg: w.end.fat_mass_kg - f0,
                            minutes_per_session: w.minutes_per_session,
                        }
                    })
                    .collect(),
            })
            .collect();
        rows.push(DoseRow {
            dose: d,
            scenarios,
            out_of_range: None,
            over_max,
            longest_session_minutes: longest,
        });
    }
    Ok(DoseResponse {
        dose_unit: amount.key(),
        doses: rows,
        max_session_minutes: plan.protocol.max_session_minutes,
    })
}
