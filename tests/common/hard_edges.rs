//! The scratch folder of the output, determinism and cautions tests: the demo plan and
//! log, a small three-arm study and its rosters, the outputs each command writes, and
//! the display options (`--units`, `--energy`) read from `--help`.
#![allow(dead_code, unused_imports)] // not every test file uses every helper

use super::tree::*;
use super::*;
use std::collections::{BTreeMap, BTreeSet};
use std::os::unix::fs::PermissionsExt;
use std::path::{Path, PathBuf};

pub const DEMO_PLAN: &str = include_str!("../../plans/demo.toml");
pub const DEMO_LOG: &str = include_str!("../../demo-data/demo-017-log.csv");

/// The study of the `cohort` cases (`study.toml`): three arms (a control with no
/// dose and two energy doses), 8 weeks and 4 of follow-up, two scenarios, and a
/// synthetic population. Small, so that a cohort runs in milliseconds.
pub const STUDY: &str = concat!(
    include_str!("../fixtures/study-without-population.toml"),
    include_str!("../fixtures/study-synthetic.toml")
);

/// The file-name stem of the study's charts (its name, spaces as `_`).
pub const COHORT_CHARTS: [&str; 3] = [
    "charts/hard_edges_study-mass-change.svg",
    "charts/hard_edges_study-minutes.svg",
    "charts/hard_edges_study-power.svg",
];

/// A roster with the screening answers and an arm for everyone (`roster.csv`):
/// three screening results (no clearance needed as a beginner, known disease with
/// clearance on file, exercising regularly).
pub const ROSTER: &str = include_str!("../fixtures/roster.csv");

/// The same participants with no arm column (`roster-no-arms.csv`).
pub const ROSTER_NO_ARMS: &str = include_str!("../fixtures/roster-no-arms.csv");

/// A fresh folder with the demo plan and log, the study and its rosters.
pub fn fresh(tag: &str) -> Scratch {
    let dir = Scratch::new(tag);
    dir.write("plan.toml", DEMO_PLAN);
    dir.write("log.csv", DEMO_LOG);
    dir.write("study.toml", STUDY);
    dir.write("roster.csv", ROSTER);
    dir.write("roster-no-arms.csv", ROSTER_NO_ARMS);
    dir
}

/// The output kind of a command's human-facing output in other display units: every
/// command whose help lists `--units` or `--energy` has it.
pub const DISPLAY_UNITS: &str = "display units";

/// What each command can produce: `(command, format)` for each `--format` value, or
/// `(command, "")` without one, `(command, "chart")` where `--chart` exists, and
/// `(command, DISPLAY_UNITS)` where `--units` or `--energy` exists.
pub fn output_kinds() -> BTreeSet<(String, String)> {
    let mut out = BTreeSet::new();
    for cmd in commands() {
        let mut args: Vec<&str> = cmd.split(' ').collect();
        args.push("-h");
        let help = run(dosewright().args(&args)).stdout;
        let formats: Vec<String> = help
            .lines()
            .find(|l| l.trim_start().starts_with("--format"))
            .and_then(|l| l.split("[possible values: ").nth(1))
            .map(|v| {
                v.trim_end_matches(']')
                    .split(", ")
                    .map(str::to_string)
                    .collect()
            })
            .unwrap_or_default();
        if formats.is_empty() {
            out.insert((cmd.clone(), String::new()));
        }
        for f in formats {
            out.insert((cmd.clone(), f));
        }
        if help.lines().any(|l| l.trim_start().starts_with("--chart")) {
            out.insert((cmd.clone(), "chart".to_string()));
        }
        if display_options(&help).next().is_some() {
            out.insert((cmd.clone(), DISPLAY_UNITS.to_string()));
        }
    }
    out
}

/// The display-unit options a command's `--help` lists, with the value furthest
/// from the default: `--units us`, `--energy kj`.
pub fn display_options(help: &str) -> impl Iterator<Item = [&'static str; 2]> + '_ {
    [["--units", "us"], ["--energy", "kj"]]
        .into_iter()
        .filter(|[o, _]| {
            help.lines()
                .any(|l| l.trim_start().starts_with(&format!("{o} <")))
        })
}

/// A run of kind `(command, DISPLAY_UNITS)` must pass every display-unit option the
/// command has, at its non-default value; returns what is missing.
pub fn display_units_missing(cmd: &str, args: &[&str]) -> Vec<String> {
    let mut help_args: Vec<&str> = cmd.split(' ').collect();
    help_args.push("-h");
    let help = run(dosewright().args(&help_args)).stdout;
    display_options(&help)
        .filter(|pair| !args.windows(2).any(|w| w == pair))
        .map(|[o, v]| format!("{o} {v}"))
        .collect()
}

pub const OLD: &str = "an earlier output, to be kept or replaced whole\n";

/// The chart files of the demo participant.
pub const SCHEDULE_CHARTS: [&str; 4] = [
    "charts/DEMO-017-mass.svg",
    "charts/DEMO-017-composition.svg",
    "charts/DEMO-017-minutes.svg",
    "charts/DEMO-017-energy.svg",
];
pub const FIT_CHART: &str = "charts/DEMO-017-fit.svg";

/// Put `OLD` in each file (the log keeps its rows) and a hard link `NAME.keep` to
/// it: a rename leaves the link with the old bytes, a write in place would not.
pub fn seed(dir: &Scratch, files: &[&str]) {
    for f in files {
        let p = dir.path().join(f);
        std::fs::create_dir_all(p.parent().unwrap()).unwrap();
        if *f != "log.csv" {
            std::fs::write(&p, OLD).unwrap();
        }
        std::fs::hard_link(&p, dir.path().join(format!("{f}.keep"))).unwrap();
    }
}

/// One determinism run: its name, the `(command, format)` kinds it covers, its
/// arguments.
pub type OutputRun = (
    &'static str,
    &'static [(&'static str, &'static str)],
    Vec<&'static str>,
);

/// Every output in every format; charts ride along with the table runs.
pub fn outputs() -> Vec<OutputRun> {
    let day = |format: &'static str| -> Vec<&'static str> {
        vec![
            "register",
            "day",
            PILOT_REGISTER,
            "--date",
            "2027-03-22",
            "--format",
            format,
        ]
    };
    let listing = |action: &'static str, format: &'static str| -> Vec<&'static str> {
        let mut v = vec!["register", action, PILOT_REGISTER, "--format", format];
        if action == "audit" {
            v.extend(["--participant", "DEMO-017"]);
        }
        v
    };
    vec![
        (
            "register day table",
            &[("register day", "table")],
            day("table"),
        ),
        ("register day csv", &[("register day", "csv")], day("csv")),
        (
            "register day html",
            &[("register day", "html")],
            day("html"),
        ),
        (
            "register list table",
            &[("register list", "table")],
            listing("list", "table"),
        ),
        (
            "register list csv",
            &[("register list", "csv")],
            listing("list", "csv"),
        ),
        (
            "register participants table",
            &[("register participants", "table")],
            listing("participants", "table"),
        ),
        (
            "register participants csv",
            &[("register participants", "csv")],
            listing("participants", "csv"),
        ),
        (
            "register audit table",
            &[("register audit", "table")],
            listing("audit", "table"),
        ),
        (
            "register audit csv",
            &[("register audit", "csv")],
            listing("audit", "csv"),
        ),
        (
            "register check",
            &[("register check", "")],
            vec!["register", "check", PILOT_REGISTER],
        ),
        (
            "register export",
            &[("register export", "")],
            vec!["register", "export", PILOT_REGISTER, "--to", "export"],
        ),
        (
            "register backup",
            &[("register backup", "")],
            vec!["register", "backup", PILOT_REGISTER, "copy.register"],
        ),
        (
            "pilot markdown + chart",
            &[("pilot", "markdown"), ("pilot", "chart")],
            vec![
                "pilot",
                PILOT_REGISTER,
                "--chart",
                "pilot.svg",
                "--scenarios",
                "next.toml",
            ],
        ),
        (
            "pilot json",
            &[("pilot", "json")],
            vec!["pilot", PILOT_REGISTER, "--format", "json"],
        ),
        (
            "schedule table + charts",
            &[("schedule", "table"), ("schedule", "chart")],
            vec![
                "schedule",
                "plan.toml",
                "--log",
                "log.csv",
                "--chart",
                "charts",
            ],
        ),
        (
            "schedule csv",
            &[("schedule", "csv")],
            vec!["schedule", "plan.toml", "--format", "csv"],
        ),
        (
            "schedule json",
            &[("schedule", "json")],
            vec![
                "schedule",
                "plan.toml",
                "--log",
                "log.csv",
                "--format",
                "json",
            ],
        ),
        (
            "schedule json --out",
            &[],
            vec![
                "schedule",
                "plan.toml",
                "--format",
                "json",
                "--out",
                "s.json",
            ],
        ),
        (
            "calendar",
            &[("calendar", "")],
            vec![
                "calendar",
                "plan.toml",
                "--log",
                "log.csv",
                // DTSTAMP is the clock's time of writing unless fixed.
                "--stamp",
                "2027-01-05T10:00:00Z",
                "--out",
                "cal.ics",
            ],
        ),
        (
            "calendar of a part, another scenario and stamp",
            &[],
            vec![
                "calendar",
                "plan.toml",
                "--scenario",
                "eats back 40%",
                "--from",
                "2027-02-01",
                "--to",
                "2027-03-01",
                "--stamp",
                "2027-01-05T10:00:00+02:00",
                "--out",
                "part.ics",
            ],
        ),
        (
            "sheets html",
            &[("sheets", "html")],
            vec![
                "sheets",
                "plan.toml",
                "--log",
                "log.csv",
                "--from",
                "2027-01-11",
                "--to",
                "2027-06-27",
                "--out",
                "s.html",
            ],
        ),
        (
            "sheets html letter",
            &[],
            vec![
                "sheets",
                "plan.toml",
                "--week",
                "20",
                "--paper",
                "letter",
                "--out",
                "s.html",
            ],
        ),
        (
            "sheets text",
            &[("sheets", "text")],
            vec![
                "sheets",
                "plan.toml",
                "--log",
                "log.csv",
                "--week",
                "11",
                "--format",
                "text",
            ],
        ),
        (
            "compare table + charts",
            &[("compare", "table"), ("compare", "chart")],
            vec![
                "compare",
                "plan.toml",
                "--doses",
                "6,12",
                "--chart",
                "charts",
            ],
        ),
        (
            "compare csv",
            &[("compare", "csv")],
            vec!["compare", "plan.toml", "--format", "csv", "--doses", "6,12"],
        ),
        (
            "compare json",
            &[("compare", "json")],
            vec![
                "compare",
                "plan.toml",
                "--log",
                "log.csv",
                "--format",
                "json",
            ],
        ),
        (
            "compare markdown",
            &[("compare", "markdown")],
            vec![
                "compare",
                "plan.toml",
                "--format",
                "markdown",
                "--add-scenario",
                "x:intake_fraction=0.7",
            ],
        ),
        (
            "goal table",
            &[("goal", "table")],
            vec!["goal", "plan.toml", "--lose-kg", "3", "--by-week", "12"],
        ),
        (
            "goal json",
            &[("goal", "json")],
            vec![
                "goal",
                "plan.toml",
                "--lose-percent",
                "3",
                "--by-week",
                "20",
                "--log",
                "log.csv",
                "--format",
                "json",
            ],
        ),
        (
            "fit table + chart",
            &[("fit", "table"), ("fit", "chart")],
            vec!["fit", "plan.toml", "--log", "log.csv", "--chart", "charts"],
        ),
        (
            "fit json",
            &[("fit", "json")],
            vec![
                "fit",
                "plan.toml",
                "--log",
                "log.csv",
                "--parameter",
                "activity_fraction",
                "--format",
                "json",
            ],
        ),
        (
            "cohort table + charts",
            &[("cohort", "table"), ("cohort", "chart")],
            vec![
                "cohort",
                "study.toml",
                "--roster",
                "roster.csv",
                "--at-week",
                "4",
                "--chart",
                "charts",
            ],
        ),
        (
            "cohort csv",
            &[("cohort", "csv")],
            vec![
                "cohort",
                "study.toml",
                "--roster",
                "roster-no-arms.csv",
                "--all-arms",
                "--format",
                "csv",
            ],
        ),
        (
            "cohort json",
            &[("cohort", "json")],
            vec![
                "cohort",
                "study.toml",
                "--synthetic",
                "24",
                "--format",
                "json",
            ],
        ),
        (
            "cohort json, randomised roster, dopri5, --out",
            &[],
            vec![
                "cohort",
                "study.toml",
                "--roster",
                "roster-no-arms.csv",
                "--randomise",
                "--seed",
                "7",
                "--integrator",
                "dopri5",
                "--format",
                "json",
                "--out",
                "c.json",
            ],
        ),
        (
            "cohort table + charts, 1 thread",
            &[],
            vec![
                "cohort",
                "study.toml",
                "--synthetic",
                "24",
                "--all-arms",
                "--threads",
                "1",
                "--chart",
                "charts",
            ],
        ),
        (
            "cohort table + charts, 2 threads",
            &[],
            vec![
                "cohort",
                "study.toml",
                "--synthetic",
                "24",
                "--all-arms",
                "--threads",
                "2",
                "--chart",
                "charts",
            ],
        ),
        (
            "cohort csv, 2 threads",
            &[],
            vec![
                "cohort",
                "study.toml",
                "--synthetic",
                "24",
                "--threads",
                "2",
                "--format",
                "csv",
            ],
        ),
        (
            "cohort-merge table + charts",
            &[("cohort-merge", "table"), ("cohort-merge", "chart")],
            vec!["cohort-merge", "s2.json", "s1.json", "--chart", "charts"],
        ),
        (
            "cohort-merge json",
            &[("cohort-merge", "json")],
            vec!["cohort-merge", "s1.json", "s2.json", "--format", "json"],
        ),
        (
            "cohort-merge csv",
            &[("cohort-merge", "csv")],
            vec!["cohort-merge", "s1.json", "s2.json", "--format", "csv"],
        ),
        (
            "cohort-merge table in US units and kJ",
            &[("cohort-merge", DISPLAY_UNITS)],
            vec![
                "cohort-merge",
                "s1.json",
                "s2.json",
                "--units",
                "us",
                "--energy",
                "kj",
            ],
        ),
        ("check", &[("check", "")], vec!["check", "plan.toml"]),
        ("activities", &[("activities", "")], vec!["activities"]),
        (
            "schedule table + charts in US units and kJ",
            &[("schedule", DISPLAY_UNITS)],
            vec![
                "schedule",
                "plan.toml",
                "--log",
                "log.csv",
                "--chart",
                "charts",
                "--units",
                "us",
                "--energy",
                "kj",
            ],
        ),
        (
            "compare table + charts in US units and kJ",
            &[("compare", DISPLAY_UNITS)],
            vec![
                "compare",
                "plan.toml",
                "--doses",
                "6,12",
                "--chart",
                "charts",
                "--units",
                "us",
                "--energy",
                "kj",
            ],
        ),
        (
            "compare markdown in kJ",
            &[],
            vec![
                "compare",
                "plan.toml",
                "--format",
                "markdown",
                "--energy",
                "kj",
            ],
        ),
        (
            "goal table in US units and kJ",
            &[("goal", DISPLAY_UNITS)],
            vec![
                "goal",
                "plan.toml",
                "--lose-kg",
                "3",
                "--by-week",
                "12",
                "--units",
                "us",
                "--energy",
                "kj",
            ],
        ),
        (
            "fit table + chart in US units and kJ",
            &[("fit", DISPLAY_UNITS)],
            vec![
                "fit",
                "plan.toml",
                "--log",
                "log.csv",
                "--chart",
                "charts",
                "--units",
                "us",
                "--energy",
                "kj",
            ],
        ),
        (
            "cohort table + charts in US units and kJ",
            &[("cohort", DISPLAY_UNITS)],
            vec![
                "cohort",
                "study.toml",
                "--synthetic",
                "12",
                "--chart",
                "charts",
                "--units",
                "us",
                "--energy",
                "kj",
            ],
        ),
        (
            "check in US units and kJ",
            &[("check", DISPLAY_UNITS)],
            vec!["check", "plan.toml", "--units", "us", "--energy", "kj"],
        ),
        (
            "sheets in US units and kJ",
            &[("sheets", DISPLAY_UNITS)],
            vec![
                "sheets",
                "plan.toml",
                "--week",
                "2",
                "--out",
                "s.html",
                "--units",
                "us",
                "--energy",
                "kj",
            ],
        ),
        (
            "calendar in US units and kJ",
            &[("calendar", DISPLAY_UNITS)],
            vec![
                "calendar",
                "plan.toml",
                "--stamp",
                "2027-01-05T10:00:00Z",
                "--out",
                "cal.ics",
                "--units",
                "us",
                "--energy",
                "kj",
            ],
        ),
        (
            "activities in US units",
            &[("activities", DISPLAY_UNITS)],
            vec!["activities", "walking", "--units", "us"],
        ),
        (
            "activities search",
            &[],
            vec!["activities", "walking", "--met-min", "3"],
        ),
        ("init", &[("init", "")], vec!["init"]),
        ("init FILE", &[], vec!["init", "new.toml"]),
        (
            "log add",
            &[("log add", "")],
            vec![
                "log",
                "add",
                "plan.toml",
                "--log",
                "log.csv",
                "--date",
                "2027-03-24",
                "--session",
                "40",
                "--rpe",
                "12",
            ],
        ),
        (
            "log add in pounds",
            &[("log add", DISPLAY_UNITS)],
            vec![
                "log",
                "add",
                "plan.toml",
                "--log",
                "log.csv",
                "--date",
                "2027-03-24",
                "--units",
                "us",
                "--weigh-in",
                "228",
            ],
        ),
    ]
}

/// Everything a run leaves: exit code, stdout, stderr, and every file's bytes.
pub type Outcome = (Option<i32>, String, String, BTreeMap<String, Vec<u8>>);

/// The register the `pilot` runs read: made in the run's folder before the run.
pub const PILOT_REGISTER: &str = "pilot.register";

/// A register with the demo plan's participant enrolled, two DXA visits, RMR and
/// DLW TEE, and the demo log's sessions, all stamped at a fixed time.
pub fn pilot_register(dir: &Path) {
    pilot_register_with(dir, DEMO_PLAN);
}

/// [`pilot_register`] with the participant's plan given (the same participant code
/// as the demo's, so the demo log fits).
pub fn pilot_register_with(dir: &Path, plan_text: &str) {
    use dosewright::register::{Enrolment, SqliteStore, Stamp, Store};
    let stamp = Stamp::new(
        "desk",
        chrono::DateTime::parse_from_rfc3339("2027-01-01T08:00:00Z")
            .unwrap()
            .with_timezone(&chrono::Utc),
    )
    .unwrap();
    let mut store = SqliteStore::create(&dir.join(PILOT_REGISTER)).unwrap();
    let p = store
        .enrol(
            &Enrolment {
                plan_name: "plan.toml".into(),
                plan_text: plan_text.to_string(),
                arm: Some("exercise".into()),
            },
            &stamp,
        )
        .unwrap();
    store
        .import_log(&p.code, "log.csv", DEMO_LOG, &stamp)
        .unwrap();
    let plan = p.plan().unwrap();
    let s = &plan.participant.subject;
    let start = plan.protocol.start;
    let end = start + chrono::Days::new(56);
    let fat = s.mass_kg * s.body_fat_percent.unwrap_or(35.0) / 100.0;
    let csv = format!(
        "participant,kind,date,last_date,fat_kg,fat_free_kg,kcal_per_day,method\n\
         {c},composition,{start},,{f0:.1},{l0:.1},,DXA\n\
         {c},rmr,{start},,,,1600,\n\
         {c},composition,{end},,{f1:.1},{l0:.1},,DXA\n\
         {c},rmr,{end},,,,1580,\n",
        c = p.code,
        f0 = fat,
        f1 = fat - 1.2,
        l0 = s.mass_kg - fat,
    );
    let rows = dosewright::pilot::import::parse_measurements("m.csv", &csv).unwrap();
    store.import_measurements(&rows, &stamp).unwrap();
}

pub fn outcome(args: &[&str], env: &[(&str, &str)]) -> Outcome {
    let dir = fresh("determinism");
    if matches!(args.first(), Some(&"pilot" | &"register")) {
        pilot_register(dir.path());
    }
    if args.first() == Some(&"cohort-merge") {
        // Two shards of a synthetic cohort in every arm with two draws.
        for k in ["1", "2"] {
            let r = run(dir.cmd().args([
                "cohort",
                "study.toml",
                "--synthetic",
                "24",
                "--all-arms",
                "--draws",
                "2",
                "--shard",
                &format!("{k}/2"),
                "--out",
                &format!("s{k}.json"),
            ]));
            assert_eq!(r.code, Some(0), "shard {k}: {}", r.stderr);
        }
    }
    let mut cmd = dir.cmd();
    cmd.env_remove("LC_ALL").env_remove("LANG").env_remove("TZ");
    for (k, v) in env {
        cmd.env(k, v);
    }
    let r = run(cmd.args(args));
    // A register's write-ahead log and its index (`NAME-wal`, `NAME-shm`) stay
    // beside it between commands (docs/register.md, "Speed"); they are SQLite's
    // working files, not outputs, and the log's header holds random salts by
    // SQLite's design. The register's rows are compared through the outputs.
    let files = snapshot(dir.path())
        .into_iter()
        .filter(|(k, _)| !(k.ends_with("-wal") || k.ends_with("-shm")))
        .filter_map(|(k, n)| match n {
            Node::File { bytes, .. } => Some((k, bytes)),
            _ => None,
        })
        .collect();
    (r.code, r.stdout, r.stderr, files)
}
