//! Weekly re-prescription: the week's target energy, the minutes that deliver it at
//! the reference state, rounding, and the over-maximum policies (docs/model.md section 4).
//!
//! `d_w = E_w / e_w`, rounded up to the step: `ceil(d/step - 1e-9) * step`.

use crate::activity::Intensity;
use crate::activity::acsm::gross_kcal_per_min;
use crate::model::{Bout, Physiology};
use crate::plan::{DoseAmount, EnergyBasis, MakeUp, MassBasis, OverMax, Plan};
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
    /// Minutes of the longest session before the policy acted.
    pub minutes_before: u32,
    /// Energy the week lost to a cap, kcal on the plan's basis.
    pub shortfall_kcal: f64,
    /// Sessions added on spare days.
    pub added_sessions: u32,
    /// True when sessions (or bouts) are still over the maximum after the policy.
    pub still_over: bool,
}

/// What closures took from a week and what the make-up rule gave back.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MakeUpNote {
    /// The rule.
    pub rule: MakeUp,
    /// Sessions lost to closures.
    pub sessions_lost: u32,
    /// Dose lost with them, in `unit` (kcal on the plan's basis, or minutes).
    pub lost: f64,
    /// Dose given back on the week's other sessions, in `unit`.
    pub made_up: f64,
    /// `kcal` or `min`.
    pub unit: &'static str,
}

/// One planned bout: a session, or one of its two bouts with `split`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PlannedBout {
    /// Date.
    pub date: NaiveDate,
    /// Index of its activity in [`Plan::activities`].
    pub activity: usize,
    /// Minutes at the target intensity (warm-up and cool-down not included).
    pub minutes: u32,
    /// Bout number (1 or 2) with `split`.
    pub bout: Option<u32>,
    /// Minutes before rounding.
    pub unrounded: f64,
}

/// One week's prescription.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Prescription {
    /// `r_w`.
    pub ramp_fraction: f64,
    /// `E_w`, kcal per planned session on the plan's basis (None for a minutes dose);
    /// warm-up and cool-down are part of it.
    pub target_kcal_per_session: Option<f64>,
    /// `e_w`, kcal per minute on the plan's basis of `[activity]` at the reference state.
    pub kcal_per_min: f64,
    /// Minutes at target of the longest planned session before rounding (both bouts
    /// with `split`).
    pub minutes_unrounded: f64,
    /// Minutes at target of the longest session as delivered (both bouts with `split`).
    pub minutes_per_session: u32,
    /// Bouts per session (2 with `split`).
    pub bouts_per_session: u32,
    /// Dated bouts, in date order.
    pub bouts: Vec<PlannedBout>,
    /// What the over-maximum policy did.
    pub over_max: Option<OverMaxNote>,
    /// Session dates lost to closures.
    pub closed: Vec<NaiveDate>,
    /// What the make-up rule did, in weeks with closed sessions.
    pub make_up: Option<MakeUpNote>,
    /// The step-down after an absence, in a week it lowered.
    pub step_down: Option<StepDownNote>,
}

impl Prescription {
    /// The bouts to integrate: each bout at its activity, with its warm-up and
    /// cool-down. `keep` chooses the bouts that count.
    pub fn model_bouts(&self, plan: &Plan, keep: impl Fn(&PlannedBout) -> bool) -> Vec<Bout> {
        let mut out = Vec::with_capacity(self.bouts.len() * 3);
        for b in self.bouts.iter().filter(|b| keep(b)) {
            out.extend(session_bouts(
                plan,
                f64::from(b.minutes),
                &plan.activity_at(b.activity).intensity,
            ));
        }
        out
    }
}

/// One session (or bout) as model bouts: `minutes` at target at `intensity`, with the
/// plan's warm-up and cool-down. The one definition of a session's exercise, used
/// by the simulation, the adherence table and `fit` alike (docs/model.md section 4).
pub fn session_bouts(plan: &Plan, minutes: f64, intensity: &Intensity) -> Vec<Bout> {
    let mut out = vec![Bout {
        minutes,
        intensity: intensity.clone(),
    }];
    out.extend(easy_bouts(plan));
    out
}

/// The energy of one session (or bout), kcal, warm-up and cool-down included:
/// `per_min(MET)` kcal/min over [`session_bouts`], with METs read at `mass_kg`.
pub fn session_kcal(
    plan: &Plan,
    minutes: f64,
    intensity: &Intensity,
    mass_kg: f64,
    per_min: &dyn Fn(f64) -> f64,
) -> f64 {
    session_bouts(plan, minutes, intensity)
        .iter()
        .map(|b| b.minutes * per_min(b.intensity.met_at(mass_kg)))
        .fold(0.0, |a, b| a + b)
}

/// The warm-up and cool-down of one session or bout, as model bouts.
pub fn easy_bouts(plan: &Plan) -> impl Iterator<Item = Bout> {
    [plan.protocol.warm_up, plan.protocol.cool_down]
        .into_iter()
        .flatten()
        .map(|e| Bout {
            minutes: f64::from(e.minutes),
            intensity: Intensity::Met { met: e.met },
        })
}

/// `ceil(d/step - 1e-9) * step` as whole minutes.
#[inline(always)]
pub fn round_up(minutes: f64, step: u32) -> u32 {
    if step == 1 {
        // The same value without the division and multiplication by 1, which are exact.
        return (minutes - 1e-9).ceil().max(0.0) as u32;
    }
    let s = f64::from(step);
    ((minutes / s - 1e-9).ceil().max(0.0) * s) as u32
}

/// The longest whole number of `step`-minute steps within `max` minutes (at least one
/// step): a capped session's length.
pub fn cap_minutes(max: f64, step: u32) -> u32 {
    let s = f64::from(step);
    (((max / s) + 1e-9).floor() * s).max(s) as u32
}

/// The step-down after an absence (docs/model.md section 4, "Resuming after an
/// absence"): the share of the dose in the first and the second week back after a
/// protocol week in which no planned session was delivered. Common practice: no
/// published figure for these fractions was confirmed.
pub const STEP_DOWN: [f64; 2] = [0.5, 0.75];

/// The weeks since the last absence, carried from week to week by every path that
/// prescribes minutes (the general driver and the cohort's lane loop): the one
/// place that says which week steps down, and by how much ([`STEP_DOWN`]).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Resumption {
    /// The coming week is week `k + 1` back after an absence (None: no step-down).
    back: Option<usize>,
}

impl Resumption {
    /// Record a finished protocol week with `planned` open sessions of which
    /// `delivered` were done. A week with no planned session (every session closed,
    /// no exercise, after a drop-out) changes nothing; a week with planned sessions
    /// and none delivered is an absence, so the next week is the first back.
    pub fn after_week(&mut self, planned: u32, delivered: u32) {
        if planned == 0 {
            return;
        }
        self.back = if delivered == 0 {
            Some(0)
        } else {
            self.back.map(|k| k + 1).filter(|k| *k < STEP_DOWN.len())
        };
    }

    /// The coming week's step-down: which week back it is (1 or 2) and the share of
    /// the dose ([`STEP_DOWN`]); None when the week is not stepped down.
    pub fn step(&self) -> Option<(u32, f64)> {
        self.back.map(|k| (k as u32 + 1, STEP_DOWN[k]))
    }
}

/// A week stepped down after an absence (docs/model.md section 4).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct StepDownNote {
    /// Which week back after the absence (1 or 2).
    pub week_back: u32,
    /// The share of the full dose given this week ([`STEP_DOWN`]).
    pub fraction: f64,
}

impl std::fmt::Display for StepDownNote {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "stepped down to {:.0}% of the dose, week {} back after a week with no session delivered (common practice)",
            self.fraction * 100.0,
            self.week_back
        )
    }
}

/// The dose rule of one planned session in a protocol week: what every path that
/// prescribes minutes (the general driver and the cohort's lane loop) calls.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SessionDose {
    /// `r_w`.
    pub ramp: f64,
    /// The step-down after an absence, when it lowers the week below `r_w`; the dose
    /// is then `min(r_w, s)` of the full dose.
    pub step_down: Option<StepDownNote>,
    /// `E_w`, kcal per planned session on the plan's basis (None for a minutes dose).
    pub target: Option<f64>,
    /// The session's share of the week: `E_w`, or for a minutes dose its minutes at
    /// target.
    pub share: f64,
}

/// The dose of one of the planned sessions of protocol week `week` (1-based), with
/// the plan's mass basis read from `baseline_mass_kg` or the week's `mass_kg`, and
/// stepped down after an absence as `resume` says: the week gets `min(r_w, s)` of
/// the full dose, `r_w` the ramp and `s` the step-down ([`STEP_DOWN`]).
#[inline(always)]
pub fn session_dose(
    plan: &Plan,
    week: u32,
    baseline_mass_kg: f64,
    mass_kg: f64,
    resume: Resumption,
) -> SessionDose {
    let p = &plan.protocol;
    let n = p.session_days.len() as f64;
    let ramp = p.ramp_fraction(week);
    let step_down = resume
        .step()
        .filter(|(_, s)| *s < ramp)
        .map(|(week_back, fraction)| StepDownNote {
            week_back,
            fraction,
        });
    let applied = step_down.map_or(ramp, |s| s.fraction);
    let mass_basis = match p.dose.mass_basis {
        MassBasis::Baseline => baseline_mass_kg,
        MassBasis::Current => mass_kg,
    };
    let target = match p.dose.amount {
        DoseAmount::KcalPerSession(v) => Some(v * applied),
        DoseAmount::KcalPerWeek(v) => Some(v / n * applied),
        DoseAmount::KcalPerKgWeek(v) => Some(v * mass_basis / n * applied),
        DoseAmount::MinutesPerWeek(_) => None,
    };
    let share = match (target, p.dose.amount) {
        (Some(t), _) => t,
        (None, DoseAmount::MinutesPerWeek(v)) => applied * v / n,
        (None, _) => unreachable!("only a minutes dose has no energy target"),
    };
    SessionDose {
        ramp,
        step_down,
        target,
        share,
    }
}

impl SessionDose {
    /// Minutes at target of a session whose share of the week is `share` kcal (or, for
    /// a minutes dose, minutes) at `e` kcal/min, with `easy_parts` warm-up/cool-down
    /// pairs of `easy` kcal each: `d = (E_w - E_easy) / e`.
    #[inline(always)]
    pub fn minutes_at_target(&self, share: f64, e: f64, easy: f64, easy_parts: f64) -> f64 {
        match self.target {
            Some(_) if easy == 0.0 => share / e,
            Some(_) => (share - easy_parts * easy).max(0.0) / e,
            None => share,
        }
    }
}

/// The per-minute energy on the plan's basis of `intensity` at the reference state.
pub fn basis_kcal_per_min(
    plan: &Plan,
    physiology: &Physiology,
    intensity: &Intensity,
    r: &Reference,
) -> f64 {
    let met = intensity.met_at(r.mass_kg);
    match plan.protocol.dose.basis {
        EnergyBasis::Gross => gross_kcal_per_min(met, r.mass_kg),
        EnergyBasis::Net => physiology.net_kcal_per_min(met, r.mass_kg, r.rmr_kcal_per_day),
    }
}

/// The per-minute energy on the plan's basis of `[activity]` at the reference state.
pub fn kcal_per_min(plan: &Plan, physiology: &Physiology, r: &Reference) -> f64 {
    basis_kcal_per_min(plan, physiology, &plan.activity.intensity, r)
}

/// Energy of one warm-up plus cool-down on the plan's basis, kcal.
pub fn easy_kcal(plan: &Plan, physiology: &Physiology, r: &Reference) -> f64 {
    easy_bouts(plan)
        .map(|b| b.minutes * basis_kcal_per_min(plan, physiology, &b.intensity, r))
        .fold(0.0, |a, b| a + b)
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

/// A session being planned: its date, activity, energy per minute and minutes.
#[derive(Debug, Clone, Copy)]
struct Draft {
    date: NaiveDate,
    activity: usize,
    /// kcal per minute on the plan's basis.
    e: f64,
    /// Unrounded minutes at target of the whole session (both bouts).
    minutes: f64,
}

/// Prescribe protocol week `week` (1-based) starting on `week_start` from reference
/// `r`, with no absence before it: [`prescribe_resumed`] with no step-down.
pub fn prescribe(
    plan: &Plan,
    physiology: &Physiology,
    week: u32,
    week_start: NaiveDate,
    baseline_mass_kg: f64,
    r: &Reference,
) -> Prescription {
    let at = (week, week_start);
    prescribe_resumed(
        plan,
        physiology,
        at,
        baseline_mass_kg,
        r,
        Resumption::default(),
    )
}

/// Prescribe protocol week `week` (1-based) starting on `week_start` from reference
/// `r`, stepped down after an absence as `resume` says (docs/model.md section 4).
///
/// Each session's energy target `E_w` (the week's energy shared equally over the
/// planned sessions) includes the warm-up and cool-down; the rest is delivered at the
/// session's own activity, so `d = (E_w - E_easy) / e_activity`. A minutes dose gives
/// the time at target, with warm-up and cool-down on top.
pub fn prescribe_resumed(
    plan: &Plan,
    physiology: &Physiology,
    (week, week_start): (u32, NaiveDate),
    baseline_mass_kg: f64,
    r: &Reference,
    resume: Resumption,
) -> Prescription {
    let p = &plan.protocol;
    let n = p.session_days.len() as f64;
    let dose = session_dose(plan, week, baseline_mass_kg, r.mass_kg, resume);
    let (ramp, target, share) = (dose.ramp, dose.target, dose.share);
    let e_main = kcal_per_min(plan, physiology, r);
    let split = p.over_max == OverMax::Split;
    let easy = if target.is_some() {
        easy_kcal(plan, physiology, r)
    } else {
        0.0
    };
    let bouts_per_session = if split { 2 } else { 1 };
    let draft = |date: NaiveDate, share: f64| {
        let activity = plan.activity_index_on(date.weekday());
        let e = match activity {
            0 => e_main,
            a => basis_kcal_per_min(plan, physiology, &plan.activity_at(a).intensity, r),
        };
        Draft {
            date,
            activity,
            e,
            minutes: dose.minutes_at_target(share, e, easy, f64::from(bouts_per_session)),
        }
    };
    let mut sessions: Vec<Draft> = dates_in_week(week_start, &p.session_days)
        .into_iter()
        .map(|d| draft(d, share))
        .collect();
    let step = p.round_minutes_to;
    let minutes_unrounded = sessions.iter().map(|d| d.minutes).fold(0.0, f64::max);
    // Rounded minutes at target of each bout of a session.
    let bout_minutes = |d: &Draft| round_up(d.minutes / f64::from(bouts_per_session), step);
    let how = (n, share, easy == 0.0 || target.is_none());
    let (over_max, cap_to) = match p.max_session_minutes {
        Some(max) => over_max_policy(
            plan,
            max,
            &mut sessions,
            (week_start, how),
            &draft,
            bouts_per_session,
        ),
        None => (None, None),
    };
    let rounded = |d: &Draft| match cap_to {
        Some(c) => round_up(d.minutes, step).min(c),
        None => bout_minutes(d),
    };
    // Closures: drop the closed sessions; `spread` gives their dose to the week's
    // other sessions, each no longer than the maximum (or its own planned length,
    // when that is already longer).
    let (open, closed): (Vec<Draft>, Vec<Draft>) =
        sessions.into_iter().partition(|d| !p.is_closed(d.date));
    let mut make_up = None;
    let mut minutes: Vec<(Draft, u32)> = open.iter().map(|d| (*d, rounded(d))).collect();
    if !closed.is_empty() {
        let energy_dose = target.is_some();
        let unit_of = |d: &Draft, mins: f64| {
            if energy_dose {
                mins * d.e + f64::from(bouts_per_session) * easy
            } else {
                mins
            }
        };
        let lost: f64 = closed
            .iter()
            .map(|d| unit_of(d, f64::from(rounded(d) * bouts_per_session)))
            .fold(0.0, |a, b| a + b);
        let mut made_up = 0.0;
        if p.make_up == MakeUp::Spread && !open.is_empty() {
            let limit = p.max_session_minutes.map(|max| cap_minutes(max, step));
            let how = (energy_dose, bouts_per_session, step, limit);
            made_up = spread(&mut minutes, lost / open.len() as f64, how);
        }
        make_up = Some(MakeUpNote {
            rule: p.make_up,
            sessions_lost: closed.len() as u32,
            lost,
            made_up: made_up.min(lost),
            unit: if energy_dose { "kcal" } else { "min" },
        });
    }
    let bouts = planned_bouts(&minutes, bouts_per_session, split);
    // Saturating: a near-zero energy per minute gives u32::MAX-minute bouts, which
    // the driver then reports as longer than a day (never wraps to 0).
    let minutes_per_session = minutes
        .iter()
        .map(|(_, m)| m.saturating_mul(bouts_per_session))
        .max()
        .unwrap_or_else(|| {
            // Every session of the week is closed: report the planned length.
            closed
                .first()
                .map_or(0, |d| rounded(d).saturating_mul(bouts_per_session))
        });
    Prescription {
        ramp_fraction: ramp,
        target_kcal_per_session: target,
        kcal_per_min: e_main,
        minutes_unrounded,
        minutes_per_session,
        bouts_per_session,
        bouts,
        over_max,
        closed: closed.iter().map(|d| d.date).collect(),
        make_up,
        step_down: dose.step_down,
    }
}

/// The dated bouts of the open sessions: one per session, or two with `split`.
fn planned_bouts(
    minutes: &[(Draft, u32)],
    bouts_per_session: u32,
    split: bool,
) -> Vec<PlannedBout> {
    minutes
        .iter()
        .flat_map(|(d, m)| {
            (1..=bouts_per_session).map(move |b| PlannedBout {
                date: d.date,
                activity: d.activity,
                minutes: *m,
                bout: split.then_some(b),
                unrounded: d.minutes / f64::from(bouts_per_session),
            })
        })
        .collect()
}

/// What the over-maximum policy does to a week's `sessions` when one would be longer
/// than `max` minutes: the note, and the capped length with `cap`. `add-session`
/// replaces the sessions with the week shared over added days (see [`trial`]).
fn over_max_policy(
    plan: &Plan,
    max: f64,
    sessions: &mut Vec<Draft>,
    (week_start, how): (NaiveDate, (f64, f64, bool)),
    draft: &impl Fn(NaiveDate, f64) -> Draft,
    bouts_per_session: u32,
) -> (Option<OverMaxNote>, Option<u32>) {
    let p = &plan.protocol;
    let step = p.round_minutes_to;
    let bout_minutes = |d: &Draft| round_up(d.minutes / f64::from(bouts_per_session), step);
    let mut cap_to = None;
    let before = sessions
        .iter()
        .map(|d| round_up(d.minutes, step))
        .max()
        .unwrap_or(0);
    if f64::from(before) > max {
        let mut note = OverMaxNote {
            policy: p.over_max,
            minutes_before: before,
            shortfall_kcal: 0.0,
            added_sessions: 0,
            still_over: false,
        };
        match p.over_max {
            OverMax::Flag => note.still_over = true,
            OverMax::Cap => {
                let capped = cap_minutes(max, step);
                note.shortfall_kcal = sessions
                    .iter()
                    .map(|d| (d.minutes - f64::from(capped)).max(0.0) * d.e)
                    .fold(0.0, |a, b| a + b);
                cap_to = Some(capped);
            }
            OverMax::AddSession => {
                let extras = extra_days(plan);
                let mut chosen = extras.len();
                for k in 1..=extras.len() {
                    let fits = trial(sessions, &extras[..k], week_start, how, draft)
                        .iter()
                        .all(|d| f64::from(round_up(d.minutes, step)) <= max);
                    if fits {
                        chosen = k;
                        break;
                    }
                }
                *sessions = trial(sessions, &extras[..chosen], week_start, how, draft);
                note.added_sessions = chosen as u32;
                note.still_over = sessions
                    .iter()
                    .any(|d| f64::from(round_up(d.minutes, step)) > max);
            }
            OverMax::Split => {
                note.still_over = sessions.iter().any(|d| f64::from(bout_minutes(d)) > max);
            }
        }
        return (Some(note), cap_to);
    }
    (None, None)
}

/// `spread`: the open sessions (with their rounded minutes) each take `each` of the
/// dose lost to closures (kcal with an energy dose, else minutes), no longer than the
/// limit (or their own planned length, when that is already longer); the dose given
/// back.
fn spread(
    minutes: &mut [(Draft, u32)],
    each: f64,
    (energy_dose, bouts_per_session, step, limit): (bool, u32, u32, Option<u32>),
) -> f64 {
    let mut made_up = 0.0;
    for (d, m) in minutes {
        let extra_minutes = if energy_dose { each / d.e } else { each };
        let want = round_up(
            (f64::from(*m * bouts_per_session) + extra_minutes) / f64::from(bouts_per_session),
            step,
        );
        let new = match limit {
            Some(l) => want.min(l.max(*m)),
            None => want,
        };
        let gained = f64::from((new - *m) * bouts_per_session);
        made_up += if energy_dose { gained * d.e } else { gained };
        d.minutes += gained;
        *m = new;
    }
    made_up
}

/// The sessions with `add-session` and the extra weekdays `extras`: the week's dose
/// (that of `n` planned sessions of `share` each) shared equally over them all.
fn trial(
    planned: &[Draft],
    extras: &[Weekday],
    week_start: NaiveDate,
    (n, share, proportional): (f64, f64, bool),
    draft: &impl Fn(NaiveDate, f64) -> Draft,
) -> Vec<Draft> {
    let mut days: Vec<NaiveDate> = planned.iter().map(|d| d.date).collect();
    days.extend(dates_in_week(week_start, extras));
    days.sort();
    let k = days.len() as f64;
    days.into_iter()
        .map(|date| {
            if proportional {
                // Written `n * d / k` so that one activity and no warm-up give the
                // very numbers of a plain share.
                let d = draft(date, share);
                Draft {
                    minutes: n * d.minutes / k,
                    ..d
                }
            } else {
                draft(date, n * share / k)
            }
        })
        .collect()
}
