//! Cohort shards (docs/cluster.md): `cohort --shard K/N` runs the K-th of N parts of
//! the (participant, draw) streams and writes a shard file; `cohort-merge` combines a
//! complete set into the report of the unsharded run. The invariant checked here is
//! the one the design promises: the merged JSON, CSV and table (standard output and
//! standard error) are the unsharded run's bytes, whatever the merge order, the
//! number of shards or threads. Every refusal exits with code 2 and names the file.
//! The participants are invented (synthetic draws and the pseudonymous example
//! rosters).

mod common;

use common::*;

/// What a run printed: exit code, standard output and standard error.
#[derive(Debug, PartialEq, Eq)]
struct Out {
    code: i32,
    stdout: Vec<u8>,
    stderr: String,
}

fn run(dir: &Scratch, args: &[&str]) -> Out {
    let o = dir.cmd().args(args).output().expect("the binary runs");
    Out {
        code: o.status.code().unwrap_or(-1),
        stdout: o.stdout,
        stderr: String::from_utf8_lossy(&o.stderr).into_owned(),
    }
}

/// A scratch folder with the benchmark study, the example study and its rosters.
fn scratch() -> Scratch {
    let dir = Scratch::new("shards");
    for (from, to) in [
        ("plans/benchmark-study.toml", "bench.toml"),
        ("plans/study-pilot.toml", "pilot.toml"),
        ("demo-data/pilot-roster-allocated.csv", "allocated.csv"),
        ("demo-data/pilot-roster.csv", "roster.csv"),
    ] {
        let text = std::fs::read(manifest_dir().join(from)).expect("a shipped file");
        dir.write(to, text);
    }
    dir
}

/// Run shards 1..=n of `cohort` with `args` into `stem-K.json`; returns their names.
fn shards(dir: &Scratch, args: &[&str], n: u32, stem: &str, threads: &str) -> Vec<String> {
    (1..=n)
        .map(|k| {
            let name = format!("{stem}-{k}.json");
            let shard = format!("{k}/{n}");
            let mut a: Vec<&str> = vec!["cohort"];
            a.extend(args);
            a.extend([
                "--quiet",
                "--threads",
                threads,
                "--shard",
                &shard,
                "--out",
                &name,
            ]);
            let o = run(dir, &a);
            assert_eq!(o.code, 0, "shard {shard}: {}", o.stderr);
            assert!(o.stdout.is_empty(), "a shard with --out prints nothing");
            name
        })
        .collect()
}

/// The merge of `files` (in that order) in `format`.
fn merge(dir: &Scratch, files: &[&str], format: &str) -> Out {
    let mut a = vec!["cohort-merge", "--format", format];
    a.extend(files);
    run(dir, &a)
}

/// The unsharded run in `format`.
fn whole(dir: &Scratch, args: &[&str], format: &str) -> Out {
    let mut a = vec!["cohort"];
    a.extend(args);
    a.extend(["--quiet", "--format", format]);
    let o = run(dir, &a);
    assert_eq!(o.code, 0, "{}", o.stderr);
    o
}

/// Every order of three names worth trying: forward, backward, rotated.
fn orders(f: &[String]) -> Vec<Vec<&str>> {
    let s: Vec<&str> = f.iter().map(String::as_str).collect();
    match s.len() {
        3 => vec![
            vec![s[0], s[1], s[2]],
            vec![s[2], s[1], s[0]],
            vec![s[1], s[2], s[0]],
            vec![s[2], s[0], s[1]],
        ],
        _ => vec![s.clone(), s.iter().rev().copied().collect()],
    }
}

fn assert_merges_to_whole(dir: &Scratch, args: &[&str], n: u32, stem: &str) {
    let files = shards(dir, args, n, stem, "2");
    for format in ["json", "csv", "table"] {
        let expected = whole(dir, args, format);
        for order in orders(&files) {
            let got = merge(dir, &order, format);
            assert_eq!(got.code, 0, "{order:?}: {}", got.stderr);
            assert!(
                got.stdout == expected.stdout,
                "{stem} {format} merged in {order:?} differs from the unsharded run"
            );
            assert_eq!(got.stderr, expected.stderr, "{stem} {format} {order:?}");
        }
    }
}

#[test]
fn three_shards_merged_in_any_order_are_the_unsharded_run_byte_for_byte() {
    let dir = scratch();
    // Synthetic participants in every arm with uncertainty: 40 x 5 streams, split
    // inside participants (200 / 3 is not whole).
    let bench = [
        "bench.toml",
        "--synthetic",
        "40",
        "--all-arms",
        "--draws",
        "5",
        "--seed",
        "3",
    ];
    assert_merges_to_whole(&dir, &bench, 3, "bench");
    // A roster with arms, two scenarios, follow-up and an extra checkpoint.
    let pilot = [
        "pilot.toml",
        "--roster",
        "allocated.csv",
        "--draws",
        "4",
        "--at-week",
        "10",
    ];
    assert_merges_to_whole(&dir, &pilot, 3, "pilot");
}

#[test]
fn more_shards_than_streams_leave_empty_shards_that_still_merge() {
    let dir = scratch();
    // 12 participants in every arm, one draw: 12 streams in 16 shards.
    let args = ["pilot.toml", "--roster", "roster.csv", "--all-arms"];
    let files = shards(&dir, &args, 16, "many", "1");
    let names: Vec<&str> = files.iter().map(String::as_str).collect();
    for format in ["json", "csv", "table"] {
        let got = merge(&dir, &names, format);
        assert_eq!(got.code, 0, "{}", got.stderr);
        assert!(got.stdout == whole(&dir, &args, format).stdout, "{format}");
    }
}

#[test]
fn a_shard_file_does_not_depend_on_the_thread_count() {
    let dir = scratch();
    let args = [
        "bench.toml",
        "--synthetic",
        "30",
        "--all-arms",
        "--draws",
        "3",
    ];
    let read = |f: &[String]| -> Vec<Vec<u8>> {
        f.iter()
            .map(|n| std::fs::read(dir.path().join(n)).unwrap())
            .collect()
    };
    let one = read(&shards(&dir, &args, 2, "t1", "1"));
    for threads in ["2", "5"] {
        let stem = format!("t{threads}");
        assert_eq!(
            read(&shards(&dir, &args, 2, &stem, threads)),
            one,
            "{threads} threads"
        );
    }
}

/// The shards of one small cohort, and the refusals of bad sets of them.
#[test]
fn bad_shard_sets_are_refused_with_exit_code_2_naming_the_file() {
    let dir = scratch();
    let args = [
        "bench.toml",
        "--synthetic",
        "12",
        "--all-arms",
        "--draws",
        "2",
    ];
    let f = shards(&dir, &args, 3, "ok", "2");
    let refused = |files: &[&str], needle: &str| {
        let o = merge(&dir, files, "json");
        assert_eq!(o.code, 2, "{files:?}: {}", o.stderr);
        assert!(o.stdout.is_empty());
        assert!(
            o.stderr.contains(needle),
            "{files:?}: expected {needle:?} in {}",
            o.stderr
        );
    };
    let (a, b, c) = (f[0].as_str(), f[1].as_str(), f[2].as_str());
    // The same shard twice.
    refused(
        &[a, b, b, c],
        "ok-2.json: shard 2/3 is given twice (also ok-2.json)",
    );
    // An incomplete set names the missing shards.
    refused(&[c, a], "the shards are incomplete: missing 2/3 (of 3)");
    refused(&[b], "missing 1/3, 3/3 (of 3)");
    // Another seed, another number of draws, another study, another shard count.
    let other = |extra: &[&str], stem: &str, n: u32| {
        let mut a: Vec<&str> = args.to_vec();
        a.extend(extra);
        shards(&dir, &a, n, stem, "2")
    };
    let seed = other(&["--seed", "9"], "seed", 3);
    refused(
        &[a, &seed[1], c],
        "seed-2.json: not a shard of the same cohort as ok-1.json: seed 9 against 20270101",
    );
    let draws = {
        let mut a: Vec<&str> = args.to_vec();
        a[5] = "3";
        shards(&dir, &a, 3, "draws", "2")
    };
    refused(
        &[a, b, &draws[2]],
        "draws-3.json: not a shard of the same cohort as ok-1.json: 3 draws against 2",
    );
    let four = other(&[], "four", 4);
    let text = std::fs::read_to_string(dir.path().join("bench.toml")).unwrap();
    dir.write(
        "bench.toml",
        text.replace("dropout_per_week = 0.004", "dropout_per_week = 0.005"),
    );
    let study = shards(&dir, &args, 3, "study", "2");
    refused(
        &[a, &study[1], c],
        "study-2.json: not a shard of the same cohort as ok-1.json: another study or roster (bench.toml",
    );
    refused(
        &[a, &four[1]],
        "four-2.json: not a shard of the same cohort as ok-1.json: one of 4 shards against one of 3",
    );
    refused(&[a, b, c, &four[3]], "one of 4 shards against one of 3");
    // A truncated file, a damaged byte, a file of a later format, not a shard at all.
    let bytes = std::fs::read(dir.path().join(b)).unwrap();
    dir.write("cut.json", &bytes[..bytes.len() / 2]);
    refused(
        &[a, "cut.json", c],
        "cut.json: not a complete cohort shard file (EOF while parsing",
    );
    let mut damaged = String::from_utf8(bytes.clone()).unwrap();
    let at = damaged.find("\"end_mass_kg\":\"").unwrap() + 20;
    let ch = if &damaged[at..=at] == "A" { "B" } else { "A" };
    damaged.replace_range(at..=at, ch);
    dir.write("damaged.json", damaged);
    refused(
        &[a, "damaged.json", c],
        "damaged.json: not a complete cohort shard file (its checksum does not match its contents)",
    );
    let later = String::from_utf8(bytes)
        .unwrap()
        .replace("\"format_version\":1", "\"format_version\":2");
    dir.write("later.json", later);
    refused(
        &[a, "later.json", c],
        "later.json: a shard file of format version 2; this program reads version 1",
    );
    refused(&[a, "bench.toml", c], "bench.toml: not a cohort shard file");
    // The complete set still merges.
    assert_eq!(merge(&dir, &[c, b, a], "json").code, 0);
}

#[test]
fn a_shard_writes_no_charts() {
    let dir = scratch();
    let o = run(
        &dir,
        &[
            "cohort",
            "bench.toml",
            "--synthetic",
            "6",
            "--shard",
            "1/2",
            "--chart",
            "charts",
        ],
    );
    assert_eq!(o.code, 2);
    assert!(
        o.stderr
            .contains("--chart: a shard writes no charts; give --chart to cohort-merge"),
        "{}",
        o.stderr
    );
    for bad in ["0/3", "4/3", "3", "a/b", "1/0"] {
        let o = run(
            &dir,
            &["cohort", "bench.toml", "--synthetic", "6", "--shard", bad],
        );
        assert_eq!(o.code, 2, "{bad}");
        assert!(o.stderr.contains("is not K/N"), "{bad}: {}", o.stderr);
    }
}

#[test]
fn a_request_too_large_for_one_run_is_refused_up_front_with_the_shards_to_use() {
    let dir = scratch();
    // 100,000 participants x 3 arms x 10,000 draws: 3e9 runs.
    let o = run(
        &dir,
        &[
            "cohort",
            "bench.toml",
            "--synthetic",
            "100000",
            "--all-arms",
            "--draws",
            "10000",
            "--quiet",
        ],
    );
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(
        o.stderr
            .contains("this cohort is too large for one run: 3000000000 runs"),
        "{}",
        o.stderr
    );
    assert!(
        o.stderr
            .contains("split it with --shard K/N for K = 1 to 188"),
        "{}",
        o.stderr
    );
    // Too few shards: each shard is itself refused, with the same split.
    let o = run(
        &dir,
        &[
            "cohort",
            "bench.toml",
            "--synthetic",
            "100000",
            "--all-arms",
            "--draws",
            "10000",
            "--quiet",
            "--shard",
            "1/100",
        ],
    );
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(o.stderr.contains(": 30000000 runs"), "{}", o.stderr);
    assert!(o.stderr.contains("K = 1 to 188"), "{}", o.stderr);
    // A CSV too large whose JSON would fit: the JSON or the table is the advice.
    let o = run(
        &dir,
        &[
            "cohort",
            "bench.toml",
            "--synthetic",
            "1000",
            "--all-arms",
            "--draws",
            "10000",
            "--quiet",
            "--format",
            "csv",
        ],
    );
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(
        o.stderr.contains(
            "--format csv: the per-participant CSV of this cohort is too large: 30000000 runs"
        ),
        "{}",
        o.stderr
    );
    assert!(
        o.stderr.contains("use --format json or table"),
        "{}",
        o.stderr
    );
}

#[test]
fn the_shards_tile_the_streams_without_gap_or_overlap() {
    use dosewright::simulate::cohort::{shard_streams, stream_count};
    for (members, draws) in [(1, 1), (7, 3), (40, 5), (1000, 100), (3, 10_000)] {
        let total = stream_count(members, draws);
        assert_eq!(total, members as u64 * u64::from(draws));
        for n in [1, 2, 3, 7, 16, 1000] {
            let parts: Vec<_> = (1..=n).map(|k| shard_streams(total, k, n)).collect();
            assert_eq!(parts[0].start, 0);
            assert_eq!(parts[n as usize - 1].end, total);
            for w in parts.windows(2) {
                assert_eq!(w[0].end, w[1].start, "{members} x {draws} in {n}");
            }
            // Nearly equal: sizes differ by at most one stream.
            let sizes: Vec<u64> = parts.iter().map(|p| p.end - p.start).collect();
            let (lo, hi) = (sizes.iter().min().unwrap(), sizes.iter().max().unwrap());
            assert!(hi - lo <= 1, "{members} x {draws} in {n}: {sizes:?}");
        }
    }
}
