//! Speed of the register on the command line: `cargo bench --bench register`.
//!
//! Goals (docs/register.md, "Speed"): in a register of 200 participants and 50,000
//! rows, recording one weigh-in end to end (the command opens the register, checks
//! the participant's whole log with the new row, writes and commits with `fsync`,
//! closes) in under 20 ms; the day view of 200 participants (every participant
//! re-planned from their rows up to the date's week) in under 200 ms. Each is timed twice: as the
//! library call behind the command (`commands::run` on the parsed command line),
//! and as the real binary started as a process (which adds the start of a process).
//! The register is built in a temporary folder. A plain timing harness: it prints
//! the median and the fastest of repeated runs. `REGISTER_BENCH_STAGES=1` also
//! times each stage of the two commands on its own (docs/register.md, "Speed"), and
//! `REGISTER_BENCH_KEEP=FILE` keeps a copy of the register to profile them on.

use chrono::{Days, NaiveDate, Utc};
use clap::Parser;
use dosewright::register::{SqliteStore, Stamp, Store, Which};
use std::path::Path;
use std::time::{Duration, Instant};

fn time<F: FnMut(usize)>(runs: usize, mut f: F) -> (Duration, Duration) {
    let mut v: Vec<Duration> = (0..runs)
        .map(|i| {
            let t = Instant::now();
            f(i);
            t.elapsed()
        })
        .collect();
    v.sort();
    (v[v.len() / 2], v[0])
}

fn report(name: &str, goal_ms: Option<f64>, (median, best): (Duration, Duration)) {
    let m = median.as_secs_f64() * 1e3;
    let goal = match goal_ms {
        Some(g) if m < g => format!("goal < {g} ms: meets"),
        Some(g) => format!("goal < {g} ms: MISSES"),
        None => "(no goal)".to_string(),
    };
    println!(
        "{name:<60} median {m:9.3} ms   best {:9.3} ms   {goal}",
        best.as_secs_f64() * 1e3
    );
}

/// Weigh-ins on days 1 to 167 (0.01 kg a day lower) and sessions on days 0 to 81:
/// with the baseline weigh-in, 250 rows for one participant.
fn history(start: NaiveDate, mass: f64) -> String {
    let mut s = String::from(
        "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n",
    );
    let mut rows: Vec<(u64, String)> = Vec::new();
    for d in 1..168u64 {
        let kg = ((mass - 0.01 * d as f64) * 100.0).round() / 100.0;
        rows.push((d, format!("weigh-in,{kg},,,,,,,")));
    }
    for d in 0..82u64 {
        rows.push((d, "session,,,30,,,,,".to_string()));
    }
    rows.sort_by_key(|(d, _)| *d);
    for (d, r) in rows {
        s.push_str(&format!("{},{r}\n", start + Days::new(d)));
    }
    s
}

fn run(args: &[&str]) {
    let mut argv = vec!["dosewright"];
    argv.extend(args);
    let cli = dosewright::cli::Cli::try_parse_from(&argv).unwrap();
    dosewright::commands::run(&cli.command).unwrap();
}

fn process(args: &[&str]) {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_dosewright"))
        .args(args)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

fn build(path: &Path, start: NaiveDate) -> Vec<(String, f64)> {
    let stamp = Stamp::new("bench", Utc::now()).unwrap();
    let codes = dosewright::desk::demo::create(path, start, Some(200), 0, &stamp).unwrap();
    let mut store = SqliteStore::open(path).unwrap();
    let mut last = Vec::new();
    for code in codes {
        let mass = store
            .participant(&code)
            .unwrap()
            .plan()
            .unwrap()
            .participant
            .subject
            .mass_kg;
        store
            .import_log(&code, "history.csv", &history(start, mass), &stamp)
            .unwrap();
        last.push((code, ((mass - 1.67) * 100.0).round() / 100.0));
    }
    let rows = store.rows(None, Which::All).unwrap().len();
    assert_eq!(rows, 50_000, "rows in the register");
    last
}

/// Where the time of the two commands goes, stage by stage, each stage timed on
/// its own (serially, one core) with the library's public pieces: the start of a
/// process, opening the register, reading the participants and rows, parsing the
/// plans, rendering and parsing the logs, the simulation, the sessions, rendering.
fn stages(register: &Path, reg: &str, day: chrono::NaiveDate) {
    use dosewright::desk::views;
    let ms = |d: Duration| d.as_secs_f64() * 1e3;
    let median = |runs: usize, f: &mut dyn FnMut()| ms(time(runs, |_| f()).0);
    println!("stages (medians, one core):");
    let start = median(9, &mut || {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_dosewright"))
            .arg("--version")
            .output()
            .unwrap();
        assert!(out.status.success());
    });
    println!("  start a process (dosewright --version)            {start:9.3} ms");
    let open = median(9, &mut || {
        SqliteStore::open_read_only(register).unwrap();
    });
    println!("  open the register read-only                        {open:9.3} ms");
    let open_rw = median(9, &mut || {
        SqliteStore::open(register).unwrap();
    });
    println!("  open the register to write                         {open_rw:9.3} ms");
    let store = SqliteStore::open_read_only(register).unwrap();
    let participants = store.participants().unwrap();
    let read_p = median(9, &mut || {
        store.participants().unwrap();
    });
    println!("  read 200 participants                              {read_p:9.3} ms");
    let read_rows = median(5, &mut || {
        store.rows(None, Which::Current).unwrap();
    });
    println!("  read 50,000 current rows                           {read_rows:9.3} ms");
    let code = &participants[0].code;
    let read_one = median(9, &mut || {
        store.rows(Some(code), Which::Current).unwrap();
    });
    println!("  read one participant's 250 rows                    {read_one:9.3} ms");
    let plans = median(5, &mut || {
        for p in &participants {
            p.plan().unwrap();
        }
    });
    println!("  parse and check 200 plans                          {plans:9.3} ms");
    let rows = store.rows(None, Which::Current).unwrap();
    let by: Vec<Vec<dosewright::register::Row>> = participants
        .iter()
        .map(|p| {
            rows.iter()
                .filter(|r| r.participant == p.code)
                .cloned()
                .collect()
        })
        .collect();
    let render = median(5, &mut || {
        for r in &by {
            dosewright::register::log_csv(r).unwrap();
        }
    });
    println!("  render 200 logs as CSV text                        {render:9.3} ms");
    let plan_v: Vec<_> = participants.iter().map(|p| p.plan().unwrap()).collect();
    let texts: Vec<String> = by
        .iter()
        .map(|r| dosewright::register::log_csv(r).unwrap())
        .collect();
    let parse = median(5, &mut || {
        for (t, p) in texts.iter().zip(&plan_v) {
            dosewright::log::parse_log(reg, t, p, None).unwrap();
        }
    });
    println!("  parse and check 200 logs                           {parse:9.3} ms");
    let logs: Vec<_> = participants
        .iter()
        .zip(&by)
        .map(|(p, r)| dosewright::register::participant_log_of(reg, p.clone(), r, None).unwrap())
        .collect();
    let inputs: Vec<_> = logs.iter().map(views::log_input).collect();
    let sim = median(3, &mut || {
        for (l, i) in logs.iter().zip(&inputs) {
            dosewright::simulate::simulate_observed(&l.plan, i.observed.as_ref()).unwrap();
        }
    });
    println!("  simulate 200 participants (every scenario, all weeks) {sim:9.3} ms");
    use dosewright::simulate::{RunMode, calibrated, run};
    let proj = |weeks: Option<u32>, all: bool| {
        for (l, i) in logs.iter().zip(&inputs) {
            let plan = &l.plan;
            let (b, ph) = calibrated(plan).unwrap();
            let n = if all { plan.scenarios.len() } else { 1 };
            for sc in &plan.scenarios[..n] {
                let mode = RunMode {
                    observed: i.observed.as_ref(),
                    anchor: true,
                    weeks: weeks.unwrap_or(plan.protocol.total_weeks()),
                    ..RunMode::projection(plan)
                };
                run(plan, &ph, &b, sc, mode, None).unwrap();
            }
        }
    };
    let calib = median(3, &mut || {
        for l in &logs {
            calibrated(&l.plan).unwrap();
        }
    });
    println!("  calibrate 200 baselines                            {calib:9.3} ms");
    let all_proj = median(3, &mut || proj(None, true));
    println!("  every scenario's projection only, all weeks        {all_proj:9.3} ms");
    let first = median(3, &mut || proj(None, false));
    println!("  the first scenario's projection, all weeks         {first:9.3} ms");
    let upto = median(3, &mut || proj(Some(7), false));
    println!("  the first scenario's projection, up to week 7      {upto:9.3} ms");
    let days = median(3, &mut || {
        for (l, i) in logs.iter().zip(&inputs) {
            dosewright::planning::day_plan(&l.plan, i, day).unwrap();
        }
    });
    println!("  200 participants' day (what the day view runs)     {days:9.3} ms");
    let view = median(3, &mut || {
        views::day_view(&store, &views::Cache::default(), day).unwrap();
    });
    println!("  the whole day view, library (rayon)                {view:9.3} ms");
    let v = views::day_view(&store, &views::Cache::default(), day).unwrap();
    let print = median(5, &mut || {
        dosewright::desk::print::table(&v, reg);
    });
    println!("  print the day view as a table                      {print:9.3} ms");
}

fn main() {
    let dir = tempfile::tempdir().unwrap();
    let register = dir.path().join("bench.db");
    let reg = register.to_str().unwrap();
    let start = NaiveDate::from_ymd_opt(2027, 1, 4).unwrap();
    let t = Instant::now();
    let last = build(&register, start);
    println!(
        "register of 200 participants and 50,000 rows built in {:?}",
        t.elapsed()
    );

    // One weigh-in per participant and date: participant i on day 168 (library
    // call) or 169 (process), at their last mass (no jump).
    let weigh_in = |i: usize, day: u64| -> Vec<String> {
        let (code, kg) = &last[i % last.len()];
        vec![
            "log".into(),
            "add".into(),
            "--register".into(),
            reg.into(),
            "--participant".into(),
            code.clone(),
            "--date".into(),
            (start + Days::new(day + (i / last.len()) as u64 * 2)).to_string(),
            "--weigh-in".into(),
            kg.to_string(),
            "--by".into(),
            "bench".into(),
        ]
    };
    let as_strs = |v: &[String]| {
        v.iter()
            .map(String::as_str)
            .collect::<Vec<_>>()
            .join("\u{1}")
    };
    report(
        "record a weigh-in (50,000 rows), library call",
        Some(20.0),
        time(40, |i| {
            let a = weigh_in(i, 168);
            let s = as_strs(&a);
            run(&s.split('\u{1}').collect::<Vec<_>>());
        }),
    );
    report(
        "record a weigh-in (50,000 rows), the binary as a process",
        Some(20.0),
        time(40, |i| {
            let a = weigh_in(i, 169);
            let s = as_strs(&a);
            process(&s.split('\u{1}').collect::<Vec<_>>());
        }),
    );
    // A copy of the register to profile the commands on (REGISTER_BENCH_KEEP=FILE).
    if let Some(keep) = std::env::var_os("REGISTER_BENCH_KEEP") {
        SqliteStore::open_read_only(&register)
            .unwrap()
            .backup_to(Path::new(&keep))
            .unwrap();
        println!("register kept in {}", Path::new(&keep).display());
    }
    if std::env::var_os("REGISTER_BENCH_STAGES").is_some() {
        stages(&register, reg, start + Days::new(44));
    }
    let day = (start + Days::new(44)).to_string();
    let day_args = ["register", "day", reg, "--date", day.as_str()];
    report(
        "day view, 200 participants, library call",
        Some(200.0),
        time(5, |_| run(&day_args)),
    );
    report(
        "day view, 200 participants, the binary as a process",
        Some(200.0),
        time(5, |_| process(&day_args)),
    );
}
