//! The standard charts with a participant log (docs/design.md, "Charts with a
//! log"): the weigh-ins as points at their dates beside one projection per scenario
//! from the baseline with the delivered sessions, never re-anchored at a weigh-in,
//! so the lines have no zigzag and the energy chart counts no scale noise as
//! deficit. The charts stay neutral: no shaded region around the projection, since
//! adherence is counted from the delivered sessions, not from where weigh-ins fall.

use super::standard::{caption, composition_chart, energy_chart, minutes_chart};
use super::*;
use crate::report::units::Units;
use crate::simulate::ScenarioRun;

/// One weigh-in of the log: days since the start and the measured mass, kg.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WeighInPoint {
    /// Days since the protocol start.
    pub day: u32,
    /// Measured body mass, kg.
    pub mass_kg: f64,
}

/// The log's weigh-ins up to its as-of date, as chart points.
pub fn weigh_in_points(obs: &crate::simulate::observed::Observed) -> Vec<WeighInPoint> {
    obs.weigh_ins
        .iter()
        .filter(|w| w.day <= obs.as_of_day)
        .map(|w| WeighInPoint {
            day: w.day,
            mass_kg: w.mass_kg,
        })
        .collect()
}

/// The four standard charts with a log. `delivered` holds the runs with the
/// delivered sessions and no re-anchoring (mass, composition and energy);
/// `replanned` the schedule's runs, whose minutes are those re-prescribed from the
/// log (minutes). Masses and energy in units `u`.
pub fn logged_charts(
    replanned: &[ScenarioRun],
    delivered: &[ScenarioRun],
    weigh_ins: &[WeighInPoint],
    protocol_weeks: u32,
    u: Units,
) -> Vec<(&'static str, LineChart)> {
    let mut energy = energy_chart(delivered, protocol_weeks, u);
    energy.title = "Exercise energy and modelled deficit by week".to_string();
    energy.caption = caption(
        "Solid: net exercise energy of each week (the delivered sessions up to the log's last date, as prescribed after it). Dashed: energy lost from the body's stores each week in the model with those sessions, from all causes; the model is run from the baseline and not re-anchored at the weigh-ins, so the scale's day-to-day scatter is not counted as deficit. Below zero the stores refill.",
    );
    let mut composition = composition_chart(delivered, protocol_weeks, u);
    composition.caption.insert_str(
        0,
        "The model with the delivered sessions, not re-anchored at the weigh-ins. ",
    );
    vec![
        (
            "mass",
            logged_mass_chart(delivered, weigh_ins, protocol_weeks, u),
        ),
        ("composition", composition),
        ("minutes", minutes_chart(replanned, protocol_weeks)),
        ("energy", energy),
    ]
}

/// Body mass: one projection per scenario from the baseline with the delivered
/// sessions (lines), and the log's weigh-ins at their dates (points, one colour and
/// shape of their own, no line). No band.
pub fn logged_mass_chart(
    delivered: &[ScenarioRun],
    weigh_ins: &[WeighInPoint],
    protocol_weeks: u32,
    u: Units,
) -> LineChart {
    let mut chart = super::standard::mass_chart(delivered, protocol_weeks, None, u);
    chart.series.push(Series {
        name: "weigh-ins (log)".to_string(),
        points: weigh_ins
            .iter()
            .map(|w| (f64::from(w.day) / 7.0, u.mass(w.mass_kg)))
            .collect(),
        dashed: false,
        slot: delivered.len(),
        markers_only: true,
    });
    chart.title = "Projected body mass by scenario and the weigh-ins".to_string();
    chart.caption = caption(
        "Lines: body mass at the end of each week projected from the baseline (week 0) with the sessions delivered up to the log's last date and as prescribed after it, one line per scenario, not re-anchored at the weigh-ins. Points: the log's weigh-ins at their dates. Adherence is counted from the delivered sessions (the schedule's adherence table), not from where the weigh-ins fall.",
    );
    chart
}
