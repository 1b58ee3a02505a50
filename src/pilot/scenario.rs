//! The pilot's estimates as `[[scenario]]` values of a study file, so that
//! `cohort --draws` for the next trial runs on what the pilot measured.
//!
//! One scenario per exercise arm. Each value is a normal with the arm's mean and
//! its between-participant SD (measurement error removed), truncated to the key's
//! allowed range; a fixed value when the spread is 0 or cannot be estimated; a
//! uniform over the range when the spread is so wide that the truncation would
//! keep too little of the normal. Without a TEE, intake cannot be told from the
//! rest: the whole gap is then written as an effective `intake_fraction`
//! (`(1 - share) / (1 - beta)`), and the block says so.

use super::Term;
use super::arm::{PilotAnalysis, TermSummary};
use crate::plan::scenario_range;
use crate::stats::normal_cdf;
use crate::study::dist::{Dist, MIN_NORMAL_MASS};

fn num(x: f64) -> String {
    let s = format!("{x:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

/// One key's value as study-file text, with a comment line about it.
fn value(key: &str, mean: f64, sd: Option<f64>, what: &str) -> (String, String) {
    let (lo, hi, _) = scenario_range(key);
    let m = mean.clamp(lo, hi);
    let mut note = format!("{key}: {what}; mean {}", num(mean));
    if m != mean {
        note.push_str(&format!(" held to the allowed {} to {}", num(lo), num(hi)));
    }
    let text = match sd.filter(|sd| *sd > 0.0) {
        Some(sd) => match truncated_with_mean(m, sd, lo, hi) {
            Some((mu, s)) => {
                note.push_str(&format!(", between-participant SD {}", num(sd)));
                if s < sd {
                    note.push_str(&format!(
                        " (narrowed to {} so that the truncated normal keeps the mean)",
                        num(s)
                    ));
                }
                if (mu - m).abs() > 1e-9 {
                    note.push_str(&format!(
                        "; the normal's own mean {} gives the truncated mean {}",
                        num(mu),
                        num(m)
                    ));
                }
                format!(
                    "{{ dist = \"normal\", mean = {}, sd = {}, min = {}, max = {} }}",
                    num(mu),
                    num(s),
                    num(lo),
                    num(hi)
                )
            }
            None => {
                note.push_str(", spread too wide for the range: fixed at the mean");
                num(m)
            }
        },
        None => {
            note.push_str(", no spread estimated: fixed");
            num(m)
        }
    };
    (format!("{key} = {text}"), note)
}

/// Mean of a normal(`mu`, `sd`) truncated to `[lo, hi]`:
/// `mu + sd (phi(a) - phi(b)) / (Phi(b) - Phi(a))`, `a = (lo - mu) / sd`,
/// `b = (hi - mu) / sd` (Johnson NL, Kotz S, Balakrishnan N 1994, Continuous
/// Univariate Distributions vol. 1, 2nd ed., section 10.1).
pub fn truncated_mean(mu: f64, sd: f64, lo: f64, hi: f64) -> f64 {
    let phi = |z: f64| (-0.5 * z * z).exp() / (2.0 * std::f64::consts::PI).sqrt();
    let (a, b) = ((lo - mu) / sd, (hi - mu) / sd);
    mu + sd * (phi(a) - phi(b)) / (normal_cdf(b) - normal_cdf(a))
}

/// The normal's own mean and SD whose truncation to `[lo, hi]` has mean `target`
/// (so the next study draws around what the pilot measured, not a mean pushed
/// away from a bound by the truncation), keeping at least 1.2 times the share of
/// the normal the study loader requires; the SD is narrowed (by 20 % steps) when
/// the target cannot be reached otherwise. None when even a narrow one cannot.
pub fn truncated_with_mean(target: f64, sd: f64, lo: f64, hi: f64) -> Option<(f64, f64)> {
    let mut s = sd;
    for _ in 0..40 {
        // The truncated mean rises with mu: bisect.
        let (mut a, mut b) = (lo - 10.0 * s, hi + 10.0 * s);
        for _ in 0..200 {
            let mid = 0.5 * (a + b);
            if truncated_mean(mid, s, lo, hi) < target {
                a = mid;
            } else {
                b = mid;
            }
        }
        let mu = 0.5 * (a + b);
        let d = Dist::Normal {
            mean: mu,
            sd: s,
            min: lo,
            max: hi,
        };
        if d.kept_mass() >= 1.2 * MIN_NORMAL_MASS
            && (truncated_mean(mu, s, lo, hi) - target).abs() <= 1e-6 * (hi - lo)
        {
            return Some((mu, s));
        }
        s *= 0.8;
    }
    None
}

fn spread(s: &TermSummary) -> Option<f64> {
    s.between_sd
}

/// The `[[scenario]]` tables for every exercise arm of `analysis`, with comment
/// lines naming where each value came from. `pilot` names the pilot in the
/// scenario names.
pub fn scenario_block(analysis: &PilotAnalysis, pilot: &str) -> String {
    let beta = analysis.tef_fraction;
    let mut out = format!(
        "# Scenario values measured in the pilot \"{pilot}\": per exercise arm, each term's\n\
         # mean and between-participant SD (measurement error removed), truncated to the\n\
         # allowed range. Written by the pilot analysis (docs/pilot-analysis.md).\n"
    );
    for arm in analysis.arms.iter().filter(|a| !a.control) {
        let mut lines = Vec::new();
        let mut notes = vec![format!("arm \"{}\", {} participant(s)", arm.arm, arm.n)];
        if let Some(s) = arm.term(Term::IntakeFraction) {
            let (l, n) = value(
                "intake_fraction",
                s.mean,
                spread(s),
                "from TEE (intake balance)",
            );
            lines.push(l);
            notes.push(n);
        } else if let Some(s) = arm.term(Term::Share) {
            let (l, n) = value(
                "intake_fraction",
                (1.0 - s.mean) / (1.0 - beta),
                spread(s).map(|x| x / (1.0 - beta)),
                "EFFECTIVE: the whole gap as intake (no TEE, so intake, resting metabolism and other movement cannot be told apart)",
            );
            lines.push(l);
            notes.push(n);
        }
        if let Some(s) = arm.term(Term::ActivityFraction) {
            let (l, n) = value(
                "activity_fraction",
                s.mean,
                spread(s),
                "from the rest of the gap",
            );
            lines.push(l);
            notes.push(n);
        }
        if let Some(s) = arm.term(Term::RmrAdaptationPerKg) {
            let (l, n) = value(
                "rmr_adaptation_kcal_per_kg",
                s.mean,
                spread(s),
                "from measured RMR against the equation",
            );
            lines.push(l);
            notes.push(n);
        }
        out.push('\n');
        for n in notes {
            out.push_str(&format!("# {n}\n"));
        }
        out.push_str("[[scenario]]\n");
        out.push_str(&format!(
            "name = {}\n",
            toml_string(&format!("pilot {pilot}: {}", arm.arm))
        ));
        for l in lines {
            out.push_str(&l);
            out.push('\n');
        }
    }
    out
}

/// A TOML basic string.
fn toml_string(s: &str) -> String {
    let mut out = String::from("\"");
    for ch in s.chars() {
        match ch {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if c.is_control() => out.push(' '),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}
