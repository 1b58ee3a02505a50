//! The plan's `[participant]`: the participant rules of [`super::participant`] placed
//! at their keys, the fitness measures and the screening answers.

use super::fields::{Cx, fmt_num};
use super::participant::{self, Field};
use super::raw::*;
use super::*;
use crate::error::Error;
use crate::model::Subject;

impl Cx<'_> {
    pub(crate) fn participant(
        &self,
        rp: &S<RawParticipant>,
    ) -> Result<(String, Subject, Option<Screening>, Option<Fitness>), Error> {
        let t = rp.span();
        let p = rp.get_ref();
        let tn = "participant";
        let id = self.required(
            &p.id,
            &t,
            tn,
            "id",
            "give a pseudonymous code such as \"R-104\" (never a name)",
        )?;
        if id.get_ref().trim().is_empty() {
            return Err(self.err(&id.span(), "participant.id", participant::EMPTY_ID));
        }
        let sex = self.choice(
            self.required(
                &p.sex,
                &t,
                tn,
                "sex",
                &format!("allowed {}", participant::sex_words()),
            )?,
            "participant.sex",
            &participant::SEXES,
        )?;
        let need = |v: &Option<Num>, f: Field| -> Result<f64, Error> {
            let v = self.required(v, &t, tn, f.key(), &f.allowed())?;
            self.field(v, f)
        };
        let age = need(&p.age_years, Field::Age)?;
        let height = need(&p.height_cm, Field::Height)?;
        let mass = need(&p.mass_kg, Field::Mass)?;
        if let Err(msg) = participant::check_bmi(mass, height) {
            let mv = p.mass_kg.as_ref().expect("the mass was given");
            return Err(self.err(&mv.span(), "participant.mass_kg", msg));
        }
        let opt = |v: &Option<Num>, f: Field| v.as_ref().map(|v| self.field(v, f)).transpose();
        let bf = opt(&p.body_fat_percent, Field::BodyFat)?;
        let rmr = opt(&p.rmr_kcal_per_day, Field::Rmr)?;
        let intake = opt(&p.intake_kcal_per_day, Field::Intake)?;
        let pal = opt(&p.pal, Field::Pal)?;
        let screening = p
            .screening
            .as_ref()
            .map(|s| self.screening(s))
            .transpose()?;
        let fitness = p
            .fitness
            .as_ref()
            .map(|f| self.fitness(f, mass, age))
            .transpose()?;
        Ok((
            id.get_ref().trim().to_string(),
            Subject {
                sex,
                age_years: age,
                height_cm: height,
                mass_kg: mass,
                body_fat_percent: bf,
                rmr_kcal_per_day: rmr,
                intake_kcal_per_day: intake,
                pal,
            },
            screening,
            fitness,
        ))
    }

    pub(crate) fn fitness(
        &self,
        rf: &S<RawFitness>,
        mass_kg: f64,
        age: f64,
    ) -> Result<Fitness, Error> {
        let f = rf.get_ref();
        let tn = "participant.fitness";
        let k = |key: &str| format!("{tn}.{key}");
        if let (Some(_), Some(b)) = (&f.vo2peak_ml_kg_min, &f.vo2peak_l_min) {
            return Err(self.err(
                &b.span(),
                &k("vo2peak_l_min"),
                "given with vo2peak_ml_kg_min; give the peak oxygen uptake one way only",
            ));
        }
        if let (None, Some(m)) = (&f.vo2peak_ml_kg_min, &f.vo2peak_test_mass_kg) {
            return Err(self.err(
                &m.span(),
                &k("vo2peak_test_mass_kg"),
                "given without vo2peak_ml_kg_min; it is the mass at the test that a relative VO2peak refers to",
            ));
        }
        let vo2peak_l_min = match (&f.vo2peak_ml_kg_min, &f.vo2peak_l_min) {
            (Some(v), _) => {
                let rel = self.number(v, &k("vo2peak_ml_kg_min"), 8.0, 90.0, " ml/kg/min")?;
                let at = self
                    .opt_number(
                        &f.vo2peak_test_mass_kg,
                        &k("vo2peak_test_mass_kg"),
                        30.0,
                        350.0,
                        " kg",
                    )?
                    .unwrap_or(mass_kg);
                Some(rel * at / 1000.0)
            }
            (None, Some(v)) => Some(self.number(v, &k("vo2peak_l_min"), 0.5, 7.0, " l/min")?),
            (None, None) => None,
        };
        if let Some(l) = vo2peak_l_min {
            let rel = l * 1000.0 / mass_kg;
            if rel <= 7.0 {
                let (span, key) = match (&f.vo2peak_ml_kg_min, &f.vo2peak_l_min) {
                    (Some(v), _) => (v.span(), k("vo2peak_ml_kg_min")),
                    (None, Some(v)) => (v.span(), k("vo2peak_l_min")),
                    (None, None) => (rf.span(), tn.to_string()),
                };
                return Err(self.err(&span, &key, format!("peak oxygen uptake {rel:.1} ml/kg/min at the plan's mass of {} kg is at most 2 MET (7 ml/kg/min), too low to prescribe from; check the value and its units", fmt_num(mass_kg))));
            }
        }
        let hr_rest_bpm =
            self.opt_number(&f.hr_rest_bpm, &k("hr_rest_bpm"), 30.0, 120.0, " beats/min")?;
        if let (Some(_), Some(b)) = (&f.hr_max_bpm, &f.hr_max_formula) {
            return Err(self.err(
                &b.span(),
                &k("hr_max_formula"),
                "given with hr_max_bpm; a measured maximum is used as it is, leave the formula out",
            ));
        }
        let hr_max = match (&f.hr_max_bpm, &f.hr_max_formula) {
            (Some(v), _) => HrMaxSource::Measured(self.number(
                v,
                &k("hr_max_bpm"),
                100.0,
                230.0,
                " beats/min",
            )?),
            (None, Some(v)) => self.choice(
                v,
                &k("hr_max_formula"),
                &[
                    ("tanaka", HrMaxSource::Tanaka),
                    ("220-age", HrMaxSource::TwoTwentyMinusAge),
                ],
            )?,
            (None, None) => HrMaxSource::Tanaka,
        };
        if let Some(rest) = hr_rest_bpm {
            let max = crate::activity::targets::hr_max(hr_max, age);
            if max - rest < 20.0 {
                let (span, key) = match (&f.hr_max_bpm, &f.hr_rest_bpm) {
                    (Some(v), _) => (v.span(), k("hr_max_bpm")),
                    (None, Some(v)) => (v.span(), k("hr_rest_bpm")),
                    (None, None) => (rf.span(), tn.to_string()),
                };
                return Err(self.err(&span, &key, format!("resting heart rate {} and maximum {max:.0} beats/min ({}) leave a reserve of {:.0} beats/min; allowed a reserve of at least 20", fmt_num(rest), hr_max.name(), max - rest)));
            }
        }
        Ok(Fitness {
            vo2peak_l_min,
            hr_rest_bpm,
            hr_max,
        })
    }

    pub(crate) fn screening(&self, rs: &S<RawScreening>) -> Result<Screening, Error> {
        let t = rs.span();
        let s = rs.get_ref();
        let tn = "participant.screening";
        let ans = |v: &Option<S<bool>>, key: &str| -> Result<bool, Error> {
            Ok(*self
                .required(v, &t, tn, key, "answer true or false (ACSM 2015 screening)")?
                .get_ref())
        };
        Ok(Screening {
            exercises_regularly: ans(&s.exercises_regularly, "exercises_regularly")?,
            known_disease: ans(&s.known_disease, "known_disease")?,
            signs_or_symptoms: ans(&s.signs_or_symptoms, "signs_or_symptoms")?,
            medical_clearance: s.medical_clearance.as_ref().is_some_and(|v| *v.get_ref()),
        })
    }
}
