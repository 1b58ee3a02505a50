//! Charts (docs/commands.md, "Charts"): the SVG renderer's helpers, the four standard
//! charts of the demo plan (well-formed XML, content, deterministic bytes, snapshots),
//! writing them to files, and PNG previews through `rsvg-convert` where it is
//! installed.

use dosewright::report::chart::{
    Band, LineChart, Series, energy_chart, escape, mass_chart, minutes_chart, nice_number,
    nice_ticks, standard_charts,
};
use dosewright::report::units::{EnergyUnit, UnitSystem, Units};
use dosewright::simulate::{ScenarioRun, simulate};
use std::path::{Path, PathBuf};
use std::process::Command;

/// The charts rendered and written by the one writer, `dosewright::output`.
fn write_charts(
    dir: &Path,
    stem: &str,
    charts: &[(&str, LineChart)],
) -> Result<Vec<PathBuf>, dosewright::Error> {
    let svgs: Vec<(&str, String)> = charts.iter().map(|(n, c)| (*n, c.render())).collect();
    dosewright::output::write_charts(dir, stem, &svgs)
}

const DEMO: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/plans/demo.toml");

fn demo() -> (Vec<ScenarioRun>, u32) {
    let plan = dosewright::plan::load_plan(Path::new(DEMO)).expect("the demo plan is valid");
    let weeks = plan.protocol.weeks;
    let sim = simulate(&plan).expect("the demo plan simulates");
    (sim.scenarios, weeks)
}

/// A band for the tests only: the first scenario's mass, widened by 8% of its change
/// from baseline plus 0.3 kg. It exercises the drawing, not any error model.
fn test_band(runs: &[ScenarioRun]) -> Band {
    let r = &runs[0];
    let base = r.weeks[0].reference_mass_kg;
    let points = std::iter::once((0.0, base))
        .chain(r.weeks.iter().map(|w| (f64::from(w.week), w.end.mass_kg)))
        .map(|(x, m)| {
            let half = 0.3 + 0.08 * (m - base).abs();
            (x, m - half, m + half)
        })
        .collect();
    Band {
        name: "illustrative band (test)".to_string(),
        points,
    }
}

/// The demo plan cut to 6 weeks with no follow-up, with a long scenario name full of
/// markup characters: the marker sits on the right edge and the legend wraps.
fn short_charts() -> Vec<(&'static str, LineChart)> {
    let text = std::fs::read_to_string(DEMO)
        .unwrap()
        .replace("weeks = 24", "weeks = 6")
        .replace("follow_up_weeks = 12", "follow_up_weeks = 0")
        .replace(
            "name = \"eats back 40%\"",
            "name = \"eats back <40%> & \\\"more\\\" of the dose, three weeks late\"",
        );
    let plan = dosewright::plan::parse_plan("short.toml", &text).expect("the short plan is valid");
    let sim = simulate(&plan).unwrap();
    assert_eq!(
        sim.scenarios[1].name,
        "eats back <40%> & \"more\" of the dose, three weeks late"
    );
    standard_charts(&sim.scenarios, plan.protocol.weeks, None, Units::default())
}

fn demo_charts() -> (Vec<ScenarioRun>, Vec<(&'static str, LineChart)>) {
    let (runs, weeks) = demo();
    let band = test_band(&runs);
    let charts = standard_charts(&runs, weeks, Some(&band), Units::default());
    (runs, charts)
}

// ---------------------------------------------------------------------------------
// A small XML well-formedness check: one root element, balanced and properly nested
// tags, quoted and unique attributes, and text or attribute values whose only `&`
// start one of the five predefined entities or a character reference. It returns the
// unescaped text of every text node, in document order.

fn unescape(raw: &str) -> Result<String, String> {
    let mut out = String::new();
    let mut rest = raw;
    while let Some(i) = rest.find('&') {
        out.push_str(&rest[..i]);
        let end = rest[i..]
            .find(';')
            .ok_or_else(|| format!("unterminated entity in {raw:?}"))?;
        let entity = &rest[i + 1..i + end];
        let c = match entity {
            "amp" => '&',
            "lt" => '<',
            "gt" => '>',
            "quot" => '"',
            "apos" => '\'',
            e if e.starts_with("#x") => u32::from_str_radix(&e[2..], 16)
                .ok()
                .and_then(char::from_u32)
                .ok_or_else(|| format!("bad reference &{e};"))?,
            e if e.starts_with('#') => e[1..]
                .parse::<u32>()
                .ok()
                .and_then(char::from_u32)
                .ok_or_else(|| format!("bad reference &{e};"))?,
            e => return Err(format!("unknown entity &{e};")),
        };
        out.push(c);
        rest = &rest[i + end + 1..];
    }
    out.push_str(rest);
    Ok(out)
}

fn is_name(s: &str) -> bool {
    let mut chars = s.chars();
    chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_' || c == ':')
        && chars.all(|c| c.is_ascii_alphanumeric() || "_:.-".contains(c))
}

/// Parse the inside of a start tag (`name a="v" ...`); returns the element name.
fn start_tag(inner: &str) -> Result<String, String> {
    let name_end = inner
        .find(|c: char| c.is_whitespace())
        .unwrap_or(inner.len());
    let name = &inner[..name_end];
    if !is_name(name) {
        return Err(format!("bad element name {name:?}"));
    }
    let mut rest = inner[name_end..].trim_start();
    let mut seen: Vec<&str> = Vec::new();
    while !rest.is_empty() {
        let eq = rest
            .find('=')
            .ok_or_else(|| format!("attribute without value in <{inner}>"))?;
        let attr = rest[..eq].trim_end();
        if !is_name(attr) {
            return Err(format!("bad attribute name {attr:?} in <{name}>"));
        }
        if seen.contains(&attr) {
            return Err(format!("duplicate attribute {attr} in <{name}>"));
        }
        seen.push(attr);
        let after = rest[eq + 1..].trim_start();
        let quote = after
            .chars()
            .next()
            .filter(|c| *c == '"' || *c == '\'')
            .ok_or_else(|| format!("unquoted attribute {attr} in <{name}>"))?;
        let close = after[1..]
            .find(quote)
            .ok_or_else(|| format!("unterminated attribute {attr} in <{name}>"))?;
        let value = &after[1..1 + close];
        if value.contains('<') {
            return Err(format!("'<' in attribute {attr} of <{name}>"));
        }
        unescape(value)?;
        let tail = &after[close + 2..];
        if !tail.is_empty() && !tail.starts_with(char::is_whitespace) {
            return Err(format!("no space after attribute {attr} in <{name}>"));
        }
        rest = tail.trim_start();
    }
    Ok(name.to_string())
}

fn well_formed(doc: &str) -> Result<Vec<String>, String> {
    let mut rest = doc;
    if let Some(after) = rest.strip_prefix("<?xml") {
        let end = after.find("?>").ok_or("unterminated XML declaration")?;
        rest = &after[end + 2..];
    }
    let mut stack: Vec<String> = Vec::new();
    let mut roots = 0;
    let mut texts = Vec::new();
    loop {
        let lt = rest.find('<').unwrap_or(rest.len());
        let text = &rest[..lt];
        if text.contains('>') {
            return Err(format!("unescaped '>' in text {text:?}"));
        }
        if stack.is_empty() && !text.trim().is_empty() {
            return Err(format!("text outside the root element: {text:?}"));
        }
        if !text.trim().is_empty() {
            texts.push(unescape(text)?);
        }
        if lt == rest.len() {
            break;
        }
        let gt = rest[lt..].find('>').ok_or("unterminated tag")? + lt;
        let tag = &rest[lt + 1..gt];
        if tag.starts_with('!') || tag.starts_with('?') {
            return Err(format!("unexpected markup <{tag}>"));
        }
        if let Some(name) = tag.strip_prefix('/') {
            let open = stack.pop().ok_or_else(|| format!("stray </{name}>"))?;
            if open != name.trim_end() {
                return Err(format!("<{open}> closed by </{name}>"));
            }
        } else {
            let (inner, empty) = match tag.strip_suffix('/') {
                Some(inner) => (inner, true),
                None => (tag, false),
            };
            let name = start_tag(inner.trim_end())?;
            if stack.is_empty() {
                roots += 1;
                if name != "svg" {
                    return Err(format!("the root element is <{name}>, not <svg>"));
                }
            }
            if !empty {
                stack.push(name);
            }
        }
        rest = &rest[gt + 1..];
    }
    if let Some(open) = stack.last() {
        return Err(format!("<{open}> is never closed"));
    }
    if roots != 1 {
        return Err(format!("{roots} root elements"));
    }
    Ok(texts)
}

#[test]
fn the_checker_rejects_broken_xml() {
    let ok = r#"<?xml version="1.0"?><svg a="1"><text>x &amp; y</text><g/></svg>"#;
    assert_eq!(well_formed(ok).unwrap(), vec!["x & y".to_string()]);
    for bad in [
        "<svg><text>a</svg>",
        "<svg><text>a & b</text></svg>",
        "<svg><text>a < b</text></svg>",
        "<svg a=1></svg>",
        "<svg a=\"1\" a=\"2\"></svg>",
        "<svg></svg><svg></svg>",
        "<g></g>",
        "<svg><text>&bogus;</text></svg>",
    ] {
        assert!(well_formed(bad).is_err(), "accepted {bad:?}");
    }
}

// ---------------------------------------------------------------------------------
// Helpers.

#[test]
fn escape_handles_every_special_character() {
    assert_eq!(escape(r#"<&>"'"#), "&lt;&amp;&gt;&quot;&apos;");
    assert_eq!(escape("plain 40% text"), "plain 40% text");
    assert_eq!(
        unescape(&escape(r#"a<b & "c" 'd'>"#)).unwrap(),
        r#"a<b & "c" 'd'>"#
    );
}

#[test]
fn nice_numbers_follow_one_two_five() {
    assert_eq!(nice_number(1.3, true), 1.0);
    assert_eq!(nice_number(2.9, true), 2.0);
    assert_eq!(nice_number(3.1, true), 5.0);
    assert_eq!(nice_number(7.2, true), 10.0);
    assert_eq!(nice_number(0.034, true), 0.05);
    assert_eq!(nice_number(1.0, false), 1.0);
    assert_eq!(nice_number(1.01, false), 2.0);
    assert_eq!(nice_number(4.2, false), 5.0);
    assert_eq!(nice_number(36.0, false), 50.0);
    assert_eq!(nice_number(5001.0, false), 10000.0);
}

#[test]
fn nice_ticks_cover_the_data_on_round_steps() {
    let t = nice_ticks(97.3, 104.0, 6);
    assert_eq!((t.min, t.max, t.step), (96.0, 104.0, 2.0));
    assert_eq!(t.values(), vec![96.0, 98.0, 100.0, 102.0, 104.0]);
    assert_eq!(t.decimals(), 0);

    let t = nice_ticks(0.0, 36.0, 10);
    assert_eq!(t.step, 5.0);
    assert_eq!((t.min, t.max), (0.0, 40.0));
    assert_eq!(nice_ticks(0.0, 36.0, 8).step, 10.0);

    // Heckbert's step 500 would give -500 to 1500, two thirds of it empty of data;
    // the next smaller step, 200, fits with 8 ticks.
    let t = nice_ticks(-180.0, 1130.0, 6);
    assert_eq!((t.min, t.max, t.step), (-200.0, 1200.0, 200.0));
    assert_eq!(t.values().len(), 8);
    assert_eq!(t.values()[1], 0.0);

    let t = nice_ticks(0.12, 0.87, 6);
    assert_eq!(t.step, 0.2);
    assert_eq!(t.decimals(), 1);
    assert_eq!(t.values().len(), 6);

    // A flat line still gets an axis around it; a range with no data gets 0 to 1.
    let t = nice_ticks(50.0, 50.0, 6);
    assert!(t.min < 50.0 && t.max > 50.0);
    let t = nice_ticks(f64::INFINITY, f64::NEG_INFINITY, 6);
    assert_eq!((t.min, t.max), (0.0, 1.0));

    // Many random ranges: every step is 1, 2 or 5 times a power of ten, the axis
    // covers the data, and the tick count stays near the target.
    for i in 0..200 {
        let lo = (i as f64 * 7.31).sin() * 10f64.powi(i % 7 - 2);
        let hi = lo + (i as f64 * 3.17).cos().abs() * 10f64.powi(i % 5 - 1) + 1e-3;
        let t = nice_ticks(lo, hi, 6);
        let mantissa = t.step / 10f64.powf(t.step.log10().floor());
        assert!(
            [1.0, 2.0, 5.0].iter().any(|m| (mantissa - m).abs() < 1e-9),
            "step {}",
            t.step
        );
        assert!(t.min <= lo && t.max >= hi, "{t:?} misses [{lo}, {hi}]");
        let n = t.values().len();
        assert!((3..=11).contains(&n), "{n} ticks for [{lo}, {hi}]");
    }
}

// ---------------------------------------------------------------------------------
// The renderer.

#[test]
fn every_text_is_escaped_and_the_document_stays_well_formed() {
    let chart = LineChart {
        title: r#"A <b> & "c" 'd'"#.to_string(),
        x_label: "Weeks <x>".to_string(),
        y_label: "Mass & more [kg]".to_string(),
        series: vec![Series {
            name: "</text><script>".to_string(),
            points: vec![(0.0, 1.0), (1.0, f64::NAN), (2.0, 3.0)],
            dashed: true,
            slot: 9,
            markers_only: false,
        }],
        band: Some(Band {
            name: "band \"q\"".to_string(),
            points: vec![(0.0, 0.5, 1.5), (2.0, 2.5, 3.5)],
        }),
        marker: Some((1.0, "end <here>".to_string())),
        caption: "caption & more".to_string(),
        x_range: None,
        y_includes_zero: false,
    };
    let svg = chart.render();
    let texts = well_formed(&svg).unwrap_or_else(|e| panic!("{e}\n{svg}"));
    for t in [
        r#"A <b> & "c" 'd'"#,
        "Weeks <x>",
        "Mass & more [kg]",
        "</text><script>",
        "band \"q\"",
        "end <here>",
    ] {
        assert!(texts.iter().any(|x| x == t), "missing text {t:?}");
    }
    assert!(!svg.contains("<script"));
    assert!(!svg.contains("NaN") && !svg.contains("inf"));
}

/// Nine series with long names: more legend than plot height.
fn crowded_chart() -> LineChart {
    let series = (0..9)
        .map(|i| Series {
            name: format!("scenario number {i} with a rather long descriptive name"),
            points: (0..=20)
                .map(|w| {
                    (
                        f64::from(w),
                        80.0 - f64::from(w) * (0.05 + 0.02 * f64::from(i)),
                    )
                })
                .collect(),
            dashed: i % 2 == 1,
            slot: i as usize,
            markers_only: false,
        })
        .collect();
    LineChart {
        title: "Crowded legend".to_string(),
        x_label: "Time from start [weeks]".to_string(),
        y_label: "Body mass [kg]".to_string(),
        series,
        band: None,
        marker: Some((20.0, "end of protocol (week 20)".to_string())),
        caption: "A legend taller than the plot makes the canvas taller.".to_string(),
        x_range: None,
        y_includes_zero: false,
    }
}

#[test]
fn a_tall_legend_makes_the_canvas_taller() {
    let svg = crowded_chart().render();
    well_formed(&svg).unwrap();
    let height: f64 = svg
        .split("height=\"")
        .nth(1)
        .unwrap()
        .split('"')
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert!(height > 520.0, "height {height}");
    assert!(svg.contains(&format!(r#"viewBox="0 0 900 {height}""#)));
}

#[test]
fn an_empty_chart_still_renders() {
    let chart = LineChart {
        title: "Nothing".to_string(),
        x_label: "Time [weeks]".to_string(),
        y_label: "Value [unit]".to_string(),
        series: Vec::new(),
        band: None,
        marker: None,
        caption: String::new(),
        x_range: None,
        y_includes_zero: false,
    };
    well_formed(&chart.render()).unwrap();
}

#[test]
fn the_standard_charts_are_well_formed_and_labelled() {
    let (runs, charts) = demo_charts();
    assert_eq!(
        charts.iter().map(|c| c.0).collect::<Vec<_>>(),
        ["mass", "composition", "minutes", "energy"]
    );
    for (name, chart) in &charts {
        let svg = chart.render();
        let texts = well_formed(&svg).unwrap_or_else(|e| panic!("{name}: {e}"));
        let has = |t: &str| texts.iter().any(|x| x == t);
        assert!(has(&chart.title), "{name}: title");
        assert!(
            has(&chart.x_label) && chart.x_label.contains("[weeks]"),
            "{name}"
        );
        assert!(has(&chart.y_label) && chart.y_label.contains('['), "{name}");
        assert!(has("end of protocol (week 24)"), "{name}: marker label");
        for r in &runs {
            assert!(
                texts.iter().any(|x| x.starts_with(&r.name)),
                "{name}: no legend entry for {}",
                r.name
            );
        }
        let caption = texts.join(" ");
        for words in [
            "Model estimates",
            "Screen before exercise",
            "clearance",
            "stop on warning signs",
            "licensed professionals",
        ] {
            assert!(caption.contains(words), "{name}: caption lacks {words:?}");
        }
        assert!(svg.contains(r#"viewBox="0 0 900 520""#));
        assert!(svg.contains(r#"font-family="DejaVu Sans, Liberation Sans, Arial, sans-serif""#));
        for external in ["<image", "<script", "<style", "href", "@import", "url(http"] {
            assert!(!svg.contains(external), "{name}: contains {external}");
        }
        for size in svg.split("font-size=\"").skip(1) {
            let px: f64 = size[..size.find('"').unwrap()].parse().unwrap();
            assert!(px >= 13.0, "{name}: font size {px}");
        }
        assert_eq!(svg, chart.render(), "{name}: bytes differ between renders");
    }
}

#[test]
fn a_short_plan_with_a_long_name_is_well_formed() {
    for (name, chart) in short_charts() {
        assert_eq!(chart.x_range, Some((0.0, 6.0)));
        let texts = well_formed(&chart.render()).unwrap_or_else(|e| panic!("{name}: {e}"));
        assert!(
            texts.iter().any(|t| t == "end of protocol (week 6)"),
            "{name}"
        );
        assert!(
            texts.iter().any(|t| t.starts_with("eats back <40%> &")),
            "{name}"
        );
    }
}

#[test]
fn the_charts_hold_the_simulated_numbers() {
    let (runs, weeks) = demo();
    let mass = mass_chart(&runs, weeks, None, Units::default());
    let s = &mass.series[0];
    assert_eq!(s.points[0], (0.0, runs[0].weeks[0].reference_mass_kg));
    assert_eq!(s.points.len(), runs[0].weeks.len() + 1);
    assert_eq!(mass.marker.as_ref().unwrap().0, 24.0);
    assert_eq!(mass.x_range, Some((0.0, 36.0)));

    let minutes = minutes_chart(&runs, weeks);
    for (s, r) in minutes.series.iter().zip(&runs) {
        assert_eq!(s.points.len(), 24, "the line stops at the protocol end");
        assert_eq!(s.points[0].1, f64::from(r.weeks[0].minutes_per_session));
    }

    let energy = energy_chart(&runs, weeks, Units::default());
    let (prescribed, achieved) = (&energy.series[0], &energy.series[1]);
    assert_eq!(prescribed.points.len(), 24);
    assert_eq!(achieved.points.len(), 36);
    let w = &runs[0].weeks;
    assert_eq!(prescribed.points[0].1, w[0].end.prescribed_net_kcal);
    let sum: f64 = achieved.points.iter().map(|p| p.1).sum();
    assert!((sum - w[35].end.achieved_deficit_kcal).abs() < 1e-6);
    assert!(
        (achieved.points[5].1 - (w[5].end.achieved_deficit_kcal - w[4].end.achieved_deficit_kcal))
            .abs()
            < 1e-9
    );
}

#[test]
fn charts_in_us_units_and_kj_convert_every_point_and_name_the_unit() {
    // 1 lb = 0.45359237 kg and 1 kcal = 4.184 kJ exactly (NIST SP 811 (2008)
    // Appendix B.8); the charts convert from the simulated kg and kcal.
    let units = Units {
        system: UnitSystem::Us,
        energy: EnergyUnit::Kj,
    };
    let (runs, weeks) = demo();
    let band = test_band(&runs);
    let charts = standard_charts(&runs, weeks, Some(&band), units);
    let by_name = |n: &str| &charts.iter().find(|(k, _)| *k == n).unwrap().1;

    let mass = by_name("mass");
    assert_eq!(mass.y_label, "Body mass [lb]");
    let s = &mass.series[0];
    assert_eq!(s.points.len(), runs[0].weeks.len() + 1);
    assert!((s.points[0].1 - runs[0].weeks[0].reference_mass_kg / 0.45359237).abs() < 1e-9);
    for (p, w) in s.points[1..].iter().zip(&runs[0].weeks) {
        assert!(
            (p.1 - w.end.mass_kg / 0.45359237).abs() < 1e-9,
            "week {}",
            w.week
        );
    }
    let shown = mass.band.as_ref().expect("the band is drawn");
    for (p, q) in shown.points.iter().zip(&band.points) {
        assert_eq!(p.0, q.0);
        assert!((p.1 - q.1 / 0.45359237).abs() < 1e-9);
        assert!((p.2 - q.2 / 0.45359237).abs() < 1e-9);
    }

    let composition = by_name("composition");
    assert_eq!(composition.y_label, "Change from baseline [lb]");
    assert!(
        composition.caption.contains(" lb, fat-free mass "),
        "{}",
        composition.caption
    );
    assert!(
        !composition.caption.contains(" kg"),
        "{}",
        composition.caption
    );

    let minutes = by_name("minutes");
    assert_eq!(minutes.y_label, "Minutes per session [min]");

    let energy = by_name("energy");
    assert_eq!(energy.y_label, "Energy per week [kJ/week]");
    let w = &runs[0].weeks;
    assert!((energy.series[0].points[0].1 - w[0].end.prescribed_net_kcal * 4.184).abs() < 1e-9);
    let sum: f64 = energy.series[1].points.iter().map(|p| p.1).sum();
    assert!((sum - w[35].end.achieved_deficit_kcal * 4.184).abs() < 1e-6);

    // The metric charts are the same as before the option existed.
    let metric = standard_charts(&runs, weeks, Some(&band), Units::default());
    assert_eq!(metric[0].1.y_label, "Body mass [kg]");
    assert_eq!(metric[3].1.y_label, "Energy per week [kcal/week]");
}

#[test]
fn snapshots_of_the_standard_charts() {
    let (_, charts) = demo_charts();
    for (name, chart) in &charts {
        insta::assert_snapshot!(*name, chart.render());
    }
}

// ---------------------------------------------------------------------------------
// Files.

#[test]
fn write_charts_creates_the_folder_and_names_the_files() {
    let (_, charts) = demo_charts();
    let tmp = tempfile::tempdir().expect("a scratch folder");
    let dir = tmp.path().join("nested");
    let paths = write_charts(&dir, "demo", &charts).unwrap();
    let names: Vec<String> = paths
        .iter()
        .map(|p| p.file_name().unwrap().to_string_lossy().into_owned())
        .collect();
    assert_eq!(
        names,
        [
            "demo-mass.svg",
            "demo-composition.svg",
            "demo-minutes.svg",
            "demo-energy.svg"
        ]
    );
    for (path, (_, chart)) in paths.iter().zip(&charts) {
        assert_eq!(std::fs::read_to_string(path).unwrap(), chart.render());
    }
    // Writing again replaces the files in place.
    assert_eq!(write_charts(&dir, "demo", &charts).unwrap(), paths);
}

#[test]
fn write_charts_refuses_a_folder_under_a_file() {
    let (_, charts) = demo_charts();
    let tmp = tempfile::tempdir().expect("a scratch folder");
    let dir = tmp.path();
    let file = dir.join("not-a-folder");
    std::fs::write(&file, "x").unwrap();
    let err = write_charts(&file.join("sub"), "demo", &charts).unwrap_err();
    // A folder that cannot be made is a bad request (exit 2), found before writing.
    assert!(matches!(err, dosewright::Error::Usage(_)), "{err:?}");
    assert_eq!(err.exit_code(), 2);
}

// ---------------------------------------------------------------------------------
// PNG previews, to look at: target/chart-previews/{demo,short}-NAME.png.

#[test]
fn png_previews_render_with_rsvg_convert() {
    if Command::new("rsvg-convert")
        .arg("--version")
        .output()
        .is_err()
    {
        eprintln!(
            "skipped: png_previews_render_with_rsvg_convert: rsvg-convert is not on PATH \
             (apt-get install librsvg2-bin; CI installs it)"
        );
        return;
    }
    let (_, charts) = demo_charts();
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/chart-previews");
    let mut svgs = write_charts(&dir, "demo", &charts).unwrap();
    svgs.extend(write_charts(&dir, "short", &short_charts()).unwrap());
    svgs.extend(write_charts(&dir, "test", &[("crowded", crowded_chart())]).unwrap());
    for svg in svgs {
        let png = svg.with_extension("png");
        let status = Command::new("rsvg-convert")
            .args(["--zoom", "2", "--output"])
            .arg(&png)
            .arg(&svg)
            .status()
            .unwrap();
        assert!(status.success(), "rsvg-convert failed on {}", svg.display());
        let bytes = std::fs::read(&png).unwrap();
        assert!(bytes.starts_with(b"\x89PNG\r\n\x1a\n"), "{}", png.display());
    }
}
