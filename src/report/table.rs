//! The human-readable schedule: baseline, the dated sessions week by week, the
//! outcome of every scenario, warnings and cautions.

use crate::plan::EnergyBasis;
use crate::report::units::{EnergyUnit, Units};
use crate::report::{ScheduleReport, assumptions_text, cautions_text};
use crate::safety::Warning;
use crate::simulate::{MassSource, Phase};
use comfy_table::{Cell, CellAlignment, Table, presets};

/// A table in the house style: ASCII, as wide as its content.
pub fn new_table(header: &[&str]) -> Table {
    let mut t = Table::new();
    t.load_style(presets::ASCII_FULL_CONDENSED);
    t.set_header(header.iter().map(Cell::new).collect::<Vec<_>>());
    t
}

/// Right-align every column but the first `left` ones.
pub fn align_numbers(t: &mut Table, left: usize) {
    for (i, c) in t.column_iter_mut().enumerate() {
        if i >= left {
            c.set_cell_alignment(CellAlignment::Right);
        }
    }
}

/// The baseline block shared by `schedule` and `check`.
pub fn baseline_text(r: &ScheduleReport, u: Units) -> String {
    let b = &r.baseline;
    let fat_note = if b.fat_mass_estimated {
        "estimated from BMI, Deurenberg 1991"
    } else {
        "measured"
    };
    let rmr_note = if (b.rmr_factor - 1.0).abs() > 1e-12 {
        format!(
            "measured; the equation gives {:.0}, personal factor {:.3}",
            u.energy(b.rmr_equation_kcal_per_day),
            b.rmr_factor
        )
    } else {
        "from the equation".to_string()
    };
    let intake_note = if b.intake_measured {
        "measured"
    } else {
        "taken as energy balance"
    };
    let pal_note = match b.pal_source {
        "plan" => "from the plan",
        "intake" => "from measured intake, weight-stable",
        _ => "default 1.5, FAO/WHO/UNU 2004 sedentary-light range",
    };
    format!(
        "Baseline\n  mass {}, BMI {:.1} kg/m^2\n  fat mass {} ({:.1}% body fat, {fat_note}), fat-free mass {}\n  RMR {} ({rmr_note})\n  intake {} ({intake_note}); expenditure {}; PAL {:.2} ({pal_note})\n  non-exercise activity {}\n",
        u.mass_text(b.mass_kg, 1),
        b.bmi,
        u.mass_text(b.fat_mass_kg, 1),
        b.body_fat_percent,
        u.mass_text(b.fat_free_mass_kg, 1),
        u.per_day_text(b.rmr_kcal_per_day, 0),
        u.per_day_text(b.intake_kcal_per_day, 0),
        u.per_day_text(b.tdee_kcal_per_day, 0),
        b.pal,
        u.per_day_text(b.activity_kcal_per_day, 0)
    )
}

/// Activity, dose and protocol in three lines.
pub fn protocol_text(r: &ScheduleReport, u: Units) -> String {
    let a = &r.activity;
    let d = &r.dose;
    let p = &r.protocol;
    let basis = match d.basis {
        EnergyBasis::Gross => "gross",
        EnergyBasis::Net => "net of rest",
    };
    let mass = match d.mass_basis {
        crate::plan::MassBasis::Baseline => "baseline mass",
        crate::plan::MassBasis::Current => "each week's mass",
    };
    let per_kg = if d.kind == "kcal_per_kg_week" {
        format!(", {mass}")
    } else {
        String::new()
    };
    let energy = if d.kind == "minutes_per_week" {
        String::new()
    } else {
        format!(", {basis}{per_kg}")
    };
    let max = p
        .max_session_minutes
        .map_or("no maximum session length".to_string(), |m| {
            format!("maximum {m:.0} min per session ({})", p.over_max)
        });
    format!(
        "Activity: {} - {}; {:.2} MET at baseline, {:.1} x own RMR\nDose: {} {}{energy}; sessions on {}; {max}\nProtocol: {} weeks from {}, {} follow-up weeks, ends {}\n",
        a.label,
        a.intensity_spec.describe_with(|kmh| u.speed_text(kmh)),
        a.met_at_baseline,
        a.relative_intensity_at_baseline,
        dose_amount_text(u, d.kind, d.amount),
        u.dose_label(d.kind),
        p.session_days.join(" "),
        p.weeks,
        p.start,
        p.follow_up_weeks,
        p.end_date
    )
}

/// A dose amount in the display unit: as the plan gives it when in the plan's own
/// unit, with one decimal once converted to kJ.
pub fn dose_amount_text(u: Units, kind: &str, amount: f64) -> String {
    let v = u.dose(kind, amount);
    if u.energy == EnergyUnit::Kj && kind != "minutes_per_week" {
        format!("{v:.1}")
    } else if v == v.trunc() {
        format!("{v:.0}")
    } else {
        format!("{v}")
    }
}

/// The outcome table of every scenario.
pub fn outcome_table(r: &ScheduleReport, u: Units) -> String {
    let p = &r.protocol;
    let mut ends = vec![(
        format!("At the end of the protocol (week {})", p.weeks),
        p.weeks,
    )];
    if p.follow_up_weeks > 0 {
        let last = p.weeks + p.follow_up_weeks;
        ends.push((
            format!(
                "At the end of follow-up (week {last}, {} weeks after exercise stops)",
                p.follow_up_weeks
            ),
            last,
        ));
    }
    let m0 = r.baseline.mass_kg;
    let mut s = String::from("Projected outcome by scenario\n");
    for (title, week) in ends {
        let k = week as usize - 1;
        let (m, e) = (u.mass_label(), u.energy_label());
        let mut t = new_table(&[
            "scenario",
            "date",
            &format!("mass [{m}]"),
            &format!("band [{m}]"),
            &format!("fat [{m}]"),
            &format!("fat-free [{m}]"),
            &format!("change [{m}]"),
            &format!("prescribed net [{e}]"),
            &format!("achieved deficit [{e}]"),
            "dose share",
        ]);
        for (i, sc) in r.scenarios.iter().enumerate() {
            let e = &sc.weeks[k].end;
            let band = r
                .projection_band
                .as_ref()
                .and_then(|b| b.scenarios.get(i))
                .and_then(|b| b.weeks.get(k))
                .map_or("-".to_string(), |w| {
                    format!("{:.1}-{:.1}", u.mass(w.mass_low_kg), u.mass(w.mass_high_kg))
                });
            t.add_row(vec![
                sc.name.clone(),
                (p.start + chrono::Days::new(7 * u64::from(week))).to_string(),
                format!("{:.1}", u.mass(e.mass_kg)),
                band,
                format!("{:.1}", u.mass(e.fat_mass_kg)),
                format!("{:.1}", u.mass(e.fat_free_mass_kg)),
                format!("{:+.1}", u.mass(e.mass_kg - m0)),
                format!("{:.0}", u.energy(e.prescribed_net_kcal)),
                format!("{:.0}", u.energy(e.achieved_deficit_kcal)),
                format!("{:.0}%", e.dose_share * 100.0),
            ]);
        }
        align_numbers(&mut t, 2);
        s.push_str(&format!("{title}\n{t}\n"));
    }
    for sc in &r.scenarios {
        s.push_str(&format!(
            "  {}: {}\n",
            sc.name,
            assumptions_text(&sc.compensation, u)
        ));
    }
    if let Some(b) = &r.projection_band {
        s.push_str(&format!(
            "  Band: {}. Sources: {}.\n",
            b.meaning,
            b.sources.join("; ")
        ));
    }
    s
}

/// Sessions, minutes, energy and dose delivered against planned, for a re-planned
/// schedule (empty without a log).
pub fn adherence_text(r: &ScheduleReport, index: usize, u: Units) -> String {
    let sc = &r.scenarios[index];
    let (Some(total), Some(log)) = (&sc.adherence, &r.log) else {
        return String::new();
    };
    let unit = u.dose_label(r.dose.kind);
    let dose = |v: f64| u.dose(r.dose.kind, v);
    let mut t = new_table(&[
        "week",
        "sessions delivered / planned",
        "minutes delivered / prescribed",
        &format!("net {} delivered / prescribed", u.energy_label()),
        &format!("dose delivered / prescribed [{unit}]"),
        "mean RPE",
        "mean HR [bpm]",
    ]);
    let opt = |v: Option<f64>| v.map_or("-".to_string(), |x| format!("{x:.0}"));
    for w in sc.weeks.iter().filter_map(|w| w.adherence.as_ref()) {
        let part = if w.days_covered < 7 {
            format!(" ({} of 7 days)", w.days_covered)
        } else {
            String::new()
        };
        t.add_row(vec![
            format!("{}{part}", w.week),
            format!("{} / {}", w.sessions_delivered, w.sessions_planned),
            format!("{:.0} / {:.0}", w.minutes_delivered, w.minutes_prescribed),
            format!(
                "{:.0} / {:.0}",
                u.energy(w.net_kcal_delivered),
                u.energy(w.net_kcal_prescribed)
            ),
            format!(
                "{:.1} / {:.1}",
                dose(w.dose_delivered),
                dose(w.dose_prescribed)
            ),
            opt(w.mean_rpe),
            opt(w.mean_hr_bpm),
        ]);
    }
    t.add_row(vec![
        format!("all weeks ({})", total.weeks),
        format!("{} / {}", total.sessions_delivered, total.sessions_planned),
        format!(
            "{:.0} / {:.0}",
            total.minutes_delivered, total.minutes_prescribed
        ),
        format!(
            "{:.0} / {:.0}",
            u.energy(total.net_kcal_delivered),
            u.energy(total.net_kcal_prescribed)
        ),
        format!(
            "{:.1} / {:.1} a week",
            dose(total.dose_delivered_per_week),
            dose(total.dose_prescribed_per_week)
        ),
        opt(total.mean_rpe),
        opt(total.mean_hr_bpm),
    ]);
    align_numbers(&mut t, 1);
    format!(
        "Adherence so far (log {} up to {}: {} weigh-ins, {} session rows; weeks up to then use the delivered sessions, later weeks are re-prescribed from the re-anchored projection)\n{t}\n",
        log.path, log.as_of, log.weigh_ins, log.sessions
    )
}

/// The weeks stepped down after an absence, one line each (empty when none was).
pub fn step_down_text(r: &ScheduleReport, index: usize) -> String {
    let mut s = String::new();
    for w in &r.scenarios[index].weeks {
        if let Some(n) = &w.step_down {
            s.push_str(&format!("Week {}: {n}; docs/model.md section 4.\n", w.week));
        }
    }
    s
}

/// The warnings block.
pub fn warnings_text(warnings: &[Warning]) -> String {
    if warnings.is_empty() {
        return "Warnings: none\n".to_string();
    }
    let mut s = String::from("Warnings\n");
    for w in warnings {
        s.push_str(&format!("  - [{}] {}\n", w.code, w.message));
    }
    s
}

/// Render the schedule of scenario `index` and the outcome of all.
pub fn render(r: &ScheduleReport, index: usize, u: Units) -> String {
    render_choosing(r, index, u, None)
}

/// [`render`], saying after "(2 of 3" how the reader chooses another scenario
/// (`choose`, worded by the caller: the command line names its option, the library
/// knows no options).
pub fn render_choosing(r: &ScheduleReport, index: usize, u: Units, choose: Option<&str>) -> String {
    let sc = &r.scenarios[index];
    let mut out = format!(
        "dosewright session schedule: participant {} ({})\n\n",
        r.participant_id, r.plan
    );
    out.push_str(&baseline_text(r, u));
    out.push('\n');
    out.push_str(&protocol_text(r, u));
    out.push_str(&format!("Screening: {}\n\n", r.screening.recommendation));
    let which = if r.scenarios.len() > 1 {
        format!(
            " ({} of {}{})",
            index + 1,
            r.scenarios.len(),
            choose.map_or(String::new(), |c| format!("; {c}"))
        )
    } else {
        String::new()
    };
    out.push_str(&format!(
        "Schedule for scenario \"{}\"{which}: {}\n",
        sc.name,
        assumptions_text(&sc.compensation, u)
    ));
    let mut t = new_table(&[
        "week",
        "date",
        "day",
        "minutes",
        "MET",
        &format!("gross [{}]", u.energy_label()),
        &format!("net [{}]", u.energy_label()),
        "x own rest",
        &format!("mass at week start [{}]", u.mass_label()),
    ]);
    for wk in &sc.weeks {
        let mass = format!(
            "{:.1} {}",
            u.mass(wk.reference_mass_kg),
            match wk.mass_source {
                MassSource::Measured => "measured",
                MassSource::Projected => "projected",
            }
        );
        if wk.phase == Phase::FollowUp {
            t.add_row(vec![
                wk.week.to_string(),
                wk.start.to_string(),
                "-".into(),
                "follow-up".into(),
                "".into(),
                "".into(),
                "".into(),
                "".into(),
                mass,
            ]);
            continue;
        }
        for (i, s) in wk.sessions.iter().enumerate() {
            let first = i == 0;
            t.add_row(vec![
                if first {
                    wk.week.to_string()
                } else {
                    String::new()
                },
                s.date.to_string(),
                match s.bout {
                    Some(b) => format!("{} bout {b}", s.weekday),
                    None => s.weekday.to_string(),
                },
                s.minutes.to_string(),
                format!("{:.1}", s.met),
                format!("{:.0}", u.energy(s.gross_kcal)),
                format!("{:.0}", u.energy(s.net_kcal)),
                format!("{:.1}", s.relative_intensity),
                if first { mass.clone() } else { String::new() },
            ]);
        }
    }
    align_numbers(&mut t, 3);
    out.push_str(&format!("{t}\n"));
    out.push_str(&step_down_text(r, index));
    out.push_str(&adherence_text(r, index, u));
    let follow = r.protocol.follow_up_weeks;
    if follow > 0 {
        out.push_str(&format!(
            "Exercise stops after week {}; weeks {}-{} are follow-up with no sessions.\n",
            r.protocol.weeks,
            r.protocol.weeks + 1,
            r.protocol.weeks + follow
        ));
    }
    out.push('\n');
    out.push_str(&outcome_table(r, u));
    out.push('\n');
    out.push_str(&warnings_text(&r.warnings));
    out.push('\n');
    out.push_str(&cautions_text(&r.screening));
    out
}
