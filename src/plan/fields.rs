//! The plan validator's context and its readers of single values: numbers within a
//! range, whole numbers, choices, dates, each error placed at its file, line, column
//! and dotted key.

use super::participant::Field;
use super::raw::*;
use super::*;
use crate::error::Error;
use std::ops::Range;

pub(crate) use super::participant::fmt_num;

/// The validation context: the file's name and text, for messages with positions.
pub(crate) struct Cx<'a> {
    pub(crate) file: &'a str,
    pub(crate) src: &'a str,
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

    /// A participant field, checked by the participant rules.
    pub(crate) fn field(&self, v: &Num, f: Field) -> Result<f64, Error> {
        f.check(*v.get_ref())
            .map_err(|msg| self.err(&v.span(), &format!("participant.{}", f.key()), msg))
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
}
