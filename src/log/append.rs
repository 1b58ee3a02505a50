//! Appending one row to a log: the new row is written as CSV after the file's own
//! bytes, the whole new text is validated as a log, and only then is it written, to a
//! temporary file that is renamed over the log. Earlier bytes are never rewritten.

use super::parse::{
    self, BODY_FAT, CODE, DATE, HEART_RATE, KIND, MASS, MET, MINUTES, NOTE, Parsed, RPE,
};
use super::{COLUMNS, Entry, LogRow, NewEntry, NewRow};
use crate::error::Error;
use crate::plan::Plan;
use crate::safety::Warning;
use std::path::Path;

/// See [`super::append_row`].
pub(super) fn append(
    path: &Path,
    plan: &Plan,
    row: &NewRow,
) -> Result<(String, Vec<Warning>), Error> {
    let name = path.display().to_string();
    crate::output::check_log(path)?;
    let existed =
        !matches!(std::fs::metadata(path), Err(e) if e.kind() == std::io::ErrorKind::NotFound);
    let old = if existed {
        crate::input::read(path)?.raw
    } else {
        String::new()
    };
    let body = old.strip_prefix('\u{feff}').unwrap_or(&old);
    // An empty file (or one holding only a byte-order mark or blank lines) gets the
    // header, like a new one.
    let needs_header = body.trim().is_empty();
    let (old_rows, columns) = if needs_header {
        (0, COLUMNS.len())
    } else {
        let parsed = parse::parse(&name, &old, plan, None)?;
        (parsed.log.rows.len(), parsed.columns)
    };
    let eol = line_ending(&old);
    let mut text = old.clone();
    if !body.is_empty() && !body.ends_with(['\n', '\r']) {
        text.push_str(eol);
    }
    if needs_header {
        text.push_str(&COLUMNS.join(","));
        text.push_str(eol);
    }
    text.push_str(&render(row, columns)?);
    text.push_str(eol);

    let Parsed { log, warnings, .. } = parse::parse(&name, &text, plan, None)?;
    let added = match log.rows.last() {
        Some(r) if log.rows.len() == old_rows + 1 && r.date == row.date => r,
        _ => {
            return Err(Error::Usage(format!(
                "{name}: the new row did not read back as the log's last row; the file is unchanged"
            )));
        }
    };
    // The temporary file gets the log's own permissions before it replaces the log.
    crate::output::write_atomic(path, text.as_bytes(), false)?;
    let what = describe(added, plan);
    let confirmation = match (existed, needs_header) {
        (false, _) => format!(
            "{name}: created with its header; added line {}: {what}",
            added.line
        ),
        (true, true) => format!(
            "{name}: wrote the header; added line {}: {what}",
            added.line
        ),
        (true, false) => format!("{name}: added line {}: {what}", added.line),
    };
    let line = added.line;
    let warnings = warnings
        .into_iter()
        .filter(|w| w.line == line)
        .map(|w| w.warning)
        .collect();
    Ok((confirmation, warnings))
}

/// The file's line ending: that of its first line, else `\n`.
fn line_ending(text: &str) -> &'static str {
    match text.find(['\n', '\r']) {
        Some(i) if text[i..].starts_with("\r\n") => "\r\n",
        Some(i) if text[i..].starts_with('\r') => "\r",
        _ => "\n",
    }
}

/// The row as one CSV line of `columns` cells (no line ending).
fn render(row: &NewRow, columns: usize) -> Result<String, Error> {
    let number = |x: f64| format!("{x}");
    let optional = |x: Option<f64>| x.map(number).unwrap_or_default();
    let mut cells = vec![String::new(); columns.max(COLUMNS.len())];
    cells[DATE] = row.date.format("%Y-%m-%d").to_string();
    match &row.entry {
        NewEntry::WeighIn {
            mass_kg,
            body_fat_percent,
        } => {
            cells[KIND] = "weigh-in".to_string();
            cells[MASS] = number(*mass_kg);
            cells[BODY_FAT] = optional(*body_fat_percent);
        }
        NewEntry::Session {
            minutes,
            compendium_code,
            met,
            avg_hr_bpm,
            rpe,
        } => {
            cells[KIND] = "session".to_string();
            cells[MINUTES] = number(*minutes);
            cells[CODE] = one_line("compendium_code", compendium_code.as_deref())?;
            cells[MET] = optional(*met);
            cells[HEART_RATE] = optional(*avg_hr_bpm);
            cells[RPE] = optional(*rpe);
        }
    }
    cells[NOTE] = one_line("note", row.note.as_deref())?;
    Ok(cells.iter().map(|c| quote(c)).collect::<Vec<_>>().join(","))
}

/// Text for a cell, which must fit on one line.
fn one_line(key: &str, text: Option<&str>) -> Result<String, Error> {
    let text = text.unwrap_or_default();
    if text.contains(['\n', '\r']) {
        return Err(Error::Usage(format!(
            "{key}: the text holds a line break; a log cell must be one line"
        )));
    }
    Ok(text.to_string())
}

/// A CSV cell, quoted when it holds a comma or a quote.
fn quote(cell: &str) -> String {
    if cell.contains([',', '"']) {
        format!("\"{}\"", cell.replace('"', "\"\""))
    } else {
        cell.to_string()
    }
}

/// A row in a few words, for the confirmation.
fn describe(row: &LogRow, plan: &Plan) -> String {
    let num = |x: f64| format!("{}", (x * 100.0).round() / 100.0);
    let mut text = match &row.entry {
        Entry::WeighIn {
            mass_kg,
            body_fat_percent,
        } => {
            let fat = body_fat_percent.map_or(String::new(), |f| format!(", {}% body fat", num(f)));
            format!("weigh-in on {}, {} kg{fat}", row.date, num(*mass_kg))
        }
        Entry::Session {
            minutes,
            intensity,
            compendium_code,
            met,
            avg_hr_bpm,
            rpe,
        } => {
            let activity = match (compendium_code, met) {
                (None, None) => format!(
                    "the plan's activity ({})",
                    plan.activity_on(chrono::Datelike::weekday(&row.date)).label
                ),
                (None, Some(m)) => format!("{} MET", num(*m)),
                (Some(_), _) => intensity.describe(),
            };
            let mut t = if *minutes == 0.0 {
                format!("session on {}, 0 min (missed), {activity}", row.date)
            } else {
                format!("session on {}, {} min, {activity}", row.date, num(*minutes))
            };
            if let Some(hr) = avg_hr_bpm {
                t.push_str(&format!(", average heart rate {} beats/min", num(*hr)));
            }
            if let Some(r) = rpe {
                t.push_str(&format!(", RPE {}", num(*r)));
            }
            t
        }
    };
    if !row.note.is_empty() {
        text.push_str(&format!(" (note: {})", row.note));
    }
    text
}
