//! Per arm: each term's mean, its between-participant SD with the measurement error
//! removed, their intervals, and the difference from the control arm.
//!
//! The between-participant variance is the method-of-moments estimate: the
//! observed variance across participants minus the mean measurement variance,
//! floored at 0 -- the unweighted form of the moment estimator of between-study
//! variance of DerSimonian R, Laird N 1986, Control Clin Trials 7:177. Its interval
//! takes the observed variance's chi-square interval (n - 1 degrees of freedom,
//! normal terms) and removes the same mean measurement variance from both ends,
//! each floored at 0. The mean's interval is Student's t on the observed SD (which
//! already holds the measurement error); the difference from control uses Welch's
//! unequal-variance t (Welch BL 1947, Biometrika 34:28).

use super::{IntervalAnalysis, PilotParticipant, Term, analyse_interval, check};
use crate::error::Error;
use crate::model::Constants;
use crate::safety::Warning;
use crate::stats::{chi2_quantile, t_quantile};
use serde::Serialize;

/// Fewest participants for a between-participant SD (two degrees of freedom).
pub const MIN_FOR_SPREAD: usize = 3;

/// One term in one arm.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TermSummary {
    /// The term.
    pub term: Term,
    /// Participants with a value.
    pub n: usize,
    /// Mean.
    pub mean: f64,
    /// 95 % interval of the mean (None with fewer than 2 participants).
    pub mean_interval: Option<(f64, f64)>,
    /// SD across participants as observed (measurement error included).
    pub observed_sd: Option<f64>,
    /// Root mean square of the measurement SDs.
    pub measurement_sd: f64,
    /// Between-participant SD with the measurement error removed (None with fewer
    /// than [`MIN_FOR_SPREAD`] participants).
    pub between_sd: Option<f64>,
    /// 95 % interval of the between-participant SD.
    pub between_sd_interval: Option<(f64, f64)>,
    /// Difference of the mean from the control arm's, with its 95 % interval.
    pub vs_control: Option<(f64, f64, f64)>,
    /// A plain note (too few participants, measurement error larger than the spread).
    pub note: Option<String>,
}

/// One arm.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ArmSummary {
    /// Name.
    pub arm: String,
    /// Participants.
    pub n: usize,
    /// Whether it is a control arm (no session delivered to anyone in it).
    pub control: bool,
    /// Every term estimated for at least one participant.
    pub terms: Vec<TermSummary>,
}

impl ArmSummary {
    /// One term's summary.
    pub fn term(&self, t: Term) -> Option<&TermSummary> {
        self.terms.iter().find(|s| s.term == t)
    }
}

/// The whole pilot.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PilotAnalysis {
    /// Each participant, baseline to last visit.
    pub participants: Vec<IntervalAnalysis>,
    /// Participants with more than two visits: each pair of consecutive visits.
    pub between_visits: Vec<IntervalAnalysis>,
    /// Each arm, in order of first appearance.
    pub arms: Vec<ArmSummary>,
    /// Warnings about the measurements.
    pub warnings: Vec<Warning>,
    /// The control arm the differences are taken from, if any.
    pub control: Option<String>,
    /// The model's thermic effect of food, as used: the participants' plans' own
    /// (their mean, with a warning, when the plans differ).
    pub tef_fraction: f64,
    /// The standing cautions ([`crate::safety::CAUTIONS`]); each participant's
    /// screening result is in their row (`participants[].screening`).
    pub cautions: Vec<&'static str>,
}

/// Summarise values `y` with measurement variances `v`.
pub fn summarise(term: Term, values: &[(f64, f64)]) -> TermSummary {
    let n = values.len();
    let nf = n as f64;
    let mean = values.iter().map(|x| x.0).sum::<f64>() / nf;
    let mean_var = values.iter().map(|x| x.1).sum::<f64>() / nf;
    let mut s = TermSummary {
        term,
        n,
        mean,
        mean_interval: None,
        observed_sd: None,
        measurement_sd: mean_var.sqrt(),
        between_sd: None,
        between_sd_interval: None,
        vs_control: None,
        note: None,
    };
    if n < 2 {
        s.note = Some(format!(
            "{n} participant: too few to estimate a spread or an interval; the mean only"
        ));
        return s;
    }
    let s2 = values.iter().map(|x| (x.0 - mean).powi(2)).sum::<f64>() / (nf - 1.0);
    let half = t_quantile(nf - 1.0, 0.975) * (s2 / nf).sqrt();
    s.mean_interval = Some((mean - half, mean + half));
    s.observed_sd = Some(s2.sqrt());
    if n < MIN_FOR_SPREAD {
        s.note = Some(format!(
            "{n} participants: too few to estimate a between-participant spread (at least {MIN_FOR_SPREAD}); the mean only"
        ));
        return s;
    }
    let tau2 = (s2 - mean_var).max(0.0);
    let df = nf - 1.0;
    let lo = (df * s2 / chi2_quantile(df, 0.975) - mean_var).max(0.0);
    let hi = (df * s2 / chi2_quantile(df, 0.025) - mean_var).max(0.0);
    s.between_sd = Some(tau2.sqrt());
    s.between_sd_interval = Some((lo.sqrt(), hi.sqrt()));
    if mean_var > 0.0 && s2 <= mean_var {
        s.note = Some(
            "the spread across participants is no larger than the measurement error: the between-participant SD is estimated as 0".to_string(),
        );
    }
    s
}

/// Welch's difference of means with its 95 % interval.
fn welch(a: &[(f64, f64)], b: &[(f64, f64)]) -> Option<(f64, f64, f64)> {
    if a.len() < 2 || b.len() < 2 {
        return None;
    }
    let stats = |x: &[(f64, f64)]| {
        let n = x.len() as f64;
        let m = x.iter().map(|v| v.0).sum::<f64>() / n;
        let s2 = x.iter().map(|v| (v.0 - m).powi(2)).sum::<f64>() / (n - 1.0);
        (m, s2 / n, n)
    };
    let (ma, va, na) = stats(a);
    let (mb, vb, nb) = stats(b);
    let se2 = va + vb;
    let df = if se2 > 0.0 {
        se2 * se2 / (va * va / (na - 1.0) + vb * vb / (nb - 1.0))
    } else {
        na + nb - 2.0
    };
    let half = t_quantile(df, 0.975) * se2.sqrt();
    let d = ma - mb;
    Some((d, d - half, d + half))
}

/// Check and analyse every participant (baseline to last visit) and summarise per
/// arm. The control arm is the first arm whose participants received no session.
pub fn analyse(participants: &[PilotParticipant], c: &Constants) -> Result<PilotAnalysis, Error> {
    let mut warnings = Vec::new();
    let mut each = Vec::with_capacity(participants.len());
    let mut between = Vec::new();
    for p in participants {
        if p.visits.len() < 2 {
            warnings.push(Warning {
                code: "pilot-one-visit",
                message: format!(
                    "participant {} has {} body-composition visit(s): left out of the analysis (it needs a baseline and a later visit)",
                    p.code,
                    p.visits.len()
                ),
            });
            continue;
        }
        warnings.extend(check(p)?);
        each.push(analyse_interval(p, c, 0, p.visits.len() - 1)?);
        if p.visits.len() > 2 {
            for k in 0..p.visits.len() - 1 {
                between.push(analyse_interval(p, c, k, k + 1)?);
            }
        }
    }
    if each.is_empty() {
        return Err(Error::Usage(
            "no participant has two body-composition visits; the analysis needs a baseline and a later visit".to_string(),
        ));
    }
    let mut names: Vec<String> = Vec::new();
    for a in &each {
        if !names.contains(&a.arm) {
            names.push(a.arm.clone());
        }
    }
    let values = |arm: &str, t: Term| -> Vec<(f64, f64)> {
        each.iter()
            .filter(|a| a.arm == arm)
            .filter_map(|a| a.term(t))
            .collect()
    };
    let is_control = |arm: &str| {
        each.iter()
            .filter(|a| a.arm == arm)
            .all(|a| a.delivered == 0.0)
    };
    let control = names.iter().find(|n| is_control(n)).cloned();
    let mut arms = Vec::new();
    for name in &names {
        let mut terms = Vec::new();
        for t in Term::ALL {
            let v = values(name, t);
            if v.is_empty() {
                continue;
            }
            let mut s = summarise(t, &v);
            if let Some(ctl) = &control
                && ctl != name
            {
                s.vs_control = welch(&v, &values(ctl, t));
            }
            terms.push(s);
        }
        arms.push(ArmSummary {
            arm: name.clone(),
            n: each.iter().filter(|a| &a.arm == name).count(),
            control: is_control(name),
            terms,
        });
    }
    for a in &arms {
        if a.n < MIN_FOR_SPREAD {
            warnings.push(Warning {
                code: "pilot-few-participants",
                message: format!(
                    "arm \"{}\" has {} participant(s): too few to estimate a between-participant spread (at least {MIN_FOR_SPREAD}); the mean only",
                    a.arm, a.n
                ),
            });
        }
    }
    let tef_fraction = shared_tef(&each, &mut warnings);
    Ok(PilotAnalysis {
        participants: each,
        between_visits: between,
        arms,
        warnings,
        control,
        tef_fraction,
        cautions: crate::safety::CAUTIONS.to_vec(),
    })
}

/// The thermic effect of food the participants' analyses used: their common value,
/// or their mean with a warning naming the values when their plans differ.
fn shared_tef(each: &[IntervalAnalysis], warnings: &mut Vec<Warning>) -> f64 {
    let first = each[0].constants.tef_fraction;
    if each.iter().all(|a| a.constants.tef_fraction == first) {
        return first;
    }
    let mean = each.iter().map(|a| a.constants.tef_fraction).sum::<f64>() / each.len() as f64;
    let mut values: Vec<String> = Vec::new();
    for a in each {
        let v = format!("{} ({})", a.constants.tef_fraction, a.code);
        if values.len() < 8 {
            values.push(v);
        }
    }
    warnings.push(Warning {
        code: "pilot-mixed-model-constants",
        message: format!(
            "the participants' plans give different tef_fraction values ({}); each participant is analysed with their own, and the scenario block's effective intake_fraction uses their mean {mean:.4}",
            values.join(", ")
        ),
    });
    mean
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moment_estimator_removes_measurement_variance() {
        // Values 1..5: observed variance 2.5; measurement variance 1 each -> 1.5.
        let v: Vec<(f64, f64)> = (1..=5).map(|i| (i as f64, 1.0)).collect();
        let s = summarise(Term::Gap, &v);
        assert!((s.mean - 3.0).abs() < 1e-12);
        assert!((s.between_sd.unwrap() - 1.5f64.sqrt()).abs() < 1e-12);
        // Measurement variance above the observed: floored at 0.
        let v: Vec<(f64, f64)> = (1..=5).map(|i| (i as f64, 4.0)).collect();
        assert_eq!(summarise(Term::Gap, &v).between_sd, Some(0.0));
        // Two participants: mean only.
        let s = summarise(Term::Gap, &[(1.0, 0.0), (2.0, 0.0)]);
        assert!(s.between_sd.is_none() && s.note.is_some());
    }
}
