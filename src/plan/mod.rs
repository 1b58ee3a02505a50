//! Plan files: raw TOML structs that mirror the file, and the validated [`Plan`]
//! whose types cannot hold a value outside the allowed ranges of docs/file-formats.md section 1.

mod fields;
mod locate;
mod model_keys;
pub mod participant;
mod people;
pub mod raw;
mod schedule;
pub mod starter;
pub(crate) mod validate;

use crate::activity::Activity;
pub use crate::activity::targets::{Fitness, HrMaxSource};
use crate::model::{Compensation, Constants, Subject};
use chrono::{NaiveDate, Weekday};
use serde::Serialize;

pub use validate::{load_plan, parse_plan};

/// A validated plan.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    /// Where it came from (a path, or "built-in demo plan").
    pub source_name: String,
    /// The participant.
    pub participant: Participant,
    /// The protocol.
    pub protocol: Protocol,
    /// The activity.
    pub activity: Activity,
    /// Model constants.
    pub constants: Constants,
    /// One or more scenarios, names unique.
    pub scenarios: Vec<Scenario>,
    /// Other activities on named weekdays (`[[rotation]]`); days not named use
    /// `activity`.
    pub rotation: Vec<RotationEntry>,
    /// Calendar settings (`[calendar]`).
    pub calendar: CalendarSettings,
}

/// A `[[rotation]]` entry: an activity on some session (or spare) weekdays.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RotationEntry {
    /// The weekdays it covers, Monday first.
    #[serde(serialize_with = "weekdays")]
    pub days: Vec<Weekday>,
    /// The activity on those days.
    pub activity: Activity,
}

impl Plan {
    /// Every activity: index 0 is `[activity]`, then the rotation entries in order.
    pub fn activities(&self) -> Vec<&Activity> {
        std::iter::once(&self.activity)
            .chain(self.rotation.iter().map(|r| &r.activity))
            .collect()
    }

    /// The index (into [`Plan::activities`]) of the activity on weekday `day`.
    pub fn activity_index_on(&self, day: Weekday) -> usize {
        self.rotation
            .iter()
            .position(|r| r.days.contains(&day))
            .map_or(0, |i| i + 1)
    }

    /// The activity on weekday `day`.
    pub fn activity_on(&self, day: Weekday) -> &Activity {
        match self.activity_index_on(day) {
            0 => &self.activity,
            i => &self.rotation[i - 1].activity,
        }
    }

    /// The activity with index `i` of [`Plan::activities`].
    pub fn activity_at(&self, i: usize) -> &Activity {
        match i {
            0 => &self.activity,
            i => &self.rotation[i - 1].activity,
        }
    }
}

/// Where and when sessions happen, for calendar files (`[calendar]`).
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct CalendarSettings {
    /// Local time of day a session starts; none gives all-day events.
    pub session_time: Option<chrono::NaiveTime>,
    /// Local start of the second bout with `over_max = "split"`.
    pub second_bout_time: Option<chrono::NaiveTime>,
    /// The time zone the local times are in (written as X-WR-TIMEZONE).
    pub time_zone: Option<String>,
    /// Where sessions happen.
    pub location: Option<String>,
}

/// The participant: a pseudonymous code, the model's inputs and the screening answers.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Participant {
    /// Pseudonymous code.
    pub id: String,
    /// What the model needs.
    pub subject: Subject,
    /// ACSM 2015 pre-participation screening answers, if recorded.
    pub screening: Option<Screening>,
    /// Measured fitness (`[participant.fitness]`), if recorded.
    pub fitness: Option<Fitness>,
}

/// Answers for the ACSM 2015 pre-participation screening algorithm.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct Screening {
    /// Planned exercise of at least 30 min, moderate, 3 days a week, for 3 months.
    pub exercises_regularly: bool,
    /// Known cardiovascular, metabolic or renal disease.
    pub known_disease: bool,
    /// Signs or symptoms suggestive of such disease.
    pub signs_or_symptoms: bool,
    /// Medical clearance obtained and on file.
    pub medical_clearance: bool,
}

/// What happens to a session longer than the maximum (docs/model.md section 4).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum OverMax {
    /// Keep the minutes and warn.
    Flag,
    /// Cut to the maximum and report the shortfall.
    Cap,
    /// Spread the week's energy over extra sessions on spare weekdays.
    AddSession,
    /// Give each session as two equal bouts on the same day.
    Split,
}

impl OverMax {
    /// The plan-file word.
    pub fn name(self) -> &'static str {
        match self {
            OverMax::Flag => "flag",
            OverMax::Cap => "cap",
            OverMax::AddSession => "add-session",
            OverMax::Split => "split",
        }
    }
}

/// The amount of the dose: exactly one of the four kinds.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum DoseAmount {
    /// kcal per session.
    KcalPerSession(f64),
    /// kcal per week.
    KcalPerWeek(f64),
    /// kcal per kg of body mass per week.
    KcalPerKgWeek(f64),
    /// Minutes per week (time-fixed; energy varies).
    MinutesPerWeek(f64),
}

impl DoseAmount {
    /// The plan key of this kind (also the JSON `dose_unit`).
    pub fn key(&self) -> &'static str {
        match self {
            DoseAmount::KcalPerSession(_) => "kcal_per_session",
            DoseAmount::KcalPerWeek(_) => "kcal_per_week",
            DoseAmount::KcalPerKgWeek(_) => "kcal_per_kg_week",
            DoseAmount::MinutesPerWeek(_) => "minutes_per_week",
        }
    }

    /// The amount in its own unit.
    pub fn value(&self) -> f64 {
        match *self {
            DoseAmount::KcalPerSession(v)
            | DoseAmount::KcalPerWeek(v)
            | DoseAmount::KcalPerKgWeek(v)
            | DoseAmount::MinutesPerWeek(v) => v,
        }
    }

    /// The same kind with another amount.
    pub fn with_value(&self, v: f64) -> DoseAmount {
        match self {
            DoseAmount::KcalPerSession(_) => DoseAmount::KcalPerSession(v),
            DoseAmount::KcalPerWeek(_) => DoseAmount::KcalPerWeek(v),
            DoseAmount::KcalPerKgWeek(_) => DoseAmount::KcalPerKgWeek(v),
            DoseAmount::MinutesPerWeek(_) => DoseAmount::MinutesPerWeek(v),
        }
    }

    /// The amount of kind `key` (a plan key, see [`DoseAmount::key`]).
    pub fn of_key(key: &str, v: f64) -> Option<DoseAmount> {
        match key {
            "kcal_per_session" => Some(DoseAmount::KcalPerSession(v)),
            "kcal_per_week" => Some(DoseAmount::KcalPerWeek(v)),
            "kcal_per_kg_week" => Some(DoseAmount::KcalPerKgWeek(v)),
            "minutes_per_week" => Some(DoseAmount::MinutesPerWeek(v)),
            _ => None,
        }
    }

    /// The allowed range of this kind, both ends included (docs/file-formats.md): what a plan may
    /// give and what the goal solver searches.
    pub fn range(&self) -> (f64, f64) {
        match self {
            DoseAmount::KcalPerSession(_) => (10.0, 3000.0),
            DoseAmount::KcalPerWeek(_) => (10.0, 15000.0),
            DoseAmount::KcalPerKgWeek(_) => (0.5, 150.0),
            DoseAmount::MinutesPerWeek(_) => (5.0, 2100.0),
        }
    }

    /// The unit of [`DoseAmount::range`] in messages (" kcal", " minutes", ...).
    pub fn range_unit(&self) -> &'static str {
        match self {
            DoseAmount::KcalPerSession(_) | DoseAmount::KcalPerWeek(_) => " kcal",
            DoseAmount::KcalPerKgWeek(_) => " kcal/kg/week",
            DoseAmount::MinutesPerWeek(_) => " minutes",
        }
    }

    /// Unit for display.
    pub fn unit(&self) -> &'static str {
        match self {
            DoseAmount::KcalPerSession(_) => "kcal/session",
            DoseAmount::KcalPerWeek(_) => "kcal/week",
            DoseAmount::KcalPerKgWeek(_) => "kcal/kg/week",
            DoseAmount::MinutesPerWeek(_) => "min/week",
        }
    }
}

/// Whether dose energy counts the resting energy (gross) or not (net).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum EnergyBasis {
    /// Gross energy, rest included.
    Gross,
    /// Net of rest (docs/model.md section 4, `rest_for_net`).
    Net,
}

/// Which mass a per-kg dose is multiplied by.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum MassBasis {
    /// The baseline mass, all protocol long.
    Baseline,
    /// Each week's reference mass.
    Current,
}

/// The dose.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Dose {
    /// The amount and its kind.
    pub amount: DoseAmount,
    /// Gross or net.
    pub basis: EnergyBasis,
    /// Baseline or current mass, for per-kg doses.
    pub mass_basis: MassBasis,
}

/// A linear progression to the full dose.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Ramp {
    /// Ramp weeks `R`; the full dose comes in week `R + 1`.
    pub weeks: u32,
    /// Fraction of the dose in week 1, `s`.
    pub start_fraction: f64,
}

impl Ramp {
    /// `r_w = s + (1 - s)(w - 1)/R` for `w <= R`, else 1 (docs/model.md section 4).
    pub fn fraction(&self, week: u32) -> f64 {
        if week <= self.weeks {
            self.start_fraction
                + (1.0 - self.start_fraction) * f64::from(week - 1) / f64::from(self.weeks)
        } else {
            1.0
        }
    }
}

/// The protocol: dates, session days, dose and limits.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Protocol {
    /// First day of week 1.
    pub start: NaiveDate,
    /// Weeks of exercise.
    pub weeks: u32,
    /// Weeks simulated after exercise stops.
    pub follow_up_weeks: u32,
    /// Session weekdays, distinct, Monday first.
    #[serde(serialize_with = "weekdays")]
    pub session_days: Vec<Weekday>,
    /// Spare weekdays for `add-session`, distinct, none a session day.
    #[serde(serialize_with = "weekdays")]
    pub spare_days: Vec<Weekday>,
    /// Longest session (or bout), minutes.
    pub max_session_minutes: Option<f64>,
    /// What to do over the maximum.
    pub over_max: OverMax,
    /// Minutes round up to this step.
    pub round_minutes_to: u32,
    /// The dose.
    pub dose: Dose,
    /// The ramp, if any.
    pub ramp: Option<Ramp>,
    /// Warm-up before each session (or bout), if any.
    pub warm_up: Option<EasyPart>,
    /// Cool-down after each session (or bout), if any.
    pub cool_down: Option<EasyPart>,
    /// Dates with no sessions (holidays, closures), sorted, distinct.
    pub closures: Vec<NaiveDate>,
    /// What happens to the energy of a closed day's session.
    pub make_up: MakeUp,
}

/// A warm-up or cool-down: minutes at its own MET, counted in the session's energy.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct EasyPart {
    /// Minutes.
    pub minutes: u32,
    /// MET.
    pub met: f64,
}

/// The make-up rule for sessions lost to closures.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum MakeUp {
    /// The energy is not made up.
    None,
    /// The energy is spread over the week's remaining sessions, within the maximum.
    Spread,
}

impl MakeUp {
    /// The plan-file word.
    pub fn name(self) -> &'static str {
        match self {
            MakeUp::None => "none",
            MakeUp::Spread => "spread",
        }
    }
}

impl Protocol {
    /// Protocol plus follow-up weeks.
    pub fn total_weeks(&self) -> u32 {
        self.weeks + self.follow_up_weeks
    }

    /// The ramp fraction of protocol week `week`.
    pub fn ramp_fraction(&self, week: u32) -> f64 {
        self.ramp.map_or(1.0, |r| r.fraction(week))
    }

    /// Whether `date` is a closure.
    pub fn is_closed(&self, date: NaiveDate) -> bool {
        self.closures.binary_search(&date).is_ok()
    }

    /// Warm-up plus cool-down minutes of each session (or bout).
    pub fn easy_minutes(&self) -> u32 {
        self.warm_up.map_or(0, |e| e.minutes) + self.cool_down.map_or(0, |e| e.minutes)
    }

    /// The morning after the last simulated day.
    pub fn end_date(&self) -> NaiveDate {
        self.start + chrono::Days::new(7 * u64::from(self.total_weeks()))
    }
}

fn weekdays<S: serde::Serializer>(days: &[Weekday], s: S) -> Result<S::Ok, S::Error> {
    s.collect_seq(days.iter().map(|d| weekday_name(*d)))
}

/// The plan-file word for a weekday (`mon` ... `sun`).
pub fn weekday_name(d: Weekday) -> &'static str {
    match d {
        Weekday::Mon => "mon",
        Weekday::Tue => "tue",
        Weekday::Wed => "wed",
        Weekday::Thu => "thu",
        Weekday::Fri => "fri",
        Weekday::Sat => "sat",
        Weekday::Sun => "sun",
    }
}

/// A named set of compensation assumptions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Scenario {
    /// Unique name.
    pub name: String,
    /// The assumptions.
    pub compensation: Compensation,
}

impl Scenario {
    /// The assumptions in plain words.
    pub fn assumptions(&self) -> String {
        self.compensation
            .assumptions_with(|kcal, decimals| format!("{kcal:.decimals$} kcal/day"))
    }
}

impl Compensation {
    /// The assumptions in plain words, each energy rate (kcal/day) written by
    /// `per_day` with the given decimals, e.g. in kJ/day for a report in kJ.
    pub fn assumptions_with(&self, per_day: impl Fn(f64, usize) -> String) -> String {
        let c = self;
        let mut parts = Vec::new();
        if c.intake_fraction != 0.0 {
            let pct = c.intake_fraction.abs() * 100.0;
            let way = if c.intake_fraction > 0.0 {
                "rises"
            } else {
                "falls"
            };
            if c.intake_lag_days > 0.0 {
                parts.push(format!(
                    "intake {way} by {pct:.0}% of exercise energy, reaching it with a {:.0}-day lag",
                    c.intake_lag_days
                ));
            } else {
                parts.push(format!(
                    "intake {way} by {pct:.0}% of exercise energy at once"
                ));
            }
        }
        if c.activity_fraction != 0.0 {
            let way = if c.activity_fraction > 0.0 {
                "falls"
            } else {
                "rises"
            };
            parts.push(format!(
                "other daily movement {way} by {:.0}% of exercise energy",
                c.activity_fraction.abs() * 100.0
            ));
        }
        if c.rmr_adaptation_kcal_per_kg > 0.0 {
            parts.push(format!(
                "resting metabolism falls by {} for each kg lost, beyond what the equation predicts",
                per_day(c.rmr_adaptation_kcal_per_kg, 1)
            ));
        }
        if c.diet_change_kcal_per_day != 0.0 {
            let verb = if c.diet_change_kcal_per_day < 0.0 {
                "falls"
            } else {
                "rises"
            };
            parts.push(format!(
                "planned intake {verb} by {}",
                per_day(c.diet_change_kcal_per_day.abs(), 0)
            ));
        }
        if parts.is_empty() {
            "every session delivered as prescribed; nothing compensated".to_string()
        } else {
            parts.join("; ")
        }
    }
}

/// The scenario keys with their allowed ranges and units (docs/file-formats.md section 1).
/// The two fractions may be negative down to -0.5: intake that falls, or other
/// movement that rises, by up to half the exercise energy (arms that lost more than
/// prescribed; the bound is common practice, docs/model.md section 5).
pub const SCENARIO_KEYS: [(&str, f64, f64, &str); 5] = [
    ("intake_fraction", -0.5, 1.5, ""),
    ("intake_lag_days", 0.0, 365.0, " days"),
    ("activity_fraction", -0.5, 1.0, ""),
    ("rmr_adaptation_kcal_per_kg", 0.0, 50.0, " kcal/day per kg"),
    ("diet_change_kcal_per_day", -2500.0, 2500.0, " kcal/day"),
];

/// The allowed range and unit of a scenario key.
pub fn scenario_range(key: &str) -> (f64, f64, &'static str) {
    SCENARIO_KEYS
        .iter()
        .find(|(k, ..)| *k == key)
        .map(|(_, lo, hi, u)| (*lo, *hi, *u))
        .expect("a known scenario key")
}

impl Compensation {
    /// Set one scenario key by name (the keys of [`SCENARIO_KEYS`]).
    pub fn set(&mut self, key: &str, value: f64) {
        match key {
            "intake_fraction" => self.intake_fraction = value,
            "intake_lag_days" => self.intake_lag_days = value,
            "activity_fraction" => self.activity_fraction = value,
            "rmr_adaptation_kcal_per_kg" => self.rmr_adaptation_kcal_per_kg = value,
            "diet_change_kcal_per_day" => self.diet_change_kcal_per_day = value,
            _ => unreachable!("keys are checked against SCENARIO_KEYS first"),
        }
    }
}

/// Parse an ad-hoc scenario from the command line: `NAME:key=value,key=value`
/// (keys as in `[[scenario]]`; `NAME` alone is a scenario with nothing compensated).
pub fn parse_scenario_spec(spec: &str) -> Result<Scenario, crate::Error> {
    let usage = |msg: String| {
        crate::Error::Usage(format!(
            "\"{spec}\": {msg}; write NAME:key=value,key=value with keys {}",
            SCENARIO_KEYS
                .iter()
                .map(|k| k.0)
                .collect::<Vec<_>>()
                .join(", ")
        ))
    };
    let (name, rest) = match spec.split_once(':') {
        Some((n, r)) => (n.trim(), r.trim()),
        None => (spec.trim(), ""),
    };
    if name.is_empty() {
        return Err(usage("the name before ':' is empty".to_string()));
    }
    let mut compensation = Compensation::default();
    let mut seen: Vec<&str> = Vec::new();
    for part in rest.split(',').map(str::trim).filter(|p| !p.is_empty()) {
        let Some((key, value)) = part.split_once('=') else {
            return Err(usage(format!("\"{part}\" has no '='")));
        };
        let key = key.trim();
        let Some((_, lo, hi, unit)) = SCENARIO_KEYS.iter().find(|(k, ..)| *k == key) else {
            return Err(usage(format!("unknown key \"{key}\"")));
        };
        if seen.contains(&key) {
            return Err(usage(format!("key \"{key}\" is given twice")));
        }
        seen.push(key);
        let v: f64 = value
            .trim()
            .parse()
            .map_err(|_| usage(format!("{key} = \"{}\" is not a number", value.trim())))?;
        if !v.is_finite() || v < *lo || v > *hi {
            return Err(usage(format!(
                "{key} = {v} is out of range; allowed {lo} to {hi}{unit}"
            )));
        }
        compensation.set(key, v);
    }
    Ok(Scenario {
        name: name.to_string(),
        compensation,
    })
}
