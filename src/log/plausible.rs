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
