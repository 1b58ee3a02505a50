//! The `dosewright` binary: parse the command line, run the command, print, exit.

use clap::Parser;
use std::io::Write;
use std::process::ExitCode;

/// On SIGINT or SIGTERM, let the output being renamed into place finish first (see
/// `dosewright::output`), then end as the signal would have.
#[cfg(unix)]
fn finish_renames_on_a_signal() {
    use signal_hook::consts::{SIGINT, SIGTERM};
    if let Ok(mut signals) = signal_hook::iterator::Signals::new([SIGINT, SIGTERM]) {
        std::thread::spawn(move || {
            if let Some(signal) = signals.forever().next() {
                let _guard = dosewright::output::commit_guard();
                let _ = signal_hook::low_level::emulate_default_handler(signal);
                std::process::exit(128 + signal);
            }
        });
    }
}

fn main() -> ExitCode {
    let cli = dosewright::cli::Cli::parse();
    // rayon reads RAYON_NUM_THREADS itself when --threads is not given; a bad value
    // is refused here, in the binary, before any work.
    if let dosewright::cli::Command::Cohort(args) = &cli.command {
        let value = std::env::var_os("RAYON_NUM_THREADS");
        let problem = dosewright::cli::values::rayon_threads_problem(value.as_deref());
        if let (None, Some(message)) = (args.threads, problem) {
            eprintln!("error: {message}");
            return ExitCode::from(2);
        }
    }
    // The desk's server stops gracefully on the same signals (src/desk/cli.rs) and
    // writes no output files, so it keeps its own handler.
    #[cfg(unix)]
    if !matches!(cli.command, dosewright::cli::Command::Desk(_)) {
        finish_renames_on_a_signal();
    }
    match dosewright::commands::run(&cli.command) {
        Ok(printed) => {
            let mut out = std::io::stdout().lock();
            // A closed pipe (e.g. `| head`) is not an error worth a panic.
            let _ = out.write_all(printed.stdout.as_bytes());
            let _ = out.flush();
            eprint!("{}", printed.stderr);
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(e.exit_code() as u8)
        }
    }
}
