//! Values that are fixed or drawn from a distribution: normal truncated to bounds,
//! uniform, or beta scaled to bounds.
//!
//! A truncated normal is drawn by rejection (exact), which the study refuses when
//! the bounds keep less than [`MIN_NORMAL_MASS`] of the normal. The normal CDF uses
//! the error function of Abramowitz and Stegun 1964, Handbook of Mathematical
//! Functions, 7.1.26 (absolute error below 1.5e-7), enough to judge that share.

use rand::Rng;
use rand::RngExt;
use rand_distr::{Beta, Distribution, Normal};
use serde::Serialize;

/// Least share of a normal its truncation bounds may keep.
pub const MIN_NORMAL_MASS: f64 = 0.05;

/// A fixed value or a distribution.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "dist")]
pub enum Dist {
    /// Always this value.
    Fixed {
        /// The value.
        value: f64,
    },
    /// Normal, truncated to `[min, max]`.
    Normal {
        /// Mean before truncation.
        mean: f64,
        /// SD before truncation.
        sd: f64,
        /// Lower bound.
        min: f64,
        /// Upper bound.
        max: f64,
    },
    /// Uniform on `[min, max]`.
    Uniform {
        /// Lower bound.
        min: f64,
        /// Upper bound.
        max: f64,
    },
    /// Beta(alpha, beta) scaled to `[min, max]`.
    Beta {
        /// Shape alpha.
        alpha: f64,
        /// Shape beta.
        beta: f64,
        /// Lower bound.
        min: f64,
        /// Upper bound.
        max: f64,
    },
}

/// `erf(x)` by Abramowitz and Stegun 7.1.26.
pub fn erf(x: f64) -> f64 {
    let s = x.signum();
    let x = x.abs();
    let t = 1.0 / (1.0 + 0.327_591_1 * x);
    let y = 1.0
        - (((((1.061_405_429 * t - 1.453_152_027) * t) + 1.421_413_741) * t - 0.284_496_736) * t
            + 0.254_829_592)
            * t
            * (-x * x).exp();
    s * y
}

/// The standard normal CDF.
pub fn normal_cdf(z: f64) -> f64 {
    0.5 * (1.0 + erf(z / std::f64::consts::SQRT_2))
}

impl Dist {
    /// Whether the value varies.
    pub fn is_fixed(&self) -> bool {
        matches!(self, Dist::Fixed { .. })
    }

    /// A central value: the fixed value, the normal's mean held within its bounds, the
    /// uniform's midpoint, the scaled beta's mean.
    pub fn centre(&self) -> f64 {
        match *self {
            Dist::Fixed { value } => value,
            Dist::Normal { mean, min, max, .. } => mean.clamp(min, max),
            Dist::Uniform { min, max } => 0.5 * (min + max),
            Dist::Beta {
                alpha,
                beta,
                min,
                max,
            } => min + (max - min) * alpha / (alpha + beta),
        }
    }

    /// The lowest and highest value it can take.
    pub fn bounds(&self) -> (f64, f64) {
        match *self {
            Dist::Fixed { value } => (value, value),
            Dist::Normal { min, max, .. }
            | Dist::Uniform { min, max }
            | Dist::Beta { min, max, .. } => (min, max),
        }
    }

    /// The share of the normal kept by the bounds (1 for the others).
    pub fn kept_mass(&self) -> f64 {
        match *self {
            Dist::Normal { mean, sd, min, max } => {
                normal_cdf((max - mean) / sd) - normal_cdf((min - mean) / sd)
            }
            _ => 1.0,
        }
    }

    /// One draw.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        match *self {
            Dist::Fixed { value } => value,
            Dist::Normal { mean, sd, min, max } => {
                let n = Normal::new(mean, sd).expect("sd validated positive");
                loop {
                    let x = n.sample(rng);
                    if (min..=max).contains(&x) {
                        return x;
                    }
                }
            }
            Dist::Uniform { min, max } => {
                if max > min {
                    rng.random_range(min..=max)
                } else {
                    min
                }
            }
            Dist::Beta {
                alpha,
                beta,
                min,
                max,
            } => {
                let b = Beta::new(alpha, beta).expect("shapes validated positive");
                min + (max - min) * b.sample(rng)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn erf_matches_tabulated_values() {
        // Abramowitz and Stegun 1964, Table 7.1: erf(0.5) = 0.5204998778,
        // erf(1) = 0.8427007929, erf(2) = 0.9953222650.
        for (x, v) in [
            (0.5, 0.520_499_877_8),
            (1.0, 0.842_700_792_9),
            (2.0, 0.995_322_265),
        ] {
            assert!((erf(x) - v).abs() < 1.5e-7, "erf({x})");
            assert!((erf(-x) + v).abs() < 1.5e-7);
        }
        // Standard normal: P(|Z| < 1.96) = 0.95 (any statistics table).
        assert!((normal_cdf(1.96) - normal_cdf(-1.96) - 0.95).abs() < 1e-4);
    }
}
