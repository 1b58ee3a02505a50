//! The plan's `[protocol]`, `[[rotation]]` and `[calendar]`: dates, session days,
//! ramp, dose, warm-up and cool-down, closures.

use super::fields::{Cx, fmt_num};
use super::raw::*;
use super::validate::DEFAULT_EASY_MET;
use super::*;
use crate::error::Error;
use std::ops::Range;

impl Cx<'_> {
    /// The `[[rotation]]` entries, each with its raw activity and span (for the
    /// positive-net-energy check once the baseline is known).
    #[allow(clippy::type_complexity)]
    pub(crate) fn rotation(
        &self,
        raw: Option<Vec<S<RawRotation>>>,
        protocol: &Protocol,
        fitness: Option<&Fitness>,
    ) -> Result<Vec<((RotationEntry, RawActivity), Range<usize>)>, Error> {
        let mut out: Vec<((RotationEntry, RawActivity), Range<usize>)> = Vec::new();
        let mut taken: Vec<(Weekday, usize)> = Vec::new();
        for (i, r) in raw.unwrap_or_default().into_iter().enumerate() {
            let span = r.span();
            let tn = format!("rotation[{}]", i + 1);
            let (days, act) = r.into_inner().split();
            let days_v = self.required(
                &days,
                &span,
                &tn,
                "days",
                "give the session days this activity is on, e.g. days = [\"fri\"]",
            )?;
            let dkey = format!("{tn}.days");
            let d = self.days(days_v, &dkey, false)?;
            for (w, sd) in d.iter().zip(days_v.get_ref()) {
                if !protocol.session_days.contains(w) && !protocol.spare_days.contains(w) {
                    return Err(self.err(
                        &sd.span(),
                        &dkey,
                        format!(
                            "\"{}\" is not a session day or spare day of the protocol; allowed {}",
                            weekday_name(*w),
                            protocol
                                .session_days
                                .iter()
                                .chain(&protocol.spare_days)
                                .map(|w| weekday_name(*w))
                                .collect::<Vec<_>>()
                                .join(", ")
                        ),
                    ));
                }
                if let Some((_, j)) = taken.iter().find(|(t, _)| t == w) {
                    return Err(self.err(
                        &sd.span(),
                        &dkey,
                        format!(
                            "\"{}\" is already given to rotation[{j}]; each day has one activity",
                            weekday_name(*w)
                        ),
                    ));
                }
            }
            taken.extend(d.iter().map(|w| (*w, i + 1)));
            let activity = self.activity(&act, span.clone(), &tn, fitness)?;
            out.push(((RotationEntry { days: d, activity }, act), span));
        }
        Ok(out)
    }

    pub(crate) fn calendar(&self, rc: Option<&S<RawCalendar>>) -> Result<CalendarSettings, Error> {
        let Some(rc) = rc else {
            return Ok(CalendarSettings::default());
        };
        let c = rc.get_ref();
        let time = |v: &Option<S<String>>, key: &str| -> Result<Option<chrono::NaiveTime>, Error> {
            v.as_ref()
                .map(|v| {
                    chrono::NaiveTime::parse_from_str(v.get_ref().trim(), "%H:%M").map_err(|_| {
                        self.err(&v.span(), key, format!("value \"{}\" is not a time of day; give 24-hour HH:MM such as \"07:30\"", v.get_ref()))
                    })
                })
                .transpose()
        };
        let text = |v: &Option<S<String>>, key: &str| -> Result<Option<String>, Error> {
            match v {
                Some(v) if v.get_ref().trim().is_empty() => {
                    Err(self.err(&v.span(), key, "empty; leave the key out instead"))
                }
                Some(v) if v.get_ref().chars().any(char::is_control) => Err(self.err(
                    &v.span(),
                    key,
                    "holds a control character (a line break or tab); give one line of text",
                )),
                Some(v) => Ok(Some(v.get_ref().trim().to_string())),
                None => Ok(None),
            }
        };
        let session_time = time(&c.session_time, "calendar.session_time")?;
        let second_bout_time = time(&c.second_bout_time, "calendar.second_bout_time")?;
        if let (None, Some(v)) = (session_time, &c.second_bout_time) {
            return Err(self.err(
                &v.span(),
                "calendar.second_bout_time",
                "given without calendar.session_time; give the first bout's time too",
            ));
        }
        if let (Some(a), Some(b), Some(v)) = (session_time, second_bout_time, &c.second_bout_time)
            && b <= a
        {
            return Err(self.err(
                &v.span(),
                "calendar.second_bout_time",
                format!(
                    "{} is not after session_time {}; allowed a later time the same day",
                    b.format("%H:%M"),
                    a.format("%H:%M")
                ),
            ));
        }
        let time_zone = text(&c.time_zone, "calendar.time_zone")?;
        if let (Some(tz), Some(v)) = (&time_zone, &c.time_zone)
            && !tz
                .chars()
                .all(|ch| ch.is_ascii_alphanumeric() || "/_+-".contains(ch))
        {
            return Err(self.err(&v.span(), "calendar.time_zone", format!("value \"{tz}\" is not a time-zone name; give an IANA name such as \"Europe/Berlin\" or \"UTC\"")));
        }
        Ok(CalendarSettings {
            session_time,
            second_bout_time,
            time_zone,
            location: text(&c.location, "calendar.location")?,
        })
    }

    /// Distinct weekdays. Session days (`spare = false`) must not be empty and are
    /// sorted Monday first; spare days may be empty and keep the order listed, which
    /// is the order `add-session` uses them in.
    pub(crate) fn days(
        &self,
        v: &S<Vec<S<String>>>,
        key: &str,
        spare: bool,
    ) -> Result<Vec<Weekday>, Error> {
        const DAYS: [(&str, Weekday); 7] = [
            ("mon", Weekday::Mon),
            ("tue", Weekday::Tue),
            ("wed", Weekday::Wed),
            ("thu", Weekday::Thu),
            ("fri", Weekday::Fri),
            ("sat", Weekday::Sat),
            ("sun", Weekday::Sun),
        ];
        if v.get_ref().is_empty() && !spare {
            return Err(self.err(
                &v.span(),
                key,
                "empty; give one or more of mon tue wed thu fri sat sun",
            ));
        }
        let mut out: Vec<Weekday> = Vec::new();
        for d in v.get_ref() {
            let w = self.choice(d, key, &DAYS)?;
            if out.contains(&w) {
                return Err(self.err(
                    &d.span(),
                    key,
                    format!(
                        "\"{}\" is listed twice; weekdays must be distinct",
                        d.get_ref()
                    ),
                ));
            }
            out.push(w);
        }
        if !spare {
            out.sort_by_key(|w| w.num_days_from_monday());
        }
        Ok(out)
    }

    /// The protocol; `arm_dose` is the dose of a study arm, which the protocol table
    /// must then not give.
    pub(crate) fn protocol(
        &self,
        rp: &S<RawProtocol>,
        arm_dose: Option<Dose>,
    ) -> Result<Protocol, Error> {
        let t = rp.span();
        let p = rp.get_ref();
        let tn = "protocol";
        let start = self.date(
            self.required(
                &p.start,
                &t,
                tn,
                "start",
                "give the first day of week 1, e.g. start = 2027-01-04",
            )?,
            "protocol.start",
        )?;
        let weeks = self.whole(
            self.required(&p.weeks, &t, tn, "weeks", "allowed whole numbers 1 to 520")?,
            "protocol.weeks",
            1,
            520,
        )?;
        let follow_up_weeks = p
            .follow_up_weeks
            .as_ref()
            .map(|v| self.whole(v, "protocol.follow_up_weeks", 0, 519))
            .transpose()?
            .unwrap_or(0);
        if weeks + follow_up_weeks > 520 {
            let span = p.follow_up_weeks.as_ref().map_or(t.clone(), |v| v.span());
            return Err(self.err(&span, "protocol.follow_up_weeks", format!("weeks ({weeks}) plus follow_up_weeks ({follow_up_weeks}) is {}, over the 520-week (10-year) horizon", weeks + follow_up_weeks)));
        }
        let session_days = self.days(
            self.required(
                &p.session_days,
                &t,
                tn,
                "session_days",
                "give one or more of mon tue wed thu fri sat sun",
            )?,
            "protocol.session_days",
            false,
        )?;
        let spare_days = match &p.spare_days {
            Some(v) => {
                let d = self.days(v, "protocol.spare_days", true)?;
                if let Some(clash) = d.iter().find(|w| session_days.contains(w)) {
                    return Err(self.err(
                        &v.span(),
                        "protocol.spare_days",
                        format!(
                            "\"{}\" is also a session day; spare days must be other weekdays",
                            weekday_name(*clash)
                        ),
                    ));
                }
                d
            }
            None => Vec::new(),
        };
        let (max_session_minutes, over_max, round_minutes_to) =
            self.session_limits(rp, &session_days, &spare_days)?;
        let dose = match (arm_dose, &p.dose) {
            (Some(_), Some(d)) => return Err(self.err(&d.span(), "protocol.dose", "a study gives the dose in each [[arm]], not in [protocol]; move it to an arm's dose = { ... }")),
            (Some(d), None) => d,
            (None, _) => self.dose(self.required(&p.dose, &t, tn, "dose", "add a [protocol.dose] table with exactly one of kcal_per_session, kcal_per_week, kcal_per_kg_week, minutes_per_week")?, "protocol.dose")?,
        };
        let ramp = p.ramp.as_ref().map(|r| self.ramp(r, weeks)).transpose()?;
        let warm_up = p
            .warm_up
            .as_ref()
            .map(|e| self.easy(e, "protocol.warm_up"))
            .transpose()?;
        let cool_down = p
            .cool_down
            .as_ref()
            .map(|e| self.easy(e, "protocol.cool_down"))
            .transpose()?;
        let closures = self.closures(p.closures.as_ref(), start, weeks)?;
        let make_up = match &p.make_up {
            Some(v) => self.choice(
                v,
                "protocol.make_up",
                &[("none", MakeUp::None), ("spread", MakeUp::Spread)],
            )?,
            None => MakeUp::None,
        };
        Ok(Protocol {
            start,
            weeks,
            follow_up_weeks,
            session_days,
            spare_days,
            max_session_minutes,
            over_max,
            round_minutes_to,
            dose,
            ramp,
            warm_up,
            cool_down,
            closures,
            make_up,
        })
    }

    /// `max_session_minutes`, `over_max` and `round_minutes_to`, checked together
    /// with the session and spare days.
    fn session_limits(
        &self,
        rp: &S<RawProtocol>,
        session_days: &[Weekday],
        spare_days: &[Weekday],
    ) -> Result<(Option<f64>, OverMax, u32), Error> {
        let t = rp.span();
        let p = rp.get_ref();
        let max_session_minutes = self.opt_number(
            &p.max_session_minutes,
            "protocol.max_session_minutes",
            5.0,
            600.0,
            " minutes",
        )?;
        let over_max = match &p.over_max {
            Some(v) => self.choice(
                v,
                "protocol.over_max",
                &[
                    ("flag", OverMax::Flag),
                    ("cap", OverMax::Cap),
                    ("add-session", OverMax::AddSession),
                    ("split", OverMax::Split),
                ],
            )?,
            None => OverMax::Flag,
        };
        if over_max != OverMax::Flag && max_session_minutes.is_none() {
            let span = p.over_max.as_ref().map_or(t.clone(), |v| v.span());
            return Err(self.err(
                &span,
                "protocol.over_max",
                format!(
                    "\"{}\" needs protocol.max_session_minutes (5 to 600)",
                    over_max.name()
                ),
            ));
        }
        let round_minutes_to = p
            .round_minutes_to
            .as_ref()
            .map(|v| self.whole(v, "protocol.round_minutes_to", 1, 30))
            .transpose()?
            .unwrap_or(1);
        if let Some(max) = max_session_minutes
            && f64::from(round_minutes_to) > max
        {
            {
                let span = p.round_minutes_to.as_ref().map_or(t.clone(), |v| v.span());
                return Err(self.err(&span, "protocol.round_minutes_to", format!("a step of {round_minutes_to} min is longer than max_session_minutes ({}); allowed a step of at most the maximum", fmt_num(max))));
            }
        }
        if over_max == OverMax::AddSession && spare_days.is_empty() && session_days.len() == 7 {
            let span = p.over_max.as_ref().map_or(t.clone(), |v| v.span());
            return Err(self.err(&span, "protocol.over_max", "\"add-session\" needs a free weekday, but all seven are session days; use \"split\" or \"cap\""));
        }
        Ok((max_session_minutes, over_max, round_minutes_to))
    }

    /// `[protocol.ramp]` within the protocol's `weeks`.
    fn ramp(&self, r: &S<RawRamp>, weeks: u32) -> Result<Ramp, Error> {
        let rr = r.get_ref();
        let rw = self.whole(
            self.required(
                &rr.weeks,
                &r.span(),
                "protocol.ramp",
                "weeks",
                &format!("allowed whole numbers 1 to {weeks}"),
            )?,
            "protocol.ramp.weeks",
            1,
            weeks,
        )?;
        let sf = match &rr.start_fraction {
            Some(v) => self.number_above(v, "protocol.ramp.start_fraction", 0.0, 1.0, "")?,
            None => 0.5,
        };
        Ok(Ramp {
            weeks: rw,
            start_fraction: sf,
        })
    }

    /// `protocol.closures`: distinct dates within the exercise weeks, sorted.
    fn closures(
        &self,
        list: Option<&S<Vec<S<RawDate>>>>,
        start: NaiveDate,
        weeks: u32,
    ) -> Result<Vec<NaiveDate>, Error> {
        let end = start + chrono::Days::new(7 * u64::from(weeks));
        let mut closures: Vec<NaiveDate> = Vec::new();
        if let Some(list) = list {
            for v in list.get_ref() {
                let d = self.date(v, "protocol.closures")?;
                if d < start || d >= end {
                    return Err(self.err(&v.span(), "protocol.closures", format!("{d} is outside the exercise weeks ({start} to {}); allowed dates within them", end.pred_opt().unwrap_or(end))));
                }
                if closures.contains(&d) {
                    return Err(self.err(
                        &v.span(),
                        "protocol.closures",
                        format!("{d} is listed twice; closure dates must be distinct"),
                    ));
                }
                closures.push(d);
            }
        }
        closures.sort();
        Ok(closures)
    }

    /// A warm-up or cool-down table.
    pub(crate) fn easy(&self, re: &S<RawEasy>, tn: &str) -> Result<EasyPart, Error> {
        let e = re.get_ref();
        let minutes = self.whole(
            self.required(
                &e.minutes,
                &re.span(),
                tn,
                "minutes",
                "allowed whole numbers 1 to 60",
            )?,
            &format!("{tn}.minutes"),
            1,
            60,
        )?;
        let met = match &e.met {
            Some(v) => self.number_above(v, &format!("{tn}.met"), 1.0, 10.0, " MET")?,
            None => DEFAULT_EASY_MET,
        };
        Ok(EasyPart { minutes, met })
    }

    /// A dose table whose keys are named under `tn`.
    pub(crate) fn dose(&self, rd: &S<RawDose>, tn: &str) -> Result<Dose, Error> {
        let d = rd.get_ref();
        let given: Vec<(&Num, &str)> = [
            (&d.kcal_per_session, "kcal_per_session"),
            (&d.kcal_per_week, "kcal_per_week"),
            (&d.kcal_per_kg_week, "kcal_per_kg_week"),
            (&d.minutes_per_week, "minutes_per_week"),
        ]
        .into_iter()
        .filter_map(|(v, k)| v.as_ref().map(|v| (v, k)))
        .collect();
        let (v, k) = match given.as_slice() {
            [one] => *one,
            [] => return Err(self.err(&rd.span(), tn, "no dose amount; give exactly one of kcal_per_session, kcal_per_week, kcal_per_kg_week, minutes_per_week")),
            [_, second, ..] => {
                let names: Vec<&str> = given.iter().map(|(_, k)| *k).collect();
                return Err(self.err(&second.0.span(), &format!("{tn}.{}", second.1), format!("two dose amounts given ({}); give exactly one", names.join(", "))));
            }
        };
        let key = format!("{tn}.{k}");
        let kind = DoseAmount::of_key(k, 0.0).expect("one of the four dose keys");
        let (lo, hi) = kind.range();
        let amount = kind.with_value(self.number(v, &key, lo, hi, kind.range_unit())?);
        let basis = match &d.basis {
            Some(b) => self.choice(
                b,
                &format!("{tn}.basis"),
                &[("gross", EnergyBasis::Gross), ("net", EnergyBasis::Net)],
            )?,
            None => EnergyBasis::Gross,
        };
        let mass_basis = match &d.mass_basis {
            Some(b) => self.choice(
                b,
                &format!("{tn}.mass_basis"),
                &[
                    ("baseline", MassBasis::Baseline),
                    ("current", MassBasis::Current),
                ],
            )?,
            None => MassBasis::Baseline,
        };
        Ok(Dose {
            amount,
            basis,
            mass_basis,
        })
    }
}
