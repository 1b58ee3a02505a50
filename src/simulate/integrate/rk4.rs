//! Classic fixed-step RK4 over one stretch of days (docs/model.md section 6).

use super::{Rhs, Samples, State, output_steps};
use crate::model::{Bout, Compensation, Physiology};
use ode_solvers::System;

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
