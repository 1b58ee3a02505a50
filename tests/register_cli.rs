//! The register on the command line (docs/register.md, "Commands"): a participant
//! in a register gives the same schedule, fit and compare as the CSV log the
//! register exports; the export's tidy tables; corrections and voids in the audit
//! with who, when and why; the day view against the schedule; the errors a site can
//! act on (exit 2, nothing written); and two and four processes of the binary
//! recording at once, every row kept exactly once.
//!
//! Every register lives in a temporary folder; the participant and data are the
//! invented demo participant and log.
#![cfg(unix)]

mod common;

use common::hard_edges::{DEMO_LOG, DEMO_PLAN};
use common::*;
use std::collections::BTreeMap;

const CODE: &str = "DEMO-017";

/// A folder with the demo plan and log and a register `site.db` holding the
/// participant and the log, recorded by "trainer-a".
fn site() -> Scratch {
    let dir = Scratch::new("register-cli");
    dir.write("plan.toml", DEMO_PLAN);
    dir.write("log.csv", DEMO_LOG);
    ok(&dir, &["register", "create", "site.db"]);
    ok(
        &dir,
        &[
            "register",
            "enrol",
            "site.db",
            "plan.toml",
            "--arm",
            "exercise",
            "--by",
            "trainer-a",
        ],
    );
    ok(
        &dir,
        &[
            "register",
            "import",
            "site.db",
            "log.csv",
            "--participant",
            CODE,
            "--by",
            "trainer-a",
        ],
    );
    dir
}

/// Run and require success; the run's output.
fn ok(dir: &Scratch, args: &[&str]) -> Run {
    let r = run(dir.cmd().args(args));
    assert_eq!(r.code, Some(0), "{args:?}: {}", r.stderr);
    r
}

/// Run and require exit 2 with nothing on standard output and the register's bytes
/// unchanged; the message.
fn refused(dir: &Scratch, args: &[&str]) -> String {
    // The register and its write-ahead log, which holds the newest commits until
    // a checkpoint (docs/register.md, "Speed").
    let bytes = || {
        ["site.db", "site.db-wal"].map(|f| std::fs::read(dir.path().join(f)).unwrap_or_default())
    };
    let before = bytes();
    let r = run(dir.cmd().args(args));
    assert_eq!(r.code, Some(2), "{args:?}: {}", r.stderr);
    assert_eq!(r.stdout, "", "{args:?}");
    assert!(bytes() == before, "{args:?} changed the register");
    r.stderr
}

/// The rows of a CSV text as maps from the header's names.
fn csv_rows(text: &str) -> Vec<BTreeMap<String, String>> {
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let header = r.headers().unwrap().clone();
    r.records()
        .map(|rec| {
            header
                .iter()
                .zip(rec.unwrap().iter())
                .map(|(h, v)| (h.to_string(), v.to_string()))
                .collect()
        })
        .collect()
}

/// Some changes after the import: a weigh-in recorded, a session corrected, another
/// voided. Returns the ids of the corrected and the voided rows.
fn change_some_rows(dir: &Scratch) -> (String, String) {
    ok(
        dir,
        &[
            "log",
            "add",
            "--register",
            "site.db",
            "--participant",
            CODE,
            "--date",
            "2027-03-24",
            "--weigh-in",
            "227.5",
            "--units",
            "us",
            "--by",
            "trainer-b",
        ],
    );
    let list = ok(
        dir,
        &[
            "register",
            "list",
            "site.db",
            "--participant",
            CODE,
            "--format",
            "csv",
        ],
    )
    .stdout;
    let rows = csv_rows(&list);
    let sessions: Vec<&BTreeMap<String, String>> =
        rows.iter().filter(|r| r["kind"] == "session").collect();
    let corrected = sessions[1]["row_id"].clone();
    let voided = sessions[2]["row_id"].clone();
    ok(
        dir,
        &[
            "register",
            "correct",
            "site.db",
            &corrected,
            "--session",
            "26",
            "--reason",
            "typed from the wrong sheet",
            "--by",
            "trainer-b",
        ],
    );
    ok(
        dir,
        &[
            "register",
            "void",
            "site.db",
            &voided,
            "--reason",
            "recorded twice",
            "--by",
            "trainer-c",
        ],
    );
    (corrected, voided)
}

/// `a` and `b` as lines, with the one line naming the log's source (`"path": ...`)
/// set aside: it names the register's participant in one and the CSV file in the
/// other (where the output names its log at all). Everything else must be the same
/// bytes.
fn same_but_the_log_name(a: &str, b: &str, what: &str) {
    let la: Vec<&str> = a.lines().collect();
    let lb: Vec<&str> = b.lines().collect();
    assert_eq!(la.len(), lb.len(), "{what}: line counts differ");
    let differing: Vec<(&str, &str)> = la
        .iter()
        .zip(&lb)
        .filter(|(x, y)| x != y)
        .map(|(x, y)| (*x, *y))
        .collect();
    assert!(differing.len() <= 1, "{what}: {differing:?}");
    let Some(&(x, y)) = differing.first() else {
        return;
    };
    assert_eq!(
        x.trim(),
        format!("\"path\": \"site.db: participant {CODE}\","),
        "{what}"
    );
    assert_eq!(y.trim(), "\"path\": \"out/log-DEMO-017.csv\",", "{what}");
    assert_eq!(a.ends_with('\n'), b.ends_with('\n'), "{what}");
}

#[test]
fn a_register_participant_plans_as_the_exported_csv_log() {
    let dir = site();
    change_some_rows(&dir);
    ok(&dir, &["register", "export", "site.db", "--to", "out"]);
    let log = "out/log-DEMO-017.csv";
    let from_register = |cmd: &[&str]| {
        let mut args = cmd.to_vec();
        args.extend([
            "--register",
            "site.db",
            "--participant",
            CODE,
            "--format",
            "json",
        ]);
        ok(&dir, &args).stdout
    };
    let from_csv = |cmd: &[&str]| {
        let mut args = cmd.to_vec();
        args.extend(["plan.toml", "--log", log, "--format", "json"]);
        ok(&dir, &args).stdout
    };
    for cmd in [&["schedule"][..], &["fit"], &["compare"]] {
        let a = from_register(cmd);
        let b = from_csv(cmd);
        same_but_the_log_name(&a, &b, cmd[0]);
    }
    // The corrections count: the exported log holds the corrected minutes and not
    // the voided row, so the log differs from the file first imported.
    let exported = std::fs::read_to_string(dir.path().join(log)).unwrap();
    assert_ne!(exported, DEMO_LOG);
    let a = from_register(&["schedule"]);
    let b = ok(
        &dir,
        &[
            "schedule",
            "plan.toml",
            "--log",
            "log.csv",
            "--format",
            "json",
        ],
    )
    .stdout;
    assert_ne!(a.replace("site.db: participant DEMO-017", "log.csv"), b);
}

#[test]
fn the_export_is_one_tidy_table_per_kind_with_stable_row_ids() {
    let dir = site();
    let (corrected, voided) = change_some_rows(&dir);
    ok(&dir, &["register", "export", "site.db", "--to", "out"]);
    let read = |f: &str| std::fs::read_to_string(dir.path().join("out").join(f)).unwrap();
    let weigh_ins = csv_rows(&read("weigh-ins.csv"));
    let sessions = csv_rows(&read("sessions.csv"));
    // Every weigh-in of the log once (11) and the one recorded after, 227.5 lb in kg
    // (0.45359237 kg a pound exactly).
    assert_eq!(weigh_ins.len(), DEMO_LOG.matches(",weigh-in,").count() + 1);
    let added = weigh_ins
        .iter()
        .find(|r| r["date"] == "2027-03-24")
        .unwrap();
    let kg: f64 = added["mass_kg"].parse().unwrap();
    assert!((kg - 227.5 * 0.45359237).abs() < 1e-9, "{kg}");
    assert_eq!(added["recorded_by"], "trainer-b");
    // Sessions: the log's, plus the correction's new version.
    assert_eq!(sessions.len(), DEMO_LOG.matches(",session,").count() + 1);
    let by_id = |id: &str| sessions.iter().find(|r| r["row_id"] == id).unwrap();
    let old = by_id(&corrected);
    assert_eq!(old["status"], "superseded");
    let new = by_id(&old["superseded_by"]);
    assert_eq!(new["supersedes"], corrected);
    assert_eq!(new["minutes"], "26");
    assert_eq!(new["status"], "current");
    assert_eq!(by_id(&voided)["status"], "voided");
    // ISO 8601 UTC times; ids unique.
    for r in weigh_ins.iter().chain(&sessions) {
        let t = &r["recorded_at"];
        assert!(t.ends_with('Z'), "{t}");
        chrono::DateTime::parse_from_rfc3339(t).unwrap();
    }
    let mut ids: Vec<&String> = weigh_ins
        .iter()
        .chain(&sessions)
        .map(|r| &r["row_id"])
        .collect();
    let n = ids.len();
    ids.sort();
    ids.dedup();
    assert_eq!(ids.len(), n);
    // A second export after another row: the same ids for the same rows.
    ok(
        &dir,
        &[
            "log",
            "add",
            "--register",
            "site.db",
            "--participant",
            CODE,
            "--date",
            "2027-03-26",
            "--session",
            "40",
        ],
    );
    ok(&dir, &["register", "export", "site.db", "--to", "again"]);
    let again = csv_rows(&std::fs::read_to_string(dir.path().join("again/sessions.csv")).unwrap());
    for r in &sessions {
        let same = again.iter().find(|a| a["row_id"] == r["row_id"]).unwrap();
        assert_eq!(same, r);
    }
    assert_eq!(again.len(), sessions.len() + 1);
}

#[test]
fn the_audit_shows_the_original_the_change_who_when_and_why() {
    let dir = site();
    let (corrected, voided) = change_some_rows(&dir);
    let audit = csv_rows(
        &ok(
            &dir,
            &[
                "register",
                "audit",
                "site.db",
                "--participant",
                CODE,
                "--format",
                "csv",
            ],
        )
        .stdout,
    );
    let correction = audit
        .iter()
        .find(|c| c["action"] == "correct")
        .expect("a correction");
    assert_eq!(correction["by"], "trainer-b");
    assert_eq!(correction["reason"], "typed from the wrong sheet");
    let old: serde_json::Value = serde_json::from_str(&correction["old_values"]).unwrap();
    let new: serde_json::Value = serde_json::from_str(&correction["new_values"]).unwrap();
    // The original's minutes, from the log as imported (the second session row).
    let original = DEMO_LOG
        .lines()
        .filter(|l| l.contains(",session,"))
        .nth(1)
        .unwrap()
        .split(',')
        .nth(4)
        .unwrap()
        .parse::<f64>()
        .unwrap();
    assert_eq!(old["minutes"].as_f64(), Some(original));
    assert_eq!(new["minutes"].as_f64(), Some(26.0));
    let void = audit
        .iter()
        .find(|c| c["action"] == "void")
        .expect("a void");
    assert_eq!(void["row_id"], voided);
    assert_eq!(void["by"], "trainer-c");
    assert_eq!(void["reason"], "recorded twice");
    assert!(!void["old_values"].is_empty());
    for c in &audit {
        chrono::DateTime::parse_from_rfc3339(&c["at"]).unwrap();
    }
    // The original row is still listed with every version.
    let all = ok(
        &dir,
        &["register", "list", "site.db", "--all", "--format", "csv"],
    )
    .stdout;
    let rows = csv_rows(&all);
    assert!(rows.iter().any(|r| r["row_id"] == corrected
        && r["status"].starts_with("superseded by")
        && r["recorded_by"] == "trainer-a"));
    // The OS user is the default who.
    let r = run(dir
        .cmd()
        .env("USER", "site-nurse")
        .args(["register", "void", "site.db", &corrected, "--reason", "x"]));
    assert_eq!(
        r.code,
        Some(2),
        "a superseded row cannot be voided: {}",
        r.stderr
    );
    let current = csv_rows(&ok(&dir, &["register", "list", "site.db", "--format", "csv"]).stdout)
        [0]["row_id"]
        .clone();
    ok(
        &dir,
        &[
            "register",
            "void",
            "site.db",
            &current,
            "--reason",
            "scale not zeroed",
        ],
    );
    let audit = ok(
        &dir,
        &[
            "register",
            "audit",
            "site.db",
            "--participant",
            CODE,
            "--format",
            "csv",
        ],
    )
    .stdout;
    let last = csv_rows(&audit).pop().unwrap();
    let user = std::env::var("USER")
        .or_else(|_| std::env::var("LOGNAME"))
        .unwrap_or_else(|_| "unknown-os-user".into());
    assert_eq!(last["by"], format!("os:{user}"));
}

#[test]
fn errors_name_the_file_and_the_row_and_write_nothing() {
    let dir = site();
    fn add<'a>(extra: &[&'a str]) -> Vec<&'a str> {
        let mut a = vec!["log", "add", "--register", "site.db", "--participant"];
        a.extend(extra);
        a
    }
    let m = refused(
        &dir,
        &add(&["NOBODY-1", "--date", "2027-02-02", "--weigh-in", "100"]),
    );
    assert!(m.contains("site.db") && m.contains("NOBODY-1"), "{m}");
    let m = refused(
        &dir,
        &add(&[CODE, "--date", "2029-01-01", "--session", "30"]),
    );
    assert!(
        m.contains("site.db") && m.contains(CODE) && m.contains("2029-01-01"),
        "{m}"
    );
    // 130 kg a day after 103.9 kg: the one jump rule of `log add` (3 kg in a week).
    let m = refused(
        &dir,
        &add(&[CODE, "--date", "2027-02-02", "--weigh-in", "130"]),
    );
    assert!(
        m.contains("--accept-jump") && m.contains("Nothing was written"),
        "{m}"
    );
    let m = refused(
        &dir,
        &[
            "register",
            "correct",
            "site.db",
            "9999",
            "--weigh-in",
            "100",
            "--reason",
            "x",
        ],
    );
    assert!(m.contains("site.db") && m.contains("9999"), "{m}");
    let m = refused(&dir, &["register", "void", "site.db", "3", "--reason", " "]);
    assert!(m.contains("reason"), "{m}");
    let m = refused(
        &dir,
        &[
            "register",
            "correct",
            "site.db",
            "3",
            "--weigh-in",
            "100",
            "--reason",
            "x",
        ],
    );
    assert!(m.contains("keeps the kind"), "{m}");
    // A read-only register.
    use std::os::unix::fs::PermissionsExt;
    let db = dir.path().join("site.db");
    std::fs::set_permissions(&db, std::fs::Permissions::from_mode(0o400)).unwrap();
    let m = refused(
        &dir,
        &add(&[CODE, "--date", "2027-02-02", "--session", "30"]),
    );
    assert!(m.contains("site.db") && m.contains("read-only"), "{m}");
    std::fs::set_permissions(&db, std::fs::Permissions::from_mode(0o600)).unwrap();
    // With --accept-jump the same weigh-in is kept, with the log's jump warning.
    let r = ok(
        &dir,
        &add(&[
            CODE,
            "--date",
            "2027-02-02",
            "--weigh-in",
            "130",
            "--accept-jump",
        ]),
    );
    assert!(r.stderr.contains("recorded row"), "{}", r.stderr);
}

#[test]
fn the_day_view_shows_the_re_planned_session_and_what_is_recorded() {
    let dir = site();
    let date = "2027-03-22";
    let json: serde_json::Value = serde_json::from_str(
        &ok(
            &dir,
            &[
                "schedule",
                "--register",
                "site.db",
                "--participant",
                CODE,
                "--format",
                "json",
            ],
        )
        .stdout,
    )
    .unwrap();
    let planned = json["scenarios"][0]["weeks"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|w| w["sessions"].as_array().unwrap())
        .find(|s| s["date"] == date)
        .expect("a session planned on the date")["minutes"]
        .as_u64()
        .unwrap();
    let csv = ok(
        &dir,
        &[
            "register", "day", "site.db", "--date", date, "--format", "csv",
        ],
    );
    let rows = csv_rows(&csv.stdout);
    let due = rows.iter().find(|r| r["line"] == "due").expect("due");
    assert_eq!(due["participant"], CODE);
    assert_eq!(due["minutes_at_target"], planned.to_string());
    // The weigh-in of that date in the log is shown as recorded.
    let logged = DEMO_LOG
        .lines()
        .find(|l| l.starts_with(&format!("{date},weigh-in,")))
        .unwrap()
        .split(',')
        .nth(2)
        .unwrap()
        .to_string();
    let rec = rows
        .iter()
        .find(|r| r["line"] == "recorded")
        .expect("recorded");
    assert!(rec["recorded"].contains(&logged), "{rec:?}");
    assert!(csv.stderr.contains("Cautions"), "{}", csv.stderr);
    // A day with no session: no one is due.
    let r = ok(
        &dir,
        &["register", "day", "site.db", "--date", "2027-03-23"],
    );
    assert!(r.stdout.contains("No one is due"), "{}", r.stdout);
    // The printable page.
    ok(
        &dir,
        &[
            "register", "day", "site.db", "--date", date, "--format", "html", "--out", "day.html",
        ],
    );
    let html = std::fs::read_to_string(dir.path().join("day.html")).unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert!(
        html.contains(&format!(">{planned}<")),
        "minutes on the page"
    );
}

#[test]
fn backup_and_check() {
    let dir = site();
    let r = ok(&dir, &["register", "check", "site.db"]);
    assert!(r.stdout.contains("result: ok"), "{}", r.stdout);
    ok(&dir, &["register", "backup", "site.db", "copy.db"]);
    let a = ok(
        &dir,
        &["register", "list", "site.db", "--all", "--format", "csv"],
    )
    .stdout;
    let b = ok(
        &dir,
        &["register", "list", "copy.db", "--all", "--format", "csv"],
    )
    .stdout;
    assert_eq!(a, b);
    let r = ok(&dir, &["register", "check", "copy.db"]);
    assert!(r.stdout.contains("result: ok"), "{}", r.stdout);
    // A backup never overwrites.
    let m = refused(&dir, &["register", "backup", "site.db", "copy.db"]);
    assert!(m.contains("copy.db"), "{m}");
}

/// `procs` processes of the binary, each recording `each` weigh-ins for the same
/// participant at once (a shell loop of `log add --register`); every row must be
/// kept exactly once.
fn concurrent_writers(procs: usize, each: usize) {
    let dir = Scratch::new("register-concurrent");
    dir.write("plan.toml", DEMO_PLAN);
    ok(&dir, &["register", "create", "site.db"]);
    ok(&dir, &["register", "enrol", "site.db", "plan.toml"]);
    let start = chrono::NaiveDate::from_ymd_opt(2027, 1, 12).unwrap();
    let mut wanted = Vec::new();
    let mut scripts = Vec::new();
    for p in 0..procs {
        let mut script = String::new();
        for i in 0..each {
            let day = start + chrono::Days::new((p * each + i) as u64);
            wanted.push(day.to_string());
            script.push_str(&format!(
                "\"$BIN\" log add --register site.db --participant {CODE} --date {day} --weigh-in 104 --by writer-{p}\n"
            ));
        }
        scripts.push(script);
    }
    run_scripts_at_once(&dir, scripts);
    let rows = csv_rows(
        &ok(
            &dir,
            &["register", "list", "site.db", "--all", "--format", "csv"],
        )
        .stdout,
    );
    let mut dates: Vec<String> = rows.iter().map(|r| r["date"].clone()).collect();
    dates.sort();
    wanted.sort();
    assert_eq!(dates, wanted, "every row exactly once");
    let r = ok(&dir, &["register", "check", "site.db"]);
    assert!(r.stdout.contains("result: ok"), "{}", r.stdout);
}

#[test]
fn two_processes_recording_at_once_keep_every_row_once() {
    concurrent_writers(2, 50);
}

#[test]
fn four_processes_recording_at_once_keep_every_row_once() {
    concurrent_writers(4, 25);
}

#[test]
fn enrolling_a_study_and_roster_gives_each_dosed_participant_their_arm_and_values() {
    use common::hard_edges::{ROSTER, STUDY};
    let dir = Scratch::new("register-study");
    dir.write("study.toml", STUDY);
    dir.write("roster.csv", ROSTER);
    ok(&dir, &["register", "create", "site.db"]);
    let r = ok(
        &dir,
        &[
            "register",
            "enrol",
            "site.db",
            "--study",
            "study.toml",
            "--roster",
            "roster.csv",
        ],
    );
    let roster = csv_rows(ROSTER);
    let listed = csv_rows(
        &ok(
            &dir,
            &["register", "participants", "site.db", "--format", "csv"],
        )
        .stdout,
    );
    // Everyone outside the control arm (no dose), with the roster's arm.
    let dosed: Vec<&BTreeMap<String, String>> =
        roster.iter().filter(|r| r["arm"] != "control").collect();
    assert_eq!(listed.len(), dosed.len(), "{}", r.stderr);
    for (p, want) in listed.iter().zip(&dosed) {
        assert_eq!(p["participant"], want["id"]);
        assert_eq!(p["arm"], want["arm"]);
        // The roster row's values are the plan's: the schedule's baseline mass.
        let json: serde_json::Value = serde_json::from_str(
            &ok(
                &dir,
                &[
                    "schedule",
                    "--register",
                    "site.db",
                    "--participant",
                    &want["id"],
                    "--format",
                    "json",
                ],
            )
            .stdout,
        )
        .unwrap();
        let mass: f64 = want["mass_kg"].parse().unwrap();
        assert_eq!(
            json["baseline"]["mass_kg"].as_f64(),
            Some(mass),
            "{}",
            want["id"]
        );
    }
    for control in roster.iter().filter(|r| r["arm"] == "control") {
        assert!(
            r.stderr
                .contains(&format!("not enrolled: {}", control["id"])),
            "{}",
            r.stderr
        );
    }
}

#[test]
fn enrolling_from_a_study_leaves_out_its_study_only_tables() {
    // docs/file-formats.md: `[uncertainty]` and `[staffing]` belong to the study, not
    // to a participant's plan; a study that has them enrols its participants with
    // the same plans as one that has not (they used to be refused as unknown plan
    // keys).
    use common::hard_edges::{ROSTER, STUDY};
    let extra = format!(
        "{STUDY}\n[uncertainty]\nattendance = 0.9\ndropout_per_week = 0.01\n\n[staffing]\ngroup_size = 4\n"
    );
    let dir = Scratch::new("register-study-only-tables");
    dir.write("plain.toml", STUDY);
    dir.write("extra.toml", &extra);
    dir.write("roster.csv", ROSTER);
    for (db, study) in [("a.db", "plain.toml"), ("b.db", "extra.toml")] {
        ok(&dir, &["register", "create", db]);
        ok(
            &dir,
            &[
                "register",
                "enrol",
                db,
                "--study",
                study,
                "--roster",
                "roster.csv",
            ],
        );
    }
    let listed = |db: &str| ok(&dir, &["register", "participants", db, "--format", "csv"]).stdout;
    let who = |db: &str| -> Vec<(String, String)> {
        csv_rows(&listed(db))
            .iter()
            .map(|r| (r["participant"].clone(), r["arm"].clone()))
            .collect()
    };
    assert_eq!(who("a.db"), who("b.db"));
    assert_eq!(who("a.db").len(), 4);
    let first = who("a.db")[0].0.clone();
    let schedule = |db: &str| {
        ok(
            &dir,
            &[
                "schedule",
                "--register",
                db,
                "--participant",
                &first,
                "--format",
                "json",
            ],
        )
        .stdout
    };
    // The same JSON but for the plan's name (the study file's) and the register's.
    let a = schedule("a.db")
        .replace("plain.toml", "STUDY")
        .replace("a.db", "DB");
    let b = schedule("b.db")
        .replace("extra.toml", "STUDY")
        .replace("b.db", "DB");
    let differ: Vec<(&str, &str)> = a.lines().zip(b.lines()).filter(|(x, y)| x != y).collect();
    assert!(
        differ.is_empty() && a.lines().count() == b.lines().count(),
        "{differ:?}"
    );
}
