//! The one reader and the one writer, driven through the real binary: every input
//! (plan, log, study, roster) refused at once when it is a device, a pipe, a folder,
//! too large or not UTF-8, with one message per fault whatever the file holds; every
//! output target checked before any work, `-` as standard output, symlinks written
//! through, a read-only log refused, temporary files never world-readable and never
//! left behind, charts written all or nothing.

mod common;

use common::{BASE, dosewright, manifest_dir};
use std::os::unix::fs::{FileTypeExt, PermissionsExt};
use std::path::{Path, PathBuf};
use std::process::Stdio;
use std::time::{Duration, Instant};
use tempfile::TempDir;

/// The size cap of the one reader, bytes (16 MiB; the message states it).
const CAP: u64 = 16 * 1024 * 1024;

/// A scratch folder holding the base plan as `plan.toml`.
fn folder() -> TempDir {
    let dir = tempfile::tempdir().expect("a scratch folder");
    std::fs::write(dir.path().join("plan.toml"), BASE).expect("write the plan");
    dir
}

/// The binary, run in `dir`, stopped if it takes more than 60 s (a pipe read by
/// mistake would otherwise block for ever).
fn cmd(dir: &Path) -> assert_cmd::Command {
    let mut c = dosewright();
    c.current_dir(dir).timeout(Duration::from_secs(60));
    c
}

/// Exit code, standard output and standard error of a run.
fn run(c: &mut assert_cmd::Command) -> (Option<i32>, String, String) {
    let out = c.output().expect("the binary runs");
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// The names in `dir`, sorted.
fn listing(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .expect("list the folder")
        .map(|e| {
            e.expect("an entry")
                .file_name()
                .to_string_lossy()
                .into_owned()
        })
        .collect();
    v.sort();
    v
}

/// Temporary files (hidden or `.tmp`) anywhere under `dir`.
fn leftovers(dir: &Path) -> Vec<PathBuf> {
    let mut found = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).expect("list a folder") {
            let p = e.expect("an entry").path();
            let name = p.file_name().unwrap().to_string_lossy().into_owned();
            if name.starts_with('.') || name.ends_with(".tmp") {
                found.push(p.clone());
            }
            if p.is_dir() && !p.is_symlink() {
                stack.push(p);
            }
        }
    }
    found
}

const STUDY: &str = "plans/study-pilot.toml";

/// A command that reads `bad` as the input of `kind`, every other input valid (the
/// plan in the folder, the repository's pilot study).
fn reading(kind: &str, dir: &Path, bad: &Path) -> assert_cmd::Command {
    let root = manifest_dir();
    let mut c = cmd(dir);
    match kind {
        "plan" => c.arg("check").arg(bad),
        "log" => c.args(["schedule", "plan.toml", "--log"]).arg(bad),
        "study" => c.arg("cohort").arg(bad).args(["--synthetic", "2"]),
        "roster" => c
            .arg("cohort")
            .arg(root.join(STUDY))
            .arg("--roster")
            .arg(bad)
            .arg("--randomise"),
        _ => unreachable!(),
    };
    c
}

const KINDS: [&str; 4] = ["plan", "log", "study", "roster"];

#[test]
fn devices_pipes_folders_and_oversized_files_are_refused_at_once_as_any_input() {
    let dir = folder();
    let fifo = dir.path().join("pipe");
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .expect("mkfifo runs");
    assert!(made.success());
    assert!(std::fs::metadata(&fifo).unwrap().file_type().is_fifo());
    let big = dir.path().join("big.csv");
    let f = std::fs::File::create(&big).unwrap();
    f.set_len(CAP + 1).unwrap(); // sparse: one byte over the cap
    let at_cap = dir.path().join("at-cap.toml");
    std::fs::File::create(&at_cap)
        .unwrap()
        .set_len(CAP)
        .unwrap();
    let sub = dir.path().join("adir");
    std::fs::create_dir(&sub).unwrap();
    let device = "not a regular file (a device, pipe or socket); give the path of a file";
    let cases: [(&Path, String); 4] = [
        (
            Path::new("/dev/zero"),
            format!("/dev/zero: cannot read: {device}"),
        ),
        (&fifo, format!("{}: cannot read: {device}", fifo.display())),
        (
            &sub,
            format!(
                "{}: cannot read: not a regular file (a folder); give the path of a file",
                sub.display()
            ),
        ),
        (
            &big,
            format!(
                "{}: cannot read: larger than 16 MiB, the limit for an input file; check the path",
                big.display()
            ),
        ),
    ];
    for kind in KINDS {
        for (path, want) in &cases {
            let started = Instant::now();
            let (code, stdout, stderr) = run(&mut reading(kind, dir.path(), path));
            assert_eq!(code, Some(2), "{kind} {}: {stderr}", path.display());
            assert_eq!(stdout, "", "{kind} {}", path.display());
            assert_eq!(stderr, format!("error: {want}\n"), "{kind}");
            // "At once": far below the time to read 16 MiB of zeros into a plan parser
            // or to wait on a pipe (the timeout above would fire at 60 s).
            assert!(
                started.elapsed() < Duration::from_secs(20),
                "{kind} {} took {:?}",
                path.display(),
                started.elapsed()
            );
        }
    }
    // A file of exactly the cap is read (and then fails as text, not on its size).
    let (code, _, stderr) = run(cmd(dir.path()).arg("check").arg(&at_cap));
    assert_eq!(code, Some(2));
    assert!(!stderr.contains("larger than"), "{stderr}");
}

#[test]
fn text_that_is_not_utf8_gets_the_same_message_for_every_kind_of_input() {
    let dir = folder();
    // Line 2 is "ab" then the Latin-1 byte for e-acute: line 2, column 3.
    let bad = dir.path().join("latin1.txt");
    std::fs::write(&bad, b"# a comment\nab\xE9\n").unwrap();
    let want = format!(
        "error: {}: cannot read: not UTF-8 text (byte 0xE9 at line 2, column 3); save the file as UTF-8\n",
        bad.display()
    );
    for kind in KINDS {
        let (code, stdout, stderr) = run(&mut reading(kind, dir.path(), &bad));
        assert_eq!((code, stdout.as_str()), (Some(2), ""), "{kind}: {stderr}");
        assert_eq!(stderr, want, "{kind}");
    }
    // A UTF-16 file is named as such, the same for every kind.
    let utf16 = dir.path().join("utf16.txt");
    let mut bytes = vec![0xFF, 0xFE];
    for c in "id,sex\n".encode_utf16() {
        bytes.extend_from_slice(&c.to_le_bytes());
    }
    std::fs::write(&utf16, bytes).unwrap();
    for kind in KINDS {
        let (code, _, stderr) = run(&mut reading(kind, dir.path(), &utf16));
        assert_eq!(code, Some(2), "{kind}");
        assert_eq!(
            stderr,
            format!(
                "error: {}: cannot read: not UTF-8 text but UTF-16 (it starts with a UTF-16 byte-order mark); save the file as UTF-8\n",
                utf16.display()
            ),
            "{kind}"
        );
    }
}

#[test]
fn line_endings_and_a_byte_order_mark_do_not_change_what_is_read() {
    // The same plan and log with LF, CRLF and lone CR line ends (and a BOM) give the
    // same schedule, byte for byte.
    let dir = folder();
    let log = "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n2027-01-04,weigh-in,80,,,,,,,\"first, fasted\"\n2027-01-06,session,,,40,,,,,\n";
    let schedule = |plan: &str, log: &str| {
        std::fs::write(dir.path().join("p.toml"), plan).unwrap();
        std::fs::write(dir.path().join("l.csv"), log).unwrap();
        let (code, stdout, stderr) =
            run(cmd(dir.path()).args(["schedule", "p.toml", "--log", "l.csv", "--format", "json"]));
        assert_eq!(code, Some(0), "{stderr}");
        stdout
    };
    let lf = schedule(BASE, log);
    let crlf = schedule(&BASE.replace('\n', "\r\n"), &log.replace('\n', "\r\n"));
    let bom = schedule(&format!("\u{feff}{BASE}"), &format!("\u{feff}{log}"));
    // TOML itself allows only LF and CRLF, so the lone-CR case is the log's.
    let cr = schedule(BASE, &log.replace('\n', "\r"));
    assert_eq!(crlf, lf);
    assert_eq!(bom, lf);
    assert_eq!(cr, lf);
}

#[test]
fn a_quoted_comma_reads_the_same_in_a_roster_as_in_a_log() {
    // The roster now goes through the same CSV reader as the log: a quoted id with
    // a comma is one cell.
    let dir = folder();
    std::fs::write(
        dir.path().join("roster.csv"),
        "id,sex,age_years,height_cm,mass_kg\n\"R-1, site A\",female,40,165,80\nR-2,male,50,175,90\n",
    )
    .unwrap();
    let (code, stdout, stderr) = run(cmd(dir.path())
        .arg("cohort")
        .arg(manifest_dir().join(STUDY))
        .args([
            "--roster",
            "roster.csv",
            "--randomise",
            "--format",
            "json",
            "--quiet",
        ]));
    assert_eq!(code, Some(0), "{stderr}");
    let json: serde_json::Value = serde_json::from_str(&stdout).expect("JSON");
    assert_eq!(json["participants"], 2, "{json}");
}

#[test]
fn a_bad_chart_folder_is_refused_before_any_input_is_read() {
    let dir = folder();
    std::fs::write(dir.path().join("charts"), "a file, not a folder").unwrap();
    let want = "error: --chart charts: it is not a folder; choose a folder for the charts\n";
    let nested =
        "error: --chart charts/sub: charts is not a folder; choose a folder for the charts\n";
    // The plan or study named does not exist: had the run read it (let alone
    // simulated it) before checking the folder, the error would name it instead.
    let runs: [Vec<&str>; 4] = [
        vec!["schedule", "missing.toml", "--chart"],
        vec!["compare", "missing.toml", "--chart"],
        vec!["fit", "missing.toml", "--log", "missing.csv", "--chart"],
        vec!["cohort", "missing.toml", "--synthetic", "5000", "--chart"],
    ];
    for args in &runs {
        for (folder, message) in [("charts", want), ("charts/sub", nested)] {
            let (code, stdout, stderr) = run(cmd(dir.path()).args(args).arg(folder));
            assert_eq!(code, Some(2), "{args:?}: {stderr}");
            assert_eq!(stdout, "");
            assert_eq!(stderr, message, "{args:?}");
        }
    }
    assert_eq!(listing(dir.path()), ["charts", "plan.toml"]);
}

#[test]
fn out_dash_writes_to_standard_output() {
    let dir = folder();
    let plain = run(cmd(dir.path()).args(["schedule", "plan.toml", "--format", "json"]));
    let dash =
        run(cmd(dir.path()).args(["schedule", "plan.toml", "--format", "json", "--out", "-"]));
    assert_eq!(plain.0, Some(0), "{}", plain.2);
    assert_eq!(dash, plain);
    let cal = run(cmd(dir.path()).args(["calendar", "plan.toml", "--out", "-"]));
    assert_eq!(cal.0, Some(0), "{}", cal.2);
    // RFC 5545 3.4: an iCalendar object starts with BEGIN:VCALENDAR.
    assert!(cal.1.starts_with("BEGIN:VCALENDAR"), "{}", cal.1);
    assert!(cal.2.starts_with("wrote standard output: "), "{}", cal.2);
    let init = run(cmd(dir.path()).args(["init", "-"]));
    assert_eq!(init.0, Some(0), "{}", init.2);
    assert!(init.1.contains("[participant]"));
    assert_eq!(listing(dir.path()), ["plan.toml"], "no file named -");
}

/// `log add` of one weigh-in on the plan's first day, to the log `log`.
fn add_weigh_in(dir: &Path, log: &str) -> (Option<i32>, String, String) {
    run(cmd(dir).args([
        "log",
        "add",
        "plan.toml",
        "--log",
        log,
        "--date",
        "2027-01-04",
        "--weigh-in",
        "80",
    ]))
}

#[test]
fn a_symlinked_log_and_output_are_written_through_to_their_targets() {
    let dir = folder();
    let real = dir.path().join("data");
    std::fs::create_dir(&real).unwrap();
    std::os::unix::fs::symlink("data/log.csv", dir.path().join("link.csv")).unwrap();
    // The first row creates the target (a dangling link), the second appends to it.
    let (code, _, stderr) = add_weigh_in(dir.path(), "link.csv");
    assert_eq!(code, Some(0), "{stderr}");
    let (code, _, stderr) = run(cmd(dir.path()).args([
        "log",
        "add",
        "plan.toml",
        "--log",
        "link.csv",
        "--date",
        "2027-01-06",
        "--session",
        "40",
    ]));
    assert_eq!(code, Some(0), "{stderr}");
    let link = dir.path().join("link.csv");
    assert!(
        std::fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink()
    );
    let text = std::fs::read_to_string(real.join("log.csv")).unwrap();
    assert_eq!(text.lines().count(), 3, "{text}");
    assert!(
        text.lines()
            .nth(1)
            .unwrap()
            .starts_with("2027-01-04,weigh-in,80,")
    );
    assert!(
        text.lines()
            .nth(2)
            .unwrap()
            .starts_with("2027-01-06,session,,,40,")
    );

    std::fs::write(real.join("out.json"), "old").unwrap();
    std::os::unix::fs::symlink(real.join("out.json"), dir.path().join("out.json")).unwrap();
    let (code, _, stderr) = run(cmd(dir.path()).args([
        "schedule",
        "plan.toml",
        "--format",
        "json",
        "--out",
        "out.json",
    ]));
    assert_eq!(code, Some(0), "{stderr}");
    assert!(
        std::fs::symlink_metadata(dir.path().join("out.json"))
            .unwrap()
            .file_type()
            .is_symlink()
    );
    let json = std::fs::read_to_string(real.join("out.json")).unwrap();
    assert!(json.starts_with('{'), "{json}");
    assert!(leftovers(dir.path()).is_empty());
}

#[test]
fn a_read_only_log_is_refused_and_left_byte_identical() {
    let dir = folder();
    let log = dir.path().join("log.csv");
    let bytes = b"date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\r\n2027-01-04,weigh-in,80,,,,,,,\r\n";
    std::fs::write(&log, bytes).unwrap();
    std::fs::set_permissions(&log, std::fs::Permissions::from_mode(0o444)).unwrap();
    let (code, stdout, stderr) = run(cmd(dir.path()).args([
        "log",
        "add",
        "plan.toml",
        "--log",
        "log.csv",
        "--date",
        "2027-01-06",
        "--session",
        "40",
    ]));
    assert_eq!((code, stdout.as_str()), (Some(2), ""), "{stderr}");
    assert_eq!(
        stderr,
        "error: log.csv: the file is read-only; refusing to add a row to it (make it writable first, e.g. chmod u+w)\n"
    );
    assert_eq!(std::fs::read(&log).unwrap(), bytes);
    let mode = std::fs::metadata(&log).unwrap().permissions().mode() & 0o777;
    assert_eq!(mode, 0o444);
    assert_eq!(listing(dir.path()), ["log.csv", "plan.toml"]);
}

#[test]
fn written_files_keep_or_get_their_own_permissions() {
    let dir = folder();
    // A private log stays private after a row is added.
    let log = dir.path().join("log.csv");
    std::fs::write(&log, "").unwrap();
    std::fs::set_permissions(&log, std::fs::Permissions::from_mode(0o600)).unwrap();
    let (code, _, stderr) = add_weigh_in(dir.path(), "log.csv");
    assert_eq!(code, Some(0), "{stderr}");
    assert_eq!(
        std::fs::metadata(&log).unwrap().permissions().mode() & 0o777,
        0o600
    );
    // A new output under umask 077 is readable by its owner only (POSIX: a new file
    // gets 0666 less the umask).
    let bin = env!("CARGO_BIN_EXE_dosewright");
    let status = std::process::Command::new("sh")
        .current_dir(dir.path())
        .args(["-c", &format!("umask 077 && exec '{bin}' schedule plan.toml --out out.txt --chart charts 2>/dev/null")])
        .status()
        .unwrap();
    assert!(status.success());
    for f in [
        "out.txt",
        "charts/T-001-mass.svg",
        "charts/T-001-energy.svg",
    ] {
        let mode = std::fs::metadata(dir.path().join(f))
            .unwrap()
            .permissions()
            .mode()
            & 0o777;
        assert_eq!(mode, 0o600, "{f}");
    }
    // Under umask 022, 0644.
    let status = std::process::Command::new("sh")
        .current_dir(dir.path())
        .args([
            "-c",
            &format!("umask 022 && exec '{bin}' schedule plan.toml --out new.txt 2>/dev/null"),
        ])
        .status()
        .unwrap();
    assert!(status.success());
    let mode = std::fs::metadata(dir.path().join("new.txt"))
        .unwrap()
        .permissions()
        .mode()
        & 0o777;
    assert_eq!(mode, 0o644);
    assert!(leftovers(dir.path()).is_empty());
}

#[test]
fn a_failed_write_leaves_no_temporary_file() {
    // A name that fits (255 bytes is the usual limit of a file name) while the
    // temporary name beside it does not: the write fails, exit 1, nothing is left.
    let dir = folder();
    let name = "o".repeat(250);
    let (code, stdout, stderr) =
        run(cmd(dir.path()).args(["schedule", "plan.toml", "--out", &name]));
    assert_eq!((code, stdout.as_str()), (Some(1), ""), "{stderr}");
    assert!(
        stderr.starts_with(&format!("error: {name}: cannot write: ")),
        "{stderr}"
    );
    assert_eq!(listing(dir.path()), ["plan.toml"]);
}

#[test]
fn charts_are_written_all_or_nothing() {
    let dir = folder();
    let charts = dir.path().join("charts");
    std::fs::create_dir(&charts).unwrap();
    for n in ["mass", "composition", "minutes"] {
        std::fs::write(charts.join(format!("T-001-{n}.svg")), "old").unwrap();
    }
    // The last chart's place is taken by a folder: no chart may change.
    std::fs::create_dir(charts.join("T-001-energy.svg")).unwrap();
    let (code, _, stderr) =
        run(cmd(dir.path()).args(["schedule", "plan.toml", "--chart", "charts"]));
    assert_eq!(code, Some(2), "{stderr}");
    assert!(
        stderr.contains("T-001-energy.svg: not a regular file"),
        "{stderr}"
    );
    for n in ["mass", "composition", "minutes"] {
        let text = std::fs::read_to_string(charts.join(format!("T-001-{n}.svg"))).unwrap();
        assert_eq!(text, "old", "{n}");
    }
    assert!(leftovers(dir.path()).is_empty());
    // With the place free, all four are new.
    std::fs::remove_dir(charts.join("T-001-energy.svg")).unwrap();
    let (code, _, stderr) =
        run(cmd(dir.path()).args(["schedule", "plan.toml", "--chart", "charts"]));
    assert_eq!(code, Some(0), "{stderr}");
    for n in ["mass", "composition", "minutes", "energy"] {
        let text = std::fs::read_to_string(charts.join(format!("T-001-{n}.svg"))).unwrap();
        assert!(text.contains("<svg"), "{n}");
    }
}

#[test]
fn a_killed_run_leaves_no_temporary_file() {
    // A cohort long enough to kill at several moments, the last ones while it is
    // writing (and syncing) its 5 MB output and its charts; after each kill no
    // temporary file remains.
    let dir = folder();
    let bin = env!("CARGO_BIN_EXE_dosewright");
    let study = manifest_dir().join(STUDY);
    let args = |out: &str| {
        let mut c = std::process::Command::new(bin);
        c.current_dir(dir.path())
            .arg("cohort")
            .arg(&study)
            .args([
                "--synthetic",
                "300",
                "--format",
                "csv",
                "--quiet",
                "--threads",
                "1",
            ])
            .args(["--out", out, "--chart", "charts"])
            .stdout(Stdio::null())
            .stderr(Stdio::null());
        c
    };
    let started = Instant::now();
    assert!(args("full.csv").status().unwrap().success());
    let full = started.elapsed();
    for (i, fraction) in [0.2, 0.5, 0.8, 0.9, 0.95, 0.98, 1.0].iter().enumerate() {
        // SIGINT and SIGTERM (Ctrl-C, a service stop); SIGKILL cannot be caught, so
        // it is sent only to a run still computing (the first moment).
        let signals: &[rustix::process::Signal] = if i == 0 {
            &[rustix::process::Signal::KILL]
        } else {
            &[rustix::process::Signal::INT, rustix::process::Signal::TERM]
        };
        for &signal in signals {
            let mut child = args(&format!("out-{i}.csv")).spawn().unwrap();
            std::thread::sleep(full.mul_f64(*fraction));
            let pid = rustix::process::Pid::from_child(&child);
            let _ = rustix::process::kill_process(pid, signal);
            let _ = child.wait();
            assert_eq!(
                leftovers(dir.path()),
                Vec::<PathBuf>::new(),
                "{signal:?} at {fraction}"
            );
        }
    }
}
