//! Speed of the desk: `cargo bench --bench desk`.
//!
//! Goal (docs/desk.md): for a register of 200 participants, the day view and a
//! participant page render in under 50 ms each, measured as whole HTTP requests on
//! 127.0.0.1 against the server running in-process. The first request after a
//! start re-plans every participant (cold); later ones reuse the re-planned
//! schedule of every participant whose plan and rows did not change (warm), and a
//! page after one new row re-plans that participant only. A plain timing harness:
//! it prints the median and the fastest of repeated runs.

use chrono::{NaiveDate, Utc};
use dosewright::desk::{self, accounts};
use dosewright::register::Stamp;
use std::time::{Duration, Instant};

fn time<F: FnMut()>(runs: usize, mut f: F) -> (Duration, Duration) {
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

fn report(name: &str, goal_ms: Option<f64>, (median, best): (Duration, Duration)) {
    let m = median.as_secs_f64() * 1e3;
    let goal = match goal_ms {
        Some(g) if m < g => format!("goal < {g} ms: meets"),
        Some(g) => format!("goal < {g} ms: MISSES"),
        None => "(no goal)".to_string(),
    };
    println!(
        "{name:<52} median {m:9.3} ms   best {:9.3} ms   {goal}",
        best.as_secs_f64() * 1e3
    );
}

fn main() {
    let dir = tempfile::tempdir().unwrap();
    let register = dir.path().join("bench.db");
    let start = NaiveDate::from_ymd_opt(2027, 1, 4).unwrap();
    let stamp = Stamp::new("bench", Utc::now()).unwrap();
    let t = Instant::now();
    desk::demo::create(&register, start, Some(200), 2, &stamp).unwrap();
    let mut conn = accounts::connect(&register).unwrap();
    let password = "bench pass phrase 1";
    accounts::create(&mut conn, "t", accounts::Role::Trainer, password, &stamp).unwrap();
    println!("register of 200 participants built in {:?}", t.elapsed());

    let (tx, rx) = std::sync::mpsc::channel();
    let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
    let config = desk::Config::new(register.clone());
    let server = std::thread::spawn(move || {
        let rt = tokio::runtime::Runtime::new().unwrap();
        rt.block_on(async move {
            let l = tokio::net::TcpListener::bind("127.0.0.1:0").await.unwrap();
            tx.send(l.local_addr().unwrap()).unwrap();
            let st = desk::state(config).unwrap();
            desk::serve_on(l, st, async {
                let _ = stopped.await;
            })
            .await
            .unwrap();
        });
    });
    let addr = rx.recv().unwrap();
    let base = format!("http://{addr}");
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .proxy(None)
        .build()
        .into();
    let get = |path: &str| -> String {
        let mut r = agent.get(format!("{base}{path}")).call().unwrap();
        assert_eq!(r.status(), 200, "{path}");
        r.body_mut()
            .with_config()
            .limit(50_000_000)
            .read_to_string()
            .unwrap()
    };
    let page = get("/signin");
    let i = page.find("name=\"csrf\" value=\"").unwrap() + 19;
    let token = page[i..i + 64].to_string();
    let r = agent
        .post(format!("{base}/signin"))
        .send_form([
            ("csrf", token.as_str()),
            ("name", "t"),
            ("password", password),
        ])
        .unwrap();
    assert_eq!(r.status(), 303);

    let day = "/day?date=2027-01-13";
    let t = Instant::now();
    let body = get(day);
    let cold = t.elapsed();
    assert!(body.contains("DSK-200"));
    report(
        "day view, 200 participants, cold (re-plans all)",
        None,
        (cold, cold),
    );
    report(
        "day view, 200 participants, warm",
        Some(50.0),
        time(20, || {
            get(day);
        }),
    );
    report(
        "participant page (DSK-100), warm",
        Some(50.0),
        time(20, || {
            get("/p/DSK-100");
        }),
    );
    report(
        "audit page (DSK-100)",
        Some(50.0),
        time(20, || {
            get("/p/DSK-100/audit");
        }),
    );
    // One new row: the next day view re-plans that participant only.
    let page = get("/p/DSK-050");
    let i = page.find("name=\"csrf\" value=\"").unwrap() + 19;
    let csrf = page[i..i + 64].to_string();
    let mut n = 0;
    report(
        "record a session + day view re-planning one",
        Some(100.0),
        time(10, || {
            n += 1;
            let note = format!("bench {n}");
            let r = agent
                .post(format!("{base}/p/DSK-050/session"))
                .send_form([
                    ("csrf", csrf.as_str()),
                    ("date", "2027-01-13"),
                    ("minutes", "30"),
                    ("note", note.as_str()),
                ])
                .unwrap();
            assert_eq!(r.status(), 200);
            get(day);
        }),
    );
    drop(stop);
    server.join().unwrap();
}
