//! The participant log: reading and validating (every rule of docs/file-formats.md section 3, "The
//! participant log", with the exact error texts), byte-order
//! marks and Windows line endings, and appending a row without ever losing or
//! reordering earlier bytes, even when the append fails.
//!
//! Every participant and every value here is invented.

mod common;

use chrono::NaiveDate;
use common::Scratch;
use dosewright::Error;
use dosewright::activity::Intensity;
use dosewright::log::*;
use dosewright::plan::{Plan, parse_plan};
use proptest::prelude::*;

/// A small plan: start Monday 2027-01-04, 8 weeks and 2 of follow-up, so log dates
/// run through 2027-03-15; the activity is a stated 4.0 MET.
const PLAN: &str = r#"[participant]
id = "T-LOG"
sex = "female"
age_years = 40
height_cm = 165.0
mass_kg = 80.0
body_fat_percent = 38.0
pal = 1.5

[protocol]
start = 2027-01-04
weeks = 8
follow_up_weeks = 2
session_days = ["mon", "wed", "fri"]

[protocol.dose]
kcal_per_week = 1200

[activity]
met = 4.0
"#;

const HEADER: &str =
    "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n";

fn plan() -> Plan {
    parse_plan("plan.toml", PLAN).expect("the test plan is valid")
}

fn demo_plan() -> Plan {
    let text = std::fs::read_to_string(common::manifest_dir().join("plans/demo.toml"))
        .expect("plans/demo.toml is readable");
    parse_plan("plans/demo.toml", &text).expect("the demo plan is valid")
}

/// The header, then `rows`.
fn log(rows: &str) -> String {
    format!("{HEADER}{rows}")
}

fn date(s: &str) -> NaiveDate {
    s.parse().expect("a test date")
}

fn parse(text: &str) -> Result<(Log, Vec<dosewright::safety::Warning>), Error> {
    parse_log("log.csv", text, &plan(), None)
}

// ---------------------------------------------------------------------------
// Bad logs: exact texts, exit code 2
// ---------------------------------------------------------------------------

/// Each bad log and the full message it must give.
fn bad_logs() -> Vec<(&'static str, String, &'static str)> {
    let h = |rows: &str| log(rows);
    vec![
        // The file and its header
        (
            "empty file",
            String::new(),
            "log.csv: the log is empty; its first line must be the header date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note",
        ),
        (
            "only a byte-order mark and blank lines",
            "\u{feff}\r\n  \r\n".to_string(),
            "log.csv: the log is empty; its first line must be the header date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note",
        ),
        (
            "missing header",
            "2027-01-04,weigh-in,80,,,,,,,\n".to_string(),
            "log.csv:1:1: no header row: this line holds data (\"2027-01-04\"); insert the header date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note as the first line",
        ),
        (
            "wrong header name",
            "date,kind,mass,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n"
                .to_string(),
            "log.csv:1:3: header column 3 is \"mass\" where \"mass_kg\" belongs; the header must start date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note in this order (more columns may follow)",
        ),
        (
            "header out of order",
            "date,kind,body_fat_percent,mass_kg,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n"
                .to_string(),
            "log.csv:1:3: header column 3 is \"body_fat_percent\" where \"mass_kg\" belongs (the columns are out of order); the header must start date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note in this order (more columns may follow)",
        ),
        (
            "header too short",
            "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm\n"
                .to_string(),
            "log.csv:1:9: the header has 8 columns and lacks rpe, note; it must start date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note in this order (more columns may follow)",
        ),
        // Field counts
        (
            "decimal comma splits the mass",
            h("2027-01-04,weigh-in,91,4,,,,,,,baseline\n"),
            "log.csv:2:3: mass_kg: this row has 11 cells but the header has 10: \"91,4\" looks like a number written with a decimal comma; write 91.4 with a point (if it is not one, look for another stray comma)",
        ),
        (
            "decimal comma splits the minutes",
            h("2027-01-04,session,,,45,5,,,118,12,\n"),
            "log.csv:2:5: minutes: this row has 11 cells but the header has 10: \"45,5\" looks like a number written with a decimal comma; write 45.5 with a point (if it is not one, look for another stray comma)",
        ),
        (
            "unquoted comma in the note",
            h("2027-01-04,session,,,45,,,118,12,felt good, tired\n"),
            "log.csv:2:10: note: this row has 11 cells but the header has 10: the note seems to hold a comma; put the note in double quotes (\"felt good, ...\") or leave the comma out",
        ),
        (
            "too many cells, no number split",
            h("2027-01-04,session,,,45,,,,,,x\n"),
            "log.csv:2:11: this row has 11 cells but the header has 10; a comma used as a decimal separator (91,4 for 91.4) or an unquoted comma adds a cell: write numbers with a point, and put text with commas in double quotes",
        ),
        (
            "too few cells",
            h("2027-01-04,weigh-in,80\n"),
            "log.csv:2:4: this row has 3 cells but the header has 10; give every column its cell, empty where it does not apply (keep the commas)",
        ),
        (
            "a quote left open",
            h("2027-01-04,weigh-in,80,,,,,,,\"open\n2027-01-06,session,,,30,,,,,\n"),
            "log.csv:2:10: note: a quote (\") opened in this cell is not closed on this line; close it (a cell cannot run over several lines)",
        ),
        // Dates
        (
            "day-month order",
            h("04/01/2027,weigh-in,80,,,,,,,\n"),
            "log.csv:2:1: date: value \"04/01/2027\" puts day and month before the year, and which comes first cannot be told; use YYYY-MM-DD: 2027-01-04 if the day comes first, 2027-04-01 if the month does",
        ),
        (
            "day-month order, one reading",
            h("13/01/2027,weigh-in,80,,,,,,,\n"),
            "log.csv:2:1: date: value \"13/01/2027\" puts the year last; use YYYY-MM-DD: write 2027-01-13",
        ),
        (
            "day-month order with dots",
            h("04.01.2027,weigh-in,80,,,,,,,\n"),
            "log.csv:2:1: date: value \"04.01.2027\" puts day and month before the year, and which comes first cannot be told; use YYYY-MM-DD: 2027-01-04 if the day comes first, 2027-04-01 if the month does",
        ),
        (
            "month and day not padded",
            h("2027-1-5,weigh-in,80,,,,,,,\n"),
            "log.csv:2:1: date: value \"2027-1-5\" is not written as YYYY-MM-DD; write 2027-01-05",
        ),
        (
            "not on the calendar",
            h("2027-02-30,weigh-in,80,,,,,,,\n"),
            "log.csv:2:1: date: value \"2027-02-30\" is not a date on the calendar; use YYYY-MM-DD with month 01-12 and a day within the month",
        ),
        (
            "date with a time",
            h("2027-01-04 08:30,weigh-in,80,,,,,,,\n"),
            "log.csv:2:1: date: value \"2027-01-04 08:30\" is not a plain date; give the date alone, as YYYY-MM-DD",
        ),
        (
            "a word for a date",
            h("monday,weigh-in,80,,,,,,,\n"),
            "log.csv:2:1: date: value \"monday\" is not a date; use YYYY-MM-DD (e.g. 2027-01-04)",
        ),
        (
            "no date",
            h(",weigh-in,80,,,,,,,\n"),
            "log.csv:2:1: date: missing date; every row needs one, as YYYY-MM-DD (e.g. 2027-01-04)",
        ),
        (
            "before the start",
            h("2027-01-03,weigh-in,80,,,,,,,\n"),
            "log.csv:2:1: date: date 2027-01-03 is before the protocol start; log dates run from the protocol start 2027-01-04 through 2027-03-15, the morning after the last day of follow-up",
        ),
        (
            "after the end of follow-up",
            h("2027-03-16,weigh-in,80,,,,,,,\n"),
            "log.csv:2:1: date: date 2027-03-16 is after the end of follow-up; log dates run from the protocol start 2027-01-04 through 2027-03-15, the morning after the last day of follow-up",
        ),
        (
            "out of date order",
            h("2027-01-06,session,,,30,,,,,\n2027-01-04,session,,,30,,,,,\n"),
            "log.csv:3:1: date: date 2027-01-04 is earlier than 2027-01-06 on line 2; rows must be in date order: move this row up to its place, or correct the date",
        ),
        (
            "two weigh-ins on one date",
            h(
                "2027-01-04,weigh-in,80,,,,,,,\n2027-01-04,session,,,30,,,,,\n2027-01-04,weigh-in,80.2,,,,,,,\n",
            ),
            "log.csv:4:1: date: a second weigh-in on 2027-01-04 (the first is on line 2); keep one weigh-in per date: delete one, or correct its date",
        ),
        // Kinds
        (
            "bad kind",
            h("2027-01-04,weight,80,,,,,,,\n"),
            "log.csv:2:2: kind: value \"weight\" is not a kind; allowed weigh-in or session (write weigh-in)",
        ),
        (
            "kind spelled another way",
            h("2027-01-04,Weigh in,80,,,,,,,\n"),
            "log.csv:2:2: kind: value \"Weigh in\" is not a kind; allowed weigh-in or session (write weigh-in)",
        ),
        (
            "unknown kind",
            h("2027-01-04,swim,,,30,,,,,\n"),
            "log.csv:2:2: kind: value \"swim\" is not a kind; allowed weigh-in or session",
        ),
        (
            "no kind",
            h("2027-01-04,,80,,,,,,,\n"),
            "log.csv:2:2: kind: missing kind; allowed weigh-in or session",
        ),
        // Weigh-ins
        (
            "weigh-in without a mass",
            h("2027-01-04,weigh-in,,38,,,,,,\n"),
            "log.csv:2:3: mass_kg: a weigh-in row needs mass_kg; allowed 30 to 350 kg",
        ),
        (
            "mass not a number",
            h("2027-01-04,weigh-in,heavy,,,,,,,\n"),
            "log.csv:2:3: mass_kg: value \"heavy\" is not a number; allowed 30 to 350 kg",
        ),
        (
            "mass with its unit",
            h("2027-01-04,weigh-in,80.4 kg,,,,,,,\n"),
            "log.csv:2:3: mass_kg: value \"80.4 kg\" is not a number; write the number alone (80.4), the unit is in the column name; allowed 30 to 350 kg",
        ),
        (
            "quoted decimal comma",
            h("2027-01-04,weigh-in,\"80,4\",,,,,,,\n"),
            "log.csv:2:3: mass_kg: value \"80,4\" uses a comma as the decimal separator; write 80.4; allowed 30 to 350 kg",
        ),
        (
            "mass not finite",
            h("2027-01-04,weigh-in,NaN,,,,,,,\n"),
            "log.csv:2:3: mass_kg: value \"NaN\" is not a finite number; allowed 30 to 350 kg",
        ),
        (
            "mass too low",
            h("2027-01-04,weigh-in,25,,,,,,,\n"),
            "log.csv:2:3: mass_kg: value 25 is out of range; allowed 30 to 350 kg",
        ),
        (
            "mass too high",
            h("2027-01-04,weigh-in,350.5,,,,,,,\n"),
            "log.csv:2:3: mass_kg: value 350.5 is out of range; allowed 30 to 350 kg",
        ),
        (
            "body fat out of range",
            h("2027-01-04,weigh-in,80,80,,,,,,\n"),
            "log.csv:2:4: body_fat_percent: value 80 is out of range; allowed 3 to 70 %",
        ),
        (
            "session cell on a weigh-in row",
            h("2027-01-04,weigh-in,80,,30,,,,,\n"),
            "log.csv:2:5: minutes: value \"30\" on a weigh-in row; minutes belongs to session rows: clear the cell, or give the session a row of its own",
        ),
        // Sessions
        (
            "weigh-in cell on a session row",
            h("2027-01-04,session,80,,30,,,,,\n"),
            "log.csv:2:3: mass_kg: value \"80\" on a session row; mass_kg belongs to weigh-in rows: clear the cell, or give the weigh-in a row of its own",
        ),
        (
            "session without minutes",
            h("2027-01-04,session,,,,,,,,\n"),
            "log.csv:2:5: minutes: a session row needs minutes; allowed 0 to 600 min (0 records a missed session)",
        ),
        (
            "minutes too many",
            h("2027-01-04,session,,,601,,,,,\n"),
            "log.csv:2:5: minutes: value 601 is out of range; allowed 0 to 600 min",
        ),
        (
            "minutes negative",
            h("2027-01-04,session,,,-5,,,,,\n"),
            "log.csv:2:5: minutes: value -5 is out of range; allowed 0 to 600 min",
        ),
        (
            "unknown code",
            h("2027-01-04,session,,,30,99999,,,,\n"),
            "log.csv:2:6: compendium_code: unknown code \"99999\"; the built-in table holds 104 codes of the 2011 Compendium (list them with `dosewright activities`), or give met instead",
        ),
        (
            "code without its leading zero",
            h("2027-01-04,session,,,30,2010,,,,\n"),
            "log.csv:2:6: compendium_code: unknown code \"2010\"; did you mean \"02010\"? Compendium codes have five digits with leading zeros (a spreadsheet drops them unless the column is formatted as text)",
        ),
        (
            "met not above 1",
            h("2027-01-04,session,,,30,,1,,,\n"),
            "log.csv:2:7: met: value 1 is out of range; allowed above 1 and at most 25 MET",
        ),
        (
            "met too high",
            h("2027-01-04,session,,,30,,25.5,,,\n"),
            "log.csv:2:7: met: value 25.5 is out of range; allowed above 1 and at most 25 MET",
        ),
        (
            "code and met both",
            h("2027-01-04,session,,,30,17200,4.5,,,\n"),
            "log.csv:2:7: met: value 4.5 is given with compendium_code \"17200\"; give one of compendium_code or met, not both",
        ),
        (
            "heart rate out of range",
            h("2027-01-04,session,,,30,,,20,,\n"),
            "log.csv:2:8: avg_hr_bpm: value 20 is out of range; allowed 30 to 250 beats/min",
        ),
        (
            "heart rate not a number",
            h("2027-01-04,session,,,30,,,fast,,\n"),
            "log.csv:2:8: avg_hr_bpm: value \"fast\" is not a number; allowed 30 to 250 beats/min",
        ),
        (
            "rpe above 20",
            h("2027-01-04,session,,,30,,,,21,\n"),
            "log.csv:2:9: rpe: value 21 is out of range; allowed 6 to 20 (Borg 6-20 scale)",
        ),
        (
            "rpe on a 0-10 scale",
            h("2027-01-04,session,,,30,,,,4,\n"),
            "log.csv:2:9: rpe: value 4 is out of range; allowed 6 to 20 (Borg 6-20 scale); a 0-10 rating (Borg CR10) is another scale with no exact conversion: record the 6-20 rating, or leave rpe empty",
        ),
        (
            "rpe not a number",
            h("2027-01-04,session,,,30,,,,hard,\n"),
            "log.csv:2:9: rpe: value \"hard\" is not a number; allowed 6 to 20 (Borg 6-20 scale)",
        ),
    ]
}

#[test]
fn bad_logs_give_exact_errors_with_exit_code_2() {
    let mut failures = Vec::new();
    for (name, text, expected) in bad_logs() {
        match parse(&text) {
            Ok(_) => failures.push(format!("{name}: accepted, expected {expected}")),
            Err(e) => {
                if !matches!(e, Error::Input(_)) || e.exit_code() != 2 {
                    failures.push(format!("{name}: not a bad-input error: {e:?}"));
                }
                if e.to_string() != expected {
                    failures.push(format!("{name}:\n  got      {e}\n  expected {expected}"));
                }
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn errors_carry_the_line_the_cell_number_and_the_column_name() {
    let text = log("2027-01-04,weigh-in,80,,,,,,,\n\n2027-01-06,session,,,30,,,,22,\n");
    let Err(Error::Input(e)) = parse(&text) else {
        panic!("expected a bad-input error");
    };
    assert_eq!(e.location.file, "log.csv");
    assert_eq!(e.location.line, Some(4), "the blank line counts");
    assert_eq!(e.location.column, Some(9), "rpe is the 9th cell");
    assert_eq!(e.key.as_deref(), Some("rpe"));
}

#[test]
fn rows_after_as_of_are_an_error() {
    let text = log("2027-01-04,weigh-in,80,,,,,,,\n2027-01-20,weigh-in,79.8,,,,,,,\n");
    let e = parse_log("log.csv", &text, &plan(), Some(date("2027-01-10"))).unwrap_err();
    assert_eq!(
        e.to_string(),
        "log.csv:3:1: date: date 2027-01-20 is after the as-of date 2027-01-10; the log may hold no rows after it: give a later as-of date, or none to read the whole log"
    );
    assert_eq!(e.exit_code(), 2);
    // The last date itself, or any later date, is fine.
    for as_of in ["2027-01-20", "2027-02-01"] {
        let (log, _) = parse_log("log.csv", &text, &plan(), Some(date(as_of))).unwrap();
        assert_eq!(log.rows.len(), 2);
    }
}

#[test]
fn an_as_of_date_outside_the_protocol_is_a_usage_error() {
    let text = log("2027-01-04,weigh-in,80,,,,,,,\n");
    for as_of in ["2027-01-03", "2027-03-16"] {
        let e = parse_log("log.csv", &text, &plan(), Some(date(as_of))).unwrap_err();
        assert!(matches!(e, Error::Usage(_)), "{e:?}");
        assert_eq!(
            e.to_string(),
            format!(
                "the as-of date {as_of} is outside the protocol; give a date from the start 2027-01-04 through the end of follow-up 2027-03-15"
            )
        );
    }
}

#[test]
fn load_log_names_a_missing_file_and_refuses_text_that_is_not_utf8() {
    let dir = Scratch::new("log-load");
    let missing = dir.path().join("none.csv");
    let e = load_log(&missing, &plan(), None).unwrap_err();
    assert_eq!(
        e.to_string(),
        format!("{}: cannot read: no such file", missing.display())
    );
    assert_eq!(e.exit_code(), 2);

    // Latin-1 "é" in the note of line 3.
    let mut bytes =
        log("2027-01-04,weigh-in,80,,,,,,,\n2027-01-06,session,,,30,,,,,caf").into_bytes();
    bytes.extend_from_slice(&[0xE9, b'\n']);
    let path = dir.write("latin1.csv", &bytes);
    let e = load_log(&path, &plan(), None).unwrap_err();
    // The one reader's message for every input: line 3, column 32 (the 31 characters
    // "2027-01-06,session,,,30,,,,,caf" come first).
    assert!(matches!(e, Error::Unreadable { .. }));
    assert_eq!(
        e.to_string(),
        format!(
            "{}: cannot read: not UTF-8 text (byte 0xE9 at line 3, column 32); save the file as UTF-8",
            path.display()
        )
    );

    let mut utf16 = vec![0xFF, 0xFE];
    for c in HEADER.encode_utf16() {
        utf16.extend_from_slice(&c.to_le_bytes());
    }
    let path = dir.write("utf16.csv", &utf16);
    let e = load_log(&path, &plan(), None).unwrap_err();
    assert_eq!(
        e.to_string(),
        format!(
            "{}: cannot read: not UTF-8 text but UTF-16 (it starts with a UTF-16 byte-order mark); save the file as UTF-8",
            path.display()
        )
    );
}

// ---------------------------------------------------------------------------
// Good logs
// ---------------------------------------------------------------------------

const GOOD_ROWS: &str = "2027-01-04,weigh-in,80.0,38.0,,,,,,baseline visit
2027-01-04,session,,,27,,,121,11,
2027-01-06,session,,,30,17200,,,12,\"treadmill, brisk\"
2027-01-08,session,,,0,,,,,missed: unwell
2027-01-11,weigh-in,79.6,,,,,,,
2027-01-11,session,,,15,,6.5,,,bout 1
2027-01-11,session,,,15,02010,,,,bout 2
";

#[test]
fn a_good_log_reads_into_rows_with_their_lines_and_intensities() {
    let (log, warnings) = parse(&log(GOOD_ROWS)).unwrap();
    assert!(warnings.is_empty(), "{warnings:?}");
    assert_eq!(log.path, "log.csv");
    assert_eq!(log.rows.len(), 7);
    assert_eq!(
        log.rows.iter().map(|r| r.line).collect::<Vec<_>>(),
        vec![2, 3, 4, 5, 6, 7, 8]
    );
    assert_eq!(log.weigh_ins().count(), 2);
    assert_eq!(log.sessions().count(), 5);
    assert_eq!(log.last_date(), Some(date("2027-01-11")));
    assert_eq!(
        log.rows[0].entry,
        Entry::WeighIn {
            mass_kg: 80.0,
            body_fat_percent: Some(38.0)
        }
    );
    assert_eq!(log.rows[0].note, "baseline visit");
    // No code or MET: the plan's activity.
    assert_eq!(
        log.rows[1].entry,
        Entry::Session {
            minutes: 27.0,
            intensity: Intensity::Met { met: 4.0 },
            compendium_code: None,
            met: None,
            avg_hr_bpm: Some(121.0),
            rpe: Some(11.0),
        }
    );
    let Entry::Session {
        intensity,
        compendium_code,
        ..
    } = &log.rows[2].entry
    else {
        panic!("a session")
    };
    assert_eq!(compendium_code.as_deref(), Some("17200"));
    assert_eq!(
        *intensity,
        Intensity::Compendium {
            code: "17200".to_string(),
            met: 4.3,
            version: 2011
        }
    );
    assert_eq!(
        log.rows[2].note, "treadmill, brisk",
        "a quoted comma is text"
    );
    let Entry::Session { minutes, .. } = &log.rows[3].entry else {
        panic!("a session")
    };
    assert_eq!(
        *minutes, 0.0,
        "0 minutes: a missed session recorded on purpose"
    );
    let Entry::Session { intensity, met, .. } = &log.rows[5].entry else {
        panic!("a session")
    };
    assert_eq!((*intensity).clone(), Intensity::Met { met: 6.5 });
    assert_eq!(*met, Some(6.5));
    // Two sessions on one date are bouts, allowed.
    assert_eq!(log.rows[5].date, log.rows[6].date);
}

#[test]
fn a_header_only_log_is_empty_but_valid() {
    let (log, warnings) = parse(HEADER).unwrap();
    assert!(log.rows.is_empty() && warnings.is_empty());
    assert_eq!(log.last_date(), None);
}

#[test]
fn byte_order_mark_and_windows_line_endings_are_accepted() {
    let plain = log(GOOD_ROWS);
    let windows = format!("\u{feff}{}", plain.replace('\n', "\r\n"));
    let (a, _) = parse(&plain).unwrap();
    let (b, _) = parse(&windows).unwrap();
    assert_eq!(a, b, "same rows, same lines, same notes");
    // Without a final line ending, too.
    let (c, _) = parse(windows.trim_end()).unwrap();
    assert_eq!(a, c);
}

#[test]
fn extra_columns_blank_lines_and_spaces_are_accepted() {
    let text = "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note,scale,staff
2027-01-04,weigh-in, 80.0 ,,,,,,,,clinic,TR

2027-01-06,session,,,30,,,,,,,TR
,,,,,,,,,,,
";
    let (log, _) = parse(text).unwrap();
    assert_eq!(log.rows.len(), 2);
    assert_eq!(log.rows[1].line, 4);
    assert_eq!(
        log.rows[0].entry,
        Entry::WeighIn {
            mass_kg: 80.0,
            body_fat_percent: None
        }
    );
}

#[test]
fn dates_run_from_the_start_through_the_end_date_inclusive() {
    let text = log("2027-01-04,weigh-in,80,,,,,,,\n2027-03-15,weigh-in,79,,,,,,,\n");
    let (log, _) = parse(&text).unwrap();
    assert_eq!(plan().protocol.end_date(), date("2027-03-15"));
    assert_eq!(log.last_date(), Some(date("2027-03-15")));
}

#[test]
fn a_jump_of_more_than_3_kg_within_7_days_is_a_warning_naming_the_line() {
    let text = log(
        "2027-01-04,weigh-in,80,,,,,,,\n2027-01-06,session,,,30,,,,,\n2027-01-11,weigh-in,76.5,,,,,,,\n",
    );
    let (_, warnings) = parse(&text).unwrap();
    assert_eq!(warnings.len(), 1);
    assert_eq!(warnings[0].code, "log-implausible-jump");
    assert_eq!(
        warnings[0].message,
        "log.csv line 4: the weigh-in of 2027-01-11 (76.5 kg) is 3.5 kg below the one of 2027-01-04 (80 kg, line 2), more than 3 kg in 7 days; body stores do not change that fast, so check the entry (a typing slip, another scale, clothing)"
    );
    let up = log("2027-01-04,weigh-in,80,,,,,,,\n2027-01-05,weigh-in,83.2,,,,,,,\n");
    let (_, warnings) = parse(&up).unwrap();
    assert_eq!(
        warnings[0].message,
        "log.csv line 3: the weigh-in of 2027-01-05 (83.2 kg) is 3.2 kg above the one of 2027-01-04 (80 kg, line 2), more than 3 kg in 1 day; body stores do not change that fast, so check the entry (a typing slip, another scale, clothing)"
    );
    // Exactly 3 kg, or more than 7 days apart: no warning.
    for rows in [
        "2027-01-04,weigh-in,80,,,,,,,\n2027-01-11,weigh-in,77,,,,,,,\n",
        "2027-01-04,weigh-in,80,,,,,,,\n2027-01-12,weigh-in,76,,,,,,,\n",
    ] {
        let (_, warnings) = parse(&log(rows)).unwrap();
        assert!(warnings.is_empty(), "{rows}: {warnings:?}");
    }
}

#[test]
fn the_demo_log_parses_against_the_demo_plan() {
    let path = common::manifest_dir().join("demo-data/demo-017-log.csv");
    let (log, warnings) = load_log(&path, &demo_plan(), None).unwrap();
    assert!(warnings.is_empty(), "{warnings:?}");
    assert_eq!(log.weigh_ins().count(), 11, "weekly weigh-ins, weeks 1-11");
    assert_eq!(
        log.sessions().count(),
        31,
        "30 session days, one in two bouts"
    );
    let missed = log
        .sessions()
        .filter(|r| matches!(r.entry, Entry::Session { minutes, .. } if minutes == 0.0))
        .collect::<Vec<_>>();
    assert_eq!(missed.len(), 3);
    assert!(missed.iter().all(|r| r.note.starts_with("missed: ")));
    assert_eq!(log.rows[0].date, demo_plan().protocol.start);
    assert_eq!(log.last_date(), Some(date("2027-03-22")));
    // Plausible: about 0.1 kg a week lost over the ten weeks.
    let masses: Vec<f64> = log
        .weigh_ins()
        .map(|r| match r.entry {
            Entry::WeighIn { mass_kg, .. } => mass_kg,
            Entry::Session { .. } => unreachable!(),
        })
        .collect();
    let per_week = (masses[0] - masses[masses.len() - 1]) / 10.0;
    assert!((0.05..=0.2).contains(&per_week), "{per_week}");
}

// ---------------------------------------------------------------------------
// Appending
// ---------------------------------------------------------------------------

fn weigh_in(d: &str, mass_kg: f64) -> NewRow {
    NewRow {
        date: date(d),
        entry: NewEntry::WeighIn {
            mass_kg,
            body_fat_percent: None,
        },
        note: None,
        recorded: Default::default(),
    }
}

fn session(d: &str, minutes: f64) -> NewRow {
    NewRow {
        date: date(d),
        entry: NewEntry::Session {
            minutes,
            compendium_code: None,
            met: None,
            avg_hr_bpm: None,
            rpe: None,
        },
        note: None,
        recorded: Default::default(),
    }
}

#[test]
fn append_to_a_missing_file_writes_the_header_first() {
    let dir = Scratch::new("log-new");
    let path = dir.path().join("log.csv");
    let mut row = weigh_in("2027-01-04", 80.0);
    row.entry = NewEntry::WeighIn {
        mass_kg: 80.0,
        body_fat_percent: Some(38.5),
    };
    row.note = Some("baseline visit".to_string());
    let (message, warnings) = append_row(&path, &plan(), &row).unwrap();
    assert!(warnings.is_empty());
    assert_eq!(
        message,
        format!(
            "{}: created with its header; added line 2: weigh-in on 2027-01-04, 80 kg, 38.5% body fat (note: baseline visit)",
            path.display()
        )
    );
    assert_eq!(
        std::fs::read_to_string(&path).unwrap(),
        format!("{HEADER}2027-01-04,weigh-in,80,38.5,,,,,,baseline visit\n")
    );
    assert_eq!(dir.listing(), vec!["log.csv"], "no temporary file left");
}

#[test]
fn append_keeps_earlier_bytes_identical_and_uses_the_files_line_ending() {
    let dir = Scratch::new("log-crlf");
    let original = format!("\u{feff}{}", log(GOOD_ROWS).replace('\n', "\r\n"));
    let path = dir.write("log.csv", &original);
    let row = NewRow {
        date: date("2027-01-13"),
        entry: NewEntry::Session {
            minutes: 32.5,
            compendium_code: Some("02010".to_string()),
            met: None,
            avg_hr_bpm: Some(124.0),
            rpe: Some(13.0),
        },
        note: Some("bike, \"easy\" day".to_string()),
        recorded: Default::default(),
    };
    let (message, warnings) = append_row(&path, &plan(), &row).unwrap();
    assert!(warnings.is_empty());
    assert_eq!(
        message,
        format!(
            "{}: added line 9: session on 2027-01-13, 32.5 min, compendium 02010 (2011), 7.0 MET, average heart rate 124 beats/min, RPE 13 (note: bike, \"easy\" day)",
            path.display()
        )
    );
    let after = std::fs::read(&path).unwrap();
    assert_eq!(
        &after[..original.len()],
        original.as_bytes(),
        "earlier bytes kept"
    );
    assert_eq!(
        &after[original.len()..],
        b"2027-01-13,session,,,32.5,02010,,124,13,\"bike, \"\"easy\"\" day\"\r\n"
    );
    let (log, _) = load_log(&path, &plan(), None).unwrap();
    assert_eq!(log.rows.len(), 8);
    assert_eq!(log.rows[7].note, "bike, \"easy\" day");

    // A second append goes after the first, in order.
    let (message, _) = append_row(&path, &plan(), &session("2027-01-15", 0.0)).unwrap();
    assert_eq!(
        message,
        format!(
            "{}: added line 10: session on 2027-01-15, 0 min (missed), the plan's activity (activity at 4 MET)",
            path.display()
        )
    );
    let again = std::fs::read(&path).unwrap();
    assert_eq!(&again[..after.len()], &after[..]);
    assert_eq!(dir.listing(), vec!["log.csv"]);
}

#[test]
fn append_after_a_last_line_without_an_ending_adds_one() {
    let dir = Scratch::new("log-noeol");
    let original = log("2027-01-04,weigh-in,80,,,,,,,");
    let path = dir.write("log.csv", &original);
    append_row(&path, &plan(), &session("2027-01-04", 30.0)).unwrap();
    assert_eq!(
        std::fs::read_to_string(&path).unwrap(),
        format!("{original}\n2027-01-04,session,,,30,,,,,\n")
    );
}

#[test]
fn append_fills_the_extra_columns_of_the_header_with_empty_cells() {
    let dir = Scratch::new("log-extra");
    let original = "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note,staff\n2027-01-04,weigh-in,80,,,,,,,,TR\n";
    let path = dir.write("log.csv", original);
    append_row(&path, &plan(), &session("2027-01-06", 30.0)).unwrap();
    assert_eq!(
        std::fs::read_to_string(&path).unwrap(),
        format!("{original}2027-01-06,session,,,30,,,,,,\n")
    );
}

#[test]
fn append_to_an_empty_file_writes_the_header_after_its_bytes() {
    let dir = Scratch::new("log-empty");
    let path = dir.write("log.csv", "\u{feff}");
    let (message, _) = append_row(&path, &plan(), &weigh_in("2027-01-04", 80.0)).unwrap();
    assert_eq!(
        message,
        format!(
            "{}: wrote the header; added line 2: weigh-in on 2027-01-04, 80 kg",
            path.display()
        )
    );
    assert_eq!(
        std::fs::read_to_string(&path).unwrap(),
        format!("\u{feff}{HEADER}2027-01-04,weigh-in,80,,,,,,,\n")
    );
}

#[test]
fn append_returns_the_warning_of_an_implausible_jump() {
    let dir = Scratch::new("log-jump");
    let path = dir.write("log.csv", log("2027-01-04,weigh-in,80,,,,,,,\n"));
    let (_, warnings) = append_row(&path, &plan(), &weigh_in("2027-01-11", 84.5)).unwrap();
    assert_eq!(warnings.len(), 1);
    assert_eq!(warnings[0].code, "log-implausible-jump");
    assert!(
        warnings[0]
            .message
            .contains("line 3: the weigh-in of 2027-01-11 (84.5 kg) is 4.5 kg above"),
        "{}",
        warnings[0].message
    );
    // The warning does not stop the row: it is written.
    let (log, _) = load_log(&path, &plan(), None).unwrap();
    assert_eq!(log.rows.len(), 2);
    // A later row does not repeat an earlier row's warning.
    let (_, warnings) = append_row(&path, &plan(), &session("2027-01-13", 30.0)).unwrap();
    assert!(warnings.is_empty(), "{warnings:?}");
}

#[test]
fn a_failed_append_leaves_the_file_byte_identical() {
    let dir = Scratch::new("log-bad-row");
    let original = format!("\u{feff}{}", log(GOOD_ROWS).replace('\n', "\r\n"));
    let path = dir.write("log.csv", &original);
    let cases: Vec<(NewRow, String)> = vec![
        (
            weigh_in("2027-01-13", 400.0),
            "9:3: mass_kg: value 400 is out of range; allowed 30 to 350 kg".to_string(),
        ),
        // An earlier date is no longer an error: the row goes to its place by date
        // (tests/log_units.rs).
        (
            weigh_in("2027-01-11", 79.9),
            "9:1: date: a second weigh-in on 2027-01-11 (the first is on line 6); keep one weigh-in per date: delete one, or correct its date".to_string(),
        ),
        (
            weigh_in("2027-03-16", 79.0),
            "9:1: date: date 2027-03-16 is after the end of follow-up; log dates run from the protocol start 2027-01-04 through 2027-03-15, the morning after the last day of follow-up".to_string(),
        ),
        (
            weigh_in("2027-01-13", f64::NAN),
            "9:3: mass_kg: value \"NaN\" is not a finite number; allowed 30 to 350 kg".to_string(),
        ),
        (
            NewRow {
                entry: NewEntry::Session {
                    minutes: 30.0,
                    compendium_code: Some("2010".to_string()),
                    met: None,
                    avg_hr_bpm: None,
                    rpe: None,
                },
                ..session("2027-01-13", 30.0)
            },
            "9:6: compendium_code: unknown code \"2010\"; did you mean \"02010\"? Compendium codes have five digits with leading zeros (a spreadsheet drops them unless the column is formatted as text)".to_string(),
        ),
        (
            NewRow {
                entry: NewEntry::Session {
                    minutes: 30.0,
                    compendium_code: None,
                    met: None,
                    avg_hr_bpm: None,
                    rpe: Some(5.0),
                },
                ..session("2027-01-13", 30.0)
            },
            "9:9: rpe: value 5 is out of range; allowed 6 to 20 (Borg 6-20 scale); a 0-10 rating (Borg CR10) is another scale with no exact conversion: record the 6-20 rating, or leave rpe empty".to_string(),
        ),
    ];
    for (row, expected) in cases {
        let e = append_row(&path, &plan(), &row).unwrap_err();
        assert_eq!(e.to_string(), format!("{}:{expected}", path.display()));
        assert_eq!(e.exit_code(), 2);
        assert_eq!(std::fs::read(&path).unwrap(), original.as_bytes());
    }
    let note = NewRow {
        note: Some("two\nlines".to_string()),
        ..session("2027-01-13", 30.0)
    };
    let e = append_row(&path, &plan(), &note).unwrap_err();
    assert_eq!(
        e.to_string(),
        "note: the text holds a line break; a log cell must be one line"
    );
    assert_eq!(std::fs::read(&path).unwrap(), original.as_bytes());
    assert_eq!(dir.listing(), vec!["log.csv"], "no temporary file left");
}

#[test]
fn append_refuses_to_add_to_a_log_with_an_error_and_leaves_it_alone() {
    let dir = Scratch::new("log-bad-file");
    let original = log("2027-01-04,weigh-in,80,,,,,,,\n2027-01-06,session,,,30,,,,30,\n");
    let path = dir.write("log.csv", &original);
    let e = append_row(&path, &plan(), &session("2027-01-08", 30.0)).unwrap_err();
    assert_eq!(
        e.to_string(),
        format!(
            "{}:3:9: rpe: value 30 is out of range; allowed 6 to 20 (Borg 6-20 scale)",
            path.display()
        )
    );
    assert_eq!(std::fs::read_to_string(&path).unwrap(), original);
}

#[cfg(unix)]
#[test]
fn append_keeps_the_files_permissions() {
    use std::os::unix::fs::PermissionsExt;
    let dir = Scratch::new("log-mode");
    let path = dir.write("log.csv", log("2027-01-04,weigh-in,80,,,,,,,\n"));
    std::fs::set_permissions(&path, std::fs::Permissions::from_mode(0o600)).unwrap();
    append_row(&path, &plan(), &session("2027-01-06", 30.0)).unwrap();
    let mode = std::fs::metadata(&path).unwrap().permissions().mode() & 0o777;
    assert_eq!(mode, 0o600);
}

/// Gives a folder back its write permission when dropped, so that the scratch folder
/// can be removed whatever the test does.
#[cfg(unix)]
struct Writable<'a>(&'a std::path::Path);

#[cfg(unix)]
impl Drop for Writable<'_> {
    fn drop(&mut self) {
        use std::os::unix::fs::PermissionsExt;
        let _ = std::fs::set_permissions(self.0, std::fs::Permissions::from_mode(0o755));
    }
}

#[cfg(unix)]
#[test]
fn a_failed_append_in_a_read_only_folder_leaves_the_file_byte_identical() {
    use std::os::unix::fs::PermissionsExt;
    let dir = Scratch::new("log-read-only");
    let original = format!("\u{feff}{}", log(GOOD_ROWS).replace('\n', "\r\n"));
    let path = dir.write("log.csv", &original);
    std::fs::set_permissions(dir.path(), std::fs::Permissions::from_mode(0o555)).unwrap();
    let _restore = Writable(dir.path());
    // A user who ignores permissions (root) can write there anyway: nothing to test.
    let probe = dir.path().join("probe");
    if std::fs::File::create(&probe).is_ok() {
        let _ = std::fs::remove_file(&probe);
        eprintln!("skipped: this user can write to a read-only folder (root?)");
        return;
    }
    let e = append_row(&path, &plan(), &weigh_in("2027-01-13", 79.5)).unwrap_err();
    assert!(matches!(e, Error::Output { .. }), "{e:?}");
    assert_eq!(e.exit_code(), 1);
    assert!(
        e.to_string()
            .starts_with(&format!("{}: cannot write: ", path.display())),
        "{e}"
    );
    assert_eq!(std::fs::read(&path).unwrap(), original.as_bytes());
    assert_eq!(dir.listing(), vec!["log.csv"]);
}

// ---------------------------------------------------------------------------
// No panic on any input
// ---------------------------------------------------------------------------

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    /// Any text of log-like pieces is read or refused, never a panic.
    #[test]
    fn any_text_is_read_or_refused_without_panic(
        lines in prop::collection::vec(
            prop::collection::vec(
                prop::sample::select(vec![
                    "", "2027-01-04", "2027-01-11", "2026-12-31", "2027-13-01", "04/01/2027",
                    "weigh-in", "session", "80", "91,4", "\"", "\"a,b\"", "0", "-1", "NaN",
                    "1e400", "17200", "2010", "é", "\u{feff}", "\r", " ", "x", "600", "20",
                ]),
                0..13,
            ),
            0..8,
        ),
        header in any::<bool>(),
    ) {
        let body: Vec<String> = lines.iter().map(|cells| cells.join(",")).collect();
        let text = if header {
            format!("{HEADER}{}", body.join("\n"))
        } else {
            body.join("\n")
        };
        let _ = parse(&text);
        let _ = parse_log("log.csv", &text, &plan(), Some(date("2027-01-11")));
    }

    /// Any bytes at all.
    #[test]
    fn any_bytes_are_read_or_refused_without_panic(bytes in prop::collection::vec(any::<u8>(), 0..200)) {
        let mut all = HEADER.as_bytes().to_vec();
        all.extend_from_slice(&bytes);
        for text in [String::from_utf8_lossy(&bytes), String::from_utf8_lossy(&all)] {
            let _ = parse(&text);
        }
        let dir = Scratch::new("log-bytes");
        for (name, b) in [("a.csv", &bytes), ("b.csv", &all)] {
            let _ = load_log(&dir.write(name, b), &plan(), None);
        }
    }
}
