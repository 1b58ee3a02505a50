//! Adding one row to a log: the new row is written as CSV in its place by date (after
//! the file's own bytes when it is the latest), the whole new text is validated as a
//! log, and only then is it written, to a temporary file that is renamed over the log,
//! all under an exclusive lock on the log's folder, so concurrent adds keep every row.
//! Every other byte is kept as it was, except that a value for an optional named
//! column the log lacks ([`super::recorded::RECORDED_COLUMNS`]) adds that column to
//! the header and an empty cell for it to every other row; the other rows are then
//! checked to read back unchanged.

use super::parse::{
    self, BODY_FAT, CODE, DATE, HEART_RATE, KIND, MASS, MET, MINUTES, NOTE, Parsed, RPE,
};
use super::recorded::RECORDED_COLUMNS;
use super::{COLUMNS, Entry, LogRow, NewEntry, NewRow};
use crate::error::Error;
use crate::plan::Plan;
use crate::safety::Warning;
use std::path::Path;

/// See [`super::append_row`] and [`super::append_row_checked`]: `refuse` refuses a
/// weigh-in implausibly far from its neighbours or from the baseline, with the
/// caller's advice.
pub(super) fn append(
    path: &Path,
    plan: &Plan,
    row: &NewRow,
    refuse: Option<super::JumpAdvice<'_>>,
) -> Result<(String, Vec<Warning>), Error> {
    let name = path.display().to_string();
    crate::output::check_log(path)?;
    // Held until the new log is in place (the end of this function): a second
    // `log add` reads the log only after this one has replaced it.
    let _lock = crate::output::lock_folder_of(path)?;
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
    let unterminated = !body.is_empty() && !body.ends_with(['\n', '\r']);
    let (old_rows, header, place) = if needs_header {
        (Vec::new(), COLUMNS.map(str::to_string).to_vec(), None)
    } else {
        let parsed = parse::parse(&name, &old, plan, None)?;
        // The new row goes before the first row of a later date (after the rows of
        // its own date), else at the end.
        let place = parsed
            .log
            .rows
            .iter()
            .find(|r| r.date > row.date)
            .map(|r| r.line);
        (parsed.log.rows, parsed.header, place)
    };
    // A value for an optional named column the log lacks adds the column.
    let missing: Vec<&str> = RECORDED_COLUMNS
        .into_iter()
        .filter(|c| row.recorded.has(c) && !header.iter().any(|h| h == c))
        .collect();
    let old = if needs_header || missing.is_empty() {
        old
    } else {
        widen(&old, &missing)
    };
    let header: Vec<String> = header
        .into_iter()
        .chain(missing.iter().map(|c| c.to_string()))
        .collect();
    let eol = line_ending(&old);
    let rendered = render(row, &header)?;
    let text = match place {
        Some(line) => {
            let at = line_start(&old, line);
            format!("{}{rendered}{eol}{}", &old[..at], &old[at..])
        }
        None => {
            let mut text = old.clone();
            if unterminated {
                text.push_str(eol);
            }
            if needs_header {
                text.push_str(&header.join(","));
                text.push_str(eol);
            }
            text.push_str(&rendered);
            text.push_str(eol);
            text
        }
    };

    let Parsed { log, warnings, .. } = parse::parse(&name, &text, plan, None)?;
    let found = match place {
        Some(line) => log.rows.iter().position(|r| r.line == line),
        None => log.rows.len().checked_sub(1),
    };
    let Some(index) = found.filter(|&i| {
        log.rows.len() == old_rows.len() + 1
            && log.rows[i].date == row.date
            && unchanged(&old_rows, &log.rows, i)
    }) else {
        return Err(Error::Usage(format!(
            "{name}: the new row did not read back in its place by date; the file is unchanged"
        )));
    };
    let added = &log.rows[index];
    if let Some(advice) = refuse {
        refuse_a_jump(&name, plan, &log.rows, index, advice)?;
    }
    // The temporary file gets the log's own permissions before it replaces the log.
    crate::output::write_atomic(path, text.as_bytes(), false)?;
    let what = format!("added line {}: {}", added.line, describe(added, plan));
    let confirmation = match (existed, needs_header, missing.is_empty()) {
        (false, _, _) => format!("{name}: created with its header; {what}"),
        (true, true, _) => format!("{name}: wrote the header; {what}"),
        (true, false, true) => format!("{name}: {what}"),
        (true, false, false) => format!(
            "{name}: added the column(s) {} to the header, empty on the other rows; {what}",
            missing.join(", ")
        ),
    };
    let line = added.line;
    let warnings = warnings
        .into_iter()
        .filter(|w| w.line == line)
        .map(|w| w.warning)
        .collect();
    Ok((confirmation, warnings))
}

/// The byte offset where 1-based `line` of `text` starts; a line ends at `\r\n`,
/// `\r` or `\n`, as the reader counts them.
fn line_start(text: &str, line: usize) -> usize {
    let bytes = text.as_bytes();
    let mut current = 1;
    let mut i = 0;
    while current < line && i < bytes.len() {
        match bytes[i] {
            b'\r' if bytes.get(i + 1) == Some(&b'\n') => {
                i += 2;
                current += 1;
            }
            b'\r' | b'\n' => {
                i += 1;
                current += 1;
            }
            _ => i += 1,
        }
    }
    i
}

/// Refuse the weigh-in at `rows[index]` when [`super::plausible::is_implausible`]
/// against the previous weigh-in, the next one or the plan's baseline mass on the
/// protocol start.
fn refuse_a_jump(
    name: &str,
    plan: &Plan,
    rows: &[LogRow],
    index: usize,
    advice: super::JumpAdvice<'_>,
) -> Result<(), Error> {
    let mass = |r: &LogRow| match r.entry {
        Entry::WeighIn { mass_kg, .. } => Some(mass_kg),
        Entry::Session { .. } => None,
    };
    let row = &rows[index];
    let Some(kg) = mass(row) else {
        return Ok(());
    };
    let before = rows[..index]
        .iter()
        .rev()
        .find_map(|r| mass(r).map(|m| (r, m)));
    let after = rows[index + 1..]
        .iter()
        .find_map(|r| mass(r).map(|m| (r, m)));
    let words = |(r, m): (&LogRow, f64)| {
        (
            format!(
                "the weigh-in of {} ({} kg, line {})",
                r.date,
                num(m),
                r.line
            ),
            r.date,
            m,
        )
    };
    let base = (plan.protocol.start, plan.participant.subject.mass_kg);
    match super::plausible::first_jump(row.date, kg, before.map(words), after.map(words), base) {
        Some(jump) => Err(Error::Usage(format!(
            "{name}: {}",
            jump.message(row.date, kg, advice, "The file is unchanged")
        ))),
        None => Ok(()),
    }
}

/// A number as the refusals write it ([`super::plausible`]).
fn num(x: f64) -> String {
    super::plausible::two(x)
}

/// The file's line ending: that of its first line, else `\n`.
fn line_ending(text: &str) -> &'static str {
    match text.find(['\n', '\r']) {
        Some(i) if text[i..].starts_with("\r\n") => "\r\n",
        Some(i) if text[i..].starts_with('\r') => "\r",
        _ => "\n",
    }
}

/// The row as one CSV line with a cell for each of `header`'s columns (no line
/// ending).
fn render(row: &NewRow, header: &[String]) -> Result<String, Error> {
    let number = |x: f64| format!("{x}");
    let optional = |x: Option<f64>| x.map(number).unwrap_or_default();
    let mut cells = vec![String::new(); header.len().max(COLUMNS.len())];
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
    for (i, column) in header.iter().enumerate().skip(COLUMNS.len()) {
        if RECORDED_COLUMNS.contains(&column.as_str()) {
            cells[i] = row.recorded.cell(column);
        }
    }
    Ok(cells.iter().map(|c| quote(c)).collect::<Vec<_>>().join(","))
}

/// `text` with the `missing` columns added at the end of its header line, and an
/// empty cell for each at the end of every later line that holds anything (blank
/// lines stay blank). Line endings and every other byte are kept.
fn widen(text: &str, missing: &[&str]) -> String {
    let mut out = String::with_capacity(text.len() + 64);
    let mut header_seen = false;
    let mut rest = text;
    while !rest.is_empty() {
        let end = rest.find(['\n', '\r']).unwrap_or(rest.len());
        let (line, tail) = rest.split_at(end);
        let eol = if tail.starts_with("\r\n") {
            2
        } else {
            usize::from(!tail.is_empty())
        };
        out.push_str(line);
        if !line.trim_start_matches('\u{feff}').trim().is_empty() {
            for column in missing {
                out.push(',');
                if !header_seen {
                    out.push_str(column);
                }
            }
            header_seen = true;
        }
        out.push_str(&tail[..eol]);
        rest = &tail[eol..];
    }
    out
}

/// Whether `new` (with the added row at `added`) holds every row of `old` as it
/// was, in order.
fn unchanged(old: &[LogRow], new: &[LogRow], added: usize) -> bool {
    let others = new
        .iter()
        .enumerate()
        .filter(|(i, _)| *i != added)
        .map(|(_, r)| r);
    old.iter().zip(others).all(|(a, b)| {
        a.date == b.date && a.entry == b.entry && a.note == b.note && a.recorded == b.recorded
    })
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
    if let Some(m) = &row.recorded.body_fat_method {
        text.push_str(&format!(" by {m}"));
    }
    if let Some(w) = row.recorded.watts {
        text.push_str(&format!(", {} W used", num(w)));
    }
    if let Some(v) = row.recorded.speed_kmh {
        text.push_str(&format!(", {} km/h used", num(v)));
    }
    if !row.note.is_empty() {
        text.push_str(&format!(" (note: {})", row.note));
    }
    text
}
