//! One stretch of days with fixed bouts, integrated with Dormand-Prince 5(4).
//!
//! State `y = (F, L, Xbar, P)` with `P' = X`, the running integral of exercise energy
//! above rest (the prescribed net energy). Reference: Dormand JR, Prince PJ 1980,
//! J Comput Appl Math 6:19, as implemented by `ode_solvers::Dopri5`.

use crate::model::balance;
use crate::model::{BodyState, Bout, Compensation, Physiology};
use ode_solvers::continuous_output_model::ContinuousOutputModel;
use ode_solvers::{Dopri5, System, Vector4};

/// Relative tolerance (MODEL.md 6 asks for 1e-8 or tighter).
pub const RTOL: f64 = 1e-10;
/// Absolute tolerance (MODEL.md 6).
pub const ATOL: f64 = 1e-10;

/// The integrated state vector.
pub type State = Vector4<f64>;

/// Build the state vector from a body state and the running exercise integral.
pub fn state_of(body: &BodyState, prescribed_net_kcal: f64) -> State {
    State::new(
        body.fat_kg,
        body.lean_kg,
        body.lagged_exercise_kcal_per_day,
        prescribed_net_kcal,
    )
}

/// The body part of a state vector.
pub fn body_of(y: &State) -> BodyState {
    BodyState {
        fat_kg: y[0],
        lean_kg: y[1],
        lagged_exercise_kcal_per_day: y[2],
    }
}

/// The model's right-hand side ([`crate::model::balance`]) with the week's bouts.
struct Rhs<'a> {
    rhs: balance::Rhs<'a>,
    bouts: &'a [Bout],
}

impl<'a> Rhs<'a> {
    fn new(physiology: &'a Physiology, compensation: &'a Compensation, bouts: &'a [Bout]) -> Self {
        Rhs {
            rhs: balance::Rhs::new(physiology, compensation),
            bouts,
        }
    }
}

impl System<f64, State> for Rhs<'_> {
    fn system(&self, _t: f64, y: &State, dy: &mut State) {
        let f = self.rhs.fluxes(self.bouts, &body_of(y));
        dy[0] = f.dfat;
        dy[1] = f.dlean;
        dy[2] = f.dlagged;
        dy[3] = f.exercise;
    }
}

/// Samples of the solution every `step` days from 0 to `days` inclusive.
#[derive(Debug, Clone)]
pub struct Samples {
    /// Times since the stretch began, days.
    pub times: Vec<f64>,
    /// States at those times.
    pub states: Vec<State>,
}

/// Which integrator a run uses (MODEL.md 6): Dormand-Prince 5(4) with tight
/// tolerances everywhere results must be exact, or classic fixed-step RK4 with a step
/// of at most one day where speed matters (the cohort), shown within 1e-4 kg of
/// Dormand-Prince over 10 years by a test.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Integrator {
    /// Dormand-Prince 5(4), `RTOL`/`ATOL`.
    #[default]
    Dopri5,
    /// Classic Runge-Kutta 4, one-day steps (or the output step when shorter).
    Rk4,
}

impl Integrator {
    /// The command-line word.
    pub fn name(self) -> &'static str {
        match self {
            Integrator::Dopri5 => "dopri5",
            Integrator::Rk4 => "rk4",
        }
    }
}

/// Integrate with the chosen integrator; see [`integrate`].
pub fn integrate_with(
    integrator: Integrator,
    physiology: &Physiology,
    compensation: &Compensation,
    bouts: &[Bout],
    y0: State,
    days: f64,
    step: f64,
) -> Result<Samples, (f64, String)> {
    match integrator {
        Integrator::Dopri5 => integrate(physiology, compensation, bouts, y0, days, step),
        Integrator::Rk4 => integrate_rk4(physiology, compensation, bouts, y0, days, step),
    }
}

/// The number of output steps of `step` days in `days` days, which must be a whole
/// positive number.
fn output_steps(days: f64, step: f64) -> Result<usize, (f64, String)> {
    if days <= 0.0 || step <= 0.0 {
        return Err((
            0.0,
            format!("nothing to integrate: {days} days in steps of {step}"),
        ));
    }
    let n = (days / step).round() as usize;
    if (n as f64 * step - days).abs() > 1e-9 * days.max(1.0) {
        return Err((
            0.0,
            format!("{days} days is not a whole number of {step}-day steps"),
        ));
    }
    Ok(n)
}

/// Classic RK4 (Kutta 1901; e.g. Hairer, Norsett and Wanner 1993, Solving Ordinary
/// Differential Equations I, II.1) with output every `step` days and internal steps of
/// at most one day.
pub fn integrate_rk4(
    physiology: &Physiology,
    compensation: &Compensation,
    bouts: &[Bout],
    y0: State,
    days: f64,
    step: f64,
) -> Result<Samples, (f64, String)> {
    let n = output_steps(days, step)?;
    let rhs = Rhs::new(physiology, compensation, bouts);
    let sub = step.ceil().max(1.0) as usize;
    let h = step / sub as f64;
    let mut times = Vec::with_capacity(n + 1);
    let mut states = Vec::with_capacity(n + 1);
    let mut y = y0;
    times.push(0.0);
    states.push(y);
    let (mut k1, mut k2, mut k3, mut k4) = (
        State::zeros(),
        State::zeros(),
        State::zeros(),
        State::zeros(),
    );
    for i in 0..n {
        for j in 0..sub {
            let t = i as f64 * step + j as f64 * h;
            rhs.system(t, &y, &mut k1);
            rhs.system(t + h / 2.0, &(y + k1 * (h / 2.0)), &mut k2);
            rhs.system(t + h / 2.0, &(y + k2 * (h / 2.0)), &mut k3);
            rhs.system(t + h, &(y + k3 * h), &mut k4);
            y += (k1 + k2 * 2.0 + k3 * 2.0 + k4) * (h / 6.0);
            if !y.iter().all(|v| v.is_finite()) {
                return Err((t + h, "the state is no longer finite".to_string()));
            }
        }
        times.push(if i + 1 == n {
            days
        } else {
            (i + 1) as f64 * step
        });
        states.push(y);
    }
    Ok(Samples { times, states })
}

/// Integrate `days` days from `y0` with the week's `bouts`; dense output every `step`
/// days (`days` must be a whole multiple of `step`). Errors carry the solver's words
/// and the time reached.
pub fn integrate(
    physiology: &Physiology,
    compensation: &Compensation,
    bouts: &[Bout],
    y0: State,
    days: f64,
    step: f64,
) -> Result<Samples, (f64, String)> {
    let n = output_steps(days, step)?;
    let rhs = Rhs::new(physiology, compensation, bouts);
    // Samples come from the solver's continuous output, evaluated inside the step
    // that covers each time. (The crate's plain dense output writes the end point by
    // extrapolating from the step before the last when the last output time equals
    // the end time: ode_solvers 0.6.2, dopri5.rs `solution_output`.)
    let mut solver = Dopri5::new(rhs, 0.0, days, step, y0, RTOL, ATOL);
    let mut model = ContinuousOutputModel::default();
    if let Err(e) = solver.integrate_with_continuous_output_model(&mut model) {
        let reached = if model_is_empty(&model) {
            0.0
        } else {
            model.bounds().1
        };
        return Err((reached, e.to_string()));
    }
    let mut times = Vec::with_capacity(n + 1);
    let mut states = Vec::with_capacity(n + 1);
    for i in 0..=n {
        let t = if i == n { days } else { i as f64 * step };
        let y = if i == 0 {
            y0
        } else {
            model
                .evaluate(t)
                .ok_or_else(|| (t, format!("no solution at day {t}")))?
        };
        times.push(t);
        states.push(y);
    }
    Ok(Samples { times, states })
}

fn model_is_empty(model: &ContinuousOutputModel<f64, State>) -> bool {
    // `bounds` indexes the last breakpoint; an empty model has none.
    model.evaluate(0.0).is_none()
}
