//! `fit`: compensation read from the weigh-ins, in numbers and in words, with a
//! chart of measured against modelled mass.

use crate::report::chart::{LineChart, Series};
use crate::report::table::{align_numbers, new_table, warnings_text};
use crate::report::units::Units;
use crate::report::{LogSummary, ScheduleReport, cautions_text};
use crate::safety::{ScreeningOutcome, Warning};
use crate::simulate::fit::FitResult;
use serde::Serialize;

/// Everything `fit` reports; the fit's own keys sit at the top level (docs/file-formats.md section 4.4).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FitReport {
    /// Tool and version.
    pub tool: String,
    /// Plan file.
    pub plan: String,
    /// Participant code.
    pub participant_id: String,
    /// The log.
    pub log: Option<LogSummary>,
    /// The fit.
    #[serde(flatten)]
    pub fit: FitResult,
    /// What the number means, in words.
    pub meaning: String,
    /// Screening.
    pub screening: ScreeningOutcome,
    /// Warnings (the log's and the plan's).
    pub warnings: Vec<Warning>,
    /// Cautions.
    pub cautions: Vec<&'static str>,
}

impl FitReport {
    /// Assemble.
    pub fn new(
        schedule: &ScheduleReport,
        log: Option<LogSummary>,
        log_warnings: &[Warning],
        fit: FitResult,
    ) -> FitReport {
        let mut warnings = log_warnings.to_vec();
        warnings.extend(fit_warnings(&fit));
        warnings.extend(schedule.warnings.iter().cloned());
        let meaning = meaning(&fit, Units::default());
        FitReport {
            tool: schedule.tool.clone(),
            plan: schedule.plan.clone(),
            participant_id: schedule.participant_id.clone(),
            log,
            fit,
            meaning,
            screening: schedule.screening.clone(),
            warnings,
            cautions: schedule.cautions.clone(),
        }
    }
}

/// The fit's own warnings (docs/warnings.md): a baseline that disagrees with the
/// first weigh-in, an estimate at either end of the range, a loss beyond the
/// projection with every delivered session counted in full.
pub fn fit_warnings(fit: &FitResult) -> Vec<Warning> {
    let mut warnings = Vec::new();
    let gap = fit.first_weigh_in_kg - fit.plan_mass_kg;
    if gap.abs() > 2.0 * fit.residual_sd_kg.max(0.1) {
        warnings.push(Warning {
            code: "fit-baseline-disagrees",
            message: format!(
                "the plan's baseline mass {:.1} kg and the log's first weigh-in {:.1} kg differ by {:+.1} kg, more than twice the scatter of the weigh-ins about the model ({:.2} kg): check both; the fit estimates the starting mass from all weigh-ins ({:.1} kg)",
                fit.plan_mass_kg, fit.first_weigh_in_kg, gap, fit.residual_sd_kg, fit.baseline_estimate_kg
            ),
        });
    }
    if fit.at_upper_bound {
        warnings.push(Warning {
            code: "fit-at-bound",
            message: format!(
                "the estimate {:.2} sits at the upper end of the allowed range of {} ({}): the weigh-ins may be explained by something the model leaves out (water, a change of diet, measurement error), and the interval says nothing beyond the range",
                fit.estimate, fit.parameter, fit.range[1]
            ),
        });
    }
    if fit.at_lower_bound {
        warnings.push(Warning {
            code: "fit-at-lower-bound",
            message: format!(
                "the estimate {:.2} sits at the lower end of the allowed range of {} ({}): the participant lost more than even that allows, and the interval says nothing beyond the range",
                fit.estimate, fit.parameter, fit.range[0]
            ),
        });
    }
    let beyond = fit.loss_without_kg > 0.0 && fit.estimate < 0.0 || fit.at_lower_bound;
    if beyond {
        warnings.push(Warning {
            code: "fit-loss-beyond-projection",
            message: format!(
                "the weigh-ins fall faster than the projection with every delivered session counted in full ({:.1} kg by the last weigh-in): early on this is often water and glycogen; it can also be an unrecorded change of diet, or exercise energy entered gross where net was meant (or the reverse)",
                fit.loss_without_kg
            ),
        });
    }
    warnings
}

/// What the fitted number means, in words, with energies and masses in units `u`.
fn meaning(f: &FitResult, u: Units) -> String {
    let what = match f.parameter {
        "intake_fraction" => {
            "of the delivered exercise energy is offset, expressed as extra intake"
        }
        _ => {
            "of the delivered exercise energy is offset, expressed as less movement outside the sessions"
        }
    };
    let width = f.interval[1] - f.interval[0];
    let firmness = if width > 0.5 {
        "The interval is wide: the weigh-ins so far cannot pin the number down; more weeks of weigh-ins narrow it."
    } else if width > 0.2 {
        "The interval is moderate: read the number as a rough guide."
    } else {
        "The interval is narrow for a single person, but it only reflects scatter of the weigh-ins around the model, not the model's own error."
    };
    format!(
        "About {:.0}% (approximate 95% interval {:.0}% to {:.0}%) {what}: on average {} of the {} of exercise energy delivered over {} days. This is an effective compensation: weigh-ins alone cannot tell eating more from moving less or from metabolic adaptation, and they carry water and scale error (here an RMS residual of {} over {} weigh-ins). {firmness}",
        f.estimate * 100.0,
        f.interval[0] * 100.0,
        f.interval[1] * 100.0,
        u.per_day_text(f.extra_intake_kcal_per_day, 0),
        u.per_day_text(f.exercise_kcal_per_day, 0),
        f.span_days,
        u.mass_text(f.rmse_kg, 2),
        f.weigh_ins
    )
}

/// The table for a terminal, in units `u`.
pub fn render_table(r: &FitReport, u: Units) -> String {
    let f = &r.fit;
    let log = r.log.as_ref().map_or(String::new(), |l| {
        format!(" from {} up to {}", l.path, l.as_of)
    });
    let mut s = format!(
        "dosewright compensation read from the log: participant {} ({}){log}\nParameter: {} (other assumptions from scenario \"{}\")\n\n",
        r.participant_id, r.plan, f.parameter, f.scenario
    );
    s.push_str(&format!(
        "Estimate {:.3}; approximate 95% interval {:.3} to {:.3} ({})\nStarting mass estimated from all weigh-ins: {} (the plan says {})\nImplied extra intake: {} on average (of {} of exercise energy delivered)\nRMS residual {} over {} weigh-ins spanning {} days\n\n",
        f.estimate,
        f.interval[0],
        f.interval[1],
        f.interval_method,
        u.mass_text(f.baseline_estimate_kg, 1),
        u.mass_text(f.plan_mass_kg, 1),
        u.per_day_text(f.extra_intake_kcal_per_day, 0),
        u.per_day_text(f.exercise_kcal_per_day, 0),
        u.mass_text(f.rmse_kg, 2),
        f.weigh_ins,
        f.span_days
    ));
    s.push_str(&format!("What it means: {}\n\n", meaning(f, u)));
    let m = u.mass_label();
    let mut t = new_table(&[
        "date",
        &format!("measured [{m}]"),
        &format!("model [{m}]"),
        &format!("residual [{m}]"),
    ]);
    for x in &f.residuals_kg {
        t.add_row(vec![
            x.date.to_string(),
            format!("{:.2}", u.mass(x.measured_kg)),
            format!("{:.2}", u.mass(x.model_kg)),
            format!("{:+.2}", u.mass(x.residual)),
        ]);
    }
    align_numbers(&mut t, 1);
    s.push_str(&format!("Weigh-ins against the fitted model\n{t}\n\n"));
    s.push_str(&warnings_text(&r.warnings));
    s.push('\n');
    s.push_str(&cautions_text(&r.screening));
    s
}

/// Measured mass against the model with and without the fitted compensation, in
/// units `u`.
pub fn chart(r: &FitReport, u: Units) -> LineChart {
    let f = &r.fit;
    let weeks = |v: &[(u32, f64)]| {
        v.iter()
            .map(|(d, m)| (f64::from(*d) / 7.0, u.mass(*m)))
            .collect::<Vec<_>>()
    };
    let measured: Vec<(f64, f64)> = f
        .residuals_kg
        .iter()
        .map(|x| (f64::from(x.day) / 7.0, u.mass(x.measured_kg)))
        .collect();
    LineChart {
        title: "Measured and modelled body mass".to_string(),
        x_label: "Time from start [weeks]".to_string(),
        y_label: format!("Body mass [{}]", u.mass_label()),
        series: vec![
            Series {
                name: "measured weigh-ins".to_string(),
                points: measured,
                dashed: false,
                slot: 2,
                markers_only: true,
            },
            Series {
                name: format!("model, no {}", f.parameter.replace('_', " ")),
                points: weeks(&f.model_without),
                dashed: true,
                slot: 1,
                markers_only: false,
            },
            Series {
                name: format!(
                    "model, fitted {} = {:.2}",
                    f.parameter.replace('_', " "),
                    f.estimate
                ),
                points: weeks(&f.model_fitted),
                dashed: false,
                slot: 0,
                markers_only: false,
            },
        ],
        band: None,
        marker: None,
        caption: format!(
            "Weigh-ins against the model run with the delivered sessions from the starting mass estimated from all weigh-ins. {} Model estimates, not measurements. Screen before exercise, obtain clearance where indicated, and stop on warning signs; local clinical rules and the licensed professionals responsible decide.",
            "The fitted value is an effective compensation: weigh-ins cannot tell eating more from moving less."
        ),
        x_range: None,
        y_includes_zero: false,
    }
}
