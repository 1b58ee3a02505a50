//! The cohort's second and third CSV tables (`--csv-table comparisons` and
//! `staffing`; docs/file-formats.md, "Cohort CSV"): tidy, one observation per row,
//! metric units and hours, numbers rounded to 4 decimals as in the JSON.

use super::cohort::CohortReport;
use serde::Serialize;

/// One row of the comparisons CSV table: a pair of arms in one scenario at one
/// endpoint week, both bases side by side.
#[derive(Serialize)]
struct ComparisonRow {
    arm_a: String,
    arm_b: String,
    scenario: String,
    week: u32,
    basis: &'static str,
    multiplicity: &'static str,
    alpha: f64,
    completion_rate: f64,
    mean_difference_kg: f64,
    sd_kg: f64,
    n_per_arm_power80: Option<f64>,
    n_per_arm_power90: Option<f64>,
    itt_mean_difference_kg: f64,
    itt_sd_kg: f64,
    itt_n_per_arm_power80: Option<f64>,
    itt_n_per_arm_power90: Option<f64>,
    completers_mean_difference_kg: Option<f64>,
    completers_sd_kg: Option<f64>,
    completers_n_per_arm_power80: Option<f64>,
    completers_n_per_arm_power90: Option<f64>,
}

/// The comparisons CSV table (only the header when the cohort has no pair of arms
/// with participants to compare).
pub fn comparisons_csv(r: &CohortReport) -> String {
    use crate::simulate::arm_comparison::{Basis, Multiplicity};
    let mut w = csv::Writer::from_writer(Vec::new());
    if r.comparisons.is_empty() {
        w.write_record([
            "arm_a",
            "arm_b",
            "scenario",
            "week",
            "basis",
            "multiplicity",
            "alpha",
            "completion_rate",
            "mean_difference_kg",
            "sd_kg",
            "n_per_arm_power80",
            "n_per_arm_power90",
            "itt_mean_difference_kg",
            "itt_sd_kg",
            "itt_n_per_arm_power80",
            "itt_n_per_arm_power90",
            "completers_mean_difference_kg",
            "completers_sd_kg",
            "completers_n_per_arm_power80",
            "completers_n_per_arm_power90",
        ])
        .expect("in memory");
    }
    for c in &r.comparisons {
        let comp = c.completers.as_ref();
        w.serialize(ComparisonRow {
            arm_a: c.arms[0].clone(),
            arm_b: c.arms[1].clone(),
            scenario: c.scenario.clone(),
            week: c.week,
            basis: match c.basis {
                Basis::IntentionToTreat => "intention_to_treat",
                Basis::Completers => "completers",
            },
            multiplicity: match c.multiplicity {
                Multiplicity::None => "none",
                Multiplicity::Bonferroni => "bonferroni",
                Multiplicity::Holm => "holm",
            },
            alpha: r4(c.alpha),
            completion_rate: r4(c.completion_rate),
            mean_difference_kg: r4(c.mean_difference_kg),
            sd_kg: r4(c.sd_kg),
            n_per_arm_power80: c.n_per_arm_power80,
            n_per_arm_power90: c.n_per_arm_power90,
            itt_mean_difference_kg: r4(c.intention_to_treat.mean_difference_kg),
            itt_sd_kg: r4(c.intention_to_treat.sd_kg),
            itt_n_per_arm_power80: c.intention_to_treat.n_per_arm_power80,
            itt_n_per_arm_power90: c.intention_to_treat.n_per_arm_power90,
            completers_mean_difference_kg: comp.map(|x| r4(x.mean_difference_kg)),
            completers_sd_kg: comp.map(|x| r4(x.sd_kg)),
            completers_n_per_arm_power80: comp.and_then(|x| x.n_per_arm_power80),
            completers_n_per_arm_power90: comp.and_then(|x| x.n_per_arm_power90),
        })
        .expect("rows serialize");
    }
    String::from_utf8(w.into_inner().expect("in memory")).expect("CSV is UTF-8")
}

/// One row of the staffing CSV table: an arm, or the trial as allocated.
#[derive(Serialize)]
struct StaffRow {
    row: String,
    participants: Option<usize>,
    expected_session_hours: f64,
    peak_hours_per_week: f64,
    peak_hours_week: u32,
    attendance: f64,
    dropout_per_week: f64,
    supervisor_hours: Option<f64>,
    peak_week: Option<u32>,
    peak_date: Option<String>,
    peak_time: Option<String>,
    peak_participants: Option<f64>,
    stations_needed: Option<u32>,
    supervisors_needed: Option<u32>,
    opening_hours_hold: Option<bool>,
    problems: String,
}

fn r4(v: f64) -> f64 {
    let r = (v * 1e4).round() / 1e4;
    if r == 0.0 { 0.0 } else { r }
}

/// The staffing CSV table: one row per arm (its own session-hours), then the trial as
/// allocated with the site's need.
pub fn staffing_csv(r: &CohortReport) -> String {
    let n = &r.staffing;
    let mut w = csv::Writer::from_writer(Vec::new());
    let arm =
        |name: String, participants: Option<usize>, h: &crate::simulate::cohort::StaffHours| {
            StaffRow {
                row: name,
                participants,
                expected_session_hours: r4(h.total),
                peak_hours_per_week: r4(h.peak_per_week),
                peak_hours_week: h.peak_week,
                attendance: n.attendance,
                dropout_per_week: n.dropout_per_week,
                supervisor_hours: None,
                peak_week: None,
                peak_date: None,
                peak_time: None,
                peak_participants: None,
                stations_needed: None,
                supervisors_needed: None,
                opening_hours_hold: None,
                problems: String::new(),
            }
        };
    for a in &r.arms {
        w.serialize(arm(
            format!("arm {}", a.name),
            Some(a.participants),
            &a.staff_hours,
        ))
        .expect("rows serialize");
    }
    let p = n.peak.as_ref();
    let trial = StaffRow {
        supervisor_hours: n.supervisor_hours.map(r4),
        peak_week: p.map(|p| p.week),
        peak_date: p.map(|p| p.date.to_string()),
        peak_time: p.and_then(|p| p.time.clone()),
        peak_participants: p.map(|p| r4(p.participants)),
        stations_needed: p.map(|p| p.stations_needed),
        supervisors_needed: p.and_then(|p| p.supervisors_needed),
        opening_hours_hold: n.opening_hours_hold,
        problems: n.problems.join("; "),
        ..arm("trial as allocated".to_string(), None, &r.staff_hours)
    };
    w.serialize(trial).expect("rows serialize");
    String::from_utf8(w.into_inner().expect("in memory")).expect("CSV is UTF-8")
}
