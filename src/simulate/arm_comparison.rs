//! Arms compared pairwise at the end of the protocol: the difference in mean mass
//! change, the pooled SD, and the participants per arm to recruit for a power
//! ([`crate::stats`]). Computed from the cohort's summaries, before any rendering.

use crate::simulate::cohort::{ArmSpread, Spread};
use crate::stats::{ALPHA, n_per_arm_at, power, recruit};
use serde::Serialize;

/// Which difference the sample size rests on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Basis {
    /// Every allocated participant, drop-outs with their mass change: the drop-outs
    /// are already in the difference and the SD, so nothing is divided again.
    #[default]
    IntentionToTreat,
    /// Completers only: their difference and SD, then divided by the completion rate.
    Completers,
}

/// Adjustment of the significance level for several comparisons.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Multiplicity {
    /// Each comparison at alpha = 0.05.
    #[default]
    None,
    /// Each of `k` comparisons at `alpha / k`.
    Bonferroni,
    /// Holm's step-down levels `alpha / (k - i + 1)` given to the comparisons in order
    /// of their expected standardised difference, largest first.
    Holm,
}

/// The sample size of one comparison on one basis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BasisSize {
    /// Mean difference in mass change, kg (second arm minus first).
    pub mean_difference_kg: f64,
    /// Pooled SD of mass change, kg.
    pub sd_kg: f64,
    /// Participants per arm to recruit for power 0.8.
    pub n_per_arm_power80: Option<f64>,
    /// Participants per arm to recruit for power 0.9.
    pub n_per_arm_power90: Option<f64>,
}

/// A pair of arms compared (filled in when uncertainty is simulated).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Comparison {
    /// The two arms.
    pub arms: [String; 2],
    /// Scenario.
    pub scenario: String,
    /// The endpoint week.
    pub week: u32,
    /// The basis of the top-level numbers.
    pub basis: Basis,
    /// Mean difference in mass change, kg (second minus first), on `basis`.
    pub mean_difference_kg: f64,
    /// Pooled SD of mass change of the two arms, kg, on `basis`.
    pub sd_kg: f64,
    /// The lower expected completion rate of the two arms.
    pub completion_rate: f64,
    /// Participants per arm to recruit for power 0.8, on `basis`.
    pub n_per_arm_power80: Option<f64>,
    /// Participants per arm to recruit for power 0.9, on `basis`.
    pub n_per_arm_power90: Option<f64>,
    /// The two-sided level used (0.05, or adjusted).
    pub alpha: f64,
    /// The adjustment.
    pub multiplicity: Multiplicity,
    /// Both bases (completers: None at a checkpoint before the end, or without completers).
    pub intention_to_treat: BasisSize,
    /// Completers' basis.
    pub completers: Option<BasisSize>,
}

impl Comparison {
    /// Power, percent, with `n` participants recruited per arm (two-sided test of
    /// [`crate::stats`] at [`Comparison::alpha`] 0.05): on the intention-to-treat basis
    /// every recruit counts; on the completers' basis the share
    /// [`Comparison::completion_rate`].
    pub fn power_percent(&self, n: f64) -> f64 {
        let n = match self.basis {
            Basis::IntentionToTreat => n,
            Basis::Completers => n * self.completion_rate,
        };
        100.0 * power(n, self.mean_difference_kg, self.sd_kg)
    }
}

/// How the comparisons are made.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ComparisonOptions {
    /// The basis of the top-level numbers.
    pub basis: Basis,
    /// The adjustment for several comparisons.
    pub multiplicity: Multiplicity,
    /// Endpoint weeks besides the end of the protocol (checkpoints of the summaries).
    pub at_weeks: Vec<u32>,
}

fn pooled(a: &Spread, b: &Spread) -> (f64, f64) {
    (
        b.mean - a.mean,
        ((a.sd.powi(2) + b.sd.powi(2)) / 2.0).sqrt(),
    )
}

fn size(delta: f64, sd: f64, alpha: f64, completion: Option<f64>) -> BasisSize {
    let n = |p| {
        n_per_arm_at(delta, sd, p, alpha).map(|n| match completion {
            Some(c) => recruit(n, c),
            None => recruit(n, 1.0),
        })
    };
    BasisSize {
        mean_difference_kg: delta,
        sd_kg: sd,
        n_per_arm_power80: n(0.8),
        n_per_arm_power90: n(0.9),
    }
}

/// Every pair of arms in every scenario at the end of the protocol (`weeks`), with
/// the default options: intention to treat, no adjustment.
pub fn comparisons(arms: &[ArmSpread]) -> Vec<Comparison> {
    comparisons_with(arms, 0, &ComparisonOptions::default())
}

/// Every pair of arms in every scenario, at the end of the protocol (reported as week
/// `end_week`) and at each of `options.at_weeks` found among the checkpoints: the
/// difference in mean mass change (second arm minus first) and the pooled SD on both
/// bases, the participants per arm to recruit for power 0.8 and 0.9 (two-sided, at
/// alpha 0.05 or the adjusted level; docs/commands.md, cohort).
pub fn comparisons_with(
    arms: &[ArmSpread],
    end_week: u32,
    options: &ComparisonOptions,
) -> Vec<Comparison> {
    // (arms, scenario, week, itt (delta, sd), completers (delta, sd), completion)
    type Row = (
        [String; 2],
        String,
        u32,
        (f64, f64),
        Option<(f64, f64)>,
        f64,
    );
    let mut rows: Vec<Row> = Vec::new();
    for (i, a) in arms.iter().enumerate() {
        for b in &arms[i + 1..] {
            let rate = |x: &ArmSpread| x.completing / (x.participants.max(1) as f64);
            let completion = rate(a).min(rate(b));
            for (sa, sb) in a.scenarios.iter().zip(&b.scenarios) {
                let names = [a.name.clone(), b.name.clone()];
                let completers =
                    match (&sa.mass_change_completers_kg, &sb.mass_change_completers_kg) {
                        (Some(x), Some(y)) => Some(pooled(x, y)),
                        _ => None,
                    };
                rows.push((
                    names.clone(),
                    sa.name.clone(),
                    end_week,
                    pooled(&sa.mass_change_kg, &sb.mass_change_kg),
                    completers,
                    completion,
                ));
                for w in &options.at_weeks {
                    let at = |s: &crate::simulate::cohort::ScenarioSpread| {
                        s.checkpoints
                            .iter()
                            .find(|c| c.week == *w)
                            .map(|c| c.mass_change_kg)
                    };
                    if let (Some(x), Some(y)) = (at(sa), at(sb))
                        && *w != end_week
                    {
                        rows.push((
                            names.clone(),
                            sa.name.clone(),
                            *w,
                            pooled(&x, &y),
                            None,
                            completion,
                        ));
                    }
                }
            }
        }
    }
    let alphas = levels(
        &rows.iter().map(|r| r.3).collect::<Vec<_>>(),
        options.multiplicity,
    );
    rows.into_iter()
        .zip(alphas)
        .map(|((arms, scenario, week, itt, comp, completion), alpha)| {
            let itt = size(itt.0, itt.1, alpha, None);
            let completers = comp.map(|(d, s)| size(d, s, alpha, Some(completion)));
            let top = match (options.basis, &completers) {
                (Basis::Completers, Some(c)) => c.clone(),
                _ => itt.clone(),
            };
            Comparison {
                arms,
                scenario,
                week,
                basis: if completers.is_some() {
                    options.basis
                } else {
                    Basis::IntentionToTreat
                },
                mean_difference_kg: top.mean_difference_kg,
                sd_kg: top.sd_kg,
                completion_rate: completion,
                n_per_arm_power80: top.n_per_arm_power80,
                n_per_arm_power90: top.n_per_arm_power90,
                alpha,
                multiplicity: options.multiplicity,
                intention_to_treat: itt,
                completers,
            }
        })
        .collect()
}

/// The two-sided level of each of `k` comparisons (their `(difference, sd)`):
/// Bonferroni `alpha / k`; Holm (Holm S 1979, Scand J Statist 6:65) step-down levels
/// `alpha / (k - i + 1)` for the `i`-th comparison in order of the expected
/// standardised difference `|difference| / sd`, largest first (the order in which
/// the p-values are expected to fall).
pub fn levels(rows: &[(f64, f64)], m: Multiplicity) -> Vec<f64> {
    let k = rows.len().max(1) as f64;
    match m {
        Multiplicity::None => vec![ALPHA; rows.len()],
        Multiplicity::Bonferroni => vec![ALPHA / k; rows.len()],
        Multiplicity::Holm => {
            let z = |r: &(f64, f64)| {
                if r.1 > 0.0 {
                    r.0.abs() / r.1
                } else {
                    f64::INFINITY
                }
            };
            let mut order: Vec<usize> = (0..rows.len()).collect();
            order.sort_by(|a, b| z(&rows[*b]).total_cmp(&z(&rows[*a])));
            let mut out = vec![ALPHA; rows.len()];
            for (i, j) in order.into_iter().enumerate() {
                out[j] = ALPHA / (k - i as f64);
            }
            out
        }
    }
}
