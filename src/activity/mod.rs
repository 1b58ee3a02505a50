//! Activities and their intensity: the compendium table, a stated MET, or the ACSM
//! equations, each giving the MET at a body mass.
//!
//! Gross energy per minute is `MET * 3.5 * M / 200` kcal (ACSM's kcal/min formula).
//! Reference: Ainsworth et al. 2011, Med Sci Sports Exerc 43:1575; ACSM's Guidelines
//! for Exercise Testing and Prescription, 10th ed.

pub mod acsm;
pub mod compendium;
pub mod targets;

use serde::Serialize;

/// How a plan gives the intensity of its activity (validated).
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Intensity {
    /// A row of the built-in 2011 Compendium table.
    Compendium {
        /// Five-digit code.
        code: String,
        /// MET of the row.
        met: f64,
        /// Compendium version of the MET.
        version: u16,
    },
    /// A MET value stated in the plan.
    Met {
        /// The MET.
        met: f64,
    },
    /// Walking by the ACSM walking equation.
    Walking {
        /// Speed, km/h.
        speed_kmh: f64,
        /// Grade, percent.
        grade_percent: f64,
    },
    /// Running by the ACSM running equation.
    Running {
        /// Speed, km/h.
        speed_kmh: f64,
        /// Grade, percent.
        grade_percent: f64,
    },
    /// Cycle ergometer at a work rate, by the ACSM leg-cycling equation.
    CyclingWatts {
        /// Work rate, W.
        watts: f64,
    },
    /// A percentage of the VO2 reserve, with the absolute peak oxygen uptake held:
    /// `VO2 = pct (VO2peak - 3.5) + 3.5` ml/kg/min (ACSM GETP 10th ed.; Swain DP,
    /// Leutholtz BC 1997, Med Sci Sports Exerc 29:410), so the MET rises as mass falls.
    Vo2Reserve {
        /// Percent of the VO2 reserve.
        percent: f64,
        /// Peak oxygen uptake, l/min.
        vo2peak_l_min: f64,
    },
}

/// A validated activity: its intensity and the label shown on schedules.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Activity {
    /// How the MET is found.
    pub intensity: Intensity,
    /// The label shown in reports.
    pub label: String,
}

impl Intensity {
    /// The MET at body mass `mass_kg` (only leg cycling depends on mass).
    pub fn met_at(&self, mass_kg: f64) -> f64 {
        match self {
            Intensity::Compendium { met, .. } | Intensity::Met { met } => *met,
            Intensity::Walking {
                speed_kmh,
                grade_percent,
            } => {
                acsm::walking_vo2(acsm::m_per_min(*speed_kmh), grade_percent / 100.0)
                    / acsm::ML_O2_PER_MET
            }
            Intensity::Running {
                speed_kmh,
                grade_percent,
            } => {
                acsm::running_vo2(acsm::m_per_min(*speed_kmh), grade_percent / 100.0)
                    / acsm::ML_O2_PER_MET
            }
            Intensity::CyclingWatts { watts } => {
                acsm::leg_cycling_vo2(watts * acsm::KGM_PER_WATT, mass_kg) / acsm::ML_O2_PER_MET
            }
            Intensity::Vo2Reserve {
                percent,
                vo2peak_l_min,
            } => {
                targets::vo2_reserve_vo2(percent / 100.0, vo2peak_l_min * 1000.0 / mass_kg)
                    / acsm::ML_O2_PER_MET
            }
        }
    }

    /// Whether the MET changes with body mass.
    pub fn depends_on_mass(&self) -> bool {
        matches!(
            self,
            Intensity::CyclingWatts { .. } | Intensity::Vo2Reserve { .. }
        )
    }

    /// A short description: "compendium 17200 (2011), 4.3 MET", "walking 5.6 km/h at 2% grade".
    pub fn describe(&self) -> String {
        self.describe_with(|kmh| format!("{kmh:.1} km/h"))
    }

    /// [`Intensity::describe`] with each speed (km/h) written by `speed`, e.g. in mph
    /// for a report in US units.
    pub fn describe_with(&self, speed: impl Fn(f64) -> String) -> String {
        match self {
            Intensity::Compendium { code, met, version } => {
                format!("compendium {code} ({version}), {met:.1} MET")
            }
            Intensity::Met { met } => format!("{met:.2} MET as stated in the plan"),
            Intensity::Walking {
                speed_kmh,
                grade_percent,
            } => format!(
                "walking {} at {grade_percent:.1}% grade (ACSM walking equation)",
                speed(*speed_kmh)
            ),
            Intensity::Running {
                speed_kmh,
                grade_percent,
            } => format!(
                "running {} at {grade_percent:.1}% grade (ACSM running equation)",
                speed(*speed_kmh)
            ),
            Intensity::CyclingWatts { watts } => {
                format!("cycle ergometer at {watts:.0} W (ACSM leg-cycling equation)")
            }
            Intensity::Vo2Reserve {
                percent,
                vo2peak_l_min,
            } => format!(
                "{percent:.0}% of VO2 reserve (VO2peak {vo2peak_l_min:.2} l/min held; ACSM VO2-reserve method)"
            ),
        }
    }

    /// When an ACSM equation is used outside its valid range, what and where.
    pub fn outside_valid_range(&self) -> Option<String> {
        match self {
            Intensity::Walking { speed_kmh, .. } => {
                let s = acsm::m_per_min(*speed_kmh);
                let (lo, hi) = acsm::WALKING_VALID_M_PER_MIN;
                (s < lo || s > hi).then(|| {
                    format!(
                        "walking at {speed_kmh:.1} km/h ({s:.1} m/min) is outside the ACSM walking equation's valid range of {lo:.0}-{hi:.0} m/min; its MET is an extrapolation"
                    )
                })
            }
            Intensity::Running { speed_kmh, .. } => {
                let s = acsm::m_per_min(*speed_kmh);
                let lo = acsm::RUNNING_VALID_ABOVE_M_PER_MIN;
                (s <= lo).then(|| {
                    format!(
                        "running at {speed_kmh:.1} km/h ({s:.1} m/min) is outside the ACSM running equation's valid range (above {lo:.0} m/min); valid for 80-134 m/min only if truly jogging"
                    )
                })
            }
            Intensity::CyclingWatts { watts } => {
                let w = watts * acsm::KGM_PER_WATT;
                let (lo, hi) = acsm::CYCLING_VALID_KGM_PER_MIN;
                (w < lo || w > hi).then(|| {
                    format!(
                        "cycling at {watts:.0} W ({w:.0} kg*m/min) is outside the ACSM leg-cycling equation's valid range of {lo:.0}-{hi:.0} kg*m/min; its MET is an extrapolation"
                    )
                })
            }
            _ => None,
        }
    }
}
