//! The `desk` command: the demo register, accounts from the command line (password
//! from standard input), and the server started as a process, signed in to over
//! HTTP on 127.0.0.1, and stopped cleanly by SIGINT (Ctrl-C).

use assert_cmd::cargo::cargo_bin;
use std::io::{BufRead, BufReader, Write};
use std::net::SocketAddr;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

fn dosewright() -> Command {
    Command::new(cargo_bin("dosewright"))
}

#[test]
fn demo_accounts_serve_and_stop_on_ctrl_c() {
    let dir = tempfile::tempdir().unwrap();
    let reg = dir.path().join("site.db");
    let out = dosewright()
        .args(["desk", "demo"])
        .arg(&reg)
        .args(["--start", "2027-01-04"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("created with 8 participants"), "{text}");
    // Only the owner may read the register (docs/register.md).
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = std::fs::metadata(&reg).unwrap().permissions().mode() & 0o777;
        assert_eq!(mode, 0o600);
    }

    let add = |name: &str, role: &str, password: &str| {
        let mut child = dosewright()
            .args(["desk", "account", "add"])
            .arg(&reg)
            .args(["--name", name, "--role", role, "--password-stdin"])
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        // A command that refuses before reading the password (a taken name) may
        // have exited already: the write then fails, and the exit code says why.
        let _ = writeln!(child.stdin.take().unwrap(), "{password}");
        child.wait_with_output().unwrap()
    };
    let out = add("trainer1", "trainer", "a long enough pass phrase");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // A short password, a taken name: exit 2, nothing added.
    let out = add("trainer2", "trainer", "short");
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("password"));
    let out = add("trainer1", "dietitian", "a long enough pass phrase");
    assert_eq!(out.status.code(), Some(2));
    let list = dosewright()
        .args(["desk", "account", "list"])
        .arg(&reg)
        .output()
        .unwrap();
    assert_eq!(
        String::from_utf8_lossy(&list.stdout),
        "trainer1\ttrainer\tactive\n"
    );

    // Serve on a free loopback port.
    let port = {
        let l = std::net::TcpListener::bind("127.0.0.1:0").unwrap();
        l.local_addr().unwrap().port()
    };
    let mut server = dosewright()
        .args(["desk", "serve"])
        .arg(&reg)
        .args(["--port", &port.to_string()])
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut stderr = BufReader::new(server.stderr.take().unwrap());
    let mut first = String::new();
    stderr.read_line(&mut first).unwrap();
    assert!(
        first.contains(&format!("http://127.0.0.1:{port}/")),
        "{first}"
    );
    assert!(!first.contains("warning"));
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .proxy(None)
        .build()
        .into();
    let base = format!("http://127.0.0.1:{port}");
    let mut r = agent.get(format!("{base}/signin")).call().unwrap();
    let page = r.body_mut().read_to_string().unwrap();
    let i = page.find("name=\"csrf\" value=\"").unwrap() + 19;
    let token = &page[i..i + 64];
    let r = agent
        .post(format!("{base}/signin"))
        .send_form([
            ("csrf", token),
            ("name", "trainer1"),
            ("password", "a long enough pass phrase"),
        ])
        .unwrap();
    assert_eq!(r.status(), 303);
    let r = agent
        .get(format!("{base}/day?date=2027-01-04"))
        .call()
        .unwrap();
    assert_eq!(r.status(), 200);

    // Ctrl-C: SIGINT to the server's own process id.
    let status = Command::new("kill")
        .args(["-INT", &server.id().to_string()])
        .status()
        .unwrap();
    assert!(status.success());
    let t0 = Instant::now();
    let code = loop {
        if let Some(s) = server.try_wait().unwrap() {
            break s;
        }
        assert!(
            t0.elapsed() < Duration::from_secs(20),
            "the server did not stop"
        );
        std::thread::sleep(Duration::from_millis(50));
    };
    assert!(code.success(), "exit {code:?}");
    let mut rest = String::new();
    std::io::Read::read_to_string(&mut stderr, &mut rest).unwrap();
    assert!(rest.contains("desk: stopped"), "{rest}");
}

#[test]
fn a_non_loopback_address_is_warned_about() {
    use dosewright::desk::listen_warning;
    let any: SocketAddr = "0.0.0.0:8470".parse().unwrap();
    let w = listen_warning(any).unwrap();
    assert!(w.contains("reachable from the network"));
    for local in ["127.0.0.1:8470", "[::1]:8470"] {
        assert!(listen_warning(local.parse().unwrap()).is_none(), "{local}");
    }
}
