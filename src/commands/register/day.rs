//! `register day`: the day view of a register on the command line.

use crate::cli::{DayArgs, DayFormat};
use crate::commands::{Printed, check_outputs, deliver};
use crate::desk::{print, views};
use crate::error::Error;
use crate::register::SqliteStore;

/// Run `register day`.
pub fn run(args: &DayArgs) -> Result<Printed, Error> {
    check_outputs(args.out.as_deref(), None, &[args.register.as_path()])?;
    // The clock is read here, in the command layer.
    let date = args
        .date
        .unwrap_or_else(|| chrono::Local::now().date_naive());
    let store = SqliteStore::open_read_only(&args.register)?;
    let view = views::day_view(&store, &views::Cache::default(), date)?;
    let name = args.register.display().to_string();
    let mut printed = Printed::default();
    let text = match args.format {
        DayFormat::Table => print::table(&view, &name),
        DayFormat::Html => print::html(&view, &name),
        DayFormat::Csv => {
            printed.stderr = print::cautions_text(&view);
            print::csv(&view)?
        }
    };
    deliver(printed, text, args.out.as_deref())
}
