//! Synthetic participants drawn from the study's `[synthetic]` population, each from
//! its own random stream derived from (seed, participant index), so a participant is
//! the same whatever the number of participants drawn after it or of threads.
//!
//! Mass follows from the drawn height and BMI: `M = BMI * (h/100)^2`.

use super::{Population, Study};
use crate::error::Error;
use crate::model::{Sex, Subject};
use crate::plan::Participant;
use rand::rngs::ChaCha8Rng;
use rand::{RngExt, SeedableRng};

/// The random stream of synthetic participant `index` (0-based) for `seed`.
pub fn participant_rng(seed: u64, index: u64) -> ChaCha8Rng {
    let mut r = ChaCha8Rng::seed_from_u64(seed);
    r.set_stream(index);
    r
}

/// The code of synthetic participant `index` (0-based): `SYN-0001`, ...
pub fn synthetic_id(index: usize) -> String {
    format!("SYN-{:04}", index + 1)
}

/// Draw `n` participants from the study's population with `seed`.
pub fn draw(study: &Study, n: usize, seed: u64) -> Result<Vec<Participant>, Error> {
    let Some(pop) = &study.population else {
        return Err(Error::Usage(format!(
            "{} has no [synthetic] table describing the population to draw from; add one",
            study.source_name
        )));
    };
    (0..n)
        .map(|i| {
            let subject = draw_one(pop, &mut participant_rng(seed, i as u64));
            let id = synthetic_id(i);
            super::roster::check_calibrates(&subject, study).map_err(|(col, msg)| {
                Error::Usage(format!(
                    "drawn participant {id} (seed {seed}) cannot be simulated: {msg} (drawn {col}); narrow the [synthetic] distributions"
                ))
            })?;
            Ok(Participant {
                id,
                subject,
                screening: None,
                fitness: None,
            })
        })
        .collect()
}

/// One participant, the draws always in the same order: sex, age, height, BMI, body
/// fat, PAL.
fn draw_one(pop: &Population, rng: &mut ChaCha8Rng) -> Subject {
    let u: f64 = rng.random();
    let sex = if u < pop.female_fraction {
        Sex::Female
    } else {
        Sex::Male
    };
    let age_years = pop.age_years.sample(rng);
    let height_cm = match sex {
        Sex::Female => pop.height_cm_female.sample(rng),
        Sex::Male => pop.height_cm_male.sample(rng),
    };
    let bmi = pop.bmi.sample(rng);
    let body_fat_percent = pop.body_fat_percent.map(|d| d.sample(rng));
    let pal = pop.pal.map(|d| d.sample(rng));
    let h = height_cm / 100.0;
    Subject {
        sex,
        age_years,
        height_cm,
        mass_kg: (bmi * h * h).clamp(30.0, 350.0),
        body_fat_percent,
        rmr_kcal_per_day: None,
        intake_kcal_per_day: None,
        pal,
    }
}
