//! `desk`: serve the desk, create the demo register, manage accounts. The command
//! layer of the desk: the clock, the OS user and the password prompt are read here.

use super::Printed;
use crate::cli::{AccountAction, DeskAction, DeskArgs};
use crate::desk::accounts::{self, Role};
use crate::desk::{Config, DEFAULT_PORT, listen_warning};
use crate::error::Error;
use crate::register::{SqliteStore, Stamp};
use std::io::BufRead;
use std::net::SocketAddr;
use std::time::Duration;

/// Who runs the command: the OS user (read here, in the command layer).
fn os_user() -> String {
    std::env::var("USER")
        .or_else(|_| std::env::var("LOGNAME"))
        .unwrap_or_else(|_| "unknown-os-user".to_string())
}

fn stamp() -> Result<Stamp, Error> {
    Stamp::new(&format!("os:{}", os_user()), chrono::Utc::now())
}

fn read_password(from_stdin: bool) -> Result<String, Error> {
    if from_stdin {
        let mut line = String::new();
        std::io::stdin()
            .lock()
            .read_line(&mut line)
            .map_err(|e| Error::Usage(format!("--password-stdin: cannot read: {e}")))?;
        return Ok(line.trim_end_matches(['\n', '\r']).to_string());
    }
    let first = rpassword::prompt_password("Password: ").map_err(|e| {
        Error::Usage(format!(
            "cannot read the password from the terminal ({e}); use --password-stdin"
        ))
    })?;
    accounts::check_password(&first)?;
    let again = rpassword::prompt_password("Again: ")
        .map_err(|e| Error::Usage(format!("cannot read the password: {e}")))?;
    if first != again {
        return Err(Error::Usage(
            "password: the two entries differ; nothing was changed".to_string(),
        ));
    }
    Ok(first)
}

fn connect(register: &std::path::Path) -> Result<rusqlite::Connection, Error> {
    // Opening the register migrates it to the schema holding the accounts.
    SqliteStore::open(register)?;
    accounts::connect(register)
}

/// Run `dosewright desk ...`.
pub fn run(args: &DeskArgs) -> Result<Printed, Error> {
    match &args.action {
        DeskAction::Serve {
            register,
            listen,
            port,
            idle_minutes,
            behind_tls,
        } => {
            if *idle_minutes == 0 {
                return Err(Error::Usage(
                    "--idle-minutes: 0 is not allowed; give 1 or more".to_string(),
                ));
            }
            let mut config = Config::new(register.clone());
            config.listen = listen.unwrap_or_else(|| {
                SocketAddr::from(([127, 0, 0, 1], port.unwrap_or(DEFAULT_PORT)))
            });
            config.idle_timeout = Duration::from_secs(idle_minutes.saturating_mul(60));
            config.secure_cookies = *behind_tls;
            serve_blocking(config)?;
            Ok(Printed::default())
        }
        DeskAction::Demo { register, start } => {
            let start = start.unwrap_or_else(|| crate::desk::demo::monday_of(crate::desk::today()));
            let codes = crate::desk::demo::create(register, start, None, 0, &stamp()?)?;
            Ok(Printed {
                stdout: format!(
                    "{}: created with {} participants ({}), protocol from {start}\nnext: dosewright desk account add {} --name trainer1 --role trainer\n      dosewright desk serve {}\n",
                    register.display(),
                    codes.len(),
                    codes.join(", "),
                    register.display(),
                    register.display()
                ),
                stderr: String::new(),
            })
        }
        DeskAction::Account { action } => account(action),
    }
}

fn account(action: &AccountAction) -> Result<Printed, Error> {
    let out = |s: String| {
        Ok(Printed {
            stdout: s,
            stderr: String::new(),
        })
    };
    match action {
        AccountAction::Add {
            register,
            name,
            role,
            password_stdin,
        } => {
            let role = Role::parse(role)?;
            accounts::check_name(name)?;
            let mut conn = connect(register)?;
            if accounts::find(&conn, name)?.is_some() {
                return Err(Error::Usage(format!(
                    "--name: an account \"{name}\" already exists; choose another name"
                )));
            }
            let password = read_password(*password_stdin)?;
            accounts::create(&mut conn, name, role, &password, &stamp()?)?;
            out(format!("account {name} ({}) created\n", role.name()))
        }
        AccountAction::Password {
            register,
            name,
            password_stdin,
        } => {
            let mut conn = connect(register)?;
            if accounts::find(&conn, name)?.is_none() {
                return Err(Error::Usage(format!(
                    "--name: there is no account \"{name}\""
                )));
            }
            let password = read_password(*password_stdin)?;
            accounts::set_password(&mut conn, name, &password, &stamp()?)?;
            out(format!("account {name}: password changed\n"))
        }
        AccountAction::Disable { register, name } | AccountAction::Enable { register, name } => {
            let disable = matches!(action, AccountAction::Disable { .. });
            let mut conn = connect(register)?;
            accounts::set_disabled(&mut conn, name, disable, &stamp()?)?;
            out(format!(
                "account {name}: {}\n",
                if disable { "disabled" } else { "enabled" }
            ))
        }
        AccountAction::List { register } => {
            let conn = connect(register)?;
            let mut s = String::new();
            for a in accounts::list(&conn)? {
                s.push_str(&format!(
                    "{}\t{}\t{}\n",
                    a.name,
                    a.role.name(),
                    if a.disabled { "disabled" } else { "active" }
                ));
            }
            out(s)
        }
    }
}

/// Start a tokio runtime, serve until Ctrl-C (or SIGTERM), finish what is in
/// flight, return.
fn serve_blocking(config: Config) -> Result<(), Error> {
    let rt = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
        .map_err(|e| Error::Internal(format!("starting the server runtime: {e}")))?;
    rt.block_on(async move {
        let listener = tokio::net::TcpListener::bind(config.listen)
            .await
            .map_err(|e| Error::Usage(format!("--listen {}: cannot listen: {e}", config.listen)))?;
        let addr = listener
            .local_addr()
            .map_err(|e| Error::Internal(e.to_string()))?;
        let st = crate::desk::state(config)?;
        if let Some(w) = listen_warning(addr) {
            eprintln!("{w}");
        }
        eprintln!(
            "desk: serving {} at http://{addr}/ (Ctrl-C stops)",
            st.config.register.display()
        );
        // Re-plan every participant once in the background, so the first day view
        // does not wait for it (a failure here shows on the page when asked for).
        let warm = st.clone();
        tokio::task::spawn_blocking(move || warm.warm_up());
        crate::desk::serve_on(listener, st, shutdown_signal()).await?;
        eprintln!("desk: stopped");
        Ok(())
    })
}

async fn shutdown_signal() {
    let ctrl_c = async {
        let _ = tokio::signal::ctrl_c().await;
    };
    #[cfg(unix)]
    let term = async {
        match tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate()) {
            Ok(mut s) => {
                s.recv().await;
            }
            Err(_) => std::future::pending::<()>().await,
        }
    };
    #[cfg(not(unix))]
    let term = std::future::pending::<()>();
    tokio::select! {
        _ = ctrl_c => {},
        _ = term => {},
    }
}
