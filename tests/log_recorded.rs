//! The log's optional named columns (docs/file-formats.md section 3): how body fat
//! was measured, and the ergometer power or speed actually used. A CSV log reads
//! them in any order after its ten columns; `log add` records them, adding a
//! missing column to the header and an empty cell to every other row without
//! touching anything else; the register keeps them through `log add --register`,
//! `register export` and `register import`, so nothing recorded at the desk is lost
//! in the exchange format; one rule refuses them on the wrong kind of row or
//! outside what a plan may prescribe, with exit code 2 and the file, line and
//! column. The participant and the rows are invented (the demo participant).
#![cfg(unix)]

mod common;

use common::hard_edges::DEMO_PLAN;
use common::*;

const CODE: &str = "DEMO-017";

/// The demo plan in a folder, and a log of three rows with the ten columns only,
/// Windows line endings and a quoted note (bytes a spreadsheet writes).
fn folder() -> Scratch {
    let dir = Scratch::new("log-recorded");
    dir.write("plan.toml", DEMO_PLAN);
    dir.write("log.csv", TEN_COLUMNS);
    dir
}

const TEN_COLUMNS: &str = "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\r\n\
2027-01-11,weigh-in,104.0,36.5,,,,,,baseline visit\r\n\
\r\n\
2027-01-11,session,,,27,,,121,11,\"first session, easy\"\r\n\
2027-01-13,session,,,27,,,118,11,\r\n";

fn ok(dir: &Scratch, args: &[&str]) -> Run {
    let r = run(dir.cmd().args(args));
    assert_eq!(r.code, Some(0), "{args:?}: {}", r.stderr);
    r
}

/// Exit 2, nothing on standard output, the log's bytes unchanged; the message.
fn refused(dir: &Scratch, file: &str, args: &[&str]) -> String {
    let before = std::fs::read(dir.path().join(file)).unwrap();
    let r = run(dir.cmd().args(args));
    assert_eq!(r.code, Some(2), "{args:?}: {}", r.stderr);
    assert_eq!(r.stdout, "");
    assert_eq!(std::fs::read(dir.path().join(file)).unwrap(), before);
    r.stderr
}

#[test]
fn log_add_adds_a_missing_column_and_keeps_every_other_byte() {
    let dir = folder();
    let add = |extra: &[&str]| {
        let mut args = vec!["log", "add", "plan.toml", "--log", "log.csv"];
        args.extend_from_slice(extra);
        ok(&dir, &args)
    };
    let r = add(&["--date", "2027-01-15", "--session", "30", "--watts", "90"]);
    assert!(
        r.stderr
            .contains("added the column(s) watts to the header, empty on the other rows"),
        "{}",
        r.stderr
    );
    assert!(r.stderr.contains("90 W used"), "{}", r.stderr);
    // Built by hand: the header gains ",watts", every row that holds anything an
    // empty cell, the blank line and the line endings stay as they were.
    let widened = "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note,watts\r\n\
2027-01-11,weigh-in,104.0,36.5,,,,,,baseline visit,\r\n\
\r\n\
2027-01-11,session,,,27,,,121,11,\"first session, easy\",\r\n\
2027-01-13,session,,,27,,,118,11,,\r\n\
2027-01-15,session,,,30,,,,,,90\r\n";
    assert_eq!(read(&dir, "log.csv"), widened);
    // A second value in the same column adds no column; a row before the last goes
    // to its place by date.
    add(&["--date", "2027-01-12", "--session", "20", "--watts", "75.5"]);
    add(&[
        "--date",
        "2027-01-18",
        "--weigh-in",
        "103.6",
        "--body-fat",
        "36.1",
        "--body-fat-method",
        "DXA",
    ]);
    add(&["--date", "2027-01-20", "--session", "25", "--speed", "5.5"]);
    let text = read(&dir, "log.csv");
    let header = text.lines().next().unwrap();
    assert_eq!(
        header,
        "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note,watts,body_fat_method,speed_kmh"
    );
    let lines: Vec<&str> = text.split("\r\n").collect();
    assert_eq!(lines[4], "2027-01-12,session,,,20,,,,,,75.5,,");
    assert_eq!(lines[7], "2027-01-18,weigh-in,103.6,36.1,,,,,,,,DXA,");
    assert_eq!(lines[8], "2027-01-20,session,,,25,,,,,,,,5.5");
    // The log still plans, and its values read back through the schedule's JSON
    // contract unchanged by the new columns (the model does not read them).
    ok(
        &dir,
        &[
            "schedule",
            "plan.toml",
            "--log",
            "log.csv",
            "--format",
            "json",
        ],
    );
}

#[test]
fn the_one_rule_refuses_values_on_the_wrong_row_or_out_of_range() {
    let dir = folder();
    let args = |extra: &[&'static str]| {
        let mut a = vec![
            "log",
            "add",
            "plan.toml",
            "--log",
            "log.csv",
            "--date",
            "2027-01-15",
        ];
        a.extend_from_slice(extra);
        a
    };
    // What a plan may prescribe: cycling 10 to 600 W, walking from 1 km/h to
    // running at 30 km/h (docs/file-formats.md, `[activity]`).
    let e = refused(
        &dir,
        "log.csv",
        &args(&["--session", "30", "--watts", "900"]),
    );
    assert!(
        e.contains("watts: value 900 is out of range; allowed 10 to 600 W"),
        "{e}"
    );
    let e = refused(
        &dir,
        "log.csv",
        &args(&["--session", "30", "--speed", "45"]),
    );
    assert!(
        e.contains("speed_kmh: value 45 is out of range; allowed 1 to 30 km/h"),
        "{e}"
    );
    // The options belong to their kind of row (clap refuses them on the other).
    refused(
        &dir,
        "log.csv",
        &args(&["--weigh-in", "103", "--watts", "90"]),
    );
    refused(
        &dir,
        "log.csv",
        &args(&["--weigh-in", "103", "--body-fat-method", "DXA"]),
    );

    // In a file: the line, the cell and the column named.
    let bad = |row: &str, header_extra: &str| {
        let text = format!(
            "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note{header_extra}\n2027-01-11,weigh-in,104.0,36.5,,,,,,baseline{}\n{row}\n",
            ",".repeat(header_extra.matches(',').count())
        );
        dir.write("bad.csv", text);
        refused(
            &dir,
            "bad.csv",
            &["schedule", "plan.toml", "--log", "bad.csv"],
        )
    };
    let e = bad("2027-01-11,weigh-in,,,,,,,,,,120", ",speed_kmh,watts");
    assert!(e.contains("bad.csv:3:"), "{e}");
    let e = bad("2027-01-12,weigh-in,104.0,,,,,,,,,120", ",speed_kmh,watts");
    assert!(
        e.contains("bad.csv:3:12: watts: a weigh-in has no watts; it belongs on a session"),
        "{e}"
    );
    let e = bad("2027-01-12,session,,,30,,,,,,90 W", ",watts");
    assert!(
        e.contains(
            "bad.csv:3:11: watts: value \"90 W\" is not a number; write the number alone (90)"
        ),
        "{e}"
    );
    let e = bad("2027-01-12,weigh-in,104.0,,,,,,,,DXA", ",body_fat_method");
    assert!(
        e.contains(
            "bad.csv:3:11: body_fat_method: body_fat_method is given without body_fat_percent"
        ),
        "{e}"
    );
    let e = bad("2027-01-12,session,,,30,,,,,,90,91", ",watts,watts");
    assert!(
        e.contains("bad.csv:1:12: header column 12 repeats \"watts\"; give it once"),
        "{e}"
    );
    // A column of another name after the ten is still ignored, as the format says.
    dir.write(
        "other.csv",
        "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note,room\n2027-01-11,session,,,27,,,,,,gym 2\n",
    );
    ok(&dir, &["schedule", "plan.toml", "--log", "other.csv"]);
}

#[test]
fn the_register_keeps_the_values_through_its_exported_log_and_an_import() {
    let dir = folder();
    for db in ["a.db", "b.db"] {
        ok(&dir, &["register", "create", db]);
        ok(
            &dir,
            &["register", "enrol", db, "plan.toml", "--by", "trainer-a"],
        );
    }
    let add = |extra: &[&str]| {
        let mut args = vec![
            "log",
            "add",
            "--register",
            "a.db",
            "--participant",
            CODE,
            "--by",
            "trainer-a",
        ];
        args.extend_from_slice(extra);
        ok(&dir, &args)
    };
    add(&[
        "--date",
        "2027-01-11",
        "--weigh-in",
        "104",
        "--body-fat",
        "36.5",
        "--body-fat-method",
        "DXA",
    ]);
    add(&["--date", "2027-01-11", "--session", "27", "--watts", "85"]);
    add(&["--date", "2027-01-13", "--session", "27", "--speed", "5.8"]);
    // The register applies the same rule.
    let e = refused(
        &dir,
        "a.db",
        &[
            "log",
            "add",
            "--register",
            "a.db",
            "--participant",
            CODE,
            "--by",
            "trainer-a",
            "--date",
            "2027-01-15",
            "--session",
            "27",
            "--watts",
            "5",
        ],
    );
    assert!(
        e.contains("watts: value 5 is out of range; allowed 10 to 600 W"),
        "{e}"
    );

    // a.db -> the exchange format (the participant's CSV log) -> b.db.
    ok(&dir, &["register", "export", "a.db", "--to", "out-a"]);
    let log = read(&dir, "out-a/log-DEMO-017.csv");
    ok(
        &dir,
        &[
            "register",
            "import",
            "b.db",
            "out-a/log-DEMO-017.csv",
            "--participant",
            CODE,
            "--by",
            "trainer-b",
        ],
    );
    ok(&dir, &["register", "export", "b.db", "--to", "out-b"]);
    // The tidy tables hold the same values (row ids and times differ by register).
    let keep = |table: &str, out: &str| -> Vec<Vec<String>> {
        let text = read(&dir, &format!("{out}/{table}"));
        let mut r = csv::Reader::from_reader(text.as_bytes());
        let header = r.headers().unwrap().clone();
        let wanted = [
            "date",
            "mass_kg",
            "body_fat_percent",
            "body_fat_method",
            "minutes",
            "watts",
            "speed_kmh",
        ];
        r.records()
            .map(|rec| {
                let rec = rec.unwrap();
                header
                    .iter()
                    .zip(rec.iter())
                    .filter(|(h, _)| wanted.contains(h))
                    .map(|(h, v)| format!("{h}={v}"))
                    .collect()
            })
            .collect()
    };
    for table in ["weigh-ins.csv", "sessions.csv"] {
        assert_eq!(keep(table, "out-a"), keep(table, "out-b"), "{table}");
    }
    let sessions = keep("sessions.csv", "out-b");
    assert!(
        sessions[0].contains(&"watts=85".to_string()),
        "{sessions:?}"
    );
    assert!(
        sessions[1].contains(&"speed_kmh=5.8".to_string()),
        "{sessions:?}"
    );
    let weigh_ins = keep("weigh-ins.csv", "out-b");
    assert!(
        weigh_ins[0].contains(&"body_fat_method=DXA".to_string()),
        "{weigh_ins:?}"
    );
    // And the exported log of b.db carries them as a's did.
    let again = read(&dir, "out-b/log-DEMO-017.csv");
    let without_ids = |t: &str| -> Vec<String> {
        t.lines()
            .map(|l| l.rsplit_once(',').map_or(l, |(a, _)| a).to_string())
            .collect()
    };
    assert_eq!(without_ids(&log), without_ids(&again));

    // A slip in the power is corrected like any value: the original is kept, and
    // the audit says who, when and why.
    let text = read(&dir, "out-a/sessions.csv");
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let header = r.headers().unwrap().clone();
    let col = |name: &str| header.iter().position(|h| h == name).unwrap();
    let id = r
        .records()
        .map(|x| x.unwrap())
        .find(|x| &x[col("watts")] == "85")
        .map(|x| x[col("row_id")].to_string())
        .unwrap();
    ok(
        &dir,
        &[
            "register",
            "correct",
            "a.db",
            &id,
            "--watts",
            "95",
            "--reason",
            "the bike showed 95 W",
            "--by",
            "trainer-b",
        ],
    );
    refused(
        &dir,
        "a.db",
        &[
            "register",
            "correct",
            "a.db",
            &id,
            "--body-fat-method",
            "DXA",
            "--reason",
            "slip",
            "--by",
            "trainer-b",
        ],
    );
    let audit = ok(
        &dir,
        &[
            "register",
            "audit",
            "a.db",
            "--participant",
            CODE,
            "--format",
            "csv",
        ],
    )
    .stdout;
    let line = audit
        .lines()
        .find(|l| l.contains("the bike showed 95 W"))
        .unwrap_or_else(|| panic!("{audit}"));
    assert!(line.contains("trainer-b"), "{line}");
    assert!(line.contains("85") && line.contains("95"), "{line}");
}

fn read(dir: &Scratch, name: &str) -> String {
    std::fs::read_to_string(dir.path().join(name)).unwrap()
}
