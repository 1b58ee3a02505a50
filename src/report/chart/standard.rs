//! The four standard charts of a plan's scenarios: body mass, composition, minutes
//! per session and energy.

use super::*;
use crate::report::units::Units;
use crate::simulate::{ScenarioRun, WeekEnd};

/// The x range of every standard chart: week 0 to the last week of any scenario.
pub(super) fn week_range(runs: &[ScenarioRun], protocol_weeks: u32) -> (f64, f64) {
    let last = runs
        .iter()
        .filter_map(|r| r.weeks.last().map(|w| w.week))
        .max()
        .unwrap_or(protocol_weeks)
        .max(protocol_weeks)
        .max(1);
    (0.0, f64::from(last))
}

pub(super) fn protocol_marker(protocol_weeks: u32) -> (f64, String) {
    (
        f64::from(protocol_weeks),
        format!("end of protocol (week {protocol_weeks})"),
    )
}

pub(super) fn caption(what: &str) -> String {
    format!("{what} {CAUTION}")
}

/// A week-end quantity from the baseline (x = 0) to the last week.
pub(super) fn trajectory(
    run: &ScenarioRun,
    baseline: f64,
    value: impl Fn(&WeekEnd) -> f64,
) -> Vec<(f64, f64)> {
    std::iter::once((0.0, baseline))
        .chain(run.weeks.iter().map(|w| (f64::from(w.week), value(&w.end))))
        .collect()
}

/// Per-week amounts from a running total: each week's total less the week before's
/// (the first week's less zero).
pub(super) fn per_week<'a>(
    weeks: impl Iterator<Item = (u32, f64)> + 'a,
) -> impl Iterator<Item = (f64, f64)> + 'a {
    weeks.scan(0.0, |before, (week, total)| {
        let amount = total - *before;
        *before = total;
        Some((f64::from(week), amount))
    })
}

/// Body mass at the end of each week per scenario, from the baseline at week 0, the
/// end of the protocol marked, with an optional band (in kg) beneath the lines; masses
/// shown in units `u`.
pub fn mass_chart(
    runs: &[ScenarioRun],
    protocol_weeks: u32,
    band: Option<&Band>,
    u: Units,
) -> LineChart {
    let series = runs
        .iter()
        .enumerate()
        .map(|(slot, r)| Series {
            name: r.name.clone(),
            points: trajectory(
                r,
                u.mass(r.weeks.first().map_or(f64::NAN, |w| w.reference_mass_kg)),
                |e| u.mass(e.mass_kg),
            ),
            dashed: false,
            slot,
            markers_only: false,
        })
        .collect();
    let what = match band {
        Some(b) => format!(
            "Projected body mass at the end of each week; week 0 is the baseline. Shaded: {}.",
            b.name
        ),
        None => "Projected body mass at the end of each week; week 0 is the baseline.".to_string(),
    };
    let band = band.map(|b| Band {
        name: b.name.clone(),
        points: b
            .points
            .iter()
            .map(|&(x, lo, hi)| (x, u.mass(lo), u.mass(hi)))
            .collect(),
    });
    LineChart {
        title: "Projected body mass by scenario".to_string(),
        x_label: "Time from start [weeks]".to_string(),
        y_label: format!("Body mass [{}]", u.mass_label()),
        series,
        band,
        marker: Some(protocol_marker(protocol_weeks)),
        caption: caption(&what),
        x_range: Some(week_range(runs, protocol_weeks)),
        y_includes_zero: false,
    }
}

/// Change of fat mass (solid) and fat-free mass (dashed) from the baseline at the
/// end of each week per scenario, one colour per scenario. Changes, not totals,
/// share the axis: the two masses lie tens of kilograms apart while they change by
/// a few, so on one axis of totals both lines would look flat. The caption gives the
/// baseline masses. Masses shown in units `u`.
pub fn composition_chart(runs: &[ScenarioRun], protocol_weeks: u32, u: Units) -> LineChart {
    let mut series = Vec::with_capacity(2 * runs.len());
    for (slot, r) in runs.iter().enumerate() {
        let o = &r.outcome;
        let fat0 = o.fat_mass_kg - o.fat_mass_change_kg;
        let lean0 = o.fat_free_mass_kg - o.fat_free_mass_change_kg;
        series.push(Series {
            name: format!("{}: fat", r.name),
            points: trajectory(r, 0.0, |e| u.mass(e.fat_mass_kg - fat0)),
            dashed: false,
            slot,
            markers_only: false,
        });
        series.push(Series {
            name: format!("{}: fat-free", r.name),
            points: trajectory(r, 0.0, |e| u.mass(e.fat_free_mass_kg - lean0)),
            dashed: true,
            slot,
            markers_only: false,
        });
    }
    let baseline = runs.first().map_or(String::new(), |r| {
        let o = &r.outcome;
        format!(
            " (fat mass {}, fat-free mass {})",
            u.mass_text(o.fat_mass_kg - o.fat_mass_change_kg, 1),
            u.mass_text(o.fat_free_mass_kg - o.fat_free_mass_change_kg, 1)
        )
    });
    LineChart {
        title: "Projected change in fat mass and fat-free mass by scenario".to_string(),
        x_label: "Time from start [weeks]".to_string(),
        y_label: format!("Change from baseline [{}]", u.mass_label()),
        series,
        band: None,
        marker: Some(protocol_marker(protocol_weeks)),
        caption: caption(&format!(
            "Fat mass (solid) and fat-free mass (dashed) at the end of each week, less the baseline{baseline}; week 0 is the baseline."
        )),
        x_range: Some(week_range(runs, protocol_weeks)),
        y_includes_zero: true,
    }
}

/// Minutes per session in each protocol week per scenario; the lines stop at the
/// end of the protocol (follow-up weeks have no sessions).
pub fn minutes_chart(runs: &[ScenarioRun], protocol_weeks: u32) -> LineChart {
    let series = runs
        .iter()
        .enumerate()
        .map(|(slot, r)| Series {
            name: r.name.clone(),
            points: r
                .weeks
                .iter()
                .filter(|w| w.week <= protocol_weeks)
                .map(|w| (f64::from(w.week), f64::from(w.minutes_per_session)))
                .collect(),
            dashed: false,
            slot,
            markers_only: false,
        })
        .collect();
    LineChart {
        title: "Prescribed minutes per session by week".to_string(),
        x_label: "Time from start [weeks]".to_string(),
        y_label: "Minutes per session [min]".to_string(),
        series,
        band: None,
        marker: Some(protocol_marker(protocol_weeks)),
        caption: caption(
            "Minutes of each session, re-prescribed every week from the projected mass; no sessions after the protocol.",
        ),
        x_range: Some(week_range(runs, protocol_weeks)),
        y_includes_zero: true,
    }
}

/// Prescribed net exercise energy per protocol week (solid) against the deficit
/// achieved per week (dashed), per scenario: week-to-week differences of the
/// running totals. Energy shown in units `u`.
pub fn energy_chart(runs: &[ScenarioRun], protocol_weeks: u32, u: Units) -> LineChart {
    let mut series = Vec::with_capacity(2 * runs.len());
    for (slot, r) in runs.iter().enumerate() {
        let weeks = || r.weeks.iter();
        series.push(Series {
            name: format!("{}: prescribed", r.name),
            points: per_week(weeks().map(|w| (w.week, u.energy(w.end.prescribed_net_kcal))))
                .filter(|(x, _)| *x <= f64::from(protocol_weeks))
                .collect(),
            dashed: false,
            slot,
            markers_only: false,
        });
        series.push(Series {
            name: format!("{}: achieved", r.name),
            points: per_week(weeks().map(|w| (w.week, u.energy(w.end.achieved_deficit_kcal))))
                .collect(),
            dashed: true,
            slot,
            markers_only: false,
        });
    }
    LineChart {
        title: "Prescribed exercise energy and achieved deficit by week".to_string(),
        x_label: "Time from start [weeks]".to_string(),
        y_label: format!("Energy per week [{}/week]", u.energy_label()),
        series,
        band: None,
        marker: Some(protocol_marker(protocol_weeks)),
        caption: caption(
            "Solid: net exercise energy prescribed each week. Dashed: energy lost from the body's stores each week, from all causes; below zero the stores refill.",
        ),
        x_range: Some(week_range(runs, protocol_weeks)),
        y_includes_zero: true,
    }
}

/// The four standard charts, named `mass`, `composition`, `minutes` and `energy`
/// for [`crate::output::write_charts`], in units `u` (the band in kg).
pub fn standard_charts(
    runs: &[ScenarioRun],
    protocol_weeks: u32,
    band: Option<&Band>,
    u: Units,
) -> Vec<(&'static str, LineChart)> {
    vec![
        ("mass", mass_chart(runs, protocol_weeks, band, u)),
        ("composition", composition_chart(runs, protocol_weeks, u)),
        ("minutes", minutes_chart(runs, protocol_weeks)),
        ("energy", energy_chart(runs, protocol_weeks, u)),
    ]
}
