//! Raw study -> validated [`Study`], with the plan's validators for the shared
//! tables, so that every key means and is checked exactly as in a plan.

use super::dist::{Dist, MIN_NORMAL_MASS};
use super::raw::*;
use super::{Arm, Population, RmrError, Study, Uncertainty};
use crate::error::Error;
use crate::model::Compensation;
use crate::plan::raw::S;
use crate::plan::validate::Cx;
use crate::plan::{SCENARIO_KEYS, Scenario};
use std::ops::Range;

/// Read and validate a study file (read by [`crate::input::read`]).
pub fn load_study(path: &std::path::Path) -> Result<Study, Error> {
    let (name, text) = crate::input::read_text(path)?;
    parse_study(&name, &text)
}

/// Parse and validate study text; `file` names it in errors.
pub fn parse_study(file: &str, text: &str) -> Result<Study, Error> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let cx = Cx { file, src: text };
    let raw: RawStudy = crate::plan::validate::deserialize(file, text)?;
    study(&cx, raw)
}

fn study(cx: &Cx, raw: RawStudy) -> Result<Study, Error> {
    let rprot = raw
        .protocol
        .as_ref()
        .ok_or_else(|| cx.file_err("protocol", "missing required table [protocol]"))?;
    let ract = raw.activity.as_ref().ok_or_else(|| cx.file_err("activity", "missing required table [activity]; give exactly one of compendium_code, met, walking, running, cycling_watts"))?;
    let constants = cx.constants(raw.model.as_ref())?;
    let arms = arms(cx, raw.arm.as_deref())?;
    let first_dose = arms
        .iter()
        .find_map(|a| a.dose)
        .unwrap_or(super::CONTROL_DOSE);
    let protocol = cx.protocol(rprot, Some(first_dose))?;
    if let Some(v) = rprot
        .get_ref()
        .ramp
        .as_ref()
        .filter(|_| arms.iter().all(Arm::is_control))
    {
        return Err(cx.err(
            &v.span(),
            "protocol.ramp",
            "every arm is a control with no exercise; give at least one arm a dose",
        ));
    }
    if arms.iter().all(Arm::is_control) {
        return Err(cx.file_err(
            "arm",
            "every arm is a control with no exercise; give at least one arm a dose = { ... }",
        ));
    }
    // Relative intensity needs a participant's VO2peak, which a roster does not give.
    if ract.get_ref().vo2_reserve_percent.is_some() {
        let v = ract
            .get_ref()
            .vo2_reserve_percent
            .as_ref()
            .expect("checked");
        return Err(cx.err(&v.span(), "activity.vo2_reserve_percent", "a study cannot prescribe by VO2 reserve (the roster has no VO2peak); give compendium_code, met, walking, running or cycling_watts"));
    }
    let activity = cx.activity(ract.get_ref(), ract.span(), "activity", None)?;
    let rotation = cx
        .rotation(raw.rotation, &protocol, None)?
        .into_iter()
        .map(|(r, _)| r.0)
        .collect();
    let calendar = cx.calendar(raw.calendar.as_ref())?;
    let (scenarios, scenario_dists) = scenarios(cx, raw.scenario.as_deref())?;
    let uncertainty = raw
        .uncertainty
        .as_ref()
        .map(|u| uncertainty(cx, u))
        .transpose()?;
    let staffing = raw.staffing.as_ref().map(|s| staffing(cx, s)).transpose()?;
    let population = raw
        .synthetic
        .as_ref()
        .map(|s| synthetic(cx, s))
        .transpose()?;
    let n = arms.len() as u32;
    let meta = raw.study.as_ref().map(|m| m.get_ref());
    let block_size = match meta.and_then(|m| m.block_size.as_ref()) {
        Some(v) => {
            let b = cx.whole(v, "study.block_size", n, 100 * n)?;
            if b % n != 0 {
                return Err(cx.err(
                    &v.span(),
                    "study.block_size",
                    format!(
                        "value {b} is not a multiple of the {n} arms; allowed {n}, {}, {}, ...",
                        2 * n,
                        3 * n
                    ),
                ));
            }
            b
        }
        None => 2 * n,
    };
    let name = match meta.and_then(|m| m.name.as_ref()) {
        Some(v) if v.get_ref().trim().is_empty() => {
            return Err(cx.err(
                &v.span(),
                "study.name",
                "empty; leave the key out to use the file name",
            ));
        }
        Some(v) => v.get_ref().trim().to_string(),
        None => std::path::Path::new(cx.file)
            .file_stem()
            .map_or_else(|| cx.file.to_string(), |s| s.to_string_lossy().into_owned()),
    };
    Ok(Study {
        source_name: cx.file.to_string(),
        name,
        arms,
        protocol,
        activity,
        rotation,
        constants,
        scenarios,
        calendar,
        population,
        block_size,
        scenario_dists,
        uncertainty,
        staffing,
    })
}

/// `[staffing]`: group size and stations as whole numbers, opening hours per weekday.
fn staffing(cx: &Cx, rs: &S<RawStaffing>) -> Result<super::staffing::Staffing, Error> {
    use chrono::Weekday;
    let s = rs.get_ref();
    let whole = |v: &Option<crate::plan::raw::Num>, key: &str, hi: u32| {
        v.as_ref()
            .map(|v| cx.whole(v, &format!("staffing.{key}"), 1, hi))
            .transpose()
    };
    let mut opening_hours = Vec::new();
    if let Some(h) = &s.opening_hours {
        let h = h.get_ref();
        let days = [
            (Weekday::Mon, &h.mon, "mon"),
            (Weekday::Tue, &h.tue, "tue"),
            (Weekday::Wed, &h.wed, "wed"),
            (Weekday::Thu, &h.thu, "thu"),
            (Weekday::Fri, &h.fri, "fri"),
            (Weekday::Sat, &h.sat, "sat"),
            (Weekday::Sun, &h.sun, "sun"),
        ];
        for (weekday, v, name) in days {
            if let Some(v) = v {
                let (open, close) = super::staffing::parse_hours(v.get_ref())
                    .map_err(|m| cx.err(&v.span(), &format!("staffing.opening_hours.{name}"), m))?;
                opening_hours.push(super::staffing::OpeningHours {
                    weekday,
                    open,
                    close,
                });
            }
        }
    }
    Ok(super::staffing::Staffing {
        group_size: whole(&s.group_size, "group_size", 100)?,
        stations: whole(&s.stations, "stations", 10_000)?,
        opening_hours,
    })
}

/// The scenarios, each value fixed or a distribution. A scenario's `compensation`
/// holds the fixed values and, for a distribution, its centre (the value shown where
/// one number is needed; draws sample the distribution).
#[allow(clippy::type_complexity)]
fn scenarios(
    cx: &Cx,
    rs: Option<&[S<RawStudyScenario>]>,
) -> Result<(Vec<Scenario>, Vec<[Option<Dist>; 5]>), Error> {
    let Some(rs) = rs.filter(|r| !r.is_empty()) else {
        return Ok((
            vec![Scenario {
                name: "as prescribed".to_string(),
                compensation: Compensation::default(),
            }],
            vec![[None; 5]],
        ));
    };
    let mut out: Vec<Scenario> = Vec::new();
    let mut dists = Vec::new();
    for (i, r) in rs.iter().enumerate() {
        let s = r.get_ref();
        let tn = format!("scenario[{}]", i + 1);
        let n = cx.scenario_name(&s.name, &r.span(), &tn, &out)?;
        let mut compensation = Compensation::default();
        let mut d: [Option<Dist>; 5] = [None; 5];
        for (k, ((key, lo, hi, unit), v)) in SCENARIO_KEYS.iter().zip(s.values()).enumerate() {
            if let Some(v) = v {
                let dist = value(cx, v, &format!("{tn}.{key}"), *lo, *hi, unit)?;
                compensation.set(key, dist.centre());
                if !dist.is_fixed() {
                    d[k] = Some(dist);
                }
            }
        }
        out.push(Scenario {
            name: n.to_string(),
            compensation,
        });
        dists.push(d);
    }
    Ok((out, dists))
}

fn uncertainty(cx: &Cx, ru: &S<RawUncertainty>) -> Result<Uncertainty, Error> {
    let u = ru.get_ref();
    let tn = "uncertainty";
    let rmr_error = match &u.rmr_error {
        None => RmrError::Published,
        Some(v) => match v.get_ref() {
            RawRmrError::Word(w) if w == "published" => RmrError::Published,
            RawRmrError::Word(w) => {
                return Err(cx.err(&v.span(), "uncertainty.rmr_error", format!("unknown value \"{w}\"; allowed \"published\" (the equation's own relative error) or a relative SD from 0 to 0.3, e.g. 0.1")));
            }
            RawRmrError::Sd(x) if x.is_finite() && (0.0..=0.3).contains(x) => RmrError::Sd(*x),
            RawRmrError::Sd(x) => {
                return Err(cx.err(&v.span(), "uncertainty.rmr_error", format!("value {x} is out of range; allowed a relative SD from 0 to 0.3 (0.1 is 10%), or \"published\"")));
            }
        },
    };
    let num = |v: &Option<crate::plan::raw::Num>,
               key: &str,
               lo: f64,
               hi: f64,
               unit: &str,
               default: f64|
     -> Result<f64, Error> {
        Ok(cx
            .opt_number(v, &format!("{tn}.{key}"), lo, hi, unit)?
            .unwrap_or(default))
    };
    Ok(Uncertainty {
        rmr_error,
        body_fat_error_percent: num(
            &u.body_fat_error_percent,
            "body_fat_error_percent",
            0.0,
            10.0,
            " % body fat",
            DEURENBERG_SEE_PERCENT,
        )?,
        attendance: num(&u.attendance, "attendance", 0.05, 1.0, "", 1.0)?,
        dropout_per_week: num(
            &u.dropout_per_week,
            "dropout_per_week",
            0.0,
            0.5,
            " per week",
            0.0,
        )?,
    })
}

/// Deurenberg et al. 1991 (Br J Nutr 65:105): SEE of body fat from BMI, 4.1 %.
pub const DEURENBERG_SEE_PERCENT: f64 = 4.1;

fn arms(cx: &Cx, raw: Option<&[S<RawArm>]>) -> Result<Vec<Arm>, Error> {
    let Some(raw) = raw.filter(|r| !r.is_empty()) else {
        return Err(cx.file_err("arm", "no [[arm]]; give one [[arm]] per dose, each with a name and a dose = { kcal_per_kg_week = ... } (an arm with no dose is a control)"));
    };
    let mut out: Vec<Arm> = Vec::new();
    for (i, r) in raw.iter().enumerate() {
        let tn = format!("arm[{}]", i + 1);
        let a = r.get_ref();
        let name = cx.required(
            &a.name,
            &r.span(),
            &tn,
            "name",
            "every arm needs a unique, non-empty name",
        )?;
        let n = name.get_ref().trim();
        if n.is_empty() {
            return Err(cx.err(
                &name.span(),
                &format!("{tn}.name"),
                "empty; every arm needs a unique, non-empty name",
            ));
        }
        if n.contains(',') || n.chars().any(char::is_control) {
            return Err(cx.err(&name.span(), &format!("{tn}.name"), format!("\"{n}\" holds a comma or control character; arm names appear in CSV rosters, give a plain name")));
        }
        if out.iter().any(|o| o.name == n) {
            return Err(cx.err(
                &name.span(),
                &format!("{tn}.name"),
                format!("\"{n}\" is used by an earlier arm; names must be unique"),
            ));
        }
        let dose = a
            .dose
            .as_ref()
            .map(|d| cx.dose(d, &format!("{tn}.dose")))
            .transpose()?;
        out.push(Arm {
            name: n.to_string(),
            dose,
        });
    }
    Ok(out)
}

/// A fixed value or a distribution for `key`, within `lo..=hi` (the plan's range).
fn value(cx: &Cx, v: &S<RawValue>, key: &str, lo: f64, hi: f64, unit: &str) -> Result<Dist, Error> {
    let span: Range<usize> = v.span();
    let err = |msg: String| cx.err(&span, key, msg);
    let in_range = |x: f64, what: &str| -> Result<f64, Error> {
        if !x.is_finite() || x < lo || x > hi {
            Err(err(format!(
                "{what} {x} is out of range; allowed {lo} to {hi}{unit}"
            )))
        } else {
            Ok(x)
        }
    };
    let d = match v.get_ref() {
        RawValue::Fixed(x) => Dist::Fixed {
            value: in_range(*x, "value")?,
        },
        RawValue::Dist(d) => {
            let given = |name: &str, x: Option<f64>| -> Result<f64, Error> {
                x.ok_or_else(|| err(format!("dist = \"{}\" needs {name}", d.dist)))
            };
            let refuse = |name: &str, x: Option<f64>| -> Result<(), Error> {
                match x {
                    Some(_) => Err(err(format!("dist = \"{}\" takes no {name}", d.dist))),
                    None => Ok(()),
                }
            };
            let min = in_range(d.min.unwrap_or(lo), "min")?;
            let max = in_range(d.max.unwrap_or(hi), "max")?;
            if min > max {
                return Err(err(format!("min {min} is above max {max}")));
            }
            match d.dist.as_str() {
                "normal" => {
                    refuse("alpha", d.alpha)?;
                    refuse("beta", d.beta)?;
                    let mean = given("mean", d.mean)?;
                    let sd = given("sd", d.sd)?;
                    if !(mean.is_finite() && sd.is_finite() && sd > 0.0) {
                        return Err(err(format!(
                            "mean {mean} and sd {sd}: the mean must be finite and the sd above 0"
                        )));
                    }
                    let dist = Dist::Normal { mean, sd, min, max };
                    let kept = dist.kept_mass();
                    if kept < MIN_NORMAL_MASS {
                        return Err(err(format!(
                            "the bounds {min} to {max} keep {:.1}% of a normal with mean {mean} and sd {sd}; allowed bounds that keep at least {:.0}% (check the mean and units)",
                            kept * 100.0,
                            MIN_NORMAL_MASS * 100.0
                        )));
                    }
                    dist
                }
                "uniform" => {
                    for (n, x) in [
                        ("mean", d.mean),
                        ("sd", d.sd),
                        ("alpha", d.alpha),
                        ("beta", d.beta),
                    ] {
                        refuse(n, x)?;
                    }
                    if d.min.is_none() || d.max.is_none() {
                        return Err(err("dist = \"uniform\" needs min and max".to_string()));
                    }
                    Dist::Uniform { min, max }
                }
                "beta" => {
                    refuse("mean", d.mean)?;
                    refuse("sd", d.sd)?;
                    let alpha = given("alpha", d.alpha)?;
                    let beta = given("beta", d.beta)?;
                    if !(alpha.is_finite() && alpha > 0.0 && beta.is_finite() && beta > 0.0) {
                        return Err(err(format!(
                            "alpha {alpha} and beta {beta} must both be above 0"
                        )));
                    }
                    if d.min.is_none() || d.max.is_none() {
                        return Err(err(
                            "dist = \"beta\" needs min and max (the beta is scaled to them)"
                                .to_string(),
                        ));
                    }
                    Dist::Beta {
                        alpha,
                        beta,
                        min,
                        max,
                    }
                }
                other => {
                    return Err(err(format!(
                        "unknown dist \"{other}\"; allowed normal, uniform, beta"
                    )));
                }
            }
        }
    };
    Ok(d)
}

fn synthetic(cx: &Cx, rs: &S<RawSynthetic>) -> Result<Population, Error> {
    let s = rs.get_ref();
    let t = rs.span();
    let tn = "synthetic";
    let need = |v: &Option<S<RawValue>>,
                key: &str,
                lo: f64,
                hi: f64,
                unit: &str|
     -> Result<Dist, Error> {
        let v = cx.required(v, &t, tn, key, &format!("give a value or a distribution within {lo} to {hi}{unit}, e.g. {{ dist = \"normal\", mean = ..., sd = ... }}"))?;
        value(cx, v, &format!("{tn}.{key}"), lo, hi, unit)
    };
    let female_fraction = cx.number(
        cx.required(
            &s.female_fraction,
            &t,
            tn,
            "female_fraction",
            "allowed 0 to 1",
        )?,
        "synthetic.female_fraction",
        0.0,
        1.0,
        "",
    )?;
    Ok(Population {
        female_fraction,
        age_years: need(&s.age_years, "age_years", 18.0, 100.0, " years")?,
        height_cm_female: need(&s.height_cm_female, "height_cm_female", 120.0, 230.0, " cm")?,
        height_cm_male: need(&s.height_cm_male, "height_cm_male", 120.0, 230.0, " cm")?,
        bmi: need(&s.bmi, "bmi", 13.0, 80.0, " kg/m^2")?,
        body_fat_percent: s
            .body_fat_percent
            .as_ref()
            .map(|v| value(cx, v, "synthetic.body_fat_percent", 3.0, 70.0, " %"))
            .transpose()?,
        pal: s
            .pal
            .as_ref()
            .map(|v| value(cx, v, "synthetic.pal", 1.1, 2.5, ""))
            .transpose()?,
    })
}
