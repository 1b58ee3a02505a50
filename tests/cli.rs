//! CLI tests: drive the real `dosewright` binary through every command and format,
//! check the JSON contract of PLAN.md and invariants of the schedule, the warnings
//! with their stable codes, and a table of bad plans with their exact error texts.
//!
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::*;
use serde_json::Value;
use std::collections::BTreeSet;

// ---------------------------------------------------------------------------
// Bad plans: exact texts, exit code 2, nothing on standard output
// ---------------------------------------------------------------------------

/// One bad plan and the full message it must print.
struct Bad {
    name: &'static str,
    plan: String,
    expected: &'static str,
}

fn bad(name: &'static str, edits: &[(&str, &str)], append: &str, expected: &'static str) -> Bad {
    Bad {
        name,
        plan: base_with(edits, append),
        expected,
    }
}

/// Bad plans whose messages are right: the file, line and column, the key, the value
/// and what is allowed. Each is `BASE` with one change (a few need two to reach the
/// check they aim at).
fn bad_plans() -> Vec<Bad> {
    let participant_block = &BASE[..BASE.find("[participant.screening]").unwrap()];
    vec![
        // TOML syntax
        bad(
            "syntax_unterminated_string",
            &[("id = \"T-001\"", "id = \"T-001")],
            "",
            "error: bad.toml:2:12: participant.id: TOML syntax error: invalid basic string, expected `\"`",
        ),
        bad(
            "syntax_unclosed_table_header",
            &[("[protocol]", "[protocol")],
            "",
            "error: bad.toml:16:10: TOML syntax error: unclosed table, expected `]`",
        ),
        bad(
            "syntax_key_without_equals",
            &[("age_years = 40", "age_years 40")],
            "",
            "error: bad.toml:4:11: TOML syntax error: key with no value, expected `=`",
        ),
        bad(
            "syntax_impossible_toml_date",
            &[("start = 2027-01-04", "start = 2027-02-30")],
            "",
            "error: bad.toml:17:9: protocol.start: TOML syntax error: invalid date, expected day between 01 and 28",
        ),
        // unknown keys
        bad(
            "unknown_key_typo",
            &[("mass_kg = 80.0", "mas_kg = 80.0")],
            "",
            "error: bad.toml:6:1: participant.mas_kg: unknown field `mas_kg`, expected one of `id`, `sex`, `age_years`, `height_cm`, `mass_kg`, `body_fat_percent`, `rmr_kcal_per_day`, `intake_kcal_per_day`, `pal`, `screening`, `fitness`",
        ),
        bad(
            "unknown_key_in_screening",
            &[("known_disease = false", "known_diseases = false")],
            "",
            "error: bad.toml:12:1: participant.screening.known_diseases: unknown field `known_diseases`, expected one of `exercises_regularly`, `known_disease`, `signs_or_symptoms`, `medical_clearance`",
        ),
        bad(
            "unknown_subtable",
            &[("[protocol.dose]", "[protocol.doze]")],
            "",
            "error: bad.toml:21:11: protocol.doze: unknown field `doze`, expected one of `start`, `weeks`, `follow_up_weeks`, `session_days`, `spare_days`, `max_session_minutes`, `over_max`, `round_minutes_to`, `dose`, `ramp`, `warm_up`, `cool_down`, `closures`, `make_up`",
        ),
        bad(
            "unknown_top_table",
            &[],
            "\n[modle]\ntef_fraction = 0.1\n",
            "error: bad.toml:27:2: modle: unknown field `modle`, expected one of `participant`, `protocol`, `activity`, `model`, `scenario`, `rotation`, `calendar`",
        ),
        bad(
            "unknown_key_in_model",
            &[],
            "\n[model]\ntef = 0.1\n",
            "error: bad.toml:28:1: model.tef: unknown field `tef`, expected one of `rmr_equation`, `rest_for_net`, `tef_fraction`, `fat_kcal_per_kg`, `lean_kcal_per_kg`, `forbes_constant_kg`",
        ),
        bad(
            "unknown_key_in_inline_table",
            &[("met = 4.0", "walking = { speed_kph = 5 }")],
            "",
            "error: bad.toml:25:13: activity.walking.speed_kph: unknown field `speed_kph`, expected `speed_kmh` or `grade_percent`",
        ),
        bad(
            "renamed_table_is_unknown",
            &[("[participant]\n", "[person]\n")],
            "",
            "error: bad.toml:1:2: person: unknown field `person`, expected one of `participant`, `protocol`, `activity`, `model`, `scenario`, `rotation`, `calendar`",
        ),
        // wrong types
        bad(
            "type_number_as_string",
            &[("mass_kg = 80.0", "mass_kg = \"80\"")],
            "",
            "error: bad.toml:6:11: participant.mass_kg: invalid type: string \"80\", expected a number",
        ),
        bad(
            "type_whole_number_as_string",
            &[("weeks = 8", "weeks = \"8\"")],
            "",
            "error: bad.toml:18:9: protocol.weeks: invalid type: string \"8\", expected a number",
        ),
        bad(
            "type_bool_as_string",
            &[("known_disease = false", "known_disease = \"no\"")],
            "",
            "error: bad.toml:12:17: participant.screening.known_disease: invalid type: string \"no\", expected true or false",
        ),
        bad(
            "type_bool_as_number",
            &[("known_disease = false", "known_disease = 0")],
            "",
            "error: bad.toml:12:17: participant.screening.known_disease: invalid type: integer `0`, expected true or false",
        ),
        bad(
            "type_string_as_number",
            &[("sex = \"female\"", "sex = 1")],
            "",
            "error: bad.toml:3:7: participant.sex: invalid type: integer `1`, expected a string",
        ),
        bad(
            "type_days_not_array",
            &[(
                "session_days = [\"mon\", \"wed\", \"fri\"]",
                "session_days = \"mon\"",
            )],
            "",
            "error: bad.toml:19:16: protocol.session_days: invalid type: string \"mon\", expected a list in brackets, e.g. [\"mon\", \"wed\"]",
        ),
        bad(
            "type_day_as_number",
            &[("[\"mon\", \"wed\", \"fri\"]", "[\"mon\", 3, \"fri\"]")],
            "",
            "error: bad.toml:19:24: protocol.session_days: invalid type: integer `3`, expected a string",
        ),
        bad(
            "type_dotted_key_value",
            &[(
                "[protocol.dose]\nkcal_per_week = 1200",
                "dose.kcal_per_week = \"1200\"",
            )],
            "",
            "error: bad.toml:21:22: protocol.dose.kcal_per_week: invalid type: string \"1200\", expected a number",
        ),
        bad(
            "type_date_as_number",
            &[("start = 2027-01-04", "start = 20270104")],
            "",
            "error: bad.toml:17:9: protocol.start: expected a date such as 2027-01-04",
        ),
        // missing keys
        bad(
            "missing_mass",
            &[("mass_kg = 80.0\n", "")],
            "",
            "error: bad.toml:1:1: participant.mass_kg: missing required key; allowed 30 to 350 kg",
        ),
        bad(
            "missing_sex",
            &[("sex = \"female\"\n", "")],
            "",
            "error: bad.toml:1:1: participant.sex: missing required key; allowed female, male",
        ),
        bad(
            "missing_id",
            &[("id = \"T-001\"\n", "")],
            "",
            "error: bad.toml:1:1: participant.id: missing required key; give a pseudonymous code such as \"R-104\" (never a name)",
        ),
        bad(
            "missing_start",
            &[("start = 2027-01-04\n", "")],
            "",
            "error: bad.toml:16:1: protocol.start: missing required key; give the first day of week 1, e.g. start = 2027-01-04",
        ),
        bad(
            "missing_weeks",
            &[("weeks = 8\n", "")],
            "",
            "error: bad.toml:16:1: protocol.weeks: missing required key; allowed whole numbers 1 to 520",
        ),
        bad(
            "missing_session_days",
            &[("session_days = [\"mon\", \"wed\", \"fri\"]\n", "")],
            "",
            "error: bad.toml:16:1: protocol.session_days: missing required key; give one or more of mon tue wed thu fri sat sun",
        ),
        bad(
            "missing_dose_table",
            &[("[protocol.dose]\nkcal_per_week = 1200\n", "")],
            "",
            "error: bad.toml:16:1: protocol.dose: missing required key; add a [protocol.dose] table with exactly one of kcal_per_session, kcal_per_week, kcal_per_kg_week, minutes_per_week",
        ),
        bad(
            "missing_screening_answer",
            &[("known_disease = false\n", "")],
            "",
            "error: bad.toml:10:1: participant.screening.known_disease: missing required key; answer true or false (ACSM 2015 screening)",
        ),
        bad(
            "missing_walking_speed",
            &[("met = 4.0", "walking = { grade_percent = 2 }")],
            "",
            "error: bad.toml:25:11: activity.walking.speed_kmh: missing required key; allowed 1 to 12 km/h",
        ),
        bad(
            "missing_ramp_weeks",
            &[],
            "\n[protocol.ramp]\nstart_fraction = 0.5\n",
            "error: bad.toml:27:1: protocol.ramp.weeks: missing required key; allowed whole numbers 1 to 8",
        ),
        bad(
            "missing_scenario_name",
            &[],
            "\n[[scenario]]\nname = \"a\"\n\n[[scenario]]\nintake_fraction = 0.2\n",
            "error: bad.toml:30:1: scenario[2].name: missing required key; every scenario needs a unique, non-empty name",
        ),
        // one-of groups
        bad(
            "two_dose_kinds",
            &[(
                "kcal_per_week = 1200",
                "kcal_per_week = 1200\nminutes_per_week = 150",
            )],
            "",
            "error: bad.toml:23:20: protocol.dose.minutes_per_week: two dose amounts given (kcal_per_week, minutes_per_week); give exactly one",
        ),
        bad(
            "no_dose_kind",
            &[("kcal_per_week = 1200", "basis = \"gross\"")],
            "",
            "error: bad.toml:21:1: protocol.dose: no dose amount; give exactly one of kcal_per_session, kcal_per_week, kcal_per_kg_week, minutes_per_week",
        ),
        bad(
            "two_intensities",
            &[("met = 4.0", "met = 4.0\ncycling_watts = 100")],
            "",
            "error: bad.toml:26:17: activity.cycling_watts: two ways of giving the intensity (met, cycling_watts); give exactly one",
        ),
        bad(
            "no_intensity",
            &[("met = 4.0", "label = \"walk\"")],
            "",
            "error: bad.toml:24:1: activity: no intensity; give exactly one of compendium_code, met, walking, running, cycling_watts, vo2_reserve_percent",
        ),
        // weekdays
        bad(
            "unknown_weekday",
            &[(
                "[\"mon\", \"wed\", \"fri\"]",
                "[\"mon\", \"wednesday\", \"fri\"]",
            )],
            "",
            "error: bad.toml:19:24: protocol.session_days: unknown value \"wednesday\"; allowed mon, tue, wed, thu, fri, sat, sun",
        ),
        bad(
            "weekday_capitalised",
            &[("[\"mon\", \"wed\", \"fri\"]", "[\"Mon\", \"wed\", \"fri\"]")],
            "",
            "error: bad.toml:19:17: protocol.session_days: unknown value \"Mon\"; allowed mon, tue, wed, thu, fri, sat, sun",
        ),
        bad(
            "duplicate_session_day",
            &[("[\"mon\", \"wed\", \"fri\"]", "[\"mon\", \"wed\", \"mon\"]")],
            "",
            "error: bad.toml:19:31: protocol.session_days: \"mon\" is listed twice; weekdays must be distinct",
        ),
        bad(
            "empty_session_days",
            &[("[\"mon\", \"wed\", \"fri\"]", "[]")],
            "",
            "error: bad.toml:19:16: protocol.session_days: empty; give one or more of mon tue wed thu fri sat sun",
        ),
        bad(
            "unknown_spare_day",
            &[("weeks = 8", "weeks = 8\nspare_days = [\"tues\"]")],
            "",
            "error: bad.toml:19:15: protocol.spare_days: unknown value \"tues\"; allowed mon, tue, wed, thu, fri, sat, sun",
        ),
        bad(
            "duplicate_spare_day",
            &[("weeks = 8", "weeks = 8\nspare_days = [\"tue\", \"tue\"]")],
            "",
            "error: bad.toml:19:22: protocol.spare_days: \"tue\" is listed twice; weekdays must be distinct",
        ),
        bad(
            "spare_day_is_session_day",
            &[("weeks = 8", "weeks = 8\nspare_days = [\"wed\"]")],
            "",
            "error: bad.toml:19:14: protocol.spare_days: \"wed\" is also a session day; spare days must be other weekdays",
        ),
        // dates
        bad(
            "impossible_date_string",
            &[("start = 2027-01-04", "start = \"2027-02-30\"")],
            "",
            "error: bad.toml:17:9: protocol.start: value \"2027-02-30\" is not a valid date; give an ISO date YYYY-MM-DD such as 2027-01-04",
        ),
        bad(
            "date_day_month_order",
            &[("start = 2027-01-04", "start = \"04-01-2027\"")],
            "",
            "error: bad.toml:17:9: protocol.start: value \"04-01-2027\" is not a valid date; give an ISO date YYYY-MM-DD such as 2027-01-04",
        ),
        bad(
            "date_with_slashes",
            &[("start = 2027-01-04", "start = \"2027/01/04\"")],
            "",
            "error: bad.toml:17:9: protocol.start: value \"2027/01/04\" is not a valid date; give an ISO date YYYY-MM-DD such as 2027-01-04",
        ),
        bad(
            "date_with_time",
            &[("start = 2027-01-04", "start = 2027-01-04T08:00:00")],
            "",
            "error: bad.toml:17:9: protocol.start: value 2027-01-04T08:00:00 has a time of day; give an ISO date YYYY-MM-DD such as 2027-01-04",
        ),
        bad(
            "date_time_only",
            &[("start = 2027-01-04", "start = 08:00:00")],
            "",
            "error: bad.toml:17:9: protocol.start: value 08:00:00 has a time of day; give an ISO date YYYY-MM-DD such as 2027-01-04",
        ),
        bad(
            "date_year_out_of_range",
            &[("start = 2027-01-04", "start = 2500-01-04")],
            "",
            "error: bad.toml:17:9: protocol.start: year 2500 is outside 1900 to 2200; give an ISO date YYYY-MM-DD such as 2027-01-04",
        ),
        // MET
        bad(
            "met_equal_one",
            &[("met = 4.0", "met = 1.0")],
            "",
            "error: bad.toml:25:7: activity.met: value 1 is out of range; allowed above 1 and at most 25 MET",
        ),
        bad(
            "met_below_one",
            &[("met = 4.0", "met = 0.8")],
            "",
            "error: bad.toml:25:7: activity.met: value 0.8 is out of range; allowed above 1 and at most 25 MET",
        ),
        bad(
            "met_above_25",
            &[("met = 4.0", "met = 26")],
            "",
            "error: bad.toml:25:7: activity.met: value 26 is out of range; allowed above 1 and at most 25 MET",
        ),
        // non-finite
        bad(
            "mass_inf",
            &[("mass_kg = 80.0", "mass_kg = inf")],
            "",
            "error: bad.toml:6:11: participant.mass_kg: value inf is not a finite number; allowed 30 to 350 kg",
        ),
        bad(
            "mass_negative_inf",
            &[("mass_kg = 80.0", "mass_kg = -inf")],
            "",
            "error: bad.toml:6:11: participant.mass_kg: value -inf is not a finite number; allowed 30 to 350 kg",
        ),
        bad(
            "pal_nan",
            &[("pal = 1.5", "pal = nan")],
            "",
            "error: bad.toml:8:7: participant.pal: value NaN is not a finite number; allowed 1.1 to 2.5",
        ),
        bad(
            "weeks_nan",
            &[("weeks = 8", "weeks = nan")],
            "",
            "error: bad.toml:18:9: protocol.weeks: value NaN is not a whole number; allowed whole numbers 1 to 520",
        ),
        bad(
            "intake_fraction_nan",
            &[],
            "\n[[scenario]]\nname = \"a\"\nintake_fraction = nan\n",
            "error: bad.toml:29:19: scenario[1].intake_fraction: value NaN is not a finite number; allowed 0 to 1.5",
        ),
        // ranges (PLAN.md table)
        bad(
            "age_below_18",
            &[("age_years = 40", "age_years = 17")],
            "",
            "error: bad.toml:4:13: participant.age_years: value 17 is out of range; allowed 18 to 100 years",
        ),
        bad(
            "age_above_100",
            &[("age_years = 40", "age_years = 101")],
            "",
            "error: bad.toml:4:13: participant.age_years: value 101 is out of range; allowed 18 to 100 years",
        ),
        bad(
            "height_below_120",
            &[("height_cm = 165.0", "height_cm = 119")],
            "",
            "error: bad.toml:5:13: participant.height_cm: value 119 is out of range; allowed 120 to 230 cm",
        ),
        bad(
            "height_above_230",
            &[("height_cm = 165.0", "height_cm = 231")],
            "",
            "error: bad.toml:5:13: participant.height_cm: value 231 is out of range; allowed 120 to 230 cm",
        ),
        bad(
            "height_in_metres",
            &[("height_cm = 165.0", "height_cm = 1.65")],
            "",
            "error: bad.toml:5:13: participant.height_cm: value 1.65 looks like metres; give the height in centimetres (e.g. 165); allowed 120 to 230 cm",
        ),
        bad(
            "mass_below_30",
            &[("mass_kg = 80.0", "mass_kg = 29.5")],
            "",
            "error: bad.toml:6:11: participant.mass_kg: value 29.5 is out of range; allowed 30 to 350 kg",
        ),
        bad(
            "mass_above_350",
            &[("mass_kg = 80.0", "mass_kg = 3000")],
            "",
            "error: bad.toml:6:11: participant.mass_kg: value 3000 is out of range; allowed 30 to 350 kg",
        ),
        bad(
            "bmi_below_13",
            &[("mass_kg = 80.0", "mass_kg = 32")],
            "",
            "error: bad.toml:6:11: participant.mass_kg: value 32 with height 165 cm gives BMI 11.8, outside the allowed 13 to 80 kg/m^2; check the units (kg, cm; a mass in pounds must be converted)",
        ),
        bad(
            "bmi_above_80",
            &[
                ("height_cm = 165.0", "height_cm = 125.0"),
                ("mass_kg = 80.0", "mass_kg = 130"),
            ],
            "",
            "error: bad.toml:6:11: participant.mass_kg: value 130 with height 125 cm gives BMI 83.2, outside the allowed 13 to 80 kg/m^2; check the units (kg, cm; a mass in pounds must be converted)",
        ),
        bad(
            "body_fat_below_3",
            &[("body_fat_percent = 38.0", "body_fat_percent = 2")],
            "",
            "error: bad.toml:7:20: participant.body_fat_percent: value 2 is out of range; allowed 3 to 70 %",
        ),
        bad(
            "body_fat_above_70",
            &[("body_fat_percent = 38.0", "body_fat_percent = 71")],
            "",
            "error: bad.toml:7:20: participant.body_fat_percent: value 71 is out of range; allowed 3 to 70 %",
        ),
        bad(
            "body_fat_as_fraction",
            &[("body_fat_percent = 38.0", "body_fat_percent = 0.38")],
            "",
            "error: bad.toml:7:20: participant.body_fat_percent: value 0.38 looks like a fraction; give a percent (e.g. 38); allowed 3 to 70",
        ),
        bad(
            "rmr_below_600",
            &[("pal = 1.5", "pal = 1.5\nrmr_kcal_per_day = 500")],
            "",
            "error: bad.toml:9:20: participant.rmr_kcal_per_day: value 500 is out of range; allowed 600 to 5000 kcal/day",
        ),
        bad(
            "rmr_above_5000",
            &[("pal = 1.5", "pal = 1.5\nrmr_kcal_per_day = 5001")],
            "",
            "error: bad.toml:9:20: participant.rmr_kcal_per_day: value 5001 is out of range; allowed 600 to 5000 kcal/day",
        ),
        bad(
            "intake_below_500",
            &[("pal = 1.5", "intake_kcal_per_day = 400")],
            "",
            "error: bad.toml:8:23: participant.intake_kcal_per_day: value 400 is out of range; allowed 500 to 10000 kcal/day",
        ),
        bad(
            "intake_above_10000",
            &[("pal = 1.5", "intake_kcal_per_day = 10001")],
            "",
            "error: bad.toml:8:23: participant.intake_kcal_per_day: value 10001 is out of range; allowed 500 to 10000 kcal/day",
        ),
        bad(
            "pal_below_1_1",
            &[("pal = 1.5", "pal = 1.0")],
            "",
            "error: bad.toml:8:7: participant.pal: value 1 is out of range; allowed 1.1 to 2.5",
        ),
        bad(
            "pal_above_2_5",
            &[("pal = 1.5", "pal = 2.6")],
            "",
            "error: bad.toml:8:7: participant.pal: value 2.6 is out of range; allowed 1.1 to 2.5",
        ),
        bad(
            "pal_too_low_for_tef",
            &[("pal = 1.5", "pal = 1.1")],
            "",
            "error: bad.toml:8:7: participant.pal: PAL 1.10 is too low for the thermic effect of food: it leaves -15 kcal/day for non-exercise activity; allowed a PAL above 1.11 with this RMR and TEF",
        ),
        bad(
            "pal_too_low_for_larger_tef",
            &[("pal = 1.5", "pal = 1.3")],
            "\n[model]\ntef_fraction = 0.25\n",
            "error: bad.toml:8:7: participant.pal: PAL 1.30 is too low for the thermic effect of food: it leaves -37 kcal/day for non-exercise activity; allowed a PAL above 1.32 with this RMR and TEF",
        ),
        bad(
            "intake_too_low_for_tef",
            &[("pal = 1.5", "intake_kcal_per_day = 1600")],
            "",
            "error: bad.toml:8:23: participant.intake_kcal_per_day: intake 1600 kcal/day (PAL 1.09) is too low for the thermic effect of food: it leaves -30 kcal/day for non-exercise activity; allowed an intake above 1630 kcal/day with this RMR and TEF (PAL above 1.11)",
        ),
        bad(
            "weeks_zero",
            &[("weeks = 8", "weeks = 0")],
            "",
            "error: bad.toml:18:9: protocol.weeks: value 0 is out of range; allowed whole numbers 1 to 520",
        ),
        bad(
            "weeks_above_520",
            &[("weeks = 8", "weeks = 521")],
            "",
            "error: bad.toml:18:9: protocol.weeks: value 521 is out of range; allowed whole numbers 1 to 520",
        ),
        bad(
            "weeks_not_whole",
            &[("weeks = 8", "weeks = 8.5")],
            "",
            "error: bad.toml:18:9: protocol.weeks: value 8.5 is not a whole number; allowed whole numbers 1 to 520",
        ),
        bad(
            "follow_up_negative",
            &[("weeks = 8", "weeks = 8\nfollow_up_weeks = -1")],
            "",
            "error: bad.toml:19:19: protocol.follow_up_weeks: value -1 is out of range; allowed whole numbers 0 to 519",
        ),
        bad(
            "horizon_over_520_with_follow_up",
            &[("weeks = 8", "weeks = 500\nfollow_up_weeks = 21")],
            "",
            "error: bad.toml:19:19: protocol.follow_up_weeks: weeks (500) plus follow_up_weeks (21) is 521, over the 520-week (10-year) horizon",
        ),
        bad(
            "max_session_below_5",
            &[("weeks = 8", "weeks = 8\nmax_session_minutes = 4")],
            "",
            "error: bad.toml:19:23: protocol.max_session_minutes: value 4 is out of range; allowed 5 to 600 minutes",
        ),
        bad(
            "max_session_above_600",
            &[("weeks = 8", "weeks = 8\nmax_session_minutes = 601")],
            "",
            "error: bad.toml:19:23: protocol.max_session_minutes: value 601 is out of range; allowed 5 to 600 minutes",
        ),
        bad(
            "round_minutes_zero",
            &[("weeks = 8", "weeks = 8\nround_minutes_to = 0")],
            "",
            "error: bad.toml:19:20: protocol.round_minutes_to: value 0 is out of range; allowed whole numbers 1 to 30",
        ),
        bad(
            "round_minutes_above_30",
            &[("weeks = 8", "weeks = 8\nround_minutes_to = 31")],
            "",
            "error: bad.toml:19:20: protocol.round_minutes_to: value 31 is out of range; allowed whole numbers 1 to 30",
        ),
        bad(
            "round_minutes_not_whole",
            &[("weeks = 8", "weeks = 8\nround_minutes_to = 2.5")],
            "",
            "error: bad.toml:19:20: protocol.round_minutes_to: value 2.5 is not a whole number; allowed whole numbers 1 to 30",
        ),
        bad(
            "over_max_unknown",
            &[(
                "weeks = 8",
                "weeks = 8\nmax_session_minutes = 60\nover_max = \"truncate\"",
            )],
            "",
            "error: bad.toml:20:12: protocol.over_max: unknown value \"truncate\"; allowed flag, cap, add-session, split",
        ),
        bad(
            "over_max_without_maximum",
            &[("weeks = 8", "weeks = 8\nover_max = \"cap\"")],
            "",
            "error: bad.toml:19:12: protocol.over_max: \"cap\" needs protocol.max_session_minutes (5 to 600)",
        ),
        bad(
            // Rounding up to 30-minute steps cannot fit a 20-minute cap.
            "round_minutes_above_max_with_cap",
            &[(
                "weeks = 8",
                "weeks = 8\nmax_session_minutes = 20\nover_max = \"cap\"\nround_minutes_to = 30",
            )],
            "",
            "error: bad.toml:21:20: protocol.round_minutes_to: a step of 30 min is longer than max_session_minutes (20); allowed a step of at most the maximum",
        ),
        bad(
            "round_minutes_one_above_max_with_flag",
            &[(
                "weeks = 8",
                "weeks = 8\nmax_session_minutes = 20\nround_minutes_to = 21",
            )],
            "",
            "error: bad.toml:20:20: protocol.round_minutes_to: a step of 21 min is longer than max_session_minutes (20); allowed a step of at most the maximum",
        ),
        bad(
            "add_session_without_a_free_weekday",
            &[
                (
                    "[\"mon\", \"wed\", \"fri\"]",
                    "[\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\", \"sun\"]",
                ),
                (
                    "weeks = 8",
                    "weeks = 8\nmax_session_minutes = 5\nover_max = \"add-session\"",
                ),
            ],
            "",
            "error: bad.toml:20:12: protocol.over_max: \"add-session\" needs a free weekday, but all seven are session days; use \"split\" or \"cap\"",
        ),
        bad(
            "kcal_per_session_below_10",
            &[("kcal_per_week = 1200", "kcal_per_session = 9")],
            "",
            "error: bad.toml:22:20: protocol.dose.kcal_per_session: value 9 is out of range; allowed 10 to 3000 kcal",
        ),
        bad(
            "kcal_per_session_above_3000",
            &[("kcal_per_week = 1200", "kcal_per_session = 3001")],
            "",
            "error: bad.toml:22:20: protocol.dose.kcal_per_session: value 3001 is out of range; allowed 10 to 3000 kcal",
        ),
        bad(
            "kcal_per_week_below_10",
            &[("kcal_per_week = 1200", "kcal_per_week = 5")],
            "",
            "error: bad.toml:22:17: protocol.dose.kcal_per_week: value 5 is out of range; allowed 10 to 15000 kcal",
        ),
        bad(
            "kcal_per_week_above_15000",
            &[("kcal_per_week = 1200", "kcal_per_week = 15001")],
            "",
            "error: bad.toml:22:17: protocol.dose.kcal_per_week: value 15001 is out of range; allowed 10 to 15000 kcal",
        ),
        bad(
            "kcal_per_kg_week_below_0_5",
            &[("kcal_per_week = 1200", "kcal_per_kg_week = 0.4")],
            "",
            "error: bad.toml:22:20: protocol.dose.kcal_per_kg_week: value 0.4 is out of range; allowed 0.5 to 150 kcal/kg/week",
        ),
        bad(
            "kcal_per_kg_week_above_150",
            &[("kcal_per_week = 1200", "kcal_per_kg_week = 151")],
            "",
            "error: bad.toml:22:20: protocol.dose.kcal_per_kg_week: value 151 is out of range; allowed 0.5 to 150 kcal/kg/week",
        ),
        bad(
            "minutes_per_week_below_5",
            &[("kcal_per_week = 1200", "minutes_per_week = 4")],
            "",
            "error: bad.toml:22:20: protocol.dose.minutes_per_week: value 4 is out of range; allowed 5 to 2100 minutes",
        ),
        bad(
            "minutes_per_week_above_2100",
            &[("kcal_per_week = 1200", "minutes_per_week = 2101")],
            "",
            "error: bad.toml:22:20: protocol.dose.minutes_per_week: value 2101 is out of range; allowed 5 to 2100 minutes",
        ),
        bad(
            "basis_unknown",
            &[(
                "kcal_per_week = 1200",
                "kcal_per_week = 1200\nbasis = \"gros\"",
            )],
            "",
            "error: bad.toml:23:9: protocol.dose.basis: unknown value \"gros\"; allowed gross, net",
        ),
        bad(
            "mass_basis_unknown",
            &[(
                "kcal_per_week = 1200",
                "kcal_per_week = 1200\nmass_basis = \"now\"",
            )],
            "",
            "error: bad.toml:23:14: protocol.dose.mass_basis: unknown value \"now\"; allowed baseline, current",
        ),
        bad(
            "ramp_weeks_above_weeks",
            &[],
            "\n[protocol.ramp]\nweeks = 9\n",
            "error: bad.toml:28:9: protocol.ramp.weeks: value 9 is out of range; allowed whole numbers 1 to 8",
        ),
        bad(
            "ramp_weeks_zero",
            &[],
            "\n[protocol.ramp]\nweeks = 0\n",
            "error: bad.toml:28:9: protocol.ramp.weeks: value 0 is out of range; allowed whole numbers 1 to 8",
        ),
        bad(
            "ramp_start_fraction_zero",
            &[],
            "\n[protocol.ramp]\nweeks = 4\nstart_fraction = 0\n",
            "error: bad.toml:29:18: protocol.ramp.start_fraction: value 0 is out of range; allowed above 0 and at most 1",
        ),
        bad(
            "ramp_start_fraction_above_1",
            &[],
            "\n[protocol.ramp]\nweeks = 4\nstart_fraction = 1.2\n",
            "error: bad.toml:29:18: protocol.ramp.start_fraction: value 1.2 is out of range; allowed above 0 and at most 1",
        ),
        bad(
            "walking_speed_below_1",
            &[("met = 4.0", "walking = { speed_kmh = 0.5 }")],
            "",
            "error: bad.toml:25:25: activity.walking.speed_kmh: value 0.5 is out of range; allowed 1 to 12 km/h",
        ),
        bad(
            "walking_speed_above_12",
            &[("met = 4.0", "walking = { speed_kmh = 13 }")],
            "",
            "error: bad.toml:25:25: activity.walking.speed_kmh: value 13 is out of range; allowed 1 to 12 km/h",
        ),
        bad(
            "walking_grade_above_40",
            &[(
                "met = 4.0",
                "walking = { speed_kmh = 5, grade_percent = 41 }",
            )],
            "",
            "error: bad.toml:25:44: activity.walking.grade_percent: value 41 is out of range; allowed 0 to 40 %",
        ),
        bad(
            "walking_grade_negative",
            &[(
                "met = 4.0",
                "walking = { speed_kmh = 5, grade_percent = -1 }",
            )],
            "",
            "error: bad.toml:25:44: activity.walking.grade_percent: value -1 is out of range; allowed 0 to 40 %",
        ),
        bad(
            "running_speed_below_4",
            &[("met = 4.0", "running = { speed_kmh = 3.9 }")],
            "",
            "error: bad.toml:25:25: activity.running.speed_kmh: value 3.9 is out of range; allowed 4 to 30 km/h",
        ),
        bad(
            "running_speed_above_30",
            &[("met = 4.0", "running = { speed_kmh = 31 }")],
            "",
            "error: bad.toml:25:25: activity.running.speed_kmh: value 31 is out of range; allowed 4 to 30 km/h",
        ),
        bad(
            "cycling_watts_below_10",
            &[("met = 4.0", "cycling_watts = 9")],
            "",
            "error: bad.toml:25:17: activity.cycling_watts: value 9 is out of range; allowed 10 to 600 W",
        ),
        bad(
            "cycling_watts_above_600",
            &[("met = 4.0", "cycling_watts = 601")],
            "",
            "error: bad.toml:25:17: activity.cycling_watts: value 601 is out of range; allowed 10 to 600 W",
        ),
        bad(
            "tef_above_0_25",
            &[],
            "\n[model]\ntef_fraction = 0.3\n",
            "error: bad.toml:28:16: model.tef_fraction: value 0.3 is out of range; allowed 0 to 0.25",
        ),
        bad(
            "tef_negative",
            &[],
            "\n[model]\ntef_fraction = -0.01\n",
            "error: bad.toml:28:16: model.tef_fraction: value -0.01 is out of range; allowed 0 to 0.25",
        ),
        bad(
            "fat_density_below_8000",
            &[],
            "\n[model]\nfat_kcal_per_kg = 7999\n",
            "error: bad.toml:28:19: model.fat_kcal_per_kg: value 7999 is out of range; allowed 8000 to 10000 kcal/kg",
        ),
        bad(
            "fat_density_above_10000",
            &[],
            "\n[model]\nfat_kcal_per_kg = 10001\n",
            "error: bad.toml:28:19: model.fat_kcal_per_kg: value 10001 is out of range; allowed 8000 to 10000 kcal/kg",
        ),
        bad(
            "lean_density_below_700",
            &[],
            "\n[model]\nlean_kcal_per_kg = 699\n",
            "error: bad.toml:28:20: model.lean_kcal_per_kg: value 699 is out of range; allowed 700 to 2000 kcal/kg",
        ),
        bad(
            "lean_density_above_2000",
            &[],
            "\n[model]\nlean_kcal_per_kg = 2001\n",
            "error: bad.toml:28:20: model.lean_kcal_per_kg: value 2001 is out of range; allowed 700 to 2000 kcal/kg",
        ),
        bad(
            "forbes_below_5",
            &[],
            "\n[model]\nforbes_constant_kg = 4.9\n",
            "error: bad.toml:28:22: model.forbes_constant_kg: value 4.9 is out of range; allowed 5 to 20 kg",
        ),
        bad(
            "forbes_above_20",
            &[],
            "\n[model]\nforbes_constant_kg = 20.5\n",
            "error: bad.toml:28:22: model.forbes_constant_kg: value 20.5 is out of range; allowed 5 to 20 kg",
        ),
        bad(
            "rmr_equation_unknown",
            &[],
            "\n[model]\nrmr_equation = \"mifflin\"\n",
            "error: bad.toml:28:16: model.rmr_equation: unknown value \"mifflin\"; allowed mifflin-st-jeor, harris-benedict-revised, katch-mcardle, cunningham, livingston-kohlstadt",
        ),
        bad(
            "rest_for_net_unknown",
            &[],
            "\n[model]\nrest_for_net = \"rmr\"\n",
            "error: bad.toml:28:16: model.rest_for_net: unknown value \"rmr\"; allowed own-rmr, one-met",
        ),
        bad(
            "intake_fraction_above_1_5",
            &[],
            "\n[[scenario]]\nname = \"a\"\nintake_fraction = 1.6\n",
            "error: bad.toml:29:19: scenario[1].intake_fraction: value 1.6 is out of range; allowed 0 to 1.5",
        ),
        bad(
            "intake_lag_above_365",
            &[],
            "\n[[scenario]]\nname = \"a\"\nintake_lag_days = 366\n",
            "error: bad.toml:29:19: scenario[1].intake_lag_days: value 366 is out of range; allowed 0 to 365 days",
        ),
        bad(
            "activity_fraction_above_1",
            &[],
            "\n[[scenario]]\nname = \"a\"\nactivity_fraction = 1.1\n",
            "error: bad.toml:29:21: scenario[1].activity_fraction: value 1.1 is out of range; allowed 0 to 1",
        ),
        bad(
            "rmr_adaptation_above_50",
            &[],
            "\n[[scenario]]\nname = \"a\"\nrmr_adaptation_kcal_per_kg = 51\n",
            "error: bad.toml:29:30: scenario[1].rmr_adaptation_kcal_per_kg: value 51 is out of range; allowed 0 to 50 kcal/day per kg",
        ),
        bad(
            "diet_change_below_minus_2500",
            &[],
            "\n[[scenario]]\nname = \"a\"\ndiet_change_kcal_per_day = -2501\n",
            "error: bad.toml:29:28: scenario[1].diet_change_kcal_per_day: value -2501 is out of range; allowed -2500 to 2500 kcal/day",
        ),
        bad(
            "diet_change_above_2500",
            &[],
            "\n[[scenario]]\nname = \"a\"\ndiet_change_kcal_per_day = 2501\n",
            "error: bad.toml:29:28: scenario[1].diet_change_kcal_per_day: value 2501 is out of range; allowed -2500 to 2500 kcal/day",
        ),
        // other values
        bad(
            "sex_unknown",
            &[("sex = \"female\"", "sex = \"f\"")],
            "",
            "error: bad.toml:3:7: participant.sex: unknown value \"f\"; allowed female, male",
        ),
        bad(
            "id_blank",
            &[("id = \"T-001\"", "id = \" \"")],
            "",
            "error: bad.toml:2:6: participant.id: empty; give a pseudonymous code such as \"R-104\"",
        ),
        bad(
            "label_blank",
            &[("met = 4.0", "met = 4.0\nlabel = \"  \"")],
            "",
            "error: bad.toml:26:9: activity.label: empty; leave the key out to use the activity's own label",
        ),
        // compendium codes
        bad(
            "code_as_integer",
            &[("met = 4.0", "compendium_code = 2010")],
            "",
            "error: bad.toml:25:19: activity.compendium_code: value 2010 is a number; compendium codes are strings with leading zeros, write compendium_code = \"02010\"",
        ),
        bad(
            "code_as_float",
            &[("met = 4.0", "compendium_code = 20.1")],
            "",
            "error: bad.toml:25:19: activity.compendium_code: value 20.1 is a number; compendium codes are five-digit strings such as \"02010\"",
        ),
        bad(
            "code_unknown",
            &[("met = 4.0", "compendium_code = \"99999\"")],
            "",
            "error: bad.toml:25:19: activity.compendium_code: unknown code \"99999\"; the built-in table holds 104 codes of the 2011 Compendium (list them with `dosewright activities`), or give met = ... instead",
        ),
        bad(
            "code_without_leading_zero",
            &[("met = 4.0", "compendium_code = \"2010\"")],
            "",
            "error: bad.toml:25:19: activity.compendium_code: unknown code \"2010\"; the built-in table holds 104 codes of the 2011 Compendium (list them with `dosewright activities`), or give met = ... instead",
        ),
        // net energy not positive
        bad(
            "net_energy_not_positive_net_basis",
            &[
                ("met = 4.0", "met = 1.2"),
                ("pal = 1.5", "pal = 1.5\nrmr_kcal_per_day = 3000"),
                (
                    "kcal_per_week = 1200",
                    "kcal_per_week = 1200\nbasis = \"net\"",
                ),
            ],
            "",
            "error: bad.toml:27:7: activity.met: 1.20 MET costs 1.680 kcal/min at 80.0 kg, not more than the participant's own resting rate (2.083 kcal/min), so the energy above rest is -0.403 kcal/min; it must be positive: choose a higher intensity",
        ),
        bad(
            "net_energy_not_positive_gross_basis",
            &[
                ("met = 4.0", "walking = { speed_kmh = 1.0 }"),
                ("pal = 1.5", "pal = 1.5\nrmr_kcal_per_day = 3000"),
            ],
            "",
            "error: bad.toml:26:11: activity.walking: 1.48 MET costs 2.067 kcal/min at 80.0 kg, not more than the participant's own resting rate (2.083 kcal/min), so the energy above rest is -0.017 kcal/min; it must be positive: choose a higher intensity",
        ),
        // scenarios
        bad(
            "scenario_names_duplicate",
            &[],
            "\n[[scenario]]\nname = \"a\"\n\n[[scenario]]\nname = \"a\"\n",
            "error: bad.toml:31:8: scenario[2].name: \"a\" is used by an earlier scenario; names must be unique",
        ),
        bad(
            "scenario_names_duplicate_after_trim",
            &[],
            "\n[[scenario]]\nname = \"a\"\n\n[[scenario]]\nname = \" a \"\n",
            "error: bad.toml:31:8: scenario[2].name: \"a\" is used by an earlier scenario; names must be unique",
        ),
        bad(
            "scenario_name_empty",
            &[],
            "\n[[scenario]]\nname = \"\"\n",
            "error: bad.toml:28:8: scenario[1].name: empty; every scenario needs a unique, non-empty name",
        ),
        // model leaves its valid range
        bad(
            "model_fat_below_2_kg",
            &[
                ("age_years = 40", "age_years = 30"),
                ("mass_kg = 80.0", "mass_kg = 50.0"),
                ("body_fat_percent = 38.0", "body_fat_percent = 8.0"),
                ("weeks = 8", "weeks = 52"),
                ("kcal_per_week = 1200", "kcal_per_week = 15000"),
                // Hard enough work that the sessions stay shorter than a day.
                ("met = 4.0", "met = 8.0"),
            ],
            "",
            "error: bad.toml: the plan drives the model out of its valid range in scenario \"as prescribed\" on day 16 (2027-01-20): fat mass 1.934 kg is below 2 kg (state: mass 40.38 kg, fat mass 1.93 kg, fat-free mass 38.44 kg); lower the dose or the compensation, or shorten the horizon",
        ),
        bad(
            // Week 1 needs 1429-minute sessions; as the mass falls, week 2 needs more
            // than a day.
            "model_session_longer_than_a_day_in_a_later_week",
            &[
                ("age_years = 40", "age_years = 30"),
                ("mass_kg = 80.0", "mass_kg = 50.0"),
                ("body_fat_percent = 38.0", "body_fat_percent = 8.0"),
                ("weeks = 8", "weeks = 52"),
                ("kcal_per_week = 1200", "kcal_per_week = 15000"),
            ],
            "",
            "error: bad.toml: the plan drives the model out of its valid range in scenario \"as prescribed\" on day 7 (2027-01-11): week 2 needs sessions of 1532 min, a whole day or more (a session must be shorter than 1440 min); the activity is too light for the dose (state: mass 46.64 kg, fat mass 3.14 kg, fat-free mass 43.49 kg); lower the dose or the compensation, or shorten the horizon",
        ),
        bad(
            "model_session_longer_than_a_day_in_week_1",
            &[
                ("mass_kg = 80.0", "mass_kg = 50.0"),
                ("met = 4.0", "met = 1.5"),
                ("kcal_per_week = 1200", "kcal_per_session = 3000"),
                ("weeks = 8", "weeks = 1"),
            ],
            "",
            "error: bad.toml: the plan drives the model out of its valid range in scenario \"as prescribed\" on day 0 (2027-01-04): week 1 needs sessions of 2286 min, a whole day or more (a session must be shorter than 1440 min); the activity is too light for the dose (state: mass 50.00 kg, fat mass 19.00 kg, fat-free mass 31.00 kg); lower the dose or the compensation, or shorten the horizon",
        ),
        bad(
            "model_intake_below_zero",
            &[("weeks = 8", "weeks = 200")],
            "\n[[scenario]]\nname = \"starve\"\ndiet_change_kcal_per_day = -2500\n",
            "error: bad.toml: the plan drives the model out of its valid range in scenario \"starve\" on day 0 (2027-01-04): intake is -295 kcal/day, below zero (state: mass 80.00 kg, fat mass 30.40 kg, fat-free mass 49.60 kg); lower the dose or the compensation, or shorten the horizon",
        ),
        bad(
            "model_activity_energy_not_positive",
            &[("kcal_per_week = 1200", "kcal_per_week = 15000")],
            "\n[[scenario]]\nname = \"sit\"\nactivity_fraction = 1.0\n",
            "error: bad.toml: the plan drives the model out of its valid range in scenario \"sit\" on day 0 (2027-01-04): non-exercise activity energy is -1237.86, at or below zero (activity compensation larger than all other movement) (state: mass 80.00 kg, fat mass 30.40 kg, fat-free mass 49.60 kg); lower the dose or the compensation, or shorten the horizon",
        ),
        // missing tables: no line or column to point at
        bad(
            "missing_activity_table",
            &[("\n[activity]\nmet = 4.0\n", "")],
            "",
            "error: bad.toml: activity: missing required table [activity]; give exactly one of compendium_code, met, walking, running, cycling_watts, vo2_reserve_percent",
        ),
        bad(
            "missing_protocol_table",
            &[(
                "[protocol]\nstart = 2027-01-04\nweeks = 8\nsession_days = [\"mon\", \"wed\", \"fri\"]\n\n[protocol.dose]\nkcal_per_week = 1200\n\n",
                "",
            )],
            "",
            "error: bad.toml: protocol: missing required table [protocol]",
        ),
        bad(
            "missing_participant_table",
            &[(participant_block, ""), (BASE_SCREENING, "")],
            "",
            "error: bad.toml: participant: missing required table [participant]",
        ),
        Bad {
            name: "empty_file",
            plan: String::new(),
            expected: "error: bad.toml: participant: missing required table [participant]",
        },
        Bad {
            name: "only_blank_lines_and_a_comment",
            plan: "\n  \n# a plan, some day\n".to_string(),
            expected: "error: bad.toml: participant: missing required table [participant]",
        },
        // the key named where the value sits
        bad(
            "table_header_with_comment_wrong_type",
            &[
                ("[protocol]\n", "[protocol]   # dates and days\n"),
                ("weeks = 8", "weeks = \"8\""),
            ],
            "",
            "error: bad.toml:18:9: protocol.weeks: invalid type: string \"8\", expected a number",
        ),
        bad(
            "table_header_with_comment_unknown_key",
            &[
                ("[protocol.dose]", "[protocol.dose]   # exactly one amount"),
                ("kcal_per_week = 1200", "kcal_per_weak = 1200"),
            ],
            "",
            "error: bad.toml:22:1: protocol.dose.kcal_per_weak: unknown field `kcal_per_weak`, expected one of `kcal_per_session`, `kcal_per_week`, `kcal_per_kg_week`, `minutes_per_week`, `basis`, `mass_basis`",
        ),
        bad(
            "table_header_with_a_bracket_in_its_comment",
            &[
                ("[protocol]\n", "[protocol] # see [notes]\n"),
                ("weeks = 8", "weeks = \"8\""),
            ],
            "",
            "error: bad.toml:18:9: protocol.weeks: invalid type: string \"8\", expected a number",
        ),
        bad(
            "screening_header_with_comment",
            &[
                (
                    "[participant.screening]",
                    "[participant.screening] # ACSM 2015",
                ),
                ("known_disease = false", "known_disease = \"no\""),
            ],
            "",
            "error: bad.toml:12:17: participant.screening.known_disease: invalid type: string \"no\", expected true or false",
        ),
        bad(
            "multi_line_array_wrong_type",
            &[(
                "session_days = [\"mon\", \"wed\", \"fri\"]",
                "session_days = [\n  \"mon\",\n  3,\n]",
            )],
            "",
            "error: bad.toml:21:3: protocol.session_days: invalid type: integer `3`, expected a string",
        ),
        bad(
            "multi_line_array_with_comments_unknown_weekday",
            &[(
                "session_days = [\"mon\", \"wed\", \"fri\"]",
                "session_days = [\n  # the days\n\n  \"mon\", # first\n  \"wednesday\",\n]",
            )],
            "",
            "error: bad.toml:23:3: protocol.session_days: unknown value \"wednesday\"; allowed mon, tue, wed, thu, fri, sat, sun",
        ),
        bad(
            "multi_line_spare_days_unknown_weekday",
            &[("weeks = 8", "weeks = 8\nspare_days = [\n  \"tues\",\n]")],
            "",
            "error: bad.toml:20:3: protocol.spare_days: unknown value \"tues\"; allowed mon, tue, wed, thu, fri, sat, sun",
        ),
        bad(
            "inline_table_wrong_type",
            &[("met = 4.0", "walking = { speed_kmh = \"fast\" }")],
            "",
            "error: bad.toml:25:25: activity.walking.speed_kmh: invalid type: string \"fast\", expected a number",
        ),
        bad(
            "inline_table_second_key_wrong_type",
            &[("met = 4.0", "walking = {speed_kmh=5, grade_percent=\"2\"}")],
            "",
            "error: bad.toml:25:39: activity.walking.grade_percent: invalid type: string \"2\", expected a number",
        ),
        bad(
            "inline_ramp_table_wrong_type",
            &[("weeks = 8", "weeks = 8\nramp = { weeks = \"4\" }")],
            "",
            "error: bad.toml:19:18: protocol.ramp.weeks: invalid type: string \"4\", expected a number",
        ),
        bad(
            "scenario_wrong_type",
            &[],
            "\n[[scenario]]\nname = \"a\"\n\n[[scenario]]\nname = \"b\"\nintake_fraction = \"x\"\n",
            "error: bad.toml:32:19: scenario[2].intake_fraction: invalid type: string \"x\", expected a number",
        ),
        bad(
            "scenario_headers_with_comments_wrong_type",
            &[],
            "\n[[scenario]]  # first\nname = \"a\"\n\n[[scenario]] # second\nname = \"b\"\nintake_fraction = \"x\"\n",
            "error: bad.toml:32:19: scenario[2].intake_fraction: invalid type: string \"x\", expected a number",
        ),
        bad(
            "scenario_after_model_wrong_type",
            &[],
            "\n[model]\ntef_fraction = 0.1\n\n[[scenario]]\nname = \"a\"\nintake_lag_days = \"x\"\n",
            "error: bad.toml:32:19: scenario[1].intake_lag_days: invalid type: string \"x\", expected a number",
        ),
        bad(
            "scenario_unknown_key",
            &[],
            "\n[[scenario]]\nname = \"a\"\nintake_fracton = 0.2\n",
            "error: bad.toml:29:1: scenario[1].intake_fracton: unknown field `intake_fracton`, expected one of `name`, `intake_fraction`, `intake_lag_days`, `activity_fraction`, `rmr_adaptation_kcal_per_kg`, `diet_change_kcal_per_day`",
        ),
        bad(
            "quoted_key_wrong_type",
            &[("mass_kg = 80.0", "\"mass_kg\" = \"80\"")],
            "",
            "error: bad.toml:6:13: participant.mass_kg: invalid type: string \"80\", expected a number",
        ),
        bad(
            "single_quoted_key_unknown",
            &[("mass_kg = 80.0", "'mas_kg' = 80.0")],
            "",
            "error: bad.toml:6:1: participant.mas_kg: unknown field `mas_kg`, expected one of `id`, `sex`, `age_years`, `height_cm`, `mass_kg`, `body_fat_percent`, `rmr_kcal_per_day`, `intake_kcal_per_day`, `pal`, `screening`, `fitness`",
        ),
        bad(
            "quoted_table_header_wrong_type",
            &[
                ("[protocol.dose]", "[ protocol . \"dose\" ]"),
                ("kcal_per_week = 1200", "kcal_per_week = \"1200\""),
            ],
            "",
            "error: bad.toml:22:17: protocol.dose.kcal_per_week: invalid type: string \"1200\", expected a number",
        ),
        // plain hints for TOML syntax
        bad(
            "scenario_as_a_single_table",
            &[],
            "\n[scenario]\nname = \"a\"\n",
            "error: bad.toml:27:1: scenario: expected a list; write [[scenario]] (double brackets) for each scenario",
        ),
        bad(
            "duplicate_key",
            &[("age_years = 40", "age_years = 40\nage_years = 41")],
            "",
            "error: bad.toml:5:1: participant.age_years: TOML syntax error: duplicate key",
        ),
        bad(
            "unquoted_text_value",
            &[("sex = \"female\"", "sex = female")],
            "",
            "error: bad.toml:3:7: participant.sex: TOML syntax error: female is not a TOML value; text goes in quotes (\"female\"), answers are true or false",
        ),
        bad(
            "unquoted_text_value_in_a_scenario",
            &[],
            "\n[[scenario]]\nname = \"a\"\n\n[[scenario]]\nname = b\n",
            "error: bad.toml:31:8: scenario[2].name: TOML syntax error: b is not a TOML value; text goes in quotes (\"b\"), answers are true or false",
        ),
        bad(
            "bare_word_for_a_boolean",
            &[("exercises_regularly = false", "exercises_regularly = no")],
            "",
            "error: bad.toml:11:23: participant.screening.exercises_regularly: TOML syntax error: no is not a TOML value; text goes in quotes (\"no\"), answers are true or false",
        ),
        bad(
            "capitalised_boolean",
            &[("known_disease = false", "known_disease = True")],
            "",
            "error: bad.toml:12:17: participant.screening.known_disease: TOML syntax error: True is not a TOML value; text goes in quotes (\"True\"), answers are true or false",
        ),
        bad(
            "key_without_a_value",
            &[("age_years = 40", "age_years =")],
            "",
            "error: bad.toml:4:12: participant.age_years: TOML syntax error: no value after '='",
        ),
        bad(
            "key_with_only_a_comment_after_equals",
            &[("age_years = 40", "age_years = # forty")],
            "",
            "error: bad.toml:4:13: participant.age_years: TOML syntax error: no value after '='",
        ),
        bad(
            "key_without_a_value_at_the_end_of_the_file",
            &[],
            "\n[model]\ntef_fraction =",
            "error: bad.toml:28:15: model.tef_fraction: TOML syntax error: no value after '='",
        ),
        // numbers printed readably
        bad(
            "huge_number_in_exponent_form",
            &[("weeks = 8", "weeks = 1e300")],
            "",
            "error: bad.toml:18:9: protocol.weeks: value 1e300 is out of range; allowed whole numbers 1 to 520",
        ),
        bad(
            "huge_negative_number_in_exponent_form",
            &[("mass_kg = 80.0", "mass_kg = -1e300")],
            "",
            "error: bad.toml:6:11: participant.mass_kg: value -1e300 is out of range; allowed 30 to 350 kg",
        ),
        bad(
            "tiny_number_in_exponent_form",
            &[("mass_kg = 80.0", "mass_kg = 1e-300")],
            "",
            "error: bad.toml:6:11: participant.mass_kg: value 1e-300 is out of range; allowed 30 to 350 kg",
        ),
        bad(
            "met_not_a_number",
            &[("met = 4.0", "met = nan")],
            "",
            "error: bad.toml:25:7: activity.met: value NaN is not a finite number; allowed above 1 and at most 25 MET",
        ),
        bad(
            "met_infinite",
            &[("met = 4.0", "met = inf")],
            "",
            "error: bad.toml:25:7: activity.met: value inf is not a finite number; allowed above 1 and at most 25 MET",
        ),
        bad(
            "walking_speed_not_a_number",
            &[("met = 4.0", "walking = { speed_kmh = nan }")],
            "",
            "error: bad.toml:25:25: activity.walking.speed_kmh: value NaN is not a finite number; allowed 1 to 12 km/h",
        ),
        // The trainer's week: rotation, fitness and heart rate, warm-up and cool-down,
        // closures and calendar settings.
        bad(
            "rotation_day_not_a_session_day",
            &[],
            "\n[[rotation]]\ndays = [\"tue\"]\nmet = 5.0\n",
            "error: bad.toml:28:9: rotation[1].days: \"tue\" is not a session day or spare day of the protocol; allowed mon, wed, fri",
        ),
        bad(
            "rotation_day_twice_across_entries",
            &[],
            "\n[[rotation]]\ndays = [\"fri\"]\nmet = 5.0\n\n[[rotation]]\ndays = [\"wed\", \"fri\"]\nmet = 6.0\n",
            "error: bad.toml:32:16: rotation[2].days: \"fri\" is already given to rotation[1]; each day has one activity",
        ),
        bad(
            "rotation_without_days",
            &[],
            "\n[[rotation]]\nmet = 5.0\n",
            "error: bad.toml:27:1: rotation[1].days: missing required key; give the session days this activity is on, e.g. days = [\"fri\"]",
        ),
        bad(
            "rotation_without_intensity",
            &[],
            "\n[[rotation]]\ndays = [\"fri\"]\n",
            "error: bad.toml:27:1: rotation[1]: no intensity; give exactly one of compendium_code, met, walking, running, cycling_watts, vo2_reserve_percent",
        ),
        bad(
            "rotation_met_out_of_range",
            &[],
            "\n[[rotation]]\ndays = [\"fri\"]\nmet = 40\n",
            "error: bad.toml:29:7: rotation[1].met: value 40 is out of range; allowed above 1 and at most 25 MET",
        ),
        bad(
            "rotation_unknown_key",
            &[],
            "\n[[rotation]]\ndays = [\"fri\"]\nmet = 5.0\nlable = \"bike\"\n",
            "error: bad.toml:30:1: rotation[1].lable: unknown field `lable`, expected one of `days`, `compendium_code`, `met`, `walking`, `running`, `cycling_watts`, `vo2_reserve_percent`, `label`",
        ),
        bad(
            "vo2_reserve_without_fitness",
            &[("met = 4.0", "vo2_reserve_percent = 60")],
            "",
            "error: bad.toml:25:23: activity.vo2_reserve_percent: needs the peak oxygen uptake: give [participant.fitness] vo2peak_ml_kg_min (with vo2peak_test_mass_kg) or vo2peak_l_min",
        ),
        bad(
            "vo2_reserve_out_of_range",
            &[("met = 4.0", "vo2_reserve_percent = 150")],
            "\n[participant.fitness]\nvo2peak_l_min = 2.0\n",
            "error: bad.toml:25:23: activity.vo2_reserve_percent: value 150 is out of range; allowed 20 to 95 %",
        ),
        bad(
            "vo2peak_both_ways",
            &[],
            "\n[participant.fitness]\nvo2peak_ml_kg_min = 25\nvo2peak_l_min = 2.0\n",
            "error: bad.toml:29:17: participant.fitness.vo2peak_l_min: given with vo2peak_ml_kg_min; give the peak oxygen uptake one way only",
        ),
        bad(
            "vo2peak_in_l_min_given_as_ml",
            &[],
            "\n[participant.fitness]\nvo2peak_l_min = 25\n",
            "error: bad.toml:28:17: participant.fitness.vo2peak_l_min: value 25 is out of range; allowed 0.5 to 7 l/min",
        ),
        bad(
            "vo2peak_too_low_for_mass",
            &[],
            "\n[participant.fitness]\nvo2peak_ml_kg_min = 8.5\nvo2peak_test_mass_kg = 60\n",
            "error: bad.toml:28:21: participant.fitness.vo2peak_ml_kg_min: peak oxygen uptake 6.4 ml/kg/min at the plan's mass of 80 kg is at most 2 MET (7 ml/kg/min), too low to prescribe from; check the value and its units",
        ),
        bad(
            "test_mass_without_relative_vo2peak",
            &[],
            "\n[participant.fitness]\nvo2peak_l_min = 2.0\nvo2peak_test_mass_kg = 80\n",
            "error: bad.toml:29:24: participant.fitness.vo2peak_test_mass_kg: given without vo2peak_ml_kg_min; it is the mass at the test that a relative VO2peak refers to",
        ),
        bad(
            "hr_rest_out_of_range",
            &[],
            "\n[participant.fitness]\nhr_rest_bpm = 10\n",
            "error: bad.toml:28:15: participant.fitness.hr_rest_bpm: value 10 is out of range; allowed 30 to 120 beats/min",
        ),
        bad(
            "hr_max_and_formula",
            &[],
            "\n[participant.fitness]\nhr_max_bpm = 170\nhr_max_formula = \"tanaka\"\n",
            "error: bad.toml:29:18: participant.fitness.hr_max_formula: given with hr_max_bpm; a measured maximum is used as it is, leave the formula out",
        ),
        bad(
            "hr_formula_unknown",
            &[],
            "\n[participant.fitness]\nhr_max_formula = \"gellish\"\n",
            "error: bad.toml:28:18: participant.fitness.hr_max_formula: unknown value \"gellish\"; allowed tanaka, 220-age",
        ),
        bad(
            "hr_reserve_too_small",
            &[],
            "\n[participant.fitness]\nhr_rest_bpm = 110\nhr_max_bpm = 120\n",
            "error: bad.toml:29:14: participant.fitness.hr_max_bpm: resting heart rate 110 and maximum 120 beats/min (measured) leave a reserve of 10 beats/min; allowed a reserve of at least 20",
        ),
        bad(
            "warm_up_without_minutes",
            &[],
            "\n[protocol.warm_up]\nmet = 2.5\n",
            "error: bad.toml:27:1: protocol.warm_up.minutes: missing required key; allowed whole numbers 1 to 60",
        ),
        bad(
            "warm_up_minutes_fraction",
            &[],
            "\n[protocol.warm_up]\nminutes = 5.5\n",
            "error: bad.toml:28:11: protocol.warm_up.minutes: value 5.5 is not a whole number; allowed whole numbers 1 to 60",
        ),
        bad(
            "cool_down_met_too_high",
            &[],
            "\n[protocol.cool_down]\nminutes = 5\nmet = 12\n",
            "error: bad.toml:29:7: protocol.cool_down.met: value 12 is out of range; allowed above 1 and at most 10 MET",
        ),
        bad(
            "closure_outside_protocol",
            &[(
                "session_days = [\"mon\", \"wed\", \"fri\"]",
                "session_days = [\"mon\", \"wed\", \"fri\"]\nclosures = [2026-12-25]",
            )],
            "",
            "error: bad.toml:20:13: protocol.closures: 2026-12-25 is outside the exercise weeks (2027-01-04 to 2027-02-28); allowed dates within them",
        ),
        bad(
            "closure_twice",
            &[(
                "session_days = [\"mon\", \"wed\", \"fri\"]",
                "session_days = [\"mon\", \"wed\", \"fri\"]\nclosures = [2027-01-06, 2027-01-06]",
            )],
            "",
            "error: bad.toml:20:25: protocol.closures: 2027-01-06 is listed twice; closure dates must be distinct",
        ),
        bad(
            "closure_day_month_order",
            &[(
                "session_days = [\"mon\", \"wed\", \"fri\"]",
                "session_days = [\"mon\", \"wed\", \"fri\"]\nclosures = [\"06/01/2027\"]",
            )],
            "",
            "error: bad.toml:20:13: protocol.closures: value \"06/01/2027\" is not a valid date; give an ISO date YYYY-MM-DD such as 2027-01-04",
        ),
        bad(
            "make_up_unknown",
            &[(
                "session_days = [\"mon\", \"wed\", \"fri\"]",
                "session_days = [\"mon\", \"wed\", \"fri\"]\nmake_up = \"carry\"",
            )],
            "",
            "error: bad.toml:20:11: protocol.make_up: unknown value \"carry\"; allowed none, spread",
        ),
        bad(
            "calendar_time_not_hh_mm",
            &[],
            "\n[calendar]\nsession_time = \"7.30am\"\n",
            "error: bad.toml:28:16: calendar.session_time: value \"7.30am\" is not a time of day; give 24-hour HH:MM such as \"07:30\"",
        ),
        bad(
            "calendar_second_bout_without_first",
            &[],
            "\n[calendar]\nsecond_bout_time = \"17:00\"\n",
            "error: bad.toml:28:20: calendar.second_bout_time: given without calendar.session_time; give the first bout's time too",
        ),
        bad(
            "calendar_second_bout_before_first",
            &[],
            "\n[calendar]\nsession_time = \"17:00\"\nsecond_bout_time = \"07:00\"\n",
            "error: bad.toml:29:20: calendar.second_bout_time: 07:00 is not after session_time 17:00; allowed a later time the same day",
        ),
        bad(
            "calendar_time_zone_with_space",
            &[],
            "\n[calendar]\ntime_zone = \"Central European\"\n",
            "error: bad.toml:28:13: calendar.time_zone: value \"Central European\" is not a time-zone name; give an IANA name such as \"Europe/Berlin\" or \"UTC\"",
        ),
        bad(
            "calendar_location_with_newline",
            &[],
            "\n[calendar]\nlocation = \"Room 2\\nBasement\"\n",
            "error: bad.toml:28:12: calendar.location: holds a control character (a line break or tab); give one line of text",
        ),
    ]
}

/// Run `args` on `plan` (written as `bad.toml`) and describe every way the run differs
/// from a clean failure with `expected` on standard error.
fn bad_run_problems(plan: &[u8], args: &[&str], expected: &str) -> Vec<String> {
    let dir = Scratch::new("bad");
    dir.write("bad.toml", plan);
    let r = run(dir.cmd().args(args));
    let mut problems = Vec::new();
    if r.code != Some(2) {
        problems.push(format!("exit code {:?}, want 2", r.code));
    }
    if !r.stdout.is_empty() {
        problems.push(format!("standard output not empty: {:?}", r.stdout));
    }
    let got = r.stderr.strip_suffix('\n').unwrap_or(&r.stderr);
    if got != expected {
        problems.push(format!("stderr\n     got: {got}\n    want: {expected}"));
    }
    problems
}

#[test]
fn bad_plans_fail_with_exact_messages_exit_2_and_no_stdout() {
    let cases = bad_plans();
    assert!(cases.len() >= 40, "the table holds {} cases", cases.len());
    let mut names = BTreeSet::new();
    let mut failures = Vec::new();
    for c in &cases {
        assert!(names.insert(c.name), "case name {} used twice", c.name);
        assert_ne!(c.plan, BASE, "case {} changes nothing", c.name);
        for args in [
            &["check", "bad.toml"][..],
            &["schedule", "bad.toml", "--format", "json"][..],
        ] {
            for p in bad_run_problems(c.plan.as_bytes(), args, c.expected) {
                failures.push(format!("{} ({}): {p}", c.name, args.join(" ")));
            }
        }
    }
    assert!(
        failures.is_empty(),
        "{} problem(s):\n{}",
        failures.len(),
        failures.join("\n")
    );
}

#[test]
fn the_base_plan_of_the_bad_table_is_valid_and_earns_no_warning() {
    let (_dir, r) = run_plan(BASE, &["check"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(r.stdout.starts_with("plan.toml: the plan is valid.\n"));
    assert!(r.stdout.contains("\nWarnings: none\n"), "{}", r.stdout);
    assert_eq!(r.stderr, "");
    assert!(warning_codes(&schedule_json(BASE)).is_empty());
}

#[test]
fn a_missing_plan_file_is_bad_input() {
    let dir = Scratch::new("missing");
    for args in [&["check", "nope.toml"][..], &["schedule", "nope.toml"][..]] {
        let r = run(dir.cmd().args(args));
        assert_eq!(r.code, Some(2));
        assert_eq!(r.stdout, "");
        assert_eq!(r.stderr, "error: nope.toml: cannot read: no such file\n");
    }
}

#[test]
fn a_folder_given_as_the_plan_is_bad_input() {
    let dir = Scratch::new("folder");
    std::fs::create_dir(dir.path().join("plans")).unwrap();
    let r = run(dir.cmd().args(["check", "plans"]));
    assert_eq!(r.code, Some(2));
    assert_eq!(r.stdout, "");
    assert!(
        r.stderr.starts_with("error: plans: cannot read: "),
        "{}",
        r.stderr
    );
}

#[test]
fn a_plan_that_is_not_utf8_is_bad_input() {
    // "T-001" becomes "T-" + Latin-1 e-acute + 0xFF + "01": invalid UTF-8 at byte 22,
    // the 9th character of line 2.
    let mut bytes = BASE.as_bytes().to_vec();
    let at = BASE.find("T-001").unwrap() + 2;
    bytes.splice(at..at + 1, [0xE9, 0xFF]);
    let expected = "error: bad.toml: cannot read: not UTF-8 text (byte 0xE9 at line 2, column 9); save the file as UTF-8";
    for args in [
        &["check", "bad.toml"][..],
        &["schedule", "bad.toml", "--format", "csv"][..],
    ] {
        let problems = bad_run_problems(&bytes, args, expected);
        assert!(problems.is_empty(), "{}", problems.join("\n"));
    }
}

#[test]
fn a_plan_with_a_utf8_byte_order_mark_is_accepted() {
    let mut bytes = "\u{feff}".as_bytes().to_vec();
    bytes.extend_from_slice(BASE.as_bytes());
    let dir = Scratch::new("bom");
    dir.write("plan.toml", &bytes);
    let r = run(dir.cmd().args(["check", "plan.toml"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(r.stdout.starts_with("plan.toml: the plan is valid.\n"));
    // Same schedule as without the mark.
    let with_bom = run(dir
        .cmd()
        .args(["schedule", "plan.toml", "--format", "json"]));
    let (_d, plain) = run_plan(BASE, &["schedule", "--format", "json"]);
    assert_eq!(with_bom.stdout, plain.stdout);
    // Positions in errors do not count the mark.
    let mut bad_bytes = "\u{feff}".as_bytes().to_vec();
    bad_bytes.extend_from_slice(base_with(&[("mass_kg = 80.0", "mass_kg = 3000")], "").as_bytes());
    let problems = bad_run_problems(
        &bad_bytes,
        &["check", "bad.toml"],
        "error: bad.toml:6:11: participant.mass_kg: value 3000 is out of range; allowed 30 to 350 kg",
    );
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn a_plan_with_windows_line_endings_is_accepted() {
    let crlf = BASE.replace('\n', "\r\n");
    assert!(crlf.contains("\r\n"));
    let (_dir, r) = run_plan(&crlf, &["schedule", "--format", "json"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let (_d, plain) = run_plan(BASE, &["schedule", "--format", "json"]);
    assert_eq!(r.stdout, plain.stdout);
    // Lines and columns stay right, and no carriage return leaks into a key.
    let bad = base_with(&[("mass_kg = 80.0", "mas_kg = 80.0")], "").replace('\n', "\r\n");
    let problems = bad_run_problems(
        bad.as_bytes(),
        &["check", "bad.toml"],
        "error: bad.toml:6:1: participant.mas_kg: unknown field `mas_kg`, expected one of `id`, `sex`, `age_years`, `height_cm`, `mass_kg`, `body_fat_percent`, `rmr_kcal_per_day`, `intake_kcal_per_day`, `pal`, `screening`, `fitness`",
    );
    assert!(problems.is_empty(), "{}", problems.join("\n"));
    let bad = base_with(&[("mass_kg = 80.0", "mass_kg = 3000")], "").replace('\n', "\r\n");
    let problems = bad_run_problems(
        bad.as_bytes(),
        &["check", "bad.toml"],
        "error: bad.toml:6:11: participant.mass_kg: value 3000 is out of range; allowed 30 to 350 kg",
    );
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn a_failed_schedule_with_out_writes_no_file() {
    let dir = Scratch::new("bad-out");
    dir.write(
        "bad.toml",
        base_with(&[("mass_kg = 80.0", "mass_kg = 3000")], ""),
    );
    let r = run(dir.cmd().args([
        "schedule", "bad.toml", "--format", "json", "--out", "out.json",
    ]));
    assert_eq!(r.code, Some(2));
    assert_eq!(r.stdout, "");
    assert_eq!(dir.listing(), ["bad.toml"]);
}

// ---------------------------------------------------------------------------
// Bad plans whose messages are unclear or wrong (bugs in src/, see the report).
// They already fail cleanly; the wording they should have is checked by the
// ignored test below.
// ---------------------------------------------------------------------------

/// What a better message must satisfy.
enum Want {
    /// The whole message (without the final newline).
    Exact(&'static str),
    /// Words it must contain.
    Has(&'static str),
    /// Words it must not contain.
    Lacks(&'static str),
}

struct Unclear {
    name: &'static str,
    plan: String,
    /// Why the present message is a problem.
    why: &'static str,
    want: Vec<Want>,
}

fn unclear_messages() -> Vec<Unclear> {
    use Want::*;
    let u = |name, edits: &[(&str, &str)], append: &str, why, want| Unclear {
        name,
        plan: base_with(edits, append),
        why,
        want,
    };
    vec![
        u(
            "duplicate_table",
            &[],
            "\n[activity]\nmet = 3.0\n",
            "says only `TOML syntax error: duplicate key` for a table given twice, naming neither the table nor the earlier header",
            vec![Has("[activity]")],
        ),
        u(
            "single_bracket_scenario_after_a_double_bracket_one",
            &[],
            "\n[[scenario]]\nname = \"a\"\n\n[scenario]\nname = \"b\"\n",
            "says only `TOML syntax error: duplicate key` at the [scenario] line; the [[scenario]] hint given for a lone [scenario] is missing",
            vec![Has("[[scenario]]"), Lacks("duplicate key")],
        ),
        u(
            "unclosed_array",
            &[("[\"mon\", \"wed\", \"fri\"]", "[\"mon\", \"wed\", \"fri\"")],
            "",
            "says `missing comma between array elements` at 21:1, the [protocol.dose] header, without a key; the unclosed array is protocol.session_days on line 19",
            vec![Has("protocol.session_days")],
        ),
        u(
            "integer_too_large",
            &[("mass_kg = 80.0", "mass_kg = 99999999999999999999")],
            "",
            "says `invalid type: integer `99999999999999999999` as i128, expected any valid TOML value`: Rust jargon, and no allowed range",
            vec![
                Has("participant.mass_kg"),
                Lacks("i128"),
                Has("30 to 350 kg"),
            ],
        ),
        u(
            "bare_word_in_an_inline_table",
            &[("met = 4.0", "walking = { speed_kmh = fast }")],
            "",
            "says `activity.walking: TOML syntax error: invalid boolean, expected `false``: the parser's guess from the f, and the inline table's key instead of speed_kmh; at top level the same mistake gets the plain hint",
            vec![
                Has("activity.walking.speed_kmh"),
                Has("quote"),
                Lacks("boolean"),
            ],
        ),
        u(
            "participant_as_an_array_table",
            &[("[participant]\n", "[[participant]]\n")],
            "",
            "says `1:1: participant: invalid type: map, expected a string`: no string is expected anywhere; the user wrote [[participant]] for [participant]",
            vec![Has("[participant]"), Lacks("expected a string")],
        ),
        u(
            "dotted_unknown_key",
            &[("mass_kg = 80.0", "mass_kg = 80.0\nscreen.x = 1")],
            "",
            "the key comes out as `participant`, without the unknown name; every other unknown key is named in full (`participant.mas_kg`, `protocol.doze`)",
            vec![Exact(
                "error: bad.toml:7:1: participant.screen: unknown field `screen`, expected one of `id`, `sex`, `age_years`, `height_cm`, `mass_kg`, `body_fat_percent`, `rmr_kcal_per_day`, `intake_kcal_per_day`, `pal`, `screening`, `fitness`",
            )],
        ),
        Unclear {
            name: "inline_array_of_scenario_tables",
            plan: format!(
                "scenario = [{{ name = \"a\" }}, {{ name = \"b\", intake_fraction = \"x\" }}]\n{BASE}"
            ),
            why: "the key comes out as `scenario`; the scenarios written as an inline array of tables are not numbered",
            want: vec![Exact(
                "error: bad.toml:1:61: scenario[2].intake_fraction: invalid type: string \"x\", expected a number",
            )],
        },
        u(
            "header_line_inside_a_multi_line_string",
            &[(
                "met = 4.0",
                "met = 4.0\nlabel = \"\"\"\n[[scenario]]\n\"\"\"",
            )],
            "\n[[scenario]]\nname = \"a\"\nintake_fraction = \"x\"\n",
            "the key comes out as `scenario[2].intake_fraction`: the locator counts a `[[scenario]]` line inside the label's multi-line string as a header, though the plan has one scenario",
            vec![Has("scenario[1].intake_fraction")],
        ),
        u(
            "fat_mass_rounded_to_the_limit",
            &[
                ("age_years = 40", "age_years = 30"),
                ("mass_kg = 80.0", "mass_kg = 50.0"),
                ("body_fat_percent = 38.0", "body_fat_percent = 8.0"),
                ("weeks = 8", "weeks = 52"),
                ("kcal_per_week = 1200", "kcal_per_week = 15000"),
                ("met = 4.0", "met = 10.0"),
            ],
            "",
            "says `fat mass 2.00 kg is below 2 kg`: the value is rounded to the limit it is said to be below",
            vec![Has("fat mass"), Lacks("2.00 kg is below 2 kg")],
        ),
        u(
            "a_day_of_minutes_in_a_minutes_dose",
            &[
                ("[\"mon\", \"wed\", \"fri\"]", "[\"mon\"]"),
                ("kcal_per_week = 1200", "minutes_per_week = 1440"),
            ],
            "",
            "says `week 1 needs sessions of 1440 min, a whole day or more (a session must be shorter than 1440 min); the activity is too light for the dose ... lower the dose or the compensation, or shorten the horizon`: with a minutes dose the intensity does not set the minutes, compensation and horizon do not either, and 1440 min is a day, not longer",
            vec![
                Has("1440 min"),
                Lacks("too light"),
                Lacks("longer than a day"),
            ],
        ),
    ]
}

#[test]
fn bad_plans_with_unclear_messages_still_fail_cleanly() {
    let mut failures = Vec::new();
    for c in unclear_messages() {
        let dir = Scratch::new("unclear");
        dir.write("bad.toml", &c.plan);
        for args in [
            &["check", "bad.toml"][..],
            &["schedule", "bad.toml", "--format", "json"][..],
        ] {
            let r = run(dir.cmd().args(args));
            if r.code != Some(2) || !r.stdout.is_empty() {
                failures.push(format!(
                    "{}: exit {:?}, stdout {:?}",
                    c.name, r.code, r.stdout
                ));
            }
            if !r.stderr.starts_with("error: bad.toml") || r.stderr.lines().count() != 1 {
                failures.push(format!("{}: stderr {:?}", c.name, r.stderr));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// Cases of `unclear_messages` whose messages have been fixed: their wants are
/// checked by a test that runs, the others by the ignored one.
const FIXED: &[&str] = &[
    "duplicate_table",
    "single_bracket_scenario_after_a_double_bracket_one",
    "unclosed_array",
];

/// What the cases chosen by `pick` get wrong against their wants.
fn unclear_failures(pick: impl Fn(&str) -> bool) -> Vec<String> {
    let mut failures = Vec::new();
    for c in unclear_messages().into_iter().filter(|c| pick(c.name)) {
        let dir = Scratch::new("unclear");
        dir.write("bad.toml", &c.plan);
        let r = run(dir.cmd().args(["check", "bad.toml"]));
        let got = r.stderr.trim_end();
        for w in &c.want {
            let ok = match w {
                Want::Exact(s) => got == *s,
                Want::Has(s) => got.contains(s),
                Want::Lacks(s) => !got.contains(s),
            };
            if !ok {
                let what = match w {
                    Want::Exact(s) => format!("want exactly: {s}"),
                    Want::Has(s) => format!("want it to contain {s:?}"),
                    Want::Lacks(s) => format!("want it not to contain {s:?}"),
                };
                failures.push(format!(
                    "{} ({})\n     got: {got}\n    {what}",
                    c.name, c.why
                ));
            }
        }
    }
    failures
}

#[test]
fn fixed_messages_say_what_is_wrong() {
    let names: Vec<&str> = unclear_messages().iter().map(|c| c.name).collect();
    assert!(FIXED.iter().all(|f| names.contains(f)), "{FIXED:?}");
    let failures = unclear_failures(|n| FIXED.contains(&n));
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
#[ignore = "src bug: these messages are still unclear or name the wrong key or place (see each case's `why` in unclear_messages)"]
fn bad_plans_with_unclear_messages_say_what_is_wrong() {
    let failures = unclear_failures(|n| !FIXED.contains(&n));
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

// ---------------------------------------------------------------------------
// schedule --format json: the PLAN.md contract and invariants
// ---------------------------------------------------------------------------

/// What a plan says about its calendar, for checking a schedule against it.
struct Shape<'a> {
    start: &'a str,
    weeks: u64,
    follow_up_weeks: u64,
    /// Weekdays sessions may fall on (session days, plus spare days for add-session).
    days: &'a [&'a str],
    /// Distinct session dates per protocol week, when fixed.
    sessions_per_week: Option<usize>,
    /// Every session date has the same minutes (false with a rotation of
    /// activities or closures: then `minutes_per_session` is the longest session).
    uniform_minutes: bool,
}

fn weekday_word(d: chrono::NaiveDate) -> &'static str {
    use chrono::Datelike;
    ["mon", "tue", "wed", "thu", "fri", "sat", "sun"][d.weekday().num_days_from_monday() as usize]
}

/// Every key PLAN.md lists for `schedule --format json`, with its type, and the
/// calendar and bookkeeping invariants of the weeks.
fn assert_schedule_contract(j: &Value, shape: &Shape) {
    let b = &j["baseline"];
    for k in [
        "mass_kg",
        "fat_mass_kg",
        "fat_free_mass_kg",
        "rmr_kcal_per_day",
        "intake_kcal_per_day",
        "tdee_kcal_per_day",
        "pal",
    ] {
        assert!(num(b, k) > 0.0, "baseline.{k} must be positive");
    }
    assert!(b["fat_mass_estimated"].is_boolean());
    let m0 = num(b, "mass_kg");
    assert!((num(b, "fat_mass_kg") + num(b, "fat_free_mass_kg") - m0).abs() < 1e-3);

    let start = date(shape.start);
    let total = shape.weeks + shape.follow_up_weeks;
    let scenarios = array(j, "scenarios");
    assert!(!scenarios.is_empty());
    let mut names = BTreeSet::new();
    for s in scenarios {
        let name = text(s, "name");
        assert!(
            !name.is_empty() && names.insert(name.to_string()),
            "scenario names unique"
        );
        let weeks = array(s, "weeks");
        assert_eq!(weeks.len() as u64, total, "protocol plus follow-up weeks");
        for (i, w) in weeks.iter().enumerate() {
            let n = i as u64 + 1;
            assert_eq!(w["week"].as_u64(), Some(n), "week numbers run on");
            let ws = date(text(w, "start"));
            assert_eq!(ws, start + chrono::Days::new(7 * (n - 1)), "week {n} start");
            assert!(num(w, "reference_mass_kg") > 0.0);
            let src = text(w, "mass_source");
            assert!(src == "projected" || src == "measured", "mass_source {src}");
            let ramp = num(w, "ramp_fraction");
            let mps = w["minutes_per_session"]
                .as_u64()
                .unwrap_or_else(|| panic!("minutes_per_session is a whole number: {}", w));
            let sessions = array(w, "sessions");
            if n <= shape.weeks {
                assert!(ramp > 0.0 && ramp <= 1.0, "week {n} ramp {ramp}");
                assert!(mps > 0, "week {n} has minutes");
                assert!(!sessions.is_empty(), "week {n} has sessions");
            } else {
                assert_eq!(mps, 0, "follow-up week {n}: minutes_per_session 0");
                assert_eq!(ramp, 0.0, "follow-up week {n}: ramp_fraction 0");
                assert!(sessions.is_empty(), "follow-up week {n}: no sessions");
            }
            let mut prev = None;
            let mut per_date: std::collections::BTreeMap<chrono::NaiveDate, u64> =
                Default::default();
            for x in sessions {
                let d = date(text(x, "date"));
                assert!(d >= ws && d < ws + chrono::Days::new(7), "{d} in week {n}");
                assert!(
                    shape.days.contains(&weekday_word(d)),
                    "{d} ({}) is not a plan weekday",
                    weekday_word(d)
                );
                if let Some(p) = prev {
                    assert!(d >= p, "sessions in date order");
                }
                prev = Some(d);
                let m = x["minutes"]
                    .as_u64()
                    .unwrap_or_else(|| panic!("minutes is a whole number: {x}"));
                assert!(m > 0);
                *per_date.entry(d).or_default() += m;
                assert!(num(x, "met") > 1.0);
                let gross = num(x, "gross_kcal");
                let net = num(x, "net_kcal");
                assert!(gross > net && net > 0.0, "gross {gross} > net {net} > 0");
            }
            for (d, m) in &per_date {
                if shape.uniform_minutes {
                    assert_eq!(*m, mps, "minutes on {d} add up to minutes_per_session");
                } else {
                    assert!(*m <= mps, "minutes on {d} are at most minutes_per_session");
                }
            }
            if !per_date.is_empty() {
                assert_eq!(
                    per_date.values().max().copied(),
                    Some(mps),
                    "minutes_per_session is the longest session"
                );
            }
            if let (Some(k), true) = (shape.sessions_per_week, n <= shape.weeks) {
                assert_eq!(per_date.len(), k, "session dates in week {n}");
            }
            let e = &w["end"];
            let fm = num(e, "fat_mass_kg");
            let ffm = num(e, "fat_free_mass_kg");
            assert!((fm + ffm - num(e, "mass_kg")).abs() < 1e-3);
        }
        let o = &s["outcome"];
        let last = &weeks[weeks.len() - 1];
        let end_date = date(text(o, "end_date"));
        assert_eq!(end_date, start + chrono::Days::new(7 * total));
        assert_eq!(
            end_date,
            date(text(last, "start")) + chrono::Days::new(7),
            "end_date is the morning after the last day"
        );
        for k in ["mass_kg", "fat_mass_kg", "fat_free_mass_kg"] {
            assert!(
                (num(o, k) - num(&last["end"], k)).abs() < 1e-9,
                "outcome.{k}"
            );
        }
        assert!((num(o, "mass_change_kg") - (num(o, "mass_kg") - m0)).abs() < 1e-3);
        for k in ["prescribed_net_kcal", "achieved_deficit_kcal", "dose_share"] {
            num(o, k);
        }
    }
    for w in array(j, "warnings") {
        assert!(!text(w, "code").is_empty());
        assert!(!text(w, "message").is_empty());
    }
    assert_no_misplaced_null(j, "");
}

/// JSON cannot hold NaN; serde_json writes it as null. Null is allowed only for the
/// few keys that mean "none" (no policy action, no energy target in a follow-up or
/// minutes dose, no maximum, no screening result).
fn assert_no_misplaced_null(v: &Value, path: &str) {
    const MAY_BE_NULL: [&str; 4] = [
        "over_max",
        "target_kcal_per_session",
        "max_session_minutes",
        "clearance",
    ];
    match v {
        Value::Null => {
            let key = path.rsplit('.').next().unwrap_or("");
            assert!(MAY_BE_NULL.contains(&key), "null at {path}");
        }
        Value::Array(a) => a
            .iter()
            .enumerate()
            .for_each(|(i, x)| assert_no_misplaced_null(x, &format!("{path}[{i}]"))),
        Value::Object(o) => o
            .iter()
            .for_each(|(k, x)| assert_no_misplaced_null(x, &format!("{path}.{k}"))),
        _ => {}
    }
}

#[test]
fn demo_json_has_every_key_of_the_contract() {
    let r = run(dosewright().args(["schedule", "--format", "json"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stderr, "", "JSON on stdout, nothing else");
    let j: Value = serde_json::from_str(&r.stdout).expect("valid JSON");
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-11",
            weeks: 24,
            follow_up_weeks: 12,
            days: &["mon", "wed", "fri"],
            sessions_per_week: Some(3),
            uniform_minutes: true,
        },
    );
    let names: Vec<&str> = array(&j, "scenarios")
        .iter()
        .map(|s| text(s, "name"))
        .collect();
    assert_eq!(
        names,
        ["as prescribed", "eats back 40%", "mixed compensation"]
    );
    // The demo measures body fat, so the baseline says so.
    assert_eq!(j["baseline"]["fat_mass_estimated"], Value::Bool(false));
    // Compensation costs loss: each scenario loses less than the one before.
    let change: Vec<f64> = array(&j, "scenarios")
        .iter()
        .map(|s| num(&s["outcome"], "mass_change_kg"))
        .collect();
    assert!(
        change[0] < change[1] && change[1] < change[2] && change[2] < 0.0,
        "{change:?}"
    );
}

#[test]
fn json_always_carries_every_scenario_whatever_scenario_is_picked() {
    let a = run(dosewright().args(["schedule", "--format", "json"]));
    let b = run(dosewright().args([
        "schedule",
        "--format",
        "json",
        "--scenario",
        "eats back 40%",
    ]));
    assert_eq!(a.code, Some(0));
    assert_eq!(b.code, Some(0));
    assert_eq!(a.stdout, b.stdout);
}

#[test]
fn sessions_fall_on_the_plan_weekdays_in_date_order_from_any_start_weekday() {
    // Starts on a Wednesday; days listed out of order.
    let plan = base_with(
        &[
            ("start = 2027-01-04", "start = 2027-01-06"),
            ("weeks = 8", "weeks = 3\nfollow_up_weeks = 2"),
            ("[\"mon\", \"wed\", \"fri\"]", "[\"sat\", \"tue\", \"thu\"]"),
        ],
        "",
    );
    let j = schedule_json(&plan);
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-06",
            weeks: 3,
            follow_up_weeks: 2,
            days: &["tue", "thu", "sat"],
            sessions_per_week: Some(3),
            uniform_minutes: true,
        },
    );
    let w1: Vec<&str> = array(&j["scenarios"][0]["weeks"][0], "sessions")
        .iter()
        .map(|s| text(s, "date"))
        .collect();
    assert_eq!(w1, ["2027-01-07", "2027-01-09", "2027-01-12"]);
    assert_eq!(j["scenarios"][0]["outcome"]["end_date"], "2027-02-10");
}

/// Gross kcal per minute at `met` for `mass_kg` (ACSM: MET * 3.5 * M / 200).
fn gross_per_min(met: f64, mass_kg: f64) -> f64 {
    met * 3.5 * mass_kg / 200.0
}

#[test]
fn a_gross_weekly_dose_is_met_by_the_smallest_whole_rounded_minutes() {
    let step = 5.0;
    let plan = base_with(
        &[
            ("weeks = 8", "weeks = 6\nround_minutes_to = 5"),
            ("kcal_per_week = 1200", "kcal_per_week = 1250"),
        ],
        "\n[protocol.ramp]\nweeks = 2\nstart_fraction = 0.6\n",
    );
    let j = schedule_json(&plan);
    let mut full_weeks = 0;
    for w in array(&j["scenarios"][0], "weeks") {
        let ramp = num(w, "ramp_fraction");
        let target = 1250.0 * ramp;
        let sessions = array(w, "sessions");
        let n = sessions.len() as f64;
        let e = gross_per_min(4.0, num(w, "reference_mass_kg"));
        let mut sum = 0.0;
        for s in sessions {
            let m = s["minutes"].as_u64().unwrap() as f64;
            assert_eq!(m % step, 0.0, "minutes round to the step");
            let g = num(s, "gross_kcal");
            assert!((g - m * e).abs() < 1e-3, "gross = minutes * MET*3.5*M/200");
            // Enough for the session's share, and one step less would not be.
            assert!(g >= target / n - 1e-3, "session {g} below {}", target / n);
            assert!(
                g - step * e < target / n,
                "a step less would still meet the target"
            );
            sum += g;
        }
        assert!(sum >= target - 1e-3, "week sum {sum} below target {target}");
        assert!(sum < target + n * step * e, "week sum {sum} overshoots");
        if ramp == 1.0 {
            full_weeks += 1;
            assert!(sum < target + step * e * n);
        }
    }
    assert_eq!(full_weeks, 4, "weeks 3-6 are at the full dose");
    // The ramp: 0.6 in week 1, 0.8 in week 2.
    let ramps: Vec<f64> = array(&j["scenarios"][0], "weeks")
        .iter()
        .map(|w| num(w, "ramp_fraction"))
        .collect();
    assert_eq!(ramps, [0.6, 0.8, 1.0, 1.0, 1.0, 1.0]);
}

#[test]
fn a_net_per_session_dose_is_met_in_net_energy() {
    let plan = base_with(
        &[(
            "kcal_per_week = 1200",
            "kcal_per_session = 300\nbasis = \"net\"",
        )],
        "",
    );
    let j = schedule_json(&plan);
    for w in array(&j["scenarios"][0], "weeks") {
        for s in array(w, "sessions") {
            let m = s["minutes"].as_u64().unwrap() as f64;
            let net = num(s, "net_kcal");
            assert!(net >= 300.0 - 1e-3, "net {net} below 300");
            assert!(
                net - net / m < 300.0,
                "a minute less would still meet 300 net"
            );
            assert!(num(s, "gross_kcal") > net);
        }
    }
}

#[test]
fn a_minutes_dose_gives_those_minutes() {
    let plan = base_with(&[("kcal_per_week = 1200", "minutes_per_week = 150")], "");
    let j = schedule_json(&plan);
    for w in array(&j["scenarios"][0], "weeks") {
        // 150 / 3 = 50 minutes a session.
        assert_eq!(w["minutes_per_session"], 50);
        let total: u64 = array(w, "sessions")
            .iter()
            .map(|s| s["minutes"].as_u64().unwrap())
            .sum();
        assert_eq!(total, 150);
    }
}

#[test]
fn follow_up_weeks_have_no_exercise_and_the_contract_holds() {
    let plan = base_with(&[("weeks = 8", "weeks = 4\nfollow_up_weeks = 3")], "");
    let j = schedule_json(&plan);
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-04",
            weeks: 4,
            follow_up_weeks: 3,
            days: &["mon", "wed", "fri"],
            sessions_per_week: Some(3),
            uniform_minutes: true,
        },
    );
    let weeks = array(&j["scenarios"][0], "weeks");
    assert_eq!(weeks[4]["week"], 5);
    assert_eq!(j["scenarios"][0]["outcome"]["end_date"], "2027-02-22");
}

#[test]
fn every_example_plan_passes_check_and_keeps_the_json_contract() {
    let dir = manifest_dir().join("plans");
    let mut plans: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        // Study files (with [[arm]] tables) run through `cohort`, tested in tests/cohort.rs.
        .filter(|p| {
            let t: toml::Table = toml::from_str(&std::fs::read_to_string(p).unwrap()).unwrap();
            !t.contains_key("arm")
        })
        .collect();
    plans.sort();
    assert!(plans.len() >= 5, "the demo and at least four examples");
    for path in plans {
        let name = format!("plans/{}", path.file_name().unwrap().to_string_lossy());
        let check = run(dosewright()
            .current_dir(manifest_dir())
            .args(["check", &name]));
        assert_eq!(check.code, Some(0), "{name}: {}", check.stderr);
        assert!(
            check
                .stdout
                .starts_with(&format!("{name}: the plan is valid.\n"))
        );
        let r = run(dosewright()
            .current_dir(manifest_dir())
            .args(["schedule", &name, "--format", "json"]));
        assert_eq!(r.code, Some(0), "{name}: {}", r.stderr);
        let j: Value = serde_json::from_str(&r.stdout).expect("valid JSON");
        // The calendar as the plan file states it.
        let t: toml::Table = toml::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
        let p = t["protocol"].as_table().unwrap();
        let start = p["start"].to_string();
        let list = |k: &str| -> Vec<String> {
            p.get(k).and_then(|v| v.as_array()).map_or(Vec::new(), |a| {
                a.iter().map(|d| d.as_str().unwrap().to_string()).collect()
            })
        };
        let mut days = list("session_days");
        if p.get("over_max").and_then(|v| v.as_str()) == Some("add-session") {
            let spare = list("spare_days");
            if spare.is_empty() {
                days = ["mon", "tue", "wed", "thu", "fri", "sat", "sun"]
                    .map(String::from)
                    .to_vec();
            } else {
                days.extend(spare);
            }
        }
        let days: Vec<&str> = days.iter().map(String::as_str).collect();
        assert_schedule_contract(
            &j,
            &Shape {
                start: start.trim_matches('"'),
                weeks: p["weeks"].as_integer().unwrap() as u64,
                follow_up_weeks: p
                    .get("follow_up_weeks")
                    .map_or(0, |v| v.as_integer().unwrap()) as u64,
                days: &days,
                sessions_per_week: None,
                uniform_minutes: !t.contains_key("rotation") && !p.contains_key("closures"),
            },
        );
    }
}

// ---------------------------------------------------------------------------
// Warnings with stable codes
// ---------------------------------------------------------------------------

/// Plans built to earn one warning each: (code, plan, words the message must hold).
fn warning_plans() -> Vec<(&'static str, String, &'static str)> {
    let with = |edits: &[(&str, &str)], append: &str| base_with(edits, append);
    vec![
        (
            "session-over-max",
            with(&[("weeks = 8", "weeks = 8\nmax_session_minutes = 30")], ""),
            "exceed the 30-minute maximum in weeks 1-8 (flag: the minutes were kept)",
        ),
        (
            "weekly-minutes-over-300",
            with(&[("kcal_per_week = 1200", "minutes_per_week = 330")], ""),
            "more than 300 minutes of exercise a week in weeks 1-8",
        ),
        (
            "loss-rate-over-1-percent",
            with(
                &[
                    ("kcal_per_week = 1200", "kcal_per_week = 9000"),
                    ("met = 4.0", "met = 5.5"),
                ],
                "",
            ),
            "projected loss exceeds 1% of body mass per week",
        ),
        (
            "bmi-below-18.5",
            with(
                &[
                    ("mass_kg = 80.0", "mass_kg = 52.0"),
                    ("body_fat_percent = 38.0", "body_fat_percent = 25.0"),
                    ("kcal_per_week = 1200", "kcal_per_week = 3500"),
                    ("weeks = 8", "weeks = 20"),
                ],
                "",
            ),
            "projected BMI falls below 18.5 kg/m^2",
        ),
        (
            "acsm-equation-range",
            with(&[("met = 4.0", "walking = { speed_kmh = 7.0 }")], ""),
            "outside the ACSM walking equation's valid range of 50-100 m/min",
        ),
        (
            "fat-mass-estimated",
            with(&[("body_fat_percent = 38.0\n", "")], ""),
            "is estimated from BMI (Deurenberg",
        ),
        (
            "intake-pal-drift",
            with(
                &[("pal = 1.5", "pal = 1.5\nintake_kcal_per_day = 2500")],
                "",
            ),
            "measured intake (2500 kcal/day) is 295 kcal/day above the expenditure implied by PAL 1.50",
        ),
        (
            "older-adult-met",
            with(&[("age_years = 40", "age_years = 60")], ""),
            "age 60: a MET stated against the standard 3.5 ml/kg/min at rest tends to overstate the cost of activity",
        ),
        (
            "clearance-missing",
            with(&[("known_disease = false", "known_disease = true")], ""),
            "needs medical clearance, which medical_clearance does not record",
        ),
        (
            "vigorous-start",
            with(&[("met = 4.0", "met = 6.0")], ""),
            "vigorous intensity (6.0 MET) from week 1",
        ),
        (
            "screening-not-recorded",
            with(&[(BASE_SCREENING, "")], ""),
            "screening not recorded",
        ),
    ]
}

#[test]
fn every_warning_code_appears_for_a_plan_built_to_earn_it() {
    let all: BTreeSet<&str> = warning_plans().iter().map(|(c, _, _)| *c).collect();
    assert_eq!(all.len(), 11, "one plan per code");
    for (code, plan, words) in warning_plans() {
        let j = schedule_json(&plan);
        let ws = array(&j, "warnings");
        let hit: Vec<&Value> = ws.iter().filter(|w| w["code"] == code).collect();
        assert_eq!(hit.len(), 1, "{code}: want one warning, got {ws:?}");
        let msg = text(hit[0], "message");
        assert!(msg.contains(words), "{code}: {msg:?} lacks {words:?}");
        // No other code of the list fired by accident, except loss-rate plans
        // that necessarily run long weeks.
        for w in ws {
            let c = text(w, "code");
            if c != code {
                assert!(
                    matches!(
                        (code, c),
                        ("loss-rate-over-1-percent", "weekly-minutes-over-300")
                            | ("bmi-below-18.5", "weekly-minutes-over-300")
                    ),
                    "{code} plan also earned {c}"
                );
            }
        }
        // The table and check show it too, with the code.
        for cmd in [&["schedule"][..], &["check"][..]] {
            let (_d, r) = run_plan(&plan, cmd);
            assert_eq!(r.code, Some(0), "{}", r.stderr);
            assert!(
                r.stdout.contains(&format!("  - [{code}] ")),
                "{code} missing from {cmd:?} output"
            );
        }
        // CSV keeps stdout clean and gives the warnings on stderr.
        let (_d, r) = run_plan(&plan, &["schedule", "--format", "csv"]);
        assert!(
            r.stderr.contains(&format!("[{code}]")),
            "{code} not on csv stderr"
        );
        assert!(!r.stdout.contains(&format!("[{code}]")));
    }
}

#[test]
fn warning_thresholds_sit_where_the_issue_puts_them() {
    // Age 59 and 5.9 MET: no older-adult or vigorous warning.
    let j = schedule_json(&base_with(
        &[
            ("age_years = 40", "age_years = 59"),
            ("met = 4.0", "met = 5.9"),
        ],
        "",
    ));
    assert!(warning_codes(&j).is_empty(), "{:?}", warning_codes(&j));
    // Someone exercising regularly gets no vigorous-start caution at 7 MET.
    let j = schedule_json(&base_with(
        &[
            ("exercises_regularly = false", "exercises_regularly = true"),
            ("met = 4.0", "met = 7.0"),
        ],
        "",
    ));
    assert!(warning_codes(&j).is_empty(), "{:?}", warning_codes(&j));
    // Regular exerciser with known disease: moderate work needs no clearance ...
    let regular_disease = [
        ("exercises_regularly = false", "exercises_regularly = true"),
        ("known_disease = false", "known_disease = true"),
    ];
    let j = schedule_json(&base_with(&regular_disease, ""));
    assert!(warning_codes(&j).is_empty(), "{:?}", warning_codes(&j));
    // ... vigorous work does ...
    let mut vig = regular_disease.to_vec();
    vig.push(("met = 4.0", "met = 6.5"));
    let j = schedule_json(&base_with(&vig, ""));
    assert_eq!(warning_codes(&j), ["clearance-missing"]);
    // ... unless the clearance is on file.
    vig.push(("medical_clearance = false", "medical_clearance = true"));
    let j = schedule_json(&base_with(&vig, ""));
    assert!(warning_codes(&j).is_empty(), "{:?}", warning_codes(&j));
    // 300 minutes a week exactly is not over 300.
    let j = schedule_json(&base_with(
        &[("kcal_per_week = 1200", "minutes_per_week = 300")],
        "",
    ));
    assert!(warning_codes(&j).is_empty(), "{:?}", warning_codes(&j));
}

#[test]
fn the_screening_grid_gives_the_acsm_2015_recommendation() {
    // (exercises regularly, known disease, signs or symptoms, recommendation)
    let grid = [
        (
            false,
            false,
            false,
            "no medical clearance needed; start at light to moderate intensity and progress gradually",
        ),
        (
            false,
            true,
            false,
            "medical clearance recommended before any exercise",
        ),
        (
            false,
            false,
            true,
            "medical clearance recommended before any exercise",
        ),
        (
            false,
            true,
            true,
            "medical clearance recommended before any exercise",
        ),
        (
            true,
            false,
            false,
            "no medical clearance needed; continue and progress gradually",
        ),
        (
            true,
            true,
            false,
            "no clearance needed for moderate exercise; medical clearance recommended before vigorous exercise",
        ),
        (
            true,
            false,
            true,
            "stop exercising and obtain medical clearance before resuming",
        ),
        (
            true,
            true,
            true,
            "stop exercising and obtain medical clearance before resuming",
        ),
    ];
    for (reg, disease, signs, words) in grid {
        let plan = base_with(
            &[
                (
                    "exercises_regularly = false",
                    &format!("exercises_regularly = {reg}"),
                ),
                (
                    "known_disease = false",
                    &format!("known_disease = {disease}"),
                ),
                (
                    "signs_or_symptoms = false",
                    &format!("signs_or_symptoms = {signs}"),
                ),
            ],
            "",
        );
        let (_d, r) = run_plan(&plan, &["check"]);
        assert_eq!(r.code, Some(0), "{}", r.stderr);
        let line = r
            .stdout
            .lines()
            .find(|l| l.starts_with("Screening: "))
            .expect("a screening line");
        assert!(line.contains(words), "({reg}, {disease}, {signs}): {line}");
        // Clearance before any exercise, or stop and clear: symptoms, or disease in
        // someone not exercising regularly (4 MET is not vigorous).
        let needs_clearance = signs || (!reg && disease);
        let j = schedule_json(&plan);
        assert_eq!(
            warning_codes(&j).contains(&"clearance-missing".to_string()),
            needs_clearance,
            "({reg}, {disease}, {signs}) at 4 MET"
        );
    }
}

// ---------------------------------------------------------------------------
// The four over_max policies
// ---------------------------------------------------------------------------

/// BASE needs about 71.4 min a session (400 kcal at 5.6 kcal/min); these cut it.
fn over_max_plan(max: u32, policy: &str, extra: &str) -> String {
    base_with(
        &[(
            "weeks = 8",
            &format!("weeks = 8\nmax_session_minutes = {max}\nover_max = \"{policy}\"{extra}"),
        )],
        "",
    )
}

fn over_max_message(j: &Value) -> String {
    let ws = array(j, "warnings");
    assert_eq!(warning_codes(j), ["session-over-max"], "{ws:?}");
    text(&ws[0], "message").to_string()
}

fn weekly_gross(w: &Value) -> f64 {
    array(w, "sessions")
        .iter()
        .map(|s| num(s, "gross_kcal"))
        .sum()
}

#[test]
fn over_max_flag_keeps_the_minutes_and_warns() {
    let j = schedule_json(&over_max_plan(30, "flag", ""));
    let msg = over_max_message(&j);
    assert!(msg.contains("(flag: the minutes were kept)"), "{msg}");
    for w in array(&j["scenarios"][0], "weeks") {
        assert!(w["minutes_per_session"].as_u64().unwrap() > 30);
        assert!(weekly_gross(w) >= 1200.0 - 1e-3);
    }
}

#[test]
fn over_max_cap_cuts_to_the_maximum_and_reports_the_shortfall() {
    let j = schedule_json(&over_max_plan(30, "cap", ""));
    let msg = over_max_message(&j);
    assert!(msg.contains("(cap: sessions cut to the maximum, "), "{msg}");
    assert!(
        msg.contains(" kcal (gross) short of the prescribed dose in all"),
        "{msg}"
    );
    assert!(!msg.contains("still over"), "{msg}");
    for w in array(&j["scenarios"][0], "weeks") {
        for s in array(w, "sessions") {
            assert_eq!(s["minutes"], 30);
        }
        assert!(weekly_gross(w) < 1200.0, "a capped week falls short");
    }
}

#[test]
fn over_max_add_session_spreads_the_week_over_spare_days() {
    let j = schedule_json(&over_max_plan(
        45,
        "add-session",
        "\nspare_days = [\"tue\", \"thu\"]",
    ));
    let msg = over_max_message(&j);
    assert!(
        msg.contains("(add-session: up to 2 extra session(s) a week on spare days)"),
        "{msg}"
    );
    assert!(!msg.contains("still over"), "{msg}");
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-04",
            weeks: 8,
            follow_up_weeks: 0,
            days: &["mon", "tue", "wed", "thu", "fri"],
            sessions_per_week: Some(5),
            uniform_minutes: true,
        },
    );
    for w in array(&j["scenarios"][0], "weeks") {
        let sessions = array(w, "sessions");
        assert!(
            sessions
                .iter()
                .all(|s| s["minutes"].as_u64().unwrap() <= 45)
        );
        // The week's energy is kept.
        assert!(weekly_gross(w) >= 1200.0 - 1e-3, "{}", weekly_gross(w));
    }
}

#[test]
fn over_max_split_gives_two_equal_bouts_a_day() {
    let j = schedule_json(&over_max_plan(40, "split", ""));
    let msg = over_max_message(&j);
    assert!(
        msg.contains("(split: each session given as two equal bouts on the same day)"),
        "{msg}"
    );
    assert!(!msg.contains("still over"), "{msg}");
    assert_schedule_contract(
        &j,
        &Shape {
            start: "2027-01-04",
            weeks: 8,
            follow_up_weeks: 0,
            days: &["mon", "wed", "fri"],
            sessions_per_week: Some(3),
            uniform_minutes: true,
        },
    );
    for w in array(&j["scenarios"][0], "weeks") {
        let sessions = array(w, "sessions");
        assert_eq!(sessions.len(), 6, "two bouts on each of three days");
        for pair in sessions.chunks(2) {
            assert_eq!(pair[0]["date"], pair[1]["date"]);
            assert_eq!(pair[0]["minutes"], pair[1]["minutes"]);
            assert!(pair[0]["minutes"].as_u64().unwrap() <= 40);
        }
        assert!(weekly_gross(w) >= 1200.0 - 1e-3);
    }
}

#[test]
fn over_max_policies_that_cannot_fit_say_still_over() {
    for policy in ["add-session", "split"] {
        let j = schedule_json(&over_max_plan(20, policy, "\nspare_days = [\"sat\"]"));
        let msg = over_max_message(&j);
        assert!(
            msg.contains("; still over the maximum after that in weeks 1-8"),
            "{policy}: {msg}"
        );
    }
}

// ---------------------------------------------------------------------------
// schedule: table, csv, --scenario, --out
// ---------------------------------------------------------------------------

const CAUTION_WORDS: [&str; 4] = [
    "Screen first: complete a pre-participation health screening (ACSM 2015)",
    "Medical clearance: where the screening calls for it",
    "Stop exercising and seek help at once on chest pain",
    "the licensed professionals responsible for the participant decide",
];

#[test]
fn demo_table_shows_baseline_schedule_outcome_and_cautions() {
    let r = run(dosewright().arg("schedule"));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stderr, "");
    let t = &r.stdout;
    assert!(t.starts_with("dosewright session schedule: participant DEMO-017 ("));
    for words in [
        "Baseline\n",
        "fat mass 38.0 kg (36.5% body fat, measured)",
        "Schedule for scenario \"as prescribed\" (1 of 3; --scenario NAME shows another)",
        "| 1    | 2027-01-11 | mon |",
        "| 36   | 2027-09-13 | -   | follow-up |",
        "Exercise stops after week 24; weeks 25-36 are follow-up with no sessions.",
        "Projected outcome by scenario",
        "| eats back 40%      | 2027-09-20 |",
        "| mixed compensation | 2027-09-20 |",
        "Warnings: none",
        "Cautions\n",
    ] {
        assert!(t.contains(words), "table lacks {words:?}");
    }
    for words in CAUTION_WORDS {
        assert!(t.contains(words), "table lacks the caution {words:?}");
    }
    // The outcome rows carry a projection band around the projected mass.
    assert!(t.contains("| mass [kg] |   band [kg] |"), "no band column");
    let mut rows = 0;
    for line in t.lines() {
        let cells: Vec<&str> = line.split('|').map(str::trim).collect();
        if cells.len() < 5
            || !["as prescribed", "eats back 40%", "mixed compensation"].contains(&cells[1])
        {
            continue;
        }
        rows += 1;
        let mass: f64 = cells[3].parse().expect("the mass is a number");
        let (lo, hi) = cells[4].split_once('-').expect("a band reads LOW-HIGH");
        let (lo, hi): (f64, f64) = (lo.parse().unwrap(), hi.parse().unwrap());
        assert!(
            lo <= mass && mass <= hi,
            "band {lo}-{hi} misses {mass}: {line}"
        );
    }
    assert!(rows >= 3, "{rows} outcome rows with a band");
    // Same as asking for the table by name.
    let named = run(dosewright().args(["schedule", "--format", "table"]));
    assert_eq!(named.stdout, r.stdout);
}

#[test]
fn scenario_picks_whose_schedule_the_table_shows() {
    let r = run(dosewright().args(["schedule", "--scenario", "eats back 40%"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(r.stdout.contains(
        "Schedule for scenario \"eats back 40%\" (2 of 3; --scenario NAME shows another): intake rises by 40% of exercise energy, reaching it with a 21-day lag"
    ));
    assert!(!r.stdout.contains("Schedule for scenario \"as prescribed\""));
    let first = run(dosewright().arg("schedule"));
    assert_ne!(first.stdout, r.stdout);
}

#[test]
fn an_unknown_scenario_is_bad_input_with_the_names_on_offer() {
    for format in ["table", "csv", "json"] {
        let r = run(dosewright().args(["schedule", "--scenario", "nope", "--format", format]));
        assert_eq!(r.code, Some(2));
        assert_eq!(r.stdout, "");
        assert_eq!(
            r.stderr,
            "error: --scenario: no scenario named \"nope\" in built-in demo plan (plans/demo.toml); the plan has \"as prescribed\", \"eats back 40%\", \"mixed compensation\"\n"
        );
    }
    let (_d, r) = run_plan(BASE, &["schedule", "--scenario", "As Prescribed"]);
    assert_eq!(r.code, Some(2));
    assert_eq!(r.stdout, "");
    assert_eq!(
        r.stderr,
        "error: --scenario: no scenario named \"As Prescribed\" in plan.toml; the plan has \"as prescribed\"\n"
    );
}

#[test]
fn csv_has_one_row_per_session_and_per_follow_up_week() {
    let r = run(dosewright().args(["schedule", "--format", "csv"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let mut rd = csv::Reader::from_reader(r.stdout.as_bytes());
    let header: Vec<String> = rd.headers().unwrap().iter().map(String::from).collect();
    assert_eq!(
        header,
        [
            "scenario",
            "week",
            "phase",
            "week_start",
            "reference_mass_kg",
            "mass_source",
            "date",
            "weekday",
            "minutes",
            "met",
            "gross_kcal",
            "net_kcal",
            "relative_intensity",
            "week_end_mass_kg"
        ]
    );
    let rows: Vec<csv::StringRecord> = rd.records().map(|r| r.unwrap()).collect();
    // 3 scenarios x (24 weeks x 3 sessions + 12 follow-up weeks).
    assert_eq!(rows.len(), 3 * (24 * 3 + 12));
    let mut last: Option<(String, String)> = None;
    for row in &rows {
        let minutes: u32 = row[8].parse().expect("minutes are whole numbers");
        match &row[2] {
            "protocol" => {
                assert!(minutes > 0);
                let d = date(&row[6]);
                assert_eq!(weekday_word(d), &row[7]);
                assert!(["mon", "wed", "fri"].contains(&&row[7]));
                for col in [4, 9, 10, 11, 12, 13] {
                    let x: f64 = row[col].parse().expect("a number");
                    assert!(x.is_finite() && x > 0.0);
                }
                if let Some((s, prev)) = &last
                    && s == &row[0]
                {
                    assert!(prev.as_str() < &row[6], "date order");
                }
                last = Some((row[0].to_string(), row[6].to_string()));
            }
            "follow-up" => {
                assert_eq!(minutes, 0);
                assert_eq!(&row[6], "");
            }
            other => panic!("phase {other}"),
        }
    }
    // Warnings and cautions go to stderr beside machine-readable output.
    assert!(
        r.stderr.starts_with("Warnings: none\nCautions\n"),
        "{}",
        r.stderr
    );
    for words in CAUTION_WORDS {
        assert!(r.stderr.contains(words));
        assert!(!r.stdout.contains(words));
    }
}

#[test]
fn a_plan_without_screening_says_screening_not_recorded_everywhere() {
    let plan = base_with(&[(BASE_SCREENING, "")], "");
    let (_d, table) = run_plan(&plan, &["schedule"]);
    let (_d, check) = run_plan(&plan, &["check"]);
    let (_d, csv) = run_plan(&plan, &["schedule", "--format", "csv"]);
    for (what, out) in [
        ("table", &table.stdout),
        ("check", &check.stdout),
        ("csv stderr", &csv.stderr),
    ] {
        assert!(
            out.contains("Screening result: screening not recorded"),
            "{what}"
        );
        assert!(
            out.contains("[screening-not-recorded] screening not recorded"),
            "{what}"
        );
        for words in CAUTION_WORDS {
            assert!(out.contains(words), "{what} lacks {words:?}");
        }
    }
    let j = schedule_json(&plan);
    assert_eq!(warning_codes(&j), ["screening-not-recorded"]);
    // With the screening block, none of that.
    let (_d, with) = run_plan(BASE, &["schedule"]);
    assert!(!with.stdout.contains("screening not recorded"));
}

#[test]
fn out_writes_the_file_atomically_and_prints_nothing() {
    let dir = Scratch::new("out");
    dir.write("plan.toml", BASE);
    for (format, file) in [
        ("json", "out.json"),
        ("csv", "out.csv"),
        ("table", "out.txt"),
    ] {
        let direct = run(dir
            .cmd()
            .args(["schedule", "plan.toml", "--format", format]));
        assert_eq!(direct.code, Some(0));
        // An older file of that name is replaced.
        dir.write(file, "old contents\n");
        let r = run(dir
            .cmd()
            .args(["schedule", "plan.toml", "--format", format, "--out", file]));
        assert_eq!(r.code, Some(0), "{}", r.stderr);
        assert_eq!(r.stdout, "", "--out prints nothing on stdout");
        assert!(
            r.stderr.ends_with(&format!("wrote {file}\n")),
            "{}",
            r.stderr
        );
        let written = std::fs::read_to_string(dir.path().join(file)).unwrap();
        assert_eq!(
            written, direct.stdout,
            "{format}: the file holds the output"
        );
    }
    // No temporary file is left behind.
    assert_eq!(
        dir.listing(),
        ["out.csv", "out.json", "out.txt", "plan.toml"]
    );
}

#[test]
fn out_refuses_to_overwrite_the_input_plan() {
    let dir = Scratch::new("out-input");
    dir.write("plan.toml", BASE);
    for target in ["plan.toml", "./plan.toml"] {
        let r = run(dir
            .cmd()
            .args(["schedule", "plan.toml", "--format", "json", "--out", target]));
        assert_eq!(r.code, Some(2));
        assert_eq!(r.stdout, "");
        assert_eq!(
            r.stderr,
            format!("error: --out {target}: that is an input file; refusing to overwrite it\n")
        );
        assert_eq!(
            std::fs::read_to_string(dir.path().join("plan.toml")).unwrap(),
            BASE
        );
    }
    assert_eq!(dir.listing(), ["plan.toml"]);
}

#[test]
fn bad_arguments_exit_2_with_nothing_on_stdout() {
    for args in [
        &["schedule", "--format", "xml"][..],
        &["frobnicate"][..],
        &["check"][..],
        &["schedule", "--bogus"][..],
    ] {
        let r = run(dosewright().args(args));
        assert_eq!(r.code, Some(2), "{args:?}");
        assert_eq!(r.stdout, "", "{args:?}");
        assert!(r.stderr.starts_with("error: "), "{args:?}: {}", r.stderr);
    }
    let r = run(dosewright().args(["schedule", "--format", "xml"]));
    assert!(r.stderr.contains("[possible values: table, csv, json]"));
}

// ---------------------------------------------------------------------------
// check, init, activities
// ---------------------------------------------------------------------------

#[test]
fn check_prints_the_resolved_assumptions_with_every_default() {
    let (_d, r) = run_plan(BASE, &["check"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    for words in [
        "plan.toml: the plan is valid.",
        "Participant T-001: female, 40 years, 165.0 cm",
        "fat mass 30.4 kg (38.0% body fat, measured)",
        "Dose: 1200 kcal/week, gross; sessions on mon wed fri; no maximum session length",
        "Protocol: 8 weeks from 2027-01-04, 0 follow-up weeks, ends 2027-03-01",
        "Ramp: none (full dose from week 1)",
        "Minutes round up to: 1 min",
        "RMR equation: mifflin-st-jeor",
        "exercise energy counted above: the participant's own RMR (own-rmr)",
        "TEF 0.10 of intake; fat 9500 kcal/kg; fat-free 1020 kcal/kg; Forbes constant 10.4 kg",
        "as prescribed: every session delivered as prescribed; nothing compensated",
        "Warnings: none",
    ] {
        assert!(
            r.stdout.contains(words),
            "check lacks {words:?}:\n{}",
            r.stdout
        );
    }
    for words in CAUTION_WORDS {
        assert!(r.stdout.contains(words));
    }
    // check does not print a schedule.
    assert!(!r.stdout.contains("| 2027-01-04 |"));
}

#[test]
fn init_prints_the_starter_plan_on_stdout() {
    let r = run(dosewright().arg("init"));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stderr, "");
    assert!(r.stdout.contains("\n# A starter plan for dosewright."));
    // The cautions come first, before any key.
    assert!(
        r.stdout
            .starts_with("# Before any exercise: complete the pre-participation health screening")
    );
    let t: toml::Table = toml::from_str(&r.stdout).expect("the starter is TOML");
    for k in ["participant", "protocol", "activity", "model", "scenario"] {
        assert!(t.contains_key(k), "starter lacks [{k}]");
    }
}

#[test]
fn init_file_writes_a_starter_that_passes_check_and_never_overwrites() {
    let dir = Scratch::new("init");
    let r = run(dir.cmd().args(["init", "starter.toml"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stdout, "");
    assert_eq!(
        r.stderr,
        "wrote starter.toml; edit it, then run `dosewright check starter.toml`\n"
    );
    let written = std::fs::read_to_string(dir.path().join("starter.toml")).unwrap();
    assert_eq!(written, run(dosewright().arg("init")).stdout);
    let check = run(dir.cmd().args(["check", "starter.toml"]));
    assert_eq!(check.code, Some(0), "{}", check.stderr);
    assert!(
        check
            .stdout
            .starts_with("starter.toml: the plan is valid.\n")
    );
    let sched = run(dir
        .cmd()
        .args(["schedule", "starter.toml", "--format", "json"]));
    assert_eq!(sched.code, Some(0), "{}", sched.stderr);
    assert_eq!(dir.listing(), ["starter.toml"]);

    // An existing file is left alone: exit 2, same bytes.
    dir.write("mine.toml", "# my own plan\n");
    for name in ["mine.toml", "starter.toml"] {
        let before = std::fs::read(dir.path().join(name)).unwrap();
        let r = run(dir.cmd().args(["init", name]));
        assert_eq!(r.code, Some(2));
        assert_eq!(r.stdout, "");
        assert_eq!(
            r.stderr,
            format!(
                "error: {name}: the file exists; refusing to overwrite it (choose another name or remove it first)\n"
            )
        );
        assert_eq!(std::fs::read(dir.path().join(name)).unwrap(), before);
    }
    assert_eq!(dir.listing(), ["mine.toml", "starter.toml"]);
}

#[test]
fn activities_lists_the_whole_table_with_the_acsm_equations() {
    let r = run(dosewright().arg("activities"));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let rows = activity_rows(&r.stdout);
    assert!(
        rows.len() >= 80,
        "at least 80 activities, got {}",
        rows.len()
    );
    assert!(
        r.stdout
            .starts_with(&format!("{} activities in the built-in table.", rows.len()))
    );
    let codes: BTreeSet<&str> = rows.iter().map(|r| r.0.as_str()).collect();
    assert_eq!(codes.len(), rows.len(), "codes are unique");
    assert!(codes.contains("17200") && codes.contains("02010"));
    assert!(rows.iter().all(|r| r.1 > 1.0 && r.1 <= 25.0));
    for words in [
        "Ainsworth et al. 2011 Compendium of Physical Activities",
        "ACSM metabolic equations",
        "| walking ",
        "50-100 m/min",
        "| running ",
        "above 134 m/min",
        "| leg cycling ",
        "300-1200 kg*m/min",
    ] {
        assert!(r.stdout.contains(words), "activities lacks {words:?}");
    }
    for words in CAUTION_WORDS {
        assert!(
            r.stdout.contains(words),
            "activities lacks the caution {words:?}"
        );
    }
}

#[test]
fn activities_searches_by_words_code_prefix_and_met_range() {
    let all = activity_rows(&run(dosewright().arg("activities")).stdout);

    let r = run(dosewright().args(["activities", "walk"]));
    assert_eq!(r.code, Some(0));
    let walk = activity_rows(&r.stdout);
    assert!(!walk.is_empty() && walk.len() < all.len());
    for (code, _, group, label) in &walk {
        let hay = format!("{label} {group}").to_lowercase();
        assert!(hay.contains("walk"), "{code} {label} does not match walk");
    }
    assert!(
        r.stdout
            .starts_with(&format!("{} activities matching \"walk\".", walk.len()))
    );
    let expected = all
        .iter()
        .filter(|r| format!("{} {}", r.3, r.2).to_lowercase().contains("walk"))
        .count();
    assert_eq!(walk.len(), expected, "every walking row is found");

    let r = run(dosewright().args(["activities", "0201"]));
    assert_eq!(r.code, Some(0));
    let prefix = activity_rows(&r.stdout);
    assert!(!prefix.is_empty());
    assert!(prefix.iter().all(|r| r.0.starts_with("0201")), "{prefix:?}");
    assert_eq!(
        prefix.len(),
        all.iter().filter(|r| r.0.starts_with("0201")).count()
    );

    let r = run(dosewright().args(["activities", "--met-min", "8", "--met-max", "10"]));
    assert_eq!(r.code, Some(0));
    let band = activity_rows(&r.stdout);
    assert!(!band.is_empty());
    assert!(band.iter().all(|r| (8.0..=10.0).contains(&r.1)), "{band:?}");
    assert_eq!(
        band.len(),
        all.iter().filter(|r| (8.0..=10.0).contains(&r.1)).count()
    );
    assert!(all.iter().any(|r| r.1 < 8.0) && all.iter().any(|r| r.1 > 10.0));
    assert!(
        r.stdout
            .starts_with(&format!("{} activities between 8 and 10 MET.", band.len()))
    );
}

#[test]
fn activities_refuses_an_impossible_met_range() {
    for (args, msg) in [
        (
            &["activities", "--met-min", "10", "--met-max", "8"][..],
            "error: --met-min 10 is above --met-max 8\n",
        ),
        (
            &["activities", "--met-min", "30"][..],
            "error: --met-min 30: allowed 0 to 25 MET\n",
        ),
        (
            &["activities", "--met-max", "nan"][..],
            "error: --met-max NaN: allowed 0 to 25 MET\n",
        ),
    ] {
        let r = run(dosewright().args(args));
        assert_eq!(r.code, Some(2), "{args:?}");
        assert_eq!(r.stdout, "");
        assert_eq!(r.stderr, msg);
    }
}

// ---------------------------------------------------------------------------
// Snapshots of the demo plan (review changes with `cargo insta review`)
// ---------------------------------------------------------------------------

fn demo_output(args: &[&str]) -> String {
    let r = run(dosewright().current_dir(manifest_dir()).args(args));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    r.stdout
}

#[test]
fn snapshot_demo_schedule_table() {
    insta::assert_snapshot!("demo_schedule_table", demo_output(&["schedule"]));
}

#[test]
fn snapshot_demo_schedule_csv() {
    insta::assert_snapshot!(
        "demo_schedule_csv",
        demo_output(&["schedule", "--format", "csv"])
    );
}

#[test]
fn snapshot_demo_schedule_json() {
    let out = demo_output(&["schedule", "--format", "json"]).replace(
        concat!("\"dosewright ", env!("CARGO_PKG_VERSION"), "\""),
        "\"dosewright [version]\"",
    );
    assert!(out.contains("\"tool\": \"dosewright [version]\""));
    insta::assert_snapshot!("demo_schedule_json", out);
}

#[test]
fn snapshot_check_example_plan() {
    insta::assert_snapshot!(
        "check_demo_plan",
        demo_output(&["check", "plans/demo.toml"])
    );
}

// ---------------------------------------------------------------------------
// Behaviour once reported as bugs, now fixed in src/
// ---------------------------------------------------------------------------

#[test]
fn cap_never_leaves_a_session_over_the_maximum() {
    // 400 kcal a session at 5.6 kcal/min. A step larger than the maximum is refused
    // (in the bad-plan table); a step that fits keeps every session within it.
    for (max, step) in [(20, 20), (40, 15), (20, 7), (45, 1)] {
        let plan = base_with(
            &[(
                "weeks = 8",
                &format!(
                    "weeks = 2\nmax_session_minutes = {max}\nover_max = \"cap\"\nround_minutes_to = {step}"
                ),
            )],
            "",
        );
        let j = schedule_json(&plan);
        assert_eq!(
            warning_codes(&j),
            ["session-over-max"],
            "max {max} step {step}"
        );
        for w in array(&j["scenarios"][0], "weeks") {
            for s in array(w, "sessions") {
                let m = s["minutes"].as_u64().unwrap();
                assert!(m <= max, "max {max} step {step}: capped session of {m} min");
                assert_eq!(
                    m % step,
                    0,
                    "max {max} step {step}: {m} min is not a whole step"
                );
                // The largest whole step within the maximum (README, "Cap").
                assert!(
                    m + step > max,
                    "max {max} step {step}: {m} min is cut too far"
                );
            }
        }
    }
}

#[test]
fn csv_carries_every_scenario_whatever_scenario_is_picked() {
    // The CSV is the machine-readable schedule: every scenario, like the JSON; the
    // table shows only the chosen one (scenario_picks_whose_schedule_the_table_shows).
    let all = run(dosewright().args(["schedule", "--format", "csv"]));
    let picked =
        run(dosewright().args(["schedule", "--format", "csv", "--scenario", "eats back 40%"]));
    assert_eq!(all.code, Some(0), "{}", all.stderr);
    assert_eq!(picked.code, Some(0), "{}", picked.stderr);
    assert_eq!(
        picked.stdout, all.stdout,
        "--scenario does not change the CSV"
    );
    let mut rd = csv::Reader::from_reader(picked.stdout.as_bytes());
    let mut names: Vec<String> = Vec::new();
    for x in rd.records() {
        let name = x.unwrap()[0].to_string();
        if names.last() != Some(&name) {
            names.push(name);
        }
    }
    assert_eq!(
        names,
        ["as prescribed", "eats back 40%", "mixed compensation"],
        "each scenario once, as one block, in plan order"
    );
    // The table, by contrast, shows the chosen scenario's sessions only.
    let table = run(dosewright().args(["schedule", "--scenario", "eats back 40%"]));
    assert!(
        table
            .stdout
            .contains("Schedule for scenario \"eats back 40%\"")
    );
    assert_eq!(table.stdout.matches("Schedule for scenario").count(), 1);
}

#[test]
fn schedule_help_says_what_scenario_picks_and_what_csv_and_json_carry() {
    let r = run(dosewright().args(["schedule", "--help"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    // Help text may wrap at the terminal width; compare with whitespace collapsed.
    let flat = r.stdout.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        flat.contains(
            "--scenario <SCENARIO> Whose schedule the table shows (default: the first scenario; CSV and JSON carry every scenario)"
        ),
        "{}",
        r.stdout
    );
    assert!(!flat.contains("table and CSV show"), "{}", r.stdout);
}

#[test]
fn a_session_of_a_day_or_more_is_refused() {
    let long = base_with(
        &[
            ("mass_kg = 80.0", "mass_kg = 50.0"),
            ("met = 4.0", "met = 1.5"),
            ("kcal_per_week = 1200", "kcal_per_session = 3000"),
            ("weeks = 8", "weeks = 1"),
        ],
        "",
    );
    for args in [
        &["check"][..],
        &["schedule", "--format", "csv"][..],
        &["schedule"][..],
    ] {
        let (_d, r) = run_plan(&long, args);
        assert_eq!(
            r.code,
            Some(2),
            "{args:?}: a 2286-minute session was scheduled"
        );
        assert_eq!(r.stdout, "", "{args:?}");
        assert!(
            r.stderr.contains("week 1 needs sessions of 2286 min"),
            "{args:?}: {}",
            r.stderr
        );
    }
    // The edge: a minutes dose on one weekday, 1439 minutes runs, 1440 does not.
    let one_day = |minutes: u32, extra: &str| {
        base_with(
            &[
                ("[\"mon\", \"wed\", \"fri\"]", "[\"mon\"]"),
                (
                    "kcal_per_week = 1200",
                    &format!("minutes_per_week = {minutes}"),
                ),
                ("weeks = 8", &format!("weeks = 2{extra}")),
            ],
            "",
        )
    };
    let (_d, r) = run_plan(&one_day(1439, ""), &["schedule", "--format", "json"]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let (_d, r) = run_plan(&one_day(1440, ""), &["schedule", "--format", "json"]);
    assert_eq!(r.code, Some(2), "a 1440-minute session was scheduled");
    assert_eq!(r.stdout, "");
    assert!(r.stderr.contains("sessions of 1440 min"), "{}", r.stderr);
    // Splitting a day's work into two bouts on the same day does not get round it ...
    let split = one_day(1440, "\nmax_session_minutes = 600\nover_max = \"split\"");
    let (_d, r) = run_plan(&split, &["schedule", "--format", "json"]);
    assert_eq!(
        r.code,
        Some(2),
        "two 720-minute bouts on one day were scheduled"
    );
    // ... but capping the sessions does.
    let cap = one_day(1440, "\nmax_session_minutes = 600\nover_max = \"cap\"");
    let j = schedule_json(&cap);
    assert_eq!(j["scenarios"][0]["weeks"][0]["minutes_per_session"], 600);
}

#[test]
fn add_session_needs_a_free_weekday() {
    // All seven weekdays as session days leaves nothing to add to, also with an
    // explicitly empty spare_days.
    let seven = "[\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\", \"sun\"]";
    for spare in ["", "\nspare_days = []"] {
        let plan = base_with(
            &[
                ("[\"mon\", \"wed\", \"fri\"]", seven),
                (
                    "weeks = 8",
                    &format!(
                        "weeks = 2\nmax_session_minutes = 5\nover_max = \"add-session\"{spare}"
                    ),
                ),
            ],
            "",
        );
        let (_d, r) = run_plan(&plan, &["check"]);
        assert_eq!(r.code, Some(2), "{spare:?}: {}", r.stdout);
        assert_eq!(r.stdout, "");
        assert_eq!(
            r.stderr,
            "error: plan.toml:20:12: protocol.over_max: \"add-session\" needs a free weekday, but all seven are session days; use \"split\" or \"cap\"\n"
        );
    }
    // Six session days leave Sunday, and the extra session goes there.
    let six = base_with(
        &[
            (
                "[\"mon\", \"wed\", \"fri\"]",
                "[\"mon\", \"tue\", \"wed\", \"thu\", \"fri\", \"sat\"]",
            ),
            (
                "weeks = 8",
                "weeks = 2\nmax_session_minutes = 30\nover_max = \"add-session\"",
            ),
        ],
        "",
    );
    let j = schedule_json(&six);
    let msg = over_max_message(&j);
    assert!(
        msg.contains("(add-session: up to 1 extra session(s) a week on spare days)"),
        "{msg}"
    );
    for w in array(&j["scenarios"][0], "weeks") {
        let days: Vec<&str> = array(w, "sessions")
            .iter()
            .map(|s| weekday_word(date(text(s, "date"))))
            .collect();
        assert_eq!(days, ["mon", "tue", "wed", "thu", "fri", "sat", "sun"]);
    }
}

#[test]
fn activities_with_no_match_or_one_match_reads_well() {
    let r = run(dosewright().args(["activities", "zzz"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(
        r.stdout.starts_with("No activity matching \"zzz\".\n\n"),
        "{}",
        r.stdout
    );
    assert!(activity_rows(&r.stdout).is_empty());
    assert!(!r.stdout.contains("matches matching"));
    // The ACSM equations and the cautions are still shown.
    assert!(r.stdout.contains("ACSM metabolic equations"));
    for words in CAUTION_WORDS {
        assert!(r.stdout.contains(words), "lacks the caution {words:?}");
    }
    let r = run(dosewright().args(["activities", "17200"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(activity_rows(&r.stdout).len(), 1);
    assert!(
        r.stdout.starts_with("1 activity matching \"17200\". "),
        "{}",
        r.stdout
    );
    let r = run(dosewright().args(["activities", "--met-min", "0", "--met-max", "1.5"]));
    assert!(
        r.stdout
            .starts_with("No activity between 0 and 1.5 MET.\n\n"),
        "{}",
        r.stdout
    );
}

// ---------------------------------------------------------------------------
// Behaviour bugs still open in src/ (ignored until fixed; see the report)
// ---------------------------------------------------------------------------

#[test]
fn out_or_init_into_a_missing_folder_fails_without_output() {
    // What holds whatever the exit code: nothing on stdout, nothing written, the
    // path named. The exit code and wording are pinned by the ignored test below.
    let dir = Scratch::new("missing-folder");
    dir.write("plan.toml", BASE);
    for args in [
        &["schedule", "plan.toml", "--out", "no/such/folder/out.txt"][..],
        &["init", "no/such/folder/starter.toml"][..],
    ] {
        let r = run(dir.cmd().args(args));
        assert!(
            matches!(r.code, Some(1) | Some(2)),
            "{args:?}: {:?}",
            r.code
        );
        assert_eq!(r.stdout, "", "{args:?}");
        assert!(
            r.stderr.starts_with("error: no/such/folder/"),
            "{args:?}: {}",
            r.stderr
        );
        assert_eq!(r.stderr.lines().count(), 1, "{args:?}: {}", r.stderr);
    }
    assert_eq!(dir.listing(), ["plan.toml"]);
}

#[test]
fn out_or_init_into_a_missing_folder_is_a_bad_argument() {
    let dir = Scratch::new("missing-folder-2");
    dir.write("plan.toml", BASE);
    for args in [
        &["schedule", "plan.toml", "--out", "no/such/folder/out.txt"][..],
        &[
            "schedule",
            "plan.toml",
            "--format",
            "csv",
            "--out",
            "no/out.csv",
        ][..],
        &["init", "no/such/folder/starter.toml"][..],
    ] {
        let r = run(dir.cmd().args(args));
        assert_eq!(r.code, Some(2), "{args:?}: {}", r.stderr);
        assert_eq!(r.stdout, "", "{args:?}");
        assert!(
            r.stderr.contains("does not exist"),
            "{args:?}: {}",
            r.stderr
        );
        assert!(!r.stderr.contains("os error"), "{args:?}: {}", r.stderr);
    }
    assert_eq!(dir.listing(), ["plan.toml"]);
}

#[test]
fn a_not_utf8_column_counts_characters_like_every_other_message() {
    // `id = "Té` then 0xFF: the bad byte is the 9th character of line 2 (an editor's
    // column 9), but the 10th byte. TOML errors count characters.
    let mut bytes = BASE.replace("T-001", "Té-001").into_bytes();
    let at = bytes.windows(4).position(|w| w == b"-001").unwrap();
    bytes[at] = 0xFF;
    let problems = bad_run_problems(
        &bytes,
        &["check", "bad.toml"],
        "error: bad.toml: cannot read: not UTF-8 text (byte 0xFF at line 2, column 9); save the file as UTF-8",
    );
    assert!(problems.is_empty(), "{}", problems.join("\n"));
    // The same line with a value error after the é: the column counts characters.
    let problems = bad_run_problems(
        base_with(&[("[\"mon\", \"wed\", \"fri\"]", "[\"é\", 3]")], "").as_bytes(),
        &["check", "bad.toml"],
        "error: bad.toml:19:22: protocol.session_days: invalid type: integer `3`, expected a string",
    );
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn cap_says_what_length_it_cut_to() {
    // Maximum 40, 15-minute steps: sessions are cut to 30 minutes (README: the largest
    // whole step that fits), yet the warning says "sessions cut to the maximum".
    let plan = base_with(
        &[(
            "weeks = 8",
            "weeks = 2\nmax_session_minutes = 40\nover_max = \"cap\"\nround_minutes_to = 15",
        )],
        "",
    );
    let j = schedule_json(&plan);
    assert_eq!(j["scenarios"][0]["weeks"][0]["minutes_per_session"], 30);
    let msg = over_max_message(&j);
    assert!(!msg.contains("cut to the maximum"), "{msg}");
    assert!(msg.contains("30 min"), "{msg}");
}

#[test]
fn activities_with_one_met_bound_reads_well() {
    let r = run(dosewright().args(["activities", "--met-min", "12"]));
    assert_eq!(r.code, Some(0));
    let n = activity_rows(&r.stdout).len();
    assert!(n > 1);
    let first = r.stdout.lines().next().unwrap();
    assert!(first.starts_with(&format!("{n} activities ")), "{first}");
    assert!(first.contains("12 MET"), "{first}");
    assert!(!first.contains("and any"), "{first}");
}
