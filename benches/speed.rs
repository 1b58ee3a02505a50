//! Speed figures for docs/speed.md and the README's summary: `cargo bench`.
//!
//! Goals (docs/speed.md, "How it is measured"): a 52-week plan with three scenarios
//! simulates in under 2 ms as a library call, and `dosewright schedule` on it
//! finishes in under 30 ms end to end (release build). This is a plain timing harness, not a test: it prints the
//! median and the fastest of repeated runs.

use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

const STUDY: &str = "plans/benchmark-study.toml";
const PLAN: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/plans/bench-52-weeks.toml");
const LOG: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/demo-data/bench-52-weeks-log.csv"
);

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

/// The yardstick (docs/speed.md): a plain allocation-free RK4 loop of the model's one
/// right-hand side in one-day steps, one participant at a time on one core, with a
/// constant weekly exercise and the benchmark study's 14-day lag. Returns seconds
/// per participant-week.
fn yardstick() -> f64 {
    use dosewright::model::balance::Rhs;
    let plan = dosewright::plan::load_plan(Path::new(PLAN)).expect("the benchmark plan is valid");
    let (baseline, ph) = dosewright::simulate::calibrated(&plan).expect("calibrates");
    let mut comp = plan.scenarios[0].compensation;
    comp.intake_fraction = 0.3;
    comp.intake_lag_days = 14.0;
    let rhs = Rhs::new(&ph, &comp);
    let (participants, weeks) = (20_000usize, 52usize);
    let f = |y: [f64; 4], a: f64, b: f64| {
        let p = rhs.point(y[0], y[1], y[2], rhs.rmr(y[0], y[1]), a, b);
        [p.dfat, p.dlean, p.dlagged, p.exercise]
    };
    let add = |y: [f64; 4], h: f64, k: [f64; 4]| std::array::from_fn(|j| y[j] + h * k[j]);
    let t = Instant::now();
    let mut sink = 0.0;
    for i in 0..participants {
        let mut y = [
            baseline.fat_mass_kg + 1e-6 * i as f64,
            baseline.fat_free_mass_kg,
            0.0,
            0.0,
        ];
        for w in 0..weeks {
            let (a, b) = (std::hint::black_box(3.0 * 40.0 * 4.0 + w as f64), 120.0);
            for _ in 0..7 {
                let k1 = f(y, a, b);
                let k2 = f(add(y, 0.5, k1), a, b);
                let k3 = f(add(y, 0.5, k2), a, b);
                let k4 = f(add(y, 1.0, k3), a, b);
                y = std::array::from_fn(|j| {
                    y[j] + (k1[j] + 2.0 * k2[j] + 2.0 * k3[j] + k4[j]) / 6.0
                });
            }
        }
        sink += y[0];
    }
    std::hint::black_box(sink);
    t.elapsed().as_secs_f64() / (participants * weeks) as f64
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
            let r = dosewright::commands::schedule::schedule_report(&plan).expect("simulates");
            std::hint::black_box(dosewright::report::json::render(&r));
        }),
    );
    let exe = env!("CARGO_BIN_EXE_dosewright");
    let end_to_end_n = |name: &str, goal_ms: f64, runs: usize, args: &[&str]| {
        report(
            name,
            goal_ms,
            time(runs, || {
                let out = Command::new(exe)
                    .args(args)
                    .output()
                    .expect("the binary runs");
                assert!(
                    out.status.success(),
                    "{}",
                    String::from_utf8_lossy(&out.stderr)
                );
            }),
        );
    };
    let end_to_end =
        |name: &str, goal_ms: f64, args: &[&str]| end_to_end_n(name, goal_ms, 20, args);
    for format in ["table", "json"] {
        end_to_end(
            &format!("dosewright schedule --format {format} (end to end)"),
            30.0,
            &["schedule", PLAN, "--format", format],
        );
    }
    end_to_end(
        "dosewright goal --lose-kg 5 --by-week 52",
        50.0,
        &["goal", PLAN, "--lose-kg", "5", "--by-week", "52"],
    );
    end_to_end(
        "dosewright compare --doses (10 doses x 3 scenarios)",
        50.0,
        &["compare", PLAN, "--doses", "4,8,12,16,20,24,28,32,36,40"],
    );
    end_to_end(
        "dosewright schedule --log (52-week log)",
        30.0,
        &["schedule", PLAN, "--log", LOG],
    );
    end_to_end(
        "dosewright fit --log (52-week log)",
        200.0,
        &["fit", PLAN, "--log", LOG],
    );
    // The cohort goals of the issues: 1000 participants x 3 arms x 52 weeks with one
    // draw in under 0.5 s, and with 100 draws (15.6 million participant-weeks) in
    // under 5 s; memory is measured outside (docs/speed.md).
    let cohort = |draws: &'static str| {
        [
            "cohort",
            STUDY,
            "--synthetic",
            "1000",
            "--all-arms",
            "--draws",
            draws,
            "--seed",
            "1",
            "--quiet",
            "--format",
            "json",
        ]
    };
    end_to_end_n(
        "dosewright cohort 1000 x 3 arms x 52 weeks, 1 draw",
        500.0,
        10,
        &cohort("1"),
    );
    end_to_end_n(
        "dosewright cohort 1000 x 3 arms x 52 weeks, 100 draws",
        500.0,
        3,
        &cohort("100"),
    );
    // Peak memory (maximum resident set, from /usr/bin/time) with 1,000 draws: goal
    // 150 MB; and the time per participant-week against the 100-draw run's (linear).
    if Path::new("/usr/bin/time").exists() {
        let start = std::time::Instant::now();
        let out = Command::new("/usr/bin/time")
            .args(["-f", "%M"])
            .arg(exe)
            .args(cohort("1000"))
            .output()
            .expect("/usr/bin/time runs");
        let wall = start.elapsed().as_secs_f64();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let err = String::from_utf8_lossy(&out.stderr);
        let kb: f64 = err
            .lines()
            .rev()
            .find_map(|l| l.trim().parse().ok())
            .expect("/usr/bin/time prints the maximum resident set in KB");
        let mb = kb / 1024.0;
        println!(
            "dosewright cohort 1000 x 3 arms x 52 weeks, 1000 draws: wall {wall:.2} s ({:.4} us per participant-week), peak memory {mb:.0} MB   goal < 150 MB: {}",
            wall * 1e6 / (1000.0 * 3.0 * 52.0 * 1000.0),
            if mb < 150.0 { "meets" } else { "MISSES" }
        );
    }
    // Per participant-week on one core against the yardstick, in the same process:
    // the cohort on one thread (15.6 million participant-weeks), the best of 3 runs.
    let yard = yardstick().min(yardstick());
    let mut one: Vec<&str> = cohort("100").to_vec();
    one.extend(["--threads", "1"]);
    let (_, best) = time(2, || {
        let out = Command::new(exe)
            .args(&one)
            .output()
            .expect("the binary runs");
        assert!(out.status.success());
    });
    let per = best.as_secs_f64() / (1000.0 * 3.0 * 52.0 * 100.0);
    let ratio = per / yard;
    println!(
        "yardstick daily RK4 {:.4} us, cohort (1 thread) {:.4} us per participant-week: ratio {ratio:.3}   goal < 0.35: {}",
        yard * 1e6,
        per * 1e6,
        if ratio < 0.35 { "meets" } else { "MISSES" }
    );
}
