//! The cohort charts: mass change per arm, minutes per session and power.

use super::standard::caption;
use super::*;
use crate::report::units::Units;

/// Cohort: the distribution of mass change at the end of the protocol per arm (first
/// scenario), as empirical cumulative distributions: for each arm the share of its
/// participants whose change is at most x.
pub fn cohort_mass_chart(r: &crate::report::cohort::CohortReport, u: Units) -> LineChart {
    let series = r
        .arms
        .iter()
        .enumerate()
        .filter_map(|(slot, a)| {
            let s = a.scenarios.first()?;
            let mut v: Vec<f64> = s.mass_changes.iter().map(|m| u.mass(*m)).collect();
            v.sort_by(f64::total_cmp);
            let n = v.len() as f64;
            let mut points = Vec::with_capacity(2 * v.len());
            for (i, x) in v.iter().enumerate() {
                points.push((*x, i as f64 / n * 100.0));
                points.push((*x, (i + 1) as f64 / n * 100.0));
            }
            Some(Series {
                name: a.name.clone(),
                points,
                dashed: false,
                slot,
                markers_only: false,
            })
        })
        .collect();
    let scenario = r
        .arms
        .first()
        .and_then(|a| a.scenarios.first())
        .map_or(String::new(), |s| s.name.clone());
    LineChart {
        title: format!(
            "Mass change at week {} by arm (scenario \"{scenario}\")",
            r.weeks
        ),
        x_label: format!("Mass change from baseline [{}]", u.mass_label()),
        y_label: "Participants with at most this change [%]".to_string(),
        series,
        band: None,
        marker: None,
        caption: caption(
            "Each line is one arm's empirical cumulative distribution: read the share of participants losing at least a given amount at the line's height.",
        ),
        x_range: None,
        y_includes_zero: true,
    }
}

/// Cohort: minutes per session over the protocol weeks per arm (first scenario),
/// median (solid) with the 5th and 95th percentiles over participants (dashed).
pub fn cohort_minutes_chart(r: &crate::report::cohort::CohortReport) -> LineChart {
    let mut series = Vec::new();
    for (slot, a) in r.arms.iter().enumerate().filter(|(_, a)| !a.control) {
        let Some(s) = a.scenarios.first() else {
            continue;
        };
        let line =
            |name: String, f: fn(&crate::simulate::cohort::WeekMinutes) -> f64, dashed| Series {
                name,
                points: s
                    .minutes_by_week
                    .iter()
                    .map(|w| (f64::from(w.week), f(w)))
                    .collect(),
                dashed,
                slot,
                markers_only: false,
            };
        series.push(line(format!("{}: median", a.name), |w| w.median, false));
        series.push(line(format!("{}: 5th percentile", a.name), |w| w.p5, true));
        series.push(line(
            format!("{}: 95th percentile", a.name),
            |w| w.p95,
            true,
        ));
    }
    // The maximum session minutes are a level of minutes, so a dashed horizontal
    // line across the weeks (not a vertical line at a week).
    if let Some(m) = r.max_session_minutes {
        series.push(Series {
            name: format!("maximum {m:.0} min"),
            points: vec![(1.0, m), (f64::from(r.weeks.max(2)), m)],
            dashed: true,
            slot: r.arms.len(),
            markers_only: false,
        });
    }
    LineChart {
        title: "Minutes per session by week and arm, over participants".to_string(),
        x_label: "Protocol week".to_string(),
        y_label: "Minutes of the longest session [min]".to_string(),
        series,
        band: None,
        marker: None,
        caption: caption(
            "Solid: median over participants; dashed: 5th and 95th percentiles. A participant who has dropped out counts as 0 minutes in every week after the last one exercised, so the percentiles fall as drop-out accumulates. The dashed level line across the weeks: the maximum session length. Minutes rise as mass falls for an energy dose.",
        ),
        x_range: Some((1.0, f64::from(r.weeks.max(2)))),
        y_includes_zero: true,
    }
}

/// Cohort: power against participants per arm for each arm compared with the first
/// arm (first scenario), by the two-sample normal approximation with the simulated
/// difference and SD (Altman 1991), recruitment divided by the completion rate.
pub fn cohort_power_chart(r: &crate::report::cohort::CohortReport) -> LineChart {
    let first = r.arms.first().map(|a| a.name.clone()).unwrap_or_default();
    let scenario = r
        .arms
        .first()
        .and_then(|a| a.scenarios.first())
        .map(|s| s.name.clone())
        .unwrap_or_default();
    let comps: Vec<&crate::report::cohort::Comparison> = r
        .comparisons
        .iter()
        .filter(|c| c.arms[0] == first && c.scenario == scenario && c.mean_difference_kg != 0.0)
        .collect();
    let largest = comps
        .iter()
        .filter_map(|c| c.n_per_arm_power90)
        .fold(20.0, f64::max)
        .min(5000.0);
    let top = nice_number(largest * 1.3, true);
    let series = comps
        .iter()
        .enumerate()
        .map(|(slot, c)| Series {
            name: format!("{} vs {}", c.arms[1], c.arms[0]),
            points: (0..=100)
                .map(|i| {
                    let n = top * f64::from(i) / 100.0;
                    (n, c.power_percent(n))
                })
                .collect(),
            dashed: false,
            slot: slot + 1,
            markers_only: false,
        })
        .collect();
    LineChart {
        title: format!(
            "Power against participants per arm (scenario \"{scenario}\", week {})",
            r.weeks
        ),
        x_label: "Participants recruited per arm".to_string(),
        y_label: "Power [%]".to_string(),
        series,
        band: None,
        marker: None,
        caption: caption(
            "Two-sided alpha 0.05, two-sample normal approximation with the simulated difference and SD in mass change; recruits times the completion rate complete.",
        ),
        x_range: Some((0.0, top)),
        y_includes_zero: true,
    }
}
