//! The cohort's allocation-free hot loop: the same model and weekly re-prescription
//! as [`super::run`], with classic RK4 in one-day steps (MODEL.md 6), for the common
//! plans (one activity whose MET does not depend on mass, no closures, over-maximum
//! policy `flag` or `cap`). Each week's exercise is summed once into MET-minutes and
//! minutes, so the right-hand side costs the same whatever the number of sessions.
//! Anything else, and any state outside the model's range, goes back to `run`.
//!
//! A test holds it to `run` with RK4 (tests/cohort_speed.rs).

use super::prescription::{Reference, basis_kcal_per_min, easy_kcal, round_up};
use super::{Attendance, MIN_BMI, MIN_FAT_KG, MIN_MASS_KG};
use crate::activity::acsm::ML_O2_PER_MET;
use crate::model::energy::MINUTES_PER_DAY;
use crate::model::{Baseline, Compensation, Physiology, RestForNet};
use crate::plan::{DoseAmount, MassBasis, OverMax, Plan};
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

/// The right-hand side's constants, worked out once per run.
struct Rhs<'a> {
    ph: &'a Physiology,
    comp: &'a Compensation,
    /// RMR as `k (cm M + cl L + c0)` where the equation is linear in mass and FFM.
    linear_rmr: Option<(f64, f64, f64)>,
    one_met: bool,
    intake0: f64,
    inv_lag: f64,
    /// `rho_L C` of the Forbes partition.
    lean_forbes: f64,
}

impl<'a> Rhs<'a> {
    fn new(ph: &'a Physiology, comp: &'a Compensation) -> Rhs<'a> {
        let c = &ph.constants;
        Rhs {
            ph,
            comp,
            linear_rmr: linear_rmr(ph),
            one_met: c.rest_for_net == RestForNet::OneMet,
            intake0: ph.intake_kcal_per_day + comp.diet_change_kcal_per_day,
            inv_lag: if comp.intake_lag_days > 0.0 {
                1.0 / comp.intake_lag_days
            } else {
                0.0
            },
            lean_forbes: c.lean_kcal_per_kg * c.forbes_constant_kg,
        }
    }

    /// The derivative of (F, L, Xbar, P) of [`W`] lanes with each lane's week's
    /// MET-minutes `a` and minutes `b`. Every line works lane by lane, so the
    /// compiler packs the lanes into vector instructions; the arithmetic of each
    /// lane is that of one scalar run.
    #[inline(always)]
    fn eval(&self, a: &V, b: &V, y: &S) -> S {
        let c = &self.ph.constants;
        let comp = self.comp;
        let mut m = [0.0; W];
        for i in 0..W {
            m[i] = y[0][i] + y[1][i];
        }
        let mut rmr = [0.0; W];
        match self.linear_rmr {
            Some((cm, cl, c0)) => {
                let (k, ad, m0) = (
                    self.ph.rmr_factor,
                    comp.rmr_adaptation_kcal_per_kg,
                    self.ph.mass0_kg,
                );
                for i in 0..W {
                    rmr[i] = k * (cm * m[i] + cl * y[1][i] + c0) - ad * (m0 - m[i]).max(0.0);
                }
            }
            None => {
                for i in 0..W {
                    rmr[i] = self.ph.rmr(comp, y[0][i], y[1][i]);
                }
            }
        }
        let mut d: S = [[0.0; W]; 4];
        let (lag, inv_lag) = (comp.intake_lag_days > 0.0, self.inv_lag);
        let (cf, ca) = (comp.intake_fraction, comp.activity_fraction);
        let (tef, delta) = (c.tef_fraction, self.ph.activity_kcal_per_kg_day);
        let (rho_f, forbes) = (c.fat_kcal_per_kg, c.forbes_constant_kg);
        for i in 0..W {
            // Multiplications by reciprocals: divisions are the slow part of this loop.
            let per_met_minute = ML_O2_PER_MET * m[i] * (1.0 / 200.0);
            let rest = if self.one_met {
                per_met_minute
            } else {
                rmr[i] * (1.0 / MINUTES_PER_DAY)
            };
            let x = (a[i] * per_met_minute - b[i] * rest) * (1.0 / 7.0);
            let (lagged, dlagged) = if lag {
                (y[2][i], (x - y[2][i]) * inv_lag)
            } else {
                (x, 0.0)
            };
            let intake = self.intake0 + cf * lagged;
            let activity = delta * m[i] - ca * x;
            let expenditure = rmr[i] + tef * intake + activity + x;
            // The Forbes partition with one division: with share s = C / F,
            // dF = E / (rho_F + rho_L s) = E F / (rho_F F + rho_L C) and dL = s dF =
            // E C / (rho_F F + rho_L C). The reciprocal depends on F alone, so it is
            // under way while the energy balance is summed.
            let f = y[0][i].max(1e-6);
            let r = 1.0 / (rho_f * f + self.lean_forbes);
            let balance = (intake - expenditure) * r;
            d[0][i] = balance * f;
            d[1][i] = balance * forbes;
            d[2][i] = dlagged;
            d[3][i] = x;
        }
        d
    }
}

#[inline(always)]
fn axpy(y: &S, h: f64, k: &S) -> S {
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
    n: f64,
    met: f64,
    easy_empty: bool,
    easy_minutes: f64,
    easy_met_minutes: f64,
    offsets: Vec<u32>,
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
            n: p.session_days.len() as f64,
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
        }
    }
}

/// Week `w`'s exercise of one lane at the week's starting state `y`: the MET-minutes
/// and minutes delivered (summed over sessions), recorded in `out`. None when a
/// session would not fit in a day.
#[allow(clippy::too_many_arguments)]
fn week_exercise(
    lane: &Lane,
    set: &Setup,
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
        let ramp = p.ramp_fraction(w);
        let e = basis_kcal_per_min(plan, ph, &plan.activity.intensity, &r);
        let mass_basis = match p.dose.mass_basis {
            MassBasis::Baseline => baseline.mass_kg,
            MassBasis::Current => m_w,
        };
        let n = set.n;
        let target = match p.dose.amount {
            DoseAmount::KcalPerSession(v) => Some(v * ramp),
            DoseAmount::KcalPerWeek(v) => Some(v / n * ramp),
            DoseAmount::KcalPerKgWeek(v) => Some(v * mass_basis / n * ramp),
            DoseAmount::MinutesPerWeek(_) => None,
        };
        let unrounded = match (target, p.dose.amount) {
            (Some(t), _) if set.easy_empty => t / e,
            (Some(t), _) => (t - easy_kcal(plan, ph, &r)).max(0.0) / e,
            (None, DoseAmount::MinutesPerWeek(v)) => ramp * v / n,
            (None, _) => unreachable!("only a minutes dose has no energy target"),
        };
        let step = p.round_minutes_to;
        let mut mins = round_up(unrounded, step);
        if let Some(max) = p.max_session_minutes
            && f64::from(mins) > max
        {
            out.over_max = true;
            if p.over_max == OverMax::Cap {
                let s = f64::from(step);
                mins = mins.min((((max / s) + 1e-9).floor() * s).max(s) as u32);
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
        for off in &set.offsets {
            planned += minutes + set.easy_minutes as u32;
            if lane
                .attendance
                .is_none_or(|at| at.delivered(start_day + off, 1))
            {
                a += per * set.met + set.easy_met_minutes;
                b += per + set.easy_minutes;
            }
        }
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
    let setups: [Setup; W] = std::array::from_fn(|i| Setup::of(lanes[i].plan, baseline));
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
    for w in 1..=total {
        for i in 0..W {
            let yi = [y[0][i], y[1][i], y[2][i], y[3][i]];
            (a[i], b[i]) = week_exercise(
                lanes[i],
                &setups[i],
                ph,
                baseline,
                comp,
                w,
                &yi,
                &mut outs[i],
            )?;
        }
        for _ in 0..7 {
            let k1 = rhs.eval(&a, &b, &y);
            let k2 = rhs.eval(&a, &b, &axpy(&y, 0.5, &k1));
            let k3 = rhs.eval(&a, &b, &axpy(&y, 0.5, &k2));
            let k4 = rhs.eval(&a, &b, &axpy(&y, 1.0, &k3));
            for j in 0..4 {
                for i in 0..W {
                    y[j][i] +=
                        (k1[j][i] + k2[j][i] * 2.0 + k3[j][i] * 2.0 + k4[j][i]) * (1.0 / 6.0);
                }
            }
        }
        if comp.intake_lag_days == 0.0 {
            y[2] = rhs.eval(&a, &b, &y)[3];
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

/// The RMR equation as `(cm, cl, c0)` with `RMR_eq = cm M + cl L + c0` at the
/// participant's height, age and sex, where it is linear (all but
/// Livingston-Kohlstadt). The coefficients are read off the equation itself.
fn linear_rmr(ph: &Physiology) -> Option<(f64, f64, f64)> {
    let eq = ph.constants.rmr_equation;
    if eq == crate::model::RmrEquation::LivingstonKohlstadt {
        return None;
    }
    let at = |m: f64, l: f64| eq.kcal_per_day(ph.sex, m, l, ph.height_cm, ph.age_years);
    let c0 = at(0.0, 0.0);
    Some((at(1.0, 0.0) - c0, at(0.0, 1.0) - c0, c0))
}
