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
use crate::model::balance::{Rhs, RhsLanes};
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
        && p.session_days.len() <= 7
}

/// What a fast run records.
#[derive(Debug, Clone, Default, PartialEq)]
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

impl FastRun {
    /// Empty, with room for `weeks` protocol weeks of `total` weeks (a buffer reused).
    fn reset(&mut self, weeks: usize, total: usize) {
        for v in [
            &mut self.mass_kg,
            &mut self.fat_kg,
            &mut self.deficit_kcal,
            &mut self.prescribed_net_kcal,
            &mut self.intake_kcal_per_day,
            &mut self.rmr_kcal_per_day,
        ] {
            v.clear();
            v.reserve(total);
        }
        for v in [&mut self.minutes, &mut self.session_minutes] {
            v.clear();
            v.reserve(weeks);
        }
        self.over_max = false;
    }
}

/// Lanes integrated together with the processor's baseline vector instructions
/// (two lanes to an SSE2 vector): more lanes than this, and the compiler leaves
/// some of the arithmetic scalar.
const W_BASE: usize = 4;
/// Lanes integrated together where the processor has AVX2 (four lanes to a
/// vector): three vectors' worth keep its arithmetic units busy (docs/speed.md).
const W_AVX2: usize = 12;

/// The state (F, L, Xbar, P) of `W` lanes, quantity by quantity.
type S<const W: usize> = [[f64; W]; 4];

/// The derivative of (F, L, Xbar, P) of `W` lanes with each lane's week's
/// MET-minutes `a` and minutes `b`: the model's one right-hand side
/// ([`RhsLanes::rmr`], [`RhsLanes::point`]), lane by lane.
#[inline(always)]
fn eval<const W: usize>(rhs: &RhsLanes<W>, a: &[f64; W], b: &[f64; W], y: &S<W>) -> S<W> {
    let rmr = rhs.rmr(&y[0], &y[1]);
    let p = rhs.point(&y[0], &y[1], &y[2], &rmr, a, b);
    [p.dfat, p.dlean, p.dlagged, p.exercise]
}

#[inline(always)]
fn axpy_h<const W: usize>(y: &S<W>, h: f64, k: &S<W>) -> S<W> {
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

/// A lane with its participant (as drawn) and scenario: lanes of different draws,
/// scenarios or participants run side by side in [`run_lanes`].
#[derive(Debug, Clone, Copy)]
pub struct LaneRun<'a> {
    /// The run.
    pub lane: Lane<'a>,
    /// The calibrated participant.
    pub ph: &'a Physiology,
    /// Its baseline.
    pub baseline: &'a Baseline,
    /// The scenario's compensation.
    pub comp: &'a Compensation,
}

impl LaneRun<'_> {
    /// Whether `self` and `other` can share a chunk: the same weeks and step, and
    /// the same switches of the model ([`Rhs::side_by_side`]).
    fn fits_with(&self, other: &LaneRun) -> bool {
        self.lane.plan.protocol.total_weeks() == other.lane.plan.protocol.total_weeks()
            && self.comp.intake_lag_days.to_bits() == other.comp.intake_lag_days.to_bits()
            && Rhs::new(self.ph, self.comp).side_by_side(&Rhs::new(other.ph, other.comp))
    }
}

/// A lane's constants, worked out once per run (no allocation).
struct Setup {
    met: f64,
    easy_empty: bool,
    easy_minutes: f64,
    easy_met_minutes: f64,
    /// Days of the sessions from the week's start (the first `sessions`).
    offsets: [u32; 7],
    sessions: usize,
    /// The step-down after an absence, carried from week to week.
    resume: Resumption,
}

impl Setup {
    fn of(plan: &Plan, baseline: &Baseline) -> Setup {
        let p = &plan.protocol;
        let easy = [p.warm_up, p.cool_down]
            .into_iter()
            .flatten()
            .map(|e| (f64::from(e.minutes), e.met));
        let mut offsets = [0; 7];
        for (o, d) in offsets.iter_mut().zip(&p.session_days) {
            *o = (7 + d.num_days_from_monday() - p.start.weekday().num_days_from_monday()) % 7;
        }
        Setup {
            met: plan.activity.intensity.met_at(baseline.mass_kg),
            easy_empty: easy.clone().next().is_none(),
            easy_minutes: easy.clone().map(|e| e.0).sum(),
            easy_met_minutes: easy.map(|e| e.0 * e.1).sum(),
            offsets,
            sessions: p.session_days.len(),
            resume: Resumption::default(),
        }
    }
}

/// Week `w`'s minutes per session of one lane at the week's starting mass `m_w` and
/// RMR `rmr_w` (the dose rule, [`session_dose`]): None when a session would not fit
/// in a day; `Some(None)` when the lane has no protocol week `w` to exercise in (no
/// exercise, or follow-up); 0 minutes after a drop-out.
#[inline(always)]
fn week_minutes(
    run: &LaneRun,
    set: &Setup,
    w: u32,
    m_w: f64,
    rmr_w: f64,
    out: &mut FastRun,
) -> Option<Option<u32>> {
    let lane = &run.lane;
    let plan = lane.plan;
    let p = &plan.protocol;
    if !(lane.exercise && w <= p.weeks) {
        return Some(None);
    }
    if lane.last_exercise_week.is_some_and(|l| w > l) {
        return Some(Some(0));
    }
    let (ph, baseline) = (run.ph, run.baseline);
    let r = Reference {
        mass_kg: m_w,
        rmr_kcal_per_day: rmr_w,
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
    Some(Some(mins))
}

/// Week `w`'s sessions of one lane at `minutes` per session (from [`week_minutes`]):
/// the MET-minutes and minutes delivered (summed over sessions), recorded in `out`,
/// and the step-down after an absence carried to the next week.
#[inline(always)]
fn week_sessions(
    run: &LaneRun,
    set: &mut Setup,
    (w, day_keys): (u32, &[u64; 7]),
    minutes: u32,
    out: &mut FastRun,
) -> (f64, f64) {
    let lane = &run.lane;
    let exercising = lane.last_exercise_week.is_none_or(|l| w <= l);
    let (mut a, mut b) = (0.0, 0.0);
    let per = f64::from(minutes);
    let mut planned = 0u32;
    if exercising {
        let mut delivered = 0;
        for off in &set.offsets[..set.sessions] {
            planned += minutes + set.easy_minutes as u32;
            let done = lane
                .attendance
                .is_none_or(|at| at.delivered_on(day_keys[*off as usize]));
            // Without a branch the processor cannot mispredict: a session not
            // delivered adds exactly 0 (the sums start at +0 and stay non-negative).
            let take = if done { 1.0 } else { 0.0 };
            a += take * (per * set.met + set.easy_met_minutes);
            b += take * (per + set.easy_minutes);
            delivered += u32::from(done);
        }
        set.resume.after_week(set.sessions as u32, delivered);
    }
    out.minutes.push(minutes);
    out.session_minutes.push(planned);
    (a, b)
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
/// [`fast_run`] would ([`run_lanes`]). None when any lane leaves the model's range.
/// The lanes' plans must have the same number of weeks.
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
    let runs: Vec<LaneRun> = lanes
        .iter()
        .map(|lane| LaneRun {
            lane: *lane,
            ph,
            baseline,
            comp,
        })
        .collect();
    let (mut outs, mut ok) = (Vec::new(), Vec::new());
    run_lanes(&runs, &mut outs, &mut ok);
    ok.iter().all(|o| *o).then_some(outs)
}

/// Run `runs` side by side, 4 lanes at a time, or 12 with AVX2 (consecutive runs that fit
/// together: the same weeks, step and switches of the model), each exactly as it runs alone: `outs[i]` gets
/// run `i`'s record and `ok[i]` whether it stayed in the model's range (else its
/// record is incomplete and the caller runs `run`, which reports where). The lanes'
/// RK4 stages are interleaved: one lane's stages depend on each other, so a single
/// lane leaves the processor waiting on its divisions, while independent lanes fill
/// the wait. `outs` and `ok` are buffers, reused from call to call.
pub fn run_lanes(runs: &[LaneRun], outs: &mut Vec<FastRun>, ok: &mut Vec<bool>) {
    outs.resize_with(runs.len(), FastRun::default);
    ok.clear();
    ok.resize(runs.len(), true);
    let avx2 = has_avx2();
    let width = if avx2 { W_AVX2 } else { W_BASE };
    let mut start = 0;
    while start < runs.len() {
        let first = &runs[start];
        let end = runs[start..]
            .iter()
            .position(|r| !first.fits_with(r))
            .map_or(runs.len(), |k| start + k);
        let mut c = start;
        while c < end {
            let hi = (c + width).min(end);
            let (runs, outs, ok) = (&runs[c..hi], &mut outs[c..hi], &mut ok[c..hi]);
            if avx2 {
                chunk_avx2(runs, outs, ok);
            } else {
                chunk_run::<W_BASE>(runs, outs, ok);
            }
            c = hi;
        }
        start = end;
    }
}

/// Whether the processor has AVX2 (checked once, then cached by the standard library).
fn has_avx2() -> bool {
    #[cfg(target_arch = "x86_64")]
    {
        std::arch::is_x86_feature_detected!("avx2")
    }
    #[cfg(not(target_arch = "x86_64"))]
    {
        false
    }
}

/// [`chunk_run`] of [`W_AVX2`] lanes compiled for AVX2: the same operations in the
/// same order on wider vectors, so the same bits (no fused multiply-add: Rust never
/// contracts a multiplication and an addition into one).
fn chunk_avx2(runs: &[LaneRun], outs: &mut [FastRun], ok: &mut [bool]) {
    #[cfg(target_arch = "x86_64")]
    {
        #[target_feature(enable = "avx2")]
        fn with_avx2(runs: &[LaneRun], outs: &mut [FastRun], ok: &mut [bool]) {
            chunk_run::<W_AVX2>(runs, outs, ok);
        }
        assert!(has_avx2(), "AVX2 is checked before this is called");
        // SAFETY: the processor has AVX2, checked just above.
        unsafe { with_avx2(runs, outs, ok) }
    }
    #[cfg(not(target_arch = "x86_64"))]
    {
        chunk_run::<W_AVX2>(runs, outs, ok);
    }
}

/// Up to `W` lanes integrated together; a short chunk repeats its last lane in the
/// lanes left over, whose results are dropped.
#[inline(always)]
fn chunk_run<const W: usize>(runs: &[LaneRun], outs: &mut [FastRun], ok: &mut [bool]) {
    let n = runs.len();
    let at = |i: usize| &runs[i.min(n - 1)];
    let rhs = RhsLanes::new(std::array::from_fn(|i| Rhs::new(at(i).ph, at(i).comp)));
    let total = runs[0].lane.plan.protocol.total_weeks();
    type V<const W: usize> = [f64; W];
    let mut setups: [Setup; W] =
        std::array::from_fn(|i| Setup::of(at(i).lane.plan, at(i).baseline));
    for (o, r) in outs.iter_mut().zip(runs) {
        o.reset(r.lane.plan.protocol.weeks as usize, total as usize);
    }
    let f0: V<W> = std::array::from_fn(|i| at(i).baseline.fat_mass_kg);
    let l0: V<W> = std::array::from_fn(|i| at(i).baseline.fat_free_mass_kg);
    let start: S<W> = [f0, l0, [0.0; W], [0.0; W]];
    let mut y = start;
    // Each lane's RMR at the current state (the week's start, then its end).
    let mut rmr: V<W> = std::array::from_fn(|i| at(i).ph.rmr(at(i).comp, f0[i], l0[i]));
    let (mut a, mut b): (V<W>, V<W>) = ([0.0; W], [0.0; W]);
    // The step from the intake lag, the same rule as the general RK4 driver's.
    let lag = runs[0].comp.intake_lag_days;
    let steps = rk4_steps_per_week(lag);
    let h = 7.0 / steps as f64;
    // A lane that left the model's range restarts from its baseline, and is dropped.
    let drop = |y: &mut S<W>, ok: &mut [bool], i: usize| {
        ok[i] = false;
        for j in 0..4 {
            y[j][i] = start[j][i];
        }
    };
    for w in 1..=total {
        // Every lane's minutes first, then its sessions: the minutes are a chain of
        // divisions in each lane, independent from lane to lane, which the processor
        // overlaps when no unpredictable branch (attendance) comes between them.
        let mut minutes = [None; W];
        // The attendance hash's part for each day of the week, shared by the lanes.
        let day_keys: [u64; 7] =
            std::array::from_fn(|k| Attendance::day_key(7 * (w - 1) + k as u32, 1));
        for i in 0..n {
            if ok[i] {
                let m = y[0][i] + y[1][i];
                minutes[i] = week_minutes(&runs[i], &setups[i], w, m, rmr[i], &mut outs[i]);
                if minutes[i].is_none() {
                    drop(&mut y, ok, i);
                }
            }
        }
        for i in 0..W {
            (a[i], b[i]) = match minutes[i.min(n - 1)] {
                _ if i >= n => (a[n - 1], b[n - 1]),
                Some(Some(mins)) if ok[i] => {
                    let week = (w, &day_keys);
                    week_sessions(&runs[i], &mut setups[i], week, mins, &mut outs[i])
                }
                _ => (0.0, 0.0),
            };
        }
        for _ in 0..steps {
            let k1 = eval(&rhs, &a, &b, &y);
            let k2 = eval(&rhs, &a, &b, &axpy_h(&y, h / 2.0, &k1));
            let k3 = eval(&rhs, &a, &b, &axpy_h(&y, h / 2.0, &k2));
            let k4 = eval(&rhs, &a, &b, &axpy_h(&y, h, &k3));
            for j in 0..4 {
                for i in 0..W {
                    y[j][i] += (k1[j][i] + k2[j][i] * 2.0 + k3[j][i] * 2.0 + k4[j][i]) * (h / 6.0);
                }
            }
        }
        if lag == 0.0 {
            y[2] = eval(&rhs, &a, &b, &y)[3];
        }
        for i in 0..n {
            if !ok[i] {
                continue;
            }
            let (run, out) = (&runs[i], &mut outs[i]);
            let (fat, lean) = (y[0][i], y[1][i]);
            let m = fat + lean;
            let bmi = crate::model::composition::bmi(m, run.ph.height_cm);
            rmr[i] = run.ph.rmr(run.comp, fat, lean);
            if !(0..4).all(|j| y[j][i].is_finite())
                || fat < MIN_FAT_KG
                || m < MIN_MASS_KG
                || bmi < MIN_BMI
                || rmr[i] <= 0.0
            {
                drop(&mut y, ok, i);
                rmr[i] = run.ph.rmr(run.comp, f0[i], l0[i]);
                continue;
            }
            let c = &run.ph.constants;
            let (f0, l0) = (f0[i], l0[i]);
            // The week's end: Xbar is the state (with a lag) or the week's X (without).
            out.intake_kcal_per_day
                .push(rhs.lanes[i].intake0 + run.comp.intake_fraction * y[2][i]);
            out.rmr_kcal_per_day.push(rmr[i]);
            out.mass_kg.push(m);
            out.fat_kg.push(fat);
            out.deficit_kcal
                .push(-(c.fat_kcal_per_kg * (fat - f0) + c.lean_kcal_per_kg * (lean - l0)));
            out.prescribed_net_kcal.push(y[3][i]);
        }
        if !ok.iter().any(|o| *o) {
            return;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// An invented participant with a ramp, a warm-up, a cap and a lagged intake.
    const PLAN: &str = r#"
[participant]
id = "W-01"
sex = "female"
age_years = 41
height_cm = 166.0
mass_kg = 91.0

[protocol]
start = 2027-01-04
weeks = 26
follow_up_weeks = 4
session_days = ["mon", "wed", "fri"]
max_session_minutes = 55
over_max = "cap"

[protocol.dose]
kcal_per_kg_week = 20.0
mass_basis = "current"

[protocol.ramp]
weeks = 3

[protocol.warm_up]
minutes = 5

[activity]
compendium_code = "17200"

[[scenario]]
name = "lagged"
intake_fraction = 0.4
intake_lag_days = 10.0
"#;

    /// The baseline width (SSE2) and the AVX2 width give the same bits: the same
    /// operations in the same order, only more lanes to a vector. On a processor
    /// without AVX2 only the baseline width runs, and there is nothing to compare.
    #[test]
    fn both_widths_give_the_same_bits() {
        if !has_avx2() {
            return;
        }
        let plan = crate::plan::parse_plan("w.toml", PLAN).unwrap();
        let (baseline, ph) = crate::simulate::calibrated(&plan).unwrap();
        let comps: Vec<Compensation> = (0..14)
            .map(|k| Compensation {
                intake_fraction: 0.05 * k as f64,
                ..plan.scenarios[0].compensation
            })
            .collect();
        let runs: Vec<LaneRun> = comps
            .iter()
            .enumerate()
            .map(|(k, comp)| LaneRun {
                lane: Lane {
                    plan: &plan,
                    exercise: k % 3 != 0,
                    attendance: (k % 2 == 0).then_some(Attendance {
                        probability: 0.75,
                        key: k as u64,
                    }),
                    last_exercise_week: (k == 5).then_some(11),
                },
                ph: &ph,
                baseline: &baseline,
                comp,
            })
            .collect();
        let width = |w: usize, avx2: bool| {
            let mut outs = vec![FastRun::default(); runs.len()];
            let mut ok = vec![true; runs.len()];
            for ((r, o), k) in runs.chunks(w).zip(outs.chunks_mut(w)).zip(ok.chunks_mut(w)) {
                if avx2 {
                    chunk_avx2(r, o, k);
                } else {
                    chunk_run::<W_BASE>(r, o, k);
                }
            }
            assert!(ok.iter().all(|o| *o));
            outs
        };
        let base = width(W_BASE, false);
        assert_eq!(base, width(W_AVX2, true));
        assert!(base[1].mass_kg != base[2].mass_kg);
    }
}
