//! The `activities` command (docs/commands.md): the activity table with its energy
//! equations, search by words, code prefix and MET range, and the messages for no match,
//! one match and an impossible range.

mod common;

use common::schedule_contract::*;
use common::*;
use std::collections::BTreeSet;

#[test]
fn activities_lists_the_whole_table_with_the_acsm_equations() {
    let r = run(dosewright().arg("activities"));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let rows = activity_rows(&r.stdout);
    assert!(
        rows.len() >= 80,
        "at least 80 activities, got {}",
        rows.len()
    );
    assert!(
        r.stdout
            .starts_with(&format!("{} activities in the built-in table.", rows.len()))
    );
    let codes: BTreeSet<&str> = rows.iter().map(|r| r.0.as_str()).collect();
    assert_eq!(codes.len(), rows.len(), "codes are unique");
    assert!(codes.contains("17200") && codes.contains("02010"));
    assert!(rows.iter().all(|r| r.1 > 1.0 && r.1 <= 25.0));
    for words in [
        "Ainsworth et al. 2011 Compendium of Physical Activities",
        "ACSM metabolic equations",
        "| walking ",
        "50-100 m/min",
        "| running ",
        "above 134 m/min",
        "| leg cycling ",
        "300-1200 kg*m/min",
    ] {
        assert!(r.stdout.contains(words), "activities lacks {words:?}");
    }
    for words in CAUTION_WORDS {
        assert!(
            r.stdout.contains(words),
            "activities lacks the caution {words:?}"
        );
    }
}

#[test]
fn activities_searches_by_words_code_prefix_and_met_range() {
    let all = activity_rows(&run(dosewright().arg("activities")).stdout);

    let r = run(dosewright().args(["activities", "walk"]));
    assert_eq!(r.code, Some(0));
    let walk = activity_rows(&r.stdout);
    assert!(!walk.is_empty() && walk.len() < all.len());
    for (code, _, group, label) in &walk {
        let hay = format!("{label} {group}").to_lowercase();
        assert!(hay.contains("walk"), "{code} {label} does not match walk");
    }
    assert!(
        r.stdout
            .starts_with(&format!("{} activities matching \"walk\".", walk.len()))
    );
    let expected = all
        .iter()
        .filter(|r| format!("{} {}", r.3, r.2).to_lowercase().contains("walk"))
        .count();
    assert_eq!(walk.len(), expected, "every walking row is found");

    let r = run(dosewright().args(["activities", "0201"]));
    assert_eq!(r.code, Some(0));
    let prefix = activity_rows(&r.stdout);
    assert!(!prefix.is_empty());
    assert!(prefix.iter().all(|r| r.0.starts_with("0201")), "{prefix:?}");
    assert_eq!(
        prefix.len(),
        all.iter().filter(|r| r.0.starts_with("0201")).count()
    );

    let r = run(dosewright().args(["activities", "--met-min", "8", "--met-max", "10"]));
    assert_eq!(r.code, Some(0));
    let band = activity_rows(&r.stdout);
    assert!(!band.is_empty());
    assert!(band.iter().all(|r| (8.0..=10.0).contains(&r.1)), "{band:?}");
    assert_eq!(
        band.len(),
        all.iter().filter(|r| (8.0..=10.0).contains(&r.1)).count()
    );
    assert!(all.iter().any(|r| r.1 < 8.0) && all.iter().any(|r| r.1 > 10.0));
    assert!(
        r.stdout
            .starts_with(&format!("{} activities between 8 and 10 MET.", band.len()))
    );
}

#[test]
fn activities_refuses_an_impossible_met_range() {
    for (args, msg) in [
        (
            &["activities", "--met-min", "10", "--met-max", "8"][..],
            "error: --met-min 10 is above --met-max 8\n",
        ),
        (
            &["activities", "--met-min", "30"][..],
            "error: invalid value '30' for '--met-min <MET>': allowed 0 to 25 MET\n\nFor more information, try '--help'.\n",
        ),
        (
            &["activities", "--met-max", "nan"][..],
            "error: invalid value 'nan' for '--met-max <MET>': allowed 0 to 25 MET\n\nFor more information, try '--help'.\n",
        ),
    ] {
        let r = run(dosewright().args(args));
        assert_eq!(r.code, Some(2), "{args:?}");
        assert_eq!(r.stdout, "");
        assert_eq!(r.stderr, msg);
    }
}

#[test]
fn activities_with_no_match_or_one_match_reads_well() {
    let r = run(dosewright().args(["activities", "zzz"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(
        r.stdout.starts_with("No activity matching \"zzz\".\n\n"),
        "{}",
        r.stdout
    );
    assert!(activity_rows(&r.stdout).is_empty());
    assert!(!r.stdout.contains("matches matching"));
    // The ACSM equations and the cautions are still shown.
    assert!(r.stdout.contains("ACSM metabolic equations"));
    for words in CAUTION_WORDS {
        assert!(r.stdout.contains(words), "lacks the caution {words:?}");
    }
    let r = run(dosewright().args(["activities", "17200"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert_eq!(activity_rows(&r.stdout).len(), 1);
    assert!(
        r.stdout.starts_with("1 activity matching \"17200\". "),
        "{}",
        r.stdout
    );
    let r = run(dosewright().args(["activities", "--met-min", "0", "--met-max", "1.5"]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    assert!(
        r.stdout
            .starts_with("No activity between 0 and 1.5 MET.\n\n"),
        "{}",
        r.stdout
    );
}

#[test]
fn activities_with_one_met_bound_reads_well() {
    let r = run(dosewright().args(["activities", "--met-min", "12"]));
    assert_eq!(r.code, Some(0));
    let n = activity_rows(&r.stdout).len();
    assert!(n > 1);
    let first = r.stdout.lines().next().unwrap();
    assert!(first.starts_with(&format!("{n} activities ")), "{first}");
    assert!(first.contains("12 MET"), "{first}");
    assert!(!first.contains("and any"), "{first}");
}
