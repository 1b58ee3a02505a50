//! ACSM metabolic equations: gross oxygen uptake of walking, running and leg cycling.
//!
//! Walking `VO2 = 3.5 + 0.1 S + 1.8 S G`, running `VO2 = 3.5 + 0.2 S + 0.9 S G`
//! (S in m/min, G grade as a fraction), leg cycling `VO2 = 7 + 1.8 W / M` with
//! `W = 6.12 * watts` kg*m/min; the MET is `VO2 / 3.5`.
//!
//! Reference: ACSM's Guidelines for Exercise Testing and Prescription, 10th ed.,
//! Table 6.3, as reproduced in Bushman BA 2020, ACSM's Health Fitness J 24(4):5-8.

/// One MET as oxygen uptake, ml O2 per kg per minute (Byrne et al. 2005, J Appl Physiol 99:1112).
pub const ML_O2_PER_MET: f64 = 3.5;

/// Work rate of one watt in kg*m/min (docs/model.md section 4; the ACSM teaching value is 6, 6.12 is
/// the physical conversion 60/9.80665 = 6.118 rounded).
pub const KGM_PER_WATT: f64 = 6.12;

/// Valid speed range of the walking equation, m/min (ACSM teaching slides).
pub const WALKING_VALID_M_PER_MIN: (f64, f64) = (50.0, 100.0);
/// Lower end of the running equation's valid range, m/min (above it; ACSM).
pub const RUNNING_VALID_ABOVE_M_PER_MIN: f64 = 134.0;
/// Valid work-rate range of the leg-cycling equation, kg*m/min (ACSM teaching slides).
pub const CYCLING_VALID_KGM_PER_MIN: (f64, f64) = (300.0, 1200.0);

/// The speeds a plan's `walking` may prescribe, km/h (the input range, wider than
/// the equation's valid range: outside that range a plan gets a warning; common
/// practice, no source).
pub const WALKING_KMH: (f64, f64) = (1.0, 12.0);
/// The speeds a plan's `running` may prescribe, km/h (as [`WALKING_KMH`]).
pub const RUNNING_KMH: (f64, f64) = (4.0, 30.0);
/// The power a plan's `cycling_watts` may prescribe, W (as [`WALKING_KMH`]).
pub const CYCLING_WATTS: (f64, f64) = (10.0, 600.0);

/// Speed in m/min from km/h.
pub fn m_per_min(speed_kmh: f64) -> f64 {
    speed_kmh * 1000.0 / 60.0
}

/// Gross VO2 of walking, ml/kg/min.
pub fn walking_vo2(speed_m_per_min: f64, grade_fraction: f64) -> f64 {
    3.5 + 0.1 * speed_m_per_min + 1.8 * speed_m_per_min * grade_fraction
}

/// Gross VO2 of running, ml/kg/min.
pub fn running_vo2(speed_m_per_min: f64, grade_fraction: f64) -> f64 {
    3.5 + 0.2 * speed_m_per_min + 0.9 * speed_m_per_min * grade_fraction
}

/// Gross VO2 of leg cycling at `work_kgm_per_min` for a body of `mass_kg`, ml/kg/min.
pub fn leg_cycling_vo2(work_kgm_per_min: f64, mass_kg: f64) -> f64 {
    7.0 + 1.8 * work_kgm_per_min / mass_kg
}

/// Gross energy per minute of an activity at `met` for `mass_kg`: `met * 3.5 * M / 200`
/// (ACSM kcal/min formula: 3.5 ml/kg/min per MET and 5 kcal per litre of O2).
pub fn gross_kcal_per_min(met: f64, mass_kg: f64) -> f64 {
    met * ML_O2_PER_MET * mass_kg / 200.0
}

/// A plain-words statement of the three equations and their valid ranges, for
/// listings; `speed` converts a speed in km/h to the listing's unit, `speed_unit`.
pub fn summary(
    speed: impl Fn(f64) -> f64,
    speed_unit: &str,
) -> Vec<(&'static str, &'static str, String)> {
    let from_m_per_min = |s: f64| speed(s * 60.0 / 1000.0);
    let (walk_lo, walk_hi) = WALKING_VALID_M_PER_MIN;
    let run_lo = RUNNING_VALID_ABOVE_M_PER_MIN;
    let (cycle_lo, cycle_hi) = CYCLING_VALID_KGM_PER_MIN;
    vec![
        (
            "walking",
            "VO2 = 3.5 + 0.1*S + 1.8*S*G  (S m/min, G fraction)",
            format!(
                "{walk_lo:.0}-{walk_hi:.0} m/min ({:.1}-{:.1} {speed_unit})",
                from_m_per_min(walk_lo),
                from_m_per_min(walk_hi)
            ),
        ),
        (
            "running",
            "VO2 = 3.5 + 0.2*S + 0.9*S*G",
            format!(
                "above {run_lo:.0} m/min (above {:.1} {speed_unit})",
                from_m_per_min(run_lo)
            ),
        ),
        (
            "leg cycling",
            "VO2 = 7 + 1.8*W/M  (W = 6.12*watts kg*m/min, M kg)",
            format!(
                "{cycle_lo:.0}-{cycle_hi:.0} kg*m/min (about {:.0}-{:.0} W)",
                cycle_lo / KGM_PER_WATT,
                cycle_hi / KGM_PER_WATT
            ),
        ),
    ]
}
