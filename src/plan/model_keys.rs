//! The plan's `[activity]`, `[model]` and `[[scenario]]` tables.

use super::fields::{Cx, fmt_num};
use super::raw::*;
use super::*;
use crate::activity::acsm::{CYCLING_WATTS, RUNNING_KMH, WALKING_KMH};
use crate::activity::{Activity, Intensity, compendium};
use crate::error::Error;
use crate::model::{Compensation, Constants, RestForNet, RmrEquation};
use std::ops::Range;

impl Cx<'_> {
    pub(crate) fn gait(
        &self,
        g: &S<RawGait>,
        key: &str,
        lo: f64,
        hi: f64,
    ) -> Result<(f64, f64), Error> {
        let r = g.get_ref();
        let speed = self.number(
            self.required(
                &r.speed_kmh,
                &g.span(),
                key,
                "speed_kmh",
                &format!("allowed {} to {} km/h", fmt_num(lo), fmt_num(hi)),
            )?,
            &format!("{key}.speed_kmh"),
            lo,
            hi,
            " km/h",
        )?;
        let grade = self
            .opt_number(
                &r.grade_percent,
                &format!("{key}.grade_percent"),
                0.0,
                40.0,
                " %",
            )?
            .unwrap_or(0.0);
        Ok((speed, grade))
    }

    pub(crate) fn activity(
        &self,
        a: &RawActivity,
        span: Range<usize>,
        tn: &str,
        fitness: Option<&Fitness>,
    ) -> Result<Activity, Error> {
        let mut given: Vec<(Range<usize>, &str)> = Vec::new();
        if let Some(v) = &a.compendium_code {
            given.push((v.span(), "compendium_code"));
        }
        if let Some(v) = &a.met {
            given.push((v.span(), "met"));
        }
        if let Some(v) = &a.walking {
            given.push((v.span(), "walking"));
        }
        if let Some(v) = &a.running {
            given.push((v.span(), "running"));
        }
        if let Some(v) = &a.cycling_watts {
            given.push((v.span(), "cycling_watts"));
        }
        if let Some(v) = &a.vo2_reserve_percent {
            given.push((v.span(), "vo2_reserve_percent"));
        }
        given.sort_by_key(|(s, _)| s.start);
        match given.as_slice() {
            [] => return Err(self.err(&span, tn, "no intensity; give exactly one of compendium_code, met, walking, running, cycling_watts, vo2_reserve_percent")),
            [_] => {}
            [_, second, ..] => {
                let names: Vec<&str> = given.iter().map(|(_, k)| *k).collect();
                return Err(self.err(&second.0, &format!("{tn}.{}", second.1), format!("two ways of giving the intensity ({}); give exactly one", names.join(", "))));
            }
        }
        let (intensity, default_label) = if let Some(c) = &a.compendium_code {
            let code = match c.get_ref() {
                RawCode::Text(s) => s.trim().to_string(),
                RawCode::Integer(i) => return Err(self.err(&c.span(), &format!("{tn}.compendium_code"), format!("value {i} is a number; compendium codes are strings with leading zeros, write compendium_code = \"{i:05}\""))),
                RawCode::Float(f) => return Err(self.err(&c.span(), &format!("{tn}.compendium_code"), format!("value {f} is a number; compendium codes are five-digit strings such as \"02010\""))),
            };
            let e = compendium::lookup(&code).ok_or_else(|| self.err(&c.span(), &format!("{tn}.compendium_code"), format!("unknown code \"{code}\"; the built-in table holds {} codes of the 2011 Compendium (list them with `dosewright activities`), or give met = ... instead", compendium::table().len())))?;
            (
                Intensity::Compendium {
                    code: e.code.clone(),
                    met: e.met,
                    version: e.version,
                },
                e.label.clone(),
            )
        } else if let Some(m) = &a.met {
            let met = self.number_above(m, &format!("{tn}.met"), 1.0, 25.0, " MET")?;
            (Intensity::Met { met }, format!("activity at {met} MET"))
        } else if let Some(g) = &a.walking {
            let (speed_kmh, grade_percent) =
                self.gait(g, &format!("{tn}.walking"), WALKING_KMH.0, WALKING_KMH.1)?;
            (
                Intensity::Walking {
                    speed_kmh,
                    grade_percent,
                },
                format!("walking {speed_kmh} km/h, {grade_percent}% grade"),
            )
        } else if let Some(g) = &a.running {
            let (speed_kmh, grade_percent) =
                self.gait(g, &format!("{tn}.running"), RUNNING_KMH.0, RUNNING_KMH.1)?;
            (
                Intensity::Running {
                    speed_kmh,
                    grade_percent,
                },
                format!("running {speed_kmh} km/h, {grade_percent}% grade"),
            )
        } else if let Some(w) = &a.cycling_watts {
            let watts = self.number(
                w,
                &format!("{tn}.cycling_watts"),
                CYCLING_WATTS.0,
                CYCLING_WATTS.1,
                " W",
            )?;
            (
                Intensity::CyclingWatts { watts },
                format!("cycle ergometer {watts} W"),
            )
        } else if let Some(v) = &a.vo2_reserve_percent {
            let key = format!("{tn}.vo2_reserve_percent");
            let percent = self.number(v, &key, 20.0, 95.0, " %")?;
            let Some(vo2peak_l_min) = fitness.and_then(|f| f.vo2peak_l_min) else {
                return Err(self.err(&v.span(), &key, "needs the peak oxygen uptake: give [participant.fitness] vo2peak_ml_kg_min (with vo2peak_test_mass_kg) or vo2peak_l_min"));
            };
            (
                Intensity::Vo2Reserve {
                    percent,
                    vo2peak_l_min,
                },
                format!("{percent}% of VO2 reserve"),
            )
        } else {
            unreachable!("one intensity was counted above")
        };
        let label = match &a.label {
            Some(l) if l.get_ref().trim().is_empty() => {
                return Err(self.err(
                    &l.span(),
                    &format!("{tn}.label"),
                    "empty; leave the key out to use the activity's own label",
                ));
            }
            Some(l) => l.get_ref().trim().to_string(),
            None => default_label,
        };
        Ok(Activity { intensity, label })
    }

    pub(crate) fn constants(&self, rm: Option<&S<RawModel>>) -> Result<Constants, Error> {
        let mut c = Constants::default();
        let Some(rm) = rm else { return Ok(c) };
        let m = rm.get_ref();
        if let Some(v) = &m.rmr_equation {
            let opts: Vec<(&str, RmrEquation)> =
                RmrEquation::ALL.iter().map(|(e, n)| (*n, *e)).collect();
            c.rmr_equation = self.choice(v, "model.rmr_equation", &opts)?;
        }
        if let Some(v) = &m.rest_for_net {
            c.rest_for_net = self.choice(
                v,
                "model.rest_for_net",
                &[
                    ("own-rmr", RestForNet::OwnRmr),
                    ("one-met", RestForNet::OneMet),
                ],
            )?;
        }
        if let Some(v) = &m.tef_fraction {
            c.tef_fraction = self.number(v, "model.tef_fraction", 0.0, 0.25, "")?;
        }
        if let Some(v) = &m.fat_kcal_per_kg {
            c.fat_kcal_per_kg =
                self.number(v, "model.fat_kcal_per_kg", 8000.0, 10000.0, " kcal/kg")?;
        }
        if let Some(v) = &m.lean_kcal_per_kg {
            c.lean_kcal_per_kg =
                self.number(v, "model.lean_kcal_per_kg", 700.0, 2000.0, " kcal/kg")?;
        }
        if let Some(v) = &m.forbes_constant_kg {
            c.forbes_constant_kg = self.number(v, "model.forbes_constant_kg", 5.0, 20.0, " kg")?;
        }
        Ok(c)
    }

    /// A scenario's name: required, non-empty, not used by an earlier scenario.
    pub(crate) fn scenario_name<'v>(
        &self,
        name: &'v Option<S<String>>,
        table: &Range<usize>,
        tn: &str,
        earlier: &[Scenario],
    ) -> Result<&'v str, Error> {
        let name = self.required(
            name,
            table,
            tn,
            "name",
            "every scenario needs a unique, non-empty name",
        )?;
        let n = name.get_ref().trim();
        if n.is_empty() {
            return Err(self.err(
                &name.span(),
                &format!("{tn}.name"),
                "empty; every scenario needs a unique, non-empty name",
            ));
        }
        if earlier.iter().any(|o| o.name == n) {
            return Err(self.err(
                &name.span(),
                &format!("{tn}.name"),
                format!("\"{n}\" is used by an earlier scenario; names must be unique"),
            ));
        }
        Ok(n)
    }

    pub(crate) fn scenarios(&self, rs: Option<&[S<RawScenario>]>) -> Result<Vec<Scenario>, Error> {
        let Some(rs) = rs.filter(|r| !r.is_empty()) else {
            return Ok(vec![Scenario {
                name: "as prescribed".to_string(),
                compensation: Compensation::default(),
            }]);
        };
        let mut out: Vec<Scenario> = Vec::new();
        for (i, r) in rs.iter().enumerate() {
            let s = r.get_ref();
            let tn = format!("scenario[{}]", i + 1);
            let n = self.scenario_name(&s.name, &r.span(), &tn, &out)?;
            let k = |key: &str| format!("{tn}.{key}");
            let value = |v: &Option<Num>, key: &str| -> Result<f64, Error> {
                let (lo, hi, unit) = scenario_range(key);
                Ok(self.opt_number(v, &k(key), lo, hi, unit)?.unwrap_or(0.0))
            };
            let compensation = Compensation {
                intake_fraction: value(&s.intake_fraction, "intake_fraction")?,
                intake_lag_days: value(&s.intake_lag_days, "intake_lag_days")?,
                activity_fraction: value(&s.activity_fraction, "activity_fraction")?,
                rmr_adaptation_kcal_per_kg: value(
                    &s.rmr_adaptation_kcal_per_kg,
                    "rmr_adaptation_kcal_per_kg",
                )?,
                diet_change_kcal_per_day: value(
                    &s.diet_change_kcal_per_day,
                    "diet_change_kcal_per_day",
                )?,
            };
            out.push(Scenario {
                name: n.to_string(),
                compensation,
            });
        }
        Ok(out)
    }
}
