//! The `init` command (docs/commands.md): the starter plan on standard output or in a
//! new file that passes `check` and is never overwritten.

mod common;

use common::*;

#[test]
fn init_prints_the_starter_plan_on_stdout() {
    let r = run(dosewright().arg("init"));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stderr, "");
    assert!(r.stdout.contains("\n# A starter plan for dosewright."));
    // The cautions come first, before any key.
    assert!(
        r.stdout
            .starts_with("# Before any exercise: complete the pre-participation health screening")
    );
    let t: toml::Table = toml::from_str(&r.stdout).expect("the starter is TOML");
    for k in ["participant", "protocol", "activity", "model", "scenario"] {
        assert!(t.contains_key(k), "starter lacks [{k}]");
    }
}

#[test]
fn init_file_writes_a_starter_that_passes_check_and_never_overwrites() {
    let dir = Scratch::new("init");
    let r = run(dir.cmd().args(["init", "starter.toml"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(r.stdout, "");
    assert_eq!(
        r.stderr,
        "wrote starter.toml; edit it, then run `dosewright check starter.toml`\n"
    );
    let written = std::fs::read_to_string(dir.path().join("starter.toml")).unwrap();
    assert_eq!(written, run(dosewright().arg("init")).stdout);
    let check = run(dir.cmd().args(["check", "starter.toml"]));
    assert_eq!(check.code, Some(0), "{}", check.stderr);
    assert!(
        check
            .stdout
            .starts_with("starter.toml: the plan is valid.\n")
    );
    let sched = run(dir
        .cmd()
        .args(["schedule", "starter.toml", "--format", "json"]));
    assert_eq!(sched.code, Some(0), "{}", sched.stderr);
    assert_eq!(dir.listing(), ["starter.toml"]);

    // An existing file is left alone: exit 2, same bytes.
    dir.write("mine.toml", "# my own plan\n");
    for name in ["mine.toml", "starter.toml"] {
        let before = std::fs::read(dir.path().join(name)).unwrap();
        let r = run(dir.cmd().args(["init", name]));
        assert_eq!(r.code, Some(2));
        assert_eq!(r.stdout, "");
        assert_eq!(
            r.stderr,
            format!(
                "error: {name}: the file exists; refusing to overwrite it (choose another name or remove it first)\n"
            )
        );
        assert_eq!(std::fs::read(dir.path().join(name)).unwrap(), before);
    }
    assert_eq!(dir.listing(), ["mine.toml", "starter.toml"]);
}
