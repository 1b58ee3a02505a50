//! The desk in a real browser: Debian's chromium driven through WebDriver
//! (chromedriver, started here on a free loopback port). Sign in, find a participant
//! on the day view, record a weigh-in in pounds, see the re-planned minutes change,
//! correct it with a reason, see the audit, print the week's sheet to PDF; and a
//! screenshot of every page at desk (1280 px) and tablet (800 px) widths into
//! target/desk-screenshots/. Skips, with a note, when chromium or chromedriver is
//! not installed.

mod desk_support;

use desk_support::{PASSWORD, Server, Site, day_minutes, start};
use fantoccini::{Client, ClientBuilder, Locator};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

const CHROMIUM: &str = "/usr/bin/chromium";

fn chromedriver() -> Option<PathBuf> {
    ["/usr/bin/chromedriver", "/usr/lib/chromium/chromedriver"]
        .iter()
        .map(PathBuf::from)
        .find(|p| p.exists())
}

/// chromedriver, stopped (by its own handle) when dropped.
struct Driver(Child);

impl Drop for Driver {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

fn free_port() -> u16 {
    let l = std::net::TcpListener::bind("127.0.0.1:0").unwrap();
    l.local_addr().unwrap().port()
}

fn start_driver(path: &Path) -> (Driver, u16) {
    let port = free_port();
    let child = Command::new(path)
        .arg(format!("--port={port}"))
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("chromedriver starts");
    let driver = Driver(child);
    let t0 = Instant::now();
    while std::net::TcpStream::connect(("127.0.0.1", port)).is_err() {
        assert!(
            t0.elapsed() < Duration::from_secs(30),
            "chromedriver did not listen"
        );
        std::thread::sleep(Duration::from_millis(100));
    }
    (driver, port)
}

fn shots_dir() -> PathBuf {
    let d = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/desk-screenshots");
    std::fs::create_dir_all(&d).unwrap();
    d
}

async fn browser(port: u16, profile: &Path) -> Client {
    let mut caps = serde_json::Map::new();
    caps.insert("browserName".into(), "chrome".into());
    caps.insert(
        "goog:chromeOptions".into(),
        serde_json::json!({
            "binary": CHROMIUM,
            "args": [
                "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
                "--no-first-run", "--disable-background-networking",
                "--disable-component-update", "--disable-sync",
                format!("--user-data-dir={}", profile.display()),
                "--window-size=1280,1600",
            ]
        }),
    );
    ClientBuilder::new(hyper_util::client::legacy::connect::HttpConnector::new())
        .capabilities(caps)
        .connect(&format!("http://127.0.0.1:{port}"))
        .await
        .expect("a WebDriver session")
}

/// Screenshots of the current page at desk and tablet widths.
async fn shoot(c: &Client, name: &str) {
    for (width, label) in [(1280u32, "desk"), (800, "tablet")] {
        c.set_window_size(width, 1600).await.unwrap();
        let png = c.screenshot().await.unwrap();
        assert!(png.starts_with(b"\x89PNG"), "{name} screenshot is a PNG");
        std::fs::write(shots_dir().join(format!("{name}-{label}.png")), png).unwrap();
    }
    c.set_window_size(1280, 1600).await.unwrap();
}

async fn sign_in(c: &Client, base: &str, name: &str) {
    c.goto(&format!("{base}/signin")).await.unwrap();
    c.find(Locator::Id("name"))
        .await
        .unwrap()
        .send_keys(name)
        .await
        .unwrap();
    c.find(Locator::Id("password"))
        .await
        .unwrap()
        .send_keys(PASSWORD)
        .await
        .unwrap();
    c.find(Locator::Css("form[action='/signin'] button"))
        .await
        .unwrap()
        .click()
        .await
        .unwrap();
    wait_title(
        c,
        if name == "admin1" {
            "Accounts"
        } else {
            "Day view"
        },
    )
    .await;
}

async fn sign_out(c: &Client) {
    c.find(Locator::Css("form[action='/signout'] button"))
        .await
        .unwrap()
        .click()
        .await
        .unwrap();
    wait_title(c, "Sign in").await;
}

/// Wait (up to 30 s) until the page's title starts with `prefix`: a submitted form
/// has navigated.
async fn wait_title(c: &Client, prefix: &str) -> String {
    let t0 = Instant::now();
    loop {
        let title = c.title().await.unwrap_or_default();
        if title.starts_with(prefix) {
            return c.source().await.unwrap();
        }
        assert!(
            t0.elapsed() < Duration::from_secs(30),
            "waited for a page titled {prefix}..., still on {title}"
        );
        tokio::time::sleep(Duration::from_millis(50)).await;
    }
}

async fn set_value(c: &Client, css: &str, value: &str) {
    // The date input's typing order depends on the browser's locale; set it
    // directly (the desk's pages themselves have no scripts).
    c.execute(
        "document.querySelector(arguments[0]).value = arguments[1];",
        vec![css.into(), value.into()],
    )
    .await
    .unwrap();
}

#[test]
fn the_desk_in_chromium() {
    let Some(driver_path) = chromedriver() else {
        println!("skipped: chromedriver is not installed (apt-get install chromium-driver)");
        return;
    };
    if !Path::new(CHROMIUM).exists() {
        println!("skipped: {CHROMIUM} is not installed (apt-get install chromium)");
        return;
    }
    let site = Site::new();
    let server = Server::start(site.config());
    let base = format!("http://{}", server.addr);
    let (_driver, port) = start_driver(&driver_path);
    let profile = tempfile::tempdir().unwrap();
    let rt = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .unwrap();
    rt.block_on(async {
        let c = browser(port, profile.path()).await;
        let monday2 = (start() + chrono::Days::new(7)).to_string();

        c.goto(&format!("{base}/signin")).await.unwrap();
        shoot(&c, "signin").await;
        sign_in(&c, &base, "trainer1").await;

        // The day view of week 2's Monday: find the participant.
        c.goto(&format!("{base}/day?date={monday2}")).await.unwrap();
        let before = day_minutes(&c.source().await.unwrap(), "PIL-008").unwrap();
        shoot(&c, "day").await;
        c.find(Locator::Css("a[href='/p/PIL-008']"))
            .await
            .unwrap()
            .click()
            .await
            .unwrap();
        wait_title(&c, "Participant PIL-008").await;
        assert!(
            c.current_url()
                .await
                .unwrap()
                .path()
                .ends_with("/p/PIL-008")
        );
        shoot(&c, "participant").await;

        // A weigh-in in pounds.
        set_value(&c, "form[action$='/weigh-in'] input[name=date]", &monday2).await;
        c.find(Locator::Css("form[action$='/weigh-in'] input[name=mass]"))
            .await
            .unwrap()
            .send_keys("200")
            .await
            .unwrap();
        c.find(Locator::Css("form[action$='/weigh-in'] input[value=lb]"))
            .await
            .unwrap()
            .click()
            .await
            .unwrap();
        c.find(Locator::Css("form[action$='/weigh-in'] button"))
            .await
            .unwrap()
            .click()
            .await
            .unwrap();
        let saved = wait_title(&c, "Recorded row ").await;
        shoot(&c, "recorded").await;
        let id: i64 = {
            let i = saved.find("Recorded row ").unwrap() + "Recorded row ".len();
            saved[i..]
                .chars()
                .take_while(char::is_ascii_digit)
                .collect::<String>()
                .parse()
                .unwrap()
        };
        // 200 lb = 90.718474 kg (NIST SP 811 Appendix B.8).
        assert!(saved.contains("90.72 kg"), "{saved}");

        // The re-planned minutes change: a lower measured mass needs more minutes
        // for the same energy, and week 1 (no session recorded) is an absence, so
        // week 2 gets 50% of the dose (docs/model.md section 4): 2 after >= before.
        c.goto(&format!("{base}/day?date={monday2}")).await.unwrap();
        let after = day_minutes(&c.source().await.unwrap(), "PIL-008").unwrap();
        assert!(
            after < before && 2 * after >= before,
            "minutes {before} -> {after}"
        );

        // Correct it with a reason.
        c.goto(&format!("{base}/p/PIL-008")).await.unwrap();
        c.find(Locator::Css(&format!("a[href='/row/{id}']")))
            .await
            .unwrap()
            .click()
            .await
            .unwrap();
        wait_title(&c, &format!("Row {id}")).await;
        shoot(&c, "row").await;
        let mass = c
            .find(Locator::Css("form[action$='/correct'] input[name=mass]"))
            .await
            .unwrap();
        mass.clear().await.unwrap();
        mass.send_keys("199").await.unwrap();
        c.find(Locator::Css("form[action$='/correct'] input[value=lb]"))
            .await
            .unwrap()
            .click()
            .await
            .unwrap();
        c.find(Locator::Css("form[action$='/correct'] input[name=reason]"))
            .await
            .unwrap()
            .send_keys("misread the scale")
            .await
            .unwrap();
        c.find(Locator::Css("form[action$='/correct'] button"))
            .await
            .unwrap()
            .click()
            .await
            .unwrap();
        let corrected = wait_title(&c, "Corrected row ").await;
        assert!(
            corrected.contains(&format!("Corrected row {id}")),
            "{corrected}"
        );

        // The audit shows the record, the correction, who and why.
        c.goto(&format!("{base}/p/PIL-008/audit")).await.unwrap();
        let audit = c.source().await.unwrap();
        assert!(audit.contains("misread the scale"));
        assert!(audit.contains("trainer1"));
        assert!(audit.contains("correct"));
        shoot(&c, "audit").await;

        // Print week 2's sheet to PDF.
        c.goto(&format!("{base}/p/PIL-008/sheets?week=2"))
            .await
            .unwrap();
        shoot(&c, "sheet").await;
        let pdf = c
            .print(
                fantoccini::wd::PrintConfiguration::builder()
                    .build()
                    .unwrap(),
            )
            .await
            .unwrap();
        assert!(pdf.starts_with(b"%PDF-"), "the print is a PDF");
        assert!(pdf.len() > 1000);
        std::fs::write(shots_dir().join("sheet-week2.pdf"), &pdf).unwrap();
        c.goto(&format!("{base}/sheets?date={monday2}"))
            .await
            .unwrap();
        shoot(&c, "site-sheets").await;
        c.goto(&format!("{base}/account")).await.unwrap();
        shoot(&c, "account").await;
        sign_out(&c).await;

        sign_in(&c, &base, "dietitian1").await;
        c.goto(&format!("{base}/p/PIL-008/fit")).await.unwrap();
        shoot(&c, "fit").await;
        c.goto(&format!("{base}/p/PIL-008/sheets?week=2"))
            .await
            .unwrap();
        assert!(c.source().await.unwrap().contains("Not allowed"));
        shoot(&c, "forbidden").await;
        c.goto(&format!("{base}/day?date={monday2}")).await.unwrap();
        sign_out(&c).await;

        sign_in(&c, &base, "designer1").await;
        c.goto(&format!("{base}/export")).await.unwrap();
        shoot(&c, "export").await;
        sign_out(&c).await;

        sign_in(&c, &base, "admin1").await;
        c.goto(&format!("{base}/admin")).await.unwrap();
        shoot(&c, "admin").await;
        sign_out(&c).await;

        c.close().await.unwrap();
    });
}
