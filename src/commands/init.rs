//! `init`: write a commented starter plan.

use super::{Printed, write_output};
use crate::cli::InitArgs;
use crate::error::Error;
use crate::plan;

/// Run `init`.
pub fn run(args: &InitArgs) -> Result<Printed, Error> {
    let text = plan::starter::STARTER_PLAN;
    // The starter must itself be a valid plan (tested); check before writing.
    plan::parse_plan("starter plan", text)?;
    match args
        .file
        .as_deref()
        .filter(|f| !crate::output::is_stdout(f))
    {
        Some(f) => {
            write_output(f, text.as_bytes(), true)?;
            Ok(Printed {
                stdout: String::new(),
                stderr: format!(
                    "wrote {}; edit it, then run `dosewright check {}`\n",
                    f.display(),
                    f.display()
                ),
            })
        }
        None => Ok(Printed {
            stdout: text.to_string(),
            stderr: String::new(),
        }),
    }
}
