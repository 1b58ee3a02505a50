//! One stretch of days with fixed bouts, integrated with Dormand-Prince 5(4)
//! (`dopri5`) or classic RK4 (`rk4`); the state, the right-hand side and the
//! choice between them are here.
//!
//! State `y = (F, L, Xbar, P)` with `P' = X`, the running integral of exercise energy
//! above rest (the prescribed net energy).

use crate::model::balance;
use crate::model::{BodyState, Bout, Compensation, Physiology};
use ode_solvers::{System, Vector4};

mod dopri5;
mod rk4;

pub use dopri5::integrate;
pub use rk4::integrate_rk4;

/// Relative tolerance of [`integrate`] (docs/model.md section 6 asks for 1e-8 or tighter).
pub const RTOL: f64 = 1e-10;
/// Absolute tolerance of [`integrate`] (docs/model.md section 6).
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
pub(super) struct Rhs<'a> {
    rhs: balance::Rhs<'a>,
    bouts: &'a [Bout],
}

impl<'a> Rhs<'a> {
    pub(super) fn new(
        physiology: &'a Physiology,
        compensation: &'a Compensation,
        bouts: &'a [Bout],
    ) -> Self {
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

/// RK4 steps per 7 days for an intake lag of `lag_days` (docs/model.md section 6): a
/// step of at most a quarter of the lag, between 1 and 7 steps a week; 1 step a week
/// without a lag, where the right-hand side is smooth over the week and its slowest
/// time constant (the body's, hundreds of days) sets the error. The cohort's fast loop
/// and [`integrate_rk4`] both take their step from here, so the two agree exactly.
pub fn rk4_steps_per_week(lag_days: f64) -> usize {
    if lag_days > 0.0 {
        ((4.0 * 7.0 / lag_days).ceil() as usize).clamp(1, 7)
    } else {
        1
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

/// Which integrator a run uses (docs/model.md section 6): Dormand-Prince 5(4) with tight
/// tolerances everywhere results must be exact, or classic fixed-step RK4 with a step
/// from the intake lag ([`rk4_steps_per_week`]) where speed matters (the cohort), shown
/// within 1e-4 kg of Dormand-Prince over 10 years by a test.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Integrator {
    /// Dormand-Prince 5(4), `RTOL`/`ATOL`.
    #[default]
    Dopri5,
    /// Classic Runge-Kutta 4, steps from the intake lag ([`rk4_steps_per_week`]).
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
pub(super) fn output_steps(days: f64, step: f64) -> Result<usize, (f64, String)> {
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
