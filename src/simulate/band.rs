//! The projection band: the mass trajectory re-run with the RMR equation's error and,
//! where fat mass was estimated, Deurenberg's error, to show how far a single
//! projection can sit from the truth for one person.
//!
//! Low and high runs: RMR scaled by `1 -/+ s` (s the equation's relative error, or
//! 10%), body fat `-/+ 4.1` percentage points (Deurenberg et al. 1991, Br J Nutr
//! 65:105, SEE of the adult equation). The band is the lowest and highest mass of
//! every combination at each week. It is a sensitivity band, not a confidence
//! interval: it leaves out compensation, adherence and measurement error.

use crate::error::Error;
use crate::model::composition::DEURENBERG_SEE_PERCENT;
use crate::model::energy::calibrate;
use crate::plan::Plan;
use crate::simulate::observed::Observed;
use crate::simulate::{Simulation, simulate_observed};
use serde::Serialize;

/// The low and high mass at the end of one week.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct BandWeek {
    /// Week.
    pub week: u32,
    /// Lowest mass of the variant runs, kg.
    pub mass_low_kg: f64,
    /// Highest mass, kg.
    pub mass_high_kg: f64,
}

/// One scenario's band.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScenarioBand {
    /// Scenario name.
    pub name: String,
    /// One entry per week (protocol then follow-up).
    pub weeks: Vec<BandWeek>,
}

/// The projection band of every scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Band {
    /// What went into the band, in words.
    pub sources: Vec<String>,
    /// What the band is and is not.
    pub meaning: String,
    /// Per scenario, in plan order.
    pub scenarios: Vec<ScenarioBand>,
}

/// Run the variants of `plan` and collect the band around `central`.
pub fn projection_band(
    plan: &Plan,
    central: &Simulation,
    observed: Option<&Observed>,
) -> Result<Band, Error> {
    let subject = &plan.participant.subject;
    let b = &central.baseline;
    let mut sources = Vec::new();
    let rmr_levels: Vec<Option<f64>> = if subject.rmr_kcal_per_day.is_some() {
        sources.push("RMR measured: no equation error applied".to_string());
        vec![None]
    } else {
        let (s, why) = plan
            .constants
            .rmr_equation
            .relative_error(subject.sex, b.rmr_equation_kcal_per_day);
        sources.push(format!(
            "RMR {} scaled by -/+{:.1}%: {why}",
            plan.constants.rmr_equation.name(),
            s * 100.0
        ));
        vec![
            Some(b.rmr_kcal_per_day * (1.0 - s)),
            Some(b.rmr_kcal_per_day * (1.0 + s)),
        ]
    };
    let fat_levels: Vec<Option<f64>> = if b.fat_mass_estimated {
        sources.push(format!(
            "body fat {:.1}% estimated from BMI, varied by -/+{DEURENBERG_SEE_PERCENT} percentage points (Deurenberg et al. 1991 SEE)",
            b.body_fat_percent
        ));
        vec![
            Some((b.body_fat_percent - DEURENBERG_SEE_PERCENT).max(3.0)),
            Some((b.body_fat_percent + DEURENBERG_SEE_PERCENT).min(70.0)),
        ]
    } else {
        sources.push("body fat measured: no estimation error applied".to_string());
        vec![None]
    };
    let mut scenarios: Vec<ScenarioBand> = central
        .scenarios
        .iter()
        .map(|s| ScenarioBand {
            name: s.name.clone(),
            weeks: s
                .weeks
                .iter()
                .map(|w| BandWeek {
                    week: w.week,
                    mass_low_kg: w.end.mass_kg,
                    mass_high_kg: w.end.mass_kg,
                })
                .collect(),
        })
        .collect();
    for rmr in &rmr_levels {
        for fat in &fat_levels {
            if rmr.is_none() && fat.is_none() {
                continue;
            }
            let mut variant = plan.clone();
            let v = &mut variant.participant.subject;
            if let Some(r) = rmr {
                // As if the RMR had been measured at the low or high value: the PAL
                // (or a measured intake) then calibrates the rest as for the plan.
                v.rmr_kcal_per_day = Some(*r);
            }
            if let Some(f) = fat {
                v.body_fat_percent = Some(*f);
            }
            // A variant whose calibration fails (e.g. a PAL too low for the TEF at the
            // low RMR) is left out rather than reported as the plan's error.
            if calibrate(v, &variant.constants).is_err() {
                continue;
            }
            let sim = match simulate_observed(&variant, observed) {
                Ok(sim) => sim,
                Err(Error::OutOfRange(e)) => {
                    sources.push(format!(
                        "one variant left the model's valid range on day {} and was left out",
                        e.day
                    ));
                    continue;
                }
                Err(e) => return Err(e),
            };
            for (band, run) in scenarios.iter_mut().zip(&sim.scenarios) {
                for (bw, w) in band.weeks.iter_mut().zip(&run.weeks) {
                    bw.mass_low_kg = bw.mass_low_kg.min(w.end.mass_kg);
                    bw.mass_high_kg = bw.mass_high_kg.max(w.end.mass_kg);
                }
            }
        }
    }
    Ok(Band {
        sources,
        meaning: "a sensitivity band for one person: the same plan re-run with the RMR equation's and the body-fat estimate's error; it is not a confidence interval and leaves out compensation, adherence and measurement error".to_string(),
        scenarios,
    })
}
