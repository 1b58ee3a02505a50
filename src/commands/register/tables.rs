//! The register's listings as a table or CSV: participants, rows, the audit trail.
//! Pure: values in, text out.

use crate::cli::ListFormat;
use crate::desk::views::describe;
use crate::error::Error;
use crate::register::{self, Change, Participant, Row, Status};
use comfy_table::{Table, presets};

/// Rows of cells as a table (`header` first) or as CSV.
fn render(header: &[&str], lines: Vec<Vec<String>>, format: ListFormat) -> Result<String, Error> {
    match format {
        ListFormat::Table => {
            let mut t = Table::new();
            t.load_style(presets::ASCII_FULL_CONDENSED);
            t.set_header(header.iter().copied());
            for l in lines {
                t.add_row(l);
            }
            Ok(format!("{t}\n"))
        }
        ListFormat::Csv => {
            let mut w = csv::WriterBuilder::new()
                .terminator(csv::Terminator::Any(b'\n'))
                .from_writer(Vec::new());
            let internal = |e: csv::Error| Error::Internal(format!("writing CSV: {e}"));
            w.write_record(header).map_err(internal)?;
            for l in lines {
                w.write_record(&l).map_err(internal)?;
            }
            let bytes = w
                .into_inner()
                .map_err(|e| Error::Internal(format!("writing CSV: {e}")))?;
            String::from_utf8(bytes).map_err(|e| Error::Internal(format!("CSV text: {e}")))
        }
    }
}

/// The participants: code, arm, plan source, who enrolled them and when.
pub fn participants(ps: &[Participant], format: ListFormat) -> Result<String, Error> {
    let lines = ps
        .iter()
        .map(|p| {
            vec![
                p.code.clone(),
                p.arm.clone().unwrap_or_default(),
                p.plan_name.clone(),
                p.enrolled.at_text(),
                p.enrolled.who.clone(),
            ]
        })
        .collect();
    render(
        &["participant", "arm", "plan", "enrolled_at", "enrolled_by"],
        lines,
        format,
    )
}

/// Rows: id, participant, kind, date, values, status, who recorded them and when.
pub fn rows(rows: &[Row], format: ListFormat) -> Result<String, Error> {
    let lines = rows
        .iter()
        .map(|r| {
            let status = match r.status {
                Status::Superseded(by) => format!("superseded by {by}"),
                s => s.name().to_string(),
            };
            vec![
                r.id.to_string(),
                r.participant.clone(),
                r.measure.kind().to_string(),
                r.measure.date().to_string(),
                describe(&r.measure),
                r.measure.note().to_string(),
                status,
                r.supersedes.map(|i| i.to_string()).unwrap_or_default(),
                r.recorded.at_text(),
                r.recorded.who.clone(),
            ]
        })
        .collect();
    render(
        &[
            "row_id",
            "participant",
            "kind",
            "date",
            "values",
            "note",
            "status",
            "supersedes",
            "recorded_at",
            "recorded_by",
        ],
        lines,
        format,
    )
}

/// The audit trail: as a table for people, or the tidy CSV of the export.
pub fn audit(changes: &[Change], format: ListFormat) -> Result<String, Error> {
    if format == ListFormat::Csv {
        return register::changes_csv(changes);
    }
    let lines = changes
        .iter()
        .map(|c| {
            vec![
                c.id.to_string(),
                c.stamp.at_text(),
                c.stamp.who.clone(),
                c.action.name().to_string(),
                c.row.map(|i| i.to_string()).unwrap_or_default(),
                c.reason.clone().unwrap_or_default(),
                values(c.old_values.as_deref()),
                values(c.new_values.as_deref()),
            ]
        })
        .collect();
    render(
        &[
            "change", "at", "by", "action", "row", "reason", "before", "after",
        ],
        lines,
        format,
    )
}

/// Audit values (JSON) as `key: value` lines, empty values left out, a plan's text
/// by its length only.
fn values(json: Option<&str>) -> String {
    let Some(text) = json else {
        return String::new();
    };
    let Ok(map) = serde_json::from_str::<serde_json::Map<String, serde_json::Value>>(text) else {
        return text.to_string();
    };
    map.iter()
        .filter_map(|(k, v)| match v {
            serde_json::Value::Null => None,
            serde_json::Value::String(s) if s.is_empty() => None,
            serde_json::Value::String(s) if k == "plan_text" => {
                Some(format!("{k}: {} lines", s.lines().count()))
            }
            serde_json::Value::String(s) => Some(format!("{k}: {s}")),
            other => Some(format!("{k}: {other}")),
        })
        .collect::<Vec<_>>()
        .join("\n")
}
