//! The cohort's allocation-free hot loop: the same model and weekly re-prescription
//! as [`super::run`] (the same right-hand side, [`crate::model::balance`], and the same
//! dose rule, [`session_dose`]), with classic RK4 in steps set by the intake lag
//! ([`rk4_steps_per_week`], docs/model.md section 6), for the common
//! plans (one activity whose MET does not depend on mass, no closures, over-maximum
//! policy `flag` or `cap`). Each week's exercise is summed once into MET-minutes and
//! minutes, so the right-hand side costs the same whatever the number of sessions.
//! Anything else, and any state outside the model's range, goes back to `run`.
//!
//! A test holds it to `run` with RK4 (tests/cohort_fast_path.rs).

use super::integrate::rk4_steps_per_week;
use super::prescription::{
    Reference, Resumption, basis_kcal_per_min, cap_minutes, easy_kcal, round_up, session_dose,
};
use super::{Attendance, MIN_BMI, MIN_FAT_KG, MIN_MASS_KG};
use crate::model::balance::Rhs;
use crate::model::energy::MINUTES_PER_DAY;
use crate::model::{Baseline, Compensation, Physiology};
use crate::plan::{OverMax, Plan};
use chrono::Datelike;

/// Whether `plan` can take the fast path.
pub fn eligible(plan: &Plan) -> bool {
    let p = &plan.protocol;
    plan.rotation.is_empty()
        && p.closures.is_empty()
        && matches!(p.over_max, OverMax::Flag | OverMax::Cap)
        && !plan.activity.intensity.depends_on_mass()
}

/// What a fast run records.
#[derive(Debug, Clone, PartialEq)]
pub struct FastRun {
    /// Mass at the end of every week, kg.
    pub mass_kg: Vec<f64>,
    /// Fat mass at the end of every week, kg.
    pub fat_kg: Vec<f64>,
    /// Energy lost from the stores by the end of every week, kcal.
    pub deficit_kcal: Vec<f64>,
    /// Prescribed net exercise energy by the end of every week, kcal.
    pub prescribed_net_kcal: Vec<f64>,
    /// Minutes per session of every protocol week (0 without exercise).
    pub minutes: Vec<u32>,
    /// Whole-session minutes of all planned sessions of every protocol week.
    pub session_minutes: Vec<u32>,
    /// A session over the maximum before the policy acted.
    pub over_max: bool,
    /// Intake at the end of every week, kcal/day.
    pub intake_kcal_per_day: Vec<f64>,
    /// RMR at the end of every week, kcal/day.
    pub rmr_kcal_per_day: Vec<f64>,
}

/// One lane's state (F, L, Xbar, P).
type Y = [f64; 4];

/// Lanes integrated together (a multiple of the vector width).
const W: usize = 4;
/// One quantity in every lane.
type V = [f64; W];
/// The state of every lane, quantity by quantity.
type S = [V; 4];

/// The derivative of (F, L, Xbar, P) of [`W`] lanes with each lane's week's
/// MET-minutes `a` and minutes `b`: the model's one right-hand side
/// ([`Rhs::rmr_lanes`], [`Rhs::point`]) lane by lane. Every line works lane by lane,
/// so the compiler packs the lanes into vector instructions; the arithmetic of each
/// lane is that of one scalar run.
#[inline(always)]
fn eval(rhs: &Rhs, a: &V, b: &V, y: &S) -> S {
    let rmr = rhs.rmr_lanes(&y[0], &y[1]);
    let mut d: S = [[0.0; W]; 4];
    for i in 0..W {
        let p = rhs.point(y[0][i], y[1][i], y[2][i], rmr[i], a[i], b[i]);
        d[0][i] = p.dfat;
        d[1][i] = p.dlean;
        d[2][i] = p.dlagged;
        d[3][i] = p.exercise;
    }
    d
}

#[inline(always)]
fn axpy_h(y: &S, h: f64, k: &S) -> S {
    let mut out = *y;
    for (o, kj) in out.iter_mut().zip(k) {
        for (v, kv) in o.iter_mut().zip(kj) {
            *v += h * kv;
        }
    }
    out
}

/// One run of [`fast_runs`]: a plan, with or without its exercise, with the draw's
/// attendance and drop-out.
#[derive(Debug, Clone, Copy)]
pub struct Lane<'a> {
    /// The plan (fast-path eligible).
    pub plan: &'a Plan,
    /// Whether the plan's exercise is done (false: the no-exercise counterpart).
    pub exercise: bool,
    /// Which sessions are delivered (None: all).
    pub attendance: Option<Attendance>,
    /// The last week with exercise (None: every protocol week).
    pub last_exercise_week: Option<u32>,
}

/// A lane's constants, worked out once per run.
struct Setup {
    met: f64,
    easy_empty: bool,
    easy_minutes: f64,
    easy_met_minutes: f64,
    offsets: Vec<u32>,
    /// The step-down after an absence, carried from week to week.
    resume: Resumption,
}

impl Setup {
    fn of(plan: &Plan, baseline: &Baseline) -> Setup {
        let p = &plan.protocol;
        let easy: Vec<(f64, f64)> = [p.warm_up, p.cool_down]
            .into_iter()
            .flatten()
            .map(|e| (f64::from(e.minutes), e.met))
            .collect();
        Setup {
            met: plan.activity.intensity.met_at(baseline.mass_kg),
            easy_empty: easy.is_empty(),
            easy_minutes: easy.iter().map(|e| e.0).sum(),
            easy_met_minutes: easy.iter().map(|e| e.0 * e.1).sum(),
            offsets: p
                .session_days
                .iter()
                .map(|d| {
                    (7 + d.num_days_from_monday() - p.start.weekday().num_days_from_monday()) % 7
                })
                .collect(),
            resume: Resumption::default(),
        }
    }
}

/// Week `w`'s exercise of one lane at the week's starting state `y`: the MET-minutes
/// and minutes delivered (summed over sessions), recorded in `out`. None when a
/// session would not fit in a day.
#[allow(clippy::too_many_arguments)]
fn week_exercise(
    lane: &Lane,
    set: &mut Setup,
    ph: &Physiology,
    baseline: &Baseline,
    comp: &Compensation,
    w: u32,
    y: &Y,
    out: &mut FastRun,
) -> Option<(f64, f64)> {
    let plan = lane.plan;
    let p = &plan.protocol;
    if !(lane.exercise && w <= p.weeks) {
        return Some((0.0, 0.0));
    }
    let exercising = lane.last_exercise_week.is_none_or(|l| w <= l);
    let m_w = y[0] + y[1];
    let minutes = if exercising {
        let r = Reference {
            mass_kg: m_w,
            rmr_kcal_per_day: ph.rmr(comp, y[0], y[1]),
        };
        let dose = session_dose(plan, w, baseline.mass_kg, m_w, set.resume);
        let e = basis_kcal_per_min(plan, ph, &plan.activity.intensity, &r);
        let easy = if set.easy_empty || dose.target.is_none() {
            0.0
        } else {
            easy_kcal(plan, ph, &r)
        };
        let unrounded = dose.minutes_at_target(dose.share, e, easy, 1.0);
        let step = p.round_minutes_to;
        let mut mins = round_up(unrounded, step);
        if let Some(max) = p.max_session_minutes
            && f64::from(mins) > max
        {
            out.over_max = true;
            if p.over_max == OverMax::Cap {
                mins = mins.min(cap_minutes(max, step));
            }
        }
        if f64::from(mins) >= MINUTES_PER_DAY {
            return None;
        }
        mins
    } else {
        0
    };
    let (mut a, mut b) = (0.0, 0.0);
    let per = f64::from(minutes);
    let mut planned = 0u32;
    if exercising {
        let start_day = 7 * (w - 1);
        let mut delivered = 0;
        for off in &set.offsets {
            planned += minutes + set.easy_minutes as u32;
            if lane
                .attendance
                .is_none_or(|at| at.delivered(start_day + off, 1))
            {
                a += per * set.met + set.easy_met_minutes;
                b += per + set.easy_minutes;
                delivered += 1;
            }
        }
        set.resume.after_week(set.offsets.len() as u32, delivered);
    }
    out.minutes.push(minutes);
    out.session_minutes.push(planned);
    Some((a, b))
}

/// Run `plan` (fast-path eligible) for one scenario. None when the state leaves the
/// model's range: the caller then runs `run`, which reports where.
#[allow(clippy::too_many_arguments)]
pub fn fast_run(
    plan: &Plan,
    ph: &Physiology,
    baseline: &Baseline,
    comp: &Compensation,
    exercise: bool,
    attendance: Option<Attendance>,
    last_exercise_week: Option<u32>,
) -> Option<FastRun> {
    let lane = Lane {
        plan,
        exercise,
        attendance,
        last_exercise_week,
    };
    fast_runs(&[lane], ph, baseline, comp).map(|mut v| v.remove(0))
}

/// Run several lanes of one participant and scenario side by side, each exactly as
/// [`fast_run`] would. The lanes' RK4 stages are interleaved: one lane's stages
/// depend on each other, so a single lane leaves the processor waiting on its
/// divisions, while independent lanes fill the wait. None when any lane leaves the
/// model's range. The lanes' plans must have the same number of weeks.
pub fn fast_runs(
    lanes: &[Lane],
    ph: &Physiology,
    baseline: &Baseline,
    comp: &Compensation,
) -> Option<Vec<FastRun>> {
    let total = lanes.first()?.plan.protocol.total_weeks();
    assert!(
        lanes.iter().all(|l| l.plan.protocol.total_weeks() == total),
        "lanes of one participant share the protocol's length"
    );
    let rhs = Rhs::new(ph, comp);
    let mut outs = Vec::with_capacity(lanes.len());
    for chunk in lanes.chunks(W) {
        outs.extend(chunk_run(chunk, &rhs, baseline, total)?);
    }
    Some(outs)
}

/// Up to [`W`] lanes integrated together; a short chunk repeats its last lane,
/// whose copies are dropped.
fn chunk_run(chunk: &[Lane], rhs: &Rhs, baseline: &Baseline, total: u32) -> Option<Vec<FastRun>> {
    let (ph, comp) = (rhs.ph, rhs.comp);
    let lanes: [&Lane; W] = std::array::from_fn(|i| &chunk[i.min(chunk.len() - 1)]);
    let (f0, l0) = (baseline.fat_mass_kg, baseline.fat_free_mass_kg);
    let mut setups: [Setup; W] = std::array::from_fn(|i| Setup::of(lanes[i].plan, baseline));
    let mut outs: [FastRun; W] = std::array::from_fn(|i| {
        let weeks = lanes[i].plan.protocol.weeks as usize;
        FastRun {
            mass_kg: Vec::with_capacity(total as usize),
            fat_kg: Vec::with_capacity(total as usize),
            deficit_kcal: Vec::with_capacity(total as usize),
            prescribed_net_kcal: Vec::with_capacity(total as usize),
            minutes: Vec::with_capacity(weeks),
            session_minutes: Vec::with_capacity(weeks),
            over_max: false,
            intake_kcal_per_day: Vec::with_capacity(total as usize),
            rmr_kcal_per_day: Vec::with_capacity(total as usize),
        }
    });
    let mut y: S = [[f0; W], [l0; W], [0.0; W], [0.0; W]];
    let (mut a, mut b): (V, V) = ([0.0; W], [0.0; W]);
    let c = &ph.constants;
    // The step from the intake lag, the same rule as the general RK4 driver's.
    let steps = rk4_steps_per_week(comp.intake_lag_days);
    let h = 7.0 / steps as f64;
    for w in 1..=total {
        for i in 0..W {
            let yi = [y[0][i], y[1][i], y[2][i], y[3][i]];
            (a[i], b[i]) = week_exercise(
                lanes[i],
                &mut setups[i],
                ph,
                baseline,
                comp,
                w,
                &yi,
                &mut outs[i],
            )?;
        }
        for _ in 0..steps {
            let k1 = eval(rhs, &a, &b, &y);
            let k2 = eval(rhs, &a, &b, &axpy_h(&y, h / 2.0, &k1));
            let k3 = eval(rhs, &a, &b, &axpy_h(&y, h / 2.0, &k2));
            let k4 = eval(rhs, &a, &b, &axpy_h(&y, h, &k3));
            for j in 0..4 {
                for i in 0..W {
                    y[j][i] += (k1[j][i] + k2[j][i] * 2.0 + k3[j][i] * 2.0 + k4[j][i]) * (h / 6.0);
                }
            }
        }
        if comp.intake_lag_days == 0.0 {
            y[2] = eval(rhs, &a, &b, &y)[3];
        }
        for (i, out) in outs.iter_mut().enumerate().take(chunk.len()) {
            let (fat, lean) = (y[0][i], y[1][i]);
            let m = fat + lean;
            let bmi = crate::model::composition::bmi(m, ph.height_cm);
            let rmr = ph.rmr(comp, fat, lean);
            if !(0..4).all(|j| y[j][i].is_finite())
                || fat < MIN_FAT_KG
                || m < MIN_MASS_KG
                || bmi < MIN_BMI
                || rmr <= 0.0
            {
                return None;
            }
            // The week's end: Xbar is the state (with a lag) or the week's X (without).
            out.intake_kcal_per_day
                .push(rhs.intake0 + comp.intake_fraction * y[2][i]);
            out.rmr_kcal_per_day.push(rmr);
            out.mass_kg.push(m);
            out.fat_kg.push(fat);
            out.deficit_kcal
                .push(-(c.fat_kcal_per_kg * (fat - f0) + c.lean_kcal_per_kg * (lean - l0)));
            out.prescribed_net_kcal.push(y[3][i]);
        }
    }
    Some(outs.into_iter().take(chunk.len()).collect())
}
