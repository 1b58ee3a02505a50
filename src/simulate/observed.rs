//! Measured data as the driver uses it: weigh-ins to re-anchor at and delivered
//! sessions to replace the planned ones, as days since the start (docs/model.md section 7).

use crate::activity::Intensity;
use crate::model::composition::forbes_fat_at_mass;
use crate::simulate::integrate::State;
use chrono::NaiveDate;
use serde::Serialize;

/// A weigh-in: the state at 00:00 of its day.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WeighIn {
    /// Days since the start.
    pub day: u32,
    /// Date.
    pub date: NaiveDate,
    /// Measured mass, kg.
    pub mass_kg: f64,
    /// Measured body fat, percent, if any.
    pub body_fat_percent: Option<f64>,
}

/// A delivered session (or bout).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Delivered {
    /// Days since the start.
    pub day: u32,
    /// Date.
    pub date: NaiveDate,
    /// Minutes (0: recorded as missed).
    pub minutes: f64,
    /// Intensity (the plan's activity when the log names none).
    pub intensity: Intensity,
    /// Average heart rate, beats/min.
    pub avg_hr_bpm: Option<f64>,
    /// Borg RPE, 6-20.
    pub rpe: Option<f64>,
}

/// Everything measured up to `as_of`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Observed {
    /// Weigh-ins in date order.
    pub weigh_ins: Vec<WeighIn>,
    /// Delivered sessions in date order.
    pub sessions: Vec<Delivered>,
    /// Days up to and including this one use the delivered sessions.
    pub as_of_day: u32,
    /// The date of `as_of_day`.
    pub as_of: NaiveDate,
}

impl Observed {
    /// Weigh-ins on `day` that count (on or before `as_of`).
    pub fn weigh_ins_on(&self, day: u32) -> impl Iterator<Item = &WeighIn> {
        self.weigh_ins
            .iter()
            .filter(move |w| w.day == day && w.day <= self.as_of_day)
    }

    /// Whether a weigh-in falls on `day` or in the 6 days before (docs/model.md section 4).
    pub fn measured_near(&self, day: u32) -> bool {
        self.weigh_ins
            .iter()
            .any(|w| w.day <= day && w.day + 6 >= day && w.day <= self.as_of_day)
    }

    /// Delivered sessions on days `from..to` (up to `as_of`).
    pub fn sessions_in(&self, from: u32, to: u32) -> impl Iterator<Item = &Delivered> {
        self.sessions
            .iter()
            .filter(move |s| s.day >= from && s.day < to && s.day <= self.as_of_day)
    }
}

/// Move the state to a measured mass (docs/model.md section 7): with a measured body fat,
/// `F = M %BF / 100`; otherwise along the Forbes curve through the projected state.
/// The lagged exercise energy and the running integral stay as they were.
pub fn anchor(y: &State, w: &WeighIn, forbes_constant_kg: f64) -> State {
    let fat = match w.body_fat_percent {
        Some(p) => w.mass_kg * p / 100.0,
        None => forbes_fat_at_mass(y[0], y[1], w.mass_kg, forbes_constant_kg),
    };
    State::new(fat, w.mass_kg - fat, y[2], y[3])
}

impl Observed {
    /// The measured data of a validated log, counted up to `as_of` (default: the
    /// log's last date, or the start date for an empty log).
    pub fn from_log(
        plan: &crate::plan::Plan,
        log: &crate::log::Log,
        as_of: Option<NaiveDate>,
    ) -> Observed {
        let start = plan.protocol.start;
        let as_of = as_of
            .or_else(|| log.last_date())
            .unwrap_or(start)
            .max(start);
        let day = |d: NaiveDate| (d - start).num_days().max(0) as u32;
        let mut weigh_ins = Vec::new();
        let mut sessions = Vec::new();
        for r in &log.rows {
            match &r.entry {
                crate::log::Entry::WeighIn {
                    mass_kg,
                    body_fat_percent,
                } => weigh_ins.push(WeighIn {
                    day: day(r.date),
                    date: r.date,
                    mass_kg: *mass_kg,
                    body_fat_percent: *body_fat_percent,
                }),
                crate::log::Entry::Session {
                    minutes,
                    intensity,
                    avg_hr_bpm,
                    rpe,
                    ..
                } => sessions.push(Delivered {
                    day: day(r.date),
                    date: r.date,
                    minutes: *minutes,
                    intensity: intensity.clone(),
                    avg_hr_bpm: *avg_hr_bpm,
                    rpe: *rpe,
                }),
            }
        }
        Observed {
            weigh_ins,
            sessions,
            as_of_day: day(as_of),
            as_of,
        }
    }
}
