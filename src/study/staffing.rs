//! Staffing of a study's site: the supervised hours of the sessions participants are
//! expected to attend, and the peak concurrent need (stations, supervisors) against
//! the site's opening hours (docs/file-formats.md, `[staffing]`; docs/commands.md,
//! cohort; docs/design.md, "Staff hours count expected attended sessions").
//!
//! The cohort counts, for the allocated runs of the first scenario, every protocol
//! week's whole-session minutes (warm-up, time at target, cool-down) of the runs still
//! exercising (a drop-out's minutes stop in the draw it drops out) and how many runs
//! were exercising ([`SiteTally`]). Attendance is an expectation: each planned session
//! is attended with the `[uncertainty]` probability `attendance`, so the expected
//! attended minutes are the planned minutes times `attendance`. Everything here is a
//! plain function of those counts and the study; nothing runs the simulation.

use super::Study;
use crate::plan::{Protocol, weekday_name};
use chrono::{Datelike, NaiveDate, NaiveTime, Weekday};
use serde::Serialize;

/// `[staffing]`: how the site supervises sessions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Staffing {
    /// Participants one supervisor oversees at a time.
    pub group_size: Option<u32>,
    /// Exercise stations on site (one participant each at a time).
    pub stations: Option<u32>,
    /// Opening hours per weekday, Monday first; a weekday not listed is closed.
    pub opening_hours: Vec<OpeningHours>,
}

/// One weekday's opening hours.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct OpeningHours {
    /// The weekday (`mon` ... `sun`).
    #[serde(serialize_with = "day_word")]
    pub weekday: Weekday,
    /// Opening time.
    #[serde(serialize_with = "hhmm")]
    pub open: NaiveTime,
    /// Closing time, after `open`.
    #[serde(serialize_with = "hhmm")]
    pub close: NaiveTime,
}

impl OpeningHours {
    /// Minutes open.
    pub fn minutes(&self) -> f64 {
        (self.close - self.open).num_minutes() as f64
    }
}

fn day_word<S: serde::Serializer>(d: &Weekday, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(weekday_name(*d))
}

fn hhmm<S: serde::Serializer>(t: &NaiveTime, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(&t.format("%H:%M").to_string())
}

/// Parse `"07:00-12:00"` (24-hour, opening before closing); the error says what is
/// allowed.
pub fn parse_hours(text: &str) -> Result<(NaiveTime, NaiveTime), String> {
    let bad = || {
        format!(
            "value \"{text}\" is not opening hours; give \"HH:MM-HH:MM\" in 24-hour time with the opening first, such as \"07:00-12:00\""
        )
    };
    let (a, b) = text.trim().split_once('-').ok_or_else(bad)?;
    let t = |s: &str| NaiveTime::parse_from_str(s.trim(), "%H:%M").map_err(|_| bad());
    let (open, close) = (t(a)?, t(b)?);
    if close <= open {
        return Err(format!(
            "value \"{text}\" closes before it opens; give the opening time first (opening hours past midnight are not supported)"
        ));
    }
    Ok((open, close))
}

/// The probability that a planned session is attended (`[uncertainty] attendance`, 1
/// without it).
pub fn attendance(study: &Study) -> f64 {
    study.uncertainty.map_or(1.0, |u| u.attendance)
}

/// The open session days (session weekdays not closed) of every protocol week.
pub fn session_dates(p: &Protocol) -> Vec<Vec<NaiveDate>> {
    (0..p.weeks)
        .map(|w| {
            (0..7)
                .map(|d| p.start + chrono::Duration::days(i64::from(7 * w + d)))
                .filter(|d| p.session_days.contains(&d.weekday()) && !p.closures.contains(d))
                .collect()
        })
        .collect()
}

/// Per protocol week, over the allocated runs of the first scenario: the runs
/// exercising, their whole-session minutes, and the longest visit (a run's minutes of
/// the week over the week's open session days). Whole numbers and a maximum, so they
/// add up alike in any order and on any number of threads.
#[derive(Debug, Clone, PartialEq, Default, Serialize, serde::Deserialize)]
pub struct SiteTally {
    /// Open session days of each week.
    days: Vec<u32>,
    /// Runs with session minutes in each week.
    people: Vec<u64>,
    /// Their whole-session minutes.
    minutes: Vec<u64>,
    /// The longest visit of each week, minutes.
    longest: Vec<u32>,
}

impl SiteTally {
    /// An empty tally for `p`'s weeks.
    pub fn new(p: &Protocol) -> SiteTally {
        let days: Vec<u32> = session_dates(p).iter().map(|d| d.len() as u32).collect();
        let n = days.len();
        SiteTally {
            days,
            people: vec![0; n],
            minutes: vec![0; n],
            longest: vec![0; n],
        }
    }

    /// Count one run's whole-session minutes of every protocol week.
    pub fn add(&mut self, session_minutes_by_week: &[u32]) {
        for (w, m) in session_minutes_by_week
            .iter()
            .enumerate()
            .take(self.days.len())
        {
            if *m > 0 {
                self.people[w] += 1;
                self.minutes[w] += u64::from(*m);
                self.longest[w] = self.longest[w].max(m.div_ceil(self.days[w].max(1)));
            }
        }
    }

    /// True when the tally has `p`'s weeks and open days (one read from a shard file
    /// is checked with it).
    pub fn fits(&self, p: &Protocol) -> bool {
        let days: Vec<u32> = session_dates(p).iter().map(|d| d.len() as u32).collect();
        let n = days.len();
        self.days == days
            && self.people.len() == n
            && self.minutes.len() == n
            && self.longest.len() == n
    }

    /// Two tallies together.
    pub fn merge(mut self, other: SiteTally) -> SiteTally {
        for w in 0..self.days.len() {
            self.people[w] += other.people[w];
            self.minutes[w] += other.minutes[w];
            self.longest[w] = self.longest[w].max(other.longest[w]);
        }
        self
    }
}

/// The busiest hour of the busiest week.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Peak {
    /// Protocol week.
    pub week: u32,
    /// Its date.
    pub date: NaiveDate,
    /// The weekday (`mon` ... `sun`).
    pub weekday: &'static str,
    /// `HH:MM` when every session starts at `[calendar] session_time`; None when the
    /// sessions are spread evenly over the day's opening hours.
    pub time: Option<String>,
    /// Participants expected on site at once (attendance times the participants still
    /// exercising; spread over the opening hours: the day's expected participant-minutes
    /// over the minutes open).
    pub participants: f64,
    /// Stations needed: the expected participants rounded up.
    pub stations_needed: u32,
    /// Supervisors needed: the expected participants over the group size, rounded up
    /// (None without a group size).
    pub supervisors_needed: Option<u32>,
}

/// The site's need (the JSON `staffing` object).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SiteNeed {
    /// The probability a planned session is attended (1 without `[uncertainty]`).
    pub attendance: f64,
    /// The weekly drop-out hazard (0 without `[uncertainty]`), as drawn in each draw.
    pub dropout_per_week: f64,
    /// Expected attended session-hours of the trial as allocated (the same as
    /// `staff_hours.total`).
    pub expected_session_hours: f64,
    /// Participants per supervisor, if stated.
    pub group_size: Option<u32>,
    /// Stations on site, if stated.
    pub stations: Option<u32>,
    /// Opening hours, if stated.
    pub opening_hours: Vec<OpeningHours>,
    /// Supervisor-hours at full groups: the session-hours over the group size.
    pub supervisor_hours: Option<f64>,
    /// The busiest hour (None without a session time or opening hours).
    pub peak: Option<Peak>,
    /// Whether the opening hours (and the stations) hold the sessions (None without
    /// opening hours or stations to hold them against).
    pub opening_hours_hold: Option<bool>,
    /// Why they do not (empty when they do).
    pub problems: Vec<String>,
}

/// The site's need of `study` from the tally of `draws` draws per participant;
/// `session_hours` is the trial's expected attended session-hours.
pub fn site_need(study: &Study, tally: &SiteTally, draws: u32, session_hours: f64) -> SiteNeed {
    let a = attendance(study);
    let draws = f64::from(draws.max(1));
    let st = study.staffing.clone().unwrap_or(Staffing {
        group_size: None,
        stations: None,
        opening_hours: Vec::new(),
    });
    let hours_of = |d: Weekday| st.opening_hours.iter().find(|h| h.weekday == d).copied();
    let time = study.calendar.session_time;
    let dates = session_dates(&study.protocol);
    // The expected participants at once on each open session day.
    let mut peak: Option<(u32, NaiveDate, f64)> = None;
    for (w, days) in dates.iter().enumerate() {
        for d in days {
            let at_once = match (time, hours_of(d.weekday())) {
                (Some(_), _) => a * tally.people[w] as f64 / draws,
                (None, Some(h)) => {
                    a * tally.minutes[w] as f64 / draws / f64::from(tally.days[w]) / h.minutes()
                }
                (None, None) => continue,
            };
            if peak.is_none_or(|(_, _, p)| at_once > p) {
                peak = Some((w as u32 + 1, *d, at_once));
            }
        }
    }
    let peak = peak.map(|(week, date, participants)| Peak {
        week,
        date,
        weekday: weekday_name(date.weekday()),
        time: time.map(|t| t.format("%H:%M").to_string()),
        participants,
        stations_needed: whole_up(participants),
        supervisors_needed: st.group_size.map(|g| whole_up(participants / f64::from(g))),
    });
    let problems = problems(study, &st, tally, draws, peak.as_ref());
    let checked = !st.opening_hours.is_empty() || st.stations.is_some();
    SiteNeed {
        attendance: a,
        dropout_per_week: study.uncertainty.map_or(0.0, |u| u.dropout_per_week),
        expected_session_hours: session_hours,
        group_size: st.group_size,
        stations: st.stations,
        supervisor_hours: st.group_size.map(|g| session_hours / f64::from(g)),
        peak,
        opening_hours_hold: checked.then_some(problems.is_empty()),
        opening_hours: st.opening_hours,
        problems,
    }
}

/// `x` rounded up to a whole number, with a hair of tolerance for sums of tenths.
fn whole_up(x: f64) -> u32 {
    (x - 1e-9).ceil().max(0.0) as u32
}

/// Why the opening hours or the stations cannot hold the sessions.
fn problems(
    study: &Study,
    st: &Staffing,
    tally: &SiteTally,
    draws: f64,
    peak: Option<&Peak>,
) -> Vec<String> {
    let mut out = Vec::new();
    let longest = tally.longest.iter().copied().max().unwrap_or(0);
    if longest == 0 {
        return out;
    }
    if let (Some(s), Some(p)) = (st.stations, peak)
        && p.stations_needed > s
    {
        out.push(format!(
            "week {} {}: {:.1} participants expected at once need {} stations; the site has {s}",
            p.week, p.weekday, p.participants, p.stations_needed
        ));
    }
    if st.opening_hours.is_empty() {
        return out;
    }
    let a = attendance(study);
    let time = study.calendar.session_time;
    for day in &study.protocol.session_days {
        let name = weekday_name(*day);
        let Some(h) = st.opening_hours.iter().find(|h| h.weekday == *day) else {
            out.push(format!("{name}: a session day with no opening hours"));
            continue;
        };
        match time {
            Some(t) => {
                let end = t + chrono::Duration::minutes(i64::from(longest));
                if t < h.open || end > h.close || end < t {
                    out.push(format!(
                        "{name}: sessions from {} lasting up to {longest} min fall outside the opening hours {}-{}",
                        t.format("%H:%M"),
                        h.open.format("%H:%M"),
                        h.close.format("%H:%M")
                    ));
                }
            }
            None if f64::from(longest) > h.minutes() => out.push(format!(
                "{name}: a session of up to {longest} min is longer than the {} min open",
                h.minutes()
            )),
            None => {}
        }
        if let (None, Some(s)) = (time, st.stations) {
            let busiest = (0..tally.days.len())
                .filter(|w| tally.days[*w] > 0)
                .map(|w| a * tally.minutes[w] as f64 / draws / f64::from(tally.days[w]))
                .fold(0.0, f64::max);
            if busiest > f64::from(s) * h.minutes() {
                out.push(format!(
                    "{name}: {busiest:.0} participant-minutes expected on the busiest day exceed {s} stations x {} min open",
                    h.minutes()
                ));
            }
        }
    }
    out
}
