//! The draws of a cohort member: the model's uncertain inputs and the compensation
//! drawn per draw, from its own random stream.

use super::*;

/// The random stream of draw `draw` of member `index` for `seed`, apart from the
/// streams that draw synthetic participants.
pub fn draw_rng(seed: u64, index: usize, draw: u32) -> ChaCha8Rng {
    let mut r = ChaCha8Rng::seed_from_u64(crate::simulate::splitmix64(seed ^ DRAW_DOMAIN));
    r.set_stream(((index as u64) << 32) | u64::from(draw));
    r
}

/// Mixed into the seed of draw streams, so they never coincide with the streams of
/// synthetic participants (an arbitrary odd constant).
const DRAW_DOMAIN: u64 = 0x5DEE_CE66_D1A4_F87D;

/// One draw of a member: the participant's measures with the RMR equation's error
/// and the estimated body fat's error drawn, each scenario's compensation drawn, the
/// attendance key and the last week with exercise (no copy of the participant's or
/// the scenarios' names). With no uncertainty it is the member itself, every draw
/// alike.
pub(super) struct Draw {
    pub(super) subject: crate::model::Subject,
    pub(super) compensations: Vec<crate::model::Compensation>,
    pub(super) attendance: Option<crate::simulate::Attendance>,
    pub(super) last_exercise_week: Option<u32>,
}

pub(super) fn draw(study: &Study, m: &Member, index: usize, d: u32, seed: u64) -> Draw {
    let mut subject = m.participant.subject.clone();
    let mut compensations: Vec<_> = study.scenarios.iter().map(|s| s.compensation).collect();
    let mut rng = draw_rng(seed, index, d);
    // The order of draws is fixed: scenarios, RMR, body fat, attendance, drop-out.
    for (comp, dists) in compensations.iter_mut().zip(&study.scenario_dists) {
        for ((key, ..), dist) in SCENARIO_KEYS.iter().zip(dists) {
            if let Some(dist) = dist {
                comp.set(key, dist.sample(&mut rng));
            }
        }
    }
    let Some(u) = study.uncertainty else {
        return Draw {
            subject,
            compensations,
            attendance: None,
            last_exercise_week: None,
        };
    };
    let s = &mut subject;
    let b = crate::model::composition::bmi(s.mass_kg, s.height_cm);
    if s.body_fat_percent.is_none() && u.body_fat_error_percent > 0.0 {
        let est = crate::model::composition::deurenberg_percent_fat(b, s.age_years, s.sex);
        let n = Normal::new(0.0, u.body_fat_error_percent).expect("validated SD");
        // Truncated to the plan's range of body fat (rejection).
        let bf = loop {
            let x = est + n.sample(&mut rng);
            if (3.0..=70.0).contains(&x) {
                break x;
            }
        };
        s.body_fat_percent = Some(bf);
    }
    if s.rmr_kcal_per_day.is_none() {
        let fat = s.mass_kg
            * s.body_fat_percent.unwrap_or_else(|| {
                crate::model::composition::deurenberg_percent_fat(b, s.age_years, s.sex)
            })
            / 100.0;
        let eq = study.constants.rmr_equation.kcal_per_day(
            s.sex,
            s.mass_kg,
            s.mass_kg - fat,
            s.height_cm,
            s.age_years,
        );
        let sd = match u.rmr_error {
            RmrError::Published => study.constants.rmr_equation.relative_error(s.sex, eq).0,
            RmrError::Sd(x) => x,
        };
        if sd > 0.0 {
            let n = Normal::new(1.0, sd).expect("validated SD");
            // A multiplicative normal factor held within +-3 SD (and above 0.5).
            let f = loop {
                let x = n.sample(&mut rng);
                if (x - 1.0).abs() <= 3.0 * sd && x > 0.5 {
                    break x;
                }
            };
            s.rmr_kcal_per_day = Some(eq * f);
        }
    }
    let key = rng.random::<u64>();
    let attendance = (u.attendance < 1.0).then_some(crate::simulate::Attendance {
        probability: u.attendance,
        key,
    });
    let weeks = study.protocol.weeks;
    let last_exercise_week = (u.dropout_per_week > 0.0)
        .then(|| {
            // The first week in which the weekly hazard strikes; exercise ends before it.
            (1..=weeks).find(|_| rng.random::<f64>() < u.dropout_per_week)
        })
        .flatten()
        .map(|w| w - 1);
    Draw {
        subject,
        compensations,
        attendance,
        last_exercise_week,
    }
}
