//! Body composition: the Forbes curve partition, Deurenberg's body-fat estimate, and
//! the move along the Forbes curve to a measured mass.
//!
//! Along `L = c_F * ln(F) + c` (c_F = 10.4 kg) the lean share of a small change in
//! mass is `c_F / (c_F + F)` and the energy density of the tissue changed is
//! `(rho_F F + rho_L c_F) / (F + c_F)`. Deurenberg: `%BF = 1.2 BMI + 0.23 A - 10.8 s - 5.4`.
//!
//! Reference: Forbes GB 1987, Nutr Rev 45:225; Forbes GB 2000, Ann NY Acad Sci 904:359;
//! Deurenberg P, Weststrate JA, Seidell JC 1991, Br J Nutr 65:105.

use crate::model::rmr::Sex;

/// Standard error of estimate of Deurenberg's adult equation, % body fat
/// (Deurenberg et al. 1991, Br J Nutr 65:105).
pub const DEURENBERG_SEE_PERCENT: f64 = 4.1;

/// Body-mass index, kg/m^2.
pub fn bmi(mass_kg: f64, height_cm: f64) -> f64 {
    let h = height_cm / 100.0;
    mass_kg / (h * h)
}

/// Percent body fat estimated from BMI, age and sex (Deurenberg et al. 1991, adults).
pub fn deurenberg_percent_fat(bmi: f64, age_years: f64, sex: Sex) -> f64 {
    let s = if sex == Sex::Male { 1.0 } else { 0.0 };
    1.2 * bmi + 0.23 * age_years - 10.8 * s - 5.4
}

/// Lean (fat-free) share of a small change in body mass at fat mass `fat_kg`.
pub fn forbes_lean_share(fat_kg: f64, forbes_constant_kg: f64) -> f64 {
    forbes_constant_kg / (forbes_constant_kg + fat_kg)
}

/// Energy density of tissue gained or lost at fat mass `fat_kg`, kcal/kg.
pub fn energy_density_of_change(
    fat_kg: f64,
    forbes_constant_kg: f64,
    fat_kcal_per_kg: f64,
    lean_kcal_per_kg: f64,
) -> f64 {
    (fat_kcal_per_kg * fat_kg + lean_kcal_per_kg * forbes_constant_kg)
        / (fat_kg + forbes_constant_kg)
}

/// Principal branch of the Lambert W function, `W0(x)` for `x >= 0`, by Halley's method.
pub fn lambert_w0(x: f64) -> f64 {
    // Start: log-based guess for large x, x itself near zero.
    let mut w = if x > 1.0 {
        x.ln() - x.ln().ln().max(0.0)
    } else {
        x * 0.5
    };
    for _ in 0..100 {
        let ew = w.exp();
        let f = w * ew - x;
        let step = f / (ew * (w + 1.0) - (w + 2.0) * f / (2.0 * w + 2.0));
        w -= step;
        if step.abs() <= 1e-15 * (1.0 + w.abs()) {
            break;
        }
    }
    w
}

/// The fat mass on the Forbes curve through (`fat_kg`, `lean_kg`) whose body mass is
/// `mass_kg`: solves `F' + c ln F' = M - (L - c ln F)`, i.e.
/// `F' = c W0(exp(b / c) / c)` (docs/model.md section 7).
pub fn forbes_fat_at_mass(fat_kg: f64, lean_kg: f64, mass_kg: f64, forbes_constant_kg: f64) -> f64 {
    let c = forbes_constant_kg;
    let b = mass_kg - (lean_kg - c * fat_kg.ln());
    // exp(b/c)/c can overflow for large b: W0(e^y) for large y solved in log space.
    let y = b / c - c.ln();
    if y < 700.0 {
        c * lambert_w0(y.exp())
    } else {
        // Newton on w + ln w = y.
        let mut w = y - y.ln();
        for _ in 0..50 {
            w -= (w + w.ln() - y) / (1.0 + 1.0 / w);
        }
        c * w
    }
}
