//! `calendar`: the planned sessions as an iCalendar file.

use super::{LogInput, Printed, check_outputs, display_units, warning_lines, write_output};
use crate::cli::CalendarArgs;
use crate::error::Error;
use crate::plan::Plan;
use crate::report::calendar::Previous;
use crate::report::units::Units;
use crate::report::{self, ScheduleReport};
use crate::safety::Warning;
use crate::simulate::simulate_observed;
use chrono::{DateTime, NaiveDate, NaiveDateTime, Utc};

/// What `calendar` asks for besides the plan and the log.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct CalendarRequest {
    /// Whose sessions (None: the first scenario).
    pub scenario: Option<String>,
    /// DTSTAMP: the time of writing, read from the clock by [`run`], or `--stamp`.
    pub stamp: DateTime<Utc>,
    /// The events of the calendar written before at `--out` (empty: none), whose
    /// SEQUENCE each event keeps or raises (docs/commands.md, `calendar`).
    pub previous: Previous,
    /// First date to include.
    pub from: Option<NaiveDate>,
    /// Last date to include.
    pub to: Option<NaiveDate>,
    /// Display units of the descriptions.
    pub units: Units,
}

/// A written calendar: the file's text and what it holds.
#[derive(Debug, Clone, PartialEq)]
pub struct CalendarFile {
    /// The iCalendar text (CRLF line ends).
    pub text: String,
    /// Events in it for planned sessions.
    pub events: usize,
    /// Events of the calendar written before that it cancels (sessions no longer
    /// in the plan).
    pub cancelled: usize,
    /// First and last session date.
    pub span: (NaiveDate, NaiveDate),
    /// The plan's and the log's warnings.
    pub warnings: Vec<Warning>,
}

/// Refuse a `--from` after `--to`.
pub fn check_span(from: Option<NaiveDate>, to: Option<NaiveDate>) -> Result<(), Error> {
    match (from, to) {
        (Some(f), Some(t)) if f > t => Err(Error::Usage(format!(
            "--from {f} is after --to {t}; give a span that runs forward"
        ))),
        _ => Ok(()),
    }
}

/// The calendar of a plan (re-planned from its log, if any): the sessions of one
/// scenario within the span, as an iCalendar file.
pub fn calendar_file(
    plan: &Plan,
    log: &LogInput,
    request: &CalendarRequest,
) -> Result<CalendarFile, Error> {
    check_span(request.from, request.to)?;
    let sim = simulate_observed(plan, log.observed.as_ref())?;
    let mut r = ScheduleReport::new(plan, sim);
    r.warnings.extend(log.warnings.iter().cloned());
    let index = super::scenario_index(&r, request.scenario.as_deref())?;
    let all = report::sessions::session_plan(plan, &r.scenarios[index]);
    let chosen = report::calendar::within(&all, request.from, request.to);
    let dates: Vec<NaiveDate> = chosen
        .weeks
        .iter()
        .flat_map(|w| w.sessions.iter().map(|s| s.date))
        .collect();
    let (Some(first), Some(last)) = (dates.first(), dates.last()) else {
        let span = match (request.from, request.to) {
            (Some(f), Some(t)) => format!(" from {f} to {t}"),
            (Some(f), None) => format!(" on or after {f}"),
            (None, Some(t)) => format!(" on or before {t}"),
            (None, None) => String::new(),
        };
        let sessions: Vec<NaiveDate> = all
            .weeks
            .iter()
            .flat_map(|w| w.sessions.iter().map(|s| s.date))
            .collect();
        let runs = match (sessions.first(), sessions.last()) {
            (Some(a), Some(b)) => format!("the plan's sessions run from {a} to {b}"),
            _ => "the plan has no session at all (every session date is closed)".to_string(),
        };
        return Err(Error::Usage(format!(
            "no planned session{span} to put in a calendar; {runs}"
        )));
    };
    let span = (*first, *last);
    report::calendar::check_times(&chosen, &plan.calendar)?;
    let (text, cancelled) = report::calendar::render(
        &chosen,
        &plan.calendar,
        report::calendar::Against {
            stamp: request.stamp,
            previous: &request.previous,
            span: (request.from, request.to),
        },
        &r.screening,
        &r.warnings,
        request.units,
    );
    Ok(CalendarFile {
        text,
        events: dates.len(),
        cancelled,
        span,
        warnings: r.warnings,
    })
}

/// Run `calendar`.
pub fn run(args: &CalendarArgs) -> Result<Printed, Error> {
    let stamp = args.stamp.as_deref().map(parse_stamp).transpose()?;
    check_span(args.from, args.to)?;
    let inputs = super::log_inputs(args.plan.as_deref(), &args.logged);
    check_outputs(Some(&args.out), None, &inputs)?;
    let (plan, log) = super::plan_and_logged(args.plan.as_deref(), &args.logged, Ok)?;
    let to_stdout = crate::output::is_stdout(&args.out);
    let (previous, note) = if to_stdout {
        (Previous::new(), None)
    } else {
        previous_calendar(&args.out)?
    };
    let request = CalendarRequest {
        scenario: args.scenario.clone(),
        // DTSTAMP: the time of writing (whole seconds, 3.8.7.2), unless --stamp fixes it.
        stamp: stamp.unwrap_or_else(clock_stamp),
        previous,
        from: args.from,
        to: args.to,
        units: display_units(&args.display),
    };
    let cal = calendar_file(&plan, &log, &request)?;
    let stdout = if to_stdout {
        cal.text.clone()
    } else {
        write_output(&args.out, cal.text.as_bytes(), false)?;
        String::new()
    };
    let mut stderr = format!(
        "wrote {}: {} events from {} to {}{}\n",
        if to_stdout {
            "standard output".to_string()
        } else {
            args.out.display().to_string()
        },
        cal.events,
        cal.span.0,
        cal.span.1,
        match cal.cancelled {
            0 => String::new(),
            n => format!(
                ", and {n} event(s) of the calendar there cancelled (sessions no longer in the plan)"
            ),
        }
    );
    stderr.push_str(&note.unwrap_or_default());
    stderr.push_str(&warning_lines(&cal.warnings));
    Ok(Printed { stdout, stderr })
}

/// The clock's time in whole seconds (DTSTAMP has no fraction, RFC 5545 3.8.7.2).
fn clock_stamp() -> DateTime<Utc> {
    let now = Utc::now();
    DateTime::from_timestamp(now.timestamp(), 0).unwrap_or(now)
}

/// The events of the calendar already at `out` (none when there is no file): read
/// through the one reader and the icalendar crate's parser. A file there that is not
/// a calendar gives no events and a note for standard error: it is written over, as
/// `--out` always is, with every SEQUENCE 0.
pub fn previous_calendar(out: &std::path::Path) -> Result<(Previous, Option<String>), Error> {
    if std::fs::metadata(out).is_err() {
        return Ok((Previous::new(), None));
    }
    let file = crate::input::read(out)?;
    Ok(match report::calendar::previous_events(&file.raw) {
        Ok(events) => (events, None),
        Err(why) => (
            Previous::new(),
            Some(format!(
                "note: {}: {why}, so no event keeps a SEQUENCE from it (each is 0); it is written over\n",
                file.name
            )),
        ),
    })
}

/// Parse `--stamp`: an RFC 3339 date-time (`2027-03-01T08:00:00Z`, or with an
/// offset, which is turned into UTC) or the iCalendar UTC form
/// (`20270301T080000Z`). Whole seconds only: DTSTAMP has no fraction (3.8.7.2).
pub fn parse_stamp(text: &str) -> Result<DateTime<Utc>, Error> {
    let t = text.trim();
    let parsed = DateTime::parse_from_rfc3339(t)
        .map(|d| d.with_timezone(&Utc))
        .or_else(|_| NaiveDateTime::parse_from_str(t, "%Y%m%dT%H%M%SZ").map(|d| d.and_utc()));
    match parsed {
        Ok(d) if d.timestamp_subsec_nanos() != 0 => Err(Error::Usage(format!(
            "--stamp {text}: a fraction of a second is not allowed; give whole seconds such as 2027-03-01T08:00:00Z"
        ))),
        Ok(d) => Ok(d),
        Err(_) => Err(Error::Usage(format!(
            "--stamp {text}: not a date-time; give an RFC 3339 date-time such as 2027-03-01T08:00:00Z (or with an offset, 2027-03-01T09:00:00+01:00)"
        ))),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stamps_in_both_forms_and_bad_ones() {
        let want = NaiveDate::from_ymd_opt(2027, 3, 1)
            .unwrap()
            .and_hms_opt(8, 0, 0)
            .unwrap()
            .and_utc();
        assert_eq!(parse_stamp("2027-03-01T08:00:00Z").unwrap(), want);
        assert_eq!(parse_stamp("2027-03-01T09:00:00+01:00").unwrap(), want);
        assert_eq!(parse_stamp("20270301T080000Z").unwrap(), want);
        for bad in [
            "2027-03-01",
            "tomorrow",
            "2027-02-30T08:00:00Z",
            "2027-03-01T08:00:00.5Z",
        ] {
            assert!(parse_stamp(bad).is_err(), "{bad}");
        }
    }
}
