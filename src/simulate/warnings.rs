//! The warnings a simulated plan or cohort earns, each with a stable code (they go
//! into the JSON too). The thresholds are `safety::risk`'s.
//!
//! Thresholds: 300 min/week (US Physical Activity Guidelines 2018 upper range);
//! loss above 1% of body mass a week (NHLBI 1998 target rate of 0.45-0.9 kg/week,
//! common practice as a ceiling); BMI 18.5 (WHO underweight cut-off); MET 6 vigorous.

use crate::activity::Intensity;
use crate::activity::targets::{IntensityClass, relative_targets};
use crate::plan::{OverMax, Plan};
use crate::safety::Warning;
use crate::safety::risk;
pub use crate::safety::risk::intake_floor_kcal_per_day;
use crate::safety::screening::{ScreeningOutcome, VIGOROUS_MET};
use crate::simulate::{ScenarioRun, Simulation};

fn w(code: &'static str, message: String) -> Warning {
    Warning { code, message }
}

/// Week numbers as compact ranges: "3, 5, 9-12".
pub fn week_ranges(weeks: &[u32]) -> String {
    let mut parts: Vec<String> = Vec::new();
    let mut i = 0;
    while i < weeks.len() {
        let mut j = i;
        while j + 1 < weeks.len() && weeks[j + 1] == weeks[j] + 1 {
            j += 1;
        }
        parts.push(if i == j {
            weeks[i].to_string()
        } else {
            format!("{}-{}", weeks[i], weeks[j])
        });
        i = j + 1;
    }
    parts.join(", ")
}

fn plural(weeks: &[u32]) -> &'static str {
    if weeks.len() == 1 { "week" } else { "weeks" }
}

/// Every warning for a simulated plan, in a fixed order.
pub fn warnings(plan: &Plan, sim: &Simulation, screening: &ScreeningOutcome) -> Vec<Warning> {
    let mut out = Vec::new();
    let subject = &plan.participant.subject;
    let max_met = max_met(sim);
    if !screening.recorded {
        out.push(w("screening-not-recorded", "screening not recorded: the plan has no [participant.screening] answers; complete the ACSM pre-participation screening before the first session".to_string()));
    }
    if screening.clearance_missing {
        out.push(w("clearance-missing", format!("the screening result is \"{}\" and the plan's intensity (up to {max_met:.1} MET) needs medical clearance, which medical_clearance does not record", screening.recommendation)));
    }
    let week1 = sim.scenarios.first().and_then(|s| s.weeks.first());
    let vigorous_week1 = week1.and_then(|w| {
        w.sessions
            .iter()
            .find(|x| is_vigorous(plan, x.met, w.reference_mass_kg))
    });
    let regular = plan.participant.screening.map(|s| s.exercises_regularly);
    if let (Some(x), true) = (vigorous_week1, regular != Some(true)) {
        let how = match plan.participant.fitness.and_then(|f| f.vo2peak_l_min) {
            Some(_) => format!("{:.1} MET, at least 60% of VO2 reserve", x.met),
            None => format!("{:.1} MET", x.met),
        };
        out.push(w("vigorous-start", format!("vigorous intensity ({how}) from week 1 for someone not recorded as exercising regularly: start light to moderate and progress gradually")));
    }
    for a in plan.activities() {
        if let Some(note) = a.intensity.outside_valid_range() {
            out.push(w("acsm-equation-range", note));
        }
    }
    if plan
        .activities()
        .iter()
        .any(|a| matches!(a.intensity, Intensity::Vo2Reserve { .. }))
        && plan.protocol.weeks > 8
    {
        out.push(w("vo2peak-held", format!("the VO2-reserve intensity holds the baseline VO2peak ({:.2} l/min) for all {} weeks; training usually raises it, so retest it (for example every 8 to 12 weeks) and update the plan", plan.participant.fitness.and_then(|f| f.vo2peak_l_min).unwrap_or(0.0), plan.protocol.weeks)));
    }
    let b = &sim.baseline;
    if b.fat_mass_estimated {
        out.push(w("fat-mass-estimated", format!("fat mass {:.1} kg ({:.1}% body fat) is estimated from BMI (Deurenberg et al. 1991, SEE 4.1% body fat), not measured; a measured body_fat_percent (e.g. DXA) makes the projection firmer", b.fat_mass_kg, b.body_fat_percent)));
    }
    if subject.intake_kcal_per_day.is_some()
        && subject.pal.is_some()
        && b.drift_kcal_per_day.abs() >= 1.0
    {
        let verb = if b.drift_kcal_per_day > 0.0 {
            "above"
        } else {
            "below"
        };
        out.push(w("intake-pal-drift", format!("measured intake ({:.0} kcal/day) is {:.0} kcal/day {verb} the expenditure implied by PAL {:.2} ({:.0} kcal/day): the participant is out of balance before any exercise, and the model keeps that drift ({:+.2} kg in 4 weeks with no exercise)", b.intake_kcal_per_day, b.drift_kcal_per_day.abs(), b.pal, b.tdee_kcal_per_day, sim.drift_mass_4_weeks_kg)));
    }
    if subject.age_years >= 60.0 {
        let source = match plan.activity.intensity {
            Intensity::Compendium { .. } => {
                "the 2011 Compendium's METs assume 3.5 ml/kg/min at rest and tend to overstate the cost of activity"
            }
            Intensity::Met { .. } => {
                "a MET stated against the standard 3.5 ml/kg/min at rest tends to overstate the cost of activity"
            }
            _ => {
                "the ACSM equations' MET (VO2 / 3.5) assumes 3.5 ml/kg/min at rest, which overstates the resting rate, so the cost above rest may be misjudged"
            }
        };
        out.push(w("older-adult-met", format!("age {}: {source} in adults aged 60 or more (the Older Adult Compendium uses 2.7 ml/kg/min; Willis et al. 2024, J Sport Health Sci 13:13), so minutes may be too few for the energy target", crate::plan::participant::fmt_num(subject.age_years))));
    }
    if let Some(first) = sim.scenarios.first() {
        let easy_only: Vec<u32> = first
            .weeks
            .iter()
            .filter(|w| w.sessions.iter().any(|s| s.minutes == 0))
            .map(|w| w.week)
            .collect();
        if !easy_only.is_empty() {
            out.push(w("warm-up-meets-target", format!("the warm-up and cool-down alone meet the session's energy target in {} {}: those sessions have no time at the target intensity; shorten the warm-up or raise the dose", plural(&easy_only), week_ranges(&easy_only))));
        }
        let lost: Vec<(u32, f64, &str)> = first
            .weeks
            .iter()
            .filter_map(|w| {
                w.make_up
                    .as_ref()
                    .map(|m| (w.week, m.lost - m.made_up, m.unit))
            })
            .filter(|(_, short, _)| *short > 0.5)
            .collect();
        if !lost.is_empty() {
            let weeks: Vec<u32> = lost.iter().map(|(w, ..)| *w).collect();
            let total = lost.iter().fold(0.0, |a, (_, s, _)| a + s);
            let unit = lost[0].2;
            let why = match plan.protocol.make_up {
                crate::plan::MakeUp::None => "make_up = \"none\"",
                crate::plan::MakeUp::Spread => "the other sessions are at the maximum",
            };
            out.push(w("closure-dose-lost", format!("closures take {total:.0} {unit} of the dose in {} {} that is not made up ({why}); the participant receives less than the protocol dose those weeks", plural(&weeks), week_ranges(&weeks))));
        }
    }
    let mut per_scenario = Vec::new();
    for sc in &sim.scenarios {
        scenario_warnings(plan, sc, &mut per_scenario);
    }
    out.extend(merge_scenarios(per_scenario, &sim.scenarios));
    out
}

/// One warning for "every scenario" where all scenarios earn the same one.
fn merge_scenarios(warnings: Vec<Warning>, runs: &[ScenarioRun]) -> Vec<Warning> {
    if runs.len() < 2 {
        return warnings;
    }
    let strip = |w: &Warning| -> String {
        runs.iter()
            .find_map(|r| {
                w.message
                    .strip_prefix(&format!("scenario \"{}\": ", r.name))
            })
            .unwrap_or(&w.message)
            .to_string()
    };
    let mut out: Vec<Warning> = Vec::new();
    for wn in &warnings {
        let body = strip(wn);
        let same = warnings
            .iter()
            .filter(|o| o.code == wn.code && strip(o) == body)
            .count();
        if same == runs.len() {
            if !out
                .iter()
                .any(|o| o.code == wn.code && o.message.ends_with(&body))
            {
                out.push(w(wn.code, format!("every scenario: {body}")));
            }
        } else {
            out.push(wn.clone());
        }
    }
    out
}

fn max_met(sim: &Simulation) -> f64 {
    sim.scenarios
        .iter()
        .flat_map(|s| {
            s.weeks
                .iter()
                .flat_map(|w| w.sessions.iter().map(|x| x.met))
        })
        .fold(0.0, f64::max)
}

/// Whether a session is vigorous: by its %VO2R where VO2peak is known (ACSM: 60 % or
/// more), else by its MET (6 or more).
fn is_vigorous(plan: &Plan, met: f64, mass_kg: f64) -> bool {
    let t = relative_targets(
        met,
        mass_kg,
        plan.participant.subject.age_years,
        plan.participant.fitness.as_ref(),
    );
    t.class == IntensityClass::Vigorous || (t.vo2_reserve_fraction.is_none() && met >= VIGOROUS_MET)
}

/// Whether any planned session of any scenario is vigorous.
pub fn reaches_vigorous(plan: &Plan, sim: &Simulation) -> bool {
    sim.scenarios.iter().any(|s| {
        s.weeks.iter().any(|w| {
            w.sessions
                .iter()
                .any(|x| is_vigorous(plan, x.met, w.reference_mass_kg))
        })
    })
}

fn scenario_warnings(plan: &Plan, sc: &ScenarioRun, out: &mut Vec<Warning>) {
    let p = &plan.protocol;
    let name = &sc.name;
    let over: Vec<_> = sc
        .weeks
        .iter()
        .filter_map(|w| w.over_max.as_ref().map(|n| (w.week, n)))
        .collect();
    if let (Some(max), false) = (p.max_session_minutes, over.is_empty()) {
        let weeks: Vec<u32> = over.iter().map(|(w, _)| *w).collect();
        let still: Vec<u32> = over
            .iter()
            .filter(|(_, n)| n.still_over)
            .map(|(w, _)| *w)
            .collect();
        let longest = over
            .iter()
            .map(|(_, n)| n.minutes_before)
            .max()
            .unwrap_or(0);
        let what = match p.over_max {
            OverMax::Flag => "flag: the minutes were kept".to_string(),
            OverMax::Cap => {
                let short: f64 = over.iter().map(|(_, n)| n.shortfall_kcal).sum();
                let basis = match p.dose.basis {
                    crate::plan::EnergyBasis::Gross => "gross",
                    crate::plan::EnergyBasis::Net => "net",
                };
                let cut = over
                    .iter()
                    .find_map(|(wk, _)| sc.weeks.iter().find(|x| x.week == *wk))
                    .map_or(0, |x| x.minutes_per_session);
                let to = if f64::from(cut) < max {
                    format!(
                        "{cut} min (the maximum rounded down to the {}-minute step)",
                        p.round_minutes_to
                    )
                } else {
                    "the maximum".to_string()
                };
                format!(
                    "cap: sessions cut to {to}, {short:.0} kcal ({basis}) short of the prescribed dose in all"
                )
            }
            OverMax::AddSession => {
                let added = over
                    .iter()
                    .map(|(_, n)| n.added_sessions)
                    .max()
                    .unwrap_or(0);
                format!("add-session: up to {added} extra session(s) a week on spare days")
            }
            OverMax::Split => {
                "split: each session given as two equal bouts on the same day".to_string()
            }
        };
        let mut msg = format!(
            "scenario \"{name}\": prescribed sessions of up to {longest} min (before the policy acts) exceed the {max:.0}-minute maximum in {} {} ({what})",
            plural(&weeks),
            week_ranges(&weeks)
        );
        if p.over_max != OverMax::Flag && !still.is_empty() {
            msg.push_str(&format!(
                "; still over the maximum after that in {} {}",
                plural(&still),
                week_ranges(&still)
            ));
        }
        out.push(w("session-over-max", msg));
    }
    let long: Vec<u32> = sc
        .weeks
        .iter()
        .filter(|w| risk::weekly_minutes_over(w.sessions.iter().map(|s| s.minutes).sum()))
        .map(|w| w.week)
        .collect();
    if !long.is_empty() {
        out.push(w("weekly-minutes-over-300", format!("scenario \"{name}\": more than 300 minutes of exercise a week in {} {} (above the upper end of the usual guideline range; check feasibility and recovery)", plural(&long), week_ranges(&long))));
    }
    let mut prev = plan.participant.subject.mass_kg;
    let mut fast = Vec::new();
    for wk in &sc.weeks {
        if risk::loss_too_fast(prev, wk.end.mass_kg) {
            fast.push(wk.week);
        }
        prev = wk.end.mass_kg;
    }
    if !fast.is_empty() {
        out.push(w("loss-rate-over-1-percent", format!("scenario \"{name}\": projected loss exceeds 1% of body mass per week in {} {}; faster loss needs clinical supervision", plural(&fast), week_ranges(&fast))));
    }
    if risk::intake_screened(sc.compensation.diet_change_kcal_per_day) {
        intake_warnings(plan, sc, out);
    }
    let h = plan.participant.subject.height_cm;
    if let Some(wk) = sc
        .weeks
        .iter()
        .find(|wk| risk::underweight(wk.end.mass_kg, h))
    {
        out.push(w("bmi-below-18.5", format!("scenario \"{name}\": projected BMI falls below 18.5 kg/m^2 (underweight) by the end of week {} ({:.1} kg); stop or reduce the dose", wk.week, wk.end.mass_kg)));
    }
}

fn intake_warnings(plan: &Plan, sc: &ScenarioRun, out: &mut Vec<Warning>) {
    let name = &sc.name;
    let sex = plan.participant.subject.sex;
    let floor = risk::intake_floor_kcal_per_day(sex);
    let below_rmr: Vec<u32> = sc
        .weeks
        .iter()
        .filter(|w| risk::intake_below_rmr(w.end.intake_kcal_per_day, w.end.rmr_kcal_per_day))
        .map(|w| w.week)
        .collect();
    let lowest = sc
        .weeks
        .iter()
        .map(|w| w.end.intake_kcal_per_day)
        .fold(f64::INFINITY, f64::min);
    if !below_rmr.is_empty() {
        out.push(w("intake-below-rmr", format!("scenario \"{name}\": with the diet change, intake falls below the participant's RMR in {} {} (lowest {lowest:.0} kcal/day); never plan intake below RMR without clinical supervision", plural(&below_rmr), week_ranges(&below_rmr))));
    }
    let below_floor: Vec<u32> = sc
        .weeks
        .iter()
        .filter(|w| risk::intake_below_floor(w.end.intake_kcal_per_day, sex))
        .map(|w| w.week)
        .collect();
    if !below_floor.is_empty() {
        out.push(w("intake-below-floor", format!("scenario \"{name}\": with the diet change, intake falls below {floor:.0} kcal/day, the usual floor without supervision, in {} {} (lowest {lowest:.0} kcal/day)", plural(&below_floor), week_ranges(&below_floor))));
    }
}

/// A share as a percentage for a warning: never "0%" for a share above zero.
fn percent_of(share: f64) -> String {
    if share > 0.0 && share < 0.005 {
        "under 1%".to_string()
    } else {
        format!("{:.0}%", share * 100.0)
    }
}

/// Whether any of a study's activities is vigorous (6 MET or more; a study has no
/// VO2peak, so the absolute class). Leg cycling is judged at 70 kg.
pub fn study_is_vigorous(study: &crate::study::Study) -> bool {
    std::iter::once(&study.activity)
        .chain(study.rotation.iter().map(|r| &r.activity))
        .any(|a| a.intensity.met_at(70.0) >= VIGOROUS_MET)
}

/// The warnings about the roster's participants themselves: screening, clearance,
/// vigorous start, estimated fat mass, older adults.
fn member_warnings(
    study: &crate::study::Study,
    members: &[crate::simulate::cohort::Member],
) -> Vec<Warning> {
    let mut out = Vec::new();
    let ids = |f: &dyn Fn(&crate::simulate::cohort::Member) -> bool| -> (usize, String) {
        let v: Vec<&str> = members
            .iter()
            .filter(|m| f(m))
            .map(|m| m.participant.id.as_str())
            .collect();
        let shown = v.iter().take(8).copied().collect::<Vec<_>>().join(", ");
        let more = if v.len() > 8 {
            format!(" and {} more", v.len() - 8)
        } else {
            String::new()
        };
        (v.len(), format!("{shown}{more}"))
    };
    let vigorous = study_is_vigorous(study);
    let (n, who) = ids(&|m| m.participant.screening.is_none());
    if n > 0 {
        out.push(w("screening-not-recorded", format!("{n} of {} participants have no screening answers ({who}); complete the ACSM pre-participation screening before their first session", members.len())));
    }
    let (n, who) = ids(&|m| {
        crate::safety::screen(m.participant.screening.as_ref(), vigorous).clearance_missing
    });
    if n > 0 {
        out.push(w("clearance-missing", format!("{n} participant(s) need medical clearance that the roster does not record ({who}); obtain it before exercise begins")));
    }
    let (n, _) = ids(&|m| {
        vigorous
            && m.participant
                .screening
                .is_none_or(|s| !s.exercises_regularly)
    });
    if n > 0 {
        out.push(w("vigorous-start", format!("the study's activity is vigorous (6 MET or more) for {n} participant(s) not recorded as exercising regularly: start light to moderate and progress gradually (a ramp)")));
    }
    let (n, _) = ids(&|m| m.participant.subject.body_fat_percent.is_none());
    if n > 0 {
        out.push(w("fat-mass-estimated", format!("fat mass is estimated from BMI (Deurenberg et al. 1991, SEE 4.1% body fat) for {n} of {} participants; measured body fat makes the projections firmer", members.len())));
    }
    let (n, _) = ids(&|m| m.participant.subject.age_years >= 60.0);
    if n > 0 {
        out.push(w("older-adult-met", format!("{n} participant(s) are 60 or older: standard METs assume 3.5 ml/kg/min at rest and tend to overstate their cost of activity (Willis et al. 2024, J Sport Health Sci 13:13), so their minutes may be too few for the energy target")));
    }
    out
}

/// Warnings of a cohort: sessions over the maximum per arm, and the screening,
/// estimated body fat and age notes counted over participants.
pub fn cohort_warnings(
    study: &crate::study::Study,
    members: &[crate::simulate::cohort::Member],
    summary: &crate::simulate::cohort::CohortSummary,
) -> Vec<Warning> {
    let mut out = member_warnings(study, members);
    // Measured intake and PAL that disagree: the participant drifts before any
    // exercise, in every arm (as `schedule` warns for one plan).
    let drifting: Vec<String> = members
        .iter()
        .filter(|m| {
            let s = &m.participant.subject;
            s.intake_kcal_per_day.is_some() && s.pal.is_some()
        })
        .filter_map(|m| {
            let (b, _) =
                crate::model::energy::calibrate(&m.participant.subject, &study.constants).ok()?;
            (b.drift_kcal_per_day.abs() >= 1.0)
                .then(|| format!("{} {:+.0} kcal/day", m.participant.id, b.drift_kcal_per_day))
        })
        .collect();
    if !drifting.is_empty() {
        let n = drifting.len();
        let shown = drifting
            .iter()
            .take(8)
            .cloned()
            .collect::<Vec<_>>()
            .join(", ");
        let more = if n > 8 {
            format!(" and {} more", n - 8)
        } else {
            String::new()
        };
        out.push(w("intake-pal-drift", format!("{n} participant(s) have a measured intake that differs from the expenditure their PAL implies ({shown}{more}; intake minus expenditure): they are out of balance before any exercise, and the model keeps that drift in every arm, the control included; check the intake record and the PAL")));
    }
    for a in summary.arms.iter().filter(|a| a.participants == 0) {
        out.push(w("arm-empty", format!("arm \"{}\" has no participants: it has no summaries and no comparisons; recruit or allocate more participants", a.name)));
    }
    if let Some(control) = summary.arms.iter().find(|a| a.control)
        && control.scenarios.iter().any(|s| s.mass_change_kg.sd < 0.5)
    {
        out.push(w("sample-size-optimistic", format!("in the control arm \"{}\" the simulated SD of mass change is under 0.5 kg: the model holds only the stated uncertainties, while real trials also vary with diet, life events and measurement (often SDs of 3 kg or more over a year); the participants per arm are then far too few: give diet_change_kcal_per_day a distribution in [[scenario]] or take the SD from earlier trials", control.name)));
    }
    // The risky-plan signs of `schedule`, counted over each arm's runs.
    for a in &summary.arms {
        for s in &a.scenarios {
            let r = &s.risk_shares;
            let who = |share: f64| {
                format!(
                    "arm \"{}\", scenario \"{}\": {} of participants",
                    a.name,
                    s.name,
                    percent_of(share)
                )
            };
            if r.loss_rate_over_1_percent > 0.0 {
                out.push(w("loss-rate-over-1-percent", format!("{} lose more than 1% of body mass in some week; faster loss needs clinical supervision", who(r.loss_rate_over_1_percent))));
            }
            if r.weekly_minutes_over_300 > 0.0 {
                out.push(w("weekly-minutes-over-300", format!("{} have more than 300 minutes of exercise in some week (above the upper end of the usual guideline range; check feasibility and recovery)", who(r.weekly_minutes_over_300))));
            }
            if r.intake_below_rmr > 0.0 {
                out.push(w("intake-below-rmr", format!("{} have, with the diet change, an intake below their RMR in some week; never plan intake below RMR without clinical supervision", who(r.intake_below_rmr))));
            }
            if r.intake_below_floor > 0.0 {
                out.push(w("intake-below-floor", format!("{} have, with the diet change, an intake below the usual floor without supervision ({:.0} kcal/day for women, {:.0} for men) in some week", who(r.intake_below_floor), risk::intake_floor_kcal_per_day(crate::model::Sex::Female), risk::intake_floor_kcal_per_day(crate::model::Sex::Male))));
            }
            if r.bmi_below_18_5 > 0.0 {
                out.push(w("bmi-below-18.5", format!("{} fall below a BMI of 18.5 kg/m^2 (underweight) in some week; stop or reduce the dose", who(r.bmi_below_18_5))));
            }
        }
    }
    if let Some(max) = study.protocol.max_session_minutes {
        for a in &summary.arms {
            for s in a.scenarios.iter().filter(|s| s.over_max_share > 0.0) {
                out.push(w("session-over-max", format!("arm \"{}\", scenario \"{}\": {:.0}% of participants have sessions over the {max:.0}-minute maximum in some week before the \"{}\" policy acts (longest {} min in the last week)", a.name, s.name, s.over_max_share * 100.0, study.protocol.over_max.name(), s.minutes_last_week.max)));
            }
        }
    }
    out
}
