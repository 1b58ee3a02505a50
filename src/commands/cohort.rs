//! `cohort`: a study's cohort simulated in parallel and summarised per arm; with
//! `--shard K/N` one part of its streams written as a shard file (docs/cluster.md).

use super::{Printed, check_outputs, deliver, display_units, refuse_display_units};
use crate::cli::{BasisArg, CohortArgs, CohortCsvTable, CohortFormat, MultiplicityArg};
use crate::error::Error;
use crate::input::TextFile;
use crate::report;
use crate::simulate::arm_comparison::{Basis, Multiplicity};
use crate::simulate::cohort::{CohortRequest, CohortRuns, Member};
use crate::study::Study;
use crate::study::staffing::site_need;

pub(crate) use super::cohort_shard::CohortOptions;
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
pub(crate) fn cohort_members(
    study: &Study,
    args: &CohortOptions,
    roster_file: Option<&TextFile>,
) -> Result<(Vec<Member>, String, String), Error> {
    use crate::study::allocation::{Allocation, allocate};
    use crate::study::{roster, synthetic};
    let (mut members, source) = match (roster_file, args.synthetic) {
        (Some(f), None) => {
            let rows = roster::parse_roster(&f.name, &f.raw, study)?;
            (
                rows.into_iter()
                    .map(|r| Member {
                        participant: r.participant,
                        arm: r.arm,
                    })
                    .collect::<Vec<_>>(),
                format!("roster {}", f.name),
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

/// The cohort CSV table asked for (docs/file-formats.md, "Cohort CSV").
fn csv_table(table: CohortCsvTable, r: &report::cohort::CohortReport) -> String {
    match table {
        CohortCsvTable::Participants => report::cohort::csv(r),
        CohortCsvTable::Comparisons => report::cohort_csv::comparisons_csv(r),
        CohortCsvTable::Staffing => report::cohort_csv::staffing_csv(r),
    }
}

/// The command-line name of a value.
fn name_of<T: clap::ValueEnum>(v: T) -> String {
    v.to_possible_value()
        .map(|p| p.get_name().to_string())
        .unwrap_or_default()
}

/// The value of a command-line name (a shard file's options).
pub(crate) fn value_of<T: clap::ValueEnum>(s: &str) -> Result<T, Error> {
    T::from_str(s, false).map_err(|_| Error::Usage(format!("unknown option value \"{s}\"")))
}

impl CohortOptions {
    fn of(args: &CohortArgs) -> CohortOptions {
        CohortOptions {
            synthetic: args.synthetic,
            randomise: args.randomise,
            seed: args.seed,
            all_arms: args.all_arms,
            draws: args.draws,
            integrator: name_of(args.integrator),
            at_week: args.at_week.clone(),
            basis: name_of(args.basis),
            multiplicity: name_of(args.multiplicity),
        }
    }
}

/// A cohort ready to run or to report: the study, its members and where they came
/// from, the request and the options.
pub(crate) struct Loaded {
    pub study: Study,
    pub members: Vec<Member>,
    pub source: String,
    pub allocation: String,
    pub req: CohortRequest,
    pub options: CohortOptions,
}

/// Parse the study, read the roster (if any), draw or read the members, allocate.
pub(crate) fn load(
    options: &CohortOptions,
    study_file: &(String, String),
    roster: &dyn Fn(&Study) -> Result<Option<TextFile>, Error>,
) -> Result<(Loaded, Option<TextFile>), Error> {
    use crate::cli::IntegratorArg;
    use crate::simulate::integrate::Integrator;
    let study = crate::study::parse_study(&study_file.0, &study_file.1)?;
    let roster = roster(&study)?;
    let (members, source, allocation) = cohort_members(&study, options, roster.as_ref())?;
    let req = CohortRequest {
        all_arms: options.all_arms,
        integrator: match value_of(&options.integrator)? {
            IntegratorArg::Rk4 => Integrator::Rk4,
            IntegratorArg::Dopri5 => Integrator::Dopri5,
        },
        checkpoints: cohort_checkpoints(&study, &options.at_week)?,
        draws: options.draws,
        seed: options.seed,
    };
    let loaded = Loaded {
        study,
        members,
        source,
        allocation,
        req,
        options: options.clone(),
    };
    Ok((loaded, roster))
}

/// A worker pool of `threads` threads (default: RAYON_NUM_THREADS, else one per core).
pub(crate) fn pool(threads: Option<usize>) -> Result<rayon::ThreadPool, Error> {
    let mut b = rayon::ThreadPoolBuilder::new();
    if let Some(n) = threads {
        b = b.num_threads(n);
    }
    b.build()
        .map_err(|e| Error::Internal(format!("cannot start worker threads: {e}")))
}

/// Where and how a cohort's report goes.
pub(crate) struct Outputs<'a> {
    pub format: CohortFormat,
    pub csv_table: CohortCsvTable,
    pub out: Option<&'a std::path::Path>,
    pub chart: Option<&'a std::path::Path>,
    pub units: crate::report::units::Units,
}

impl<'a> Outputs<'a> {
    /// The outputs the command line asks for.
    pub(crate) fn new(
        args: &'a crate::cli::CohortOutputArgs,
        units: crate::report::units::Units,
    ) -> Outputs<'a> {
        Outputs {
            format: args.format,
            csv_table: args.csv_table,
            out: args.out.as_deref(),
            chart: args.chart.as_deref(),
            units,
        }
    }
}

/// Refuse display units with a machine-readable format, and `--csv-table` without
/// `--format csv`.
pub(crate) fn check_format(
    format: CohortFormat,
    table: CohortCsvTable,
    units: crate::report::units::Units,
) -> Result<(), Error> {
    match format {
        CohortFormat::Table => {}
        CohortFormat::Csv => refuse_display_units(units, "csv")?,
        CohortFormat::Json => refuse_display_units(units, "json")?,
    }
    if table != CohortCsvTable::Participants && format != CohortFormat::Csv {
        return Err(Error::Usage(
            "--csv-table: only with --format csv; add --format csv or leave --csv-table out"
                .to_string(),
        ));
    }
    Ok(())
}

/// Run `cohort`: load, allocate, simulate in parallel, summarise, render; with
/// `--shard K/N` simulate only that part of the streams and write a shard file.
pub fn run(args: &CohortArgs) -> Result<Printed, Error> {
    let units = display_units(&args.display);
    check_format(args.output.format, args.output.csv_table, units)?;
    if args.shard.is_some() && args.output.chart.is_some() {
        return Err(Error::Usage(
            "--chart: a shard writes no charts; give --chart to cohort-merge".to_string(),
        ));
    }
    let mut inputs = vec![args.study.as_path()];
    inputs.extend(args.roster.as_deref());
    check_outputs(
        args.output.out.as_deref(),
        args.output.chart.as_deref(),
        &inputs,
    )?;
    let study_file = crate::input::read_text(&args.study)?;
    let roster = |_: &Study| args.roster.as_deref().map(crate::input::read).transpose();
    let (l, roster_file) = load(&CohortOptions::of(args), &study_file, &roster)?;
    super::cohort_shard::check_size(
        (&l.study, &l.members, &l.req),
        args.shard,
        args.output.format,
    )?;
    let pool = pool(args.threads)?;
    let (streams, touched) = match args.shard {
        Some(s) => super::cohort_shard::streams_of(l.members.len(), l.req.draws, s),
        None => {
            let all = crate::simulate::cohort::stream_count(l.members.len(), l.req.draws);
            (0..all, l.members.len())
        }
    };
    let bar = if args.quiet {
        indicatif::ProgressBar::hidden()
    } else {
        let b = indicatif::ProgressBar::new(touched as u64);
        if let Ok(style) = indicatif::ProgressStyle::with_template(
            "{spinner} [{elapsed_precise}] {wide_bar} {pos}/{len} participants ({eta})",
        ) {
            b.set_style(style);
        }
        b
    };
    // Every run's scalars are kept for the per-participant CSV and for a shard file.
    let keep = args.output.format == CohortFormat::Csv || args.shard.is_some();
    let runs = pool.install(|| {
        crate::simulate::cohort::run_cohort_streams(
            &l.study,
            &l.members,
            &l.req,
            streams.clone(),
            keep,
            &|| bar.inc(1),
        )
    });
    bar.finish_and_clear();
    let runs = runs?;
    if let Some(s) = args.shard {
        let text = super::cohort_shard::write(
            (&l.options, l.members.len()),
            &study_file,
            roster_file.as_ref(),
            s,
            streams,
            &runs,
        );
        return deliver(Printed::default(), text, args.output.out.as_deref());
    }
    let outputs = Outputs::new(&args.output, units);
    report_cohort(&l, &runs, &pool, &outputs)
}

/// Summarise a cohort's runs, render the report and deliver it (`cohort` and
/// `cohort-merge` alike).
pub(crate) fn report_cohort(
    l: &Loaded,
    runs: &CohortRuns,
    pool: &rayon::ThreadPool,
    o: &Outputs,
) -> Result<Printed, Error> {
    let (study, members, req) = (&l.study, &l.members, &l.req);
    let summary = pool.install(|| crate::simulate::cohort::summarise(study, runs, req));
    let options = crate::simulate::arm_comparison::ComparisonOptions {
        basis: match value_of(&l.options.basis)? {
            BasisArg::IntentionToTreat => Basis::IntentionToTreat,
            BasisArg::Completers => Basis::Completers,
        },
        multiplicity: match value_of(&l.options.multiplicity)? {
            MultiplicityArg::None => Multiplicity::None,
            MultiplicityArg::Bonferroni => Multiplicity::Bonferroni,
            MultiplicityArg::Holm => Multiplicity::Holm,
        },
        at_weeks: l.options.at_week.clone(),
    };
    let comparisons = crate::simulate::arm_comparison::comparisons_with(
        &summary.arms,
        study.protocol.weeks,
        &options,
    );
    let mut r = report::cohort::CohortReport {
        tool: format!("dosewright {}", env!("CARGO_PKG_VERSION")),
        study: study.source_name.clone(),
        name: study.name.clone(),
        source: l.source.clone(),
        allocation: l.allocation.clone(),
        all_arms: req.all_arms,
        seed: req.seed,
        draws: req.draws,
        participants: members.len(),
        integrator: req.integrator.name(),
        checkpoints: req.checkpoints.clone(),
        weeks: study.protocol.weeks,
        follow_up_weeks: study.protocol.follow_up_weeks,
        max_session_minutes: study.protocol.max_session_minutes,
        arms: Vec::new(),
        staff_hours: summary.staff_hours.clone(),
        staffing: site_need(
            study,
            runs.tally.site(),
            req.draws,
            summary.staff_hours.total,
        ),
        comparisons: Vec::new(),
        screening: report::cohort::screening_counts(
            members,
            crate::simulate::warnings::study_is_vigorous(study),
        ),
        warnings: crate::simulate::warnings::cohort_warnings(study, members, &summary),
        cautions: crate::safety::CAUTIONS.to_vec(),
        // One row per run, for the CSV only.
        rows: if o.format == CohortFormat::Csv && o.csv_table == CohortCsvTable::Participants {
            report::cohort::participant_rows(study, members, &runs.members(req))
        } else {
            Vec::new()
        },
    }
    .with_summary(summary);
    if !r.comparisons.is_empty() {
        r.comparisons = comparisons;
    }
    let mut printed = Printed::default();
    let text = match o.format {
        CohortFormat::Table => report::cohort::table(&r, o.units),
        CohortFormat::Json => {
            printed.stderr = report::cohort::side_notes(&r);
            report::json::render(&r)
        }
        CohortFormat::Csv => {
            printed.stderr = report::table::warnings_text(&r.warnings);
            printed.stderr.push_str(&report::cohort::side_notes(&r));
            csv_table(o.csv_table, &r)
        }
    };
    if let Some(dir) = o.chart {
        printed
            .stderr
            .push_str(&super::charts::write_cohort_charts(dir, &r, o.units)?);
    }
    deliver(printed, text, o.out)
}
