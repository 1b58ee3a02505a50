//! The bad-input catalogues, one case per file, each case its own test.
//!
//! - `tests/cases/bad-plan/NAME.toml`: a bad plan. The plan is the base plan of
//!   `tests/common/mod.rs` (`BASE`) with each `[[edit]]` applied (its `old` text must
//!   occur exactly once) and `append` added at the end, or the whole `plan` text when
//!   the case gives one. It is written as `bad.toml` in a fresh scratch folder and
//!   every command line of `runs` is run there.
//! - `tests/cases/usage/NAME.toml`: bad usage of a command or option. `args` runs in
//!   a fresh scratch folder holding the demo plan (`plan.toml`), the demo log
//!   (`log.csv`), a small study (`study.toml`) and two rosters for it (`roster.csv`
//!   with arms, `roster-no-arms.csv` without), from `tests/fixtures/`, plus whatever
//!   the case's `[[prepare]]` entries make (`dir`, `file` with `text`, `copy` of a
//!   file `from` the crate root, `link` to a `target`, `fifo`).
//!
//! Every run must exit with `exit` (2), print nothing on standard output, and leave
//! the scratch folder exactly as it was (no entry created, removed or changed). Its
//! standard error must be `stderr` exactly (plus the final newline); a usage case may
//! instead give `stderr_starts` (one line starting so, where the rest is the operating
//! system's words) and the argument parser's cases also list `stderr_has`, key
//! phrases that must stay in the message whatever the exact text.
//!
//! Run one case by name (the test name is `bad_plan::NAME` or `usage::NAME`):
//!
//! ```text
//! cargo test --test catalogues -- usage::schedule_format_xml --exact
//! cargo test --test catalogues -- bad_plan::          # every bad plan
//! ```
//!
//! Bless mode: `DOSEWRIGHT_BLESS=1 cargo test --test catalogues` rewrites the
//! `stderr` of every case whose message differs, from the actual output, keeping
//! the rest of the file (comments included). It blesses only the text: a case whose
//! exit code, standard output, folder, `stderr_has` or `stderr_starts` is wrong still
//! fails, and a bad plan whose runs print different messages is not blessed. Review
//! the diff (`git diff tests/cases`) before committing it.
#![cfg(unix)]

mod common;

use common::tree::{differences, snapshot};
use common::*;
use libtest_mimic::{Arguments, Failed, Trial};
use serde::Deserialize;
use std::path::{Path, PathBuf};

/// The environment variable that turns on bless mode.
const BLESS: &str = "DOSEWRIGHT_BLESS";

/// The fewest cases each catalogue may hold: the counts when the catalogues moved
/// into files, so that a lost file fails.
const MIN_BAD_PLANS: usize = 212;
const MIN_USAGE: usize = 148;

fn cases_dir(kind: &str) -> PathBuf {
    manifest_dir().join("tests/cases").join(kind)
}

/// The case files of one catalogue, sorted by name.
fn case_files(kind: &str) -> Vec<(String, PathBuf)> {
    let mut v: Vec<(String, PathBuf)> = std::fs::read_dir(cases_dir(kind))
        .unwrap_or_else(|e| panic!("list tests/cases/{kind}: {e}"))
        .map(|e| e.expect("a folder entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .map(|p| {
            let name = p.file_stem().unwrap().to_string_lossy().into_owned();
            (name, p)
        })
        .collect();
    v.sort();
    v
}

fn read_case<T: for<'de> Deserialize<'de>>(path: &Path) -> T {
    let text =
        std::fs::read_to_string(path).unwrap_or_else(|e| panic!("read {}: {e}", path.display()));
    toml::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

// ---------------------------------------------------------------------------
// Case files
// ---------------------------------------------------------------------------

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Edit {
    old: String,
    new: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct BadPlan {
    runs: Vec<Vec<String>>,
    exit: i32,
    stderr: String,
    #[serde(default)]
    plan: Option<String>,
    #[serde(default)]
    append: String,
    #[serde(default)]
    edit: Vec<Edit>,
}

impl BadPlan {
    fn plan_text(&self) -> String {
        match &self.plan {
            Some(p) => {
                assert!(
                    self.edit.is_empty() && self.append.is_empty(),
                    "a case gives either `plan` or edits of the base plan"
                );
                p.clone()
            }
            None => {
                let edits: Vec<(&str, &str)> = self
                    .edit
                    .iter()
                    .map(|e| (e.old.as_str(), e.new.as_str()))
                    .collect();
                base_with(&edits, &self.append)
            }
        }
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields, tag = "kind", rename_all = "lowercase")]
enum Prepare {
    Dir { path: String },
    File { path: String, text: String },
    Copy { path: String, from: String },
    Link { path: String, target: String },
    Fifo { path: String },
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Usage {
    args: Vec<String>,
    exit: i32,
    #[serde(default)]
    stderr: Option<String>,
    #[serde(default)]
    stderr_starts: Option<String>,
    #[serde(default)]
    stderr_has: Vec<String>,
    #[serde(default)]
    prepare: Vec<Prepare>,
}

// ---------------------------------------------------------------------------
// Running a case
// ---------------------------------------------------------------------------

/// The demo plan and log, the study and its rosters, in a fresh folder.
fn fresh(tag: &str) -> Scratch {
    let dir = Scratch::new(tag);
    let copy = |name: &str, from: &str| {
        dir.write(name, read_fixture(from));
    };
    copy("plan.toml", "plans/demo.toml");
    copy("log.csv", "demo-data/demo-017-log.csv");
    dir.write(
        "study.toml",
        read_fixture("tests/fixtures/study-without-population.toml")
            + &read_fixture("tests/fixtures/study-synthetic.toml"),
    );
    copy("roster.csv", "tests/fixtures/roster.csv");
    copy("roster-no-arms.csv", "tests/fixtures/roster-no-arms.csv");
    dir
}

fn read_fixture(from: &str) -> String {
    std::fs::read_to_string(manifest_dir().join(from))
        .unwrap_or_else(|e| panic!("read {from}: {e}"))
}

fn make(dir: &Scratch, prep: &[Prepare]) {
    for p in prep {
        match p {
            Prepare::Dir { path } => std::fs::create_dir(dir.path().join(path)).unwrap(),
            Prepare::File { path, text } => {
                dir.write(path, text);
            }
            Prepare::Copy { path, from } => {
                dir.write(path, read_fixture(from));
            }
            Prepare::Link { path, target } => {
                std::os::unix::fs::symlink(target, dir.path().join(path)).unwrap()
            }
            Prepare::Fifo { path } => {
                let ok = std::process::Command::new("mkfifo")
                    .arg(dir.path().join(path))
                    .status()
                    .expect("mkfifo runs")
                    .success();
                assert!(ok, "mkfifo {path}");
            }
        }
    }
}

/// Run `args` in `dir`; the problems with the exit code, standard output and the
/// folder, and the run's standard error.
fn run_in(dir: &Scratch, args: &[String], exit: i32) -> (Vec<String>, String) {
    let before = snapshot(dir.path());
    let r = run(dir.cmd().args(args));
    let after = snapshot(dir.path());
    let mut p = Vec::new();
    if r.code != Some(exit) {
        p.push(format!("exit code {:?}, want {exit}", r.code));
    }
    if !r.stdout.is_empty() {
        p.push(format!("stdout not empty: {:?}", r.stdout));
    }
    let changed = differences(&before, &after);
    if !changed.is_empty() {
        p.push(format!("the folder changed: {}", changed.join(", ")));
    }
    (p, r.stderr)
}

/// The problems of one exact expected message against standard error.
fn exact_problem(stderr: &str, want: &str) -> Option<String> {
    (stderr != format!("{want}\n")).then(|| {
        format!(
            "stderr\n     got: {stderr:?}\n    want: {:?}",
            format!("{want}\n")
        )
    })
}

/// The problems of a usage case, and its standard error.
fn usage_problems(c: &Usage) -> (Vec<String>, String) {
    let dir = fresh("usage");
    make(&dir, &c.prepare);
    let (mut p, stderr) = run_in(&dir, &c.args, c.exit);
    if let Some(prefix) = &c.stderr_starts
        && (!stderr.starts_with(prefix.as_str()) || stderr.lines().count() != 1)
    {
        p.push(format!(
            "stderr {stderr:?}\n    want one line starting {prefix:?}"
        ));
    }
    for ph in &c.stderr_has {
        if !stderr.contains(ph.as_str()) {
            p.push(format!("stderr {stderr:?}\n    lacks {ph:?}"));
        }
    }
    (p, stderr)
}

/// The problems of a bad-plan case, and its standard error when every run printed
/// the same.
fn bad_plan_problems(c: &BadPlan) -> (Vec<String>, Option<String>) {
    let plan = c.plan_text();
    let mut problems = Vec::new();
    let mut messages = Vec::new();
    if plan == BASE {
        problems.push("the case changes nothing in the base plan".to_string());
    }
    assert!(!c.runs.is_empty(), "a bad-plan case needs at least one run");
    for args in &c.runs {
        let dir = Scratch::new("bad");
        dir.write("bad.toml", &plan);
        let (p, stderr) = run_in(&dir, args, c.exit);
        problems.extend(p.into_iter().map(|p| format!("({}): {p}", args.join(" "))));
        messages.push((args.join(" "), stderr));
    }
    let same = messages.iter().all(|(_, m)| *m == messages[0].1);
    let bless_it = same && blessing();
    for (args, m) in &messages {
        if !bless_it && let Some(p) = exact_problem(m, &c.stderr) {
            problems.push(format!("({args}): {p}"));
        }
    }
    (problems, same.then(|| messages[0].1.clone()))
}

fn blessing() -> bool {
    std::env::var_os(BLESS).is_some_and(|v| v != "0" && !v.is_empty())
}

/// Write `stderr` (without its final newline) as the case's expected message.
fn bless(path: &Path, stderr: &str) -> Result<(), Failed> {
    let want = stderr.strip_suffix('\n').unwrap_or(stderr);
    let text = std::fs::read_to_string(path).map_err(|e| e.to_string())?;
    let mut doc: toml_edit::DocumentMut = text.parse().map_err(|e| format!("{e}"))?;
    let value: toml_edit::Value = toml_string(want).parse().map_err(|e| format!("{e}"))?;
    match doc.get_mut("stderr").and_then(|i| i.as_value_mut()) {
        Some(v) => {
            let decor = v.decor().clone();
            *v = value;
            *v.decor_mut() = decor;
        }
        None => {
            doc.insert("stderr", toml_edit::Item::Value(value));
        }
    }
    // Written whole through a temporary file, so that the meta checks reading every
    // case at the same time never see half a file.
    let dir = path.parent().expect("a case file lives in a folder");
    let mut tmp = tempfile::NamedTempFile::new_in(dir).map_err(|e| e.to_string())?;
    std::io::Write::write_all(&mut tmp, doc.to_string().as_bytes()).map_err(|e| e.to_string())?;
    tmp.persist(path).map_err(|e| e.to_string())?;
    eprintln!("blessed {}", path.display());
    Ok(())
}

/// `s` as a TOML string as the case files write it: a basic string on one line, or a
/// multi-line basic string when it holds line breaks.
fn toml_string(s: &str) -> String {
    let multi = s.contains('\n');
    let mut out = String::from(if multi { "\"\"\"\n" } else { "\"" });
    let mut chars = s.chars().peekable();
    while let Some(c) = chars.next() {
        // In a multi-line string a quote needs its backslash only before another
        // quote or at the very end (where it would run into the closing `"""`).
        let bare_quote_ok = multi && !matches!(chars.peek(), Some('"') | None);
        match c {
            '\\' => out.push_str("\\\\"),
            '"' if bare_quote_ok => out.push('"'),
            '"' => out.push_str("\\\""),
            '\n' if multi => out.push('\n'),
            '\n' => out.push_str("\\n"),
            '\t' => out.push_str("\\t"),
            '\r' => out.push_str("\\r"),
            c if (c as u32) < 0x20 || c as u32 == 0x7f => {
                out.push_str(&format!("\\u{:04X}", c as u32))
            }
            c => out.push(c),
        }
    }
    out.push_str(if multi { "\"\"\"" } else { "\"" });
    out
}

fn usage_trial(path: PathBuf) -> Result<(), Failed> {
    let c: Usage = read_case(&path);
    if c.stderr.is_none() && c.stderr_starts.is_none() {
        return Err("the case gives neither `stderr` nor `stderr_starts`".into());
    }
    let (mut p, stderr) = usage_problems(&c);
    if let Some(want) = &c.stderr
        && let Some(x) = exact_problem(&stderr, want)
    {
        if blessing() && p.is_empty() {
            bless(&path, &stderr)?;
        } else {
            p.push(x);
        }
    }
    if p.is_empty() {
        Ok(())
    } else {
        Err(p.join("\n").into())
    }
}

fn bad_plan_trial(path: PathBuf) -> Result<(), Failed> {
    let c: BadPlan = read_case(&path);
    let (p, one) = bad_plan_problems(&c);
    if blessing()
        && p.is_empty()
        && let Some(stderr) = one
        && exact_problem(&stderr, &c.stderr).is_some()
    {
        bless(&path, &stderr)?;
    }
    if p.is_empty() {
        Ok(())
    } else {
        Err(p.join("\n").into())
    }
}

// ---------------------------------------------------------------------------
// Checks of the catalogues themselves
// ---------------------------------------------------------------------------

fn meta_counts() -> Result<(), Failed> {
    let bad = case_files("bad-plan").len();
    let usage = case_files("usage").len();
    if bad < MIN_BAD_PLANS || usage < MIN_USAGE {
        return Err(format!(
            "bad plans {bad} (at least {MIN_BAD_PLANS}), usage cases {usage} (at least {MIN_USAGE})"
        )
        .into());
    }
    Ok(())
}

fn meta_every_command_has_a_bad_usage_case() -> Result<(), Failed> {
    let cases: Vec<Usage> = case_files("usage")
        .iter()
        .map(|(_, p)| read_case(p))
        .collect();
    for cmd in commands() {
        let words: Vec<&str> = cmd.split(' ').collect();
        if !cases
            .iter()
            .any(|c| c.args.len() >= words.len() && c.args[..words.len()] == words[..])
        {
            return Err(
                format!("no bad-usage case for `{cmd}`: add one to tests/cases/usage").into(),
            );
        }
    }
    Ok(())
}

fn meta_the_checker_catches_a_written_file_and_stray_output() -> Result<(), Failed> {
    // The checker itself: a good run that writes a file fails every rule.
    let c = Usage {
        args: ["schedule", "plan.toml", "--out", "out.txt"]
            .map(String::from)
            .to_vec(),
        exit: 2,
        stderr: Some("error: never".into()),
        stderr_starts: None,
        stderr_has: vec![],
        prepare: vec![],
    };
    let (p, stderr) = usage_problems(&c);
    assert!(
        p.iter().any(|x| x.starts_with("exit code Some(0)")),
        "{p:?}"
    );
    assert!(p.iter().any(|x| x.contains("out.txt: created")), "{p:?}");
    assert!(exact_problem(&stderr, "error: never").is_some());
    let c = Usage {
        args: ["check", "plan.toml"].map(String::from).to_vec(),
        exit: 2,
        stderr: None,
        stderr_starts: Some("error: nowhere".into()),
        stderr_has: vec!["nowhere".into()],
        prepare: vec![],
    };
    let (p, _) = usage_problems(&c);
    assert!(p.iter().any(|x| x.starts_with("stdout not empty")), "{p:?}");
    assert!(
        p.iter().any(|x| x.contains("want one line starting")),
        "{p:?}"
    );
    assert!(p.iter().any(|x| x.contains("lacks \"nowhere\"")), "{p:?}");
    // A bad-plan case that is in fact valid fails too, and one that changes nothing.
    let c = BadPlan {
        runs: vec![["check", "bad.toml"].map(String::from).to_vec()],
        exit: 2,
        stderr: "error: never".into(),
        plan: Some(BASE.into()),
        append: String::new(),
        edit: vec![],
    };
    let (p, _) = bad_plan_problems(&c);
    assert!(p.iter().any(|x| x.contains("changes nothing")), "{p:?}");
    assert!(p.iter().any(|x| x.contains("exit code Some(0)")), "{p:?}");
    assert!(p.iter().any(|x| x.contains("stdout not empty")), "{p:?}");
    Ok(())
}

fn meta_bless_writes_strings_that_read_back() -> Result<(), Failed> {
    for s in [
        "one line with \"quotes\" and \\ backslash",
        "two\nlines ending in a quote\"",
        "\nstarts with a line break and has \"\"\" inside\n",
        "tab\tand \u{7f} and \r",
    ] {
        let doc = format!("stderr = {}\n", toml_string(s));
        let back: toml::Table = toml::from_str(&doc).map_err(|e| format!("{doc}: {e}"))?;
        if back["stderr"].as_str() != Some(s) {
            return Err(format!("{s:?} came back as {:?}", back["stderr"]).into());
        }
    }
    Ok(())
}

fn main() {
    let args = Arguments::from_args();
    let mut trials = Vec::new();
    for (name, path) in case_files("bad-plan") {
        trials.push(Trial::test(format!("bad_plan::{name}"), move || {
            bad_plan_trial(path)
        }));
    }
    for (name, path) in case_files("usage") {
        trials.push(Trial::test(format!("usage::{name}"), move || {
            usage_trial(path)
        }));
    }
    trials.push(Trial::test("meta::case_counts", meta_counts));
    trials.push(Trial::test(
        "meta::every_command_has_a_bad_usage_case",
        meta_every_command_has_a_bad_usage_case,
    ));
    trials.push(Trial::test(
        "meta::the_checker_catches_a_written_file_and_stray_output",
        meta_the_checker_catches_a_written_file_and_stray_output,
    ));
    trials.push(Trial::test(
        "meta::bless_writes_strings_that_read_back",
        meta_bless_writes_strings_that_read_back,
    ));
    libtest_mimic::run(&args, trials).exit();
}
