//! The day view re-plans only the weeks that decide a date (docs/register.md,
//! "Speed"): the first scenario up to the date's week, and every scenario in full
//! only when the screening result turns on whether a session is vigorous. Checked
//! here against the independent reference, the whole re-plan the schedule makes
//! from the same rows (every scenario, protocol and follow-up): the same sessions
//! due (minutes, target heart rate, every other value), the same week and the
//! same screening, for several participants and dates -- early, after a missed
//! week, late in the protocol, after the log's last row, on days without sessions
//! and outside the protocol.

use chrono::{Days, NaiveDate, TimeZone, Utc};
use dosewright::desk::demo;
use dosewright::desk::views::{self, Cache};
use dosewright::register::{Enrolment, SqliteStore, Stamp, Store, Which};
use std::path::Path;

fn stamp() -> Stamp {
    Stamp::new("tester", Utc.with_ymd_and_hms(2027, 1, 4, 8, 0, 0).unwrap()).unwrap()
}

fn start() -> NaiveDate {
    NaiveDate::from_ymd_opt(2027, 1, 4).unwrap()
}

/// A log from day 0 to day `days - 1`: a weigh-in every Monday (`loss` kg a week
/// lower) and a 30-minute session every Monday, Wednesday and Friday, except the
/// sessions of the protocol weeks in `missed` (1-based).
fn history(mass: f64, loss: f64, days: u64, missed: &[u64]) -> String {
    let mut s = String::from(
        "date,kind,mass_kg,body_fat_percent,minutes,compendium_code,met,avg_hr_bpm,rpe,note\n",
    );
    for d in 0..days {
        let date = start() + Days::new(d);
        let week = d / 7 + 1;
        if d % 7 == 0 && d > 0 {
            let kg = ((mass - loss * (d / 7) as f64) * 10.0).round() / 10.0;
            s.push_str(&format!("{date},weigh-in,{kg},,,,,,,\n"));
        }
        if [0, 2, 4].contains(&(d % 7)) && !missed.contains(&week) {
            s.push_str(&format!("{date},session,,,30,,,,,\n"));
        }
    }
    s
}

/// The demo plan `e` with screening answers that make the result turn on
/// vigorous sessions (exercising regularly, known disease, no clearance on file)
/// and an ergometer workload whose MET rises as body mass falls.
fn vigorous_question(e: &Enrolment) -> Enrolment {
    let mut plan: toml::Table = e.plan_text.parse().unwrap();
    let participant = plan["participant"].as_table_mut().unwrap();
    let mut screening = toml::Table::new();
    for (k, v) in [
        ("exercises_regularly", true),
        ("known_disease", true),
        ("signs_or_symptoms", false),
        ("medical_clearance", false),
    ] {
        screening.insert(k.into(), toml::Value::Boolean(v));
    }
    participant.insert("screening".into(), toml::Value::Table(screening));
    let activity = plan["activity"].as_table_mut().unwrap();
    activity.remove("compendium_code");
    activity.insert("cycling_watts".into(), toml::Value::Float(110.0));
    Enrolment {
        plan_name: e.plan_name.clone(),
        plan_text: toml::to_string(&plan).unwrap(),
        arm: e.arm.clone(),
    }
}

/// A register of six participants with different histories and one with none;
/// their codes.
fn register(path: &Path) -> Vec<String> {
    let mut store = SqliteStore::create(path).unwrap();
    let mut enrolments = demo::plans(start(), Some(6)).unwrap();
    enrolments[5] = vigorous_question(&enrolments[5]);
    // (weekly loss kg, days logged, protocol weeks with no session)
    let histories: [(f64, u64, &[u64]); 6] = [
        (0.3, 160, &[]),
        (0.5, 120, &[4]),
        (0.2, 45, &[2, 3]),
        (0.8, 100, &[9]),
        (0.0, 1, &[]),
        (0.6, 150, &[6]),
    ];
    let mut codes = Vec::new();
    for (e, (loss, days, missed)) in enrolments.iter().zip(histories) {
        let p = store.enrol(e, &stamp()).unwrap();
        let mass = p.plan().unwrap().participant.subject.mass_kg;
        store
            .import_log(
                &p.code,
                "history.csv",
                &history(mass, loss, days, missed),
                &stamp(),
            )
            .unwrap();
        codes.push(p.code);
    }
    // A seventh participant with no row at all (due from the plan alone).
    let e = demo::plans(start(), Some(7)).unwrap().remove(6);
    codes.push(store.enrol(&e, &stamp()).unwrap().code);
    codes
}

#[test]
fn the_day_view_equals_the_whole_re_plan() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("site.db");
    let codes = register(&path);
    let store = SqliteStore::open_read_only(&path).unwrap();
    let full = Cache::default();
    // Day offsets from the start: week 1; week 5, after participant 2's missed week 4;
    // week 10, after participant 4's missed week 9; week 7 after the missed week 6 of
    // participant 6; a Tuesday (no session); the last protocol week (24); the first
    // follow-up week; before the start.
    let offsets: [i64; 9] = [0, 28, 30, 63, 42, 44, 1, 7 * 23 + 4, 7 * 24 + 2];
    let mut compared = 0;
    let mut vigorous_path = false;
    let mut stepped_down = false;
    for offset in offsets.into_iter().chain([-3]) {
        let date = start() + chrono::TimeDelta::days(offset);
        let view = views::day_view(&store, &Cache::default(), date).unwrap();
        assert_eq!(view.enrolled, codes.len());
        for code in &codes {
            let whole = full.replan_code(&store, code).unwrap();
            let want: Vec<_> = whole.sessions_on(date).into_iter().cloned().collect();
            let rows = store.rows(Some(code), Which::Current).unwrap();
            let recorded = rows.iter().filter(|r| r.measure.date() == date).count();
            match view.lines.iter().find(|l| &l.code == code) {
                Some(line) => {
                    assert_eq!(line.due, want, "{code} on {date}: the sessions due");
                    assert_eq!(line.recorded.len(), recorded, "{code} on {date}");
                    assert_eq!(line.week, whole.week_of(date), "{code} on {date}");
                    let s = &whole.report.screening;
                    assert_eq!(line.screening, s.recommendation, "{code} on {date}");
                    assert_eq!(line.clearance_missing, s.clearance_missing, "{code}");
                    if !want.is_empty() {
                        compared += 1;
                        stepped_down |= whole
                            .sessions
                            .weeks
                            .iter()
                            .any(|w| Some(w.week) == line.week && w.step_down.is_some());
                        // The minutes and the target heart rate in particular.
                        for (a, b) in line.due.iter().zip(&want) {
                            assert_eq!(a.minutes, b.minutes);
                            assert_eq!(a.targets.heart_rate, b.targets.heart_rate);
                        }
                    }
                    if s.clearance == Some(dosewright::safety::screening::Clearance::BeforeVigorous)
                    {
                        vigorous_path = true;
                    }
                }
                None => assert!(
                    want.is_empty() && recorded == 0,
                    "{code} on {date} missing from the day view"
                ),
            }
        }
    }
    // Most participants are due on the session days of the protocol.
    assert!(compared >= 30, "only {compared} lines compared");
    assert!(
        vigorous_path,
        "the screening that needs the whole run was compared"
    );
    assert!(
        stepped_down,
        "a week stepped down after an absence was compared"
    );
}

/// The planned minutes after a missed week are those of the whole re-plan, and
/// they do differ from the minutes of a participant who did not miss it: the
/// check above compares a re-prescribed week, not a copy of the plan.
#[test]
fn a_missed_week_changes_the_minutes_the_day_view_shows() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("site.db");
    let mut store = SqliteStore::create(&path).unwrap();
    let e = demo::plans(start(), Some(1)).unwrap().remove(0);
    let p = store.enrol(&e, &stamp()).unwrap();
    let mass = p.plan().unwrap().participant.subject.mass_kg;
    // Monday of week 5; the logs run to that day, so week 4 is wholly in the past.
    let date = start() + Days::new(28);
    let minutes = |store: &SqliteStore| {
        let v = views::day_view(store, &Cache::default(), date).unwrap();
        v.lines[0].due[0].minutes
    };
    store
        .import_log(&p.code, "a.csv", &history(mass, 0.3, 29, &[]), &stamp())
        .unwrap();
    let kept = minutes(&store);
    let dir2 = tempfile::tempdir().unwrap();
    let path2 = dir2.path().join("site.db");
    let mut store2 = SqliteStore::create(&path2).unwrap();
    store2.enrol(&e, &stamp()).unwrap();
    store2
        .import_log(&p.code, "b.csv", &history(mass, 0.3, 29, &[4]), &stamp())
        .unwrap();
    let after_missed = minutes(&store2);
    let whole = Cache::default().replan_code(&store2, &p.code).unwrap();
    assert_eq!(after_missed, whole.sessions_on(date)[0].minutes);
    assert_ne!(kept, after_missed, "the missed week changed nothing");
}
