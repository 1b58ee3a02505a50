//! Raw plan -> validated [`Plan`]: every range of docs/file-formats.md section 1, every one-of group, every
//! error with file, line, column, key, value and what is allowed.

pub(crate) use super::fields::Cx;
use super::fields::fmt_num;
use super::raw::*;
use super::*;
use crate::error::Error;
use crate::model::energy::{CalibrationError, calibrate};
use crate::model::{Constants, RestForNet, Subject};
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

/// MET of a warm-up or cool-down when the plan gives none: easy walking or cycling
/// (common practice, no source).
pub const DEFAULT_EASY_MET: f64 = 2.5;

impl Cx<'_> {
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
}
