//! Values a row may carry beyond those the model reads: how body fat was measured,
//! and the ergometer power or the speed actually used in a session. They are
//! optional named columns after the log's ten (docs/file-formats.md section 3), in
//! any order; the register holds the same values, and [`Recorded::check`] is the
//! one rule for the log, `log add`, the register and the desk.

use crate::activity::acsm::{CYCLING_WATTS, RUNNING_KMH, WALKING_KMH};
use crate::plan::participant::fmt_num;
use serde::Serialize;

/// The optional columns, by name, that a log may carry after [`super::COLUMNS`].
pub const RECORDED_COLUMNS: [&str; 3] = ["body_fat_method", "watts", "speed_kmh"];

/// The power a session may record, W: what a plan's `cycling_watts` may prescribe.
pub const WATTS_USED: (f64, f64) = CYCLING_WATTS;

/// The speed a session may record, km/h: from the slowest walking to the fastest
/// running speed a plan may prescribe.
pub const SPEED_USED_KMH: (f64, f64) = (WALKING_KMH.0, RUNNING_KMH.1);

/// What a row recorded besides the model's values (each optional).
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Recorded {
    /// How body fat was measured (DXA, bioimpedance, ...): weigh-ins with a body-fat
    /// percent only.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub body_fat_method: Option<String>,
    /// The power actually used on an ergometer, W: sessions only.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub watts: Option<f64>,
    /// The speed actually used (treadmill, track), km/h: sessions only.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub speed_kmh: Option<f64>,
}

impl Recorded {
    /// Whether nothing is recorded.
    pub fn is_empty(&self) -> bool {
        self.body_fat_method.is_none() && self.watts.is_none() && self.speed_kmh.is_none()
    }

    /// Whether the row has a value in `column` (one of [`RECORDED_COLUMNS`]).
    pub fn has(&self, column: &str) -> bool {
        match column {
            "body_fat_method" => self.body_fat_method.is_some(),
            "watts" => self.watts.is_some(),
            "speed_kmh" => self.speed_kmh.is_some(),
            _ => false,
        }
    }

    /// The cell of `column` as CSV text (empty when there is none).
    pub fn cell(&self, column: &str) -> String {
        let number = |x: Option<f64>| x.map(|v| format!("{v}")).unwrap_or_default();
        match column {
            "body_fat_method" => self.body_fat_method.clone().unwrap_or_default(),
            "watts" => number(self.watts),
            "speed_kmh" => number(self.speed_kmh),
            _ => String::new(),
        }
    }

    /// The values in `cells` of a row whose header is `header` (the optional named
    /// columns after [`super::COLUMNS`], in any order), checked by [`Self::check`];
    /// an error gives the cell's index and what is wrong and allowed.
    pub(super) fn read(
        header: &[String],
        cells: &[&str],
        weigh_in: bool,
        body_fat_percent: Option<f64>,
    ) -> Result<Recorded, (usize, String)> {
        let mut r = Recorded::default();
        for (i, name) in header.iter().enumerate().skip(super::COLUMNS.len()) {
            let cell = cells.get(i).map_or("", |c| c.trim());
            let number = || super::cells::parse_number(cell).map_err(|m| (i, m));
            match name.as_str() {
                _ if cell.is_empty() => {}
                "body_fat_method" => r.body_fat_method = Some(cell.to_string()),
                "watts" => r.watts = Some(number()?),
                "speed_kmh" => r.speed_kmh = Some(number()?),
                _ => {}
            }
        }
        r.check(weigh_in, body_fat_percent)
            .map_err(|(key, message)| {
                (header.iter().position(|h| h == key).unwrap_or(0), message)
            })?;
        Ok(r)
    }

    /// The one rule for these values, on a weigh-in (`weigh_in`, with its body-fat
    /// percent) or a session: a body-fat method only on a weigh-in that gives the
    /// percent, on one line; watts and speed only on a session, within
    /// [`WATTS_USED`] and [`SPEED_USED_KMH`]. The error names the column and says
    /// what is allowed.
    pub fn check(
        &self,
        weigh_in: bool,
        body_fat_percent: Option<f64>,
    ) -> Result<(), (&'static str, String)> {
        if let Some(method) = &self.body_fat_method {
            let key = "body_fat_method";
            if !weigh_in {
                return Err((
                    key,
                    "a session has no body-fat method; it belongs on a weigh-in with body_fat_percent".to_string(),
                ));
            }
            if method.contains(['\n', '\r']) {
                return Err((
                    key,
                    "the text holds a line break; it must be one line".to_string(),
                ));
            }
            if body_fat_percent.is_none() {
                return Err((
                    key,
                    "body_fat_method is given without body_fat_percent; give the percent too, or leave the method out".to_string(),
                ));
            }
        }
        let numbers = [
            ("watts", self.watts, WATTS_USED, " W"),
            ("speed_kmh", self.speed_kmh, SPEED_USED_KMH, " km/h"),
        ];
        for (key, value, (lo, hi), unit) in numbers {
            let Some(x) = value else { continue };
            if weigh_in {
                return Err((
                    key,
                    format!("a weigh-in has no {key}; it belongs on a session"),
                ));
            }
            if !(x.is_finite() && (lo..=hi).contains(&x)) {
                return Err((
                    key,
                    format!(
                        "value {} is out of range; allowed {} to {}{unit} (what a plan may prescribe)",
                        fmt_num(x),
                        fmt_num(lo),
                        fmt_num(hi)
                    ),
                ));
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_rule_keeps_each_value_to_its_kind_of_row_and_range() {
        let watts = |w| Recorded {
            watts: Some(w),
            ..Recorded::default()
        };
        assert!(watts(90.0).check(false, None).is_ok());
        assert_eq!(watts(90.0).check(true, Some(30.0)).unwrap_err().0, "watts");
        assert_eq!(watts(5.0).check(false, None).unwrap_err().0, "watts");
        assert!(watts(f64::NAN).check(false, None).is_err());
        let method = Recorded {
            body_fat_method: Some("DXA".into()),
            ..Recorded::default()
        };
        assert!(method.check(true, Some(30.0)).is_ok());
        assert!(method.check(true, None).is_err());
        assert!(method.check(false, None).is_err());
        let speed = Recorded {
            speed_kmh: Some(31.0),
            ..Recorded::default()
        };
        assert_eq!(speed.check(false, None).unwrap_err().0, "speed_kmh");
    }
}
