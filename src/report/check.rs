//! `check`: the plan's resolved assumptions, every default made explicit.

use crate::plan::Plan;
use crate::report::table::{baseline_text, protocol_text, warnings_text};
use crate::report::units::Units;
use crate::report::{ScheduleReport, assumptions_text, cautions_text};

/// Render the resolved assumptions of a valid plan.
pub fn render(plan: &Plan, r: &ScheduleReport, u: Units) -> String {
    let c = &plan.constants;
    let p = &plan.protocol;
    let mut s = format!(
        "{}: the plan is valid.\n\nParticipant {}: {:?}, {:.0} years, {:.1} {}\n",
        r.plan,
        r.participant_id,
        plan.participant.subject.sex,
        plan.participant.subject.age_years,
        u.height(plan.participant.subject.height_cm),
        u.height_label()
    )
    .replace("Female", "female")
    .replace("Male", "male");
    s.push_str(&baseline_text(r, u));
    s.push('\n');
    s.push_str(&protocol_text(r, u));
    let ramp = p
        .ramp
        .map_or("none (full dose from week 1)".to_string(), |rp| {
            format!(
                "{} weeks from {:.0}% of the dose; full dose in week {}",
                rp.weeks,
                rp.start_fraction * 100.0,
                rp.weeks + 1
            )
        });
    let spare = if p.spare_days.is_empty() {
        "none (add-session uses the other weekdays, Monday first)".to_string()
    } else {
        p.spare_days
            .iter()
            .map(|d| crate::plan::weekday_name(*d))
            .collect::<Vec<_>>()
            .join(" ")
    };
    s.push_str(&format!(
        "Ramp: {ramp}\nMinutes round up to: {} min\nSpare days: {spare}\n",
        p.round_minutes_to
    ));
    s.push_str(&format!(
        "\nModel\n  RMR equation: {} ({})\n  exercise energy counted above: {}\n  TEF {:.2} of intake; fat {:.0} {e}/kg; fat-free {:.0} {e}/kg; Forbes constant {}\n",
        c.rmr_equation.name(),
        c.rmr_equation.citation(),
        match c.rest_for_net {
            crate::model::RestForNet::OwnRmr => "the participant's own RMR (own-rmr)",
            crate::model::RestForNet::OneMet => "one standard MET (one-met)",
        },
        c.tef_fraction,
        u.energy(c.fat_kcal_per_kg),
        u.energy(c.lean_kcal_per_kg),
        u.mass_text(c.forbes_constant_kg, 1),
        e = u.energy_label()
    ));
    s.push_str("\nScenarios\n");
    for sc in &plan.scenarios {
        let k = &sc.compensation;
        s.push_str(&format!(
            "  {}: {}\n    intake_fraction {}, intake_lag_days {}, activity_fraction {}, rmr_adaptation_kcal_per_kg {}, diet_change_kcal_per_day {}\n",
            sc.name, assumptions_text(k, u), k.intake_fraction, k.intake_lag_days, k.activity_fraction, k.rmr_adaptation_kcal_per_kg, k.diet_change_kcal_per_day
        ));
    }
    s.push_str(&format!("\nScreening: {}\n\n", r.screening.recommendation));
    s.push_str(&warnings_text(&r.warnings));
    s.push('\n');
    s.push_str(&cautions_text(&r.screening));
    s
}
