//! Arms compared pairwise at the end of the protocol: the difference in mean mass
//! change, the pooled SD, and the participants per arm to recruit for a power
//! ([`crate::stats`]). Computed from the cohort's summaries, before any rendering.

use crate::simulate::cohort::ArmSpread;
use crate::stats::{n_per_arm, power, recruit};
use serde::Serialize;

/// A pair of arms compared (filled in when uncertainty is simulated).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Comparison {
    /// The two arms.
    pub arms: [String; 2],
    /// Scenario.
    pub scenario: String,
    /// Mean difference in mass change, kg (second minus first).
    pub mean_difference_kg: f64,
    /// Pooled SD of mass change of the two arms, kg.
    pub sd_kg: f64,
    /// The lower expected completion rate of the two arms.
    pub completion_rate: f64,
    /// Participants per arm for power 0.8.
    pub n_per_arm_power80: Option<f64>,
    /// Participants per arm for power 0.9.
    pub n_per_arm_power90: Option<f64>,
}

impl Comparison {
    /// Power, percent, with `n` participants recruited per arm, of whom the share
    /// [`Comparison::completion_rate`] complete (two-sided test of [`crate::stats`]).
    pub fn power_percent(&self, n: f64) -> f64 {
        100.0
            * power(
                n * self.completion_rate,
                self.mean_difference_kg,
                self.sd_kg,
            )
    }
}

/// Every pair of arms in every scenario: the difference in mean mass change at the end
/// of the protocol (intention to treat, second arm minus first), the pooled SD of the
/// two arms, and the participants per arm to recruit for power 0.8 and 0.9 (two-sided
/// alpha 0.05), divided by the lower completion rate of the two.
pub fn comparisons(arms: &[ArmSpread]) -> Vec<Comparison> {
    let mut out = Vec::new();
    for (i, a) in arms.iter().enumerate() {
        for b in &arms[i + 1..] {
            for (sa, sb) in a.scenarios.iter().zip(&b.scenarios) {
                let delta = sb.mass_change_kg.mean - sa.mass_change_kg.mean;
                let sd =
                    ((sa.mass_change_kg.sd.powi(2) + sb.mass_change_kg.sd.powi(2)) / 2.0).sqrt();
                let rate = |x: &ArmSpread| x.completing / (x.participants.max(1) as f64);
                let completion = rate(a).min(rate(b));
                let n = |z| n_per_arm(delta, sd, z).map(|n| recruit(n, completion));
                out.push(Comparison {
                    arms: [a.name.clone(), b.name.clone()],
                    scenario: sa.name.clone(),
                    mean_difference_kg: delta,
                    sd_kg: sd,
                    completion_rate: completion,
                    n_per_arm_power80: n(0.8),
                    n_per_arm_power90: n(0.9),
                });
            }
        }
    }
    out
}
