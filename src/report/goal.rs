//! `goal`: the smallest dose of the plan's kind that reaches a loss by a week, per
//! scenario, as a table or JSON (keys per docs/file-formats.md section 4).

use crate::report::table::{align_numbers, new_table, warnings_text};
use crate::report::units::Units;
use crate::report::{ScheduleReport, cautions_text};
use crate::safety::{ScreeningOutcome, Warning};
use crate::simulate::goal::{GoalAnswer, GoalRequest};
use serde::Serialize;

/// Everything `goal` reports.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GoalReport {
    /// Tool and version.
    pub tool: String,
    /// Plan file.
    pub plan: String,
    /// Participant code.
    pub participant_id: String,
    /// Baseline mass, kg.
    pub baseline_mass_kg: f64,
    /// The request.
    pub request: GoalRequest,
    /// The loss as a percentage of baseline mass.
    pub lose_percent: f64,
    /// One answer per scenario.
    pub scenarios: Vec<GoalAnswer>,
    /// Screening.
    pub screening: ScreeningOutcome,
    /// Warnings (the plan's, and the goal's own).
    pub warnings: Vec<Warning>,
    /// Cautions.
    pub cautions: Vec<&'static str>,
}

impl GoalReport {
    /// Assemble; `schedule` is the plan's own schedule report (for warnings and screening).
    pub fn new(
        schedule: &ScheduleReport,
        request: GoalRequest,
        scenarios: Vec<GoalAnswer>,
    ) -> GoalReport {
        let m0 = schedule.baseline.mass_kg;
        let mut warnings = Vec::new();
        let rate = request.lose_kg / f64::from(request.by_week);
        if rate > 0.01 * m0 {
            warnings.push(Warning {
                code: "goal-rate-over-1-percent",
                message: format!(
                    "the goal needs {rate:.2} kg a week on average, more than 1% of baseline mass ({:.2} kg) a week; faster loss needs clinical supervision",
                    0.01 * m0
                ),
            });
        }
        warnings.extend(
            schedule
                .warnings
                .iter()
                .filter(|w| !w.code.starts_with("session-over-max"))
                .cloned(),
        );
        GoalReport {
            tool: schedule.tool.clone(),
            plan: schedule.plan.clone(),
            participant_id: schedule.participant_id.clone(),
            baseline_mass_kg: m0,
            request,
            lose_percent: request.lose_kg / m0 * 100.0,
            scenarios,
            screening: schedule.screening.clone(),
            warnings,
            cautions: schedule.cautions.clone(),
        }
    }
}

/// The dose in the display unit, with the decimals of the solver's resolution (a
/// step in kJ is 4.184 times the step in kcal, so they still show it).
fn fmt_dose(a: &GoalAnswer, u: Units) -> String {
    let decimals = usize::from(a.resolution < 1.0);
    match a.dose {
        Some(d) => format!("{:.decimals$}", u.dose(a.dose_unit, d)),
        None => "out of reach".to_string(),
    }
}

/// The resolution the dose is rounded up to, in the plan's unit and, when converted,
/// in the display unit.
fn fmt_resolution(a: Option<&GoalAnswer>, u: Units) -> String {
    let Some(a) = a else {
        return "1".to_string();
    };
    let plan_unit = Units::default().dose_label(a.dose_unit);
    let shown = u.dose_label(a.dose_unit);
    if shown == plan_unit {
        format!("{}", a.resolution)
    } else {
        // 0.1 kcal/kg/week is 0.4184 kJ/kg/week: four decimals, trailing zeros cut.
        let step = format!("{:.4}", u.dose(a.dose_unit, a.resolution));
        let step = step.trim_end_matches('0').trim_end_matches('.');
        format!("{} {plan_unit} ({step} {shown})", a.resolution)
    }
}

/// The table for a terminal, in units `u`.
pub fn render_table(r: &GoalReport, u: Units) -> String {
    let first = r.scenarios.first();
    let unit = first.map_or(String::new(), |a| u.dose_label(a.dose_unit));
    let m = u.mass_label();
    let mut s = format!(
        "dosewright dose for a goal: participant {} ({})\nGoal: lose {} ({:.1}% of {}) by the end of week {}\nDose kind: {unit}, rounded up to {}; solved on the full model (ramp, rounding, maximum and weekly re-prescription as in `schedule`)\n\n",
        r.participant_id,
        r.plan,
        u.mass_text(r.request.lose_kg, 2),
        r.lose_percent,
        u.mass_text(r.baseline_mass_kg, 1),
        r.request.by_week,
        fmt_resolution(first, u)
    );
    let mut t = new_table(&[
        "scenario",
        "reachable",
        &format!("dose [{unit}]"),
        "min/session week 1",
        &format!("min/session week {}", r.request.by_week),
        &format!("loss [{m}]"),
        &format!("one step lower [{m}]"),
    ]);
    for a in &r.scenarios {
        let opt = |v: Option<f64>| v.map_or("-".to_string(), |x| format!("{:.3}", u.mass(x)));
        let mins = |v: Option<u32>| v.map_or("-".to_string(), |m| m.to_string());
        t.add_row(vec![
            a.name.clone(),
            if a.reachable {
                "yes".into()
            } else {
                "no".into()
            },
            fmt_dose(a, u),
            mins(a.minutes_week1),
            mins(a.minutes_goal_week),
            opt(a.loss_kg),
            opt(a.loss_one_step_lower_kg),
        ]);
    }
    align_numbers(&mut t, 2);
    s.push_str(&format!("{t}\n"));
    for a in &r.scenarios {
        if let Some(why) = &a.reason {
            s.push_str(&format!("  {}: {why}\n", a.name));
        }
    }
    s.push('\n');
    s.push_str(&warnings_text(&r.warnings));
    s.push('\n');
    s.push_str(&cautions_text(&r.screening));
    s
}
