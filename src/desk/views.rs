//! What the desk's pages show, computed from the register with the planning
//! library (no HTTP here): a participant re-planned from their rows, the day view,
//! the sheets of a week.
//!
//! A participant is re-planned exactly as `schedule --log` does it: the register's
//! rows read back as the CSV log ([`crate::register::participant_log`]), the
//! measured data taken from that log, then
//! [`crate::planning::schedule_report_logged`]; for the day view only the weeks that
//! decide the date's sessions ([`crate::planning::day_plan`]). The results are kept
//! in a cache keyed by the participant's plan text and current rows, so a page shown
//! again after no change does not simulate again, and any change (by this server or
//! another process) is seen at once.

use crate::error::Error;
use crate::planning::{DayPlan, LogInput, day_plan, schedule_report_logged};
use crate::register::{self, Measure, Participant, Row, Store, Which};
use crate::report::ScheduleReport;
use crate::report::sessions::{PlannedSession, SessionPlan, session_plan};
use chrono::NaiveDate;
use rayon::prelude::*;
use sha2::{Digest, Sha256};
use std::collections::HashMap;
use std::sync::{Arc, Mutex};

/// A participant re-planned from the register.
#[derive(Debug, Clone)]
pub struct Replan {
    /// The participant, their plan, log and the log's warnings.
    pub log: register::ParticipantLog,
    /// The log as the schedule reads it.
    pub input: LogInput,
    /// The schedule re-planned from the log (with the projection band).
    pub report: ScheduleReport,
    /// The planned sessions of the first scenario (the one the sheets print).
    pub sessions: SessionPlan,
}

impl Replan {
    /// The planned sessions on `date`.
    pub fn sessions_on(&self, date: NaiveDate) -> Vec<&PlannedSession> {
        self.sessions
            .weeks
            .iter()
            .filter(|w| w.start <= date && date <= w.end)
            .flat_map(|w| w.sessions.iter().filter(move |s| s.date == date))
            .collect()
    }

    /// The protocol week holding `date`, if any.
    pub fn week_of(&self, date: NaiveDate) -> Option<u32> {
        self.sessions
            .weeks
            .iter()
            .find(|w| w.start <= date && date <= w.end)
            .map(|w| w.week)
    }
}

/// The cache's map: code to (digest, re-planned participant).
type Entries = HashMap<String, ([u8; 32], Arc<Replan>)>;

/// The day view's map: code to (digest, date, the participant's day).
type Days = HashMap<String, ([u8; 32], NaiveDate, Arc<DayPlan>)>;

/// Re-planned participants, keyed by code, each with the digest of the plan text
/// and current rows it was computed from: the whole re-plan with the projection
/// band (the participant page), and the day of the last date the day view showed.
#[derive(Debug, Default)]
pub struct Cache {
    entries: Mutex<Entries>,
    days: Mutex<Days>,
}

/// The digest of a participant's plan text and log text: what a re-plan is
/// computed from.
fn digest(participant: &Participant, log_text: &str) -> [u8; 32] {
    let mut h = Sha256::new();
    h.update(participant.plan_text.as_bytes());
    h.update([0u8]);
    h.update(log_text.as_bytes());
    h.finalize().into()
}

/// The log as `schedule --log` reads it (measured data up to the log's last date,
/// its summary and warnings), from a register's participant log.
pub fn log_input(p: &register::ParticipantLog) -> LogInput {
    LogInput::from_log(&p.plan, &p.log, p.warnings.clone(), None)
}

impl Cache {
    /// A participant re-planned from `rows` (their current rows), from the cache
    /// when neither the plan nor the rows changed.
    pub fn replan(
        &self,
        store: &dyn Store,
        participant: &Participant,
        rows: &[Row],
    ) -> Result<Arc<Replan>, Error> {
        Self::cached(&self.entries, store.name(), participant, rows)
    }

    fn cached(
        map: &Mutex<Entries>,
        register: &str,
        participant: &Participant,
        rows: &[Row],
    ) -> Result<Arc<Replan>, Error> {
        let text = register::log_csv(rows)?;
        let key = digest(participant, &text);
        if let Some((k, r)) = lock(map).get(&participant.code)
            && *k == key
        {
            return Ok(r.clone());
        }
        let log = register::participant_log_of_text(register, participant.clone(), &text, None)?;
        let input = log_input(&log);
        let report = schedule_report_logged(&log.plan, &input)?;
        let sessions = session_plan(&log.plan, &report.scenarios[0]);
        let replan = Arc::new(Replan {
            log,
            input,
            report,
            sessions,
        });
        lock(map).insert(participant.code.clone(), (key, replan.clone()));
        Ok(replan)
    }

    /// A participant's day on `date` from `rows` (their current rows), from the
    /// cache when neither the plan nor the rows nor the date changed: the log's
    /// text rendered once, for the digest and the re-plan.
    pub fn day(
        &self,
        register: &str,
        participant: &Participant,
        rows: &[Row],
        date: NaiveDate,
    ) -> Result<Arc<DayPlan>, Error> {
        let text = register::log_csv(rows)?;
        let key = digest(participant, &text);
        if let Some((k, d, r)) = lock(&self.days).get(&participant.code)
            && *k == key
            && *d == date
        {
            return Ok(r.clone());
        }
        let log = register::participant_log_of_text(register, participant.clone(), &text, None)?;
        let day = Arc::new(day_plan(&log.plan, &log_input(&log), date)?);
        lock(&self.days).insert(participant.code.clone(), (key, date, day.clone()));
        Ok(day)
    }

    /// One participant re-planned, by code.
    pub fn replan_code(&self, store: &dyn Store, code: &str) -> Result<Arc<Replan>, Error> {
        let participant = store.participant(code)?;
        let rows = store.rows(Some(code), Which::Current)?;
        self.replan(store, &participant, &rows)
    }
}

fn lock<T>(map: &Mutex<T>) -> std::sync::MutexGuard<'_, T> {
    // A panic while holding the lock leaves only a cache behind: use it.
    map.lock().unwrap_or_else(|p| p.into_inner())
}

/// One participant's line of the day view.
#[derive(Debug, Clone)]
pub struct DayLine {
    /// The participant.
    pub code: String,
    /// Their arm.
    pub arm: Option<String>,
    /// The protocol week holding the date.
    pub week: Option<u32>,
    /// The sessions due that day (re-planned).
    pub due: Vec<PlannedSession>,
    /// The rows already recorded for that date (current ones).
    pub recorded: Vec<Row>,
    /// The screening result in words.
    pub screening: String,
    /// Medical clearance is needed and not on file.
    pub clearance_missing: bool,
}

/// The day view: every participant due a session on `date` or with a row on it.
#[derive(Debug, Clone)]
pub struct DayView {
    /// The date.
    pub date: NaiveDate,
    /// Participants due or recorded, by code.
    pub lines: Vec<DayLine>,
    /// Participants enrolled in all.
    pub enrolled: usize,
}

/// The day view of `date`: one read of the participants, then one of the current
/// rows, participant by participant, while each participant read is already being
/// planned (through the cache) in parallel: the store is read on this thread and
/// the days are worked out on rayon's, so the read and the planning overlap.
pub fn day_view(store: &dyn Store, cache: &Cache, date: NaiveDate) -> Result<DayView, Error> {
    let participants = store.participants()?;
    let index: HashMap<&str, usize> = participants
        .iter()
        .enumerate()
        .map(|(i, p)| (p.code.as_str(), i))
        .collect();
    let register = store.name();
    let (tx, rx) = std::sync::mpsc::channel::<(usize, Vec<Row>)>();
    let (read, lines) = std::thread::scope(|s| {
        let participants = &participants;
        let worker = s.spawn(move || {
            rx.into_iter()
                .par_bridge()
                .map(|(i, rows)| Ok((i, day_line(cache, register, &participants[i], rows, date)?)))
                .collect::<Result<Vec<(usize, Option<DayLine>)>, Error>>()
        });
        let mut seen = vec![false; participants.len()];
        let read = store.rows_each_participant(Which::Current, &mut |rows| {
            let code = rows.first().map(|r| r.participant.as_str()).unwrap_or("");
            let i = *index.get(code).ok_or_else(|| {
                Error::Internal(format!("{register}: rows of {code}, who is not enrolled"))
            })?;
            seen[i] = true;
            // A send fails only when the planning stopped on an error, which the
            // worker reports.
            let _ = tx.send((i, rows));
            Ok(())
        });
        for (i, _) in seen.iter().enumerate().filter(|(_, s)| !**s) {
            let _ = tx.send((i, Vec::new()));
        }
        drop(tx);
        let lines = worker
            .join()
            .unwrap_or_else(|p| std::panic::resume_unwind(p));
        (read, lines)
    });
    read?;
    let mut lines = lines?;
    // The participants' order (by code), whatever order the days were done in.
    lines.sort_by_key(|(i, _)| *i);
    Ok(DayView {
        date,
        lines: lines.into_iter().filter_map(|(_, l)| l).collect(),
        enrolled: participants.len(),
    })
}

/// One participant's line of the day view, if they are due or have a row on `date`.
fn day_line(
    cache: &Cache,
    register: &str,
    p: &Participant,
    rows: Vec<Row>,
    date: NaiveDate,
) -> Result<Option<DayLine>, Error> {
    let day = cache.day(register, p, &rows, date)?;
    let due: Vec<PlannedSession> = day
        .week
        .iter()
        .flat_map(|w| w.sessions.iter().filter(|s| s.date == date))
        .cloned()
        .collect();
    let recorded: Vec<Row> = rows
        .into_iter()
        .filter(|r| r.measure.date() == date)
        .collect();
    if due.is_empty() && recorded.is_empty() {
        return Ok(None);
    }
    Ok(Some(DayLine {
        code: p.code.clone(),
        arm: p.arm.clone(),
        week: day.week.as_ref().map(|w| w.week),
        due,
        recorded,
        screening: day.screening.recommendation.clone(),
        clearance_missing: day.screening.clearance_missing,
    }))
}

/// The sheet of week `week` of one participant, as the `sheets` command prints it
/// (the screening result and the standing cautions on every page).
pub fn sheet_input(replan: &Replan, weeks: Vec<u32>) -> crate::report::sheets::SheetInput {
    crate::report::sheets::SheetInput {
        sessions: replan.sessions.clone(),
        weeks,
        screening: replan.report.screening.clone(),
        log: replan.report.log.clone(),
        units: crate::report::units::Units::default(),
        delivered: replan
            .input
            .observed
            .as_ref()
            .map(crate::report::delivered::DeliveredLog::of),
    }
}

/// A row's values in words (`80.2 kg, body fat 31%`, `27 min at target, HR 121`),
/// as the desk and the command line show them.
pub fn describe(m: &Measure) -> String {
    match m {
        Measure::WeighIn(w) => {
            let mut s = format!("{} kg", round_text(w.mass_kg, 2));
            if let Some(bf) = w.body_fat_percent {
                s.push_str(&format!(", body fat {bf}%"));
                if let Some(m) = &w.body_fat_method {
                    s.push_str(&format!(" ({m})"));
                }
            }
            s
        }
        Measure::Session(x) => {
            let mut s = format!("{} min at target", x.minutes);
            if let Some(c) = &x.compendium_code {
                s.push_str(&format!(", code {c}"));
            }
            if let Some(m) = x.met {
                s.push_str(&format!(", {m} MET"));
            }
            if let Some(w) = x.watts {
                s.push_str(&format!(", {w} W"));
            }
            if let Some(v) = x.speed_kmh {
                s.push_str(&format!(", {v} km/h"));
            }
            if let Some(h) = x.avg_hr_bpm {
                s.push_str(&format!(", HR {h}"));
            }
            if let Some(r) = x.rpe {
                s.push_str(&format!(", RPE {r}"));
            }
            s
        }
    }
}

/// `x` to `decimals` places without trailing zeros.
pub fn round_text(x: f64, decimals: usize) -> String {
    let s = format!("{x:.decimals$}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
}

/// A session's target heart-rate range in words.
pub fn hr_text(s: &crate::report::sessions::PlannedSession) -> String {
    match &s.targets.heart_rate {
        Some(h) => format!("{}-{} bpm", h.low_bpm, h.high_bpm),
        None => "no resting HR on file".to_string(),
    }
}
