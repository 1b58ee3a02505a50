//! `check`: validate a plan and print its resolved assumptions, or validate a study
//! file (told apart by its tables) and print its arms and the screening summary.

use super::schedule::schedule_report;
use super::{Printed, display_units, load};
use crate::cli::CheckArgs;
use crate::error::{Error, InputError, Location};
use crate::report;
use std::path::Path;

/// Run `check`.
pub fn run(args: &CheckArgs) -> Result<Printed, Error> {
    if let Some(path) = &args.plan {
        let (name, text) = crate::input::read_text(path)?;
        if is_study_text(&text) {
            let study = crate::study::parse_study(&name, &text)?;
            return Ok(Printed {
                stdout: report::check::render_study(
                    &study,
                    crate::simulate::warnings::study_is_vigorous(&study),
                ),
                stderr: String::new(),
            });
        }
    }
    let plan = load(args.plan.as_deref())?;
    let r = schedule_report(&plan)?;
    Ok(Printed {
        stdout: report::check::render(&plan, &r, display_units(&args.display)),
        stderr: String::new(),
    })
}

/// Whether TOML text is a study file rather than a plan: it has a study's own tables
/// (`[[arm]]`, `[study]` or `[synthetic]`) and no `[participant]`
/// (docs/file-formats.md). Text that does not parse is not called a study.
pub fn is_study_text(text: &str) -> bool {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let Ok(table) = text.parse::<toml::Table>() else {
        return false;
    };
    !table.contains_key("participant")
        && crate::study::STUDY_ONLY_TABLES
            .iter()
            .any(|k| table.contains_key(*k))
}

/// The error for a study file given where one plan is wanted, naming the commands
/// that take a study; None when the file is not a study (or cannot be read).
pub(crate) fn study_given_for_a_plan(path: &Path) -> Option<Error> {
    let (name, text) = crate::input::read_text(path).ok()?;
    is_study_text(&text).then(|| {
        Error::Input(InputError {
            location: Location::file(&name),
            key: None,
            message: format!(
                "this is a study file (it has [[arm]] tables), not a plan; run a study with `dosewright cohort {name} --roster FILE` (or --synthetic N), print its sheets with `dosewright sheets {name} --roster FILE --week N`, or validate it with `dosewright check {name}`"
            ),
        })
    })
}
