//! The human-readable schedule: baseline, the dated sessions week by week, the
//! outcome of every scenario, warnings and cautions.

use crate::plan::EnergyBasis;
use crate::report::{ScheduleReport, cautions_text};
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
pub fn baseline_text(r: &ScheduleReport) -> String {
    let b = &r.baseline;
    let fat_note = if b.fat_mass_estimated {
        "estimated from BMI, Deurenberg 1991"
    } else {
        "measured"
    };
    let rmr_note = if (b.rmr_factor - 1.0).abs() > 1e-12 {
        format!(
            "measured; the equation gives {:.0}, personal factor {:.3}",
            b.rmr_equation_kcal_per_day, b.rmr_factor
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
        "Baseline\n  mass {:.1} kg, BMI {:.1} kg/m^2\n  fat mass {:.1} kg ({:.1}% body fat, {fat_note}), fat-free mass {:.1} kg\n  RMR {:.0} kcal/day ({rmr_note})\n  intake {:.0} kcal/day ({intake_note}); expenditure {:.0} kcal/day; PAL {:.2} ({pal_note})\n  non-exercise activity {:.0} kcal/day\n",
        b.mass_kg,
        b.bmi,
        b.fat_mass_kg,
        b.body_fat_percent,
        b.fat_free_mass_kg,
        b.rmr_kcal_per_day,
        b.intake_kcal_per_day,
        b.tdee_kcal_per_day,
        b.pal,
        b.activity_kcal_per_day
    )
}

/// Activity, dose and protocol in two lines.
pub fn protocol_text(r: &ScheduleReport) -> String {
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
        a.intensity,
        a.met_at_baseline,
        a.relative_intensity_at_baseline,
        fmt_amount(d.amount),
        d.unit,
        p.session_days.join(" "),
        p.weeks,
        p.start,
        p.follow_up_weeks,
        p.end_date
    )
}

fn fmt_amount(v: f64) -> String {
    if v == v.trunc() {
        format!("{v:.0}")
    } else {
        format!("{v}")
    }
}

/// The outcome table of every scenario.
pub fn outcome_table(r: &ScheduleReport) -> String {
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
        let mut t = new_table(&[
            "scenario",
            "date",
            "mass [kg]",
            "band [kg]",
            "fat [kg]",
            "fat-free [kg]",
            "change [kg]",
            "prescribed net [kcal]",
            "achieved deficit [kcal]",
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
                    format!("{:.1}-{:.1}", w.mass_low_kg, w.mass_high_kg)
                });
            t.add_row(vec![
                sc.name.clone(),
                (p.start + chrono::Days::new(7 * u64::from(week))).to_string(),
                format!("{:.1}", e.mass_kg),
                band,
                format!("{:.1}", e.fat_mass_kg),
                format!("{:.1}", e.fat_free_mass_kg),
                format!("{:+.1}", e.mass_kg - m0),
                format!("{:.0}", e.prescribed_net_kcal),
                format!("{:.0}", e.achieved_deficit_kcal),
                format!("{:.0}%", e.dose_share * 100.0),
            ]);
        }
        align_numbers(&mut t, 2);
        s.push_str(&format!("{title}\n{t}\n"));
    }
    for sc in &r.scenarios {
        s.push_str(&format!("  {}: {}\n", sc.name, sc.assumptions));
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
pub fn adherence_text(r: &ScheduleReport, index: usize) -> String {
    let sc = &r.scenarios[index];
    let (Some(total), Some(log)) = (&sc.adherence, &r.log) else {
        return String::new();
    };
    let unit = r.dose.unit;
    let mut t = new_table(&[
        "week",
        "sessions delivered / planned",
        "minutes delivered / prescribed",
        "net kcal delivered / prescribed",
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
            format!("{:.0} / {:.0}", w.net_kcal_delivered, w.net_kcal_prescribed),
            format!("{:.1} / {:.1}", w.dose_delivered, w.dose_prescribed),
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
            total.net_kcal_delivered, total.net_kcal_prescribed
        ),
        format!(
            "{:.1} / {:.1} a week",
            total.dose_delivered_per_week, total.dose_prescribed_per_week
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
pub fn render(r: &ScheduleReport, index: usize) -> String {
    let sc = &r.scenarios[index];
    let mut out = format!(
        "dosewright session schedule: participant {} ({})\n\n",
        r.participant_id, r.plan
    );
    out.push_str(&baseline_text(r));
    out.push('\n');
    out.push_str(&protocol_text(r));
    out.push_str(&format!("Screening: {}\n\n", r.screening.recommendation));
    let which = if r.scenarios.len() > 1 {
        format!(
            " ({} of {}; --scenario NAME shows another)",
            index + 1,
            r.scenarios.len()
        )
    } else {
        String::new()
    };
    out.push_str(&format!(
        "Schedule for scenario \"{}\"{which}: {}\n",
        sc.name, sc.assumptions
    ));
    let mut t = new_table(&[
        "week",
        "date",
        "day",
        "minutes",
        "MET",
        "gross [kcal]",
        "net [kcal]",
        "x own rest",
        "mass at week start [kg]",
    ]);
    for wk in &sc.weeks {
        let mass = format!(
            "{:.1} {}",
            wk.reference_mass_kg,
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
                format!("{:.0}", s.gross_kcal),
                format!("{:.0}", s.net_kcal),
                format!("{:.1}", s.relative_intensity),
                if first { mass.clone() } else { String::new() },
            ]);
        }
    }
    align_numbers(&mut t, 3);
    out.push_str(&format!("{t}\n"));
    out.push_str(&adherence_text(r, index));
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
    out.push_str(&outcome_table(r));
    out.push('\n');
    out.push_str(&warnings_text(&r.warnings));
    out.push('\n');
    out.push_str(&cautions_text(&r.screening));
    out
}
