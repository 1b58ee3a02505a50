//! Writing the SVG charts of a report.

use crate::error::Error;
use crate::output::write_charts;
use crate::plan::Plan;
use crate::report::ScheduleReport;
use crate::report::chart::{Band, LineChart, logged_charts, standard_charts};
use crate::report::units::Units;
use crate::simulate::observed::Observed;
use std::path::Path;

/// The participant's screening outcome and the stop signs, for chart captions.
pub fn screening_caption(s: &crate::safety::ScreeningOutcome) -> String {
    format!(
        " Screening: {}. Stop at once on chest pain, unusual breathlessness, dizziness or palpitations.",
        s.recommendation
    )
}

/// A file-name stem from a participant code.
pub fn stem(id: &str) -> String {
    id.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '_'
            }
        })
        .collect()
}

/// Write a set of charts named `stem-NAME.svg` into `dir`; returns the notes for
/// standard error.
pub fn write(dir: &Path, stem: &str, charts: &[(&str, LineChart)]) -> Result<String, Error> {
    let rendered: Vec<(&str, String)> = charts.iter().map(|(n, c)| (*n, c.render())).collect();
    let paths = write_charts(dir, stem, &rendered)?;
    Ok(paths
        .iter()
        .map(|p| format!("wrote {}\n", p.display()))
        .collect())
}

/// Write the cohort's charts into `dir`; returns the notes for standard error.
pub fn write_cohort_charts(
    dir: &Path,
    r: &crate::report::cohort::CohortReport,
    u: Units,
) -> Result<String, Error> {
    use crate::report::chart::{cohort_mass_chart, cohort_minutes_chart, cohort_power_chart};
    let mut charts = vec![
        ("mass-change", cohort_mass_chart(r, u)),
        ("minutes", cohort_minutes_chart(r)),
        ("power", cohort_power_chart(r)),
    ];
    let screening = crate::report::cohort::screening_line(&r.screening);
    for (_, c) in charts.iter_mut() {
        c.caption.push_str(&format!(
            " {screening} Stop at once on chest pain, unusual breathlessness, dizziness or palpitations."
        ));
    }
    write(dir, &stem(&r.name), &charts)
}

/// Write the four charts into `dir` in units `u`; returns the notes for standard
/// error. With a log (`observed`), the weigh-ins are drawn as points beside one
/// projection per scenario with the delivered sessions, not re-anchored
/// (docs/design.md, "Charts with a log"), and without the band.
pub fn write_schedule_charts(
    dir: &Path,
    r: &ScheduleReport,
    plan: &Plan,
    observed: Option<&Observed>,
    u: Units,
) -> Result<String, Error> {
    let mut charts = match observed {
        Some(obs) => {
            let delivered = crate::simulate::simulate_delivered(plan, obs)?;
            let weigh_ins = crate::report::chart::weigh_in_points(obs);
            logged_charts(
                &r.scenarios,
                &delivered.scenarios,
                &weigh_ins,
                r.protocol.weeks,
                u,
            )
        }
        None => standard_charts(&r.scenarios, r.protocol.weeks, band(r).as_ref(), u),
    };
    for (_, c) in charts.iter_mut() {
        c.caption.push_str(&screening_caption(&r.screening));
    }
    write(dir, &stem(&r.participant_id), &charts)
}

/// The sensitivity band of the first scenario, in kg, from the baseline.
fn band(r: &ScheduleReport) -> Option<Band> {
    let m0 = r.baseline.mass_kg;
    r.projection_band
        .as_ref()
        .and_then(|b| b.scenarios.first())
        .map(|sb| Band {
            name: format!("sensitivity band, RMR and body-fat error ({})", sb.name),
            points: std::iter::once((0.0, m0, m0))
                .chain(
                    sb.weeks
                        .iter()
                        .map(|w| (f64::from(w.week), w.mass_low_kg, w.mass_high_kg)),
                )
                .collect(),
        })
}
