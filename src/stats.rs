//! The statistics the study tools use, in one place: the standard normal CDF and
//! quantile (from the `statrs` crate), the participants per arm to detect a
//! difference in mean change and the power of that test, and percentiles.
//!
//! Sample size: the two-sample normal approximation
//! `n = 2 (z_{1-alpha/2} + z_{1-beta})^2 sigma^2 / delta^2` per arm, two-sided
//! alpha 0.05, then divided by the expected completion rate. Reference: Altman DG
//! 1991, Practical Statistics for Medical Research (Chapman & Hall), section 15.3
//! (formula); Kirkwood BR, Sterne JAC 2003, Essential Medical Statistics, 2nd ed.
//! (Blackwell), chapter 35. Worked example checked in the tests: Gelman A, Hill J,
//! Vehtari A 2020, Regression and Other Stories, section 16.3.
//!
//! Percentiles: linear interpolation between order statistics, Hyndman RJ, Fan Y
//! 1996, Am Stat 50:361, definition 7.
//!
//! Student's t and chi-squared quantiles (`statrs`), for the pilot analysis's
//! intervals (docs/pilot-analysis.md, "Per arm").

use statrs::distribution::{ChiSquared, ContinuousCDF, Normal, StudentsT};

/// The standard normal distribution.
fn standard_normal() -> Normal {
    Normal::standard()
}

/// The standard normal CDF, `P(Z <= z)`.
pub fn normal_cdf(z: f64) -> f64 {
    standard_normal().cdf(z)
}

/// The standard normal quantile: the `z` with `P(Z <= z) = p`, for `p` in (0, 1)
/// (the callers pass fixed probabilities; outside [0, 1] it panics).
pub fn normal_quantile(p: f64) -> f64 {
    standard_normal().inverse_cdf(p)
}

/// `z` for a two-sided 95 % normal interval, `z_0.975` (the value of
/// [`normal_quantile`]`(0.975)` to ten digits; pinned against it in the tests).
pub const Z95: f64 = 1.959_963_985;

/// The quantile of Student's t with `df` degrees of freedom (`df > 0`, fractional
/// allowed, as Welch's test needs): the `t` with `P(T <= t) = p`. NaN when `df` is
/// not positive and finite.
pub fn t_quantile(df: f64, p: f64) -> f64 {
    StudentsT::new(0.0, 1.0, df)
        .map(|t| t.inverse_cdf(p))
        .unwrap_or(f64::NAN)
}

/// The quantile of the chi-squared distribution with `df` degrees of freedom
/// (`df > 0`): the `x` with `P(X <= x) = p`. NaN when `df` is not positive and
/// finite.
pub fn chi2_quantile(df: f64, p: f64) -> f64 {
    ChiSquared::new(df)
        .map(|c| c.inverse_cdf(p))
        .unwrap_or(f64::NAN)
}

/// Two-sided significance level of the sample-size and power calculations.
pub const ALPHA: f64 = 0.05;

/// `z_{1-alpha/2}` for [`ALPHA`].
pub fn z_alpha() -> f64 {
    normal_quantile(1.0 - ALPHA / 2.0)
}

/// Participants per arm (before drop-out) for power `power` (e.g. 0.8), not yet
/// rounded up; None when `delta` is 0 or a number is not finite.
pub fn n_per_arm(delta: f64, sigma: f64, power: f64) -> Option<f64> {
    n_per_arm_at(delta, sigma, power, ALPHA)
}

/// [`n_per_arm`] at the two-sided level `alpha` (e.g. a Bonferroni or Holm level).
pub fn n_per_arm_at(delta: f64, sigma: f64, power: f64, alpha: f64) -> Option<f64> {
    (delta != 0.0 && delta.is_finite() && sigma.is_finite()).then(|| {
        let z = normal_quantile(1.0 - alpha / 2.0) + normal_quantile(power);
        2.0 * z * z * sigma * sigma / (delta * delta)
    })
}

/// Power of the two-sided test with `n` participants per arm (the far tail ignored,
/// as in the formula of [`n_per_arm`]).
pub fn power(n: f64, delta: f64, sigma: f64) -> f64 {
    if sigma <= 0.0 {
        return if delta != 0.0 { 1.0 } else { 0.0 };
    }
    normal_cdf(delta.abs() / sigma * (n / 2.0).sqrt() - z_alpha())
}

/// The fewest completers per arm reported: a two-sample comparison needs two per
/// arm to estimate the SD at all (common practice; the normal approximation gives
/// less than 1 when the simulated SD is tiny).
pub const MIN_COMPLETERS_PER_ARM: f64 = 2.0;

/// Participants per arm to recruit: `n` (at least [`MIN_COMPLETERS_PER_ARM`])
/// divided by the completion rate, rounded up.
pub fn recruit(n: f64, completion_rate: f64) -> f64 {
    (n.max(MIN_COMPLETERS_PER_ARM) / completion_rate.clamp(1e-9, 1.0) - 1e-9).ceil()
}

/// Percentile `q` (0..=1) of `n` sorted values whose `k`-th smallest (0-based) is
/// `nth(k)`: Hyndman and Fan definition 7, linear between order statistics; 0 when
/// there are none.
pub fn percentile_of(n: usize, q: f64, nth: impl Fn(usize) -> f64) -> f64 {
    if n == 0 {
        return 0.0;
    }
    let h = (n - 1) as f64 * q;
    let (lo, hi) = (h.floor() as usize, h.ceil() as usize);
    let (a, b) = (nth(lo), nth(hi));
    a + (h - lo as f64) * (b - a)
}

/// Percentile `q` (0..=1) of sorted values ([`percentile_of`]).
pub fn percentile(sorted: &[f64], q: f64) -> f64 {
    percentile_of(sorted.len(), q, |k| sorted[k])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn normal_cdf_and_quantile_match_tables() {
        // Abramowitz M, Stegun IA 1964, Handbook of Mathematical Functions, Table
        // 7.1: erf(0.5) = 0.5204998778, erf(1) = 0.8427007929, erf(2) =
        // 0.9953222650; Phi(x) = (1 + erf(x / sqrt 2)) / 2.
        for (x, erf) in [
            (0.5, 0.520_499_877_8),
            (1.0, 0.842_700_792_9),
            (2.0, 0.995_322_265),
        ] {
            let phi = normal_cdf(x * std::f64::consts::SQRT_2);
            assert!((2.0 * phi - 1.0 - erf).abs() < 1e-9, "erf({x})");
            assert!((normal_cdf(-x) + normal_cdf(x) - 1.0).abs() < 1e-15);
        }
        // Standard normal table (e.g. Kirkwood and Sterne 2003, Table A2):
        // z_0.975 = 1.959964, z_0.80 = 0.841621, z_0.90 = 1.281552.
        for (p, z) in [(0.975, 1.959_964), (0.8, 0.841_621), (0.9, 1.281_552)] {
            assert!((normal_quantile(p) - z).abs() < 1e-6, "z_{p}");
            assert!((normal_cdf(normal_quantile(p)) - p).abs() < 1e-9);
        }
        assert!((normal_cdf(1.96) - normal_cdf(-1.96) - 0.95).abs() < 1e-4);
    }

    #[test]
    fn sample_size_check_values_and_a_textbook_example() {
        // Check value of the study design: delta 1 kg, sigma 3 kg -> 142 per arm at
        // power 0.8 and 190 at 0.9 before drop-out (2 (1.96 + 0.84)^2 9 = 141.3,
        // 2 (1.96 + 1.28)^2 9 = 189.1, by hand).
        assert_eq!(recruit(n_per_arm(1.0, 3.0, 0.8).unwrap(), 1.0), 142.0);
        assert_eq!(recruit(n_per_arm(1.0, 3.0, 0.9).unwrap(), 1.0), 190.0);
        // Textbook worked example: Gelman A, Hill J, Vehtari A 2020, Regression and
        // Other Stories (Cambridge University Press), section 16.3: an effect of 0.5
        // SD with 80% power at 95% confidence needs the effect to be 2.8 standard
        // errors, se = 2 sigma / sqrt(N) over both groups, so N = (2.8 * 4)^2 = 125.4
        // in all. Their 2.8 is z_0.975 + z_0.80 = 2.8016 rounded: with 2.8 in place
        // of the quantiles the formula gives their number exactly, and with the
        // quantiles 125.6 in all, 63 per group.
        let total = |z: f64| 2.0 * 2.0 * z * z * 1.0 / (0.5 * 0.5);
        assert!((total(2.8) - 125.44).abs() < 1e-9);
        let n = n_per_arm(0.5, 1.0, 0.8).unwrap();
        assert!((2.0 * n - total(z_alpha() + normal_quantile(0.8))).abs() < 1e-9);
        assert!((2.0 * n - 125.4).abs() < 0.3, "{}", 2.0 * n);
        assert_eq!(recruit(n, 1.0), 63.0);
        // Lehr's rule of thumb, n = 16 / (delta / sigma)^2 per group for 80% power at
        // two-sided 0.05 (Lehr R 1992, Statistics in Medicine 11:1099): the exact
        // constant is 2 (1.96 + 0.84)^2 = 15.7, so the formula is 2% under the rule.
        for d in [0.2, 0.5, 0.8, 1.0] {
            let ratio = n_per_arm(d, 1.0, 0.8).unwrap() / (16.0 / (d * d));
            assert!((ratio - 15.7 / 16.0).abs() < 0.002, "{d}: {ratio}");
        }
        // At the computed n the power is the one asked for.
        let n = n_per_arm(1.0, 3.0, 0.8).unwrap();
        assert!((power(n, 1.0, 3.0) - 0.8).abs() < 1e-9);
        // 20% drop-out: divide by 0.8.
        assert_eq!(recruit(141.3, 0.8), 177.0);
        // A difference of 2 kg with an SD of 0.1 kg needs 0.04 per arm by the
        // formula; two completers per arm are the least reported, more with drop-out.
        let tiny = n_per_arm(2.0, 0.1, 0.8).unwrap();
        assert!(tiny < 0.1, "{tiny}");
        assert_eq!(recruit(tiny, 1.0), 2.0);
        assert_eq!(recruit(tiny, 0.8), 3.0);
        assert_eq!(recruit(2.5, 1.0), 3.0);
    }

    #[test]
    fn z95_is_the_normal_quantile() {
        // z_0.975 = 1.959964 (standard normal table, Kirkwood and Sterne 2003,
        // Table A2); the constant is the library's quantile to ten digits.
        assert!((Z95 - normal_quantile(0.975)).abs() < 1e-9);
        assert!((Z95 - 1.959_964).abs() < 1e-6);
    }

    #[test]
    fn t_and_chi_squared_quantiles_match_tables() {
        // Student's t, upper 2.5 % points (Fisher RA, Yates F 1963, Statistical
        // Tables for Biological, Agricultural and Medical Research, 6th ed., Table
        // III; the same values in Abramowitz and Stegun 1964, Table 26.10; table
        // numbers from memory): 12.706 (1 df), 2.776 (4), 2.228 (10), 2.045 (29),
        // 1.980 (120).
        for (df, t) in [
            (1.0, 12.706),
            (4.0, 2.776),
            (10.0, 2.228),
            (29.0, 2.045),
            (120.0, 1.980),
        ] {
            assert!((t_quantile(df, 0.975) - t).abs() < 5e-4, "t_0.975,{df}");
            assert!((t_quantile(df, 0.025) + t).abs() < 5e-4, "symmetry at {df}");
        }
        // As the degrees of freedom grow, t approaches the normal (1.960 in the
        // tables' last row); at 1000 df 1.962 (one more term of the Cornish-Fisher
        // expansion, z + (z^3 + z) / (4 df) = 1.9623).
        assert!((t_quantile(1000.0, 0.975) - 1.9623).abs() < 5e-4);
        // Chi-squared, lower and upper 2.5 % points (Fisher and Yates 1963, Table
        // IV; Abramowitz and Stegun 1964, Table 26.8; table numbers from memory):
        // 2.700 and 19.023 at 9 df,
        // 3.247 and 20.483 at 10 df, 0.0506 and 7.378 at 2 df.
        for (df, lo, hi) in [
            (2.0, 0.0506, 7.378),
            (9.0, 2.700, 19.023),
            (10.0, 3.247, 20.483),
        ] {
            assert!(
                (chi2_quantile(df, 0.025) - lo).abs() < 5e-4,
                "chi2_0.025,{df}"
            );
            assert!(
                (chi2_quantile(df, 0.975) - hi).abs() < 5e-4,
                "chi2_0.975,{df}"
            );
        }
        // Closed form at 2 df: the chi-squared with 2 df is exponential with mean 2,
        // so its p quantile is -2 ln(1 - p).
        for p in [0.025f64, 0.5, 0.975] {
            assert!((chi2_quantile(2.0, p) + 2.0 * (1.0 - p).ln()).abs() < 1e-9);
        }
        // Not a distribution: NaN, never a panic.
        assert!(t_quantile(0.0, 0.975).is_nan());
        assert!(chi2_quantile(-1.0, 0.975).is_nan());
    }
}
