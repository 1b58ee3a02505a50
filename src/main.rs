//! The `dosewright` binary: parse the command line, run the command, print, exit.

use clap::Parser;
use std::io::Write;
use std::process::ExitCode;

fn main() -> ExitCode {
    let cli = dosewright::cli::Cli::parse();
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
