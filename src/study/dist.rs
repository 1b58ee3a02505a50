//! Values that are fixed or drawn from a distribution: normal truncated to bounds,
//! uniform, or beta scaled to bounds.
//!
//! A truncated normal is drawn by rejection (exact), which the study refuses when
//! the bounds keep less than [`MIN_NORMAL_MASS`] of the normal ([`normal_cdf`] judges
//! that share).

use crate::stats::normal_cdf;
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
