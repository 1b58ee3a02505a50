//! The commands, as library calls: each returns what to print, or an error.

use crate::activity::compendium;
use crate::cli::{
    Command, CompareFormat, DisplayArgs, EnergyArg, FitParameterArg, FormatArg, GoalFormat,
    LogAction, LogArgs, PaperArg, SheetsFormat, UnitsArg,
};
use crate::error::Error;
use crate::files::{check_target, refuse_overwriting_inputs, write_atomic};
use crate::plan::{self, Plan};
use crate::report::units::{EnergyUnit, UnitSystem, Units};
use crate::report::{self, ScheduleReport};
use crate::safety::Warning;
use crate::simulate::band::projection_band;
use crate::simulate::goal::{GoalRequest, allowed_range, solve_observed};
use crate::simulate::observed::Observed;
use crate::simulate::{simulate, simulate_observed};
use chrono::{DateTime, NaiveDate, Utc};
use std::path::{Path, PathBuf};

/// What a successful command prints.
#[derive(Debug, Default, Clone, PartialEq, Eq)]
pub struct Printed {
    /// Standard output.
    pub stdout: String,
    /// Standard error (notes and warnings beside machine-readable output).
    pub stderr: String,
}

/// Load a plan file, or the built-in demo when none is named.
pub fn load(path: Option<&Path>) -> Result<Plan, Error> {
    match path {
        Some(p) => plan::load_plan(p),
        None => plan::parse_plan(plan::starter::DEMO_NAME, plan::starter::DEMO_PLAN),
    }
}

/// Validate, simulate and assemble the schedule report of a plan.
pub fn schedule_report(plan: &Plan) -> Result<ScheduleReport, Error> {
    let sim = simulate(plan)?;
    Ok(ScheduleReport::new(plan, sim))
}

/// The schedule report with the projection band, re-planned from measured data when
/// there is any.
pub fn schedule_report_with_band(
    plan: &Plan,
    observed: Option<&Observed>,
) -> Result<ScheduleReport, Error> {
    let sim = simulate_observed(plan, observed)?;
    let band = projection_band(plan, &sim, observed)?;
    let mut r = ScheduleReport::new(plan, sim);
    r.projection_band = Some(band);
    Ok(r)
}

/// What a log contributes: the measured data, its warnings and a summary for reports.
#[derive(Debug, Clone, Default)]
pub struct LogInput {
    /// Measured data for the simulation.
    pub observed: Option<Observed>,
    /// The log's own warnings (e.g. implausible jumps).
    pub warnings: Vec<Warning>,
    /// Summary for reports.
    pub summary: Option<report::LogSummary>,
}

/// Read the log named on the command line, if any, up to `as_of`.
pub fn read_log(
    plan: &Plan,
    log: Option<&Path>,
    as_of: Option<NaiveDate>,
) -> Result<LogInput, Error> {
    let Some(path) = log else {
        return Ok(LogInput::default());
    };
    let (log, warnings) = crate::log::load_log(path, plan, as_of)?;
    let observed = Observed::from_log(plan, &log, as_of);
    let summary = report::LogSummary {
        path: log.path.clone(),
        as_of: observed.as_of,
        weigh_ins: observed.weigh_ins.len(),
        sessions: observed.sessions.len(),
    };
    Ok(LogInput {
        observed: Some(observed),
        warnings,
        summary: Some(summary),
    })
}

/// The schedule report of a plan with its log (if any): band, log summary, log warnings.
pub fn schedule_report_logged(plan: &Plan, log: &LogInput) -> Result<ScheduleReport, Error> {
    let mut r = schedule_report_with_band(plan, log.observed.as_ref())?;
    r.warnings.extend(log.warnings.iter().cloned());
    r.log = log.summary.clone();
    Ok(r)
}

/// What `calendar` asks for besides the plan and the log.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct CalendarRequest {
    /// Whose sessions (None: the first scenario).
    pub scenario: Option<String>,
    /// DTSTAMP (None: the protocol start at 00:00 UTC).
    pub stamp: Option<DateTime<Utc>>,
    /// First date to include.
    pub from: Option<NaiveDate>,
    /// Last date to include.
    pub to: Option<NaiveDate>,
    /// Display units of the descriptions.
    pub units: Units,
}

/// A written calendar: the file's text and what it holds.
#[derive(Debug, Clone, PartialEq)]
pub struct CalendarFile {
    /// The iCalendar text (CRLF line ends).
    pub text: String,
    /// Events in it.
    pub events: usize,
    /// First and last session date.
    pub span: (NaiveDate, NaiveDate),
    /// The plan's and the log's warnings.
    pub warnings: Vec<Warning>,
}

/// Refuse a `--from` after `--to`.
pub fn check_span(from: Option<NaiveDate>, to: Option<NaiveDate>) -> Result<(), Error> {
    match (from, to) {
        (Some(f), Some(t)) if f > t => Err(Error::Usage(format!(
            "--from {f} is after --to {t}; give a span that runs forward"
        ))),
        _ => Ok(()),
    }
}

/// The calendar of a plan (re-planned from its log, if any): the sessions of one
/// scenario within the span, as an iCalendar file.
pub fn calendar_file(
    plan: &Plan,
    log: &LogInput,
    request: &CalendarRequest,
) -> Result<CalendarFile, Error> {
    check_span(request.from, request.to)?;
    let sim = simulate_observed(plan, log.observed.as_ref())?;
    let mut r = ScheduleReport::new(plan, sim);
    r.warnings.extend(log.warnings.iter().cloned());
    let index = r.scenario_index(request.scenario.as_deref())?;
    let all = report::sessions::session_plan(plan, &r.scenarios[index]);
    let chosen = report::calendar::within(&all, request.from, request.to);
    let dates: Vec<NaiveDate> = chosen
        .weeks
        .iter()
        .flat_map(|w| w.sessions.iter().map(|s| s.date))
        .collect();
    let (Some(first), Some(last)) = (dates.first(), dates.last()) else {
        let span = match (request.from, request.to) {
            (Some(f), Some(t)) => format!(" from {f} to {t}"),
            (Some(f), None) => format!(" on or after {f}"),
            (None, Some(t)) => format!(" on or before {t}"),
            (None, None) => String::new(),
        };
        let sessions: Vec<NaiveDate> = all
            .weeks
            .iter()
            .flat_map(|w| w.sessions.iter().map(|s| s.date))
            .collect();
        let runs = match (sessions.first(), sessions.last()) {
            (Some(a), Some(b)) => format!("the plan's sessions run from {a} to {b}"),
            _ => "the plan has no session at all (every session date is closed)".to_string(),
        };
        return Err(Error::Usage(format!(
            "no planned session{span} to put in a calendar; {runs}"
        )));
    };
    let span = (*first, *last);
    report::calendar::check_times(&chosen, &plan.calendar)?;
    let stamp = request.stamp.unwrap_or_else(|| {
        plan.protocol
            .start
            .and_time(chrono::NaiveTime::MIN)
            .and_utc()
    });
    let text = report::calendar::render(
        &chosen,
        &plan.calendar,
        stamp,
        &r.screening,
        &r.warnings,
        request.units,
    );
    Ok(CalendarFile {
        text,
        events: dates.len(),
        span,
        warnings: r.warnings,
    })
}

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
    let index = r.scenario_index(scenario)?;
    let input = report::sheets::SheetInput {
        sessions: report::sessions::session_plan(plan, &r.scenarios[index]),
        weeks,
        screening: r.screening,
        log: log.summary.clone(),
        units: Units::default(),
    };
    Ok((input, r.warnings))
}

/// The plan with ad-hoc scenarios from `--add-scenario` appended.
pub fn with_added_scenarios(mut plan: Plan, specs: &[String]) -> Result<Plan, Error> {
    for spec in specs {
        let sc = plan::parse_scenario_spec(spec)?;
        if plan.scenarios.iter().any(|s| s.name == sc.name) {
            return Err(Error::Usage(format!(
                "--add-scenario \"{spec}\": the plan already has a scenario named \"{}\"; choose another name",
                sc.name
            )));
        }
        plan.scenarios.push(sc);
    }
    Ok(plan)
}

/// The compare report: checkpoints, band, and the dose-response table when doses are given.
pub fn compare_report(
    plan: &Plan,
    at_weeks: &[u32],
    doses: &[f64],
) -> Result<report::compare::CompareReport, Error> {
    compare_report_logged(plan, &LogInput::default(), at_weeks, doses)
}

/// [`compare_report`] re-planned from a log.
pub fn compare_report_logged(
    plan: &Plan,
    log: &LogInput,
    at_weeks: &[u32],
    doses: &[f64],
) -> Result<report::compare::CompareReport, Error> {
    let total = plan.protocol.total_weeks();
    if let Some(bad) = at_weeks.iter().find(|w| **w < 1 || **w > total) {
        return Err(Error::Usage(format!(
            "--at-week {bad}: outside the plan's weeks; allowed 1 to {total} (protocol and follow-up)"
        )));
    }
    let amount = plan.protocol.dose.amount;
    let (lo, hi) = allowed_range(&amount);
    if let Some(bad) = doses
        .iter()
        .find(|d| !d.is_finite() || **d < lo || **d > hi)
    {
        return Err(Error::Usage(format!(
            "--doses: {bad} is out of range for {}; allowed {lo} to {hi} {}",
            amount.key(),
            amount.unit()
        )));
    }
    let schedule = schedule_report_logged(plan, log)?;
    let weeks = report::compare::checkpoints(plan, at_weeks);
    let dose_response = if doses.is_empty() {
        None
    } else {
        let mut rows = Vec::new();
        for &d in doses {
            let mut p = plan.clone();
            p.protocol.dose.amount = amount.with_value(d);
            let sim = simulate_observed(&p, log.observed.as_ref())?;
            let m0 = sim.baseline.mass_kg;
            let f0 = sim.baseline.fat_mass_kg;
            rows.push(report::compare::DoseRow {
                dose: d,
                scenarios: sim
                    .scenarios
                    .iter()
                    .map(|sc| report::compare::DoseScenario {
                        name: sc.name.clone(),
                        rows: weeks
                            .iter()
                            .map(|&n| {
                                let w = &sc.weeks[n as usize - 1];
                                report::compare::DosePoint {
                                    week: n,
                                    mass_change_kg: w.end.mass_kg - m0,
                                    fat_mass_change_kg: w.end.fat_mass_kg - f0,
                                    minutes_per_session: w.minutes_per_session,
                                }
                            })
                            .collect(),
                    })
                    .collect(),
            });
        }
        Some(report::compare::DoseResponse {
            dose_unit: amount.key(),
            doses: rows,
        })
    };
    let band = schedule.projection_band.clone().expect("computed above");
    Ok(report::compare::CompareReport::new(
        plan,
        &schedule,
        &band,
        weeks,
        dose_response,
    ))
}

/// Refuse an output path that names one of the command's inputs, or that cannot be
/// written (checked before any file, such as a chart, is written).
fn refuse_inputs(out: &Option<PathBuf>, plan: &Path, log: &Option<PathBuf>) -> Result<(), Error> {
    if let Some(o) = out {
        let mut inputs = vec![plan];
        if let Some(l) = log {
            inputs.push(l.as_path());
        }
        refuse_overwriting_inputs(o, &inputs)?;
        check_target(o, false)?;
    }
    Ok(())
}

/// The unit system of `--units`.
fn unit_system(units: UnitsArg) -> UnitSystem {
    match units {
        UnitsArg::Metric => UnitSystem::Metric,
        UnitsArg::Us => UnitSystem::Us,
    }
}

/// The display units of `--units` and `--energy`.
fn display_units(d: &DisplayArgs) -> Units {
    Units {
        system: unit_system(d.units),
        energy: match d.energy {
            EnergyArg::Kcal => EnergyUnit::Kcal,
            EnergyArg::Kj => EnergyUnit::Kj,
        },
    }
}

/// Refuse display units other than metric and kcal with a machine-readable format:
/// JSON and CSV are the machine contract, in the units of plan files and logs, and
/// converting them silently, or ignoring the option silently, would both mislead.
fn refuse_display_units(units: Units, format: &str) -> Result<(), Error> {
    if units.is_model_units() {
        return Ok(());
    }
    let mut given = Vec::new();
    if units.system == UnitSystem::Us {
        given.push("--units us");
    }
    if units.energy == EnergyUnit::Kj {
        given.push("--energy kj");
    }
    Err(Error::Usage(format!(
        "{} with --format {format}: JSON and CSV are always metric and kcal (kg, km/h, kcal, as in plan files and logs); leave out --units and --energy, or choose a human-readable format such as --format table",
        given.join(" ")
    )))
}

/// Print to standard output, or write the file atomically and say so on standard error.
fn deliver(mut printed: Printed, text: String, out: &Option<PathBuf>) -> Result<Printed, Error> {
    match out {
        Some(o) => {
            write_atomic(o, text.as_bytes(), false)?;
            printed.stderr.push_str(&format!("wrote {}\n", o.display()));
        }
        None => printed.stdout = text,
    }
    Ok(printed)
}

/// Run one command.
pub fn run(command: &Command) -> Result<Printed, Error> {
    match command {
        Command::Schedule {
            plan,
            scenario,
            format,
            out,
            chart,
            logged: LogArgs { log, as_of },
            display,
        } => {
            let units = display_units(display);
            match format {
                FormatArg::Table => {}
                FormatArg::Csv => refuse_display_units(units, "csv")?,
                FormatArg::Json => refuse_display_units(units, "json")?,
            }
            if let (Some(o), Some(p)) = (out, plan) {
                refuse_overwriting_inputs(o, &[p.as_path()])?;
            }
            if let (Some(o), Some(l)) = (out, log) {
                refuse_overwriting_inputs(o, &[l.as_path()])?;
            }
            if let Some(o) = out {
                check_target(o, false)?;
            }
            let plan = load(plan.as_deref())?;
            let log = read_log(&plan, log.as_deref(), *as_of)?;
            let r = schedule_report_logged(&plan, &log)?;
            let index = r.scenario_index(scenario.as_deref())?;
            let mut printed = Printed::default();
            let text = match format {
                FormatArg::Table => report::table::render(&r, index, units),
                FormatArg::Json => report::json::render(&r),
                FormatArg::Csv => {
                    printed.stderr = side_notes(&r);
                    report::csv::render(&r)
                }
            };
            if let Some(dir) = chart {
                printed
                    .stderr
                    .push_str(&charts::write_schedule_charts(dir, &r, units)?);
            }
            deliver(printed, text, out)
        }
        Command::Calendar {
            plan,
            scenario,
            out,
            stamp,
            from,
            to,
            logged: LogArgs { log, as_of },
            display,
        } => {
            let stamp = stamp
                .as_deref()
                .map(report::calendar::parse_stamp)
                .transpose()?;
            check_span(*from, *to)?;
            let inputs: Vec<&Path> = plan
                .iter()
                .chain(log.iter())
                .map(PathBuf::as_path)
                .collect();
            refuse_overwriting_inputs(out, &inputs)?;
            check_target(out, false)?;
            let plan = load(plan.as_deref())?;
            let log = read_log(&plan, log.as_deref(), *as_of)?;
            let request = CalendarRequest {
                scenario: scenario.clone(),
                stamp,
                from: *from,
                to: *to,
                units: display_units(display),
            };
            let cal = calendar_file(&plan, &log, &request)?;
            write_atomic(out, cal.text.as_bytes(), false)?;
            let mut stderr = format!(
                "wrote {}: {} events from {} to {}\n",
                out.display(),
                cal.events,
                cal.span.0,
                cal.span.1
            );
            for w in &cal.warnings {
                stderr.push_str(&format!("warning [{}]: {}\n", w.code, w.message));
            }
            Ok(Printed {
                stdout: String::new(),
                stderr,
            })
        }
        Command::Sheets {
            plan,
            week,
            from,
            to,
            scenario,
            format,
            out,
            paper,
            logged: LogArgs { log, as_of },
            roster,
            randomise,
            seed,
            display,
        } => {
            let units = display_units(display);
            if *format == SheetsFormat::Html && out.is_none() {
                return Err(Error::Usage(
                    "--format html writes a file: give --out FILE.html (or --format text to print the sheets here)"
                        .to_string(),
                ));
            }
            let selection = match (week, from, to) {
                (Some(n), _, _) => WeekSelection::Week(*n),
                (None, Some(f), Some(t)) => WeekSelection::Dates(*f, *t),
                _ => unreachable!("clap requires --week or --from with --to"),
            };
            if let WeekSelection::Dates(f, t) = selection
                && f > t
            {
                return Err(dates_upside_down(f, t));
            }
            if let Some(o) = out {
                let mut inputs: Vec<&Path> = plan.iter().map(PathBuf::as_path).collect();
                inputs.extend(log.iter().map(PathBuf::as_path));
                inputs.extend(roster.iter().map(PathBuf::as_path));
                refuse_overwriting_inputs(o, &inputs)?;
                check_target(o, false)?;
            }
            let (mut inputs, warnings, notes) = match (roster, plan) {
                (Some(roster), Some(study)) => study_sheet_inputs(
                    study,
                    roster,
                    *randomise,
                    *seed,
                    selection,
                    scenario.as_deref(),
                )?,
                _ => {
                    let plan = load(plan.as_deref())?;
                    let weeks = sheet_weeks(&plan, selection)?;
                    let log = read_log(&plan, log.as_deref(), *as_of)?;
                    let (input, warnings) = sheet_input(&plan, &log, scenario.as_deref(), weeks)?;
                    (vec![input], warnings, String::new())
                }
            };
            for i in &mut inputs {
                i.units = units;
            }
            let text = match format {
                SheetsFormat::Html => {
                    let paper = match paper {
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
            deliver(printed, text, out)
        }
        Command::Compare {
            plan,
            at_week,
            add_scenario,
            doses,
            format,
            out,
            chart,
            logged: LogArgs { log, as_of },
            display,
        } => {
            let units = display_units(display);
            match format {
                CompareFormat::Table | CompareFormat::Markdown => {}
                CompareFormat::Csv => refuse_display_units(units, "csv")?,
                CompareFormat::Json => refuse_display_units(units, "json")?,
            }
            refuse_inputs(out, plan, log)?;
            let plan = with_added_scenarios(load(Some(plan))?, add_scenario)?;
            let log = read_log(&plan, log.as_deref(), *as_of)?;
            let r = compare_report_logged(&plan, &log, at_week, doses)?;
            let text = match format {
                CompareFormat::Table => report::compare::render_table(&r, units),
                CompareFormat::Markdown => report::compare::render_markdown(&r, units),
                CompareFormat::Json => report::json::render(&r),
                CompareFormat::Csv => report::compare::render_csv(&r),
            };
            let mut printed = Printed::default();
            if matches!(format, CompareFormat::Csv) {
                printed.stderr = side_notes_of(&r.warnings, &r.screening);
            }
            if let Some(dir) = chart {
                let schedule = schedule_report_logged(&plan, &log)?;
                printed
                    .stderr
                    .push_str(&charts::write_schedule_charts(dir, &schedule, units)?);
            }
            deliver(printed, text, out)
        }
        Command::Goal {
            plan,
            lose_kg,
            lose_percent,
            by_week,
            add_scenario,
            format,
            out,
            logged: LogArgs { log, as_of },
            display,
        } => {
            let units = display_units(display);
            if *format == GoalFormat::Json {
                refuse_display_units(units, "json")?;
            }
            refuse_inputs(out, plan, log)?;
            let plan = with_added_scenarios(load(Some(plan))?, add_scenario)?;
            let log = read_log(&plan, log.as_deref(), *as_of)?;
            let m0 = plan.participant.subject.mass_kg;
            let lose = match (lose_kg, lose_percent) {
                (Some(kg), _) => *kg,
                (None, Some(p)) => {
                    if !p.is_finite() || *p <= 0.0 || *p >= 100.0 {
                        return Err(Error::Usage(format!(
                            "--lose-percent {p}: allowed above 0 and below 100 (percent of baseline mass)"
                        )));
                    }
                    m0 * p / 100.0
                }
                (None, None) => unreachable!("clap requires one of the two"),
            };
            let request = GoalRequest {
                lose_kg: lose,
                by_week: *by_week,
            };
            crate::simulate::goal::check_request(&plan, &request)?;
            let mut schedule = schedule_report(&plan)?;
            schedule.warnings.extend(log.warnings.iter().cloned());
            let answers = solve_observed(&plan, &request, log.observed.as_ref())?;
            let r = report::goal::GoalReport::new(&schedule, request, answers);
            let text = match format {
                GoalFormat::Table => report::goal::render_table(&r, units),
                GoalFormat::Json => report::json::render(&r),
            };
            deliver(Printed::default(), text, out)
        }
        Command::Fit {
            plan,
            log,
            as_of,
            parameter,
            scenario,
            format,
            out,
            chart,
            display,
        } => {
            let units = display_units(display);
            if *format == GoalFormat::Json {
                refuse_display_units(units, "json")?;
            }
            refuse_inputs(out, plan, &Some(log.clone()))?;
            let plan = load(Some(plan))?;
            let input = read_log(&plan, Some(log), *as_of)?;
            let schedule = schedule_report(&plan)?;
            let index = schedule.scenario_index(scenario.as_deref())?;
            let param = match parameter {
                FitParameterArg::IntakeFraction => {
                    crate::simulate::fit::FitParameter::IntakeFraction
                }
                FitParameterArg::ActivityFraction => {
                    crate::simulate::fit::FitParameter::ActivityFraction
                }
            };
            let observed = input.observed.as_ref().expect("a log was read");
            let fit = crate::simulate::fit::fit(&plan, observed, index, param)?;
            let r = report::fit::FitReport::new(&schedule, &input, fit);
            let text = match format {
                GoalFormat::Table => report::fit::render_table(&r, units),
                GoalFormat::Json => report::json::render(&r),
            };
            let mut printed = Printed::default();
            if let Some(dir) = chart {
                let stem = charts::stem(&r.participant_id);
                let mut chart = report::fit::chart(&r, units);
                chart
                    .caption
                    .push_str(&charts::screening_caption(&r.screening));
                let paths = report::chart::write_charts(dir, &stem, &[("fit", chart)])?;
                printed.stderr = paths
                    .iter()
                    .map(|p| format!("wrote {}\n", p.display()))
                    .collect();
            }
            deliver(printed, text, out)
        }
        Command::Log {
            action:
                LogAction::Add {
                    plan,
                    log,
                    date,
                    weigh_in,
                    body_fat,
                    session,
                    code,
                    met,
                    hr,
                    rpe,
                    note,
                },
        } => {
            if log == plan || refuse_overwriting_inputs(log, &[plan.as_path()]).is_err() {
                return Err(Error::Usage(format!(
                    "--log {}: that is the plan file; give the log's CSV file",
                    log.display()
                )));
            }
            // clap lets `requires = "session"` be met by any member of the group
            // (clap issue 4707), so a weigh-in's misplaced session options are
            // refused here instead of being dropped silently.
            let session_only = [
                ("--code", code.is_some()),
                ("--met", met.is_some()),
                ("--hr", hr.is_some()),
                ("--rpe", rpe.is_some()),
            ];
            if weigh_in.is_some()
                && let Some((name, _)) = session_only.iter().find(|(_, given)| *given)
            {
                return Err(Error::Usage(format!(
                    "{name} describes a session; give it with --session, not with --weigh-in"
                )));
            }
            if session.is_some() && body_fat.is_some() {
                return Err(Error::Usage(
                    "--body-fat belongs to a weigh-in; give it with --weigh-in, not with --session"
                        .to_string(),
                ));
            }
            let plan = load(Some(plan))?;
            let entry = match (weigh_in, session) {
                (Some(kg), _) => crate::log::NewEntry::WeighIn {
                    mass_kg: *kg,
                    body_fat_percent: *body_fat,
                },
                (None, Some(minutes)) => crate::log::NewEntry::Session {
                    minutes: *minutes,
                    compendium_code: code.clone(),
                    met: *met,
                    avg_hr_bpm: *hr,
                    rpe: *rpe,
                },
                (None, None) => unreachable!("clap requires --weigh-in or --session"),
            };
            let row = crate::log::NewRow {
                date: *date,
                entry,
                note: note.clone(),
            };
            let (said, warnings) = crate::log::append_row(log, &plan, &row)?;
            let mut stderr = format!("{said}\n");
            for w in warnings {
                stderr.push_str(&format!("warning [{}]: {}\n", w.code, w.message));
            }
            Ok(Printed {
                stdout: String::new(),
                stderr,
            })
        }
        Command::Cohort(args) => cohort_command(args),
        Command::Check { plan, display } => {
            let plan = load(Some(plan))?;
            let r = schedule_report(&plan)?;
            Ok(Printed {
                stdout: report::check::render(&plan, &r, display_units(display)),
                stderr: String::new(),
            })
        }
        Command::Init { file } => {
            let text = plan::starter::STARTER_PLAN;
            // The starter must itself be a valid plan (tested); check before writing.
            plan::parse_plan("starter plan", text)?;
            match file {
                Some(f) => {
                    write_atomic(f, text.as_bytes(), true)?;
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
        Command::Desk(args) => crate::desk::run(args),
        Command::Activities {
            text,
            met_min,
            met_max,
            units,
        } => {
            let lo = met_min.unwrap_or(0.0);
            let hi = met_max.unwrap_or(f64::INFINITY);
            for (v, name) in [(met_min, "--met-min"), (met_max, "--met-max")] {
                if let Some(x) = v
                    && (!x.is_finite() || *x < 0.0 || *x > 25.0)
                {
                    return Err(Error::Usage(format!("{name} {x}: allowed 0 to 25 MET")));
                }
            }
            if lo > hi {
                return Err(Error::Usage(format!(
                    "--met-min {lo} is above --met-max {hi}"
                )));
            }
            let rows = compendium::search(text.as_deref(), lo, hi);
            let mut query = String::new();
            if let Some(t) = text {
                query.push_str(&format!("matching \"{t}\""));
            }
            match (met_min, met_max) {
                (Some(a), Some(b)) => query.push_str(&format!(" between {a} and {b} MET")),
                (Some(a), None) => query.push_str(&format!(" of at least {a} MET")),
                (None, Some(b)) => query.push_str(&format!(" of at most {b} MET")),
                (None, None) => {}
            }
            let query = if query.is_empty() {
                "in the built-in table".to_string()
            } else {
                query.trim().to_string()
            };
            Ok(Printed {
                stdout: report::activities::render(
                    &rows,
                    &query,
                    Units {
                        system: unit_system(*units),
                        ..Units::default()
                    },
                ),
                stderr: String::new(),
            })
        }
    }
}

mod charts {
    //! Writing the SVG charts of a report.
    use crate::error::Error;
    use crate::report::ScheduleReport;
    use crate::report::chart::{Band, standard_charts, write_charts};
    use crate::report::units::Units;
    use std::path::Path;

    /// The participant's screening outcome and the stop signs, for chart captions.
    pub fn screening_caption(s: &crate::safety::ScreeningOutcome) -> String {
        format!(
            " Screening: {}. Stop at once on chest pain, unusual breathlessness, dizziness or palpitations.",
            s.recommendation
        )
    }

    /// A file-name stem from a participant code.
    pub fn stem(id: &str) -> String {
        id.chars()
            .map(|c| {
                if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                    c
                } else {
                    '_'
                }
            })
            .collect()
    }

    /// Write the cohort's two charts into `dir`; returns the notes for standard error.
    pub fn write_cohort_charts(
        dir: &Path,
        r: &crate::report::cohort::CohortReport,
        u: Units,
    ) -> Result<String, Error> {
        use crate::report::chart::{cohort_mass_chart, cohort_minutes_chart, cohort_power_chart};
        let mut charts = vec![
            ("mass-change", cohort_mass_chart(r, u)),
            ("minutes", cohort_minutes_chart(r)),
            ("power", cohort_power_chart(r)),
        ];
        let screening = crate::report::cohort::screening_line(&r.screening);
        for (_, c) in charts.iter_mut() {
            c.caption.push_str(&format!(
                " {screening} Stop at once on chest pain, unusual breathlessness, dizziness or palpitations."
            ));
        }
        let paths = write_charts(dir, &stem(&r.name), &charts)?;
        Ok(paths
            .iter()
            .map(|p| format!("wrote {}\n", p.display()))
            .collect())
    }

    /// Write the four charts into `dir` in units `u`; returns the notes for standard
    /// error.
    pub fn write_schedule_charts(
        dir: &Path,
        r: &ScheduleReport,
        u: Units,
    ) -> Result<String, Error> {
        let m0 = r.baseline.mass_kg;
        let band = r
            .projection_band
            .as_ref()
            .and_then(|b| b.scenarios.first())
            .map(|sb| Band {
                name: format!("sensitivity band, RMR and body-fat error ({})", sb.name),
                points: std::iter::once((0.0, m0, m0))
                    .chain(
                        sb.weeks
                            .iter()
                            .map(|w| (f64::from(w.week), w.mass_low_kg, w.mass_high_kg)),
                    )
                    .collect(),
            });
        let mut charts = standard_charts(&r.scenarios, r.protocol.weeks, band.as_ref(), u);
        for (_, c) in charts.iter_mut() {
            c.caption.push_str(&screening_caption(&r.screening));
        }
        let stem = stem(&r.participant_id);
        let paths = write_charts(dir, &stem, &charts)?;
        Ok(paths
            .iter()
            .map(|p| format!("wrote {}\n", p.display()))
            .collect())
    }
}

/// Warnings and cautions for standard error beside machine-readable output.
fn side_notes(r: &ScheduleReport) -> String {
    side_notes_of(&r.warnings, &r.screening)
}

/// Warnings and cautions for standard error, from their parts.
fn side_notes_of(warnings: &[Warning], screening: &crate::safety::ScreeningOutcome) -> String {
    let mut s = report::table::warnings_text(warnings);
    s.push_str(&report::cautions_text(screening));
    s
}

/// Checkpoint weeks of a cohort: those asked for, the end of the protocol and of
/// follow-up, sorted and distinct.
fn cohort_checkpoints(study: &crate::study::Study, at: &[u32]) -> Result<Vec<u32>, Error> {
    let total = study.protocol.total_weeks();
    if let Some(bad) = at.iter().find(|w| **w < 1 || **w > total) {
        return Err(Error::Usage(format!(
            "--at-week {bad}: outside the study's weeks; allowed 1 to {total} (protocol and follow-up)"
        )));
    }
    let mut weeks: Vec<u32> = at.to_vec();
    weeks.push(study.protocol.weeks);
    weeks.push(total);
    weeks.sort_unstable();
    weeks.dedup();
    Ok(weeks)
}

/// The members of a cohort and words for where they and their arms came from.
pub fn cohort_members(
    study: &crate::study::Study,
    args: &crate::cli::CohortArgs,
) -> Result<(Vec<crate::simulate::cohort::Member>, String, String), Error> {
    use crate::simulate::cohort::Member;
    use crate::study::{randomise, roster, synthetic};
    let (mut members, source) = match (&args.roster, args.synthetic) {
        (Some(path), None) => {
            let rows = roster::load_roster(path, study)?;
            (
                rows.into_iter()
                    .map(|r| Member {
                        participant: r.participant,
                        arm: r.arm,
                    })
                    .collect::<Vec<_>>(),
                format!("roster {}", path.display()),
            )
        }
        (None, Some(n)) => {
            if !(1..=100_000).contains(&n) {
                return Err(Error::Usage(format!(
                    "--synthetic {n}: allowed 1 to 100000 participants"
                )));
            }
            let ps = synthetic::draw(study, n, args.seed)?;
            (
                ps.into_iter()
                    .map(|participant| Member {
                        participant,
                        arm: None,
                    })
                    .collect(),
                format!("the [synthetic] population ({n} drawn, seed {})", args.seed),
            )
        }
        _ => unreachable!("clap requires exactly one of --roster and --synthetic"),
    };
    let given = members.iter().all(|m| m.arm.is_some());
    if given && args.randomise {
        return Err(Error::Usage(
            "--randomise: the roster already gives every participant an arm; leave out --randomise, or empty the roster's arm column".to_string(),
        ));
    }
    let allocation = if given {
        "arms as the roster gives them".to_string()
    } else if args.randomise || args.synthetic.is_some() {
        let sexes: Vec<crate::model::Sex> =
            members.iter().map(|m| m.participant.subject.sex).collect();
        let arms = randomise::permuted_blocks(
            &sexes,
            study.arms.len(),
            study.block_size as usize,
            args.seed,
        );
        for (m, a) in members.iter_mut().zip(arms) {
            m.arm = Some(a);
        }
        format!(
            "arms by permuted blocks of {} stratified by sex (seed {})",
            study.block_size, args.seed
        )
    } else if args.all_arms {
        "no allocation (every participant in every arm)".to_string()
    } else {
        return Err(Error::Usage(format!(
            "the roster gives no arm; add an arm column (one of {}), or use --randomise or --all-arms",
            study.arm_names()
        )));
    };
    Ok((members, source, allocation))
}

/// Run `cohort`: load, allocate, simulate in parallel, summarise, render.
fn cohort_command(args: &crate::cli::CohortArgs) -> Result<Printed, Error> {
    use crate::cli::{CohortFormat, IntegratorArg};
    use crate::simulate::cohort::{CohortRequest, run_cohort, summarise};
    use crate::simulate::integrate::Integrator;
    let units = display_units(&args.display);
    match args.format {
        CohortFormat::Table => {}
        CohortFormat::Csv => refuse_display_units(units, "csv")?,
        CohortFormat::Json => refuse_display_units(units, "json")?,
    }
    if !(1..=10_000).contains(&args.draws) {
        return Err(Error::Usage(format!(
            "--draws {}: allowed 1 to 10000 draws per participant",
            args.draws
        )));
    }
    if let Some(o) = &args.out {
        let mut inputs = vec![args.study.as_path()];
        if let Some(r) = &args.roster {
            inputs.push(r.as_path());
        }
        refuse_overwriting_inputs(o, &inputs)?;
        check_target(o, false)?;
    }
    let study = crate::study::load_study(&args.study)?;
    let (members, source, allocation) = cohort_members(&study, args)?;
    let req = CohortRequest {
        all_arms: args.all_arms,
        integrator: match args.integrator {
            IntegratorArg::Rk4 => Integrator::Rk4,
            IntegratorArg::Dopri5 => Integrator::Dopri5,
        },
        checkpoints: cohort_checkpoints(&study, &args.at_week)?,
        draws: args.draws,
        seed: args.seed,
    };
    let pool = {
        let mut b = rayon::ThreadPoolBuilder::new();
        if let Some(n) = args.threads {
            if !(1..=256).contains(&n) {
                return Err(Error::Usage(format!("--threads {n}: allowed 1 to 256")));
            }
            b = b.num_threads(n);
        }
        b.build()
            .map_err(|e| Error::Internal(format!("cannot start worker threads: {e}")))?
    };
    let bar = if args.quiet {
        indicatif::ProgressBar::hidden()
    } else {
        let b = indicatif::ProgressBar::new(members.len() as u64);
        if let Ok(style) = indicatif::ProgressStyle::with_template(
            "{spinner} [{elapsed_precise}] {wide_bar} {pos}/{len} participants ({eta})",
        ) {
            b.set_style(style);
        }
        b
    };
    let results = pool.install(|| run_cohort(&study, &members, &req, &|| bar.inc(1)));
    bar.finish_and_clear();
    let results = results?;
    let summary = pool.install(|| summarise(&study, &results, &req));
    let r = report::cohort::CohortReport {
        tool: format!("dosewright {}", env!("CARGO_PKG_VERSION")),
        study: study.source_name.clone(),
        name: study.name.clone(),
        source,
        allocation,
        all_arms: args.all_arms,
        seed: args.seed,
        draws: args.draws,
        participants: members.len(),
        integrator: req.integrator.name(),
        checkpoints: req.checkpoints.clone(),
        weeks: study.protocol.weeks,
        follow_up_weeks: study.protocol.follow_up_weeks,
        max_session_minutes: study.protocol.max_session_minutes,
        arms: Vec::new(),
        staff_hours: summary.staff_hours.clone(),
        comparisons: Vec::new(),
        screening: report::cohort::screening_counts(
            &members,
            crate::safety::warnings::study_is_vigorous(&study),
        ),
        warnings: crate::safety::warnings::cohort_warnings(&study, &members, &summary),
        cautions: crate::safety::CAUTIONS.to_vec(),
        // One row per run, for the CSV only.
        rows: if args.format == CohortFormat::Csv {
            report::cohort::participant_rows(&study, &members, &results.members)
        } else {
            Vec::new()
        },
    }
    .with_summary(summary);
    let mut printed = Printed::default();
    let text = match args.format {
        CohortFormat::Table => report::cohort::table(&r, units),
        CohortFormat::Json => {
            printed.stderr = report::cohort::side_notes(&r);
            report::json::render(&r)
        }
        CohortFormat::Csv => {
            printed.stderr = report::table::warnings_text(&r.warnings);
            printed.stderr.push_str(&report::cohort::side_notes(&r));
            report::cohort::csv(&r)
        }
    };
    if let Some(dir) = &args.chart {
        printed
            .stderr
            .push_str(&charts::write_cohort_charts(dir, &r, units)?);
    }
    deliver(printed, text, &args.out)
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
    let given = rows.iter().all(|r| r.arm.is_some());
    let arms: Vec<usize> = match (given, randomise) {
        (true, false) => rows.iter().map(|r| r.arm.expect("checked")).collect(),
        (true, true) => {
            return Err(Error::Usage(
                "--randomise: the roster already gives every participant an arm; leave out --randomise, or empty the roster's arm column".to_string(),
            ));
        }
        (false, true) => {
            let sexes: Vec<crate::model::Sex> =
                rows.iter().map(|r| r.participant.subject.sex).collect();
            crate::study::randomise::permuted_blocks(
                &sexes,
                study.arms.len(),
                study.block_size as usize,
                seed,
            )
        }
        (false, false) => {
            return Err(Error::Usage(format!(
                "{}: the roster gives no arm, so the sheets cannot know each participant's dose; add an arm column, or use --randomise (with --seed, as for cohort)",
                roster.display()
            )));
        }
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
