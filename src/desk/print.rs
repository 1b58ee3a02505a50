//! The day view (computed by [`super::views::day_view`]) printed for the command
//! line: a table, CSV and a printable HTML page. Pure: the view in, text out. The
//! table and the page carry each participant's screening result and the standing
//! cautions (docs/warnings.md); the CSV's cautions go to standard error beside it.

use super::views::{DayLine, DayView, describe, hr_text};
use crate::error::Error;
use crate::report::sessions::PlannedSession;
use crate::safety::CAUTIONS;
use comfy_table::{Table, presets};
use maud::{DOCTYPE, html};

fn due_text(s: &PlannedSession) -> String {
    match s.bout {
        Some(b) => format!("{} (bout {b})", s.activity),
        None => s.activity.clone(),
    }
}

fn recorded_text(l: &DayLine) -> String {
    if l.recorded.is_empty() {
        return "nothing yet".to_string();
    }
    l.recorded
        .iter()
        .map(|r| {
            format!(
                "row {}: {} {}",
                r.id,
                r.measure.kind(),
                describe(&r.measure)
            )
        })
        .collect::<Vec<_>>()
        .join("\n")
}

fn screening_text(l: &DayLine) -> String {
    let mut s = l.screening.clone();
    if l.clearance_missing {
        s.push_str("\nMEDICAL CLEARANCE NEEDED, NOT ON FILE");
    }
    s
}

fn summary(v: &DayView) -> String {
    format!(
        "{} of {} enrolled participants are due a session or have a row on this date. Minutes and heart-rate ranges are re-planned from each participant's recorded weigh-ins and sessions; each participant's warnings are on their schedule (schedule --register with --participant).",
        v.lines.len(),
        v.enrolled
    )
}

/// The screening result of each participant in the view, then the standing
/// cautions, as text (after the table, and on standard error beside the CSV).
pub fn cautions_text(v: &DayView) -> String {
    let mut s = String::from("Cautions\n");
    for l in &v.lines {
        s.push_str(&format!(
            "  - Screening result of {}: {}.",
            l.code, l.screening
        ));
        if l.clearance_missing {
            s.push_str(" Medical clearance is needed and not on file.");
        }
        s.push('\n');
    }
    for c in CAUTIONS {
        s.push_str(&format!("  - {c}\n"));
    }
    s
}

/// The day view as a table, with the screening results and the cautions.
pub fn table(v: &DayView, register: &str) -> String {
    let mut t = Table::new();
    t.load_style(presets::ASCII_FULL_CONDENSED);
    t.set_header([
        "Participant",
        "Week",
        "Due",
        "Minutes at target",
        "Target heart rate",
        "RPE",
        "Recorded on this date",
        "Screening",
    ]);
    for l in &v.lines {
        let each = |f: &dyn Fn(&PlannedSession) -> String| {
            l.due.iter().map(f).collect::<Vec<_>>().join("\n")
        };
        let who = match &l.arm {
            Some(a) => format!("{}\n{a}", l.code),
            None => l.code.clone(),
        };
        t.add_row(vec![
            who,
            l.week.map(|w| w.to_string()).unwrap_or_default(),
            if l.due.is_empty() {
                "not due".to_string()
            } else {
                each(&due_text)
            },
            each(&|s| format!("{} ({} in all)", s.minutes, s.session_minutes)),
            each(&hr_text),
            each(&|s| format!("{}-{}", s.targets.rpe.0, s.targets.rpe.1)),
            recorded_text(l),
            screening_text(l),
        ]);
    }
    let body = if v.lines.is_empty() {
        "No one is due a session on this date.\n".to_string()
    } else {
        format!("{t}\n")
    };
    format!(
        "Day view {} ({register})\n{}\n\n{body}\n{}",
        v.date.format("%A %Y-%m-%d"),
        summary(v),
        cautions_text(v)
    )
}

/// The day view as CSV: one line per session due, then one per row recorded on the
/// date that no due session stands for.
pub fn csv(v: &DayView) -> Result<String, Error> {
    let mut w = csv::WriterBuilder::new()
        .terminator(csv::Terminator::Any(b'\n'))
        .from_writer(Vec::new());
    let internal = |e: csv::Error| Error::Internal(format!("writing CSV: {e}"));
    w.write_record([
        "date",
        "participant",
        "arm",
        "week",
        "line",
        "activity",
        "minutes_at_target",
        "session_minutes",
        "hr_low_bpm",
        "hr_high_bpm",
        "rpe_low",
        "rpe_high",
        "row_id",
        "recorded",
        "screening",
        "clearance_missing",
    ])
    .map_err(internal)?;
    for l in &v.lines {
        let common = |line: &str| {
            vec![
                v.date.to_string(),
                l.code.clone(),
                l.arm.clone().unwrap_or_default(),
                l.week.map(|w| w.to_string()).unwrap_or_default(),
                line.to_string(),
            ]
        };
        let tail = |row: String, recorded: String| {
            vec![
                row,
                recorded,
                l.screening.clone(),
                l.clearance_missing.to_string(),
            ]
        };
        for s in &l.due {
            let hr = s.targets.heart_rate.as_ref();
            let mut cells = common("due");
            cells.extend([
                due_text(s),
                s.minutes.to_string(),
                s.session_minutes.to_string(),
                hr.map(|h| h.low_bpm.to_string()).unwrap_or_default(),
                hr.map(|h| h.high_bpm.to_string()).unwrap_or_default(),
                s.targets.rpe.0.to_string(),
                s.targets.rpe.1.to_string(),
            ]);
            cells.extend(tail(String::new(), String::new()));
            w.write_record(&cells).map_err(internal)?;
        }
        for r in &l.recorded {
            let mut cells = common("recorded");
            cells.extend(std::iter::repeat_n(String::new(), 7));
            cells.extend(tail(
                r.id.to_string(),
                format!("{}: {}", r.measure.kind(), describe(&r.measure)),
            ));
            w.write_record(&cells).map_err(internal)?;
        }
    }
    let bytes = w
        .into_inner()
        .map_err(|e| Error::Internal(format!("writing CSV: {e}")))?;
    String::from_utf8(bytes).map_err(|e| Error::Internal(format!("CSV text: {e}")))
}

const STYLE: &str = "body{font-family:sans-serif;margin:1.5rem;color:#111}\
table{border-collapse:collapse;width:100%;font-size:0.9rem}\
th,td{border:1px solid #888;padding:0.3rem 0.4rem;vertical-align:top;text-align:left}\
td.n{text-align:right}.muted{color:#555}.warn{font-weight:bold}\
section.safety{border:2px solid #111;padding:0.5rem 1rem;margin-top:1rem;page-break-inside:avoid}\
@media print{body{margin:0}@page{margin:12mm}}";

/// The day view as a printable, self-contained HTML page, with each participant's
/// screening result and the standing cautions.
pub fn html(v: &DayView, register: &str) -> String {
    let title = format!("Day view {}", v.date.format("%A %Y-%m-%d"));
    let page = html! {
        (DOCTYPE)
        html lang="en" {
            head {
                meta charset="utf-8";
                title { (title) }
                style { (STYLE) }
            }
            body {
                h1 { (title) }
                p.muted { (register) ". " (summary(v)) }
                @if v.lines.is_empty() {
                    p { "No one is due a session on this date." }
                } @else {
                    table {
                        thead { tr {
                            th { "Participant" } th { "Week" } th { "Due" }
                            th { "Minutes at target" } th { "Target heart rate" } th { "RPE" }
                            th { "Recorded on this date" } th { "Screening" }
                        } }
                        tbody {
                            @for l in &v.lines {
                                tr {
                                    td { (l.code) @if let Some(a) = &l.arm { br; span.muted { (a) } } }
                                    td.n { @if let Some(w) = l.week { (w) } }
                                    td { @if l.due.is_empty() { "not due" } @for s in &l.due { div { (due_text(s)) } } }
                                    td.n { @for s in &l.due { div { (s.minutes) } div.muted { (s.session_minutes) " min in all" } } }
                                    td { @for s in &l.due { div { (hr_text(s)) } } }
                                    td { @for s in &l.due { div { (s.targets.rpe.0) "-" (s.targets.rpe.1) } } }
                                    td {
                                        @if l.recorded.is_empty() { "nothing yet" }
                                        @for r in &l.recorded { div { "row " (r.id) ": " (r.measure.kind()) " " (describe(&r.measure)) } }
                                    }
                                    td {
                                        (l.screening)
                                        @if l.clearance_missing { br; span.warn { "Medical clearance is needed and not on file." } }
                                    }
                                }
                            }
                        }
                    }
                }
                section.safety {
                    h2 { "Screening results and cautions" }
                    p { "Screening: each participant's result is in the Screening column above." }
                    ul { @for c in CAUTIONS { li { (c) } } }
                }
            }
        }
    };
    page.into_string()
}
