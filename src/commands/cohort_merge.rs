//! `cohort-merge`: a complete set of cohort shard files combined into the report of
//! the unsharded run, byte for byte (docs/cluster.md). The shard file itself is
//! `cohort_shard.rs`.

use super::Printed;
use super::cohort::{Loaded, Outputs, check_format, load, pool, report_cohort};
use super::cohort_shard::{Part, ShardFile, corrupt, read_shard, same_cohort};
use super::{check_outputs, display_units};
use crate::cli::{CohortFormat, CohortMergeArgs};
use crate::error::Error;
use crate::input::TextFile;
use crate::simulate::cohort::{CohortRuns, RunTable, shard_streams, stream_count};
use std::ops::Range;

/// Run `cohort-merge`: read every shard, check that they belong together and form
/// a complete set, then report the cohort exactly as the unsharded run does.
pub fn run(args: &CohortMergeArgs) -> Result<Printed, Error> {
    let units = display_units(&args.display);
    check_format(args.output.format, args.output.csv_table, units)?;
    let inputs: Vec<&std::path::Path> = args.shards.iter().map(|p| p.as_path()).collect();
    check_outputs(
        args.output.out.as_deref(),
        args.output.chart.as_deref(),
        &inputs,
    )?;
    // First pass: every file's header and checksum (the runs are dropped again).
    let mut seen: Vec<(Part, String)> = Vec::new();
    let mut first: Option<(ShardFile, String)> = None;
    for path in &args.shards {
        let (f, name) = read_shard(path)?;
        if let Some((a, a_name)) = &first {
            same_cohort(a, a_name, &f, &name)?;
        }
        if let Some((_, other)) = seen.iter().find(|(p, _)| p.k == f.shard.k) {
            return Err(Error::Usage(format!(
                "{name}: shard {}/{} is given twice (also {other}); give each shard once",
                f.shard.k, f.shard.n
            )));
        }
        seen.push((f.shard, name.clone()));
        if first.is_none() {
            first = Some((f, name));
        }
    }
    let (head, head_name) = first.expect("clap requires one shard file");
    let n = head.shard.n;
    let missing: Vec<String> = (1..=n)
        .filter(|k| !seen.iter().any(|(p, _)| p.k == *k))
        .map(|k| format!("{k}/{n}"))
        .collect();
    if !missing.is_empty() {
        return Err(Error::Usage(format!(
            "the shards are incomplete: missing {} (of {n}); run those with cohort --shard and merge every shard",
            missing.join(", ")
        )));
    }
    let study = (head.study.name.clone(), head.study.text.clone());
    let roster = head.roster.clone().map(|r| TextFile {
        name: r.name,
        raw: r.text,
    });
    let (l, _) = load(&head.options, &study, &|_| Ok(roster.clone())).map_err(|e| {
        Error::Usage(format!(
            "{head_name}: the study it carries does not load: {e}"
        ))
    })?;
    drop(head);
    // Second pass: the runs, shard by shard in stream order.
    seen.sort_by_key(|(p, _)| p.k);
    let mut runs = CohortRuns::empty(&l.study, &l.req, args.output.format == CohortFormat::Csv);
    let total = stream_count(l.members.len(), l.req.draws);
    for (part, path) in &seen {
        let (f, name) = read_shard(std::path::Path::new(path))?;
        let expected = shard_streams(total, part.k, part.n);
        let table = f
            .runs
            .table()
            .filter(|t| t.len() == f.runs.count && t.is_consistent(l.req.checkpoints.len()))
            .filter(|t| fits(t, &l, expected.clone()))
            .filter(|_| f.shard.members == l.members.len() && f.tally.fits(&l.study))
            .filter(|_| {
                f.shard.streams_start == expected.start && f.shard.streams_end == expected.end
            })
            .ok_or_else(|| corrupt(&name, "its runs do not match its study and shard"))?;
        runs.merge_tally(f.tally);
        runs.push_table(table, l.req.checkpoints.len());
    }
    let pool = pool(args.threads)?;
    let outputs = Outputs::new(&args.output, units);
    report_cohort(&l, &runs, &pool, &outputs)
}

/// True when every run of `t` is of a member and draw of `streams`, in stream order,
/// in an arm and scenario of the study.
fn fits(t: &RunTable, l: &Loaded, streams: Range<u64>) -> bool {
    let d = u64::from(l.req.draws.max(1));
    let mut last = streams.start;
    (0..t.len()).all(|j| {
        let s = u64::from(t.member[j]) * d + u64::from(t.draw[j]);
        let ok = t.draw[j] < l.req.draws
            && s >= last
            && s < streams.end
            && usize::from(t.arm[j]) < l.study.arms.len()
            && usize::from(t.scenario[j]) < l.study.scenarios.len();
        last = s;
        ok
    })
}
