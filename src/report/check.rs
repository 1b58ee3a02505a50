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
        "{}: the plan is valid.\n\nParticipant {}: {:?}, {} years, {:.1} {}\n",
        r.plan,
        r.participant_id,
        plan.participant.subject.sex,
        // The age as the plan gives it: 40.6 stays 40.6, never rounded to 41.
        crate::plan::participant::fmt_num(plan.participant.subject.age_years),
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

/// Render a valid study file: its arms, protocol, scenarios and population, the
/// screening summary and the standing cautions (`check STUDY`). A study names no
/// participants, so the screening summary says where each is screened.
pub fn render_study(study: &crate::study::Study, vigorous: bool) -> String {
    let p = &study.protocol;
    let mut s = format!(
        "{}: the study is valid (study {}).\n\nArms\n",
        study.source_name, study.name
    );
    for arm in &study.arms {
        let dose = arm.dose.map_or("control, no exercise".to_string(), |d| {
            format!(
                "{} = {} {}",
                d.amount.key(),
                crate::plan::participant::fmt_num(d.amount.value()),
                d.amount.unit()
            )
        });
        s.push_str(&format!("  - {}: {dose}\n", arm.name));
    }
    s.push_str(&format!(
        "\nProtocol: {} weeks from {}, {} weeks of follow-up; maximum session {}; block size {} for --randomise\n",
        p.weeks,
        p.start,
        p.follow_up_weeks,
        p.max_session_minutes
            .map_or("none".to_string(), |m| format!("{} min", crate::plan::participant::fmt_num(m))),
        study.block_size
    ));
    let names: Vec<&str> = study.scenarios.iter().map(|c| c.name.as_str()).collect();
    s.push_str(&format!("Scenarios: {}\n", names.join(", ")));
    s.push_str(match study.population {
        Some(_) => {
            "Synthetic population: yes ([synthetic]; `cohort --synthetic N` draws from it)\n"
        }
        None => "Synthetic population: none (`cohort` needs a --roster)\n",
    });
    s.push_str(match study.uncertainty {
        Some(_) => "Uncertainty: yes ([uncertainty]; `cohort --draws K`)\n",
        None => "Uncertainty: none (every draw the same)\n",
    });
    s.push_str(&format!(
        "\nScreening (ACSM 2015 pre-participation algorithm)\n  - a study file names no participants: `cohort` screens each participant of the roster for {} intensity and counts the results; a participant without screening answers is counted as not screened\n\nCautions\n",
        if vigorous { "vigorous" } else { "moderate" }
    ));
    for c in crate::safety::CAUTIONS {
        s.push_str(&format!("  - {c}\n"));
    }
    s
}
