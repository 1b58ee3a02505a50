//! Weekly re-prescription: the week's target energy, the minutes that deliver it at
//! the reference state, rounding, and the over-maximum policies (MODEL.md 4).
//!
//! `d_w = E_w / e_w`, rounded up to the step: `ceil(d/step - 1e-9) * step`.

use crate::activity::acsm::gross_kcal_per_min;
use crate::model::Physiology;
use crate::plan::{DoseAmount, EnergyBasis, MassBasis, OverMax, Plan};
use chrono::{Datelike, NaiveDate, Weekday};
use serde::Serialize;

/// The reference state of a week's prescription.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Reference {
    /// `M_w`, kg.
    pub mass_kg: f64,
    /// `RMR_w`, kcal/day.
    pub rmr_kcal_per_day: f64,
}

/// What an over-maximum policy did in a week.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OverMaxNote {
    /// The policy.
    pub policy: OverMax,
    /// Minutes per session before the policy acted.
    pub minutes_before: u32,
    /// Energy the week lost to a cap, kcal on the plan's basis.
    pub shortfall_kcal: f64,
    /// Sessions added on spare days.
    pub added_sessions: u32,
    /// True when sessions (or bouts) are still over the maximum after the policy.
    pub still_over: bool,
}

/// One week's prescription.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Prescription {
    /// `r_w`.
    pub ramp_fraction: f64,
    /// `E_w`, kcal per planned session on the plan's basis (None for a minutes dose).
    pub target_kcal_per_session: Option<f64>,
    /// `e_w`, kcal per minute on the plan's basis at the reference state.
    pub kcal_per_min: f64,
    /// Minutes per planned session before rounding.
    pub minutes_unrounded: f64,
    /// Minutes of each session as delivered (both bouts for `split`).
    pub minutes_per_session: u32,
    /// Bouts per session (2 with `split`).
    pub bouts_per_session: u32,
    /// Dated bouts, in date order: (date, minutes).
    pub bouts: Vec<(NaiveDate, u32)>,
    /// What the over-maximum policy did.
    pub over_max: Option<OverMaxNote>,
}

/// `ceil(d/step - 1e-9) * step` as whole minutes.
pub fn round_up(minutes: f64, step: u32) -> u32 {
    let s = f64::from(step);
    ((minutes / s - 1e-9).ceil().max(0.0) * s) as u32
}

/// The per-minute energy on the plan's basis at the reference state.
pub fn kcal_per_min(plan: &Plan, physiology: &Physiology, r: &Reference) -> f64 {
    let met = plan.activity.intensity.met_at(r.mass_kg);
    match plan.protocol.dose.basis {
        EnergyBasis::Gross => gross_kcal_per_min(met, r.mass_kg),
        EnergyBasis::Net => physiology.net_kcal_per_min(met, r.mass_kg, r.rmr_kcal_per_day),
    }
}

fn dates_in_week(start: NaiveDate, days: &[Weekday]) -> Vec<NaiveDate> {
    (0..7)
        .map(|i| start + chrono::Days::new(i))
        .filter(|d| days.contains(&d.weekday()))
        .collect()
}

/// The weekdays `add-session` may use: the spare days, else every other weekday, Monday first.
fn extra_days(plan: &Plan) -> Vec<Weekday> {
    let p = &plan.protocol;
    if !p.spare_days.is_empty() {
        return p.spare_days.clone();
    }
    (0..7)
        .map(|i| Weekday::try_from(i as u8).expect("0..7 are weekdays"))
        .filter(|w| !p.session_days.contains(w))
        .collect()
}

/// Prescribe protocol week `week` (1-based) starting on `week_start` from reference `r`.
pub fn prescribe(
    plan: &Plan,
    physiology: &Physiology,
    week: u32,
    week_start: NaiveDate,
    baseline_mass_kg: f64,
    r: &Reference,
) -> Prescription {
    let p = &plan.protocol;
    let n = p.session_days.len() as f64;
    let ramp = p.ramp_fraction(week);
    let e = kcal_per_min(plan, physiology, r);
    let mass_basis = match p.dose.mass_basis {
        MassBasis::Baseline => baseline_mass_kg,
        MassBasis::Current => r.mass_kg,
    };
    let target = match p.dose.amount {
        DoseAmount::KcalPerSession(v) => Some(v * ramp),
        DoseAmount::KcalPerWeek(v) => Some(v / n * ramp),
        DoseAmount::KcalPerKgWeek(v) => Some(v * mass_basis / n * ramp),
        DoseAmount::MinutesPerWeek(_) => None,
    };
    let minutes_unrounded = match (target, p.dose.amount) {
        (Some(t), _) => t / e,
        (None, DoseAmount::MinutesPerWeek(v)) => ramp * v / n,
        (None, _) => unreachable!("only a minutes dose has no energy target"),
    };
    let step = p.round_minutes_to;
    let planned = round_up(minutes_unrounded, step);
    let days = dates_in_week(week_start, &p.session_days);
    let mut out = Prescription {
        ramp_fraction: ramp,
        target_kcal_per_session: target,
        kcal_per_min: e,
        minutes_unrounded,
        minutes_per_session: planned,
        bouts_per_session: 1,
        bouts: days.iter().map(|d| (*d, planned)).collect(),
        over_max: None,
    };
    let Some(max) = p.max_session_minutes else {
        return out;
    };
    if f64::from(planned) <= max {
        return out;
    }
    let mut note = OverMaxNote {
        policy: p.over_max,
        minutes_before: planned,
        shortfall_kcal: 0.0,
        added_sessions: 0,
        still_over: false,
    };
    match p.over_max {
        OverMax::Flag => note.still_over = true,
        OverMax::Cap => {
            let s = f64::from(step);
            let capped = (((max / s) + 1e-9).floor() * s).max(s) as u32;
            note.shortfall_kcal = n * (minutes_unrounded - f64::from(capped)).max(0.0) * e;
            out.minutes_per_session = capped;
            out.bouts = days.iter().map(|d| (*d, capped)).collect();
        }
        OverMax::AddSession => {
            let week_minutes = n * minutes_unrounded;
            let extras = extra_days(plan);
            let mut chosen = extras.len();
            let mut minutes = round_up(week_minutes / (n + extras.len() as f64), step);
            for k in 1..=extras.len() {
                let m = round_up(week_minutes / (n + k as f64), step);
                if f64::from(m) <= max {
                    chosen = k;
                    minutes = m;
                    break;
                }
            }
            let mut all_days: Vec<Weekday> = p.session_days.clone();
            all_days.extend(extras.iter().take(chosen));
            let dates = dates_in_week(week_start, &all_days);
            note.added_sessions = chosen as u32;
            note.still_over = f64::from(minutes) > max;
            out.minutes_per_session = minutes;
            out.bouts = dates.iter().map(|d| (*d, minutes)).collect();
        }
        OverMax::Split => {
            let bout = round_up(minutes_unrounded / 2.0, step);
            note.still_over = f64::from(bout) > max;
            // Saturating: a near-zero energy per minute gives u32::MAX-minute bouts,
            // which the driver then reports as longer than a day (never wraps to 0).
            out.minutes_per_session = bout.saturating_mul(2);
            out.bouts_per_session = 2;
            out.bouts = days.iter().flat_map(|d| [(*d, bout), (*d, bout)]).collect();
        }
    }
    out.over_max = Some(note);
    out
}
