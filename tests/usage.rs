//! Bad command-line usage (docs/commands.md): exit code 2, nothing on standard output, a
//! message that starts with `error: `. Every case of the usage catalogue is one file
//! under tests/cases/usage, run by tests/catalogues.rs.

mod common;

use common::*;

#[test]
fn bad_arguments_exit_2_with_nothing_on_stdout() {
    for args in [
        &["schedule", "--format", "xml"][..],
        &["frobnicate"][..],
        &["log", "add"][..],
        &["schedule", "--bogus"][..],
    ] {
        let r = run(dosewright().args(args));
        assert_eq!(r.code, Some(2), "{args:?}");
        assert_eq!(r.stdout, "", "{args:?}");
        assert!(r.stderr.starts_with("error: "), "{args:?}: {}", r.stderr);
    }
    let r = run(dosewright().args(["schedule", "--format", "xml"]));
    assert!(r.stderr.contains("[possible values: table, csv, json]"));
}
