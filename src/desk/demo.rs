//! The demo register: the shipped example study (`plans/study-pilot.toml`) and its
//! allocated roster (`demo-data/pilot-roster-allocated.csv`, invented people with
//! pseudonymous codes), each participant of a dosed arm enrolled with a plan made
//! from the study's protocol, activity and scenarios, their roster values and their
//! arm's dose, the protocol moved to start on a given Monday. The control arm
//! (no sessions) is left out: the desk is where sessions are delivered.

use crate::error::Error;
use crate::register::{Enrolment, Measure, Session, SqliteStore, Stamp, Store, WeighIn};
use chrono::{Datelike, Days, NaiveDate};
use std::path::Path;

/// The example study, built in.
pub const STUDY_NAME: &str = "plans/study-pilot.toml";
/// The example study's text.
pub const STUDY: &str = include_str!("../../plans/study-pilot.toml");
/// The example roster with arms, built in.
pub const ROSTER_NAME: &str = "demo-data/pilot-roster-allocated.csv";
/// The example roster's text.
pub const ROSTER: &str = include_str!("../../demo-data/pilot-roster-allocated.csv");

const SCREENING: [&str; 4] = [
    "exercises_regularly",
    "known_disease",
    "signs_or_symptoms",
    "medical_clearance",
];

fn bad(what: &str, e: impl std::fmt::Display) -> Error {
    Error::Internal(format!("the built-in demo data: {what}: {e}"))
}

/// The plan text of every participant of a dosed arm of the example study, with the
/// protocol starting on `start`. With `count` above the roster's size the roster is
/// used again and again, codes `DSK-001`, `DSK-002`, ... (invented); otherwise the
/// roster's own (invented) codes.
pub fn plans(start: NaiveDate, count: Option<usize>) -> Result<Vec<Enrolment>, Error> {
    let demo = Demo { start, count };
    Ok(build(STUDY_NAME, STUDY, ROSTER_NAME, ROSTER, Some(&demo))?.0)
}

/// A study file and its roster (with an arm for every participant) as one
/// enrolment per participant of a dosed arm: the study's protocol, activity,
/// model and scenarios, the roster row's participant values and screening, the
/// arm's dose. Participants of an arm without a dose (a control arm: no sessions to
/// deliver) are not enrolled and are named in the second list.
pub fn roster_enrolments(
    study: &Path,
    roster: &Path,
) -> Result<(Vec<Enrolment>, Vec<String>), Error> {
    // The study is validated as a study first, so its errors name its own lines.
    crate::study::load_study(study)?;
    let s = crate::input::read(study)?;
    let r = crate::input::read(roster)?;
    build(&s.name, &s.raw, &r.name, &r.raw, None)
}

/// What the demo changes: the protocol's start, the number of participants, and an
/// invented resting heart rate.
struct Demo {
    start: NaiveDate,
    count: Option<usize>,
}

/// See [`plans`] (with `demo`) and [`roster_enrolments`] (without).
fn build(
    study_name: &str,
    study_text: &str,
    roster_name: &str,
    roster_text: &str,
    demo: Option<&Demo>,
) -> Result<(Vec<Enrolment>, Vec<String>), Error> {
    let fail = |file: &str, e: String| match demo {
        Some(_) => bad(file, e),
        None => Error::Usage(format!("{file}: {e}")),
    };
    let study: toml::Table = study_text
        .parse()
        .map_err(|e: toml::de::Error| fail(study_name, e.to_string()))?;
    let arms: Vec<toml::Table> = study
        .get("arm")
        .and_then(|a| a.as_array())
        .ok_or_else(|| fail(study_name, "no [[arm]]".into()))?
        .iter()
        .filter_map(|a| a.as_table().cloned())
        .collect();
    let mut reader = csv::Reader::from_reader(roster_text.as_bytes());
    let header = reader
        .headers()
        .map_err(|e| fail(roster_name, e.to_string()))?
        .clone();
    let roster: Vec<csv::StringRecord> = reader
        .records()
        .collect::<Result<_, _>>()
        .map_err(|e| fail(roster_name, e.to_string()))?;
    let arm_at = header.iter().position(|h| h == "arm").ok_or_else(|| {
        fail(
            roster_name,
            "the roster has no arm column; give every participant an arm (cohort --randomise can allocate them)".into(),
        )
    })?;
    let mut dosed: Vec<(usize, &csv::StringRecord, &toml::Table)> = Vec::new();
    let mut skipped = Vec::new();
    for (i, r) in roster.iter().enumerate() {
        let arm = r.get(arm_at).unwrap_or("").trim();
        let t = arms
            .iter()
            .find(|a| a.get("name").and_then(|n| n.as_str()) == Some(arm))
            .ok_or_else(|| {
                fail(
                    roster_name,
                    format!(
                        "line {}: arm \"{arm}\" is not an arm of {study_name}; give one of its [[arm]] names",
                        i + 2
                    ),
                )
            })?;
        if t.get("dose").is_some() {
            dosed.push((i, r, t));
        } else {
            skipped.push(format!(
                "{} (arm {arm} has no dose: no sessions to deliver)",
                r.get(header.iter().position(|h| h == "id").unwrap_or(0))
                    .unwrap_or("")
            ));
        }
    }
    if dosed.is_empty() {
        return Err(fail(roster_name, "no participant in a dosed arm".into()));
    }
    let n = demo.and_then(|d| d.count).unwrap_or(dosed.len());
    let mut out = Vec::with_capacity(n);
    for i in 0..n {
        let (line, record, arm) = dosed[i % dosed.len()];
        let mut plan = study.clone();
        for key in crate::study::STUDY_ONLY_TABLES {
            plan.remove(*key);
        }
        let mut participant =
            participant_values(&header, record, i, line, demo).map_err(|e| fail(roster_name, e))?;
        if demo.is_some() {
            // An invented resting heart rate (60 to 74 beats/min), so the sheets and
            // the day view show a target heart-rate range.
            let mut fitness = toml::Table::new();
            fitness.insert(
                "hr_rest_bpm".into(),
                toml::Value::Float(60.0 + ((i * 5) % 15) as f64),
            );
            participant.insert("fitness".into(), toml::Value::Table(fitness));
        }
        plan.insert("participant".into(), toml::Value::Table(participant));
        let protocol = plan
            .get_mut("protocol")
            .and_then(|p| p.as_table_mut())
            .ok_or_else(|| fail(study_name, "no [protocol]".into()))?;
        if let Some(d) = demo {
            protocol.insert(
                "start".into(),
                toml::Value::Datetime(
                    d.start
                        .to_string()
                        .parse()
                        .map_err(|e| bad("the start date", e))?,
                ),
            );
        }
        protocol.insert("dose".into(), arm["dose"].clone());
        let text = toml::to_string(&plan).map_err(|e| fail(study_name, e.to_string()))?;
        let arm_name = arm.get("name").and_then(|n| n.as_str()).map(String::from);
        let plan_name = match demo {
            Some(_) => format!("{study_name} and {roster_name}"),
            None => format!("{study_name} and {roster_name} line {}", line + 2),
        };
        let e = Enrolment {
            plan_name,
            plan_text: text,
            arm: arm_name,
        };
        // Every plan is checked before the register is touched.
        crate::plan::parse_plan(&e.plan_name, &e.plan_text)?;
        out.push(e);
    }
    Ok((out, skipped))
}

/// A roster row as the plan's `[participant]` table (with its screening block
/// when answered); an error in words naming the line and column.
fn participant_values(
    header: &csv::StringRecord,
    record: &csv::StringRecord,
    i: usize,
    line: usize,
    demo: Option<&Demo>,
) -> Result<toml::Table, String> {
    let mut participant = toml::Table::new();
    let mut screening = toml::Table::new();
    for (key, value) in header.iter().zip(record.iter()) {
        let value = value.trim();
        if value.is_empty() || key == "arm" {
            continue;
        }
        let v = if key == "id" {
            let code = match demo {
                Some(Demo { count: Some(_), .. }) => format!("DSK-{:03}", i + 1),
                _ => value.to_string(),
            };
            toml::Value::String(code)
        } else if key == "sex" {
            toml::Value::String(value.to_string())
        } else if let Ok(b) = value.parse::<bool>() {
            toml::Value::Boolean(b)
        } else {
            toml::Value::Float(
                value
                    .parse::<f64>()
                    .map_err(|e| format!("line {}, column {key}: {value:?}: {e}", line + 2))?,
            )
        };
        if SCREENING.contains(&key) {
            screening.insert(key.to_string(), v);
        } else {
            participant.insert(key.to_string(), v);
        }
    }
    // A roster row with the screening unanswered gets no screening block (the plan
    // then says screening is not recorded).
    if !screening.is_empty() {
        participant.insert("screening".into(), toml::Value::Table(screening));
    }
    Ok(participant)
}

/// The Monday on or before `date`.
pub fn monday_of(date: NaiveDate) -> NaiveDate {
    date - Days::new(u64::from(date.weekday().num_days_from_monday()))
}

/// Create the demo register at `path` (which must not exist): the example study's
/// dosed participants (or `count` of them), the protocol starting on `start` (a
/// Monday), each with a baseline weigh-in of their roster mass on `start`. With
/// `weeks_of_rows` above 0 every participant also gets, for that many weeks, a
/// weigh-in each Monday (0.3 kg a week lower, invented) and three 30-minute
/// sessions, for a register with history (the benchmark).
pub fn create(
    path: &Path,
    start: NaiveDate,
    count: Option<usize>,
    weeks_of_rows: u32,
    stamp: &Stamp,
) -> Result<Vec<String>, Error> {
    let enrolments = plans(start, count)?;
    let mut store = SqliteStore::create(path)?;
    let mut codes = Vec::new();
    for e in enrolments {
        let p = store.enrol(&e, stamp)?;
        let plan = p.plan()?;
        let mass = plan.participant.subject.mass_kg;
        let weigh_in = |date: NaiveDate, mass_kg: f64| {
            Measure::WeighIn(WeighIn {
                date,
                mass_kg,
                body_fat_percent: None,
                body_fat_method: None,
                note: String::new(),
            })
        };
        store.record(&p.code, &weigh_in(start, mass), stamp)?;
        for week in 0..weeks_of_rows {
            let monday = start + Days::new(7 * u64::from(week));
            if week > 0 {
                let m = mass - 0.3 * f64::from(week);
                store.record(&p.code, &weigh_in(monday, (m * 10.0).round() / 10.0), stamp)?;
            }
            for offset in [0u64, 2, 4] {
                let s = Measure::Session(Session {
                    date: monday + Days::new(offset),
                    minutes: 30.0,
                    compendium_code: None,
                    met: None,
                    watts: None,
                    speed_kmh: None,
                    avg_hr_bpm: None,
                    rpe: None,
                    note: String::new(),
                });
                store.record(&p.code, &s, stamp)?;
            }
        }
        codes.push(p.code);
    }
    Ok(codes)
}
