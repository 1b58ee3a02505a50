//! Writing output files (docs/commands.md section 2): `--out` writes atomically and prints
//! nothing, never overwrites the input, a failed run writes no file, a missing folder
//! fails without output.
//!
//! Every participant here is invented and goes by a pseudonymous code.

mod common;

use common::*;

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
