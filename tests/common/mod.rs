//! Helpers for the CLI tests: the binary with a fixed environment, scratch folders,
//! and a small valid plan that the tests change one thing at a time.
#![allow(dead_code)] // not every test file uses every helper

use std::path::{Path, PathBuf};

#[cfg(unix)]
pub mod tree;

#[cfg(unix)]
pub mod hard_edges;
pub mod log_fixtures;
pub mod plan_text;
pub mod schedule_contract;

/// A small valid plan for an invented participant. It earns no warnings, so a test
/// that adds one change and then sees a warning knows the change caused it.
///
/// Line numbers matter: the bad-plan table pins positions in this text.
/// ```text
///  1 [participant]            10 [participant.screening]   16 [protocol]
///  2 id                       11 exercises_regularly       17 start
///  3 sex                      12 known_disease             18 weeks
///  4 age_years                13 signs_or_symptoms         19 session_days
///  5 height_cm                14 medical_clearance         21 [protocol.dose]
///  6 mass_kg                                               22 kcal_per_week
///  7 body_fat_percent                                      24 [activity]
///  8 pal                                                   25 met
/// ```
pub const BASE: &str = r#"[participant]
id = "T-001"
sex = "female"
age_years = 40
height_cm = 165.0
mass_kg = 80.0
body_fat_percent = 38.0
pal = 1.5

[participant.screening]
exercises_regularly = false
known_disease = false
signs_or_symptoms = false
medical_clearance = false

[protocol]
start = 2027-01-04
weeks = 8
session_days = ["mon", "wed", "fri"]

[protocol.dose]
kcal_per_week = 1200

[activity]
met = 4.0
"#;

/// The screening block of [`BASE`], for tests that remove it.
pub const BASE_SCREENING: &str = "[participant.screening]
exercises_regularly = false
known_disease = false
signs_or_symptoms = false
medical_clearance = false

";

/// `text` with each `(old, new)` replaced; every `old` must occur exactly once, so a
/// test cannot silently stop changing what it means to change.
pub fn edit(text: &str, edits: &[(&str, &str)]) -> String {
    let mut t = text.to_string();
    for (old, new) in edits {
        assert_eq!(
            t.matches(old).count(),
            1,
            "the edit target {old:?} must occur exactly once in the plan"
        );
        t = t.replacen(old, new, 1);
    }
    t
}

/// [`BASE`] with edits and then `append` added at the end.
pub fn base_with(edits: &[(&str, &str)], append: &str) -> String {
    let mut t = edit(BASE, edits);
    t.push_str(append);
    t
}

/// The `dosewright` binary with a stable environment.
pub fn dosewright() -> assert_cmd::Command {
    let mut c = assert_cmd::cargo::cargo_bin_cmd!("dosewright");
    c.env("NO_COLOR", "1").env_remove("CLICOLOR_FORCE");
    c
}

/// The crate root (where `plans/` lives).
pub fn manifest_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// A scratch folder (a [`tempfile::TempDir`]), removed when dropped.
pub struct Scratch {
    dir: tempfile::TempDir,
}

impl Scratch {
    /// A new, empty, uniquely named folder under the system temp dir.
    pub fn new(tag: &str) -> Scratch {
        let dir = tempfile::Builder::new()
            .prefix(&format!("dosewright-test-{tag}-"))
            .tempdir()
            .expect("create a scratch folder");
        Scratch { dir }
    }

    /// The folder.
    pub fn path(&self) -> &Path {
        self.dir.path()
    }

    /// Write `bytes` to `name` in the folder and return the full path.
    pub fn write(&self, name: &str, bytes: impl AsRef<[u8]>) -> PathBuf {
        let p = self.path().join(name);
        std::fs::write(&p, bytes).expect("write a scratch file");
        p
    }

    /// A command running in this folder (so that messages name files as given).
    pub fn cmd(&self) -> assert_cmd::Command {
        let mut c = dosewright();
        c.current_dir(self.path());
        c
    }

    /// The names of the files in the folder, sorted.
    pub fn listing(&self) -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(self.path())
            .expect("list the scratch folder")
            .map(|e| {
                e.expect("a folder entry")
                    .file_name()
                    .to_string_lossy()
                    .into_owned()
            })
            .collect();
        v.sort();
        v
    }
}

/// What one run printed.
#[derive(Debug)]
pub struct Run {
    /// Exit code (None when killed by a signal).
    pub code: Option<i32>,
    /// Standard output.
    pub stdout: String,
    /// Standard error.
    pub stderr: String,
}

/// Run `cmd` and collect its output as text.
pub fn run(cmd: &mut assert_cmd::Command) -> Run {
    let out = cmd.output().expect("the binary runs");
    Run {
        code: out.status.code(),
        stdout: String::from_utf8(out.stdout).expect("stdout is UTF-8"),
        stderr: String::from_utf8(out.stderr).expect("stderr is UTF-8"),
    }
}

/// Write `plan` as `plan.toml` in a fresh folder and run `args` there (the plan's
/// name is appended as the last argument). The folder lives as long as the result.
pub fn run_plan(plan: &str, args: &[&str]) -> (Scratch, Run) {
    let dir = Scratch::new("plan");
    dir.write("plan.toml", plan);
    let r = run(dir.cmd().args(args).arg("plan.toml"));
    (dir, r)
}

/// `schedule PLAN --format json`, which must succeed, parsed.
pub fn schedule_json(plan: &str) -> serde_json::Value {
    let (_dir, r) = run_plan(plan, &["schedule", "--format", "json"]);
    assert_eq!(
        r.code,
        Some(0),
        "schedule --format json failed: {}",
        r.stderr
    );
    serde_json::from_str(&r.stdout).expect("schedule --format json prints valid JSON")
}

/// The warning codes of a schedule JSON, in order.
pub fn warning_codes(json: &serde_json::Value) -> Vec<String> {
    json["warnings"]
        .as_array()
        .expect("warnings is an array")
        .iter()
        .map(|w| {
            w["code"]
                .as_str()
                .expect("a warning code is a string")
                .to_string()
        })
        .collect()
}

/// `v[key]` as a finite number, or a panic naming the key.
pub fn num(v: &serde_json::Value, key: &str) -> f64 {
    let x = v
        .get(key)
        .unwrap_or_else(|| panic!("key {key:?} missing in {v}"))
        .as_f64()
        .unwrap_or_else(|| panic!("key {key:?} is not a number: {}", v[key]));
    assert!(x.is_finite(), "key {key:?} is not finite");
    x
}

/// `v[key]` as a string, or a panic naming the key.
pub fn text<'a>(v: &'a serde_json::Value, key: &str) -> &'a str {
    v.get(key)
        .unwrap_or_else(|| panic!("key {key:?} missing in {v}"))
        .as_str()
        .unwrap_or_else(|| panic!("key {key:?} is not a string: {}", v[key]))
}

/// `v[key]` as an array, or a panic naming the key.
pub fn array<'a>(v: &'a serde_json::Value, key: &str) -> &'a Vec<serde_json::Value> {
    v.get(key)
        .unwrap_or_else(|| panic!("key {key:?} missing in {v}"))
        .as_array()
        .unwrap_or_else(|| panic!("key {key:?} is not an array: {}", v[key]))
}

/// A `YYYY-MM-DD` string as a date.
pub fn date(s: &str) -> chrono::NaiveDate {
    chrono::NaiveDate::parse_from_str(s, "%Y-%m-%d")
        .unwrap_or_else(|e| panic!("{s:?} is not a YYYY-MM-DD date: {e}"))
}

/// The data rows of the `activities` table: (code, MET 2011, group, label).
pub fn activity_rows(out: &str) -> Vec<(String, f64, String, String)> {
    out.lines()
        .filter_map(|l| {
            let cells: Vec<&str> = l.split('|').map(str::trim).collect();
            // "| 17200 | 4.3 | 3.8 | Walking | Brisk ... |" -> ["", code, met, met2000, group, label, ""]
            if cells.len() == 7
                && cells[1].len() == 5
                && cells[1].chars().all(|c| c.is_ascii_digit())
            {
                Some((
                    cells[1].to_string(),
                    cells[2].parse().expect("the MET column is a number"),
                    cells[4].to_string(),
                    cells[5].to_string(),
                ))
            } else {
                None
            }
        })
        .collect()
}

/// Every leaf command, from `--help` (e.g. "schedule", "log add").
pub fn commands() -> Vec<String> {
    fn listed(args: &[&str]) -> Vec<String> {
        let r = run(dosewright().args(args));
        assert_eq!(r.code, Some(0), "{args:?}: {}", r.stderr);
        r.stdout
            .lines()
            .skip_while(|l| !l.starts_with("Commands:"))
            .skip(1)
            .take_while(|l| !l.trim().is_empty())
            .filter_map(|l| l.split_whitespace().next().map(str::to_string))
            .filter(|c| c != "help")
            .collect()
    }
    let mut out = Vec::new();
    for c in listed(&["--help"]) {
        let help = run(dosewright().args([c.as_str(), "--help"])).stdout;
        if help.contains("\nCommands:") {
            for sub in listed(&[c.as_str(), "--help"]) {
                out.push(format!("{c} {sub}"));
            }
        } else {
            out.push(c);
        }
    }
    assert!(out.len() >= 8, "commands found: {out:?}");
    out
}

/// A Python that can import the `icalendar` package (Debian python3-icalendar),
/// for `scripts/check-ics.py`: `/usr/bin/python3` first, then `python3` on the
/// path. None, with a note on standard error naming `test`, when neither can: the
/// test then skips that check (CI installs the package).
pub fn python_with_icalendar(test: &str) -> Option<&'static str> {
    let found = ["/usr/bin/python3", "python3"].into_iter().find(|p| {
        std::process::Command::new(p)
            .args(["-c", "import icalendar"])
            .output()
            .is_ok_and(|o| o.status.success())
    });
    if found.is_none() {
        eprintln!(
            "skipped: {test}: no Python with the icalendar package (apt-get install \
             python3-icalendar; CI installs it)"
        );
    }
    found
}

/// Run `scripts/check-ics.py` with `python` on the calendar `cal` of `dir` against
/// its `s.json` schedule and the earlier calendar `previous`: whether it passed,
/// and what it printed.
pub fn check_ics_previous(
    python: &str,
    dir: &Scratch,
    cal: &str,
    previous: &str,
) -> (bool, String) {
    let out = std::process::Command::new(python)
        .arg(manifest_dir().join("scripts/check-ics.py"))
        .arg(dir.path().join(cal))
        .arg(dir.path().join("s.json"))
        .args(["--previous", previous])
        .current_dir(dir.path())
        .output()
        .expect("python runs");
    (
        out.status.success(),
        format!(
            "{}{}",
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        ),
    )
}

/// Run every shell script of `scripts` at once in `dir`, with `$BIN` the program
/// under test (the concurrent-writer tests: each script one writer's commands),
/// wait for all of them, and require each to succeed.
pub fn run_scripts_at_once(dir: &Scratch, scripts: Vec<String>) {
    let children: Vec<_> = scripts
        .into_iter()
        .map(|script| {
            std::process::Command::new("sh")
                .arg("-c")
                .arg(format!("set -e\n{script}"))
                .env("BIN", env!("CARGO_BIN_EXE_dosewright"))
                .current_dir(dir.path())
                .stdout(std::process::Stdio::null())
                .stderr(std::process::Stdio::piped())
                .spawn()
                .unwrap()
        })
        .collect();
    for c in children {
        let out = c.wait_with_output().unwrap();
        assert!(
            out.status.success(),
            "a writer failed: {}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
}
