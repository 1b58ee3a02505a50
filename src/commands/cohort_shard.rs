//! Cohort shards (docs/cluster.md): `cohort --shard K/N` writes one part of a
//! cohort's (participant, draw) streams as a shard file, and `cohort-merge`
//! combines a complete set of them into the report of the unsharded run, byte for
//! byte. A shard file is JSON: its format and version, the program that wrote it,
//! the study's identity (the SHA-256 of the study and roster texts, which it also
//! carries, so the merge needs no other file), the options, which shard it is, the
//! weekly-minute counts and every run's scalars as base64 columns of little-endian
//! numbers, and a SHA-256 checksum of those.

use crate::cli::{CohortFormat, Shard};
use crate::error::Error;
use crate::input::TextFile;
use crate::simulate::cohort::{CohortRequest, CohortRuns, Member, MinuteTally, RunTable};
use crate::simulate::cohort::{shard_streams, stream_count};
use crate::study::Study;
use base64::Engine;
use base64::engine::general_purpose::STANDARD;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::ops::Range;

/// The options of a cohort that shape its runs and its report (the command line
/// without the files and the output), as a shard file records them.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub(crate) struct CohortOptions {
    pub synthetic: Option<usize>,
    pub randomise: bool,
    pub seed: u64,
    pub all_arms: bool,
    pub draws: u32,
    pub integrator: String,
    pub at_week: Vec<u32>,
    pub basis: String,
    pub multiplicity: String,
}

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
pub(crate) struct Head {
    format: String,
    format_version: u32,
}

/// A study or roster file as the shard carries it.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub(crate) struct Carried {
    pub(crate) name: String,
    pub(crate) text: String,
}

/// Which part of the streams a shard holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub(crate) struct Part {
    pub(crate) k: u32,
    pub(crate) n: u32,
    pub(crate) members: usize,
    pub(crate) streams_start: u64,
    pub(crate) streams_end: u64,
}

/// A shard file.
#[derive(Serialize, Deserialize)]
pub(crate) struct ShardFile {
    pub(crate) format: String,
    pub(crate) format_version: u32,
    pub(crate) tool: String,
    pub(crate) identity: String,
    pub(crate) study: Carried,
    pub(crate) roster: Option<Carried>,
    pub(crate) options: CohortOptions,
    pub(crate) shard: Part,
    pub(crate) tally: MinuteTally,
    pub(crate) runs: Columns,
    pub(crate) checksum: String,
}

/// [`RunTable`] with every column as base64 of little-endian numbers.
#[derive(Serialize, Deserialize)]
pub(crate) struct Columns {
    pub(crate) count: usize,
    pub(crate) member: String,
    pub(crate) baseline_mass_kg: String,
    pub(crate) draw: String,
    pub(crate) arm: String,
    pub(crate) scenario: String,
    pub(crate) flags: String,
    pub(crate) end_mass_kg: String,
    pub(crate) end_fat_kg: String,
    pub(crate) dose_share: String,
    pub(crate) prescribed_net_kcal: String,
    pub(crate) minutes_week1: String,
    pub(crate) minutes_last_week: String,
    pub(crate) session_minutes_total: String,
    pub(crate) checkpoint_mass_kg: String,
    pub(crate) checkpoint_fat_kg: String,
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

    pub(crate) fn table(&self) -> Option<RunTable> {
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
pub(crate) fn streams_of(members: usize, draws: u32, s: Shard) -> (Range<u64>, usize) {
    let total = stream_count(members, draws);
    let r = shard_streams(total, s.k, s.n);
    let d = u64::from(draws.max(1));
    let touched = if r.is_empty() {
        0
    } else {
        ((r.end - 1) / d - r.start / d + 1) as usize
    };
    (r, touched)
}

/// The text of a shard file for the runs of shard `s`.
pub(crate) fn write(
    (options, members): (&CohortOptions, usize),
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
        options: options.clone(),
        shard: Part {
            k: s.k,
            n: s.n,
            members,
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
    (study, members, req): (&Study, &[Member], &CohortRequest),
    shard: Option<Shard>,
    format: CohortFormat,
) -> Result<(), Error> {
    use crate::simulate::cohort::{Estimate, estimate};
    let total = stream_count(members.len(), req.draws);
    let streams = shard.map_or(0..total, |s| shard_streams(total, s.k, s.n));
    let e: Estimate = estimate(
        study,
        members,
        req,
        streams,
        format == CohortFormat::Csv,
        shard.is_some(),
    );
    let (mem, cpu) = (e.bytes as f64, e.cpu_seconds);
    let (max_mem, max_cpu) = (MAX_BYTES as f64, MAX_CPU_SECONDS);
    if mem <= max_mem && cpu <= max_cpu {
        return Ok(());
    }
    if format == CohortFormat::Csv {
        let plain = estimate(study, members, req, 0..total, false, false);
        if (plain.bytes as f64) <= max_mem && cpu <= max_cpu {
            return Err(Error::Usage(format!(
                "--format csv: the per-participant CSV of this cohort is too large: {} runs, an estimated {:.1} GB of memory, over the {} GB one run may take (a row per run); its JSON or table needs about {:.1} GB: use --format json or table, or fewer participants or draws",
                e.runs,
                mem / 1e9,
                max_mem / 1e9,
                plain.bytes as f64 / 1e9
            )));
        }
    }
    // The shards of the whole cohort that bring each within bounds, estimated as
    // shards (a shard keeps its runs' scalars and writes them).
    let whole = estimate(study, members, req, 0..total, false, true);
    let fixed = estimate(study, members, req, 0..0, false, true).bytes as f64;
    let runs_bytes = whole.bytes as f64 - fixed;
    let n = (runs_bytes / (max_mem - fixed).max(1.0))
        .max(whole.cpu_seconds / max_cpu)
        .ceil()
        .max(2.0)
        .min(total.max(2) as f64) as u64;
    let csv = if format == CohortFormat::Csv {
        " (a per-participant CSV holds a row per run: JSON or a table needs far less)"
    } else {
        ""
    };
    Err(Error::Usage(format!(
        "this cohort is too large for one run: {} runs, an estimated {:.1} GB of memory and {:.1} CPU hours{csv}, over the {} GB and {} hours one run may take; split it with --shard K/N for K = 1 to {n} (each shard about {:.1} GB and {:.1} CPU hours, and each can run on its own machine) and combine the shard files with cohort-merge (docs/cluster.md)",
        e.runs,
        mem / 1e9,
        cpu / 3600.0,
        max_mem / 1e9,
        max_cpu / 3600.0,
        (fixed + runs_bytes / n as f64) / 1e9,
        whole.cpu_seconds / n as f64 / 3600.0,
    )))
}

/// The most memory one run may take, by the estimate: 4 GB (common practice for a
/// job on a shared machine or a cluster node's share).
const MAX_BYTES: u64 = 4_000_000_000;
/// The most CPU time one run may take, by the estimate: 12 hours (common practice:
/// within a night, and within the usual wall-time limits of batch queues).
const MAX_CPU_SECONDS: f64 = 12.0 * 3600.0;

pub(crate) fn corrupt(name: &str, why: &str) -> Error {
    Error::Usage(format!(
        "{name}: not a complete cohort shard file ({why}); it may be truncated or damaged: run that shard again"
    ))
}

/// Read one shard file and check its format, version, program and checksum.
pub(crate) fn read_shard(path: &std::path::Path) -> Result<(ShardFile, String), Error> {
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
pub(crate) fn same_cohort(
    a: &ShardFile,
    a_name: &str,
    b: &ShardFile,
    b_name: &str,
) -> Result<(), Error> {
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
