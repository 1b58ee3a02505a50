//! The cohort report: per arm and scenario the spread of mass and fat-mass change,
//! dose share, session minutes and the share over the maximum; supervised hours for
//! staffing. Rendered as a table, a per-participant CSV, or JSON ("Cohort JSON",
//! docs/file-formats.md).

use super::table::{align_numbers, new_table};
use super::units::Units;
use crate::safety;
use crate::simulate::cohort::Member;
use crate::simulate::cohort::{ArmSpread, CohortSummary, MemberResult, Spread, StaffHours};
use crate::study::Study;
use serde::Serialize;

pub use crate::simulate::arm_comparison::Comparison;

/// Everything `cohort` reports.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CohortReport {
    /// Tool and version.
    pub tool: String,
    /// The study file.
    pub study: String,
    /// The study's name.
    pub name: String,
    /// Where the participants came from.
    pub source: String,
    /// How arms were assigned.
    pub allocation: String,
    /// Every participant simulated in every arm.
    pub all_arms: bool,
    /// The random seed (synthetic draws and randomisation).
    pub seed: u64,
    /// Draws per participant.
    pub draws: u32,
    /// Participants.
    pub participants: usize,
    /// The integrator.
    pub integrator: &'static str,
    /// Checkpoint weeks.
    pub checkpoints: Vec<u32>,
    /// Protocol weeks.
    pub weeks: u32,
    /// Follow-up weeks.
    pub follow_up_weeks: u32,
    /// Maximum session minutes.
    pub max_session_minutes: Option<f64>,
    /// Per arm.
    pub arms: Vec<ArmSpread>,
    /// Supervised session-hours (allocated runs; every run with `--all-arms` and no allocation).
    pub staff_hours: StaffHours,
    /// The site's need: expected attended sessions, the busiest hour, the opening
    /// hours (docs/file-formats.md, Cohort JSON).
    pub staffing: crate::study::staffing::SiteNeed,
    /// Arm pairs (with uncertainty).
    pub comparisons: Vec<Comparison>,
    /// Screening results over the participants: how many have each.
    pub screening: Vec<ScreeningCount>,
    /// Warnings with stable codes.
    pub warnings: Vec<safety::Warning>,
    /// The standing cautions.
    pub cautions: Vec<&'static str>,
    /// One row per participant, arm and scenario (CSV only).
    #[serde(skip)]
    pub rows: Vec<ParticipantRow>,
}

/// Participants with one screening result.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct ScreeningCount {
    /// The result in words (ACSM 2015 algorithm).
    pub recommendation: String,
    /// Participants with it.
    pub participants: usize,
}

/// Count the participants' screening results (for a study whose most intense
/// activity is `vigorous` or not), in order of first appearance.
pub fn screening_counts(members: &[Member], vigorous: bool) -> Vec<ScreeningCount> {
    let mut out: Vec<ScreeningCount> = Vec::new();
    for m in members {
        let rec = safety::screen(m.participant.screening.as_ref(), vigorous).recommendation;
        match out.iter_mut().find(|c| c.recommendation == rec) {
            Some(c) => c.participants += 1,
            None => out.push(ScreeningCount {
                recommendation: rec,
                participants: 1,
            }),
        }
    }
    out
}

/// The screening results in one line, for chart captions and side notes.
pub fn screening_line(counts: &[ScreeningCount]) -> String {
    let parts: Vec<String> = counts
        .iter()
        .map(|c| format!("{} participant(s): {}", c.participants, c.recommendation))
        .collect();
    format!("Screening: {}.", parts.join("; "))
}

/// One participant's run in one arm and scenario (the per-participant CSV).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParticipantRow {
    /// Code.
    pub id: String,
    /// Arm.
    pub arm: String,
    /// Allocated to this arm (false for a counterfactual run with `--all-arms`).
    pub allocated: bool,
    /// Scenario.
    pub scenario: String,
    /// Draw (1-based).
    pub draw: u32,
    /// Still exercising at the end of the protocol in this draw.
    pub completed: bool,
    /// Sex.
    pub sex: &'static str,
    /// Age, years.
    pub age_years: f64,
    /// Height, cm.
    pub height_cm: f64,
    /// Baseline mass, kg.
    pub baseline_mass_kg: f64,
    /// Mass change at the end of the protocol, kg.
    pub mass_change_kg: f64,
    /// Fat-mass change at the end of the protocol, kg.
    pub fat_mass_change_kg: f64,
    /// Dose share at the end of the protocol (empty for a control).
    pub dose_share: Option<f64>,
    /// Longest session in week 1, minutes.
    pub minutes_week1: u32,
    /// Longest session in the last week, minutes.
    pub minutes_last_week: u32,
    /// Over the maximum in some week.
    pub over_max: bool,
    /// Prescribed net exercise energy, kcal.
    pub prescribed_net_kcal: f64,
    /// Whole-session hours over the protocol.
    pub session_hours: f64,
}

/// Build the per-participant rows.
pub fn participant_rows(
    study: &Study,
    members: &[Member],
    results: &[MemberResult],
) -> Vec<ParticipantRow> {
    let mut rows = Vec::new();
    for (m, r) in members.iter().zip(results) {
        let s = &m.participant.subject;
        for run in &r.runs {
            rows.push(ParticipantRow {
                id: m.participant.id.clone(),
                arm: study.arms[run.arm].name.clone(),
                allocated: m.arm.is_none_or(|a| a == run.arm),
                scenario: study.scenarios[run.scenario].name.clone(),
                sex: s.sex.name(),
                draw: run.draw + 1,
                completed: run.completed,
                age_years: round4(s.age_years),
                height_cm: round4(s.height_cm),
                baseline_mass_kg: round4(r.baseline_mass_kg),
                mass_change_kg: round4(run.protocol_end_mass_change_kg),
                fat_mass_change_kg: round4(run.protocol_end_fat_mass_change_kg),
                dose_share: run.dose_share.map(round4),
                minutes_week1: run.minutes_week1,
                minutes_last_week: run.minutes_last_week,
                over_max: run.over_max,
                prescribed_net_kcal: round4(run.prescribed_net_kcal),
                session_hours: round4(f64::from(run.session_minutes_total) / 60.0),
            });
        }
    }
    rows
}

impl CohortReport {
    /// Attach the summaries (and the comparisons of their arms) to the report header.
    pub fn with_summary(mut self, s: CohortSummary) -> CohortReport {
        self.comparisons = s.comparisons;
        self.arms = s.arms;
        self.staff_hours = s.staff_hours;
        self
    }
}

/// A signed value with one decimal, never "-0.0" or "+-0.0".
fn signed(v: f64) -> String {
    let s = format!("{v:+.1}");
    if s == "-0.0" { "+0.0".to_string() } else { s }
}

fn spread_cells(s: &Spread, u: Units) -> String {
    format!(
        "{} ({:.1}) [{} to {}]",
        signed(u.mass(s.mean)),
        u.mass(s.sd),
        signed(u.mass(s.p5)),
        signed(u.mass(s.p95))
    )
}

/// The table: one row per arm and scenario, then staffing and the cautions.
pub fn table(r: &CohortReport, u: Units) -> String {
    let mut out = format!(
        "dosewright cohort: {} ({})\n{} participants from {}; {}{}\nseed {}, {} draw(s) per participant, integrator {}\nProtocol: {} weeks{}{}\n\n",
        r.name,
        r.study,
        r.participants,
        r.source,
        r.allocation,
        if r.all_arms {
            "; every participant simulated in every arm"
        } else {
            ""
        },
        r.seed,
        r.draws,
        r.integrator,
        r.weeks,
        if r.follow_up_weeks > 0 {
            format!(" and {} follow-up weeks", r.follow_up_weeks)
        } else {
            String::new()
        },
        r.max_session_minutes.map_or(String::new(), |m| format!(
            ", maximum {m:.0} min per session"
        )),
    );
    table_outcome(r, u, &mut out);
    table_checkpoints(r, u, &mut out);
    table_completers(r, u, &mut out);
    table_comparisons(r, u, &mut out);
    table_staffing(r, &mut out);
    if !r.warnings.is_empty() {
        out.push_str("Warnings\n");
        for w in &r.warnings {
            out.push_str(&format!("  - [{}] {}\n", w.code, w.message));
        }
        out.push('\n');
    }
    out.push_str(&side_notes(r));
    out
}

/// The outcome at the end of the protocol, one row per arm and scenario.
fn table_outcome(r: &CohortReport, u: Units, out: &mut String) {
    let ml = u.mass_label();
    let h_mass = format!("mass change [{ml}] mean (SD) [5th to 95th]");
    let h_fat = format!("fat change [{ml}] mean");
    let h_last = format!("min/session week {} median (95th, max)", r.weeks);
    let mut t = new_table(&[
        "arm",
        "scenario",
        "n",
        &h_mass,
        &h_fat,
        "dose share",
        "min/session week 1 median (95th, max)",
        &h_last,
        "over max",
    ]);
    align_numbers(&mut t, 2);
    for a in &r.arms {
        if a.scenarios.is_empty() {
            let mut row = vec![a.name.clone(), "-".to_string(), "0".to_string()];
            row.push("no participants".to_string());
            row.extend(std::iter::repeat_n("-".to_string(), 5));
            t.add_row(row);
        }
        for s in &a.scenarios {
            t.add_row(vec![
                if a.control && !a.name.contains("control") {
                    format!("{} (control)", a.name)
                } else {
                    a.name.clone()
                },
                s.name.clone(),
                a.participants.to_string(),
                spread_cells(&s.mass_change_kg, u),
                signed(u.mass(s.fat_mass_change_kg.mean)),
                s.dose_share_mean
                    .map_or("-".to_string(), |d| format!("{:.0}%", d * 100.0)),
                format!(
                    "{:.0} ({:.0}, {})",
                    s.minutes_week1.median, s.minutes_week1.p95, s.minutes_week1.max
                ),
                format!(
                    "{:.0} ({:.0}, {})",
                    s.minutes_last_week.median, s.minutes_last_week.p95, s.minutes_last_week.max
                ),
                format!("{:.0}%", s.over_max_share * 100.0),
            ]);
        }
    }
    out.push_str(&format!(
        "Outcome at the end of the protocol (week {}), over participants\n{t}\n\n",
        r.weeks
    ));
}

/// Mass change at the checkpoints, when there are more than the end.
fn table_checkpoints(r: &CohortReport, u: Units, out: &mut String) {
    let ml = u.mass_label();
    if r.checkpoints.len() > 1 || r.checkpoints.first() != Some(&r.weeks) {
        let mut header = vec!["arm".to_string(), "scenario".to_string()];
        header.extend(r.checkpoints.iter().map(|w| format!("week {w} [{ml}]")));
        let refs: Vec<&str> = header.iter().map(String::as_str).collect();
        let mut c = new_table(&refs);
        align_numbers(&mut c, 2);
        for a in &r.arms {
            for s in &a.scenarios {
                let mut row = vec![a.name.clone(), s.name.clone()];
                row.extend(s.checkpoints.iter().map(|p| {
                    format!(
                        "{} ({:.1})",
                        signed(u.mass(p.mass_change_kg.mean)),
                        u.mass(p.mass_change_kg.sd)
                    )
                }));
                c.add_row(row);
            }
        }
        out.push_str(&format!(
            "Mass change at the checkpoints, mean (SD)\n{c}\n\n"
        ));
    }
}

/// The completers, when any participant is expected to drop out.
fn table_completers(r: &CohortReport, u: Units, out: &mut String) {
    let ml = u.mass_label();
    if r.arms.iter().any(|a| a.completing < a.participants as f64) {
        let mut c = new_table(&[
            "arm",
            "scenario",
            "expected completing",
            &format!("completers: mass change [{ml}] mean (SD)"),
        ]);
        align_numbers(&mut c, 2);
        for a in &r.arms {
            for s in &a.scenarios {
                c.add_row(vec![
                    a.name.clone(),
                    s.name.clone(),
                    format!("{:.1} of {}", a.completing, a.participants),
                    s.mass_change_completers_kg.map_or("-".to_string(), |m| {
                        format!("{} ({:.1})", signed(u.mass(m.mean)), u.mass(m.sd))
                    }),
                ]);
            }
        }
        out.push_str(&format!("Completers (the outcome table above is intention to treat: everyone, drop-outs included)\n{c}\n\n"));
    }
}

/// Participants per arm to detect each difference between arms.
fn table_comparisons(r: &CohortReport, u: Units, out: &mut String) {
    let ml = u.mass_label();
    if !r.comparisons.is_empty() {
        let mut c = new_table(&[
            "arms",
            "scenario",
            "week",
            &format!("difference [{ml}]"),
            &format!("SD [{ml}]"),
            "completion",
            "alpha",
            "n per arm, power 0.8 (ITT)",
            "n per arm, power 0.9 (ITT)",
            "n per arm, power 0.8 (completers)",
            "n per arm, power 0.9 (completers)",
        ]);
        align_numbers(&mut c, 2);
        for x in &r.comparisons {
            let n = |v: Option<f64>| v.map_or("-".to_string(), |n| format!("{n:.0}"));
            c.add_row(vec![
                format!("{} vs {}", x.arms[1], x.arms[0]),
                x.scenario.clone(),
                x.week.to_string(),
                signed(u.mass(x.mean_difference_kg)),
                format!("{:.2}", u.mass(x.sd_kg)),
                format!("{:.0}%", x.completion_rate * 100.0),
                format!("{:.4}", x.alpha),
                n(x.intention_to_treat.n_per_arm_power80),
                n(x.intention_to_treat.n_per_arm_power90),
                n(x.completers.as_ref().and_then(|c| c.n_per_arm_power80)),
                n(x.completers.as_ref().and_then(|c| c.n_per_arm_power90)),
            ]);
        }
        out.push_str(&format!("Participants per arm to recruit to detect the difference in mass change (end of protocol: week {}; difference and SD of the basis chosen; n = 2 (z_(1-alpha/2) + z_power)^2 SD^2 / difference^2, Altman 1991; intention to treat: drop-outs are in the difference already, nothing divided; completers: divided by the completion rate; alpha adjusted for several comparisons when asked, Holm 1979)\n{c}\n\n", r.weeks));
    }
}

/// Supervised session-hours per arm and for the trial as allocated.
fn table_staffing(r: &CohortReport, out: &mut String) {
    let mut st = new_table(&[
        "arm",
        "participants",
        "peak session-hours/week (week)",
        "total session-hours",
    ]);
    align_numbers(&mut st, 1);
    for a in &r.arms {
        st.add_row(vec![
            a.name.clone(),
            a.participants.to_string(),
            format!(
                "{:.1} (week {})",
                a.staff_hours.peak_per_week, a.staff_hours.peak_week
            ),
            format!("{:.1}", a.staff_hours.total),
        ]);
    }
    let n = &r.staffing;
    out.push_str(&format!(
        "Supervised session-hours of the sessions expected to be attended (warm-up, time at target and cool-down; one participant per session; first scenario; attendance {:.0}% of planned sessions, drop-out {:.1}% a week as drawn)\n{st}\nTrial as allocated: peak {:.1} h/week (week {}), {:.1} h in all\n",
        n.attendance * 100.0,
        n.dropout_per_week * 100.0,
        r.staff_hours.peak_per_week,
        r.staff_hours.peak_week,
        r.staff_hours.total
    ));
    out.push_str(&super::cohort_site::site_lines(n));
    out.push('\n');
}

/// The screening results and the cautions (the end of the table; standard error
/// beside the CSV and JSON).
pub fn side_notes(r: &CohortReport) -> String {
    let mut out = String::from("Screening (ACSM 2015 pre-participation algorithm)\n");
    for c in &r.screening {
        out.push_str(&format!(
            "  - {} participant(s): {}\n",
            c.participants, c.recommendation
        ));
    }
    out.push_str("\nCautions\n");
    for c in &r.cautions {
        out.push_str(&format!("  - {c}\n"));
    }
    out
}

/// Round to 4 decimals, as the JSON does, so the CSV bytes are stable and readable.
fn round4(v: f64) -> f64 {
    let r = (v * 1e4).round() / 1e4;
    if r == 0.0 { 0.0 } else { r }
}

/// The per-participant CSV (metric, kcal).
pub fn csv(r: &CohortReport) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    for row in &r.rows {
        w.serialize(row).expect("rows serialize");
    }
    String::from_utf8(w.into_inner().expect("in memory")).expect("CSV is UTF-8")
}
