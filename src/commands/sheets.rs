//! `sheets`: weekly session sheets for the supervising trainer.

use super::{LogInput, Printed, check_outputs, deliver, display_units};
use crate::cli::{PaperArg, SheetsArgs, SheetsFormat};
use crate::error::Error;
use crate::plan::Plan;
use crate::report::units::Units;
use crate::report::{self, ScheduleReport};
use crate::safety::Warning;
use crate::simulate::simulate_observed;
use chrono::NaiveDate;
use std::path::Path;

/// Which protocol weeks `sheets` prints.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WeekSelection {
    /// One protocol week.
    Week(u32),
    /// Every protocol week that overlaps the two dates (both included).
    Dates(NaiveDate, NaiveDate),
}

/// The protocol (exercise) weeks a selection names, in order. A week outside the
/// protocol, a start date after the end date, or dates that no protocol week
/// overlaps are usage errors. Needs only the plan, so it runs before the simulation.
pub fn sheet_weeks(plan: &Plan, selection: WeekSelection) -> Result<Vec<u32>, Error> {
    let p = &plan.protocol;
    let week_start = |w: u32| p.start + chrono::Days::new(7 * u64::from(w - 1));
    let day = |d: NaiveDate| d.format("%a %Y-%m-%d");
    match selection {
        WeekSelection::Week(n) if (1..=p.weeks).contains(&n) => Ok(vec![n]),
        WeekSelection::Week(n) => {
            let what = if n > p.weeks && n <= p.total_weeks() {
                "a follow-up week, with no sessions"
            } else {
                "not a week of the protocol"
            };
            Err(Error::Usage(format!(
                "--week {n}: {what}; allowed 1 to {} (the exercise weeks of {})",
                p.weeks, plan.source_name
            )))
        }
        WeekSelection::Dates(from, to) if from > to => Err(dates_upside_down(from, to)),
        WeekSelection::Dates(from, to) => {
            let weeks: Vec<u32> = (1..=p.weeks)
                .filter(|&w| week_start(w) <= to && week_start(w) + chrono::Days::new(6) >= from)
                .collect();
            if weeks.is_empty() {
                return Err(Error::Usage(format!(
                    "--from {from} --to {to}: no exercise week overlaps these dates; the exercise weeks of {} run from {} (week 1) to {} (week {})",
                    plan.source_name,
                    day(p.start),
                    day(week_start(p.weeks) + chrono::Days::new(6)),
                    p.weeks
                )));
            }
            Ok(weeks)
        }
    }
}

fn dates_upside_down(from: NaiveDate, to: NaiveDate) -> Error {
    Error::Usage(format!(
        "--from {from} is after --to {to}; give the earlier date with --from"
    ))
}

/// One participant's sheets: the planned sessions of `scenario` (default the first),
/// re-planned from the log when there is one, for `weeks`, with the screening
/// outcome; and the warnings the plan and the log earn.
pub fn sheet_input(
    plan: &Plan,
    log: &LogInput,
    scenario: Option<&str>,
    weeks: Vec<u32>,
) -> Result<(report::sheets::SheetInput, Vec<Warning>), Error> {
    let sim = simulate_observed(plan, log.observed.as_ref())?;
    let mut r = ScheduleReport::new(plan, sim);
    r.warnings.extend(log.warnings.iter().cloned());
    let index = super::scenario_index(&r, scenario)?;
    let input = report::sheets::SheetInput {
        sessions: report::sessions::session_plan(plan, &r.scenarios[index]),
        weeks,
        screening: r.screening,
        log: log.summary.clone(),
        units: Units::default(),
        delivered: log
            .observed
            .as_ref()
            .map(report::delivered::DeliveredLog::of),
    };
    Ok((input, r.warnings))
}

/// The sheets of every participant of a study's roster in its arm, in roster order.
/// Participants of a control arm have no sessions and get no sheet (a note says so).
fn study_sheet_inputs(
    study_path: &Path,
    roster: &Path,
    randomise: bool,
    seed: u64,
    selection: WeekSelection,
    scenario: Option<&str>,
) -> Result<(Vec<report::sheets::SheetInput>, Vec<Warning>, String), Error> {
    let study = crate::study::load_study(study_path)?;
    let rows = crate::study::roster::load_roster(roster, &study)?;
    let who: Vec<(Option<usize>, crate::model::Sex)> = rows
        .iter()
        .map(|r| (r.arm, r.participant.subject.sex))
        .collect();
    let allocation = crate::study::allocation::allocate(&study, &who, randomise, seed)
        .map_err(|_| super::already_allocated())?;
    let Some(arms) = allocation.arms().map(<[usize]>::to_vec) else {
        return Err(Error::Usage(format!(
            "{}: the roster gives no arm, so the sheets cannot know each participant's dose; add an arm column, or use --randomise (with --seed, as for cohort)",
            roster.display()
        )));
    };
    let mut inputs = Vec::new();
    let mut warnings = Vec::new();
    let mut controls = Vec::new();
    for (row, arm) in rows.iter().zip(arms) {
        if study.arms[arm].is_control() {
            controls.push(row.participant.id.clone());
            continue;
        }
        let plan = study.plan_for(&row.participant, arm);
        let weeks = sheet_weeks(&plan, selection)?;
        let (input, w) = sheet_input(&plan, &LogInput::default(), scenario, weeks)?;
        inputs.push(input);
        warnings.extend(w.into_iter().map(|mut x| {
            x.message = format!("{}: {}", row.participant.id, x.message);
            x
        }));
    }
    let notes = if controls.is_empty() {
        String::new()
    } else {
        format!(
            "no sheet for {} participant(s) of a control arm (no sessions): {}\n",
            controls.len(),
            controls.join(", ")
        )
    };
    if inputs.is_empty() {
        return Err(Error::Usage(format!(
            "{}: every participant is in a control arm; there are no sessions to print",
            roster.display()
        )));
    }
    Ok((inputs, warnings, notes))
}

/// Run `sheets`.
pub fn run(args: &SheetsArgs) -> Result<Printed, Error> {
    let units = display_units(&args.display);
    if args.format == SheetsFormat::Html && args.out.is_none() {
        return Err(Error::Usage(
            "--format html writes a file: give --out FILE.html (or --format text to print the sheets here)"
                .to_string(),
        ));
    }
    let selection = match (args.week, args.from, args.to) {
        (Some(n), _, _) => WeekSelection::Week(n),
        (None, Some(f), Some(t)) => WeekSelection::Dates(f, t),
        _ => unreachable!("clap requires --week or --from with --to"),
    };
    if let WeekSelection::Dates(f, t) = selection
        && f > t
    {
        return Err(dates_upside_down(f, t));
    }
    let mut inputs = super::log_inputs(args.plan.as_deref(), &args.logged);
    inputs.extend(args.roster.as_deref());
    check_outputs(args.out.as_deref(), None, &inputs)?;
    let scenario = args.scenario.as_deref();
    let (mut inputs, warnings, notes) = match (&args.roster, &args.plan) {
        (Some(roster), Some(study)) => study_sheet_inputs(
            study,
            roster,
            args.randomise,
            args.seed,
            selection,
            scenario,
        )?,
        _ => {
            let (plan, log) = super::plan_and_logged(args.plan.as_deref(), &args.logged, Ok)?;
            let weeks = sheet_weeks(&plan, selection)?;
            let (input, warnings) = sheet_input(&plan, &log, scenario, weeks)?;
            (vec![input], warnings, String::new())
        }
    };
    for i in &mut inputs {
        i.units = units;
    }
    let text = match args.format {
        SheetsFormat::Html => {
            let paper = match args.paper {
                PaperArg::A4 => report::sheets::Paper::A4,
                PaperArg::Letter => report::sheets::Paper::Letter,
            };
            report::sheets::html(&inputs, paper)
        }
        SheetsFormat::Text => report::sheets::text(&inputs),
    };
    let mut printed = Printed::default();
    if !warnings.is_empty() {
        printed.stderr = report::table::warnings_text(&warnings);
    }
    printed.stderr.push_str(&notes);
    deliver(printed, text, args.out.as_deref())
}
