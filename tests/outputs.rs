//! Writing output files (docs/commands.md section 2): `--out` writes atomically and prints
//! nothing, never overwrites the input, a failed run writes no file, a missing folder
//! fails without output.
//!
//! Every participant here is invented and goes by a pseudonymous code.
//!
//! Nothing lost when a run fails (the tests marked `cfg(unix)`): every writer renames a
//! temporary file and leaves none behind; a failed run, a read-only folder, a temporary
//! file that cannot be made, an output into /proc or a chart that fails midway leave
//! earlier files byte-identical. Those run the real binary in a fresh scratch folder
//! holding a copy of the demo plan (`plan.toml`), the demo log (`log.csv`), a small
//! study (`study.toml`) and two rosters for it; all are invented data.

mod common;

#[cfg(unix)]
use common::hard_edges::*;
#[cfg(unix)]
use common::tree::*;
use common::*;
#[cfg(unix)]
use std::os::unix::fs::PermissionsExt;
#[cfg(unix)]
use std::path::{Path, PathBuf};

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

#[cfg(unix)]
/// The files every fresh folder holds.
const INPUTS: [&str; 5] = [
    "log.csv",
    "plan.toml",
    "roster-no-arms.csv",
    "roster.csv",
    "study.toml",
];

#[cfg(unix)]
/// The sorted listing of a fresh folder with `extra` files added.
fn inputs_and(extra: &[&str]) -> Vec<String> {
    let mut v: Vec<String> = INPUTS.iter().chain(extra).map(|s| s.to_string()).collect();
    v.sort();
    v
}

#[cfg(unix)]
/// Leftover temporary files (`.NAME.PID.tmp`) anywhere under `root`.
fn leftovers(root: &Path) -> Vec<String> {
    snapshot(root)
        .into_keys()
        .filter(|k| {
            let name = k.rsplit('/').next().unwrap_or(k);
            name.ends_with(".tmp") || (name.starts_with('.') && name != ".")
        })
        .collect()
}

#[cfg(unix)]
/// A command that writes files, and the files it replaces.
struct Writer {
    name: &'static str,
    args: &'static [&'static str],
    files: &'static [&'static str],
}

#[cfg(unix)]
fn writers() -> Vec<Writer> {
    vec![
        Writer {
            name: "schedule --out",
            args: &[
                "schedule",
                "plan.toml",
                "--log",
                "log.csv",
                "--out",
                "out.txt",
            ],
            files: &["out.txt"],
        },
        Writer {
            name: "sheets --out",
            args: &[
                "sheets",
                "plan.toml",
                "--log",
                "log.csv",
                "--from",
                "2027-02-01",
                "--to",
                "2027-02-28",
                "--out",
                "out.html",
            ],
            files: &["out.html"],
        },
        Writer {
            name: "sheets --format text --out",
            args: &[
                "sheets",
                "plan.toml",
                "--week",
                "3",
                "--format",
                "text",
                "--out",
                "out.txt",
            ],
            files: &["out.txt"],
        },
        Writer {
            name: "schedule --format csv --out",
            args: &[
                "schedule",
                "plan.toml",
                "--format",
                "csv",
                "--out",
                "out.csv",
            ],
            files: &["out.csv"],
        },
        Writer {
            name: "calendar --out",
            args: &[
                "calendar",
                "plan.toml",
                "--log",
                "log.csv",
                "--out",
                "out.ics",
            ],
            files: &["out.ics"],
        },
        Writer {
            name: "compare --out",
            args: &[
                "compare",
                "plan.toml",
                "--format",
                "markdown",
                "--out",
                "out.md",
            ],
            files: &["out.md"],
        },
        Writer {
            name: "goal --out",
            args: &[
                "goal",
                "plan.toml",
                "--lose-kg",
                "3",
                "--by-week",
                "12",
                "--format",
                "json",
                "--out",
                "out.json",
            ],
            files: &["out.json"],
        },
        Writer {
            name: "fit --out",
            args: &["fit", "plan.toml", "--log", "log.csv", "--out", "out.txt"],
            files: &["out.txt"],
        },
        Writer {
            name: "cohort --out",
            args: &[
                "cohort",
                "study.toml",
                "--roster",
                "roster.csv",
                "--out",
                "out.txt",
            ],
            files: &["out.txt"],
        },
        Writer {
            name: "cohort --format csv --out",
            args: &[
                "cohort",
                "study.toml",
                "--synthetic",
                "12",
                "--format",
                "csv",
                "--out",
                "out.csv",
            ],
            files: &["out.csv"],
        },
        Writer {
            name: "cohort --format json --out",
            args: &[
                "cohort",
                "study.toml",
                "--roster",
                "roster-no-arms.csv",
                "--randomise",
                "--format",
                "json",
                "--out",
                "out.json",
            ],
            files: &["out.json"],
        },
        Writer {
            name: "cohort --chart",
            args: &[
                "cohort",
                "study.toml",
                "--roster",
                "roster.csv",
                "--chart",
                "charts",
            ],
            files: &COHORT_CHARTS,
        },
        Writer {
            name: "schedule --chart",
            args: &["schedule", "plan.toml", "--chart", "charts"],
            files: &SCHEDULE_CHARTS,
        },
        Writer {
            name: "compare --chart",
            args: &["compare", "plan.toml", "--chart", "charts"],
            files: &SCHEDULE_CHARTS,
        },
        Writer {
            name: "fit --chart",
            args: &["fit", "plan.toml", "--log", "log.csv", "--chart", "charts"],
            files: &[FIT_CHART],
        },
        Writer {
            name: "log add",
            args: &[
                "log",
                "add",
                "plan.toml",
                "--log",
                "log.csv",
                "--date",
                "2027-03-24",
                "--weigh-in",
                "103.1",
            ],
            files: &["log.csv"],
        },
    ]
}

#[cfg(unix)]
#[test]
fn every_writer_renames_a_temporary_file_and_leaves_none_behind() {
    for w in writers() {
        let dir = fresh("writer");
        seed(&dir, w.files);
        let before = snapshot(dir.path());
        let r = run(dir.cmd().args(w.args));
        assert_eq!(r.code, Some(0), "{}: {}", w.name, r.stderr);
        if w.args.contains(&"--out") || w.args[0] == "log" {
            assert_eq!(r.stdout, "", "{}: a written output prints nothing", w.name);
        }
        let after = snapshot(dir.path());
        for f in w.files {
            let (
                Some(Node::File {
                    bytes: old,
                    ino: i0,
                    ..
                }),
                Some(Node::File {
                    bytes: new,
                    ino: i1,
                    ..
                }),
            ) = (before.get(*f), after.get(*f))
            else {
                panic!("{}: {f} is not a file before and after", w.name);
            };
            assert_ne!(new, old, "{}: {f} was rewritten", w.name);
            assert_ne!(i0, i1, "{}: {f} is a new file, renamed into place", w.name);
            let keep = std::fs::read(dir.path().join(format!("{f}.keep"))).unwrap();
            assert_eq!(
                &keep, old,
                "{}: {f}: the old file was not written to",
                w.name
            );
            if *f == "log.csv" {
                assert!(
                    new.starts_with(DEMO_LOG.as_bytes()),
                    "{}: rows kept",
                    w.name
                );
            }
        }
        assert_eq!(leftovers(dir.path()), Vec::<String>::new(), "{}", w.name);
        // Only the named files changed (and the folders holding them).
        let changed: Vec<String> = differences(&before, &after)
            .into_iter()
            .filter(|d| {
                !w.files.iter().any(|f| d == &format!("{f}: changed"))
                    && d != ".: changed"
                    && d != "charts: changed"
            })
            .collect();
        assert!(changed.is_empty(), "{}: {changed:?}", w.name);
    }
    // init FILE creates a new file the same way.
    let dir = fresh("writer-init");
    let r = run(dir.cmd().args(["init", "starter.toml"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stdout, "");
    assert_eq!(
        std::fs::read_to_string(dir.path().join("starter.toml")).unwrap(),
        dosewright::plan::starter::STARTER_PLAN
    );
    assert_eq!(dir.listing(), inputs_and(&["starter.toml"]));
}

#[cfg(unix)]
/// A plan that fails validation, a log with one bad row at the end, a study with a
/// dose out of range and a roster with a mass typed without its point.
fn bad_inputs(dir: &Scratch) {
    dir.write(
        "bad.toml",
        DEMO_PLAN.replace("mass_kg = 104.0", "mass_kg = 3000"),
    );
    dir.write(
        "bad.csv",
        format!("{DEMO_LOG}2027-03-24,weigh-in,10400,,,,,,,typed without the point\n"),
    );
    dir.write(
        "bad-study.toml",
        edit(
            STUDY,
            &[("kcal_per_kg_week = 12.0", "kcal_per_kg_week = 1200")],
        ),
    );
    dir.write(
        "bad-roster.csv",
        edit(
            ROSTER,
            &[("R-104,male,47,182,104.0", "R-104,male,47,182,1040")],
        ),
    );
}

#[cfg(unix)]
#[test]
fn a_failed_run_leaves_earlier_outputs_byte_identical() {
    let cases: &[(&str, &[&str], &str)] = &[
        (
            "schedule, bad plan",
            &[
                "schedule", "bad.toml", "--out", "out.txt", "--chart", "charts",
            ],
            "error: bad.toml:10:11: participant.mass_kg: value 3000 is out of range; allowed 30 to 350 kg",
        ),
        (
            "schedule, bad log row",
            &[
                "schedule",
                "plan.toml",
                "--log",
                "bad.csv",
                "--out",
                "out.txt",
                "--chart",
                "charts",
            ],
            "error: bad.csv:44:3: mass_kg: value 10400 is out of range; allowed 30 to 350 kg",
        ),
        (
            "calendar, bad plan",
            &["calendar", "bad.toml", "--out", "out.txt"],
            "error: bad.toml:10:11: participant.mass_kg: value 3000 is out of range; allowed 30 to 350 kg",
        ),
        (
            "calendar, bad log row",
            &[
                "calendar",
                "plan.toml",
                "--log",
                "bad.csv",
                "--out",
                "out.txt",
            ],
            "error: bad.csv:44:3: mass_kg: value 10400 is out of range; allowed 30 to 350 kg",
        ),
        (
            "compare, bad plan",
            &[
                "compare", "bad.toml", "--out", "out.txt", "--chart", "charts",
            ],
            "error: bad.toml:10:11: participant.mass_kg: value 3000 is out of range; allowed 30 to 350 kg",
        ),
        (
            "compare, bad log row",
            &[
                "compare",
                "plan.toml",
                "--log",
                "bad.csv",
                "--out",
                "out.txt",
                "--chart",
                "charts",
            ],
            "error: bad.csv:44:3: mass_kg: value 10400 is out of range; allowed 30 to 350 kg",
        ),
        (
            "goal, bad plan",
            &[
                "goal",
                "bad.toml",
                "--lose-kg",
                "3",
                "--by-week",
                "12",
                "--out",
                "out.txt",
            ],
            "error: bad.toml:10:11: participant.mass_kg: value 3000 is out of range; allowed 30 to 350 kg",
        ),
        (
            "fit, bad log row",
            &[
                "fit",
                "plan.toml",
                "--log",
                "bad.csv",
                "--out",
                "out.txt",
                "--chart",
                "charts",
            ],
            "error: bad.csv:44:3: mass_kg: value 10400 is out of range; allowed 30 to 350 kg",
        ),
        (
            "sheets, bad plan",
            &["sheets", "bad.toml", "--week", "2", "--out", "out.txt"],
            "error: bad.toml:10:11: participant.mass_kg: value 3000 is out of range; allowed 30 to 350 kg",
        ),
        (
            "sheets, bad log row",
            &[
                "sheets",
                "plan.toml",
                "--log",
                "bad.csv",
                "--week",
                "2",
                "--format",
                "text",
                "--out",
                "out.txt",
            ],
            "error: bad.csv:44:3: mass_kg: value 10400 is out of range; allowed 30 to 350 kg",
        ),
        (
            "sheets, a week outside the protocol",
            &["sheets", "plan.toml", "--week", "25", "--out", "out.txt"],
            "error: --week 25: a follow-up week, with no sessions; allowed 1 to 24 (the exercise weeks of plan.toml)",
        ),
        (
            "log add, bad row",
            &[
                "log",
                "add",
                "plan.toml",
                "--log",
                "log.csv",
                "--date",
                "2027-03-24",
                "--session",
                "900",
            ],
            "error: log.csv:44:5: minutes: value 900 is out of range; allowed 0 to 600 min",
        ),
        (
            "log add to a log with a bad row",
            &[
                "log",
                "add",
                "plan.toml",
                "--log",
                "bad.csv",
                "--date",
                "2027-03-25",
                "--weigh-in",
                "103",
            ],
            "error: bad.csv:44:3: mass_kg: value 10400 is out of range; allowed 30 to 350 kg",
        ),
        (
            "cohort, bad study",
            &[
                "cohort",
                "bad-study.toml",
                "--roster",
                "roster.csv",
                "--out",
                "out.txt",
                "--chart",
                "charts",
            ],
            "error: bad-study.toml:25:29: arm[3].dose.kcal_per_kg_week: value 1200 is out of range; allowed 0.5 to 150 kcal/kg/week",
        ),
        (
            "cohort, bad roster row",
            &[
                "cohort",
                "study.toml",
                "--roster",
                "bad-roster.csv",
                "--format",
                "csv",
                "--out",
                "out.txt",
                "--chart",
                "charts",
            ],
            "error: bad-roster.csv:5: mass_kg: value 1040 is out of range; allowed 30 to 350 kg",
        ),
        (
            "cohort, a checkpoint outside the study",
            &[
                "cohort",
                "study.toml",
                "--synthetic",
                "8",
                "--at-week",
                "40",
                "--out",
                "out.txt",
                "--chart",
                "charts",
            ],
            "error: --at-week 40: outside the study's weeks; allowed 1 to 12 (protocol and follow-up)",
        ),
        (
            "init over an earlier file",
            &["init", "out.txt"],
            "error: out.txt: the file exists; refusing to overwrite it (choose another name or remove it first)",
        ),
    ];
    for (name, args, message) in cases {
        let dir = fresh("failed");
        bad_inputs(&dir);
        seed(&dir, &["out.txt"]);
        seed(&dir, &SCHEDULE_CHARTS);
        seed(&dir, &[FIT_CHART]);
        seed(&dir, &COHORT_CHARTS);
        let before = snapshot(dir.path());
        let r = run(dir.cmd().args(*args));
        assert_eq!(r.code, Some(2), "{name}: {}", r.stderr);
        assert_eq!(r.stdout, "", "{name}");
        assert_eq!(r.stderr, format!("{message}\n"), "{name}");
        assert_eq!(
            differences(&before, &snapshot(dir.path())),
            Vec::<String>::new(),
            "{name}: nothing changed"
        );
    }
}

#[cfg(unix)]
/// Gives a folder back its write permission when dropped, so the scratch folder can
/// be removed whatever happens.
struct Writable(PathBuf);

#[cfg(unix)]
impl Drop for Writable {
    fn drop(&mut self) {
        let _ = std::fs::set_permissions(&self.0, std::fs::Permissions::from_mode(0o755));
    }
}

#[cfg(unix)]
/// How to run the binary as a user that the folder's permissions bind: the current
/// user when it cannot write to a read-only folder, else (root) `setpriv` to
/// nobody; None, with a printed note, when neither works.
fn unprivileged() -> Option<Vec<String>> {
    let bin = env!("CARGO_BIN_EXE_dosewright").to_string();
    let probe = Scratch::new("probe");
    std::fs::set_permissions(probe.path(), std::fs::Permissions::from_mode(0o555)).unwrap();
    let _w = Writable(probe.path().to_path_buf());
    let f = probe.path().join("probe");
    if std::fs::File::create(&f).is_err() {
        return Some(vec![bin]);
    }
    let _ = std::fs::remove_file(&f);
    let setpriv: Vec<String> = [
        "setpriv",
        "--reuid=65534",
        "--regid=65534",
        "--clear-groups",
    ]
    .iter()
    .map(|s| s.to_string())
    .chain(std::iter::once(bin))
    .collect();
    let works = std::process::Command::new(&setpriv[0])
        .args(&setpriv[1..])
        .arg("--version")
        .output()
        .map(|o| o.status.success())
        .unwrap_or(false);
    if works {
        Some(setpriv)
    } else {
        eprintln!(
            "skipped: a_read_only_folder_leaves_earlier_files_byte_identical: this user \
             ignores folder permissions (root) and `setpriv` to nobody (util-linux) does \
             not run the binary"
        );
        None
    }
}

#[cfg(unix)]
#[test]
fn a_read_only_folder_leaves_earlier_files_byte_identical() {
    let Some(runner) = unprivileged() else {
        return;
    };
    // (name, args, the folder made read-only, the file the message names)
    let cases: &[(&str, &[&str], &str, &str)] = &[
        (
            "schedule --out",
            &["schedule", "plan.toml", "--out", "out/out.txt"],
            "out",
            "out/out.txt",
        ),
        (
            "calendar --out",
            &["calendar", "plan.toml", "--out", "out/out.txt"],
            "out",
            "out/out.txt",
        ),
        (
            "compare --out",
            &[
                "compare",
                "plan.toml",
                "--format",
                "csv",
                "--out",
                "out/out.txt",
            ],
            "out",
            "out/out.txt",
        ),
        (
            "goal --out",
            &[
                "goal",
                "plan.toml",
                "--lose-kg",
                "3",
                "--by-week",
                "12",
                "--out",
                "out/out.txt",
            ],
            "out",
            "out/out.txt",
        ),
        (
            "fit --out",
            &[
                "fit",
                "plan.toml",
                "--log",
                "log.csv",
                "--out",
                "out/out.txt",
            ],
            "out",
            "out/out.txt",
        ),
        (
            "schedule --chart",
            &["schedule", "plan.toml", "--chart", "charts"],
            "charts",
            "charts/DEMO-017-mass.svg",
        ),
        (
            "compare --chart",
            &["compare", "plan.toml", "--chart", "charts"],
            "charts",
            "charts/DEMO-017-mass.svg",
        ),
        (
            "fit --chart",
            &["fit", "plan.toml", "--log", "log.csv", "--chart", "charts"],
            "charts",
            "charts/DEMO-017-fit.svg",
        ),
        (
            "cohort --out",
            &[
                "cohort",
                "study.toml",
                "--roster",
                "roster.csv",
                "--out",
                "out/out.txt",
            ],
            "out",
            "out/out.txt",
        ),
        (
            "cohort --chart",
            &[
                "cohort",
                "study.toml",
                "--synthetic",
                "6",
                "--chart",
                "charts",
            ],
            "charts",
            COHORT_CHARTS[0],
        ),
        (
            "init FILE",
            &["init", "out/new.toml"],
            "out",
            "out/new.toml",
        ),
        (
            "log add",
            &[
                "log",
                "add",
                "plan.toml",
                "--log",
                "out/log.csv",
                "--date",
                "2027-03-24",
                "--weigh-in",
                "103.1",
            ],
            "out",
            "out/log.csv",
        ),
    ];
    for (name, args, locked, named) in cases {
        let dir = fresh("read-only");
        seed(&dir, &["out/out.txt"]);
        seed(&dir, &SCHEDULE_CHARTS);
        seed(&dir, &[FIT_CHART]);
        seed(&dir, &COHORT_CHARTS);
        std::fs::write(dir.path().join("out/log.csv"), DEMO_LOG).unwrap();
        // Every file and folder may be written by anyone: only the locked folder
        // stands in the way.
        for (path, node) in snapshot(dir.path()) {
            let mode = if matches!(node, Node::File { .. }) {
                0o666
            } else {
                0o777
            };
            std::fs::set_permissions(dir.path().join(path), std::fs::Permissions::from_mode(mode))
                .unwrap();
        }
        let lock = dir.path().join(locked);
        std::fs::set_permissions(&lock, std::fs::Permissions::from_mode(0o555)).unwrap();
        let _w = Writable(lock);
        let before = snapshot(dir.path());
        let mut cmd = assert_cmd::Command::new(&runner[0]);
        cmd.args(&runner[1..])
            .args(*args)
            .current_dir(dir.path())
            .env("NO_COLOR", "1");
        let r = run(&mut cmd);
        assert!(
            matches!(r.code, Some(c) if c != 0),
            "{name}: exit {:?}",
            r.code
        );
        assert_eq!(r.stdout, "", "{name}");
        assert!(
            r.stderr
                .starts_with(&format!("error: {named}: cannot write: ")),
            "{name}: {}",
            r.stderr
        );
        assert_eq!(
            differences(&before, &snapshot(dir.path())),
            Vec::<String>::new(),
            "{name}: nothing changed"
        );
    }
}

#[cfg(unix)]
/// The longest file name the scratch folder's file system takes.
const NAME_MAX: usize = 255;

#[cfg(unix)]
#[test]
fn a_temporary_file_that_cannot_be_made_leaves_the_earlier_file_alone() {
    // A name that fits, whose temporary name (`.NAME.PID.tmp`) does not: the write
    // passes every check and fails making the temporary file.
    let long = format!("{}.txt", "o".repeat(NAME_MAX - 4 - 1));
    assert!(long.len() < NAME_MAX && long.len() + 7 > NAME_MAX);
    let probe = Scratch::new("name-max");
    if std::fs::write(probe.path().join(&long), OLD).is_err() {
        eprintln!(
            "skipped: the temp folder's file system takes no {}-byte names",
            long.len()
        );
        return;
    }
    for args in [
        &["schedule", "plan.toml", "--out"][..],
        &["calendar", "plan.toml", "--out"][..],
        &["compare", "plan.toml", "--format", "json", "--out"][..],
        &[
            "goal",
            "plan.toml",
            "--lose-kg",
            "3",
            "--by-week",
            "12",
            "--out",
        ][..],
        &["fit", "plan.toml", "--log", "log.csv", "--out"][..],
        &["cohort", "study.toml", "--roster", "roster.csv", "--out"][..],
        &[
            "cohort",
            "study.toml",
            "--synthetic",
            "4",
            "--format",
            "json",
            "--out",
        ][..],
    ] {
        let dir = fresh("long-name");
        dir.write(&long, OLD);
        let before = snapshot(dir.path());
        let r = run(dir.cmd().args(args).arg(&long));
        assert_eq!(r.code, Some(1), "{args:?}: {}", r.stderr);
        assert_eq!(r.stdout, "");
        assert!(
            r.stderr
                .starts_with(&format!("error: {long}: cannot write: ")),
            "{}",
            r.stderr
        );
        let after = snapshot(dir.path());
        assert_eq!(
            before.get(&long),
            after.get(&long),
            "{args:?}: the earlier file"
        );
        assert_eq!(dir.listing(), inputs_and(&[long.as_str()]));
    }

    // The same for the log that `log add` appends to.
    let dir = fresh("long-log");
    dir.write(&long, DEMO_LOG);
    let before = snapshot(dir.path());
    let r = run(dir.cmd().args([
        "log",
        "add",
        "plan.toml",
        "--log",
        &long,
        "--date",
        "2027-03-24",
        "--weigh-in",
        "103",
    ]));
    assert_eq!(r.code, Some(1), "{}", r.stderr);
    assert_eq!(before.get(&long), snapshot(dir.path()).get(&long));
    assert_eq!(dir.listing(), inputs_and(&[long.as_str()]));
}

#[cfg(unix)]
#[test]
fn an_output_into_proc_fails_and_leaves_no_file() {
    // Into /proc no file can be made at all: no partial file appears.
    if !Path::new("/proc/self").is_dir() {
        eprintln!("skipped: no /proc here");
        return;
    }
    let target = format!("/proc/dosewright-hard-edges-{}.txt", std::process::id());
    let dir = fresh("proc");
    let r = run(dir.cmd().args(["schedule", "plan.toml", "--out", &target]));
    assert_eq!(r.code, Some(1), "{}", r.stderr);
    assert_eq!(r.stdout, "");
    assert!(
        r.stderr
            .starts_with(&format!("error: {target}: cannot write: ")),
        "{}",
        r.stderr
    );
    assert!(!Path::new(&target).exists());
    assert_eq!(dir.listing(), inputs_and(&[]));
}

#[cfg(unix)]
#[test]
fn a_chart_that_fails_midway_leaves_every_chart_as_it_was() {
    // A participant code this long makes `CODE-mass.svg` writable while the
    // temporary name of `CODE-composition.svg` is too long: the run fails after the
    // first chart is staged. The set is written all or nothing, so every chart file
    // keeps its earlier bytes, the first one included.
    let code = "Q".repeat(NAME_MAX - 22);
    let dir = fresh("chart-midway");
    dir.write(
        "plan.toml",
        DEMO_PLAN.replace("id = \"DEMO-017\"", &format!("id = \"{code}\"")),
    );
    let names: Vec<String> = ["mass", "composition", "minutes", "energy"]
        .iter()
        .map(|n| format!("charts/{code}-{n}.svg"))
        .collect();
    let refs: Vec<&str> = names.iter().map(String::as_str).collect();
    seed(&dir, &refs);
    dir.write("out.txt", OLD);
    let before = snapshot(dir.path());
    let r = run(dir.cmd().args([
        "schedule",
        "plan.toml",
        "--chart",
        "charts",
        "--out",
        "out.txt",
    ]));
    assert_eq!(r.code, Some(1), "{}", r.stderr);
    assert_eq!(r.stdout, "");
    assert!(
        r.stderr
            .starts_with(&format!("error: {}: cannot write: ", names[1])),
        "{}",
        r.stderr
    );
    let after = snapshot(dir.path());
    for f in names.iter().chain(std::iter::once(&"out.txt".to_string())) {
        assert_eq!(before.get(f), after.get(f), "{f} is untouched");
    }
    assert_eq!(leftovers(dir.path()), Vec::<String>::new());
}
