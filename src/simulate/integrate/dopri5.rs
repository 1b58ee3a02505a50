//! Dormand-Prince 5(4) with tight tolerances over one stretch of days. Reference:
//! Dormand JR, Prince PJ 1980, J Comput Appl Math 6:19, as implemented by
//! `ode_solvers::Dopri5`.

use super::{ATOL, RTOL, Rhs, Samples, State, output_steps};
use crate::model::{Bout, Compensation, Physiology};
use ode_solvers::Dopri5;
use ode_solvers::continuous_output_model::ContinuousOutputModel;

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
