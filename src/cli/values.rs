//! The command line's value parsers for dates and numbers: a message that names what
//! is wrong with the value and what is allowed (docs/commands.md section 3). clap puts
//! the option and the value as given in front: `invalid value '82,5' for '--weigh-in
//! <MASS>': ...`.

use chrono::{Datelike, NaiveDate};

/// A calendar date written `YYYY-MM-DD`. A date that does not exist (2027-02-30) is
/// refused with the number of days its month has; a day-month order with slashes
/// gets a hint.
pub fn date(s: &str) -> Result<NaiveDate, String> {
    let t = s.trim();
    if let Ok(d) = NaiveDate::parse_from_str(t, "%Y-%m-%d") {
        return Ok(d);
    }
    let parts: Vec<&str> = t.split('-').collect();
    let numbers: Option<Vec<u32>> = parts.iter().map(|p| p.parse().ok()).collect();
    if let (3, Some(n)) = (parts.len(), numbers) {
        let (year, month, day) = (n[0] as i32, n[1], n[2]);
        if !(1..=12).contains(&month) {
            return Err(format!(
                "month {month} does not exist; write the date as YYYY-MM-DD with a month from 01 to 12"
            ));
        }
        if let Some(first) = NaiveDate::from_ymd_opt(year, month, 1) {
            let days = days_in_month(first);
            if day == 0 || day > days {
                return Err(format!(
                    "not a date on the calendar: {} {year} has {days} days; write an existing date as YYYY-MM-DD",
                    first.format("%B")
                ));
            }
        }
    }
    let hint = if t.contains('/') || t.contains('.') {
        " (not day/month/year)"
    } else {
        ""
    };
    Err(format!(
        "not a date; write it as YYYY-MM-DD{hint}, e.g. 2027-01-04"
    ))
}

/// The number of days in the month that starts on `first`.
fn days_in_month(first: NaiveDate) -> u32 {
    let next = if first.month() == 12 {
        NaiveDate::from_ymd_opt(first.year() + 1, 1, 1)
    } else {
        NaiveDate::from_ymd_opt(first.year(), first.month() + 1, 1)
    };
    next.map_or(31, |n| n.signed_duration_since(first).num_days() as u32)
}

/// A number; a decimal comma (`82,5`) is named as one with the number written with
/// a point, and text that is not a number says so.
pub fn number(s: &str) -> Result<f64, String> {
    let t = s.trim();
    if let Ok(x) = t.parse::<f64>() {
        if x.is_finite() {
            return Ok(x);
        }
        return Err("not a finite number; give a number such as 82.5".to_string());
    }
    if t.matches(',').count() == 1 && t.replace(',', ".").parse::<f64>().is_ok() {
        return Err(format!(
            "a decimal comma; write {} with a point",
            t.replace(',', ".")
        ));
    }
    Err("not a number; give a number with a decimal point, such as 82.5".to_string())
}

/// A number above zero (`goal --lose-kg`); zero, a negative number and a value that
/// is not finite are refused, echoing the value as given.
pub fn positive(s: &str) -> Result<f64, String> {
    let t = s.trim();
    match t.parse::<f64>() {
        Ok(x) if x.is_finite() && x > 0.0 => Ok(x),
        Ok(_) => Err(format!("must be a positive number (above 0); got {t}")),
        Err(_) => number(t),
    }
}

/// A week number: a whole number. A negative number or a fraction is named as such;
/// the command checks the range against the plan's weeks.
pub fn week(s: &str) -> Result<u32, String> {
    let t = s.trim();
    if let Ok(n) = t.parse::<u32>() {
        return Ok(n);
    }
    match t.parse::<f64>() {
        Ok(x) if x < 0.0 => {
            Err("a negative week; allowed a whole number of weeks from 1".to_string())
        }
        Ok(x) if x.is_finite() && x.fract() != 0.0 => {
            Err("not a whole number; allowed a whole number of weeks from 1".to_string())
        }
        Ok(_) => Err(
            "too large; allowed a whole number of weeks from 1 to the plan's last week".to_string(),
        ),
        Err(_) => Err("not a number; allowed a whole number of weeks from 1".to_string()),
    }
}

/// The highest number of worker threads `--threads` and `RAYON_NUM_THREADS` allow.
pub const MAX_THREADS: usize = 256;

/// Check the value of `RAYON_NUM_THREADS` (read by the binary, not here): None when
/// it is unset or a whole number from 1 to [`MAX_THREADS`], else the message.
pub fn rayon_threads_problem(value: Option<&std::ffi::OsStr>) -> Option<String> {
    let v = value?;
    let text = v.to_string_lossy();
    match text.trim().parse::<usize>() {
        Ok(n) if (1..=MAX_THREADS).contains(&n) => None,
        _ => Some(format!(
            "RAYON_NUM_THREADS={}: allowed a whole number of worker threads from 1 to {MAX_THREADS} (as --threads); or unset it for one thread per core",
            shortened(&text)
        )),
    }
}

/// A value for a message, cut to 40 characters with an ellipsis.
fn shortened(text: &str) -> String {
    if text.chars().count() <= 40 {
        text.to_string()
    } else {
        let head: String = text.chars().take(40).collect();
        format!("{head}...")
    }
}
