//! `compare`: every scenario side by side at the checkpoints, with the projection
//! band, and optionally a dose-response table. Renders as table, CSV, JSON (keys per
//! docs/file-formats.md) or Markdown.

use crate::model::Compensation;
use crate::plan::Plan;
use crate::report::table::{align_numbers, dose_amount_text, new_table, warnings_text};
use crate::report::units::Units;
use crate::report::{DoseSummary, ScheduleReport, assumptions_text, cautions_text};
use crate::safety::{ScreeningOutcome, Warning};
use crate::simulate::band::Band;
use crate::simulate::{Phase, ScenarioRun};
use chrono::NaiveDate;
use comfy_table::{Table, presets};
use serde::Serialize;

/// The state at the end of one checkpoint week.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CompareRow {
    /// Week N: the state at the end of week N (day 7N).
    pub week: u32,
    /// Date of day 7N.
    pub date: NaiveDate,
    /// Protocol or follow-up.
    pub phase: Phase,
    /// Body mass, kg.
    pub mass_kg: f64,
    /// Low end of the projection band, kg.
    pub mass_low_kg: f64,
    /// High end of the projection band, kg.
    pub mass_high_kg: f64,
    /// Fat mass, kg.
    pub fat_mass_kg: f64,
    /// Fat-free mass, kg.
    pub fat_free_mass_kg: f64,
    /// Change from baseline, kg.
    pub mass_change_kg: f64,
    /// Minutes per session that week (0 in follow-up).
    pub minutes_per_session: u32,
    /// Cumulative prescribed net exercise energy, kcal.
    pub prescribed_net_kcal: f64,
    /// Cumulative achieved deficit, kcal.
    pub achieved_deficit_kcal: f64,
    /// Share of the dose that reached the stores so far.
    pub dose_share: f64,
}

/// One scenario's column.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CompareScenario {
    /// Name.
    pub name: String,
    /// Assumptions in plain words.
    pub assumptions: String,
    /// The numbers behind them, for the words in other units.
    #[serde(skip)]
    pub compensation: Compensation,
    /// One row per checkpoint.
    pub rows: Vec<CompareRow>,
}

pub use crate::simulate::dose_response::{DosePoint, DoseResponse, DoseRow, DoseScenario};

/// Everything `compare` reports.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CompareReport {
    /// Tool and version.
    pub tool: String,
    /// Plan file.
    pub plan: String,
    /// Participant code.
    pub participant_id: String,
    /// The plan's dose.
    pub dose: DoseSummary,
    /// Protocol weeks (the protocol ends at the end of this week).
    pub protocol_weeks: u32,
    /// Follow-up weeks.
    pub follow_up_weeks: u32,
    /// Checkpoint weeks, ascending.
    pub checkpoints: Vec<u32>,
    /// Every scenario.
    pub scenarios: Vec<CompareScenario>,
    /// What the projection band holds.
    pub band_sources: Vec<String>,
    /// What the band is and is not.
    pub band_meaning: String,
    /// The dose-response table, when asked for.
    pub dose_response: Option<DoseResponse>,
    /// Screening.
    pub screening: ScreeningOutcome,
    /// Warnings.
    pub warnings: Vec<Warning>,
    /// Cautions.
    pub cautions: Vec<&'static str>,
}

/// The checkpoint weeks: 4, 12, 26 within the horizon, the end of the protocol, the
/// end of follow-up, and any asked for.
pub fn checkpoints(plan: &Plan, extra: &[u32]) -> Vec<u32> {
    let total = plan.protocol.total_weeks();
    let mut v: Vec<u32> = [4, 12, 26].into_iter().filter(|w| *w <= total).collect();
    v.push(plan.protocol.weeks);
    v.push(total);
    v.extend(extra);
    v.sort_unstable();
    v.dedup();
    v
}

/// Rows of one scenario at the checkpoints.
pub fn rows(
    plan: &Plan,
    run: &ScenarioRun,
    band: Option<&crate::simulate::band::ScenarioBand>,
    weeks: &[u32],
    m0: f64,
) -> Vec<CompareRow> {
    weeks
        .iter()
        .map(|&n| {
            let w = &run.weeks[n as usize - 1];
            let (lo, hi) = band
                .map(|b| {
                    (
                        b.weeks[n as usize - 1].mass_low_kg,
                        b.weeks[n as usize - 1].mass_high_kg,
                    )
                })
                .unwrap_or((w.end.mass_kg, w.end.mass_kg));
            CompareRow {
                week: n,
                date: plan.protocol.start + chrono::Days::new(7 * u64::from(n)),
                phase: w.phase,
                mass_kg: w.end.mass_kg,
                mass_low_kg: lo,
                mass_high_kg: hi,
                fat_mass_kg: w.end.fat_mass_kg,
                fat_free_mass_kg: w.end.fat_free_mass_kg,
                mass_change_kg: w.end.mass_kg - m0,
                minutes_per_session: w.minutes_per_session,
                prescribed_net_kcal: w.end.prescribed_net_kcal,
                achieved_deficit_kcal: w.end.achieved_deficit_kcal,
                dose_share: w.end.dose_share,
            }
        })
        .collect()
}

impl CompareReport {
    /// Assemble from the schedule report of the same plan and its band.
    pub fn new(
        plan: &Plan,
        schedule: &ScheduleReport,
        band: &Band,
        weeks: Vec<u32>,
        dose_response: Option<DoseResponse>,
    ) -> CompareReport {
        let m0 = schedule.baseline.mass_kg;
        let scenarios = schedule
            .scenarios
            .iter()
            .zip(&band.scenarios)
            .map(|(run, b)| CompareScenario {
                name: run.name.clone(),
                assumptions: run.assumptions.clone(),
                compensation: run.compensation,
                rows: rows(plan, run, Some(b), &weeks, m0),
            })
            .collect();
        CompareReport {
            tool: schedule.tool.clone(),
            plan: schedule.plan.clone(),
            participant_id: schedule.participant_id.clone(),
            dose: schedule.dose.clone(),
            protocol_weeks: plan.protocol.weeks,
            follow_up_weeks: plan.protocol.follow_up_weeks,
            checkpoints: weeks,
            scenarios,
            band_sources: band.sources.clone(),
            band_meaning: band.meaning.clone(),
            dose_response,
            screening: schedule.screening.clone(),
            warnings: schedule.warnings.clone(),
            cautions: schedule.cautions.clone(),
        }
    }
}

fn week_label(r: &CompareReport, row: &CompareRow) -> String {
    let tag = if row.week == r.protocol_weeks {
        " (protocol ends)"
    } else if row.phase == Phase::FollowUp && row.week == r.protocol_weeks + r.follow_up_weeks {
        " (follow-up ends)"
    } else if row.phase == Phase::FollowUp {
        " (follow-up)"
    } else {
        ""
    };
    format!("{}{tag}\n{}", row.week, row.date)
}

/// A printed quantity: its label and how a row shows it.
type Quantity = (String, Box<dyn Fn(&CompareRow) -> String>);

/// The quantities printed per checkpoint, with their formatting in units `u`.
fn quantities(u: Units) -> Vec<Quantity> {
    let (m, e) = (u.mass_label(), u.energy_label());
    vec![
        (
            format!("mass [{m}] (band)"),
            Box::new(move |r| {
                format!(
                    "{:.1} ({:.1}-{:.1})",
                    u.mass(r.mass_kg),
                    u.mass(r.mass_low_kg),
                    u.mass(r.mass_high_kg)
                )
            }),
        ),
        (
            format!("fat mass [{m}]"),
            Box::new(move |r| format!("{:.1}", u.mass(r.fat_mass_kg))),
        ),
        (
            format!("fat-free mass [{m}]"),
            Box::new(move |r| format!("{:.1}", u.mass(r.fat_free_mass_kg))),
        ),
        (
            format!("change [{m}]"),
            Box::new(move |r| format!("{:+.2}", u.mass(r.mass_change_kg))),
        ),
        (
            "minutes per session".to_string(),
            Box::new(|r| r.minutes_per_session.to_string()),
        ),
        (
            format!("prescribed net [{e}]"),
            Box::new(move |r| format!("{:.0}", u.energy(r.prescribed_net_kcal))),
        ),
        (
            format!("achieved deficit [{e}]"),
            Box::new(move |r| format!("{:.0}", u.energy(r.achieved_deficit_kcal))),
        ),
        (
            "dose share".to_string(),
            Box::new(|r| format!("{:.0}%", r.dose_share * 100.0)),
        ),
    ]
}

fn main_table(
    r: &CompareReport,
    style: comfy_table::TableStyle,
    markdown: bool,
    u: Units,
) -> Table {
    let mut header = vec!["week (end)", "quantity"];
    header.extend(r.scenarios.iter().map(|s| s.name.as_str()));
    let mut t = new_table(&header);
    t.load_style(style);
    for (i, _) in r.checkpoints.iter().enumerate() {
        for (j, (name, f)) in quantities(u).into_iter().enumerate() {
            let label = if j == 0 {
                let l = week_label(r, &r.scenarios[0].rows[i]);
                if markdown { l.replace('\n', " ") } else { l }
            } else {
                String::new()
            };
            let mut row = vec![label, name];
            row.extend(r.scenarios.iter().map(|s| f(&s.rows[i])));
            t.add_row(row);
        }
    }
    align_numbers(&mut t, 2);
    t
}

fn dose_table(
    r: &CompareReport,
    d: &DoseResponse,
    style: comfy_table::TableStyle,
    u: Units,
) -> Table {
    let mut header = vec![
        format!("dose [{}]", u.dose_label(r.dose.kind)),
        "scenario".to_string(),
    ];
    header.extend(
        r.checkpoints
            .iter()
            .map(|w| format!("week {w} change [{}]", u.mass_label())),
    );
    let refs: Vec<&str> = header.iter().map(String::as_str).collect();
    let mut t = new_table(&refs);
    t.load_style(style);
    for row in &d.doses {
        if row.out_of_range.is_some() {
            let mut cells = vec![
                dose_amount_text(u, r.dose.kind, row.dose),
                "out of the model's range".to_string(),
            ];
            cells.extend(r.checkpoints.iter().map(|_| "-".to_string()));
            t.add_row(cells);
        }
        for (i, s) in row.scenarios.iter().enumerate() {
            let mut cells = vec![
                if i == 0 {
                    let flag = if row.over_max { " *" } else { "" };
                    format!("{}{flag}", dose_amount_text(u, r.dose.kind, row.dose))
                } else {
                    String::new()
                },
                s.name.clone(),
            ];
            cells.extend(s.rows.iter().map(|p| {
                format!(
                    "{:+.2} ({} min)",
                    u.mass(p.mass_change_kg),
                    p.minutes_per_session
                )
            }));
            t.add_row(cells);
        }
    }
    align_numbers(&mut t, 2);
    t
}

fn text(r: &CompareReport, markdown: bool, u: Units) -> String {
    let (style, h) = if markdown {
        (presets::ASCII_MARKDOWN, "## ")
    } else {
        (presets::ASCII_FULL_CONDENSED, "")
    };
    let dose = format!(
        "{} {}",
        dose_amount_text(u, r.dose.kind, r.dose.amount),
        u.dose_label(r.dose.kind)
    );
    let mut s = if markdown {
        format!(
            "# Scenario comparison: participant {}\n\nPlan: {}; dose {dose}.\n\n",
            r.participant_id, r.plan
        )
    } else {
        format!(
            "dosewright scenario comparison: participant {} ({}); dose {dose}\n\n",
            r.participant_id, r.plan
        )
    };
    s.push_str(&format!("{h}Assumptions\n"));
    if markdown {
        s.push('\n');
    }
    for sc in &r.scenarios {
        s.push_str(&format!(
            "- {}: {}\n",
            sc.name,
            assumptions_text(&sc.compensation, u)
        ));
    }
    s.push('\n');
    let follow = if r.follow_up_weeks > 0 {
        format!(
            "; weeks {}-{} are follow-up with no exercise",
            r.protocol_weeks + 1,
            r.protocol_weeks + r.follow_up_weeks
        )
    } else {
        String::new()
    };
    s.push_str(&format!("{h}At the end of each checkpoint week\n"));
    if markdown {
        s.push('\n');
    }
    s.push_str(&format!("The protocol ends after week {}{follow}. Each row is the state at the end of the week (day 7N).\n", r.protocol_weeks));
    if markdown {
        s.push('\n');
    }
    s.push_str(&format!("{}\n", main_table(r, style, markdown, u)));
    if markdown {
        s.push('\n');
    }
    s.push_str(&format!(
        "Band: {}. Sources: {}.\n\n",
        r.band_meaning,
        r.band_sources.join("; ")
    ));
    if let Some(d) = &r.dose_response {
        s.push_str(&format!(
            "{h}Dose-response (mass change from baseline, with minutes per session that week)\n"
        ));
        if markdown {
            s.push('\n');
        }
        s.push_str(&format!("{}\n", dose_table(r, d, style, u)));
        s.push_str(&dose_notes(r, d, u));
        s.push('\n');
    }
    let warn = warnings_text(&r.warnings);
    let cautions = cautions_text(&r.screening);
    if markdown {
        s.push_str(&format!("## {}\n", warn.trim_start()));
        s.push_str(&format!("## {}", cautions));
    } else {
        s.push_str(&warn);
        s.push('\n');
        s.push_str(&cautions);
    }
    s
}

/// The table for a terminal, in units `u`.
pub fn render_table(r: &CompareReport, u: Units) -> String {
    text(r, false, u)
}

/// The notes under the dose-response table: the doses out of the model's range with
/// the reason, and the doses whose sessions exceed the maximum (marked `*`).
pub fn dose_notes(r: &CompareReport, d: &DoseResponse, u: Units) -> String {
    let mut s = String::new();
    let label = u.dose_label(r.dose.kind);
    for row in &d.doses {
        if let Some(why) = &row.out_of_range {
            s.push_str(&format!(
                "Dose {} {label}: out of the model's valid range in {why}; the other doses are shown\n",
                dose_amount_text(u, r.dose.kind, row.dose)
            ));
        }
    }
    let over: Vec<String> = d
        .doses
        .iter()
        .filter(|x| x.over_max)
        .map(|x| {
            format!(
                "{} {label} (longest {} min)",
                dose_amount_text(u, r.dose.kind, x.dose),
                x.longest_session_minutes.unwrap_or(0)
            )
        })
        .collect();
    if let (false, Some(max)) = (over.is_empty(), d.max_session_minutes) {
        s.push_str(&format!(
            "* Sessions over the maximum of {max} min in some week (before the over-maximum policy acts): {}\n",
            over.join(", ")
        ));
    }
    s
}

/// Markdown for documents, in units `u`.
pub fn render_markdown(r: &CompareReport, u: Units) -> String {
    text(r, true, u)
}

/// CSV: one row per scenario and checkpoint (then the dose-response rows, if any).
pub fn render_csv(r: &CompareReport) -> String {
    let mut w = ::csv::Writer::from_writer(Vec::new());
    w.write_record([
        "scenario",
        "dose",
        "week",
        "date",
        "phase",
        "mass_kg",
        "mass_low_kg",
        "mass_high_kg",
        "fat_mass_kg",
        "fat_free_mass_kg",
        "mass_change_kg",
        "minutes_per_session",
        "prescribed_net_kcal",
        "achieved_deficit_kcal",
        "dose_share",
    ])
    .expect("writing to memory");
    let dose = format!("{}", r.dose.amount);
    for sc in &r.scenarios {
        for row in &sc.rows {
            w.write_record([
                sc.name.clone(),
                dose.clone(),
                row.week.to_string(),
                row.date.to_string(),
                match row.phase {
                    Phase::Protocol => "protocol".to_string(),
                    Phase::FollowUp => "follow-up".to_string(),
                },
                format!("{:.3}", row.mass_kg),
                format!("{:.3}", row.mass_low_kg),
                format!("{:.3}", row.mass_high_kg),
                format!("{:.3}", row.fat_mass_kg),
                format!("{:.3}", row.fat_free_mass_kg),
                format!("{:.3}", row.mass_change_kg),
                row.minutes_per_session.to_string(),
                format!("{:.1}", row.prescribed_net_kcal),
                format!("{:.1}", row.achieved_deficit_kcal),
                format!("{:.4}", row.dose_share),
            ])
            .expect("writing to memory");
        }
    }
    if let Some(d) = &r.dose_response {
        for row in &d.doses {
            if row.out_of_range.is_some() {
                let mut cells = vec![String::new(); 15];
                cells[1] = format!("{}", row.dose);
                cells[4] = "out-of-range".to_string();
                w.write_record(cells).expect("writing to memory");
            }
            let phase = if row.over_max { "over-max" } else { "" };
            for sc in &row.scenarios {
                for p in &sc.rows {
                    let date = r.scenarios[0]
                        .rows
                        .iter()
                        .find(|x| x.week == p.week)
                        .map(|x| x.date.to_string())
                        .unwrap_or_default();
                    w.write_record([
                        sc.name.clone(),
                        format!("{}", row.dose),
                        p.week.to_string(),
                        date,
                        phase.to_string(),
                        String::new(),
                        String::new(),
                        String::new(),
                        String::new(),
                        String::new(),
                        format!("{:.3}", p.mass_change_kg),
                        p.minutes_per_session.to_string(),
                        String::new(),
                        String::new(),
                        String::new(),
                    ])
                    .expect("writing to memory");
                }
            }
        }
    }
    String::from_utf8(w.into_inner().expect("flushing to memory")).expect("UTF-8")
}
