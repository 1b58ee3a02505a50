//! The charts with a participant log and the chart fixes of docs/design.md ("Charts
//! with a log"): the weigh-ins as points at their dates beside one projection that
//! no weigh-in moves, an energy chart that counts no scale noise as deficit, no
//! shaded region with a log; the cohort minutes chart's maximum as a level line and
//! its drop-out note; titles that fit the canvas. PNG previews through
//! `rsvg-convert` where it is installed.

mod common;

use common::hard_edges::*;
use common::*;
use dosewright::report::chart::{LineChart, Series, WeighInPoint, logged_charts, standard_charts};
use dosewright::report::units::Units;
use dosewright::simulate::{simulate_delivered, simulate_observed};

/// Named charts, as `logged_charts` returns them.
type Charts = Vec<(&'static str, LineChart)>;

/// The demo log with every weigh-in's mass moved by `shift_kg` (sessions as they are).
fn shifted_log(shift_kg: f64) -> String {
    DEMO_LOG
        .lines()
        .map(|l| {
            let mut cells: Vec<String> = l.split(',').map(str::to_string).collect();
            if cells.get(1).map(String::as_str) == Some("weigh-in") {
                let m: f64 = cells[2].parse().unwrap();
                cells[2] = format!("{:.2}", m + shift_kg);
            }
            cells.join(",") + "\n"
        })
        .collect()
}

/// The demo's logged charts with the weigh-ins moved by `shift_kg`, and the weigh-ins
/// read from the log text by the test itself (date, kind, mass columns).
fn logged(shift_kg: f64) -> (Charts, Vec<(f64, f64)>) {
    let dir = Scratch::new("logged-charts");
    let text = shifted_log(shift_kg);
    let log = dir.write("log.csv", &text);
    let plan = dosewright::plan::parse_plan("plan.toml", DEMO_PLAN).unwrap();
    let input = dosewright::commands::read_log(&plan, Some(&log), None).unwrap();
    let obs = input.observed.as_ref().unwrap();
    let replanned = simulate_observed(&plan, Some(obs)).unwrap();
    let delivered = simulate_delivered(&plan, obs).unwrap();
    let points: Vec<WeighInPoint> = obs
        .weigh_ins
        .iter()
        .map(|w| WeighInPoint {
            day: w.day,
            mass_kg: w.mass_kg,
        })
        .collect();
    let charts = logged_charts(
        &replanned.scenarios,
        &delivered.scenarios,
        &points,
        plan.protocol.weeks,
        Units::default(),
    );
    let start = plan.protocol.start;
    let expected = text
        .lines()
        .filter(|l| l.split(',').nth(1) == Some("weigh-in"))
        .map(|l| {
            let c: Vec<&str> = l.split(',').collect();
            let d = chrono::NaiveDate::parse_from_str(c[0], "%Y-%m-%d").unwrap();
            (
                (d - start).num_days() as f64 / 7.0,
                c[2].parse::<f64>().unwrap(),
            )
        })
        .collect();
    (charts, expected)
}

fn chart<'a>(charts: &'a [(&str, LineChart)], name: &str) -> &'a LineChart {
    &charts.iter().find(|(n, _)| *n == name).unwrap().1
}

fn lines(c: &LineChart) -> Vec<&Series> {
    c.series.iter().filter(|s| !s.markers_only).collect()
}

#[test]
fn the_weigh_ins_are_points_at_their_dates_beside_one_projection() {
    let (charts, expected) = logged(0.0);
    let mass = chart(&charts, "mass");
    let points: Vec<&Series> = mass.series.iter().filter(|s| s.markers_only).collect();
    assert_eq!(points.len(), 1, "one series of weigh-ins");
    assert_eq!(points[0].points.len(), expected.len());
    for ((x, y), (ex, ey)) in points[0].points.iter().zip(&expected) {
        assert!(
            (x - ex).abs() < 1e-12 && (y - ey).abs() < 1e-9,
            "{x},{y} vs {ex},{ey}"
        );
    }
    // One line per scenario, one point per week from the baseline at week 0.
    let plan = dosewright::plan::parse_plan("plan.toml", DEMO_PLAN).unwrap();
    assert_eq!(lines(mass).len(), plan.scenarios.len());
    for s in lines(mass) {
        assert_eq!(
            s.points[0],
            (0.0, plan.participant.subject.mass_kg),
            "{}",
            s.name
        );
        let xs: Vec<f64> = s.points.iter().map(|p| p.0).collect();
        let weeks: Vec<f64> = (0..=plan.protocol.total_weeks()).map(f64::from).collect();
        assert_eq!(
            xs, weeks,
            "{}: one point per week-end, none inserted at weigh-ins",
            s.name
        );
    }
    // Neutral: no shaded region with a log.
    assert!(mass.band.is_none());
    assert!(!mass.render().contains("fill-opacity=\"0.28\""));
}

#[test]
fn no_weigh_in_moves_the_projection_or_the_deficit() {
    // Moving every weigh-in by 0.7 kg (a scale that reads high) moves the points by
    // exactly that and leaves the projection and the energy chart as they were: the
    // lines are not re-anchored, so scale noise is never counted as deficit.
    let (a, _) = logged(0.0);
    let (b, _) = logged(0.7);
    for name in ["mass", "composition", "energy"] {
        let (la, lb) = (lines(chart(&a, name)), lines(chart(&b, name)));
        assert_eq!(la, lb, "{name}: the lines do not depend on the weigh-ins");
    }
    let pa = &chart(&a, "mass")
        .series
        .iter()
        .find(|s| s.markers_only)
        .unwrap()
        .points;
    let pb = &chart(&b, "mass")
        .series
        .iter()
        .find(|s| s.markers_only)
        .unwrap()
        .points;
    for (p, q) in pa.iter().zip(pb) {
        assert!((q.1 - p.1 - 0.7).abs() < 1e-9);
    }
    // The re-anchored schedule, by contrast, does follow the scale: what the charts
    // no longer draw.
    let dir = Scratch::new("anchored");
    let plan = dosewright::plan::parse_plan("plan.toml", DEMO_PLAN).unwrap();
    let end = |shift: f64| {
        let log = dir.write("log.csv", shifted_log(shift));
        let input = dosewright::commands::read_log(&plan, Some(&log), None).unwrap();
        let sim = simulate_observed(&plan, input.observed.as_ref()).unwrap();
        sim.scenarios[0].weeks.last().unwrap().end.mass_kg
    };
    assert!((end(0.7) - end(0.0)).abs() > 0.1);
}

#[test]
fn the_energy_chart_with_a_log_says_where_its_deficit_comes_from() {
    let (charts, _) = logged(0.0);
    let e = chart(&charts, "energy");
    assert!(
        e.caption.contains("not re-anchored at the weigh-ins"),
        "{}",
        e.caption
    );
    assert!(
        e.caption.contains("not counted as deficit"),
        "{}",
        e.caption
    );
    let m = chart(&charts, "mass");
    assert!(
        m.caption
            .contains("Adherence is counted from the delivered sessions")
    );
}

#[test]
fn schedule_and_compare_with_a_log_write_the_logged_charts() {
    let dir = fresh("logged-cli");
    for cmd in ["schedule", "compare"] {
        let r = run(dir
            .cmd()
            .args([cmd, "plan.toml", "--log", "log.csv", "--chart", cmd]));
        assert_eq!(r.code, Some(0), "{}", r.stderr);
        let svg = std::fs::read_to_string(dir.path().join(cmd).join("DEMO-017-mass.svg")).unwrap();
        assert!(svg.contains("weigh-ins (log)"), "{cmd}");
        assert!(
            !svg.contains("sensitivity band"),
            "{cmd}: no band with a log"
        );
    }
    // Without a log the band stays.
    let r = run(dir
        .cmd()
        .args(["schedule", "plan.toml", "--chart", "plain"]));
    assert_eq!(r.code, Some(0));
    let svg = std::fs::read_to_string(dir.path().join("plain/DEMO-017-mass.svg")).unwrap();
    assert!(svg.contains("sensitivity band") && !svg.contains("weigh-ins (log)"));
}

#[test]
fn every_title_fits_the_canvas() {
    let plan = dosewright::plan::parse_plan("plan.toml", DEMO_PLAN).unwrap();
    let sim = dosewright::simulate::simulate(&plan).unwrap();
    let mut charts = standard_charts(&sim.scenarios, plan.protocol.weeks, None, Units::default());
    charts.extend(logged(0.0).0);
    for (name, c) in &charts {
        let (w, room) = c.title_width();
        assert!(w <= room + 1e-9, "{name}: {w} > {room}");
    }
    // A long title (a long scenario name) is set smaller rather than cut off; a short
    // one keeps the full size. Widths by the chart's own estimate, 900 px less 2 x 16.
    let mut long = charts[0].1.clone();
    long.title = format!(
        "Mass change at week 24 by arm (scenario \"{}\")",
        "eats back about 30% of the dose, three weeks late".repeat(2)
    );
    let (w, room) = long.title_width();
    assert!(
        (w - room).abs() < 1e-6,
        "a long title fills the width exactly: {w} {room}"
    );
    assert!(long.title_size() < 18.0);
    assert_eq!(charts[0].1.title_size(), 18.0);
    assert!(long.render().contains(&format!(
        "font-size=\"{:.2}\" font-weight=\"bold\"",
        long.title_size()
    )));
}

#[test]
fn cohort_charts_maximum_level_drop_out_note_and_titles() {
    let dir = fresh("cohort-charts");
    // A long scenario name puts the mass-change title past the canvas at full size.
    let study = STUDY.replace(
        "name = \"as prescribed\"",
        "name = \"as prescribed, every session delivered at the full dose and no compensation\"",
    );
    assert_ne!(study, STUDY);
    dir.write("long.toml", &study);
    let r = run(dir.cmd().args([
        "cohort",
        "long.toml",
        "--roster",
        "roster.csv",
        "--quiet",
        "--chart",
        "c",
    ]));
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    let read = |n: &str| std::fs::read_to_string(dir.path().join("c").join(n)).unwrap();
    let minutes = read("hard_edges_study-minutes.svg");
    assert!(minutes.contains("counts as 0 minutes"), "the drop-out note");
    // The maximum (60 min in the study) is a dashed path at one height across the
    // weeks: two points, same y, different x.
    let level = minutes.split("<path d=\"").skip(1).any(|p| {
        let d = &p[..p.find('"').unwrap()];
        let pts: Vec<(f64, f64)> = d
            .split(['M', 'L'])
            .filter(|s| !s.trim().is_empty())
            .map(|s| {
                let (x, y) = s.trim().split_once(',').unwrap();
                (x.parse().unwrap(), y.parse().unwrap())
            })
            .collect();
        p.contains("stroke-dasharray")
            && pts.len() == 2
            && pts[0].1 == pts[1].1
            && pts[1].0 > pts[0].0 + 100.0
    });
    assert!(level, "a horizontal dashed maximum line");
    assert!(minutes.contains("maximum 60 min"));
    let mass = read("hard_edges_study-mass-change.svg");
    let size: f64 = mass
        .split("font-weight=\"bold\"")
        .next()
        .and_then(|h| h.rsplit("font-size=\"").next())
        .and_then(|s| s.split('"').next())
        .unwrap()
        .parse()
        .unwrap();
    assert!(
        size < 18.0,
        "the long title is set smaller ({size}), not cut off"
    );
}

#[test]
fn logged_charts_render_with_rsvg_convert() {
    if std::process::Command::new("rsvg-convert")
        .arg("--version")
        .output()
        .is_err()
    {
        eprintln!(
            "skipped: logged_charts_render_with_rsvg_convert: rsvg-convert is not on PATH (apt-get install librsvg2-bin)"
        );
        return;
    }
    let dir = Scratch::new("logged-png");
    for (name, c) in logged(0.0).0 {
        let svg = dir.write(&format!("{name}.svg"), c.render());
        let png = dir.path().join(format!("{name}.png"));
        let out = std::process::Command::new("rsvg-convert")
            .arg(&svg)
            .arg("-o")
            .arg(&png)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{name}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let bytes = std::fs::read(&png).unwrap();
        assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "{name}");
    }
}
