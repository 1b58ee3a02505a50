//! The record cells of a session sheet: blanks to fill in, or, on a re-printed week,
//! what the log says was delivered beside what was prescribed (minutes at the target
//! intensity, average heart rate, RPE); and the setting actually used on equipment
//! (treadmill speed and grade, ergometer watts), a blank to fill in, since the log
//! records a session's MET or Compendium code but not the machine's setting
//! (docs/file-formats.md section 3).

use super::sessions::{PlannedSession, PlannedWeek};
use super::units::Units;
use crate::activity::Intensity;
use crate::simulate::observed::Delivered;
use chrono::NaiveDate;

/// The delivered sessions of a log, for re-printed weeks.
#[derive(Debug, Clone, PartialEq)]
pub struct DeliveredLog {
    /// Dates up to and including this one are in the past: their record cells show
    /// the log's rows (or that none was logged) instead of blanks.
    pub as_of: NaiveDate,
    /// The log's session rows up to `as_of`, in date order.
    pub sessions: Vec<Delivered>,
}

impl DeliveredLog {
    /// The delivered sessions of a log's measured data, up to its as-of date.
    pub fn of(observed: &crate::simulate::observed::Observed) -> DeliveredLog {
        DeliveredLog {
            as_of: observed.as_of,
            sessions: observed
                .sessions
                .iter()
                .filter(|d| d.day <= observed.as_of_day)
                .cloned()
                .collect(),
        }
    }

    /// The log's session rows on `date`.
    fn on(&self, date: NaiveDate) -> Vec<&Delivered> {
        self.sessions.iter().filter(|d| d.date == date).collect()
    }
}

/// What one record line of a planned session shows.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Record<'a> {
    /// A date after the log (or no log): blanks to fill in.
    Blank,
    /// The log's row for this session.
    Logged(&'a Delivered),
    /// A date the log covers with no row for this session.
    NotLogged,
}

/// The record of session `s`: the log's `k`-th row on its date for the `k`-th session
/// (or bout) of that date.
pub fn record<'a>(log: Option<&'a DeliveredLog>, s: &PlannedSession) -> Record<'a> {
    match log {
        Some(l) if s.date <= l.as_of => l
            .on(s.date)
            .get(s.index_on_date as usize - 1)
            .map_or(Record::NotLogged, |d| Record::Logged(d)),
        _ => Record::Blank,
    }
}

/// Minutes at target, average heart rate and RPE of a record ("" for a blank).
pub fn record_values(r: Record) -> [String; 3] {
    let opt = |v: Option<f64>| v.map_or("-".to_string(), |x| format!("{x:.0}"));
    match r {
        Record::Blank => [String::new(), String::new(), String::new()],
        Record::Logged(d) if d.minutes == 0.0 => {
            ["0 (missed)".to_string(), opt(d.avg_hr_bpm), opt(d.rpe)]
        }
        Record::Logged(d) => [format!("{:.0}", d.minutes), opt(d.avg_hr_bpm), opt(d.rpe)],
        Record::NotLogged => ["none logged".to_string(), "-".to_string(), "-".to_string()],
    }
}

/// The setting to record on an equipment-based activity: a treadmill's speed and
/// grade, an ergometer's watts.
fn is_equipment(i: &Intensity) -> Option<bool> {
    match i {
        Intensity::Walking { .. } | Intensity::Running { .. } => Some(true),
        Intensity::CyclingWatts { .. } => Some(false),
        _ => None,
    }
}

/// The header of the setting column, or None when no session of the week is on
/// equipment (no column).
pub fn setting_header(w: &PlannedWeek, u: Units) -> Option<String> {
    let kinds: Vec<bool> = w
        .sessions
        .iter()
        .filter_map(|s| is_equipment(&s.intensity))
        .collect();
    match (kinds.iter().any(|k| *k), kinds.iter().any(|k| !*k)) {
        (true, true) => Some("setting used".to_string()),
        (true, false) => Some(format!("{}, % grade used", u.speed_label())),
        (false, true) => Some("W used".to_string()),
        (false, false) => None,
    }
}

/// The setting cell of session `s` with record `r`: None when the activity is not on
/// equipment; else the words to print ("" for a blank). A logged row gives the MET it
/// records when that differs from the plan's intensity.
pub fn setting_value(s: &PlannedSession, r: Record, mass_kg: f64) -> Option<String> {
    is_equipment(&s.intensity)?;
    Some(match r {
        Record::Logged(d) if d.intensity != s.intensity => {
            format!("{:.1} MET logged", d.intensity.met_at(mass_kg))
        }
        Record::Logged(_) | Record::NotLogged => "not in the log".to_string(),
        Record::Blank => String::new(),
    })
}

/// The setting to fill in, in words, for the text sheet.
pub fn setting_blank(s: &PlannedSession, u: Units, blank: &str) -> Option<String> {
    Some(if is_equipment(&s.intensity)? {
        format!("speed used {blank} {} at {blank} % grade", u.speed_label())
    } else {
        format!("watts used {blank} W")
    })
}

/// Whether the log covers any date of week `w`.
pub fn covers_week(log: Option<&DeliveredLog>, w: &PlannedWeek) -> bool {
    log.is_some_and(|l| w.start <= l.as_of)
}

/// The header over the record cells.
pub fn header(log: Option<&DeliveredLog>, w: &PlannedWeek) -> String {
    match log {
        Some(l) if w.end <= l.as_of => "Delivered (from the log)".to_string(),
        Some(l) if w.start <= l.as_of => {
            format!(
                "Delivered (from the log to {}; fill in later dates)",
                l.as_of
            )
        }
        _ => "Delivered (fill in)".to_string(),
    }
}

/// The log's rows of week `w` that no planned session takes (a session on another
/// day, or more than planned on a date), in words.
pub fn also_logged(log: Option<&DeliveredLog>, w: &PlannedWeek) -> Vec<String> {
    let Some(l) = log else {
        return Vec::new();
    };
    let mut out = Vec::new();
    let mut date = w.start;
    while date <= w.end.min(l.as_of) {
        let planned = w.sessions.iter().filter(|s| s.date == date).count();
        for d in l.on(date).into_iter().skip(planned) {
            let [m, hr, rpe] = record_values(Record::Logged(d));
            out.push(format!(
                "Also logged {}: {m} min at target, avg HR {hr}, RPE {rpe} (not a planned session).",
                date.format("%a %Y-%m-%d")
            ));
        }
        date = date.succ_opt().expect("plan dates end before 2201");
    }
    out
}
