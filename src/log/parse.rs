//! Log text -> validated [`Log`]: the header, each row's field count, date, kind,
//! numbers and ranges, the order of the rows; every error names the file, the line,
//! the cell (1-based) and its column, the value and what is allowed.

use super::cells::parse_number;
use super::recorded::{RECORDED_COLUMNS, Recorded};
use super::{COLUMNS, Entry, Log, LogRow};
use crate::activity::{Intensity, compendium};
use crate::error::{Error, InputError, Location};
use crate::plan::Plan;
use crate::safety::Warning;
use chrono::NaiveDate;

// Cell indices (0-based) of the columns of [`COLUMNS`].
pub(super) const DATE: usize = 0;
pub(super) const KIND: usize = 1;
pub(super) const MASS: usize = 2;
pub(super) const BODY_FAT: usize = 3;
pub(super) const MINUTES: usize = 4;
pub(super) const CODE: usize = 5;
pub(super) const MET: usize = 6;
pub(super) const HEART_RATE: usize = 7;
pub(super) const RPE: usize = 8;
pub(super) const NOTE: usize = 9;

/// An allowed range for a number cell.
struct Limits {
    lo: f64,
    hi: f64,
    /// `lo` itself is not allowed (MET: above 1).
    above: bool,
    unit: &'static str,
}

const MASS_KG: Limits = Limits {
    lo: 30.0,
    hi: 350.0,
    above: false,
    unit: " kg",
};
const BODY_FAT_PERCENT: Limits = Limits {
    lo: 3.0,
    hi: 70.0,
    above: false,
    unit: " %",
};
const SESSION_MINUTES: Limits = Limits {
    lo: 0.0,
    hi: 600.0,
    above: false,
    unit: " min",
};
const MET_RANGE: Limits = Limits {
    lo: 1.0,
    hi: 25.0,
    above: true,
    unit: " MET",
};
const HEART_RATE_BPM: Limits = Limits {
    lo: 30.0,
    hi: 250.0,
    above: false,
    unit: " beats/min",
};
const BORG_RPE: Limits = Limits {
    lo: 6.0,
    hi: 20.0,
    above: false,
    unit: " (Borg 6-20 scale)",
};

impl Limits {
    fn allowed(&self) -> String {
        if self.above {
            format!(
                "allowed above {} and at most {}{}",
                fmt_num(self.lo),
                fmt_num(self.hi),
                self.unit
            )
        } else {
            format!(
                "allowed {} to {}{}",
                fmt_num(self.lo),
                fmt_num(self.hi),
                self.unit
            )
        }
    }

    fn contains(&self, x: f64) -> bool {
        let low_ok = if self.above {
            x > self.lo
        } else {
            x >= self.lo
        };
        low_ok && x <= self.hi
    }
}

use crate::plan::participant::fmt_num;

/// A warning with the line it is about.
pub(super) struct LineWarning {
    /// 1-based line of the row that earns it.
    pub line: usize,
    /// The warning.
    pub warning: Warning,
}

/// A parsed log with what [`super::append`] needs besides.
pub(super) struct Parsed {
    /// The log.
    pub log: Log,
    /// Its warnings, in line order.
    pub warnings: Vec<LineWarning>,
    /// The header's cells, trimmed (at least [`COLUMNS`]).
    pub header: Vec<String>,
}

/// The header as it must be, for messages.
fn header_text() -> String {
    COLUMNS.join(",")
}

/// Parse and validate log text.
pub(super) fn parse(
    file: &str,
    text: &str,
    plan: &Plan,
    as_of: Option<NaiveDate>,
) -> Result<Parsed, Error> {
    // A UTF-8 byte-order mark is accepted (spreadsheets on Windows write one), and
    // Windows and old Mac line endings.
    let start = plan.protocol.start;
    let end = plan.protocol.end_date();
    if let Some(d) = as_of
        && (d < start || d > end)
    {
        return Err(Error::Usage(format!(
            "the as-of date {d} is outside the protocol; give a date from the start {start} through the end of follow-up {end}"
        )));
    }
    let mut cx = Cx {
        file,
        plan,
        as_of,
        header: Vec::new(),
        rows: Vec::new(),
    };
    let text = crate::input::normalise(text);
    let (records, fault) = crate::input::csv_records(&text, false);
    for record in &records {
        let cells: Vec<&str> = record.cells.iter().map(String::as_str).collect();
        if cells.iter().all(|c| c.trim().is_empty()) {
            continue; // a blank line, or a row of empty cells a spreadsheet left
        }
        if cx.header.is_empty() {
            cx.header = cx.check_header(record.line, &cells)?;
        } else {
            let row = cx.row(record.line, &cells)?;
            cx.rows.push(row);
        }
    }
    if let Some(f) = fault {
        let key = f.cell.and_then(|c| cx.name(c));
        return Err(f.into_error(file, key));
    }
    if cx.header.is_empty() {
        // Nothing but blank lines or empty cells.
        return Err(Error::Input(InputError {
            location: Location::file(file),
            key: None,
            message: format!(
                "the log is empty; its first line must be the header {}",
                header_text()
            ),
        }));
    }
    let warnings = jumps(file, &cx.rows);
    Ok(Parsed {
        header: cx.header,
        log: Log {
            path: file.to_string(),
            rows: cx.rows,
        },
        warnings,
    })
}

/// Warnings for consecutive weigh-ins that differ by more than the one rule of
/// [`super::plausible::allowed_change_kg`] allows.
fn jumps(file: &str, rows: &[LogRow]) -> Vec<LineWarning> {
    let weigh_ins: Vec<(&LogRow, f64)> = rows
        .iter()
        .filter_map(|r| match r.entry {
            Entry::WeighIn { mass_kg, .. } => Some((r, mass_kg)),
            Entry::Session { .. } => None,
        })
        .collect();
    weigh_ins
        .windows(2)
        .filter_map(|pair| {
            let [(before, m0), (after, m1)] = pair else {
                return None;
            };
            let days = (after.date - before.date).num_days();
            let change = m1 - m0;
            let allowed = super::plausible::allowed_change_kg(*m0, days);
            super::plausible::is_implausible(*m0, days, *m1).then(|| LineWarning {
                line: after.line,
                warning: Warning {
                    code: "log-implausible-jump",
                    message: format!(
                        "{file} line {}: the weigh-in of {} ({} kg) is {} kg {} the one of {} ({} kg, line {}), more than {} kg in {} {}; body stores do not change that fast, so check the entry (a typing slip, another scale, clothing)",
                        after.line,
                        after.date,
                        fmt_num(*m1),
                        fmt_num((change.abs() * 100.0).round() / 100.0),
                        if change > 0.0 { "above" } else { "below" },
                        before.date,
                        fmt_num(*m0),
                        before.line,
                        fmt_num((allowed * 100.0).round() / 100.0),
                        days,
                        if days == 1 { "day" } else { "days" },
                    ),
                },
            })
        })
        .collect()
}

/// The parsing context: the file, the plan and the rows so far.
struct Cx<'a> {
    file: &'a str,
    plan: &'a Plan,
    as_of: Option<NaiveDate>,
    /// The header's cells, trimmed; empty until the header is read.
    header: Vec<String>,
    rows: Vec<LogRow>,
}

impl Cx<'_> {
    fn error(
        &self,
        line: usize,
        cell: Option<usize>,
        key: Option<String>,
        message: String,
    ) -> Error {
        Error::Input(InputError {
            location: Location {
                file: self.file.to_string(),
                line: Some(line),
                column: cell.map(|c| c + 1),
            },
            key,
            message,
        })
    }

    /// The column name of cell `i`, once the header is known.
    fn name(&self, i: usize) -> Option<String> {
        self.header.get(i).filter(|h| !h.is_empty()).cloned()
    }

    /// An error at cell `i` of a data row, keyed by its column.
    fn at(&self, line: usize, i: usize, message: String) -> Error {
        self.error(line, Some(i), self.name(i), message)
    }

    fn check_header(&self, line: usize, cells: &[&str]) -> Result<Vec<String>, Error> {
        let cells: Vec<String> = cells.iter().map(|c| c.trim().to_string()).collect();
        if cells.first().is_some_and(|c| looks_like_data(c)) {
            return Err(self.error(
                line,
                Some(0),
                None,
                format!(
                    "no header row: this line holds data (\"{}\"); insert the header {} as the first line",
                    cells[0],
                    header_text()
                ),
            ));
        }
        for (i, want) in COLUMNS.iter().enumerate() {
            match cells.get(i) {
                Some(got) if got == want => {}
                Some(got) => {
                    let also = if COLUMNS.contains(&got.as_str()) {
                        " (the columns are out of order)"
                    } else {
                        ""
                    };
                    return Err(self.error(
                        line,
                        Some(i),
                        None,
                        format!(
                            "header column {} is \"{got}\" where \"{want}\" belongs{also}; the header must start {} in this order (more columns may follow)",
                            i + 1,
                            header_text()
                        ),
                    ));
                }
                None => {
                    return Err(self.error(
                        line,
                        Some(i),
                        None,
                        format!(
                            "the header has {} columns and lacks {}; it must start {} in this order (more columns may follow)",
                            cells.len(),
                            COLUMNS[i..].join(", "),
                            header_text()
                        ),
                    ));
                }
            }
        }
        if let Some(i) = (COLUMNS.len()..cells.len()).find(|&i| {
            RECORDED_COLUMNS.contains(&cells[i].as_str()) && cells[..i].contains(&cells[i])
        }) {
            return Err(self.error(
                line,
                Some(i),
                None,
                format!(
                    "header column {} repeats \"{}\"; give it once",
                    i + 1,
                    cells[i]
                ),
            ));
        }
        Ok(cells)
    }

    fn row(&self, line: usize, cells: &[&str]) -> Result<LogRow, Error> {
        self.check_field_count(line, cells)?;
        let date = self.date(line, cells[DATE])?;
        let kind = self.kind(line, cells[KIND])?;
        self.check_date_place(line, date, kind)?;
        let entry = match kind {
            Kind::WeighIn => self.weigh_in(line, cells)?,
            Kind::Session => self.session(line, cells, date)?,
        };
        let recorded = self.recorded(line, cells, &entry)?;
        Ok(LogRow {
            line,
            date,
            entry,
            note: cells[NOTE].trim().to_string(),
            recorded,
        })
    }

    /// The row's values in the optional named columns, by their one rule.
    fn recorded(&self, line: usize, cells: &[&str], entry: &Entry) -> Result<Recorded, Error> {
        let (weigh_in, fat) = match entry {
            Entry::WeighIn {
                body_fat_percent, ..
            } => (true, *body_fat_percent),
            Entry::Session { .. } => (false, None),
        };
        Recorded::read(&self.header, cells, weigh_in, fat).map_err(|(i, m)| self.at(line, i, m))
    }

    fn check_field_count(&self, line: usize, cells: &[&str]) -> Result<(), Error> {
        let want = self.header.len();
        let got = cells.len();
        if got == want {
            return Ok(());
        }
        if got < want {
            return Err(self.error(
                line,
                Some(got),
                None,
                format!(
                    "this row has {got} cells but the header has {want}; give every column its cell, empty where it does not apply (keep the commas)"
                ),
            ));
        }
        // Too many cells: a decimal comma that split a number in two shifts the cells
        // after it, so the note's place then holds a number or nothing; an unquoted
        // comma in the note leaves text there.
        let note = cells[NOTE].trim();
        let shifted = note.is_empty() || parse_number(note).is_ok();
        let split = (MASS..=RPE).find(|&i| {
            let (a, b) = (cells[i].trim(), cells[i + 1].trim());
            let digits = |t: &str| !t.is_empty() && t.bytes().all(|c| c.is_ascii_digit());
            digits(a.strip_prefix('-').unwrap_or(a)) && digits(b)
        });
        Err(match split {
            Some(i) if shifted => {
                let (a, b) = (cells[i].trim(), cells[i + 1].trim());
                self.at(
                    line,
                    i,
                    format!(
                        "this row has {got} cells but the header has {want}: \"{a},{b}\" looks like a number written with a decimal comma; write {a}.{b} with a point (if it is not one, look for another stray comma)"
                    ),
                )
            }
            _ if !shifted => self.at(
                line,
                NOTE,
                format!(
                    "this row has {got} cells but the header has {want}: the note seems to hold a comma; put the note in double quotes (\"{note}, ...\") or leave the comma out"
                ),
            ),
            _ => self.error(
                line,
                Some(want),
                None,
                format!(
                    "this row has {got} cells but the header has {want}; a comma used as a decimal separator (91,4 for 91.4) or an unquoted comma adds a cell: write numbers with a point, and put text with commas in double quotes"
                ),
            ),
        })
    }

    fn date(&self, line: usize, cell: &str) -> Result<NaiveDate, Error> {
        parse_date(cell, self.plan.protocol.start).map_err(|m| self.at(line, DATE, m))
    }

    fn kind(&self, line: usize, cell: &str) -> Result<Kind, Error> {
        let s = cell.trim();
        match s {
            "weigh-in" => return Ok(Kind::WeighIn),
            "session" => return Ok(Kind::Session),
            _ => {}
        }
        if s.is_empty() {
            return Err(self.at(
                line,
                KIND,
                "missing kind; allowed weigh-in or session".to_string(),
            ));
        }
        let letters: String = s
            .chars()
            .filter(|c| c.is_alphabetic())
            .flat_map(char::to_lowercase)
            .collect();
        let hint = match letters.as_str() {
            "weighin" | "weight" | "weighing" => " (write weigh-in)",
            "session" | "sessions" => " (write session)",
            _ => "",
        };
        Err(self.at(
            line,
            KIND,
            format!("value \"{s}\" is not a kind; allowed weigh-in or session{hint}"),
        ))
    }

    /// Within the protocol, in date order, not after `as_of`, one weigh-in a date.
    fn check_date_place(&self, line: usize, date: NaiveDate, kind: Kind) -> Result<(), Error> {
        let start = self.plan.protocol.start;
        let end = self.plan.protocol.end_date();
        let span = format!(
            "log dates run from the protocol start {start} through {end}, the morning after the last day of follow-up"
        );
        if date < start {
            return Err(self.at(
                line,
                DATE,
                format!("date {date} is before the protocol start; {span}"),
            ));
        }
        if date > end {
            return Err(self.at(
                line,
                DATE,
                format!("date {date} is after the end of follow-up; {span}"),
            ));
        }
        if let Some(prev) = self.rows.last()
            && date < prev.date
        {
            return Err(self.at(
                line,
                DATE,
                format!(
                    "date {date} is earlier than {} on line {}; rows must be in date order: move this row up to its place, or correct the date",
                    prev.date, prev.line
                ),
            ));
        }
        if let Some(as_of) = self.as_of
            && date > as_of
        {
            return Err(self.at(
                line,
                DATE,
                format!(
                    "date {date} is after the as-of date {as_of}; the log may hold no rows after it: give a later as-of date, or none to read the whole log"
                ),
            ));
        }
        if kind == Kind::WeighIn
            // Rows are in date order, so that date's rows are the last ones.
            && let Some(first) = self
                .rows
                .iter()
                .rev()
                .take_while(|r| r.date == date)
                .filter(|r| matches!(r.entry, Entry::WeighIn { .. }))
                .last()
        {
            return Err(self.at(
                line,
                DATE,
                format!(
                    "a second weigh-in on {date} (the first is on line {}); keep one weigh-in per date: delete one, or correct its date",
                    first.line
                ),
            ));
        }
        Ok(())
    }

    fn weigh_in(&self, line: usize, cells: &[&str]) -> Result<Entry, Error> {
        for i in MINUTES..=RPE {
            self.refuse(line, cells, i, "weigh-in", "session")?;
        }
        let mass_kg = self.number(line, cells, MASS, &MASS_KG)?.ok_or_else(|| {
            self.at(
                line,
                MASS,
                format!("a weigh-in row needs mass_kg; {}", MASS_KG.allowed()),
            )
        })?;
        let body_fat_percent = self.number(line, cells, BODY_FAT, &BODY_FAT_PERCENT)?;
        Ok(Entry::WeighIn {
            mass_kg,
            body_fat_percent,
        })
    }

    fn session(&self, line: usize, cells: &[&str], date: NaiveDate) -> Result<Entry, Error> {
        for i in [MASS, BODY_FAT] {
            self.refuse(line, cells, i, "session", "weigh-in")?;
        }
        let minutes = self
            .number(line, cells, MINUTES, &SESSION_MINUTES)?
            .ok_or_else(|| {
                self.at(
                    line,
                    MINUTES,
                    format!(
                        "a session row needs minutes; {} (0 records a missed session)",
                        SESSION_MINUTES.allowed()
                    ),
                )
            })?;
        let code = Some(cells[CODE].trim()).filter(|c| !c.is_empty());
        let met = self.number(line, cells, MET, &MET_RANGE)?;
        if let (Some(c), Some(m)) = (code, met) {
            return Err(self.at(
                line,
                MET,
                format!(
                    "value {} is given with compendium_code \"{c}\"; give one of compendium_code or met, not both",
                    fmt_num(m)
                ),
            ));
        }
        let intensity = match (code, met) {
            (Some(c), _) => self.code(line, c)?,
            (None, Some(met)) => Intensity::Met { met },
            (None, None) => self
                .plan
                .activity_on(chrono::Datelike::weekday(&date))
                .intensity
                .clone(),
        };
        let avg_hr_bpm = self.number(line, cells, HEART_RATE, &HEART_RATE_BPM)?;
        let rpe = self.rpe(line, cells)?;
        Ok(Entry::Session {
            minutes,
            intensity,
            compendium_code: code.map(str::to_string),
            met,
            avg_hr_bpm,
            rpe,
        })
    }

    /// A cell that belongs to the other kind of row must be empty.
    fn refuse(
        &self,
        line: usize,
        cells: &[&str],
        i: usize,
        this: &str,
        other: &str,
    ) -> Result<(), Error> {
        let s = cells[i].trim();
        if s.is_empty() {
            return Ok(());
        }
        Err(self.at(
            line,
            i,
            format!(
                "value \"{s}\" on a {this} row; {} belongs to {other} rows: clear the cell, or give the {other} a row of its own",
                COLUMNS[i]
            ),
        ))
    }

    fn code(&self, line: usize, code: &str) -> Result<Intensity, Error> {
        if let Some(e) = compendium::lookup(code) {
            return Ok(Intensity::Compendium {
                code: e.code.clone(),
                met: e.met,
                version: e.version,
            });
        }
        let padded = format!("{code:0>5}");
        let message = if code.len() < 5
            && code.bytes().all(|b| b.is_ascii_digit())
            && compendium::lookup(&padded).is_some()
        {
            format!(
                "unknown code \"{code}\"; did you mean \"{padded}\"? Compendium codes have five digits with leading zeros (a spreadsheet drops them unless the column is formatted as text)"
            )
        } else {
            format!(
                "unknown code \"{code}\"; the built-in table holds {} codes of the 2011 Compendium (list them with `dosewright activities`), or give met instead",
                compendium::table().len()
            )
        };
        Err(self.at(line, CODE, message))
    }

    fn rpe(&self, line: usize, cells: &[&str]) -> Result<Option<f64>, Error> {
        let s = cells[RPE].trim();
        if s.is_empty() {
            return Ok(None);
        }
        let x = parse_number(s)
            .map_err(|m| self.at(line, RPE, format!("{m}; {}", BORG_RPE.allowed())))?;
        if BORG_RPE.contains(x) {
            return Ok(Some(x));
        }
        let hint = if (0.0..6.0).contains(&x) {
            "; a 0-10 rating (Borg CR10) is another scale with no exact conversion: record the 6-20 rating, or leave rpe empty"
        } else {
            ""
        };
        Err(self.at(
            line,
            RPE,
            format!(
                "value {} is out of range; {}{hint}",
                fmt_num(x),
                BORG_RPE.allowed()
            ),
        ))
    }

    /// An optional number cell within `limits`.
    fn number(
        &self,
        line: usize,
        cells: &[&str],
        i: usize,
        limits: &Limits,
    ) -> Result<Option<f64>, Error> {
        let s = cells[i].trim();
        if s.is_empty() {
            return Ok(None);
        }
        let x =
            parse_number(s).map_err(|m| self.at(line, i, format!("{m}; {}", limits.allowed())))?;
        if !limits.contains(x) {
            return Err(self.at(
                line,
                i,
                format!("value {} is out of range; {}", fmt_num(x), limits.allowed()),
            ));
        }
        Ok(Some(x))
    }
}

/// The kind of a row.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Kind {
    WeighIn,
    Session,
}

/// Whether a first cell looks like a data row's date rather than a column name.
fn looks_like_data(cell: &str) -> bool {
    cell.chars().next().is_some_and(|c| c.is_ascii_digit())
}

/// An ISO date (YYYY-MM-DD), or what is wrong with the text and how to write it;
/// `example` is a date to show.
fn parse_date(cell: &str, example: NaiveDate) -> Result<NaiveDate, String> {
    let s = cell.trim();
    if s.is_empty() {
        return Err(format!(
            "missing date; every row needs one, as YYYY-MM-DD (e.g. {example})"
        ));
    }
    let parts: Vec<&str> = s.split(['-', '/', '.']).collect();
    let numbers: Option<Vec<u32>> = match parts.as_slice() {
        [a, b, c]
            if [a, b, c].iter().all(|p| {
                !p.is_empty() && p.len() <= 4 && p.bytes().all(|d| d.is_ascii_digit())
            }) =>
        {
            [a, b, c].iter().map(|p| p.parse().ok()).collect()
        }
        _ => None,
    };
    let Some(n) = numbers else {
        let what = if s
            .get(..10)
            .is_some_and(|d| d.len() < s.len() && parse_date(d, example).is_ok())
        {
            format!("value \"{s}\" is not a plain date; give the date alone, as YYYY-MM-DD")
        } else {
            format!("value \"{s}\" is not a date; use YYYY-MM-DD (e.g. {example})")
        };
        return Err(what);
    };
    let year_first = parts[0].len() == 4;
    let iso = year_first && s.len() == 10 && s.as_bytes()[4] == b'-' && s.as_bytes()[7] == b'-';
    if iso {
        let date = i32::try_from(n[0])
            .ok()
            .and_then(|y| NaiveDate::from_ymd_opt(y, n[1], n[2]));
        return date.ok_or_else(|| {
            format!("value \"{s}\" is not a date on the calendar; use YYYY-MM-DD with month 01-12 and a day within the month")
        });
    }
    if year_first {
        let date = i32::try_from(n[0])
            .ok()
            .and_then(|y| NaiveDate::from_ymd_opt(y, n[1], n[2]));
        return Err(match date {
            Some(d) => format!("value \"{s}\" is not written as YYYY-MM-DD; write {d}"),
            None => format!("value \"{s}\" is not a date; use YYYY-MM-DD (e.g. {example})"),
        });
    }
    if parts[2].len() == 4 {
        let y = i32::try_from(n[2]).unwrap_or(0);
        let day_first = NaiveDate::from_ymd_opt(y, n[1], n[0]);
        let month_first = NaiveDate::from_ymd_opt(y, n[0], n[1]);
        return Err(match (day_first, month_first) {
            (Some(d), Some(m)) if d != m => format!(
                "value \"{s}\" puts day and month before the year, and which comes first cannot be told; use YYYY-MM-DD: {d} if the day comes first, {m} if the month does"
            ),
            (Some(d), _) | (None, Some(d)) => {
                format!("value \"{s}\" puts the year last; use YYYY-MM-DD: write {d}")
            }
            (None, None) => {
                format!("value \"{s}\" is not a date; use YYYY-MM-DD (e.g. {example})")
            }
        });
    }
    Err(format!(
        "value \"{s}\" is not a date; use YYYY-MM-DD (e.g. {example})"
    ))
}
