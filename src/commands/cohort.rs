//! `cohort`: a study's cohort simulated in parallel and summarised per arm.

use super::{Printed, check_outputs, deliver, display_units, refuse_display_units};
use crate::cli::{BasisArg, CohortArgs, CohortCsvTable, MultiplicityArg};
use crate::error::Error;
use crate::report;
use crate::simulate::arm_comparison::{Basis, Multiplicity};
use crate::study::staffing::site_need;

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
    args: &CohortArgs,
) -> Result<(Vec<crate::simulate::cohort::Member>, String, String), Error> {
    use crate::simulate::cohort::Member;
    use crate::study::allocation::{Allocation, allocate};
    use crate::study::{roster, synthetic};
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
            if study.population.is_none() {
                return Err(Error::Usage(format!(
                    "--synthetic: {} has no [synthetic] table describing the population to draw from; add one, or give --roster FILE",
                    study.source_name
                )));
            }
            let ps =
                synthetic::draw(study, n, args.seed).map_err(super::with_flag("--synthetic"))?;
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
    let who: Vec<(Option<usize>, crate::model::Sex)> = members
        .iter()
        .map(|m| (m.arm, m.participant.subject.sex))
        .collect();
    let randomise = args.randomise || args.synthetic.is_some();
    let allocation = match allocate(study, &who, randomise, args.seed)
        .map_err(|_| super::already_allocated())?
    {
        Allocation::Given(_) => "arms as the roster gives them".to_string(),
        Allocation::PermutedBlocks(arms) => {
            for (m, a) in members.iter_mut().zip(arms) {
                m.arm = Some(a);
            }
            format!(
                "arms by permuted blocks of {} stratified by sex (seed {})",
                study.block_size, args.seed
            )
        }
        Allocation::Unallocated if args.all_arms => {
            "no allocation (every participant in every arm)".to_string()
        }
        Allocation::Unallocated => {
            return Err(Error::Usage(format!(
                "the roster gives no arm; add an arm column (one of {}), or use --randomise or --all-arms",
                study.arm_names()
            )));
        }
    };
    Ok((members, source, allocation))
}

/// Display units are for the table only; `--csv-table` is for `--format csv` only.
fn check_format(args: &CohortArgs, units: report::units::Units) -> Result<(), Error> {
    use crate::cli::CohortFormat;
    match args.format {
        CohortFormat::Table => {}
        CohortFormat::Csv => refuse_display_units(units, "csv")?,
        CohortFormat::Json => refuse_display_units(units, "json")?,
    }
    if args.csv_table != CohortCsvTable::Participants && args.format != CohortFormat::Csv {
        return Err(Error::Usage(
            "--csv-table: only with --format csv; add --format csv or leave --csv-table out"
                .to_string(),
        ));
    }
    Ok(())
}

/// The comparisons' basis, multiplicity adjustment and endpoint weeks asked for.
fn comparison_options(args: &CohortArgs) -> crate::simulate::arm_comparison::ComparisonOptions {
    crate::simulate::arm_comparison::ComparisonOptions {
        basis: match args.basis {
            BasisArg::IntentionToTreat => Basis::IntentionToTreat,
            BasisArg::Completers => Basis::Completers,
        },
        multiplicity: match args.multiplicity {
            MultiplicityArg::None => Multiplicity::None,
            MultiplicityArg::Bonferroni => Multiplicity::Bonferroni,
            MultiplicityArg::Holm => Multiplicity::Holm,
        },
        at_weeks: args.at_week.clone(),
    }
}

/// The cohort CSV table asked for (docs/file-formats.md, "Cohort CSV").
fn csv_table(table: CohortCsvTable, r: &report::cohort::CohortReport) -> String {
    match table {
        CohortCsvTable::Participants => report::cohort::csv(r),
        CohortCsvTable::Comparisons => report::cohort_csv::comparisons_csv(r),
        CohortCsvTable::Staffing => report::cohort_csv::staffing_csv(r),
    }
}

/// Run `cohort`: load, allocate, simulate in parallel, summarise, render.
pub fn run(args: &CohortArgs) -> Result<Printed, Error> {
    use crate::cli::{CohortFormat, IntegratorArg};
    use crate::simulate::cohort::{CohortRequest, run_cohort, summarise};
    use crate::simulate::integrate::Integrator;
    let units = display_units(&args.display);
    check_format(args, units)?;
    let mut inputs = vec![args.study.as_path()];
    inputs.extend(args.roster.as_deref());
    check_outputs(args.out.as_deref(), args.chart.as_deref(), &inputs)?;
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
    let options = comparison_options(args);
    let comparisons = crate::simulate::arm_comparison::comparisons_with(
        &summary.arms,
        study.protocol.weeks,
        &options,
    );
    let mut r = report::cohort::CohortReport {
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
        staffing: site_need(
            &study,
            results.tally.site(),
            args.draws,
            summary.staff_hours.total,
        ),
        comparisons: Vec::new(),
        screening: report::cohort::screening_counts(
            &members,
            crate::simulate::warnings::study_is_vigorous(&study),
        ),
        warnings: crate::simulate::warnings::cohort_warnings(&study, &members, &summary),
        cautions: crate::safety::CAUTIONS.to_vec(),
        // One row per run, for the CSV only.
        rows: if args.format == CohortFormat::Csv && args.csv_table == CohortCsvTable::Participants
        {
            report::cohort::participant_rows(&study, &members, &results.members)
        } else {
            Vec::new()
        },
    }
    .with_summary(summary);
    if !r.comparisons.is_empty() {
        r.comparisons = comparisons;
    }
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
            csv_table(args.csv_table, &r)
        }
    };
    if let Some(dir) = &args.chart {
        printed
            .stderr
            .push_str(&super::charts::write_cohort_charts(dir, &r, units)?);
    }
    deliver(printed, text, args.out.as_deref())
}
