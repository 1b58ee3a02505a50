//! `calendar`: the planned sessions as an iCalendar file.

use super::{LogInput, Printed, check_outputs, display_units, warning_lines, write_output};
use crate::cli::CalendarArgs;
use crate::error::Error;
use crate::plan::Plan;
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
    /// DTSTAMP (None: the protocol start at 00:00 UTC).
    pub stamp: Option<DateTime<Utc>>,
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
    /// Events in it.
    pub events: usize,
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
    let stamp = request.stamp.unwrap_or_else(|| {
        plan.protocol
            .start
            .and_time(chrono::NaiveTime::MIN)
            .and_utc()
    });
    let text = report::calendar::render(
        &chosen,
        &plan.calendar,
        stamp,
        &r.screening,
        &r.warnings,
        request.units,
    );
    Ok(CalendarFile {
        text,
        events: dates.len(),
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
    let request = CalendarRequest {
        scenario: args.scenario.clone(),
        stamp,
        from: args.from,
        to: args.to,
        units: display_units(&args.display),
    };
    let cal = calendar_file(&plan, &log, &request)?;
    let to_stdout = crate::output::is_stdout(&args.out);
    let stdout = if to_stdout {
        cal.text.clone()
    } else {
        write_output(&args.out, cal.text.as_bytes(), false)?;
        String::new()
    };
    let mut stderr = format!(
        "wrote {}: {} events from {} to {}\n",
        if to_stdout {
            "standard output".to_string()
        } else {
            args.out.display().to_string()
        },
        cal.events,
        cal.span.0,
        cal.span.1
    );
    stderr.push_str(&warning_lines(&cal.warnings));
    Ok(Printed { stdout, stderr })
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
