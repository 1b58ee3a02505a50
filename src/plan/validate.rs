//! Raw plan -> validated [`Plan`]: every range of PLAN.md, every one-of group, every
//! error with file, line, column, key, value and what is allowed.

use super::raw::*;
use super::*;
use crate::activity::{Activity, Intensity, compendium};
use crate::error::Error;
use crate::model::energy::{CalibrationError, calibrate};
use crate::model::{Compensation, Constants, RestForNet, RmrEquation, Sex, Subject};
use std::ops::Range;

/// Read and validate a plan file. A file that cannot be read (missing, not a regular
/// file, too large, not UTF-8: see [`crate::input::read`]) is bad input.
pub fn load_plan(path: &std::path::Path) -> Result<Plan, Error> {
    let (name, text) = crate::input::read_text(path)?;
    parse_plan(&name, &text)
}

/// Parse and validate plan text; `file` names it in errors.
pub fn parse_plan(file: &str, text: &str) -> Result<Plan, Error> {
    // A UTF-8 byte-order mark is accepted (editors on Windows write one).
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let cx = Cx { file, src: text };
    let raw: RawPlan = deserialize(file, text)?;
    cx.plan(raw)
}

/// TOML text into raw structs: syntax errors and unknown keys in the user's terms.
pub(crate) fn deserialize<T: serde::de::DeserializeOwned>(
    file: &str,
    text: &str,
) -> Result<T, Error> {
    if let Err(e) = toml::from_str::<toml::Table>(text) {
        let off = e.span().map_or(0, |s| s.start);
        let (key, message) = syntax_message(text, off, e.message());
        return Err(Error::at(file, text, off, &key, message));
    }
    toml::from_str(text).map_err(|e| {
        let off = e.span().map_or(0, |s| s.start);
        let key = super::locate::key_at(text, off);
        Error::at(file, text, off, &key, tidy(e.message()))
    })
}

/// A `[table]` header that repeats an earlier header of the same name (`header` is
/// the line, `start` its offset): which table, where it was first, and for a table
/// given before as `[[table]]`, the double brackets each entry needs.
fn duplicate_header(text: &str, start: usize, header: &str) -> Option<String> {
    let name = header.strip_prefix('[')?.strip_suffix(']')?.trim();
    if name.starts_with('[') || name.is_empty() {
        return None;
    }
    let earlier = &text[..start];
    let first = earlier.lines().enumerate().find_map(|(i, l)| {
        let l = l.split('#').next().unwrap_or("").trim();
        let inner = l.strip_prefix('[')?.strip_suffix(']')?;
        let (double, inner) = match inner.strip_prefix('[').and_then(|x| x.strip_suffix(']')) {
            Some(x) => (true, x),
            None => (false, inner),
        };
        (inner.trim() == name).then_some((i + 1, double))
    });
    Some(match first {
        Some((line, true)) => format!(
            "[{name}] after [[{name}]] (line {line}): write [[{name}]] (double brackets) for every entry, one header each"
        ),
        Some((line, false)) => format!(
            "the table [{name}] is given twice (first on line {line}); put its keys under one [{name}] header"
        ),
        None => format!(
            "the table [{name}] is given twice (once by a dotted key or an inline table); put its keys under one [{name}] header"
        ),
    })
}

/// The key and line number of a list opened before `start` (on a line of its own
/// key) and never closed: the parser only notices at the next line it cannot read,
/// which names neither the list nor its key. Looks back to the previous header.
fn open_list_before(text: &str, start: usize) -> Option<(String, usize)> {
    let mut depth = 0i32;
    let mut at = start;
    while at > 0 {
        let line_start = text[..at - 1].rfind('\n').map_or(0, |i| i + 1);
        let line = text[line_start..at].split('#').next().unwrap_or("");
        let trimmed = line.trim_start();
        if trimmed.starts_with('[') && !line.contains('=') {
            return None;
        }
        depth += line.matches('[').count() as i32 - line.matches(']').count() as i32;
        if let Some((k, _)) = line.split_once('=')
            && depth > 0
        {
            let key_offset = line_start + k.len() - k.trim_start().len();
            let n = text[..line_start].matches('\n').count() + 1;
            return Some((super::locate::key_at(text, key_offset), n));
        }
        at = line_start;
    }
    None
}

/// A TOML syntax error in the user's terms: the key where the line assigns one, and a
/// plain hint for the commonest slips (an unquoted word, a missing value).
fn syntax_message(text: &str, offset: usize, message: &str) -> (String, String) {
    let offset = offset.min(text.len());
    let start = text[..offset].rfind('\n').map_or(0, |i| i + 1);
    let end = text[offset..].find('\n').map_or(text.len(), |i| offset + i);
    let line = text[start..end].split('#').next().unwrap_or("");
    if message.contains("duplicate key")
        && let Some(msg) = duplicate_header(text, start, line.trim())
    {
        return (String::new(), msg);
    }
    if message.contains("array")
        && let Some((key, n)) = open_list_before(text, start)
    {
        return (
            key,
            format!(
                "TOML syntax error: the list that starts on line {n} is not closed; end it with ] (and put a comma between its items)"
            ),
        );
    }
    let Some((k, v)) = line.split_once('=') else {
        return (
            String::new(),
            format!("TOML syntax error: {}", tidy(message)),
        );
    };
    if k.trim_start().starts_with('[') {
        return (
            String::new(),
            format!("TOML syntax error: {}", tidy(message)),
        );
    }
    let key = super::locate::key_at(text, start + k.len() - k.trim_start().len());
    let v = v.trim();
    let word = !v.is_empty()
        && v.chars()
            .all(|c| c.is_alphabetic() || c == '-' || c == '_' || c == ' ')
        && !["true", "false", "nan", "inf"].contains(&v);
    let msg = if v.is_empty() {
        "TOML syntax error: no value after '='".to_string()
    } else if word {
        format!(
            "TOML syntax error: {v} is not a TOML value; text goes in quotes (\"{v}\"), answers are true or false"
        )
    } else {
        format!("TOML syntax error: {}", tidy(message))
    };
    (key, msg)
}

/// RMR at baseline (the personal factor times the equation), for messages.
fn baseline_rmr(subject: &Subject, constants: &Constants) -> f64 {
    let f = subject.body_fat_percent.unwrap_or_else(|| {
        crate::model::composition::deurenberg_percent_fat(
            crate::model::composition::bmi(subject.mass_kg, subject.height_cm),
            subject.age_years,
            subject.sex,
        )
    });
    let lean = subject.mass_kg * (1.0 - f / 100.0);
    subject.rmr_kcal_per_day.unwrap_or_else(|| {
        constants.rmr_equation.kcal_per_day(
            subject.sex,
            subject.mass_kg,
            lean,
            subject.height_cm,
            subject.age_years,
        )
    })
}

/// Make serde's wording read in the user's terms.
fn tidy(msg: &str) -> String {
    msg.trim()
        .replace("expected f64", "expected a number")
        .replace("invalid type: map, expected a string", "expected a single table; write [participant], [protocol] or [activity] with single brackets")
        .replace(
            "invalid type: map, expected a sequence",
            "expected a list; write [[scenario]] (double brackets) for each scenario",
        )
        .replace(
            "expected a sequence",
            "expected a list in brackets, e.g. [\"mon\", \"wed\"]",
        )
        .replace("expected a boolean", "expected true or false")
        .replace(
            "data did not match any variant of untagged enum RawDate",
            "expected a date such as 2027-01-04",
        )
        .replace(
            "data did not match any variant of untagged enum RawCode",
            "expected a compendium code in quotes, such as \"17200\"",
        )
        .replace(
            "data did not match any variant of untagged enum RawValue",
            "expected a number or a distribution table such as { dist = \"normal\", mean = 0.3, sd = 0.1, min = 0.0, max = 1.0 } (dist \"normal\", \"uniform\" or \"beta\"; keys dist, mean, sd, min, max, alpha, beta)",
        )
        .replace(
            "data did not match any variant of untagged enum RawRmrError",
            "expected \"published\" or a relative SD such as 0.1",
        )
}

/// The validation context: the file's name and text, for messages with positions.
pub(crate) struct Cx<'a> {
    pub(crate) file: &'a str,
    pub(crate) src: &'a str,
}

/// MET of a warm-up or cool-down when the plan gives none: easy walking or cycling
/// (common practice, no source).
pub const DEFAULT_EASY_MET: f64 = 2.5;

fn fmt_num(v: f64) -> String {
    if v.is_finite() && v == v.trunc() && v.abs() < 1e15 {
        format!("{v:.0}")
    } else if v.is_finite() && (v.abs() >= 1e15 || (v != 0.0 && v.abs() < 1e-6)) {
        format!("{v:e}")
    } else {
        format!("{v}")
    }
}

impl Cx<'_> {
    pub(crate) fn err(&self, span: &Range<usize>, key: &str, msg: impl Into<String>) -> Error {
        Error::at(self.file, self.src, span.start, key, msg)
    }

    /// An error about the whole file (no position: a missing table has none).
    pub(crate) fn file_err(&self, key: &str, msg: &str) -> Error {
        Error::Input(crate::error::InputError {
            location: crate::error::Location::file(self.file),
            key: Some(key.to_string()),
            message: msg.to_string(),
        })
    }

    pub(crate) fn required<'v, T>(
        &self,
        v: &'v Option<S<T>>,
        table: &Range<usize>,
        table_name: &str,
        key: &str,
        hint: &str,
    ) -> Result<&'v S<T>, Error> {
        v.as_ref().ok_or_else(|| {
            self.err(
                table,
                &format!("{table_name}.{key}"),
                format!("missing required key; {hint}"),
            )
        })
    }

    /// A finite number within `lo..=hi`.
    pub(crate) fn number(
        &self,
        v: &Num,
        key: &str,
        lo: f64,
        hi: f64,
        unit: &str,
    ) -> Result<f64, Error> {
        let x = *v.get_ref();
        if !x.is_finite() {
            return Err(self.err(
                &v.span(),
                key,
                format!(
                    "value {x} is not a finite number; allowed {} to {}{unit}",
                    fmt_num(lo),
                    fmt_num(hi)
                ),
            ));
        }
        if x < lo || x > hi {
            return Err(self.err(
                &v.span(),
                key,
                format!(
                    "value {} is out of range; allowed {} to {}{unit}",
                    fmt_num(x),
                    fmt_num(lo),
                    fmt_num(hi)
                ),
            ));
        }
        Ok(x)
    }

    /// A finite number with `lo < x <= hi`.
    pub(crate) fn number_above(
        &self,
        v: &Num,
        key: &str,
        lo: f64,
        hi: f64,
        unit: &str,
    ) -> Result<f64, Error> {
        let x = *v.get_ref();
        if !x.is_finite() {
            return Err(self.err(
                &v.span(),
                key,
                format!(
                    "value {x} is not a finite number; allowed above {} and at most {}{unit}",
                    fmt_num(lo),
                    fmt_num(hi)
                ),
            ));
        }
        if x <= lo || x > hi {
            return Err(self.err(
                &v.span(),
                key,
                format!(
                    "value {} is out of range; allowed above {} and at most {}{unit}",
                    fmt_num(x),
                    fmt_num(lo),
                    fmt_num(hi)
                ),
            ));
        }
        Ok(x)
    }

    /// A whole number within `lo..=hi`.
    pub(crate) fn whole(&self, v: &Num, key: &str, lo: u32, hi: u32) -> Result<u32, Error> {
        let x = *v.get_ref();
        if !x.is_finite() || x.fract() != 0.0 {
            return Err(self.err(
                &v.span(),
                key,
                format!(
                    "value {} is not a whole number; allowed whole numbers {lo} to {hi}",
                    fmt_num(x)
                ),
            ));
        }
        if x < f64::from(lo) || x > f64::from(hi) {
            return Err(self.err(
                &v.span(),
                key,
                format!(
                    "value {} is out of range; allowed whole numbers {lo} to {hi}",
                    fmt_num(x)
                ),
            ));
        }
        Ok(x as u32)
    }

    pub(crate) fn opt_number(
        &self,
        v: &Option<Num>,
        key: &str,
        lo: f64,
        hi: f64,
        unit: &str,
    ) -> Result<Option<f64>, Error> {
        v.as_ref()
            .map(|v| self.number(v, key, lo, hi, unit))
            .transpose()
    }

    pub(crate) fn choice<T: Copy>(
        &self,
        v: &S<String>,
        key: &str,
        options: &[(&str, T)],
    ) -> Result<T, Error> {
        let s = v.get_ref().as_str();
        options
            .iter()
            .find(|(n, _)| *n == s)
            .map(|(_, t)| *t)
            .ok_or_else(|| {
                let allowed: Vec<&str> = options.iter().map(|(n, _)| *n).collect();
                self.err(
                    &v.span(),
                    key,
                    format!("unknown value \"{s}\"; allowed {}", allowed.join(", ")),
                )
            })
    }

    fn plan(&self, raw: RawPlan) -> Result<Plan, Error> {
        let rp = raw
            .participant
            .as_ref()
            .ok_or_else(|| self.file_err("participant", "missing required table [participant]"))?;
        let rprot = raw
            .protocol
            .as_ref()
            .ok_or_else(|| self.file_err("protocol", "missing required table [protocol]"))?;
        let ract = raw.activity.as_ref().ok_or_else(|| self.file_err("activity", "missing required table [activity]; give exactly one of compendium_code, met, walking, running, cycling_watts, vo2_reserve_percent"))?;
        let constants = self.constants(raw.model.as_ref())?;
        let (id, subject, screening, fitness) = self.participant(rp)?;
        let protocol = self.protocol(rprot, None)?;
        let activity = self.activity(ract.get_ref(), ract.span(), "activity", fitness.as_ref())?;
        let rotation = self.rotation(raw.rotation, &protocol, fitness.as_ref())?;
        let calendar = self.calendar(raw.calendar.as_ref())?;
        let scenarios = self.scenarios(raw.scenario.as_deref())?;

        // Calibration needs the whole participant and the constants.
        let (baseline, physiology) = calibrate(&subject, &constants).map_err(|e| match e {
            CalibrationError::PalTooLow { activity_kcal_per_day, pal, minimum_pal } => {
                let p = rp.get_ref();
                let (span, key, what) = match (&p.pal, &p.intake_kcal_per_day) {
                    (Some(v), _) => (v.span(), "participant.pal", format!("PAL {pal:.2}")),
                    (None, Some(v)) => (v.span(), "participant.intake_kcal_per_day", format!("intake {} kcal/day (PAL {pal:.2})", fmt_num(*v.get_ref()))),
                    (None, None) => (rp.span(), "participant", format!("PAL {pal:.2}")),
                };
                let allowed = if key.ends_with("intake_kcal_per_day") {
                    format!("allowed an intake above {:.0} kcal/day with this RMR and TEF (PAL above {minimum_pal:.2})", minimum_pal * baseline_rmr(&subject, &constants))
                } else {
                    format!("allowed a PAL above {minimum_pal:.2} with this RMR and TEF")
                };
                self.err(&span, key, format!("{what} is too low for the thermic effect of food: it leaves {activity_kcal_per_day:.0} kcal/day for non-exercise activity; {allowed}"))
            }
            CalibrationError::EstimatedFatOutOfRange(p) => self.err(&rp.span(), "participant.body_fat_percent", format!("body fat estimated from BMI (Deurenberg 1991) is {p:.1}%, outside 3 to 70%; give a measured body_fat_percent")),
        })?;

        // The net energy per minute must be positive at baseline whatever the basis,
        // for every activity and for the warm-up and cool-down.
        let rest = match constants.rest_for_net {
            RestForNet::OwnRmr => "the participant's own resting rate",
            RestForNet::OneMet => "one MET",
        };
        let net_positive = |met0: f64, span: Range<usize>, key: &str| -> Result<(), Error> {
            let net0 =
                physiology.net_kcal_per_min(met0, baseline.mass_kg, baseline.rmr_kcal_per_day);
            if net0 > 0.0 {
                return Ok(());
            }
            let gross = crate::activity::acsm::gross_kcal_per_min(met0, baseline.mass_kg);
            Err(self.err(&span, key, format!("{met0:.2} MET costs {gross:.3} kcal/min at {:.1} kg, not more than {rest} ({:.3} kcal/min), so the energy above rest is {net0:.3} kcal/min; it must be positive: choose a higher intensity", baseline.mass_kg, gross - net0)))
        };
        let intensity_key =
            |a: &RawActivity, span: Range<usize>, tn: &str| -> (Range<usize>, String) {
                [
                    (
                        a.compendium_code.as_ref().map(|v| v.span()),
                        "compendium_code",
                    ),
                    (a.met.as_ref().map(|v| v.span()), "met"),
                    (a.walking.as_ref().map(|v| v.span()), "walking"),
                    (a.running.as_ref().map(|v| v.span()), "running"),
                    (a.cycling_watts.as_ref().map(|v| v.span()), "cycling_watts"),
                    (
                        a.vo2_reserve_percent.as_ref().map(|v| v.span()),
                        "vo2_reserve_percent",
                    ),
                ]
                .into_iter()
                .find_map(|(s, k)| s.map(|s| (s, format!("{tn}.{k}"))))
                .unwrap_or((span, tn.to_string()))
            };
        let (span, key) = intensity_key(ract.get_ref(), ract.span(), "activity");
        net_positive(activity.intensity.met_at(baseline.mass_kg), span, &key)?;
        for (i, (r, span)) in rotation.iter().enumerate() {
            let tn = format!("rotation[{}]", i + 1);
            let (span, key) = intensity_key(&r.1, span.clone(), &tn);
            net_positive(r.0.activity.intensity.met_at(baseline.mass_kg), span, &key)?;
        }
        let rprot_ref = rprot.get_ref();
        for (part, raw_part, tn) in [
            (protocol.warm_up, &rprot_ref.warm_up, "protocol.warm_up"),
            (
                protocol.cool_down,
                &rprot_ref.cool_down,
                "protocol.cool_down",
            ),
        ] {
            if let (Some(e), Some(r)) = (part, raw_part) {
                let span = r.get_ref().met.as_ref().map_or(r.span(), |v| v.span());
                net_positive(e.met, span, &format!("{tn}.met"))?;
            }
        }
        Ok(Plan {
            source_name: self.file.to_string(),
            participant: Participant {
                id,
                subject,
                screening,
                fitness,
            },
            protocol,
            activity,
            constants,
            scenarios,
            rotation: rotation.into_iter().map(|(r, _)| r.0).collect(),
            calendar,
        })
    }

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

    fn participant(
        &self,
        rp: &S<RawParticipant>,
    ) -> Result<(String, Subject, Option<Screening>, Option<Fitness>), Error> {
        let t = rp.span();
        let p = rp.get_ref();
        let tn = "participant";
        let id = self.required(
            &p.id,
            &t,
            tn,
            "id",
            "give a pseudonymous code such as \"R-104\" (never a name)",
        )?;
        if id.get_ref().trim().is_empty() {
            return Err(self.err(
                &id.span(),
                "participant.id",
                "empty; give a pseudonymous code such as \"R-104\"",
            ));
        }
        let sex = self.choice(
            self.required(&p.sex, &t, tn, "sex", "allowed female, male")?,
            "participant.sex",
            &[("female", Sex::Female), ("male", Sex::Male)],
        )?;
        let age = self.number(
            self.required(&p.age_years, &t, tn, "age_years", "allowed 18 to 100 years")?,
            "participant.age_years",
            18.0,
            100.0,
            " years",
        )?;
        let hv = self.required(&p.height_cm, &t, tn, "height_cm", "allowed 120 to 230 cm")?;
        let hx = *hv.get_ref();
        if hx.is_finite() && (1.2..=2.3).contains(&hx) {
            return Err(self.err(&hv.span(), "participant.height_cm", format!("value {hx} looks like metres; give the height in centimetres (e.g. {:.0}); allowed 120 to 230 cm", hx * 100.0)));
        }
        let height = self.number(hv, "participant.height_cm", 120.0, 230.0, " cm")?;
        let mv = self.required(&p.mass_kg, &t, tn, "mass_kg", "allowed 30 to 350 kg")?;
        let mass = self.number(mv, "participant.mass_kg", 30.0, 350.0, " kg")?;
        let b = crate::model::composition::bmi(mass, height);
        if !(13.0..=80.0).contains(&b) {
            return Err(self.err(&mv.span(), "participant.mass_kg", format!("value {} with height {} cm gives BMI {b:.1}, outside the allowed 13 to 80 kg/m^2; check the units (kg, cm; a mass in pounds must be converted)", fmt_num(mass), fmt_num(height))));
        }
        let bf = match &p.body_fat_percent {
            Some(v) if v.get_ref().is_finite() && *v.get_ref() > 0.0 && *v.get_ref() < 1.0 => {
                return Err(self.err(&v.span(), "participant.body_fat_percent", format!("value {} looks like a fraction; give a percent (e.g. {:.0}); allowed 3 to 70", v.get_ref(), v.get_ref() * 100.0)));
            }
            v => self.opt_number(v, "participant.body_fat_percent", 3.0, 70.0, " %")?,
        };
        let rmr = self.opt_number(
            &p.rmr_kcal_per_day,
            "participant.rmr_kcal_per_day",
            600.0,
            5000.0,
            " kcal/day",
        )?;
        let intake = self.opt_number(
            &p.intake_kcal_per_day,
            "participant.intake_kcal_per_day",
            500.0,
            10000.0,
            " kcal/day",
        )?;
        let pal = self.opt_number(&p.pal, "participant.pal", 1.1, 2.5, "")?;
        let screening = p
            .screening
            .as_ref()
            .map(|s| self.screening(s))
            .transpose()?;
        let fitness = p
            .fitness
            .as_ref()
            .map(|f| self.fitness(f, mass, age))
            .transpose()?;
        Ok((
            id.get_ref().trim().to_string(),
            Subject {
                sex,
                age_years: age,
                height_cm: height,
                mass_kg: mass,
                body_fat_percent: bf,
                rmr_kcal_per_day: rmr,
                intake_kcal_per_day: intake,
                pal,
            },
            screening,
            fitness,
        ))
    }

    pub(crate) fn fitness(
        &self,
        rf: &S<RawFitness>,
        mass_kg: f64,
        age: f64,
    ) -> Result<Fitness, Error> {
        let f = rf.get_ref();
        let tn = "participant.fitness";
        let k = |key: &str| format!("{tn}.{key}");
        if let (Some(_), Some(b)) = (&f.vo2peak_ml_kg_min, &f.vo2peak_l_min) {
            return Err(self.err(
                &b.span(),
                &k("vo2peak_l_min"),
                "given with vo2peak_ml_kg_min; give the peak oxygen uptake one way only",
            ));
        }
        if let (None, Some(m)) = (&f.vo2peak_ml_kg_min, &f.vo2peak_test_mass_kg) {
            return Err(self.err(
                &m.span(),
                &k("vo2peak_test_mass_kg"),
                "given without vo2peak_ml_kg_min; it is the mass at the test that a relative VO2peak refers to",
            ));
        }
        let vo2peak_l_min = match (&f.vo2peak_ml_kg_min, &f.vo2peak_l_min) {
            (Some(v), _) => {
                let rel = self.number(v, &k("vo2peak_ml_kg_min"), 8.0, 90.0, " ml/kg/min")?;
                let at = self
                    .opt_number(
                        &f.vo2peak_test_mass_kg,
                        &k("vo2peak_test_mass_kg"),
                        30.0,
                        350.0,
                        " kg",
                    )?
                    .unwrap_or(mass_kg);
                Some(rel * at / 1000.0)
            }
            (None, Some(v)) => Some(self.number(v, &k("vo2peak_l_min"), 0.5, 7.0, " l/min")?),
            (None, None) => None,
        };
        if let Some(l) = vo2peak_l_min {
            let rel = l * 1000.0 / mass_kg;
            if rel <= 7.0 {
                let (span, key) = match (&f.vo2peak_ml_kg_min, &f.vo2peak_l_min) {
                    (Some(v), _) => (v.span(), k("vo2peak_ml_kg_min")),
                    (None, Some(v)) => (v.span(), k("vo2peak_l_min")),
                    (None, None) => (rf.span(), tn.to_string()),
                };
                return Err(self.err(&span, &key, format!("peak oxygen uptake {rel:.1} ml/kg/min at the plan's mass of {} kg is at most 2 MET (7 ml/kg/min), too low to prescribe from; check the value and its units", fmt_num(mass_kg))));
            }
        }
        let hr_rest_bpm =
            self.opt_number(&f.hr_rest_bpm, &k("hr_rest_bpm"), 30.0, 120.0, " beats/min")?;
        if let (Some(_), Some(b)) = (&f.hr_max_bpm, &f.hr_max_formula) {
            return Err(self.err(
                &b.span(),
                &k("hr_max_formula"),
                "given with hr_max_bpm; a measured maximum is used as it is, leave the formula out",
            ));
        }
        let hr_max = match (&f.hr_max_bpm, &f.hr_max_formula) {
            (Some(v), _) => HrMaxSource::Measured(self.number(
                v,
                &k("hr_max_bpm"),
                100.0,
                230.0,
                " beats/min",
            )?),
            (None, Some(v)) => self.choice(
                v,
                &k("hr_max_formula"),
                &[
                    ("tanaka", HrMaxSource::Tanaka),
                    ("220-age", HrMaxSource::TwoTwentyMinusAge),
                ],
            )?,
            (None, None) => HrMaxSource::Tanaka,
        };
        if let Some(rest) = hr_rest_bpm {
            let max = crate::activity::targets::hr_max(hr_max, age);
            if max - rest < 20.0 {
                let (span, key) = match (&f.hr_max_bpm, &f.hr_rest_bpm) {
                    (Some(v), _) => (v.span(), k("hr_max_bpm")),
                    (None, Some(v)) => (v.span(), k("hr_rest_bpm")),
                    (None, None) => (rf.span(), tn.to_string()),
                };
                return Err(self.err(&span, &key, format!("resting heart rate {} and maximum {max:.0} beats/min ({}) leave a reserve of {:.0} beats/min; allowed a reserve of at least 20", fmt_num(rest), hr_max.name(), max - rest)));
            }
        }
        Ok(Fitness {
            vo2peak_l_min,
            hr_rest_bpm,
            hr_max,
        })
    }

    fn screening(&self, rs: &S<RawScreening>) -> Result<Screening, Error> {
        let t = rs.span();
        let s = rs.get_ref();
        let tn = "participant.screening";
        let ans = |v: &Option<S<bool>>, key: &str| -> Result<bool, Error> {
            Ok(*self
                .required(v, &t, tn, key, "answer true or false (ACSM 2015 screening)")?
                .get_ref())
        };
        Ok(Screening {
            exercises_regularly: ans(&s.exercises_regularly, "exercises_regularly")?,
            known_disease: ans(&s.known_disease, "known_disease")?,
            signs_or_symptoms: ans(&s.signs_or_symptoms, "signs_or_symptoms")?,
            medical_clearance: s.medical_clearance.as_ref().is_some_and(|v| *v.get_ref()),
        })
    }

    pub(crate) fn date(&self, v: &S<RawDate>, key: &str) -> Result<NaiveDate, Error> {
        let bad = |what: &str| {
            self.err(
                &v.span(),
                key,
                format!("{what}; give an ISO date YYYY-MM-DD such as 2027-01-04"),
            )
        };
        let d = match v.get_ref() {
            RawDate::Toml(dt) => {
                if dt.time.is_some() || dt.offset.is_some() {
                    return Err(bad(&format!("value {dt} has a time of day")));
                }
                let d = dt.date.ok_or_else(|| bad("not a date"))?;
                NaiveDate::from_ymd_opt(i32::from(d.year), u32::from(d.month), u32::from(d.day))
                    .ok_or_else(|| bad("impossible date"))?
            }
            RawDate::Text(s) => NaiveDate::parse_from_str(s.trim(), "%Y-%m-%d")
                .map_err(|_| bad(&format!("value \"{s}\" is not a valid date")))?,
        };
        if !(1900..=2200).contains(&chrono::Datelike::year(&d)) {
            return Err(bad(&format!(
                "year {} is outside 1900 to 2200",
                chrono::Datelike::year(&d)
            )));
        }
        Ok(d)
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
        let dose = match (arm_dose, &p.dose) {
            (Some(_), Some(d)) => return Err(self.err(&d.span(), "protocol.dose", "a study gives the dose in each [[arm]], not in [protocol]; move it to an arm's dose = { ... }")),
            (Some(d), None) => d,
            (None, _) => self.dose(self.required(&p.dose, &t, tn, "dose", "add a [protocol.dose] table with exactly one of kcal_per_session, kcal_per_week, kcal_per_kg_week, minutes_per_week")?, "protocol.dose")?,
        };
        let ramp = match &p.ramp {
            Some(r) => {
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
                    Some(v) => {
                        self.number_above(v, "protocol.ramp.start_fraction", 0.0, 1.0, "")?
                    }
                    None => 0.5,
                };
                Some(Ramp {
                    weeks: rw,
                    start_fraction: sf,
                })
            }
            None => None,
        };
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
        let end = start + chrono::Days::new(7 * u64::from(weeks));
        let mut closures: Vec<NaiveDate> = Vec::new();
        if let Some(list) = &p.closures {
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
        let amount = match k {
            "kcal_per_session" => {
                DoseAmount::KcalPerSession(self.number(v, &key, 10.0, 3000.0, " kcal")?)
            }
            "kcal_per_week" => {
                DoseAmount::KcalPerWeek(self.number(v, &key, 10.0, 15000.0, " kcal")?)
            }
            "kcal_per_kg_week" => {
                DoseAmount::KcalPerKgWeek(self.number(v, &key, 0.5, 150.0, " kcal/kg/week")?)
            }
            _ => DoseAmount::MinutesPerWeek(self.number(v, &key, 5.0, 2100.0, " minutes")?),
        };
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

    fn gait(&self, g: &S<RawGait>, key: &str, lo: f64, hi: f64) -> Result<(f64, f64), Error> {
        let r = g.get_ref();
        let speed = self.number(
            self.required(
                &r.speed_kmh,
                &g.span(),
                key,
                "speed_kmh",
                &format!("allowed {} to {} km/h", fmt_num(lo), fmt_num(hi)),
            )?,
            &format!("{key}.speed_kmh"),
            lo,
            hi,
            " km/h",
        )?;
        let grade = self
            .opt_number(
                &r.grade_percent,
                &format!("{key}.grade_percent"),
                0.0,
                40.0,
                " %",
            )?
            .unwrap_or(0.0);
        Ok((speed, grade))
    }

    pub(crate) fn activity(
        &self,
        a: &RawActivity,
        span: Range<usize>,
        tn: &str,
        fitness: Option<&Fitness>,
    ) -> Result<Activity, Error> {
        let mut given: Vec<(Range<usize>, &str)> = Vec::new();
        if let Some(v) = &a.compendium_code {
            given.push((v.span(), "compendium_code"));
        }
        if let Some(v) = &a.met {
            given.push((v.span(), "met"));
        }
        if let Some(v) = &a.walking {
            given.push((v.span(), "walking"));
        }
        if let Some(v) = &a.running {
            given.push((v.span(), "running"));
        }
        if let Some(v) = &a.cycling_watts {
            given.push((v.span(), "cycling_watts"));
        }
        if let Some(v) = &a.vo2_reserve_percent {
            given.push((v.span(), "vo2_reserve_percent"));
        }
        given.sort_by_key(|(s, _)| s.start);
        match given.as_slice() {
            [] => return Err(self.err(&span, tn, "no intensity; give exactly one of compendium_code, met, walking, running, cycling_watts, vo2_reserve_percent")),
            [_] => {}
            [_, second, ..] => {
                let names: Vec<&str> = given.iter().map(|(_, k)| *k).collect();
                return Err(self.err(&second.0, &format!("{tn}.{}", second.1), format!("two ways of giving the intensity ({}); give exactly one", names.join(", "))));
            }
        }
        let (intensity, default_label) = if let Some(c) = &a.compendium_code {
            let code = match c.get_ref() {
                RawCode::Text(s) => s.trim().to_string(),
                RawCode::Integer(i) => return Err(self.err(&c.span(), &format!("{tn}.compendium_code"), format!("value {i} is a number; compendium codes are strings with leading zeros, write compendium_code = \"{i:05}\""))),
                RawCode::Float(f) => return Err(self.err(&c.span(), &format!("{tn}.compendium_code"), format!("value {f} is a number; compendium codes are five-digit strings such as \"02010\""))),
            };
            let e = compendium::lookup(&code).ok_or_else(|| self.err(&c.span(), &format!("{tn}.compendium_code"), format!("unknown code \"{code}\"; the built-in table holds {} codes of the 2011 Compendium (list them with `dosewright activities`), or give met = ... instead", compendium::table().len())))?;
            (
                Intensity::Compendium {
                    code: e.code.clone(),
                    met: e.met,
                    version: e.version,
                },
                e.label.clone(),
            )
        } else if let Some(m) = &a.met {
            let met = self.number_above(m, &format!("{tn}.met"), 1.0, 25.0, " MET")?;
            (Intensity::Met { met }, format!("activity at {met} MET"))
        } else if let Some(g) = &a.walking {
            let (speed_kmh, grade_percent) = self.gait(g, &format!("{tn}.walking"), 1.0, 12.0)?;
            (
                Intensity::Walking {
                    speed_kmh,
                    grade_percent,
                },
                format!("walking {speed_kmh} km/h, {grade_percent}% grade"),
            )
        } else if let Some(g) = &a.running {
            let (speed_kmh, grade_percent) = self.gait(g, &format!("{tn}.running"), 4.0, 30.0)?;
            (
                Intensity::Running {
                    speed_kmh,
                    grade_percent,
                },
                format!("running {speed_kmh} km/h, {grade_percent}% grade"),
            )
        } else if let Some(w) = &a.cycling_watts {
            let watts = self.number(w, &format!("{tn}.cycling_watts"), 10.0, 600.0, " W")?;
            (
                Intensity::CyclingWatts { watts },
                format!("cycle ergometer {watts} W"),
            )
        } else if let Some(v) = &a.vo2_reserve_percent {
            let key = format!("{tn}.vo2_reserve_percent");
            let percent = self.number(v, &key, 20.0, 95.0, " %")?;
            let Some(vo2peak_l_min) = fitness.and_then(|f| f.vo2peak_l_min) else {
                return Err(self.err(&v.span(), &key, "needs the peak oxygen uptake: give [participant.fitness] vo2peak_ml_kg_min (with vo2peak_test_mass_kg) or vo2peak_l_min"));
            };
            (
                Intensity::Vo2Reserve {
                    percent,
                    vo2peak_l_min,
                },
                format!("{percent}% of VO2 reserve"),
            )
        } else {
            unreachable!("one intensity was counted above")
        };
        let label = match &a.label {
            Some(l) if l.get_ref().trim().is_empty() => {
                return Err(self.err(
                    &l.span(),
                    &format!("{tn}.label"),
                    "empty; leave the key out to use the activity's own label",
                ));
            }
            Some(l) => l.get_ref().trim().to_string(),
            None => default_label,
        };
        Ok(Activity { intensity, label })
    }

    pub(crate) fn constants(&self, rm: Option<&S<RawModel>>) -> Result<Constants, Error> {
        let mut c = Constants::default();
        let Some(rm) = rm else { return Ok(c) };
        let m = rm.get_ref();
        if let Some(v) = &m.rmr_equation {
            let opts: Vec<(&str, RmrEquation)> =
                RmrEquation::ALL.iter().map(|(e, n)| (*n, *e)).collect();
            c.rmr_equation = self.choice(v, "model.rmr_equation", &opts)?;
        }
        if let Some(v) = &m.rest_for_net {
            c.rest_for_net = self.choice(
                v,
                "model.rest_for_net",
                &[
                    ("own-rmr", RestForNet::OwnRmr),
                    ("one-met", RestForNet::OneMet),
                ],
            )?;
        }
        if let Some(v) = &m.tef_fraction {
            c.tef_fraction = self.number(v, "model.tef_fraction", 0.0, 0.25, "")?;
        }
        if let Some(v) = &m.fat_kcal_per_kg {
            c.fat_kcal_per_kg =
                self.number(v, "model.fat_kcal_per_kg", 8000.0, 10000.0, " kcal/kg")?;
        }
        if let Some(v) = &m.lean_kcal_per_kg {
            c.lean_kcal_per_kg =
                self.number(v, "model.lean_kcal_per_kg", 700.0, 2000.0, " kcal/kg")?;
        }
        if let Some(v) = &m.forbes_constant_kg {
            c.forbes_constant_kg = self.number(v, "model.forbes_constant_kg", 5.0, 20.0, " kg")?;
        }
        Ok(c)
    }

    /// A scenario's name: required, non-empty, not used by an earlier scenario.
    pub(crate) fn scenario_name<'v>(
        &self,
        name: &'v Option<S<String>>,
        table: &Range<usize>,
        tn: &str,
        earlier: &[Scenario],
    ) -> Result<&'v str, Error> {
        let name = self.required(
            name,
            table,
            tn,
            "name",
            "every scenario needs a unique, non-empty name",
        )?;
        let n = name.get_ref().trim();
        if n.is_empty() {
            return Err(self.err(
                &name.span(),
                &format!("{tn}.name"),
                "empty; every scenario needs a unique, non-empty name",
            ));
        }
        if earlier.iter().any(|o| o.name == n) {
            return Err(self.err(
                &name.span(),
                &format!("{tn}.name"),
                format!("\"{n}\" is used by an earlier scenario; names must be unique"),
            ));
        }
        Ok(n)
    }

    pub(crate) fn scenarios(&self, rs: Option<&[S<RawScenario>]>) -> Result<Vec<Scenario>, Error> {
        let Some(rs) = rs.filter(|r| !r.is_empty()) else {
            return Ok(vec![Scenario {
                name: "as prescribed".to_string(),
                compensation: Compensation::default(),
            }]);
        };
        let mut out: Vec<Scenario> = Vec::new();
        for (i, r) in rs.iter().enumerate() {
            let s = r.get_ref();
            let tn = format!("scenario[{}]", i + 1);
            let n = self.scenario_name(&s.name, &r.span(), &tn, &out)?;
            let k = |key: &str| format!("{tn}.{key}");
            let value = |v: &Option<Num>, key: &str| -> Result<f64, Error> {
                let (lo, hi, unit) = scenario_range(key);
                Ok(self.opt_number(v, &k(key), lo, hi, unit)?.unwrap_or(0.0))
            };
            let compensation = Compensation {
                intake_fraction: value(&s.intake_fraction, "intake_fraction")?,
                intake_lag_days: value(&s.intake_lag_days, "intake_lag_days")?,
                activity_fraction: value(&s.activity_fraction, "activity_fraction")?,
                rmr_adaptation_kcal_per_kg: value(
                    &s.rmr_adaptation_kcal_per_kg,
                    "rmr_adaptation_kcal_per_kg",
                )?,
                diet_change_kcal_per_day: value(
                    &s.diet_change_kcal_per_day,
                    "diet_change_kcal_per_day",
                )?,
            };
            out.push(Scenario {
                name: n.to_string(),
                compensation,
            });
        }
        Ok(out)
    }
}
