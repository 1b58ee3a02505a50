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
    /// Per scenario.
    pub scenarios: Vec<DoseScenario>,
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
}

/// Simulate `plan` (re-planned from `observed`, if any) once per dose of `doses`, in
/// the plan's own dose kind and unit, and read the change from baseline at `weeks`
/// (1-based weeks of the simulation, each within the plan's total weeks).
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
        let sim = simulate_observed(&p, observed)?;
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
        rows.push(DoseRow { dose: d, scenarios });
    }
    Ok(DoseResponse {
        dose_unit: amount.key(),
        doses: rows,
    })
}
