//! Speed figures for the README: `cargo bench`.
//!
//! Goals (issue 2): a 52-week plan with three scenarios simulates in under 2 ms as a
//! library call, and `dosewright schedule` on it finishes in under 30 ms end to end
//! (release build). This is a plain timing harness, not a test: it prints the
//! median and the fastest of repeated runs.

use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

const PLAN: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/plans/bench-52-weeks.toml");

fn time<F: FnMut()>(runs: usize, mut f: F) -> (Duration, Duration) {
    f(); // warm-up
    let mut v: Vec<Duration> = (0..runs)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed()
        })
        .collect();
    v.sort();
    (v[v.len() / 2], v[0])
}

fn report(name: &str, goal_ms: f64, (median, best): (Duration, Duration)) {
    let m = median.as_secs_f64() * 1e3;
    let verdict = if m < goal_ms { "meets" } else { "MISSES" };
    println!(
        "{name:<48} median {m:8.3} ms   best {:8.3} ms   goal < {goal_ms} ms: {verdict}",
        best.as_secs_f64() * 1e3
    );
}

fn main() {
    let plan = dosewright::plan::load_plan(Path::new(PLAN)).expect("the benchmark plan is valid");
    report(
        "simulate: 52 weeks x 3 scenarios (library)",
        2.0,
        time(200, || {
            std::hint::black_box(dosewright::simulate::simulate(&plan).expect("simulates"));
        }),
    );
    report(
        "schedule report + JSON render (library)",
        5.0,
        time(100, || {
            let r = dosewright::app::schedule_report(&plan).expect("simulates");
            std::hint::black_box(dosewright::report::json::render(&r));
        }),
    );
    let exe = env!("CARGO_BIN_EXE_dosewright");
    for format in ["table", "json"] {
        report(
            &format!("dosewright schedule --format {format} (end to end)"),
            30.0,
            time(30, || {
                let out = Command::new(exe)
                    .args(["schedule", PLAN, "--format", format])
                    .output()
                    .expect("the binary runs");
                assert!(out.status.success());
            }),
        );
    }
}
