//! The one rule for a weigh-in implausibly far from an earlier one: the log reader's
//! jump warning and `log add`'s refusal (against the previous weigh-in, the next one
//! and the plan's baseline) both call [`allowed_change_kg`].
//!
//! The figures are common practice, not from a source: within a week a body's mass
//! moves by water, glycogen, gut content and clothing by up to about 2-3 kg, so a
//! change of more than 3 kg within 7 days is more likely a slip (another scale, a
//! typing error, pounds typed as kg) than a change of the stores; over a longer gap
//! the allowance grows by 2% of the earlier mass per week, twice the fastest loss
//! usually advised (about 1% of body mass a week).

use chrono::NaiveDate;

/// Largest change between weigh-ins, kg, within [`JUMP_DAYS`] days (common practice).
pub const JUMP_KG: f64 = 3.0;
/// The short window, days.
pub const JUMP_DAYS: i64 = 7;
/// Further allowance per week of a longer gap, as a share of the earlier mass
/// (common practice).
pub const WEEKLY_SHARE: f64 = 0.02;

/// The largest plausible change, kg, from a weigh-in of `earlier_kg` over `days`
/// days (either direction): [`JUMP_KG`] within [`JUMP_DAYS`] days, and
/// [`JUMP_KG`] plus [`WEEKLY_SHARE`] of `earlier_kg` per week of a longer gap.
pub fn allowed_change_kg(earlier_kg: f64, days: i64) -> f64 {
    let days = days.abs();
    if days <= JUMP_DAYS {
        JUMP_KG
    } else {
        JUMP_KG + WEEKLY_SHARE * earlier_kg * days as f64 / 7.0
    }
}

/// True when `later_kg`, `days` after `earlier_kg`, changed by more than
/// [`allowed_change_kg`].
pub fn is_implausible(earlier_kg: f64, days: i64, later_kg: f64) -> bool {
    (later_kg - earlier_kg).abs() > allowed_change_kg(earlier_kg, days)
}

/// A new weigh-in found implausibly far from another mass (see [`first_jump`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Jump {
    /// What it was held against, in words (`the weigh-in of ...`, `the plan's baseline ...`).
    pub against: String,
    /// The new mass minus the other, kg.
    pub change_kg: f64,
    /// The change allowed, kg.
    pub allowed_kg: f64,
    /// Days between the two.
    pub days: i64,
}

impl Jump {
    /// The refusal's words after `NAME: `: the new weigh-in, how far it is from what,
    /// what was allowed, what to check and how to keep it anyway (the caller's
    /// `advice`), and what was left unchanged (`unchanged`).
    pub fn message(
        &self,
        date: NaiveDate,
        kg: f64,
        advice: super::JumpAdvice<'_>,
        unchanged: &str,
    ) -> String {
        let days = self.days.abs();
        let (other_unit, accept) = (advice.other_unit, advice.accept);
        format!(
            "the weigh-in of {date} ({} kg) is {} kg {} {}, more than the {} kg allowed over {days} {}; check the entry (a mass in the wrong unit: {other_unit}; another scale; a typing slip); if it is right, {accept}. {unchanged}",
            two(kg),
            two(self.change_kg.abs()),
            if self.change_kg > 0.0 {
                "above"
            } else {
                "below"
            },
            self.against,
            two(self.allowed_kg),
            if days == 1 { "day" } else { "days" },
        )
    }
}

/// A number to two decimals, without trailing zeros; a huge one (never a valid value,
/// refused by the row's check) in short exponent form rather than hundreds of digits.
pub(super) fn two(x: f64) -> String {
    if x.abs() >= 1e15 {
        crate::plan::participant::fmt_num(x)
    } else {
        format!("{}", (x * 100.0).round() / 100.0)
    }
}

/// The one refusal rule of a new weigh-in of `kg` on `date`: held against the
/// previous weigh-in, the next one (each `(words, date, kg)`, if any) and the plan's
/// baseline (`base_kg` on the protocol start `start`), in that order, the first
/// that [`is_implausible`] gives the [`Jump`]. `log add` on a CSV log and on a
/// register both call it.
pub fn first_jump(
    date: NaiveDate,
    kg: f64,
    previous: Option<(String, NaiveDate, f64)>,
    next: Option<(String, NaiveDate, f64)>,
    (start, base_kg): (NaiveDate, f64),
) -> Option<Jump> {
    let baseline = (
        format!("the plan's baseline ({} kg on {start})", two(base_kg)),
        start,
        base_kg,
    );
    previous
        .into_iter()
        .chain(next)
        .chain(std::iter::once(baseline))
        .find_map(|(against, d, m)| {
            let days = (date - d).num_days();
            is_implausible(m, days, kg).then(|| Jump {
                against,
                change_kg: kg - m,
                allowed_kg: allowed_change_kg(m, days),
                days,
            })
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn three_kg_within_a_week_then_two_percent_a_week() {
        assert!(!is_implausible(80.0, 7, 77.0));
        assert!(is_implausible(80.0, 7, 76.9));
        // 8 days: 3 + 0.02 * 80 * 8 / 7 = 4.828... kg.
        assert!(!is_implausible(80.0, 8, 75.2));
        assert!(is_implausible(80.0, 8, 75.1));
        // 202.8 "kg" (pounds typed as kg) for a 92 kg participant, 12 weeks on.
        assert!(is_implausible(92.0, 84, 202.8));
    }
}
