//! From a pilot's measurements to the next trial's assumptions
//! (docs/pilot-analysis.md).
//!
//! Per participant, between two body-composition visits: the change in the body's
//! energy stores `rho_F dF + rho_L dL` as an average rate (kcal/day), the net
//! exercise energy delivered by the recorded sessions, the share of it that reached
//! the stores and the gap; with a total energy expenditure (TEE) the intake by the
//! energy balance `EI = TEE + dS/dt`; with measured RMR the adaptation beyond what
//! the RMR equation predicts at the measured composition; and the gap split into
//! intake, resting metabolism and the rest, each with its uncertainty from the
//! measurements' precision ([`precision`]). Per arm ([`arm`]): each term's mean and
//! between-participant SD with the measurement error removed. Into the next study:
//! [`scenario::scenario_block`] writes the distributions as `[[scenario]]` values,
//! [`report`] renders the table and chart.
//!
//! The core is pure: no files, clock, environment or printing.
//!
//! The decomposition rests on the model's energy balance (MODEL.md 2-3): with the
//! participant weight-stable at baseline (`EI0 = EE0`), over an interval
//! `dS/dt = dEI - dRMR - dTEF - dAE - X`, so the gap `X + dS/dt` between the
//! delivered and the achieved deficit is `(1 - beta) dEI` (intake, its own thermic
//! effect deducted) `+ (RMR0 - mean RMR)` (resting) `+ (AE0 - mean AE)` (the rest).

pub mod arm;
pub mod gather;
pub mod import;
mod lin;
pub mod precision;
pub mod report;
pub mod scenario;
mod term;

pub use crate::measure::{
    KCAL_PER_MJ, MASS_REFUSE_KG, MASS_WARN_KG, RmrMeasure, TeeMeasure, Visit, check_rmr, check_tee,
    check_visit,
};
use crate::measure::{input_error, place, warn};
pub use arm::{ArmSummary, PilotAnalysis, TermSummary, analyse};
use lin::Lin;
pub use term::Term;

use crate::error::{Error, Location};
use crate::model::{Constants, Sex};
use crate::safety::{ScreeningOutcome, Warning};
use chrono::NaiveDate;
use serde::Serialize;

/// z for a two-sided 95 % normal interval (kept in [`crate::stats`]).
pub use crate::stats::Z95;

/// Largest distance of a TEE or RMR measurement from a visit for it to count as
/// at that visit, days (common practice, no source).
pub const MATCH_DAYS: i64 = 7;

/// Smallest mass lost between baseline and a visit for the adaptation per kg to be
/// estimated, kg (below it the ratio is dominated by noise; common practice).
pub const MIN_LOSS_FOR_PER_KG: f64 = 1.0;

/// The participant as the RMR equation needs them.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Body {
    /// Sex.
    pub sex: Sex,
    /// Age at baseline, years (held constant, as in the model).
    pub age_years: f64,
    /// Height, cm.
    pub height_cm: f64,
}

/// The net exercise energy of one delivered session (above the participant's rest,
/// by the dose rule [`crate::model::Physiology::net_kcal_per_min`]).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Delivered {
    /// Date.
    pub date: NaiveDate,
    /// Net energy, kcal.
    pub net_kcal: f64,
}

/// Everything measured for one participant.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PilotParticipant {
    /// Code.
    pub code: String,
    /// Arm.
    pub arm: String,
    /// Sex, age and height.
    pub body: Body,
    /// Body-composition visits; the first is the baseline.
    pub visits: Vec<Visit>,
    /// Measured RMRs.
    pub rmr: Vec<RmrMeasure>,
    /// TEE periods. One that ends before the first visit is the baseline
    /// (the participant taken as weight-stable then, so intake = TEE).
    pub tee: Vec<TeeMeasure>,
    /// Delivered sessions' net energy.
    pub sessions: Vec<Delivered>,
    /// Baseline intake, kcal/day, and its SD, when stated without a baseline TEE.
    pub baseline_intake: Option<(f64, Option<f64>)>,
    /// The protocol's first and last date, when known: visits outside are refused.
    pub protocol: Option<(NaiveDate, NaiveDate)>,
    /// The model constants of the participant's plan (its `[model]` table: energy
    /// densities, RMR equation, thermic effect of food); None: the constants given
    /// to the analysis.
    pub constants: Option<Constants>,
    /// The participant's pre-participation screening result (from the plan's
    /// answers, [`crate::safety::screen`]); None: not recorded.
    pub screening: Option<ScreeningOutcome>,
}

impl PilotParticipant {
    /// The constants the analysis uses for this participant: the plan's own, else
    /// `default`.
    pub fn constants_or<'a>(&'a self, default: &'a Constants) -> &'a Constants {
        self.constants.as_ref().unwrap_or(default)
    }

    /// The screening result the reports show: the recorded one, else the
    /// "screening not recorded" result of [`crate::safety::screen`].
    pub fn screening_outcome(&self) -> ScreeningOutcome {
        self.screening
            .clone()
            .unwrap_or_else(|| crate::safety::screen(None, false))
    }
}

/// A value with its standard deviation and 95 % interval (normal, first order).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Estimate {
    /// Value.
    pub value: f64,
    /// Standard deviation from the measurements' precision.
    pub sd: f64,
    /// Lower 95 % limit.
    pub lo: f64,
    /// Upper 95 % limit.
    pub hi: f64,
}

impl Estimate {
    fn of(l: &Lin) -> Estimate {
        let sd = l.sd();
        Estimate {
            value: l.value,
            sd,
            lo: l.value - Z95 * sd,
            hi: l.value + Z95 * sd,
        }
    }
}

/// The gap split into its causes, kcal/day (averages over the interval).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Decomposition {
    /// Intake: `(1 - beta)` times the rise of intake over baseline (the extra food's
    /// own thermic effect deducted). None without a TEE.
    pub intake: Option<Estimate>,
    /// Resting metabolism: baseline RMR minus the interval's mean measured RMR
    /// (trapezoid over the visits with an RMR). None without RMR at both ends.
    pub resting: Option<Estimate>,
    /// Of `resting`, the part the RMR equation explains by the measured
    /// composition.
    pub resting_explained: Option<Estimate>,
    /// Of `resting`, the adaptation beyond the equation.
    pub resting_adaptation: Option<Estimate>,
    /// The rest: the gap minus the terms above (other movement, and error). With
    /// neither a TEE nor RMR it is the whole gap.
    pub rest: Estimate,
    /// Of `rest`, the fall of non-exercise activity the lower mass explains
    /// (`delta * (M0 - mean M)`, `delta = AE0 / M0`). Needs a baseline TEE or
    /// intake and a baseline RMR.
    pub rest_explained: Option<Estimate>,
    /// What the available data cannot separate, in plain words.
    pub cannot_separate: String,
}

/// One participant between two visits.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct IntervalAnalysis {
    /// Code.
    pub code: String,
    /// Arm.
    pub arm: String,
    /// First visit's date.
    pub from: NaiveDate,
    /// Second visit's date.
    pub to: NaiveDate,
    /// Days between.
    pub days: f64,
    /// The participant's screening result (ACSM 2015 grid, as the schedule shows
    /// it; "screening not recorded" when the plan has no answers).
    pub screening: ScreeningOutcome,
    /// The model constants used (the participant's plan's `[model]`).
    pub constants: Constants,
    /// Mass at the two visits (fat + fat-free), kg.
    pub mass_kg: (f64, f64),
    /// Rate of change of the energy stores, kcal/day (negative when they fall).
    pub stores: Estimate,
    /// Achieved deficit, kcal/day (`-stores`).
    pub achieved: Estimate,
    /// Net exercise energy delivered, kcal/day (exact: counted from the records).
    pub delivered: f64,
    /// Sessions counted.
    pub sessions: usize,
    /// Achieved over delivered (None with nothing delivered).
    pub share: Option<Estimate>,
    /// Delivered minus achieved, kcal/day.
    pub gap: Estimate,
    /// Intake during the interval by the energy balance, kcal/day.
    pub intake: Option<Estimate>,
    /// Baseline intake, kcal/day.
    pub baseline_intake: Option<Estimate>,
    /// Intake change from baseline, kcal/day.
    pub intake_change: Option<Estimate>,
    /// Intake change over delivered energy (the model's `intake_fraction`).
    pub intake_fraction: Option<Estimate>,
    /// RMR the equation predicts at the second visit's composition, scaled by
    /// the baseline measurement, kcal/day.
    pub rmr_predicted: Option<Estimate>,
    /// Measured RMR at the second visit, kcal/day.
    pub rmr_measured: Option<f64>,
    /// Predicted minus measured RMR at the second visit, kcal/day.
    pub rmr_adaptation: Option<Estimate>,
    /// That per kg lost since baseline (the model's `rmr_adaptation_kcal_per_kg`).
    pub rmr_adaptation_per_kg: Option<Estimate>,
    /// The rest's unexplained part over delivered energy (the model's
    /// `activity_fraction`).
    pub activity_fraction: Option<Estimate>,
    /// The gap split.
    pub decomposition: Decomposition,
    /// Per-term values with their full error structure, for the arm summary.
    #[serde(skip)]
    pub(crate) terms: Vec<(Term, Lin)>,
}

/// Check one participant's measurements: units, ranges, date order, composition
/// against the weighed mass, TEE periods between visits. Errors name the
/// participant, the row and the value; warnings are returned.
pub fn check(p: &PilotParticipant) -> Result<Vec<Warning>, Error> {
    let mut warnings = Vec::new();
    let who = &p.code;
    if p.visits.len() < 2 {
        let at = p
            .visits
            .first()
            .map_or_else(|| Location::file("measurements"), |v| v.at.clone());
        return Err(input_error(
            &at,
            "visits",
            format!(
                "participant {who} has {} body-composition visit(s); the analysis needs at least two (baseline and a later visit)",
                p.visits.len()
            ),
        ));
    }
    for (k, v) in p.visits.iter().enumerate() {
        warnings.extend(check_visit(who, v)?);
        if k > 0 && v.date <= p.visits[k - 1].date {
            return Err(input_error(
                &v.at,
                "date",
                format!(
                    "participant {who}: visit of {} comes after the visit of {}; visits must be in date order, one per date",
                    v.date,
                    p.visits[k - 1].date
                ),
            ));
        }
        if let Some((start, end)) = p.protocol
            && (v.date < start || v.date > end + chrono::Days::new(1))
        {
            return Err(input_error(
                &v.at,
                "date",
                format!(
                    "participant {who}: visit of {} is outside the protocol ({start} to {end})",
                    v.date
                ),
            ));
        }
    }
    for r in &p.rmr {
        check_rmr(who, r)?;
    }
    let first = p.visits[0].date;
    let last = p.visits[p.visits.len() - 1].date;
    for t in &p.tee {
        check_tee(who, t)?;
        let (s, e) = t.span();
        let baseline = e <= first;
        if !baseline && (s < first || e > last) {
            return Err(input_error(
                &t.at,
                "first",
                format!(
                    "participant {who}: TEE period {} to {} does not lie between two body-composition visits ({first} to {last}); a period ending before {first} counts as the baseline",
                    t.first, t.last
                ),
            ));
        }
        if baseline && (first - e).num_days() > 30 {
            warnings.push(warn(
                "pilot-old-baseline-tee",
                format!(
                    "{}: participant {who}: the baseline TEE period ends {} days before the baseline visit of {first}",
                    place(&t.at),
                    (first - e).num_days()
                ),
            ));
        }
    }
    if let Some((ei, sd)) = p.baseline_intake {
        if ei.is_finite() && ei > 0.0 && ei < 40.0 {
            return Err(Error::Usage(format!(
                "participant {who}: baseline intake {ei} looks like MJ/day; give kcal/day"
            )));
        }
        if !(ei.is_finite() && (800.0..=8000.0).contains(&ei)) {
            return Err(Error::Usage(format!(
                "participant {who}: baseline intake {ei} kcal/day is out of range; allowed 800 to 8000"
            )));
        }
        if let Some(sd) = sd
            && !(sd.is_finite() && (0.0..=2000.0).contains(&sd))
        {
            return Err(Error::Usage(format!(
                "participant {who}: baseline intake SD {sd} is out of range; allowed 0 to 2000 kcal/day"
            )));
        }
    }
    for s in &p.sessions {
        if !(s.net_kcal.is_finite() && s.net_kcal >= 0.0) {
            return Err(Error::Usage(format!(
                "participant {who}: session of {} has net energy {}; it must be 0 or more",
                s.date, s.net_kcal
            )));
        }
    }
    Ok(warnings)
}

/// Error-source ids within one participant.
fn fat_id(k: usize) -> u32 {
    2 * k as u32
}
fn lean_id(k: usize) -> u32 {
    2 * k as u32 + 1
}
fn rmr_id(j: usize) -> u32 {
    100_000 + j as u32
}
fn tee_id(j: usize) -> u32 {
    200_000 + j as u32
}
const INTAKE_ID: u32 = 300_000;

struct Measured<'a> {
    p: &'a PilotParticipant,
    c: &'a Constants,
    fat: Vec<Lin>,
    lean: Vec<Lin>,
}

impl Measured<'_> {
    fn mass(&self, k: usize) -> Lin {
        self.fat[k].add(&self.lean[k])
    }

    /// Rate of change of the stores between visits `a` and `b`, kcal/day.
    fn stores(&self, a: usize, b: usize) -> Lin {
        let days = (self.p.visits[b].date - self.p.visits[a].date).num_days() as f64;
        self.fat[b]
            .sub(&self.fat[a])
            .combine(
                self.c.fat_kcal_per_kg,
                &self.lean[b].sub(&self.lean[a]),
                self.c.lean_kcal_per_kg,
            )
            .scale(1.0 / days)
    }

    /// The RMR equation at visit `k`'s measured composition.
    fn equation(&self, k: usize) -> Lin {
        let b = self.p.body;
        let eq = self.c.rmr_equation;
        Lin::map(&[&self.fat[k], &self.lean[k]], 1e-3, |x| {
            eq.kcal_per_day(b.sex, x[0] + x[1], x[1], b.height_cm, b.age_years)
        })
    }

    /// The measured RMR at visit `k` (the nearest within [`MATCH_DAYS`]).
    fn rmr_at(&self, k: usize) -> Option<Lin> {
        let d = self.p.visits[k].date;
        self.p
            .rmr
            .iter()
            .enumerate()
            .filter(|(_, r)| (r.date - d).num_days().abs() <= MATCH_DAYS)
            .min_by_key(|(_, r)| (r.date - d).num_days().abs())
            .map(|(j, r)| {
                let sd =
                    r.sd.unwrap_or(precision::RMR_INDIRECT_CALORIMETRY.cv * r.kcal_per_day);
                Lin::measured(r.kcal_per_day, rmr_id(j), sd)
            })
    }

    /// Baseline intake: a TEE period ending before the first visit (taken as
    /// weight-stable), else the stated intake.
    fn baseline_intake(&self) -> Option<Lin> {
        let first = self.p.visits[0].date;
        let base: Vec<(usize, &TeeMeasure)> = self
            .p
            .tee
            .iter()
            .enumerate()
            .filter(|(_, t)| t.span().1 <= first)
            .collect();
        if let Some((j, t)) = base.last() {
            let sd =
                t.sd.unwrap_or(precision::tee(&t.method).cv * t.kcal_per_day);
            return Some(Lin::measured(t.kcal_per_day, tee_id(*j), sd));
        }
        self.p.baseline_intake.map(|(ei, sd)| {
            Lin::measured(
                ei,
                INTAKE_ID,
                sd.unwrap_or(precision::INTAKE_REPORTED.cv * ei),
            )
        })
    }

    /// Intake by the energy balance over the TEE periods inside visits `a` to `b`
    /// (weighted by their days), each with the store change of the closest visits
    /// around it.
    fn intake(&self, a: usize, b: usize) -> Option<(Lin, bool)> {
        let v = &self.p.visits;
        let mut total = Lin::exact(0.0);
        let mut days = 0.0;
        let mut whole = false;
        for (j, t) in self.p.tee.iter().enumerate() {
            let (s, e) = t.span();
            if s < v[a].date || e > v[b].date {
                continue;
            }
            let i = (a..=b).rev().find(|&i| v[i].date <= s)?;
            let k = (a..=b).find(|&k| v[k].date >= e)?;
            let sd =
                t.sd.unwrap_or(precision::tee(&t.method).cv * t.kcal_per_day);
            let ei = Lin::measured(t.kcal_per_day, tee_id(j), sd).add(&self.stores(i, k));
            let n = (e - s).num_days() as f64;
            total = total.combine(1.0, &ei, n);
            days += n;
            whole |= s == v[a].date && e == v[b].date;
        }
        (days > 0.0).then(|| (total.scale(1.0 / days), whole))
    }
}

/// Mean over time of values at the dates given, by the trapezoid rule.
fn trapezoid(points: &[(NaiveDate, Lin)]) -> Lin {
    let span = (points[points.len() - 1].0 - points[0].0).num_days() as f64;
    let mut acc = Lin::exact(0.0);
    for w in points.windows(2) {
        let h = (w[1].0 - w[0].0).num_days() as f64;
        acc = acc.add(&w[0].1.add(&w[1].1).scale(0.5 * h));
    }
    acc.scale(1.0 / span)
}

/// Analyse one participant between visits `a` and `b` (indices into the visits,
/// `a < b`), with the participant's own model constants, or `c` when they have
/// none ([`PilotParticipant::constants_or`]). Call [`check`] first.
pub fn analyse_interval(
    p: &PilotParticipant,
    c: &Constants,
    a: usize,
    b: usize,
) -> Result<IntervalAnalysis, Error> {
    check_interval(p, a, b)?;
    let c = p.constants_or(c);
    let m = measured(p, c);
    let beta = c.tef_fraction;
    let va = &p.visits[a];
    let vb = &p.visits[b];
    let days = (vb.date - va.date).num_days() as f64;
    let stores = m.stores(a, b);
    let in_interval: Vec<&Delivered> = p
        .sessions
        .iter()
        .filter(|s| s.date >= va.date && s.date < vb.date)
        .collect();
    let delivered = in_interval.iter().map(|s| s.net_kcal).sum::<f64>() / days;
    let achieved = stores.scale(-1.0);
    let gap = stores.add(&Lin::exact(delivered));
    let share = (delivered > 0.0).then(|| achieved.scale(1.0 / delivered));
    let frac = |l: &Lin| (delivered > 0.0).then(|| l.scale(1.0 / delivered));

    let ei0 = m.baseline_intake();
    let intake = m.intake(a, b);
    let intake_change = match (&intake, &ei0) {
        (Some((ei, _)), Some(ei0)) => Some(ei.sub(ei0)),
        _ => None,
    };
    let intake_fraction = intake_change.as_ref().and_then(frac);

    let rmr0 = m.rmr_at(0);
    let eq0 = m.equation(0);
    let m0 = m.mass(0);
    let rmr_b = m.rmr_at(b);
    // Predicted RMR at visit k: the baseline measurement scaled by the equation.
    let predicted = |k: usize, r0: &Lin| -> Lin {
        let eqk = m.equation(k);
        Lin::map(&[r0, &eq0, &eqk], 1e-3, |x| x[0] * x[2] / x[1])
    };
    let rmr_predicted = rmr0.as_ref().map(|r0| predicted(b, r0));
    let rmr_adaptation = match (&rmr_predicted, &rmr_b) {
        (Some(pr), Some(mb)) => Some(pr.sub(mb)),
        _ => None,
    };
    let loss = m0.sub(&m.mass(b));
    let rmr_adaptation_per_kg = per_kg(&rmr_adaptation, &loss);

    // Resting term: baseline RMR minus the mean measured RMR over the interval.
    let (resting, resting_explained) = resting_terms(&m, a, b, &rmr0, predicted);
    let resting_adaptation = match (&resting, &resting_explained) {
        (Some(r), Some(e)) => Some(r.sub(e)),
        _ => None,
    };
    let intake_term = intake_change.as_ref().map(|d| d.scale(1.0 - beta));
    let rest = rest_of(&gap, &intake_term, &resting);
    // Non-exercise activity at baseline from the balance: AE0 = (1 - beta) EI0 - RMR0.
    let rest_explained = rest_explained(&m, a, b, &ei0, &rmr0, beta);
    let activity_fraction = match (&intake_term, &resting, &rest_explained) {
        (Some(_), Some(_), Some(ex)) => frac(&rest.sub(ex)),
        _ => None,
    };
    let cannot_separate = cannot_separate(intake_term.is_some(), resting.is_some(), &intake);

    let terms = term_list(
        [
            (Term::Delivered, Lin::exact(delivered)),
            (Term::Achieved, achieved.clone()),
            (Term::Gap, gap.clone()),
            (Term::Rest, rest.clone()),
        ],
        [
            (Term::Share, &share),
            (Term::IntakeChange, &intake_change),
            (Term::IntakeFraction, &intake_fraction),
            (Term::Resting, &resting),
            (Term::RmrAdaptation, &rmr_adaptation),
            (Term::RmrAdaptationPerKg, &rmr_adaptation_per_kg),
            (Term::ActivityFraction, &activity_fraction),
        ],
    );
    let est = |l: &Option<Lin>| l.as_ref().map(Estimate::of);
    Ok(IntervalAnalysis {
        code: p.code.clone(),
        arm: p.arm.clone(),
        from: va.date,
        to: vb.date,
        days,
        screening: p.screening_outcome(),
        constants: *c,
        mass_kg: (m.mass(a).value, m.mass(b).value),
        stores: Estimate::of(&stores),
        achieved: Estimate::of(&achieved),
        delivered,
        sessions: in_interval.len(),
        share: est(&share),
        gap: Estimate::of(&gap),
        intake: intake.as_ref().map(|(l, _)| Estimate::of(l)),
        baseline_intake: est(&ei0),
        intake_change: est(&intake_change),
        intake_fraction: est(&intake_fraction),
        rmr_predicted: est(&rmr_predicted),
        rmr_measured: rmr_b.as_ref().map(|l| l.value),
        rmr_adaptation: est(&rmr_adaptation),
        rmr_adaptation_per_kg: est(&rmr_adaptation_per_kg),
        activity_fraction: est(&activity_fraction),
        decomposition: Decomposition {
            intake: est(&intake_term),
            resting: est(&resting),
            resting_explained: est(&resting_explained),
            resting_adaptation: est(&resting_adaptation),
            rest: Estimate::of(&rest),
            rest_explained: est(&rest_explained),
            cannot_separate,
        },
        terms,
    })
}

/// Refuse visit indices that do not make an interval.
fn check_interval(p: &PilotParticipant, a: usize, b: usize) -> Result<(), Error> {
    if !(a < b && b < p.visits.len()) {
        return Err(Error::Usage(format!(
            "participant {}: visits {a} and {b} do not make an interval (there are {} visits)",
            p.code,
            p.visits.len()
        )));
    }
    Ok(())
}

/// The gap less the intake and resting terms that were estimated.
fn rest_of(gap: &Lin, intake_term: &Option<Lin>, resting: &Option<Lin>) -> Lin {
    let mut rest = gap.clone();
    if let Some(t) = &intake_term {
        rest = rest.sub(t);
    }
    if let Some(r) = &resting {
        rest = rest.sub(r);
    }
    rest
}

/// The RMR adaptation per kg lost, when enough mass was lost
/// ([`MIN_LOSS_FOR_PER_KG`]).
fn per_kg(rmr_adaptation: &Option<Lin>, loss: &Lin) -> Option<Lin> {
    rmr_adaptation
        .as_ref()
        .filter(|_| loss.value >= MIN_LOSS_FOR_PER_KG)
        .map(|ad| ad.div(loss))
}

/// Every visit's fat and fat-free mass with its measurement error.
fn measured<'a>(p: &'a PilotParticipant, c: &'a Constants) -> Measured<'a> {
    let fat: Vec<Lin> = p
        .visits
        .iter()
        .enumerate()
        .map(|(k, v)| {
            let (df, _) = precision::composition(&v.method);
            Lin::measured(v.fat_kg, fat_id(k), v.fat_sd_kg.unwrap_or(df.cv * v.fat_kg))
        })
        .collect();
    let lean: Vec<Lin> = p
        .visits
        .iter()
        .enumerate()
        .map(|(k, v)| {
            let (_, dl) = precision::composition(&v.method);
            Lin::measured(
                v.fat_free_kg,
                lean_id(k),
                v.fat_free_sd_kg.unwrap_or(dl.cv * v.fat_free_kg),
            )
        })
        .collect();
    Measured { p, c, fat, lean }
}

/// The resting term (baseline RMR minus the mean measured RMR over visits `a` to
/// `b`) and the part of it the equation explains, when RMR was measured at both ends.
fn resting_terms(
    m: &Measured,
    a: usize,
    b: usize,
    rmr0: &Option<Lin>,
    predicted: impl Fn(usize, &Lin) -> Lin,
) -> (Option<Lin>, Option<Lin>) {
    let with_rmr: Vec<(usize, Lin)> = (a..=b)
        .filter_map(|k| m.rmr_at(k).map(|r| (k, r)))
        .collect();
    let ends = with_rmr.first().map(|x| x.0) == Some(a) && with_rmr.last().map(|x| x.0) == Some(b);
    match (rmr0, ends) {
        (Some(r0), true) => {
            let measured: Vec<(NaiveDate, Lin)> = with_rmr
                .iter()
                .map(|(k, r)| (m.p.visits[*k].date, r.clone()))
                .collect();
            let pred: Vec<(NaiveDate, Lin)> = with_rmr
                .iter()
                .map(|(k, _)| (m.p.visits[*k].date, predicted(*k, r0)))
                .collect();
            (
                Some(r0.sub(&trapezoid(&measured))),
                Some(r0.sub(&trapezoid(&pred))),
            )
        }
        _ => (None, None),
    }
}

/// The rest the balance explains: non-exercise activity at baseline,
/// `AE0 = (1 - beta) EI0 - RMR0`, per kg, times the mass lost on average over visits
/// `a` to `b`.
fn rest_explained(
    m: &Measured,
    a: usize,
    b: usize,
    ei0: &Option<Lin>,
    rmr0: &Option<Lin>,
    beta: f64,
) -> Option<Lin> {
    let m0 = m.mass(0);
    let masses: Vec<(NaiveDate, Lin)> = (a..=b).map(|k| (m.p.visits[k].date, m.mass(k))).collect();
    let mean_mass = trapezoid(&masses);
    match (ei0, rmr0) {
        (Some(ei0), Some(r0)) => {
            let ae0 = ei0.combine(1.0 - beta, r0, -1.0);
            let delta = ae0.div(&m0);
            Some(Lin::map(&[&delta, &m0, &mean_mass], 1e-3, |x| {
                x[0] * (x[1] - x[2])
            }))
        }
        _ => None,
    }
}

/// What the measurements available cannot tell apart, in words.
fn cannot_separate(intake_term: bool, resting: bool, intake: &Option<(Lin, bool)>) -> String {
    let cannot_separate = match (intake_term, resting) {
        (false, false) => "Without a TEE and a measured RMR the data show only the gap: eating more, a lower resting metabolism and less other movement cannot be told apart (the rest is the whole gap).".to_string(),
        (true, false) => "The TEE separates intake; without a measured RMR at both visits a lower resting metabolism cannot be told from less other movement (both are in the rest).".to_string(),
        (false, true) => "The measured RMR separates resting metabolism; without a TEE eating more cannot be told from less other movement (both are in the rest).".to_string(),
        (true, true) => "Intake (by the TEE) and resting metabolism (measured RMR) are separated; the rest holds less other movement together with every measurement's error, and one participant's rest cannot tell the two apart (only the arm's average can).".to_string(),
    };
    match intake {
        Some((_, false)) => format!(
            "{cannot_separate} The TEE covers only part of the interval: the intake found there is taken to hold for the whole interval."
        ),
        _ => cannot_separate,
    }
}

/// The terms always estimated, then those estimated here, in this order.
fn term_list(always: [(Term, Lin); 4], optional: [(Term, &Option<Lin>); 7]) -> Vec<(Term, Lin)> {
    let mut terms = always.to_vec();
    for (t, l) in optional {
        if let Some(l) = l {
            terms.push((t, l.clone()));
        }
    }
    terms
}

impl IntervalAnalysis {
    /// The value and its measurement variance of one term, if estimated.
    pub fn term(&self, t: Term) -> Option<(f64, f64)> {
        self.terms
            .iter()
            .find(|(k, _)| *k == t)
            .map(|(_, l)| (l.value, l.var()))
    }
}
