//! Classic fixed-step RK4 over one stretch of days (docs/model.md section 6).

use super::{Rhs, Samples, State, output_steps, rk4_steps_per_week};
use crate::model::{Bout, Compensation, Physiology};
use ode_solvers::System;

/// Classic RK4 (Kutta 1901; e.g. Hairer, Norsett and Wanner 1993, Solving Ordinary
/// Differential Equations I, II.1) over `days` days in steps set by the intake lag
/// ([`rk4_steps_per_week`]: over a whole week exactly that many steps, over a shorter
/// stretch proportionally fewer, at least one), with output every `step` days. An
/// output that falls inside a step is the cubic Hermite interpolant of the step's end
/// states and slopes (Hairer, Norsett and Wanner 1993, II.6, dense output of order 3);
/// the stretch's last state is the RK4 state itself.
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
    let per_week = rk4_steps_per_week(compensation.intake_lag_days) as f64;
    let count = ((days * per_week / 7.0 - 1e-9).ceil() as usize).max(1);
    let h = days / count as f64;
    let f = |y: &State, dy: &mut State| rhs.system(0.0, y, dy);
    let mut times = Vec::with_capacity(n + 1);
    let mut states = Vec::with_capacity(n + 1);
    times.push(0.0);
    states.push(y0);
    let mut y = y0;
    let (mut k1, mut k2, mut k3, mut k4) = (
        State::zeros(),
        State::zeros(),
        State::zeros(),
        State::zeros(),
    );
    let mut next = 1usize;
    for j in 0..count {
        let t0 = j as f64 * h;
        f(&y, &mut k1);
        f(&(y + k1 * (h / 2.0)), &mut k2);
        f(&(y + k2 * (h / 2.0)), &mut k3);
        f(&(y + k3 * h), &mut k4);
        let y1 = y + (k1 + k2 * 2.0 + k3 * 2.0 + k4) * (h / 6.0);
        if !y1.iter().all(|v| v.is_finite()) {
            return Err((t0 + h, "the state is no longer finite".to_string()));
        }
        let end = if j + 1 == count { days } else { t0 + h };
        // Outputs strictly inside this step: Hermite interpolation.
        let mut slope1 = None;
        while next < n && (next as f64 * step) < end - 1e-9 {
            let f1 = *slope1.get_or_insert_with(|| {
                let mut d = State::zeros();
                f(&y1, &mut d);
                d
            });
            let t = next as f64 * step;
            let s = (t - t0) / h;
            let (s2, s3) = (s * s, s * s * s);
            let h00 = 2.0 * s3 - 3.0 * s2 + 1.0;
            let h10 = s3 - 2.0 * s2 + s;
            let h01 = -2.0 * s3 + 3.0 * s2;
            let h11 = s3 - s2;
            times.push(t);
            states.push(y * h00 + k1 * (h10 * h) + y1 * h01 + f1 * (h11 * h));
            next += 1;
        }
        // An output on the step's end: the RK4 state itself.
        if next <= n && ((next as f64 * step) - end).abs() <= 1e-9 {
            times.push(if next == n { days } else { next as f64 * step });
            states.push(y1);
            next += 1;
        }
        y = y1;
    }
    debug_assert_eq!(states.len(), n + 1);
    Ok(Samples { times, states })
}
