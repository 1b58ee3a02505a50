//! Compensation read from the weigh-ins (docs/model.md section 7): the scenario parameter that
//! best explains the measured masses, with an approximate 95% interval.
//!
//! The baseline is a measurement like every other weigh-in: the model runs from the
//! plan's mass with the delivered sessions and no re-anchoring, and the measured
//! masses are `y_i = m_i(p) + d + e_i`, where `d` is the offset of the true starting
//! mass from the plan's (a first-order treatment: a shifted start shifts the whole
//! curve by about the same amount over the weeks a log spans). Every weigh-in counts,
//! the start date's included. For a given `p` the best offset is the mean residual,
//! so the profile sum of squares is `S(p) = sum (r_i(p) - rbar(p))^2` with two
//! parameters estimated. Interval: the profile t interval of Bates DM, Watts DG 1988,
//! Nonlinear Regression Analysis and Its Applications (Wiley), section 6.1:
//! `S(p) <= S_min (1 + t^2_{n-2, 0.975} / (n - 2))`. Its coverage, checked by
//! simulation with noisy baselines, is in docs/model.md section 7. The search: a grid
//! over the allowed range, then golden-section refinement in the best grid cell; the
//! interval ends by bisection on `S(p) - threshold`.

use crate::error::Error;
use crate::plan::Plan;
use crate::simulate::observed::{Observed, WeighIn};
use crate::simulate::{RunMode, run};
use chrono::NaiveDate;
use serde::Serialize;

/// Which scenario parameter to fit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FitParameter {
    /// `c_I`, in the scenario key's range.
    IntakeFraction,
    /// `c_A`, in the scenario key's range.
    ActivityFraction,
}

impl FitParameter {
    /// The scenario key.
    pub fn key(self) -> &'static str {
        match self {
            FitParameter::IntakeFraction => "intake_fraction",
            FitParameter::ActivityFraction => "activity_fraction",
        }
    }

    /// The allowed range: the scenario key's (docs/file-formats.md section 1).
    pub fn range(self) -> (f64, f64) {
        let (lo, hi, _) = crate::plan::scenario_range(self.key());
        (lo, hi)
    }
}

/// One weigh-in's residual.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Residual {
    /// Date.
    pub date: NaiveDate,
    /// Days since the start.
    pub day: u32,
    /// Measured mass, kg.
    pub measured_kg: f64,
    /// Model mass with the fitted value and offset, kg.
    pub model_kg: f64,
    /// Measured minus model, kg.
    pub residual: f64,
}

/// The fit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FitResult {
    /// The scenario whose other parameters were held.
    pub scenario: String,
    /// The parameter's key.
    pub parameter: &'static str,
    /// The estimate.
    pub estimate: f64,
    /// Approximate 95% interval.
    pub interval: [f64; 2],
    /// How the interval was found.
    pub interval_method: &'static str,
    /// True when the estimate sits at an end of the allowed range.
    pub at_bound: bool,
    /// True when it sits at the lower end.
    pub at_lower_bound: bool,
    /// True when it sits at the upper end.
    pub at_upper_bound: bool,
    /// The allowed range searched.
    pub range: [f64; 2],
    /// Weigh-ins used (every one up to the as-of date, the start date's included).
    pub weigh_ins: usize,
    /// The plan's baseline mass, kg.
    pub plan_mass_kg: f64,
    /// The first weigh-in of the log, kg.
    pub first_weigh_in_kg: f64,
    /// Estimated offset of the true starting mass from the plan's, kg.
    pub baseline_offset_kg: f64,
    /// Estimated starting mass, kg (plan's mass plus the offset).
    pub baseline_estimate_kg: f64,
    /// Days the log spans.
    pub span_days: u32,
    /// Minimum sum of squares, kg^2.
    pub sse_kg2: f64,
    /// Root-mean-square residual, kg (`sqrt(SSE / n)`).
    pub rmse_kg: f64,
    /// Residual standard deviation with two parameters fitted, kg (`sqrt(SSE / (n - 2))`).
    pub residual_sd_kg: f64,
    /// Mass lost by the last weigh-in in the fitted model and with no compensation in
    /// this parameter (the full-adherence projection of the delivered sessions), kg.
    pub loss_fitted_kg: f64,
    /// The same with no compensation in this parameter, kg.
    pub loss_without_kg: f64,
    /// Residual of each weigh-in.
    pub residuals_kg: Vec<Residual>,
    /// Mean extra intake `c_I Xbar` over the log span, kcal/day (for an activity fit,
    /// the activity given up, `c_A X`, as the same intake-equivalent).
    pub extra_intake_kcal_per_day: f64,
    /// Mean net exercise energy delivered over the span, kcal/day.
    pub exercise_kcal_per_day: f64,
    /// Model mass by day with the fitted value (day, kg).
    pub model_fitted: Vec<(u32, f64)>,
    /// Model mass by day with no compensation in this parameter (day, kg).
    pub model_without: Vec<(u32, f64)>,
}

struct Curve {
    daily_mass: Vec<f64>,
    extra: f64,
    exercise: f64,
}

fn curve(
    plan: &Plan,
    obs: &Observed,
    scenario: usize,
    param: FitParameter,
    value: f64,
) -> Result<Curve, Error> {
    let (baseline, physiology) = crate::simulate::calibrated(plan)?;
    let mut sc = plan.scenarios[scenario].clone();
    sc.compensation.set(param.key(), value);
    let weeks = (obs.as_of_day / 7 + 1).min(plan.protocol.total_weeks());
    let mode = RunMode {
        exercise: true,
        observed: Some(obs),
        anchor: false,
        weeks,
        integrator: crate::simulate::integrate::Integrator::Dopri5,
        attendance: None,
        last_exercise_week: None,
    };
    let out = run(plan, &physiology, &baseline, &sc, mode, None)?;
    let days = (obs.as_of_day as usize + 1).min(out.daily.len());
    let mut extra = 0.0;
    let mut exercise = 0.0;
    for (day, y) in out.daily.iter().take(days).enumerate() {
        let w = day / 7;
        // The same bouts as the run: each delivered session with its warm-up and
        // cool-down (one energy per session, prescription::session_bouts).
        let bouts: Vec<crate::model::Bout> = obs
            .sessions_in(7 * w as u32, 7 * w as u32 + 7)
            .filter(|s| s.minutes > 0.0)
            .flat_map(|s| {
                crate::simulate::prescription::session_bouts(plan, s.minutes, &s.intensity)
            })
            .collect();
        let f = physiology.fluxes(
            &sc.compensation,
            &bouts,
            &crate::simulate::integrate::body_of(y),
        );
        exercise += f.exercise;
        extra += match param {
            FitParameter::IntakeFraction => {
                f.intake - physiology.intake_kcal_per_day - sc.compensation.diet_change_kcal_per_day
            }
            // Activity given up, as the intake that would do the same: extra intake
            // carries its own TEF, so it takes X c_A / (1 - beta) (docs/model.md section 5).
            FitParameter::ActivityFraction => {
                sc.compensation.activity_fraction * f.exercise / (1.0 - plan.constants.tef_fraction)
            }
        };
    }
    Ok(Curve {
        daily_mass: out.daily.iter().map(|y| y[0] + y[1]).collect(),
        extra: extra / days as f64,
        exercise: exercise / days as f64,
    })
}

/// The minimum of `f` in `(a, b)` to 1e-7 by golden-section search (Kiefer J 1953,
/// Proc Am Math Soc 4:502).
fn golden_section(
    f: &dyn Fn(f64) -> Result<f64, Error>,
    (mut a, mut b): (f64, f64),
) -> Result<f64, Error> {
    let g = (5f64.sqrt() - 1.0) / 2.0;
    let mut c = b - g * (b - a);
    let mut d = a + g * (b - a);
    let (mut fc, mut fd) = (f(c)?, f(d)?);
    while b - a > 1e-7 {
        if fc < fd {
            b = d;
            d = c;
            fd = fc;
            c = b - g * (b - a);
            fc = f(c)?;
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + g * (b - a);
            fd = f(d)?;
        }
    }
    Ok((a + b) / 2.0)
}

/// A weigh-in against the fitted curve shifted by `offset`.
fn residual(w: &WeighIn, fitted: &Curve, offset: f64) -> Residual {
    let m = fitted.daily_mass[w.day as usize] + offset;
    Residual {
        date: w.date,
        day: w.day,
        measured_kg: w.mass_kg,
        model_kg: m,
        residual: w.mass_kg - m,
    }
}

/// The best offset (the mean residual) and the profile sum of squares about it.
fn profile(points: &[&WeighIn], c: &Curve) -> (f64, f64) {
    let r: Vec<f64> = points
        .iter()
        .map(|w| w.mass_kg - c.daily_mass[w.day as usize])
        .collect();
    let mean = r.iter().sum::<f64>() / r.len() as f64;
    (mean, r.iter().map(|x| (x - mean).powi(2)).sum())
}

/// `t_{df, 0.975}`, the two-sided 95% quantile of Student's t.
fn t_975(df: f64) -> f64 {
    use statrs::distribution::{ContinuousCDF, StudentsT};
    StudentsT::new(0.0, 1.0, df)
        .map(|t| t.inverse_cdf(0.975))
        .unwrap_or(f64::NAN)
}

/// The interval's method, as reported.
pub const INTERVAL_METHOD: &str = "profile t over the starting offset: S(p) <= S_min (1 + t^2(n-2, 0.975)/(n-2)) (Bates and Watts 1988, section 6.1)";

/// Fit `param` for scenario `scenario` (index into the plan's scenarios).
pub fn fit(
    plan: &Plan,
    obs: &Observed,
    scenario: usize,
    param: FitParameter,
) -> Result<FitResult, Error> {
    let points: Vec<_> = obs
        .weigh_ins
        .iter()
        .filter(|w| w.day <= obs.as_of_day)
        .collect();
    let span = match (points.first(), points.last()) {
        (Some(a), Some(b)) => b.day - a.day,
        _ => 0,
    };
    if points.len() < 3 || span < 21 {
        return Err(Error::Usage(format!(
            "too little data to estimate compensation: {} weigh-in(s) spanning {span} days up to {}; at least three weigh-ins spanning 21 days or more are needed",
            points.len(),
            obs.as_of
        )));
    }
    let sse = |v: f64| -> Result<f64, Error> {
        match curve(plan, obs, scenario, param, v) {
            Ok(c) => Ok(profile(&points, &c).1),
            Err(Error::OutOfRange(_)) => Ok(f64::INFINITY),
            Err(e) => Err(e),
        }
    };
    let (lo, hi) = param.range();
    let (estimate, sse_min) = minimise(&sse, (lo, hi), param)?;
    let n = points.len() as f64;
    let df = n - 2.0;
    let t = t_975(df);
    let threshold = sse_min * (1.0 + t * t / df);
    let edge = |inside: f64, outside: f64| -> Result<f64, Error> {
        if sse(outside)? <= threshold {
            return Ok(outside);
        }
        let (mut i, mut o) = (inside, outside);
        for _ in 0..40 {
            let m = (i + o) / 2.0;
            if sse(m)? <= threshold { i = m } else { o = m }
        }
        Ok((i + o) / 2.0)
    };
    let interval = [edge(estimate, lo)?, edge(estimate, hi)?];
    let fitted = curve(plan, obs, scenario, param, estimate)?;
    let without = curve(plan, obs, scenario, param, 0.0)?;
    let (offset, _) = profile(&points, &fitted);
    let residuals_kg = points
        .iter()
        .map(|w| residual(w, &fitted, offset))
        .collect();
    let last = obs.as_of_day as usize;
    let daily = |c: &Curve| {
        c.daily_mass
            .iter()
            .take(last + 1)
            .enumerate()
            .map(|(d, m)| (d as u32, *m + offset))
            .collect()
    };
    let last_day = points.last().map_or(0, |w| w.day as usize);
    let lost = |c: &Curve| c.daily_mass[0] - c.daily_mass[last_day];
    let at_lower_bound = estimate - lo < 1e-4;
    let at_upper_bound = hi - estimate < 1e-4;
    Ok(FitResult {
        scenario: plan.scenarios[scenario].name.clone(),
        parameter: param.key(),
        estimate,
        interval,
        interval_method: INTERVAL_METHOD,
        at_bound: at_lower_bound || at_upper_bound,
        at_lower_bound,
        at_upper_bound,
        range: [lo, hi],
        weigh_ins: points.len(),
        plan_mass_kg: fitted.daily_mass[0],
        first_weigh_in_kg: points[0].mass_kg,
        baseline_offset_kg: offset,
        baseline_estimate_kg: fitted.daily_mass[0] + offset,
        span_days: span,
        sse_kg2: sse_min,
        rmse_kg: (sse_min / n).sqrt(),
        residual_sd_kg: (sse_min / df).sqrt(),
        loss_fitted_kg: lost(&fitted),
        loss_without_kg: lost(&without),
        residuals_kg,
        extra_intake_kcal_per_day: fitted.extra,
        exercise_kcal_per_day: fitted.exercise,
        model_fitted: daily(&fitted),
        model_without: daily(&without),
    })
}

/// The minimum of `sse` over `(lo, hi)`: a grid, then golden-section search in the
/// cell around the best grid point; the estimate and its sum of squares.
fn minimise(
    sse: &dyn Fn(f64) -> Result<f64, Error>,
    (lo, hi): (f64, f64),
    param: FitParameter,
) -> Result<(f64, f64), Error> {
    const GRID: usize = 40;
    let grid: Vec<f64> = (0..=GRID)
        .map(|i| lo + (hi - lo) * i as f64 / GRID as f64)
        .collect();
    let values = grid
        .iter()
        .map(|v| sse(*v))
        .collect::<Result<Vec<f64>, Error>>()?;
    let best = (0..=GRID)
        .min_by(|a, b| values[*a].total_cmp(&values[*b]))
        .expect("a grid");
    if !values[best].is_finite() {
        return Err(Error::Usage(format!(
            "no value of {} in {lo} to {hi} keeps the model in its valid range for this log",
            param.key()
        )));
    }
    let cell = (grid[best.saturating_sub(1)], grid[(best + 1).min(GRID)]);
    let estimate = golden_section(sse, cell)?;
    let sse_min = sse(estimate)?;
    if values[best] < sse_min {
        return Ok((grid[best], values[best]));
    }
    Ok((estimate, sse_min))
}
