//! Energy balance: calibration, expenditure and the fluxes of the ODE right-hand side
//! (itself, with `Physiology::fluxes`, in the `balance` module).
//!
//! `rho_F dF/dt + rho_L dL/dt = EI - EE`, `EE = RMR + TEF + AE + X`, partitioned along
//! the Forbes curve: `dF/dt = (EI - EE) / (rho_F + rho_L c_F / F)`, `dL/dt = (c_F / F) dF/dt`.
//! `TEF = beta EI`, `AE = delta M - c_A X`, `EI = EI0 + diet + c_I Xbar`,
//! `dXbar/dt = (X - Xbar) / tau_I`, `RMR = k_R RMR_eq(M, L) - a_R max(0, M0 - M)`.
//!
//! Reference: docs/model.md sections 2, 3 and 5; Forbes GB 1987, Nutr Rev 45:225.

use crate::activity::Intensity;
use crate::activity::acsm::{ML_O2_PER_MET, gross_kcal_per_min};
use crate::model::composition::{bmi, deurenberg_percent_fat};
use crate::model::rmr::{RmrEquation, Sex};
use serde::Serialize;

/// Minutes in a day.
pub const MINUTES_PER_DAY: f64 = 1440.0;

/// Which resting rate exercise energy is counted above (docs/model.md section 4).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum RestForNet {
    /// Above the participant's own RMR (default).
    OwnRmr,
    /// Above one standard MET, 3.5 ml/kg/min.
    OneMet,
}

/// The model's constants (docs/model.md; every one a plan may override).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Constants {
    /// RMR equation.
    pub rmr_equation: RmrEquation,
    /// What "net" exercise energy is above.
    pub rest_for_net: RestForNet,
    /// Thermic effect of food, fraction of intake (0.10: common practice).
    pub tef_fraction: f64,
    /// Energy density of fat mass, kcal/kg (9500: common practice).
    pub fat_kcal_per_kg: f64,
    /// Energy density of fat-free mass, kcal/kg (1020: common practice).
    pub lean_kcal_per_kg: f64,
    /// Forbes constant, kg (10.4; Forbes 1987, Nutr Rev 45:225).
    pub forbes_constant_kg: f64,
}

impl Default for Constants {
    fn default() -> Self {
        Constants {
            rmr_equation: RmrEquation::MifflinStJeor,
            rest_for_net: RestForNet::OwnRmr,
            tef_fraction: 0.10,
            fat_kcal_per_kg: 9500.0,
            lean_kcal_per_kg: 1020.0,
            forbes_constant_kg: 10.4,
        }
    }
}

/// The participant as the model needs them at baseline.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Subject {
    /// Sex.
    pub sex: Sex,
    /// Age at baseline, years (held constant).
    pub age_years: f64,
    /// Height, cm.
    pub height_cm: f64,
    /// Body mass at baseline, kg.
    pub mass_kg: f64,
    /// Measured body fat, percent.
    pub body_fat_percent: Option<f64>,
    /// Measured RMR, kcal/day.
    pub rmr_kcal_per_day: Option<f64>,
    /// Measured intake, kcal/day.
    pub intake_kcal_per_day: Option<f64>,
    /// Non-exercise physical activity level.
    pub pal: Option<f64>,
}

/// The stated compensation assumptions of one scenario (docs/model.md section 5).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize)]
pub struct Compensation {
    /// `c_I`: share of exercise energy eaten back.
    pub intake_fraction: f64,
    /// `tau_I`: lag of that intake, days.
    pub intake_lag_days: f64,
    /// `c_A`: share of exercise energy lost from other activity.
    pub activity_fraction: f64,
    /// `a_R`: RMR fall per kg lost, kcal/day per kg.
    pub rmr_adaptation_kcal_per_kg: f64,
    /// Planned change of intake, kcal/day.
    pub diet_change_kcal_per_day: f64,
}

/// The participant's baseline, calibrated (docs/model.md section 3).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Baseline {
    /// Body mass, kg.
    pub mass_kg: f64,
    /// Fat mass, kg.
    pub fat_mass_kg: f64,
    /// Fat-free mass, kg.
    pub fat_free_mass_kg: f64,
    /// True when fat mass was estimated from BMI (Deurenberg), not measured.
    pub fat_mass_estimated: bool,
    /// Body fat, percent (measured or estimated).
    pub body_fat_percent: f64,
    /// BMI, kg/m^2.
    pub bmi: f64,
    /// RMR at baseline, kcal/day (`k_R` times the equation).
    pub rmr_kcal_per_day: f64,
    /// The equation's own value at baseline, kcal/day.
    pub rmr_equation_kcal_per_day: f64,
    /// Personal factor `k_R` from a measured RMR (1 when none).
    pub rmr_factor: f64,
    /// Intake at baseline, kcal/day.
    pub intake_kcal_per_day: f64,
    /// Whether the intake was measured (else taken as energy balance).
    pub intake_measured: bool,
    /// Total daily expenditure at baseline, kcal/day.
    pub tdee_kcal_per_day: f64,
    /// Physical activity level, TDEE / RMR.
    pub pal: f64,
    /// Where the PAL came from: "plan", "intake" or "default".
    pub pal_source: &'static str,
    /// Non-exercise activity energy, kcal/day.
    pub activity_kcal_per_day: f64,
    /// Intake minus expenditure before any exercise, kcal/day (non-zero only when
    /// intake and PAL are both given and disagree).
    pub drift_kcal_per_day: f64,
}

/// Why a baseline cannot be calibrated.
#[derive(Debug, Clone, PartialEq)]
pub enum CalibrationError {
    /// `AE0 = TDEE0 - RMR0 - beta EI0 <= 0`: the PAL is too low for the TEF.
    PalTooLow {
        /// The non-exercise activity energy that came out, kcal/day.
        activity_kcal_per_day: f64,
        /// The PAL used.
        pal: f64,
        /// Smallest PAL that leaves positive activity energy.
        minimum_pal: f64,
    },
    /// The estimated body fat lies outside 3-70 %.
    EstimatedFatOutOfRange(f64),
}

/// Everything fixed for a participant after calibration; with a body state it gives
/// every energy flux.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Physiology {
    /// Sex.
    pub sex: Sex,
    /// Age, years.
    pub age_years: f64,
    /// Height, cm.
    pub height_cm: f64,
    /// Constants.
    pub constants: Constants,
    /// `k_R`.
    pub rmr_factor: f64,
    /// `delta`, non-exercise activity energy per kg of body mass, kcal/kg/day.
    pub activity_kcal_per_kg_day: f64,
    /// `EI0`, kcal/day.
    pub intake_kcal_per_day: f64,
    /// `M0`, kg.
    pub mass0_kg: f64,
}

/// One bout of exercise in the current week.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Bout {
    /// Minutes of the bout.
    pub minutes: f64,
    /// Its intensity.
    pub intensity: Intensity,
}

/// The body's state: fat mass, fat-free mass and the lagged exercise energy.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct BodyState {
    /// Fat mass, kg.
    pub fat_kg: f64,
    /// Fat-free mass, kg.
    pub lean_kg: f64,
    /// `Xbar`, lagged exercise energy, kcal/day.
    pub lagged_exercise_kcal_per_day: f64,
}

impl BodyState {
    /// Body mass, kg.
    pub fn mass_kg(&self) -> f64 {
        self.fat_kg + self.lean_kg
    }
}

/// Every term of the energy balance at one state, kcal/day (derivatives per day).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Fluxes {
    /// RMR.
    pub rmr: f64,
    /// Thermic effect of food.
    pub tef: f64,
    /// Non-exercise activity.
    pub activity: f64,
    /// Exercise energy above rest, `X`.
    pub exercise: f64,
    /// Intake.
    pub intake: f64,
    /// Expenditure `RMR + TEF + AE + X`.
    pub expenditure: f64,
    /// Smallest per-minute net energy of this week's bouts, kcal/min (infinite with none).
    pub min_net_kcal_per_min: f64,
    /// dF/dt, kg/day.
    pub dfat: f64,
    /// dL/dt, kg/day.
    pub dlean: f64,
    /// dXbar/dt, kcal/day per day.
    pub dlagged: f64,
}

/// Calibrate the baseline (docs/model.md section 3, steps 1-5).
pub fn calibrate(
    subject: &Subject,
    constants: &Constants,
) -> Result<(Baseline, Physiology), CalibrationError> {
    let m0 = subject.mass_kg;
    let b = bmi(m0, subject.height_cm);
    let (pct, estimated) = match subject.body_fat_percent {
        Some(p) => (p, false),
        None => {
            let p = deurenberg_percent_fat(b, subject.age_years, subject.sex);
            if !(3.0..=70.0).contains(&p) {
                return Err(CalibrationError::EstimatedFatOutOfRange(p));
            }
            (p, true)
        }
    };
    let f0 = m0 * pct / 100.0;
    let l0 = m0 - f0;
    let eq0 = constants.rmr_equation.kcal_per_day(
        subject.sex,
        m0,
        l0,
        subject.height_cm,
        subject.age_years,
    );
    let rmr_factor = subject.rmr_kcal_per_day.map_or(1.0, |r| r / eq0);
    let rmr0 = rmr_factor * eq0;
    let (tdee0, pal_source) = match (subject.pal, subject.intake_kcal_per_day) {
        (Some(pal), _) => (pal * rmr0, "plan"),
        (None, Some(ei)) => (ei, "intake"),
        (None, None) => (1.5 * rmr0, "default"),
    };
    let ei0 = subject.intake_kcal_per_day.unwrap_or(tdee0);
    let ae0 = tdee0 - rmr0 - constants.tef_fraction * ei0;
    let pal = tdee0 / rmr0;
    if ae0 <= 0.0 {
        return Err(CalibrationError::PalTooLow {
            activity_kcal_per_day: ae0,
            pal,
            minimum_pal: (rmr0 + constants.tef_fraction * ei0) / rmr0,
        });
    }
    let baseline = Baseline {
        mass_kg: m0,
        fat_mass_kg: f0,
        fat_free_mass_kg: l0,
        fat_mass_estimated: estimated,
        body_fat_percent: pct,
        bmi: b,
        rmr_kcal_per_day: rmr0,
        rmr_equation_kcal_per_day: eq0,
        rmr_factor,
        intake_kcal_per_day: ei0,
        intake_measured: subject.intake_kcal_per_day.is_some(),
        tdee_kcal_per_day: tdee0,
        pal,
        pal_source,
        activity_kcal_per_day: ae0,
        drift_kcal_per_day: ei0 - tdee0,
    };
    let physiology = Physiology {
        sex: subject.sex,
        age_years: subject.age_years,
        height_cm: subject.height_cm,
        constants: *constants,
        rmr_factor,
        activity_kcal_per_kg_day: ae0 / m0,
        intake_kcal_per_day: ei0,
        mass0_kg: m0,
    };
    Ok((baseline, physiology))
}

impl Physiology {
    /// RMR at a state, kcal/day, including adaptation.
    pub fn rmr(&self, comp: &Compensation, fat_kg: f64, lean_kg: f64) -> f64 {
        let m = fat_kg + lean_kg;
        let eq = self.constants.rmr_equation.kcal_per_day(
            self.sex,
            m,
            lean_kg,
            self.height_cm,
            self.age_years,
        );
        self.rmr_factor * eq - comp.rmr_adaptation_kcal_per_kg * (self.mass0_kg - m).max(0.0)
    }

    /// Energy per minute of exercise at `met` above the chosen rest, kcal/min.
    pub fn net_kcal_per_min(&self, met: f64, mass_kg: f64, rmr_kcal_per_day: f64) -> f64 {
        let gross = gross_kcal_per_min(met, mass_kg);
        match self.constants.rest_for_net {
            RestForNet::OwnRmr => gross - rmr_kcal_per_day / MINUTES_PER_DAY,
            RestForNet::OneMet => gross - ML_O2_PER_MET * mass_kg / 200.0,
        }
    }

    /// Relative ("corrected") intensity: the activity's gross cost in multiples of the
    /// participant's own resting rate (docs/model.md section 4).
    pub fn relative_intensity(&self, met: f64, mass_kg: f64, rmr_kcal_per_day: f64) -> f64 {
        gross_kcal_per_min(met, mass_kg) / (rmr_kcal_per_day / MINUTES_PER_DAY)
    }

    /// Energy stored relative to a reference state, kcal: `rho_F dF + rho_L dL`.
    pub fn stored_energy_change(&self, from: &BodyState, to: &BodyState) -> f64 {
        self.constants.fat_kcal_per_kg * (to.fat_kg - from.fat_kg)
            + self.constants.lean_kcal_per_kg * (to.lean_kg - from.lean_kg)
    }
}
