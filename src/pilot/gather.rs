//! A pilot's participants read from a register: their plan (sex, age, height,
//! arm, protocol dates, stated intake, `[model]` constants, screening answers),
//! their current measurements, and their delivered sessions' net energy by the
//! dose rule. The screening result is the plan's answers through the one
//! screening function ([`crate::safety::screen`]), vigorous when a delivered
//! session reached [`VIGOROUS_MET`].

use super::{Body, Delivered, PilotParticipant, import::assemble};
use crate::activity::compendium;
use crate::error::Error;
use crate::log::Entry;
use crate::model::energy::calibrate;
use crate::model::{Compensation, Physiology};
use crate::plan::Plan;
use crate::register::{Measurement, SqliteStore, Store, Which, participant_log};
use crate::safety::screen;
use crate::safety::screening::VIGOROUS_MET;
use chrono::NaiveDate;

/// Fat and fat-free mass at `date`, linear between the visits, held before the
/// first and after the last.
pub fn composition_at(visits: &[(NaiveDate, f64, f64)], date: NaiveDate) -> (f64, f64) {
    let first = visits[0];
    let last = visits[visits.len() - 1];
    if date <= first.0 {
        return (first.1, first.2);
    }
    if date >= last.0 {
        return (last.1, last.2);
    }
    for w in visits.windows(2) {
        if date >= w[0].0 && date <= w[1].0 {
            let span = (w[1].0 - w[0].0).num_days() as f64;
            let x = (date - w[0].0).num_days() as f64 / span;
            return (
                w[0].1 + x * (w[1].1 - w[0].1),
                w[0].2 + x * (w[1].2 - w[0].2),
            );
        }
    }
    (last.1, last.2)
}

/// Net energy of one session by the dose rule
/// ([`Physiology::net_kcal_per_min`], MODEL.md 4) at the body's state that day:
/// `minutes` at `met`, with the mass and the RMR (the equation, scaled by the
/// plan's measured RMR, without adaptation) of the composition at that date.
pub fn session_net_kcal(ph: &Physiology, minutes: f64, met: f64, fat: f64, lean: f64) -> f64 {
    let rmr = ph.rmr(&Compensation::default(), fat, lean);
    minutes * ph.net_kcal_per_min(met, fat + lean, rmr)
}

/// Read every enrolled participant with at least one body-composition row.
pub fn from_register(store: &SqliteStore) -> Result<Vec<PilotParticipant>, Error> {
    let mut out = Vec::new();
    let name = store.name().to_string();
    for person in store.participants()? {
        let rows = store.measurements(Some(&person.code), Which::Current)?;
        if !rows.iter().any(|r| r.measurement.kind() == "composition") {
            continue;
        }
        let plan: Plan = person.plan()?;
        let s = &plan.participant.subject;
        let (_, ph) = calibrate(s, &plan.constants).map_err(|e| {
            Error::Internal(format!(
                "{}: the baseline cannot be calibrated: {e:?}",
                plan.source_name
            ))
        })?;
        let visits: Vec<(NaiveDate, f64, f64)> = rows
            .iter()
            .filter_map(|r| match r.measurement {
                Measurement::Composition {
                    date,
                    fat_kg,
                    fat_free_kg,
                    ..
                } => Some((date, fat_kg, fat_free_kg)),
                _ => None,
            })
            .collect();
        let log = participant_log(store, &person.code, None)?;
        let mut sessions = Vec::new();
        let mut vigorous = false;
        for row in &log.log.rows {
            if let Entry::Session {
                minutes,
                compendium_code,
                met,
                ..
            } = &row.entry
            {
                let (fat, lean) = composition_at(&visits, row.date);
                let met = met
                    .or_else(|| {
                        compendium_code
                            .as_deref()
                            .and_then(compendium::lookup)
                            .map(|e| e.met)
                    })
                    .unwrap_or_else(|| plan.activity.intensity.met_at(fat + lean));
                vigorous |= met >= VIGOROUS_MET;
                sessions.push(Delivered {
                    date: row.date,
                    net_kcal: session_net_kcal(&ph, *minutes, met, fat, lean),
                });
            }
        }
        let located: Vec<_> = rows
            .iter()
            .map(|r| (r.measurement.clone(), r.location(&name)))
            .collect();
        let mut p = assemble(
            &person.code,
            person.arm.as_deref().unwrap_or("(no arm)"),
            Body {
                sex: s.sex,
                age_years: s.age_years,
                height_cm: s.height_cm,
            },
            &located,
            sessions,
            Some((plan.protocol.start, plan.protocol.end_date())),
        );
        p.baseline_intake = s.intake_kcal_per_day.map(|ei| (ei, None));
        p.constants = Some(plan.constants);
        p.screening = Some(screen(plan.participant.screening.as_ref(), vigorous));
        out.push(p);
    }
    Ok(out)
}
