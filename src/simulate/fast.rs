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
}

type Y = [f64; 4];

/// The right-hand side's constants, worked out once per run.
struct Rhs<'a> {
    ph: &'a Physiology,
    comp: &'a Compensation,
    /// RMR as `k (cm M + cl L + c0)` where the equation is linear in mass and FFM.
    linear_rmr: Option<(f64, f64, f64)>,
    one_met: bool,
    intake0: f64,
    inv_lag: f64,
}

impl Rhs<'_> {
    #[inline]
    fn rmr(&self, fat: f64, lean: f64) -> f64 {
        match self.linear_rmr {
            Some((cm, cl, c0)) => {
                let m = fat + lean;
                self.ph.rmr_factor * (cm * m + cl * lean + c0)
                    - self.comp.rmr_adaptation_kcal_per_kg * (self.ph.mass0_kg - m).max(0.0)
            }
            None => self.ph.rmr(self.comp, fat, lean),
        }
    }

    /// The derivative of (F, L, Xbar, P) with the week's MET-minutes `a` and minutes `b`.
    #[inline]
    fn eval(&self, a: f64, b: f64, y: &Y) -> Y {
        let c = &self.ph.constants;
        let comp = self.comp;
        let (fat, lean, lagged_state) = (y[0], y[1], y[2]);
        let m = fat + lean;
        let rmr = self.rmr(fat, lean);
        // Multiplications by reciprocals: divisions are the slow part of this loop.
        let per_met_minute = ML_O2_PER_MET * m * (1.0 / 200.0);
        let rest = if self.one_met {
            per_met_minute
        } else {
            rmr * (1.0 / MINUTES_PER_DAY)
        };
        let x = (a * per_met_minute - b * rest) * (1.0 / 7.0);
        let (lagged, dlagged) = if comp.intake_lag_days > 0.0 {
            (lagged_state, (x - lagged_state) * self.inv_lag)
        } else {
            (x, 0.0)
        };
        let intake = self.intake0 + comp.intake_fraction * lagged;
        let tef = c.tef_fraction * intake;
        let activity = self.ph.activity_kcal_per_kg_day * m - comp.activity_fraction * x;
        let expenditure = rmr + tef + activity + x;
        let share = c.forbes_constant_kg / fat.max(1e-6);
        let dfat = (intake - expenditure) / (c.fat_kcal_per_kg + c.lean_kcal_per_kg * share);
        [dfat, share * dfat, dlagged, x]
    }
}

#[inline]
fn axpy(y: &Y, h: f64, k: &Y) -> Y {
    [
        y[0] + h * k[0],
        y[1] + h * k[1],
        y[2] + h * k[2],
        y[3] + h * k[3],
    ]
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
    let p = &plan.protocol;
    let total = p.total_weeks() as usize;
    let mut out = FastRun {
        mass_kg: Vec::with_capacity(total),
        fat_kg: Vec::with_capacity(total),
        deficit_kcal: Vec::with_capacity(total),
        prescribed_net_kcal: Vec::with_capacity(total),
        minutes: Vec::with_capacity(p.weeks as usize),
        session_minutes: Vec::with_capacity(p.weeks as usize),
        over_max: false,
    };
    let (f0, l0) = (baseline.fat_mass_kg, baseline.fat_free_mass_kg);
    let mut y: Y = [f0, l0, 0.0, 0.0];
    let n = p.session_days.len() as f64;
    let met = plan.activity.intensity.met_at(baseline.mass_kg);
    let easy: Vec<(f64, f64)> = [p.warm_up, p.cool_down]
        .into_iter()
        .flatten()
        .map(|e| (f64::from(e.minutes), e.met))
        .collect();
    let easy_minutes: f64 = easy.iter().map(|e| e.0).sum();
    let easy_met_minutes: f64 = easy.iter().map(|e| e.0 * e.1).sum();
    let offsets: Vec<u32> = p
        .session_days
        .iter()
        .map(|d| (7 + d.num_days_from_monday() - p.start.weekday().num_days_from_monday()) % 7)
        .collect();
    let step = p.round_minutes_to;
    let rhs = Rhs {
        ph,
        comp,
        linear_rmr: linear_rmr(ph),
        one_met: ph.constants.rest_for_net == RestForNet::OneMet,
        intake0: ph.intake_kcal_per_day + comp.diet_change_kcal_per_day,
        inv_lag: if comp.intake_lag_days > 0.0 {
            1.0 / comp.intake_lag_days
        } else {
            0.0
        },
    };
    for w in 1..=p.total_weeks() {
        let start_day = 7 * (w - 1);
        let m_w = y[0] + y[1];
        let exercising = exercise && w <= p.weeks && last_exercise_week.is_none_or(|l| w <= l);
        let (mut a, mut b) = (0.0, 0.0);
        if exercise && w <= p.weeks {
            let r = Reference {
                mass_kg: m_w,
                rmr_kcal_per_day: ph.rmr(comp, y[0], y[1]),
            };
            let minutes = if exercising {
                let ramp = p.ramp_fraction(w);
                let e = basis_kcal_per_min(plan, ph, &plan.activity.intensity, &r);
                let mass_basis = match p.dose.mass_basis {
                    MassBasis::Baseline => baseline.mass_kg,
                    MassBasis::Current => m_w,
                };
                let target = match p.dose.amount {
                    DoseAmount::KcalPerSession(v) => Some(v * ramp),
                    DoseAmount::KcalPerWeek(v) => Some(v / n * ramp),
                    DoseAmount::KcalPerKgWeek(v) => Some(v * mass_basis / n * ramp),
                    DoseAmount::MinutesPerWeek(_) => None,
                };
                let unrounded = match (target, p.dose.amount) {
                    (Some(t), _) if easy.is_empty() => t / e,
                    (Some(t), _) => (t - easy_kcal(plan, ph, &r)).max(0.0) / e,
                    (None, DoseAmount::MinutesPerWeek(v)) => ramp * v / n,
                    (None, _) => unreachable!("only a minutes dose has no energy target"),
                };
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
            let per = f64::from(minutes);
            let mut planned = 0u32;
            for off in &offsets {
                if !exercising {
                    break;
                }
                planned += minutes + easy_minutes as u32;
                if attendance.is_none_or(|at| at.delivered(start_day + off, 1)) {
                    a += per * met + easy_met_minutes;
                    b += per + easy_minutes;
                }
            }
            out.minutes.push(minutes);
            out.session_minutes.push(planned);
        }
        for _ in 0..7 {
            let k1 = rhs.eval(a, b, &y);
            let k2 = rhs.eval(a, b, &axpy(&y, 0.5, &k1));
            let k3 = rhs.eval(a, b, &axpy(&y, 0.5, &k2));
            let k4 = rhs.eval(a, b, &axpy(&y, 1.0, &k3));
            for i in 0..4 {
                y[i] += (k1[i] + k2[i] * 2.0 + k3[i] * 2.0 + k4[i]) * (1.0 / 6.0);
            }
        }
        if comp.intake_lag_days == 0.0 {
            y[2] = rhs.eval(a, b, &y)[3];
        }
        let m = y[0] + y[1];
        let bmi = crate::model::composition::bmi(m, ph.height_cm);
        if !y.iter().all(|v| v.is_finite())
            || y[0] < MIN_FAT_KG
            || m < MIN_MASS_KG
            || bmi < MIN_BMI
            || ph.rmr(comp, y[0], y[1]) <= 0.0
        {
            return None;
        }
        let c = &ph.constants;
        out.mass_kg.push(m);
        out.fat_kg.push(y[0]);
        out.deficit_kcal
            .push(-(c.fat_kcal_per_kg * (y[0] - f0) + c.lean_kcal_per_kg * (y[1] - l0)));
        out.prescribed_net_kcal.push(y[3]);
    }
    Some(out)
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
