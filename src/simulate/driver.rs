//! The general driver: one scenario week by week -- re-prescribe the minutes from the
//! week's reference state, integrate the week (anchored to weigh-ins when observed),
//! check the model's valid range, and record the week.

use super::*;

/// The record of week `w` starting on `week_start` from its reference state, its
/// prescription (None in a week without exercise) and its end.
fn week_record(
    plan: &Plan,
    physiology: &Physiology,
    baseline: &Baseline,
    obs: Option<&Observed>,
    (w, week_start, reference): (u32, NaiveDate, &Reference),
    rx: Option<prescription::Prescription>,
    end: WeekEnd,
) -> WeekRecord {
    let (m_w, rmr_w) = (reference.mass_kg, reference.rmr_kcal_per_day);
    let start_day = 7 * (w - 1);
    let in_protocol = w <= plan.protocol.weeks;
    let sessions = session_records(plan, physiology, rx.as_ref(), m_w, rmr_w);
    let met_w = sessions
        .first()
        .map_or_else(|| plan.activity.intensity.met_at(m_w), |s| s.met);
    let measured = w == 1 || obs.is_some_and(|o| o.measured_near(start_day));
    let adherence = match (obs, &rx) {
        (Some(o), Some(r)) if start_day <= o.as_of_day => Some(adherence::week(
            plan,
            physiology,
            w,
            r,
            o,
            reference,
            baseline.mass_kg,
        )),
        _ => None,
    };
    WeekRecord {
        week: w,
        start: week_start,
        phase: if in_protocol {
            Phase::Protocol
        } else {
            Phase::FollowUp
        },
        reference_mass_kg: m_w,
        mass_source: if measured {
            MassSource::Measured
        } else {
            MassSource::Projected
        },
        reference_rmr_kcal_per_day: rmr_w,
        ramp_fraction: rx.as_ref().map_or(0.0, |r| r.ramp_fraction),
        minutes_per_session: rx.as_ref().map_or(0, |r| r.minutes_per_session),
        minutes_unrounded: rx.as_ref().map_or(0.0, |r| r.minutes_unrounded),
        sessions_per_week: rx
            .as_ref()
            .map_or(0, |r| (r.bouts.len() as u32) / r.bouts_per_session),
        bouts_per_session: rx.as_ref().map_or(0, |r| r.bouts_per_session),
        target_kcal_per_session: rx.as_ref().and_then(|r| r.target_kcal_per_session),
        met: if rx.is_some() { met_w } else { 0.0 },
        sessions,
        closed: rx.as_ref().map(|r| r.closed.clone()).unwrap_or_default(),
        make_up: rx.as_ref().and_then(|r| r.make_up.clone()),
        step_down: rx.as_ref().and_then(|r| r.step_down),
        over_max: rx.and_then(|r| r.over_max),
        adherence,
        end,
    }
}

/// A week's sessions must fit in a day.
fn check_session_length(
    plan: &Plan,
    scenario: &Scenario,
    r: &prescription::Prescription,
    w: u32,
    start_day: u32,
    body: &BodyState,
) -> Result<(), Error> {
    let per_day = r.minutes_per_session;
    if f64::from(per_day) >= crate::model::energy::MINUTES_PER_DAY {
        return Err(range_error(
            plan,
            scenario,
            start_day,
            body,
            format!(
                "week {w} needs sessions of {per_day} min, a whole day or more (a session must be shorter than 1440 min){}",
                if matches!(
                    plan.protocol.dose.amount,
                    crate::plan::DoseAmount::MinutesPerWeek(_)
                ) {
                    ""
                } else {
                    "; the activity is too light for the dose"
                }
            ),
        ));
    }
    Ok(())
}

/// The bouts to integrate in the week starting on day `start_day`: the prescribed
/// ones still to come (and delivered, with an attendance), and the logged ones.
fn week_bouts(
    plan: &Plan,
    rx: Option<&prescription::Prescription>,
    mode: &RunMode<'_>,
    start_day: u32,
) -> Vec<Bout> {
    let p = &plan.protocol;
    let obs = mode.observed;
    let as_of_day = obs.map(|o| o.as_of_day);
    let is_past =
        |date: &NaiveDate| as_of_day.is_some_and(|a| ((*date - p.start).num_days() as u32) <= a);
    let mut bouts: Vec<Bout> = rx
        .map(|r| {
            r.model_bouts(plan, |b| {
                !is_past(&b.date)
                    && mode.attendance.is_none_or(|a| {
                        a.delivered((b.date - p.start).num_days() as u32, b.bout.unwrap_or(1))
                    })
            })
        })
        .unwrap_or_default();
    if let (Some(o), true) = (obs, mode.exercise) {
        // A delivered session's minutes are its time at target; its warm-up and
        // cool-down are taken as done as planned.
        for s in o
            .sessions_in(start_day, start_day + 7)
            .filter(|s| s.minutes > 0.0)
        {
            bouts.extend(prescription::session_bouts(plan, s.minutes, &s.intensity));
        }
    }
    bouts
}

/// The week's open planned sessions, and the sessions (or bouts) delivered: those
/// logged on days up to the as-of date, and the planned ones still to come that the
/// attendance keeps. What [`prescription::Resumption::after_week`] is told.
fn week_delivery(
    plan: &Plan,
    rx: Option<&prescription::Prescription>,
    mode: &RunMode<'_>,
    start_day: u32,
) -> (u32, u32) {
    let Some(r) = rx else {
        return (0, 0);
    };
    let p = &plan.protocol;
    let planned = r.bouts.len() as u32 / r.bouts_per_session.max(1);
    let obs = mode.observed;
    let logged = obs.map_or(0, |o| {
        o.sessions_in(start_day, start_day + 7)
            .filter(|s| s.minutes > 0.0)
            .count() as u32
    });
    let to_come = r
        .bouts
        .iter()
        .filter(|b| {
            let day = (b.date - p.start).num_days() as u32;
            obs.is_none_or(|o| day > o.as_of_day)
                && mode
                    .attendance
                    .is_none_or(|a| a.delivered(day, b.bout.unwrap_or(1)))
        })
        .count() as u32;
    (planned, logged + to_come)
}

/// Integrate the week starting on day `start_day` from `y`, in segments split at
/// mid-week weigh-ins (anchoring the state to them), appending the daily states.
fn integrate_week(
    (plan, physiology, scenario): (&Plan, &Physiology, &Scenario),
    mode: &RunMode<'_>,
    bouts: &[Bout],
    start_day: u32,
    body: &BodyState,
    y: &mut State,
    daily: &mut Vec<State>,
) -> Result<(), Error> {
    let comp = &scenario.compensation;
    let obs = mode.observed;
    let anchors = |day: u32| -> Vec<&observed::WeighIn> {
        match (obs, mode.anchor) {
            (Some(o), true) => o.weigh_ins_on(day).collect(),
            _ => Vec::new(),
        }
    };
    // Integrate the week in segments split at mid-week weigh-ins.
    let mut cuts: Vec<u32> = match (obs, mode.anchor) {
        (Some(o), true) => o
            .weigh_ins
            .iter()
            .filter(|wi| wi.day > start_day && wi.day < start_day + 7 && wi.day <= o.as_of_day)
            .map(|wi| wi.day)
            .collect(),
        _ => Vec::new(),
    };
    cuts.dedup();
    cuts.push(start_day + 7);
    let mut from = start_day;
    if daily.is_empty() {
        daily.push(*y);
    }
    for cut in cuts {
        let len = f64::from(cut - from);
        let samples =
            integrate::integrate_with(mode.integrator, physiology, comp, bouts, *y, len, 1.0)
                .map_err(|(t, why)| {
                    let day = from + t.floor() as u32;
                    range_error(
                        plan,
                        scenario,
                        day,
                        body,
                        format!("the ODE solver failed: {why}"),
                    )
                })?;
        for (i, s) in samples.states.iter().enumerate() {
            check_state(plan, physiology, scenario, bouts, from + i as u32, s)?;
        }
        daily.extend(samples.states.iter().skip(1));
        *y = *samples.states.last().expect("dense output has points");
        if cut < start_day + 7 {
            for wi in anchors(cut) {
                *y = observed::anchor(y, wi, plan.constants.forbes_constant_kg);
            }
            *daily.last_mut().expect("a day was pushed") = *y;
        }
        from = cut;
    }
    Ok(())
}

/// The records of a week's prescribed sessions at the week's reference mass and RMR.
fn session_records(
    plan: &Plan,
    physiology: &Physiology,
    rx: Option<&prescription::Prescription>,
    m_w: f64,
    rmr_w: f64,
) -> Vec<SessionRecord> {
    let p = &plan.protocol;
    let easy: Vec<Bout> = prescription::easy_bouts(plan).collect();
    let easy_energy = |per_min: &dyn Fn(f64) -> f64| {
        easy.iter()
            .map(|b| b.minutes * per_min(b.intensity.met_at(m_w)))
            .fold(0.0, |a, b| a + b)
    };
    let gross = |met: f64| crate::activity::acsm::gross_kcal_per_min(met, m_w);
    let net = |met: f64| physiology.net_kcal_per_min(met, m_w, rmr_w);
    let (easy_gross, easy_net) = (easy_energy(&gross), easy_energy(&net));
    rx.map(|r| {
        r.bouts
            .iter()
            .map(|b| {
                let mins = f64::from(b.minutes);
                let activity = plan.activity_at(b.activity);
                let met = activity.intensity.met_at(m_w);
                let (gross_kcal, net_kcal) = if easy.is_empty() {
                    (mins * gross(met), mins * net(met))
                } else {
                    (mins * gross(met) + easy_gross, mins * net(met) + easy_net)
                };
                SessionRecord {
                    date: b.date,
                    weekday: weekday_name(b.date.weekday()),
                    minutes: b.minutes,
                    bout: b.bout,
                    met,
                    gross_kcal,
                    net_kcal,
                    relative_intensity: physiology.relative_intensity(met, m_w, rmr_w),
                    activity: activity.label.clone(),
                    activity_index: b.activity,
                    warm_up_minutes: p.warm_up.map_or(0, |e| e.minutes),
                    cool_down_minutes: p.cool_down.map_or(0, |e| e.minutes),
                    session_minutes: b.minutes + p.easy_minutes(),
                }
            })
            .collect()
    })
    .unwrap_or_default()
}

/// Run one scenario week by week; `exercise = false` gives the same scenario with no
/// exercise (the counterfactual `dose_share` needs), whose deficits are passed back in.
pub fn run(
    plan: &Plan,
    physiology: &Physiology,
    baseline: &Baseline,
    scenario: &Scenario,
    mode: RunMode<'_>,
    deficits_without: Option<&[f64]>,
) -> Result<RunOutput, Error> {
    let comp = &scenario.compensation;
    let p = &plan.protocol;
    let b0 = BodyState {
        fat_kg: baseline.fat_mass_kg,
        lean_kg: baseline.fat_free_mass_kg,
        lagged_exercise_kcal_per_day: 0.0,
    };
    let mut y: State = state_of(&b0, 0.0);
    let total = mode.weeks.min(p.total_weeks());
    let mut weeks = Vec::with_capacity(total as usize);
    let mut daily: Vec<State> = Vec::with_capacity(7 * total as usize + 1);
    let obs = mode.observed;
    let anchors = |day: u32| -> Vec<&observed::WeighIn> {
        match (obs, mode.anchor) {
            (Some(o), true) => o.weigh_ins_on(day).collect(),
            _ => Vec::new(),
        }
    };
    let mut resume = prescription::Resumption::default();
    for w in 1..=total {
        let start_day = 7 * (w - 1);
        let week_start = p.start + chrono::Days::new(u64::from(start_day));
        for wi in anchors(start_day) {
            y = observed::anchor(&y, wi, plan.constants.forbes_constant_kg);
            // The day's 00:00 state is the measured one.
            if let Some(last) = daily.last_mut() {
                *last = y;
            }
        }
        let body = body_of(&y);
        let m_w = body.mass_kg();
        let rmr_w = physiology.rmr(comp, body.fat_kg, body.lean_kg);
        let reference = Reference {
            mass_kg: m_w,
            rmr_kcal_per_day: rmr_w,
        };
        let in_protocol = w <= p.weeks;
        let exercising = in_protocol && mode.last_exercise_week.is_none_or(|last| w <= last);
        let rx = (mode.exercise && exercising).then(|| {
            let at = (w, week_start);
            prescribe_resumed(plan, physiology, at, baseline.mass_kg, &reference, resume)
        });
        if let Some(r) = &rx {
            check_session_length(plan, scenario, r, w, start_day, &body)?;
        }
        let bouts = week_bouts(plan, rx.as_ref(), &mode, start_day);
        let (planned, delivered) = week_delivery(plan, rx.as_ref(), &mode, start_day);
        resume.after_week(planned, delivered);
        let ctx = (plan, physiology, scenario);
        integrate_week(ctx, &mode, &bouts, start_day, &body, &mut y, &mut daily)?;
        if comp.intake_lag_days == 0.0 {
            // With no lag Xbar is X itself; keep the state in step for the next week.
            y[2] = physiology.fluxes(comp, &bouts, &body_of(&y)).exercise;
        }
        let end_body = body_of(&y);
        let flux_end = physiology.fluxes(comp, &bouts, &end_body);
        let deficit = -physiology.stored_energy_change(&b0, &end_body);
        let prescribed = y[3];
        let dose_share = match deficits_without {
            Some(d) if prescribed > 0.0 => (deficit - d[w as usize - 1]) / prescribed,
            _ => 0.0,
        };
        let end = WeekEnd {
            mass_kg: end_body.mass_kg(),
            fat_mass_kg: end_body.fat_kg,
            fat_free_mass_kg: end_body.lean_kg,
            rmr_kcal_per_day: flux_end.rmr,
            intake_kcal_per_day: flux_end.intake,
            prescribed_net_kcal: prescribed,
            achieved_deficit_kcal: deficit,
            dose_share,
        };
        let at = (w, week_start, &reference);
        weeks.push(week_record(plan, physiology, baseline, obs, at, rx, end));
    }
    Ok(RunOutput { weeks, daily })
}

fn range_error(
    plan: &Plan,
    scenario: &Scenario,
    day: u32,
    body: &BodyState,
    what: String,
) -> Error {
    Error::OutOfRange(RangeError {
        file: plan.source_name.clone(),
        scenario: scenario.name.clone(),
        day,
        date: plan.protocol.start + chrono::Days::new(u64::from(day)),
        what,
        fat_kg: body.fat_kg,
        lean_kg: body.lean_kg,
    })
}

/// docs/model.md section 6: fat mass below 2 kg, RMR, activity or exercise net energy at or below
/// zero, intake below zero, or any non-finite value is out of range.
fn check_state(
    plan: &Plan,
    physiology: &Physiology,
    scenario: &Scenario,
    bouts: &[Bout],
    day: u32,
    y: &State,
) -> Result<(), Error> {
    let body = body_of(y);
    let bad = |what: String| Err(range_error(plan, scenario, day, &body, what));
    if !y.iter().all(|v| v.is_finite()) {
        return bad("a state value is not finite".to_string());
    }
    if body.fat_kg < MIN_FAT_KG {
        return bad(format!(
            "fat mass {:.3} kg is below {MIN_FAT_KG} kg",
            body.fat_kg
        ));
    }
    // The model is calibrated for the bodies a plan may describe (docs/file-formats.md section 1: mass 30 to
    // 350 kg, BMI 13 to 80); below that its equations are far outside their data.
    let m = body.mass_kg();
    let b = crate::model::composition::bmi(m, physiology.height_cm);
    if m < MIN_MASS_KG || b < MIN_BMI {
        return bad(format!(
            "body mass {m:.1} kg (BMI {b:.1}) is below the model's range (mass {MIN_MASS_KG} kg, BMI {MIN_BMI} kg/m^2)"
        ));
    }
    let f = physiology.fluxes(&scenario.compensation, bouts, &body);
    let checks = [
        (f.rmr, "RMR (kcal/day)", "at or below zero"),
        (
            f.activity,
            "non-exercise activity energy",
            "at or below zero (activity compensation larger than all other movement)",
        ),
        (
            f.min_net_kcal_per_min,
            "exercise energy above rest per minute",
            "at or below zero (the activity no longer costs more than rest)",
        ),
    ];
    for (v, name, why) in checks {
        if !v.is_finite() && v != f64::INFINITY {
            return bad(format!("{name} is not finite"));
        }
        if v <= 0.0 {
            return bad(format!("{name} is {v:.2}, {why}"));
        }
    }
    if f.intake < 0.0 {
        return bad(format!("intake is {:.0} kcal/day, below zero", f.intake));
    }
    Ok(())
}
