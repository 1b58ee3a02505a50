//! Cohort shards (docs/cluster.md): `cohort --shard K/N` writes one part of a
//! cohort's (participant, draw) streams as a shard file, and `cohort-merge`
//! combines a complete set of them into the report of the unsharded run, byte for
//! byte. A shard file is JSON: its format and version, the program that wrote it,
//! the study's identity (the SHA-256 of the study and roster texts, which it also
//! carries, so the merge needs no other file), the options, which shard it is, the
//! weekly-minute counts and every run's scalars as base64 columns of little-endian
//! numbers, and a SHA-256 checksum of those.

use super::cohort::{CohortOptions, Loaded, Outputs, check_format, load, pool, report_cohort};
use super::{Printed, check_outputs, display_units};
use crate::cli::{CohortFormat, CohortMergeArgs, Shard};
use crate::error::Error;
use crate::input::TextFile;
use crate::simulate::cohort::{CohortRuns, MinuteTally, RunTable, shard_streams, stream_count};
use base64::Engine;
use base64::engine::general_purpose::STANDARD;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::ops::Range;

/// What a shard file says it is.
const FORMAT: &str = "dosewright cohort shard";
/// The version of the shard file's layout.
const FORMAT_VERSION: u32 = 1;

/// The program writing and reading shard files.
fn tool() -> String {
    format!("dosewright {}", env!("CARGO_PKG_VERSION"))
}

/// The first keys of a shard file, read alone when the rest does not parse.
#[derive(Deserialize)]
struct Head {
    format: String,
    format_version: u32,
}

/// A study or roster file as the shard carries it.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
struct Carried {
    name: String,
    text: String,
}

/// Which part of the streams a shard holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
struct Part {
    k: u32,
    n: u32,
    members: usize,
    streams_start: u64,
    streams_end: u64,
}

/// A shard file.
#[derive(Serialize, Deserialize)]
struct ShardFile {
    format: String,
    format_version: u32,
    tool: String,
    identity: String,
    study: Carried,
    roster: Option<Carried>,
    options: CohortOptions,
    shard: Part,
    tally: MinuteTally,
    runs: Columns,
    checksum: String,
}

/// [`RunTable`] with every column as base64 of little-endian numbers.
#[derive(Serialize, Deserialize)]
struct Columns {
    count: usize,
    member: String,
    baseline_mass_kg: String,
    draw: String,
    arm: String,
    scenario: String,
    flags: String,
    end_mass_kg: String,
    end_fat_kg: String,
    dose_share: String,
    prescribed_net_kcal: String,
    minutes_week1: String,
    minutes_last_week: String,
    session_minutes_total: String,
    checkpoint_mass_kg: String,
    checkpoint_fat_kg: String,
}

fn enc_f64(v: &[f64]) -> String {
    STANDARD.encode(v.iter().flat_map(|x| x.to_le_bytes()).collect::<Vec<u8>>())
}

fn enc_u32(v: &[u32]) -> String {
    STANDARD.encode(v.iter().flat_map(|x| x.to_le_bytes()).collect::<Vec<u8>>())
}

fn enc_u16(v: &[u16]) -> String {
    STANDARD.encode(v.iter().flat_map(|x| x.to_le_bytes()).collect::<Vec<u8>>())
}

/// Decode a column of `N`-byte numbers; None when it is not whole base64 numbers.
fn dec<const N: usize, T>(s: &str, f: fn([u8; N]) -> T) -> Option<Vec<T>> {
    let bytes = STANDARD.decode(s).ok()?;
    if bytes.len() % N != 0 {
        return None;
    }
    Some(
        bytes
            .chunks_exact(N)
            .map(|c| f(c.try_into().expect("N bytes")))
            .collect(),
    )
}

impl Columns {
    fn of(t: &RunTable) -> Columns {
        Columns {
            count: t.len(),
            member: enc_u32(&t.member),
            baseline_mass_kg: enc_f64(&t.baseline_mass_kg),
            draw: enc_u32(&t.draw),
            arm: enc_u16(&t.arm),
            scenario: enc_u16(&t.scenario),
            flags: STANDARD.encode(&t.flags),
            end_mass_kg: enc_f64(&t.end_mass_kg),
            end_fat_kg: enc_f64(&t.end_fat_kg),
            dose_share: enc_f64(&t.dose_share),
            prescribed_net_kcal: enc_f64(&t.prescribed_net_kcal),
            minutes_week1: enc_u32(&t.minutes_week1),
            minutes_last_week: enc_u32(&t.minutes_last_week),
            session_minutes_total: enc_u32(&t.session_minutes_total),
            checkpoint_mass_kg: enc_f64(&t.checkpoint_mass_kg),
            checkpoint_fat_kg: enc_f64(&t.checkpoint_fat_kg),
        }
    }

    fn table(&self) -> Option<RunTable> {
        let f = |s: &str| dec(s, f64::from_le_bytes);
        let u = |s: &str| dec(s, u32::from_le_bytes);
        let h = |s: &str| dec(s, u16::from_le_bytes);
        Some(RunTable {
            member: u(&self.member)?,
            baseline_mass_kg: f(&self.baseline_mass_kg)?,
            draw: u(&self.draw)?,
            arm: h(&self.arm)?,
            scenario: h(&self.scenario)?,
            flags: STANDARD.decode(&self.flags).ok()?,
            end_mass_kg: f(&self.end_mass_kg)?,
            end_fat_kg: f(&self.end_fat_kg)?,
            dose_share: f(&self.dose_share)?,
            prescribed_net_kcal: f(&self.prescribed_net_kcal)?,
            minutes_week1: u(&self.minutes_week1)?,
            minutes_last_week: u(&self.minutes_last_week)?,
            session_minutes_total: u(&self.session_minutes_total)?,
            checkpoint_mass_kg: f(&self.checkpoint_mass_kg)?,
            checkpoint_fat_kg: f(&self.checkpoint_fat_kg)?,
        })
    }
}

fn hex(d: &[u8]) -> String {
    d.iter().map(|b| format!("{b:02x}")).collect()
}

/// The study's identity: the SHA-256 of the study's and the roster's names and
/// texts, each preceded by its length.
fn identity(study: &Carried, roster: Option<&Carried>) -> String {
    let mut h = Sha256::new();
    for part in [Some(study), roster].into_iter().flatten() {
        for s in [&part.name, &part.text] {
            h.update((s.len() as u64).to_le_bytes());
            h.update(s.as_bytes());
        }
    }
    hex(&h.finalize())
}

/// The checksum of a shard's counts and runs.
fn checksum(tally: &MinuteTally, runs: &Columns) -> String {
    let body = serde_json::to_string(&(tally, runs)).expect("shard data serializes");
    hex(&Sha256::digest(body.as_bytes()))
}

/// The streams of shard `s` of a loaded cohort and the members they touch.
pub(crate) fn streams_of(l: &Loaded, s: Shard) -> (Range<u64>, usize) {
    let total = stream_count(l.members.len(), l.req.draws);
    let r = shard_streams(total, s.k, s.n);
    let d = u64::from(l.req.draws.max(1));
    let touched = if r.is_empty() {
        0
    } else {
        ((r.end - 1) / d - r.start / d + 1) as usize
    };
    (r, touched)
}

/// The text of a shard file for the runs of shard `s`.
pub(crate) fn write(
    l: &Loaded,
    study: &(String, String),
    roster: Option<&TextFile>,
    s: Shard,
    streams: Range<u64>,
    runs: &CohortRuns,
) -> String {
    let study = Carried {
        name: study.0.clone(),
        text: study.1.clone(),
    };
    let roster = roster.map(|r| Carried {
        name: r.name.clone(),
        text: r.raw.clone(),
    });
    let columns = Columns::of(runs.table.as_ref().expect("a shard keeps its runs"));
    let mut text = serde_json::to_string(&ShardFile {
        format: FORMAT.to_string(),
        format_version: FORMAT_VERSION,
        tool: tool(),
        identity: identity(&study, roster.as_ref()),
        checksum: checksum(&runs.tally, &columns),
        study,
        roster,
        options: l.options.clone(),
        shard: Part {
            k: s.k,
            n: s.n,
            members: l.members.len(),
            streams_start: streams.start,
            streams_end: streams.end,
        },
        tally: runs.tally.clone(),
        runs: columns,
    })
    .expect("a shard serializes");
    text.push('\n');
    text
}

/// Refuse a request whose memory or time would be unreasonable, with the estimate
/// and the shards that would bring each part within bounds (docs/speed.md).
pub(crate) fn check_size(
    l: &Loaded,
    shard: Option<Shard>,
    format: CohortFormat,
) -> Result<(), Error> {
    use crate::simulate::cohort::{Estimate, estimate};
    let total = stream_count(l.members.len(), l.req.draws);
    let streams = shard.map_or(0..total, |s| shard_streams(total, s.k, s.n));
    let e: Estimate = estimate(
        &l.study,
        &l.members,
        &l.req,
        streams.clone(),
        format == CohortFormat::Csv,
        shard.is_some(),
    );
    let (mem, cpu) = (e.bytes as f64, e.cpu_seconds);
    let (max_mem, max_cpu) = (MAX_BYTES as f64, MAX_CPU_SECONDS);
    if mem <= max_mem && cpu <= max_cpu {
        return Ok(());
    }
    let parts = (mem / max_mem).max(cpu / max_cpu).ceil() as u64;
    let n = shard.map_or(1, |s| u64::from(s.n)) * parts.max(2);
    let csv = if format == CohortFormat::Csv {
        " (a per-participant CSV holds a row per run: JSON or a table needs far less)"
    } else {
        ""
    };
    Err(Error::Usage(format!(
        "this cohort is too large for one run: {} runs, an estimated {:.1} GB of memory and {:.1} CPU hours{csv}, over the {} GB and {} hours one run may take; split it with --shard K/N for K = 1 to {n} (each part needs about {:.1} GB and {:.1} CPU hours, and can run on its own machine) and combine the shard files with cohort-merge (docs/cluster.md)",
        e.runs,
        mem / 1e9,
        cpu / 3600.0,
        max_mem / 1e9,
        max_cpu / 3600.0,
        mem / n as f64 * shard.map_or(1.0, |s| f64::from(s.n)) / 1e9,
        cpu / n as f64 * shard.map_or(1.0, |s| f64::from(s.n)) / 3600.0,
    )))
}

/// The most memory one run may take, by the estimate: 4 GB (common practice for a
/// job on a shared machine or a cluster node's share).
const MAX_BYTES: u64 = 4_000_000_000;
/// The most CPU time one run may take, by the estimate: 12 hours (common practice:
/// within a night, and within the usual wall-time limits of batch queues).
const MAX_CPU_SECONDS: f64 = 12.0 * 3600.0;

/// Run `cohort-merge`: read every shard, check that they belong together and form
/// a complete set, then report the cohort exactly as the unsharded run does.
pub fn run(args: &CohortMergeArgs) -> Result<Printed, Error> {
    let units = display_units(&args.display);
    check_format(args.format, units)?;
    let inputs: Vec<&std::path::Path> = args.shards.iter().map(|p| p.as_path()).collect();
    check_outputs(args.out.as_deref(), args.chart.as_deref(), &inputs)?;
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
    let mut runs = CohortRuns::empty(&l.study, &l.req, args.format == CohortFormat::Csv);
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
    let outputs = Outputs {
        format: args.format,
        out: args.out.as_deref(),
        chart: args.chart.as_deref(),
        units,
    };
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

fn corrupt(name: &str, why: &str) -> Error {
    Error::Usage(format!(
        "{name}: not a complete cohort shard file ({why}); it may be truncated or damaged: run that shard again"
    ))
}

/// Read one shard file and check its format, version, program and checksum.
fn read_shard(path: &std::path::Path) -> Result<(ShardFile, String), Error> {
    let f = crate::input::read_limited(path, crate::input::MAX_SHARD_BYTES)?;
    let name = f.name.clone();
    let file: ShardFile = match serde_json::from_str(&f.raw) {
        Ok(file) => file,
        Err(e) => {
            return Err(match serde_json::from_str::<Head>(&f.raw) {
                Ok(h) if h.format != FORMAT => not_a_shard(&name),
                Ok(h) if h.format_version != FORMAT_VERSION => version(&name, h.format_version),
                _ if !f.raw.trim_start().starts_with('{') => not_a_shard(&name),
                _ => corrupt(&name, &format!("{e}")),
            });
        }
    };
    drop(f);
    if file.format != FORMAT {
        return Err(not_a_shard(&name));
    }
    if file.format_version != FORMAT_VERSION {
        return Err(version(&name, file.format_version));
    }
    if file.tool != tool() {
        return Err(Error::Usage(format!(
            "{name}: written by {}, but this is {}: merge with the program that wrote the shards, or run them again with this one",
            file.tool,
            tool()
        )));
    }
    if checksum(&file.tally, &file.runs) != file.checksum
        || identity(&file.study, file.roster.as_ref()) != file.identity
    {
        return Err(corrupt(&name, "its checksum does not match its contents"));
    }
    if file.shard.k == 0 || file.shard.k > file.shard.n {
        return Err(corrupt(&name, "its shard number is out of range"));
    }
    Ok((file, name))
}

fn not_a_shard(name: &str) -> Error {
    Error::Usage(format!(
        "{name}: not a cohort shard file; give the files written by cohort --shard K/N --out FILE"
    ))
}

fn version(name: &str, v: u32) -> Error {
    Error::Usage(format!(
        "{name}: a shard file of format version {v}; this program reads version {FORMAT_VERSION}: merge with the program that wrote it"
    ))
}

/// Refuse a shard of another cohort than the first file's.
fn same_cohort(a: &ShardFile, a_name: &str, b: &ShardFile, b_name: &str) -> Result<(), Error> {
    let differs = |what: String| {
        Err(Error::Usage(format!(
            "{b_name}: not a shard of the same cohort as {a_name}: {what}; merge only the shards of one cohort run"
        )))
    };
    let (x, y) = (&a.options, &b.options);
    if a.identity != b.identity {
        return differs(format!(
            "another study or roster ({} against {})",
            describe(b),
            describe(a)
        ));
    }
    if x.seed != y.seed {
        return differs(format!("seed {} against {}", y.seed, x.seed));
    }
    if x.draws != y.draws {
        return differs(format!("{} draws against {}", y.draws, x.draws));
    }
    if a.shard.n != b.shard.n {
        return differs(format!(
            "one of {} shards against one of {}",
            b.shard.n, a.shard.n
        ));
    }
    if x != y {
        return differs("other cohort options (--synthetic, --randomise, --all-arms, --integrator, --at-week, --basis or --multiplicity)".to_string());
    }
    Ok(())
}

/// The study (and roster) a shard carries, in words.
fn describe(f: &ShardFile) -> String {
    let roster = f
        .roster
        .as_ref()
        .map(|r| format!(" with roster {}", r.name))
        .unwrap_or_default();
    format!("{}{roster}, identity {}", f.study.name, &f.identity[..12])
}
