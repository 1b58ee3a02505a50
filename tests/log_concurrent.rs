//! Two or four trainers adding to the same CSV log at once keep every row exactly
//! once: `log add` reads, checks and replaces the log under an exclusive lock on
//! its folder (docs/commands.md, `log add`), so no writer replaces the log with a
//! copy that misses another writer's row while telling its user "added". The
//! processes are the real binary, started by the test, bounded in count, and they
//! write only in a temporary folder. The participant is the invented demo one.
#![cfg(unix)]

mod common;

use common::hard_edges::DEMO_PLAN;
use common::*;

/// `procs` writers adding `each` rows to one log at once, writer `p` through the
/// path `logs[p % logs.len()]` (the log, or a symbolic link to it).
fn concurrent_log_adds(procs: usize, each: usize, logs: &[&str]) {
    let dir = Scratch::new("log-concurrent");
    dir.write("plan.toml", DEMO_PLAN);
    std::fs::create_dir(dir.path().join("a")).unwrap();
    std::fs::create_dir(dir.path().join("b")).unwrap();
    dir.write(
        "a/log.csv",
        "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n",
    );
    std::os::unix::fs::symlink("../a/log.csv", dir.path().join("b/link.csv")).unwrap();
    let start = chrono::NaiveDate::from_ymd_opt(2027, 1, 11).unwrap();
    let mut wanted = Vec::new();
    let mut scripts = Vec::new();
    for p in 0..procs {
        let mut script = String::new();
        for i in 0..each {
            // Spread over the weeks, interleaved between writers, so rows go in
            // the middle of the file as well as at its end.
            let day = start + chrono::Days::new(((i * procs + p) % 120) as u64);
            let note = format!("writer {p} row {i}");
            script.push_str(&format!(
                "\"$BIN\" log add plan.toml --log {} --date {day} --session 30 --note \"{note}\"\n",
                logs[p % logs.len()]
            ));
            wanted.push(note);
        }
        scripts.push(script);
    }
    run_scripts_at_once(&dir, scripts);
    let text = std::fs::read_to_string(dir.path().join("a/log.csv")).unwrap();
    let link = std::fs::symlink_metadata(dir.path().join("b/link.csv")).unwrap();
    assert!(link.file_type().is_symlink(), "the link stays a link");
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let mut notes: Vec<String> = r.records().map(|x| x.unwrap()[9].to_string()).collect();
    notes.sort();
    wanted.sort();
    assert_eq!(notes, wanted, "every row exactly once");
    // And the log is still a valid log, in date order.
    let r = run(dir
        .cmd()
        .args(["schedule", "plan.toml", "--log", "a/log.csv"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
}

#[test]
fn two_trainers_adding_to_one_log_at_once_keep_every_row_once() {
    concurrent_log_adds(2, 30, &["a/log.csv"]);
}

#[test]
fn four_trainers_adding_to_one_log_at_once_keep_every_row_once() {
    concurrent_log_adds(4, 15, &["a/log.csv"]);
}

/// One writer through the log's own path, the other through a symbolic link to it
/// from another folder: the lock is on the target's folder, so both keep their rows.
#[test]
fn writers_through_a_symbolic_link_and_the_log_keep_every_row_once() {
    concurrent_log_adds(2, 30, &["a/log.csv", "b/link.csv"]);
}

/// A `log add` waits while the log's folder is locked, and adds its row once the
/// lock is released (the lock taken here by the library's own function, as another
/// `log add` would hold it).
#[test]
fn a_log_add_waits_for_the_lock_and_then_adds_its_row() {
    let dir = Scratch::new("log-lock");
    dir.write("plan.toml", DEMO_PLAN);
    let log = dir.write(
        "log.csv",
        "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n",
    );
    let lock = dosewright::output::lock_folder_of(&log).unwrap();
    let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_dosewright"))
        .args([
            "log",
            "add",
            "plan.toml",
            "--log",
            "log.csv",
            "--date",
            "2027-01-11",
            "--session",
            "30",
        ])
        .current_dir(dir.path())
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    // Held for half a second: the add is still waiting, and the log untouched.
    std::thread::sleep(std::time::Duration::from_millis(500));
    assert!(child.try_wait().unwrap().is_none(), "log add did not wait");
    assert_eq!(std::fs::read_to_string(&log).unwrap().lines().count(), 1);
    drop(lock);
    assert!(child.wait().unwrap().success());
    let text = std::fs::read_to_string(&log).unwrap();
    assert!(text.contains("2027-01-11,session,,,30,"), "{text}");
}
