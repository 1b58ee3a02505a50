//! One stretch of days with fixed bouts, integrated with Dormand-Prince 5(4).
//!
//! State `y = (F, L, Xbar, P)` with `P' = X`, the running integral of exercise energy
//! above rest (the prescribed net energy). Reference: Dormand JR, Prince PJ 1980,
//! J Comput Appl Math 6:19, as implemented by `ode_solvers::Dopri5`.

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

struct Rhs<'a> {
    physiology: &'a Physiology,
    compensation: &'a Compensation,
    bouts: &'a [Bout],
}

impl System<f64, State> for Rhs<'_> {
    fn system(&self, _t: f64, y: &State, dy: &mut State) {
        let f = self
            .physiology
            .fluxes(self.compensation, self.bouts, &body_of(y));
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
    if days <= 0.0 || step <= 0.0 {
        return Err((
            0.0,
            format!("nothing to integrate: {days} days in steps of {step}"),
        ));
    }
    let rhs = Rhs {
        physiology,
        compensation,
        bouts,
    };
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
    let n = (days / step).round() as usize;
    if (n as f64 * step - days).abs() > 1e-9 * days.max(1.0) {
        return Err((
            0.0,
            format!("{days} days is not a whole number of {step}-day steps"),
        ));
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
