//! Charts: a small hand-written SVG line-chart renderer and the four standard charts
//! of a plan's scenarios (body mass, composition, minutes per session, energy).
//!
//! The output is one standalone SVG document per chart: no scripts, stylesheets,
//! images or external fonts, every text XML-escaped, and every number printed with a
//! fixed count of decimals, so the same input always gives the same bytes.
//!
//! Colours come from the Okabe-Ito palette (M. Okabe and K. Ito, "Color Universal
//! Design (CUD): how to make figures and presentations that are friendly to
//! colorblind people", 2008), and every series also differs by marker shape, and by
//! dash where a chart pairs two quantities, so the charts read in grey print too.

use crate::report::units::Units;
use crate::simulate::{ScenarioRun, WeekEnd};
use std::fmt::Write as _;

/// Canvas width, px.
const WIDTH: f64 = 900.0;
/// Canvas height, px; a legend taller than the plot makes the canvas taller.
const HEIGHT: f64 = 520.0;
/// Top of the plot area, px: below the title and the marker's label.
const PLOT_TOP: f64 = 70.0;
/// Outer padding, px.
const PAD: f64 = 16.0;
/// Font sizes, px: chosen to stay readable when the 900 px figure is printed at
/// single-column width.
const TITLE_SIZE: f64 = 18.0;
const LABEL_SIZE: f64 = 14.0;
const TEXT_SIZE: f64 = 13.0;
/// Baseline-to-baseline distance of the caption and legend lines, px.
const LINE_GAP: f64 = 17.0;
/// Widest legend text before it wraps, px.
const LEGEND_TEXT_MAX: f64 = 200.0;
/// Width of a legend's line sample, px.
const LEGEND_SAMPLE: f64 = 30.0;
/// Target count of y-axis ticks.
const Y_TICKS: usize = 6;
/// Target count of x-axis ticks.
const X_TICKS: usize = 10;
/// Markers per series, roughly: enough to tell series apart without clutter.
const MARKERS_PER_SERIES: usize = 8;

const FONT_FAMILY: &str = "DejaVu Sans, Liberation Sans, Arial, sans-serif";
const DASH: &str = "7 4";
const AXIS_COLOUR: &str = "#222222";
const GRID_COLOUR: &str = "#e3e3e3";
const BAND_COLOUR: &str = "#56b4e9";

/// Okabe-Ito colours in the order series take them. Yellow (#f0e442) is left out:
/// on white it is too pale for a thin line.
const PALETTE: [&str; 7] = [
    "#0072b2", // blue
    "#d55e00", // vermillion
    "#009e73", // bluish green
    "#cc79a7", // reddish purple
    "#e69f00", // orange
    "#56b4e9", // sky blue
    "#000000", // black
];

/// Marker shapes in the order series take them.
#[derive(Debug, Clone, Copy)]
enum Shape {
    Circle,
    Square,
    TriangleUp,
    Diamond,
    TriangleDown,
}

const SHAPES: [Shape; 5] = [
    Shape::Circle,
    Shape::Square,
    Shape::TriangleUp,
    Shape::Diamond,
    Shape::TriangleDown,
];

/// The words every chart's caption ends with.
const CAUTION: &str = "Model estimates, not measurements. Screen before exercise, obtain \
clearance where indicated, and stop on warning signs; local clinical rules and the \
licensed professionals responsible decide.";

/// One line of a chart.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Legend text.
    pub name: String,
    /// `(x, y)` points in x order; points with a non-finite coordinate are skipped.
    pub points: Vec<(f64, f64)>,
    /// Drawn dashed, with hollow markers, instead of solid with filled markers.
    pub dashed: bool,
    /// Colour and marker slot: series that share a slot (one scenario's two lines)
    /// share colour and marker shape.
    pub slot: usize,
    /// Measurements: a marker at every point and no line.
    pub markers_only: bool,
}

/// A shaded area between a low and a high line, such as a projection-uncertainty
/// band around a mass trajectory.
#[derive(Debug, Clone, PartialEq)]
pub struct Band {
    /// Legend text: what the band is.
    pub name: String,
    /// `(x, low, high)` in x order.
    pub points: Vec<(f64, f64, f64)>,
}

/// A line chart, rendered by [`LineChart::render`].
#[derive(Debug, Clone, PartialEq)]
pub struct LineChart {
    /// Title above the plot.
    pub title: String,
    /// X-axis label with its unit; the x axis counts weeks, so its ticks are whole
    /// numbers.
    pub x_label: String,
    /// Y-axis label with its unit.
    pub y_label: String,
    /// The lines, drawn in order.
    pub series: Vec<Series>,
    /// A shaded band drawn beneath the lines.
    pub band: Option<Band>,
    /// A vertical dashed line at `x` with its label above the plot.
    pub marker: Option<(f64, String)>,
    /// Text under the figure, wrapped to its width.
    pub caption: String,
    /// Fixed x range; `None` fits the data.
    pub x_range: Option<(f64, f64)>,
    /// Extend the y axis to include zero.
    pub y_includes_zero: bool,
}

/// Axis ticks: every multiple of `step` from `min` to `max`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ticks {
    /// Axis start.
    pub min: f64,
    /// Axis end.
    pub max: f64,
    /// Distance between ticks: 1, 2 or 5 times a power of ten.
    pub step: f64,
}

impl Ticks {
    /// The tick values, the multiples of `step` within `[min, max]`.
    pub fn values(&self) -> Vec<f64> {
        let eps = 1e-9;
        let first = (self.min / self.step - eps).ceil() as i64;
        let last = (self.max / self.step + eps).floor() as i64;
        (first..=last).map(|k| k as f64 * self.step).collect()
    }

    /// Decimals that print every tick exactly.
    pub fn decimals(&self) -> usize {
        if self.step >= 1.0 {
            0
        } else {
            (-self.step.log10() - 1e-9).ceil() as usize
        }
    }
}

/// A "nice" number near `x > 0`: 1, 2, 5 or 10 times a power of ten; the nearest
/// such number when `round`, else the smallest not below `x` (Heckbert, "Nice
/// numbers for graph labels", Graphics Gems, 1990).
pub fn nice_number(x: f64, round: bool) -> f64 {
    let exp = x.log10().floor();
    let base = 10f64.powf(exp);
    let f = x / base;
    let nice = if round {
        match f {
            f if f < 1.5 => 1.0,
            f if f < 3.0 => 2.0,
            f if f < 7.0 => 5.0,
            _ => 10.0,
        }
    } else {
        match f {
            f if f <= 1.0 => 1.0,
            f if f <= 2.0 => 2.0,
            f if f <= 5.0 => 5.0,
            _ => 10.0,
        }
    };
    nice * base
}

/// Ticks covering `[lo, hi]` with about `target` ticks, the axis widened out to the
/// nearest multiples of a 1-2-5 step (Heckbert's loose labelling). Where the data
/// would fill less than two thirds of that axis, the next smaller 1-2-5 step is
/// taken instead if it keeps the tick count within `target + 4`. An empty or
/// degenerate range is widened first.
pub fn nice_ticks(lo: f64, hi: f64, target: usize) -> Ticks {
    let (mut lo, mut hi) = if lo.is_finite() && hi.is_finite() && lo <= hi {
        (lo, hi)
    } else {
        (0.0, 1.0)
    };
    if hi - lo < 1e-9 * lo.abs().max(1.0) {
        let half = (lo.abs() * 0.05).max(0.5);
        lo -= half;
        hi += half;
    }
    let span = nice_number(hi - lo, false);
    let step = nice_number(span / (target.max(2) - 1) as f64, true);
    let cover = |step: f64| Ticks {
        min: (lo / step).floor() * step,
        max: (hi / step).ceil() * step,
        step,
    };
    let loose = cover(step);
    let finer = cover(smaller_nice_step(step));
    if (hi - lo) < (loose.max - loose.min) * 2.0 / 3.0 && finer.values().len() <= target + 4 {
        finer
    } else {
        loose
    }
}

/// The 1-2-5 step below `step`: 10 -> 5 -> 2 -> 1.
fn smaller_nice_step(step: f64) -> f64 {
    let base = 10f64.powf(step.log10().floor());
    let mantissa = (step / base).round();
    match mantissa as u32 {
        1 => 0.5 * base,
        2 => base,
        _ => 2.0 * base,
    }
}

/// Escape `&`, `<`, `>`, `"` and `'` for XML text and attribute values.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            c => out.push(c),
        }
    }
    out
}

/// A coordinate with two decimals, never `-0.00`.
fn num(v: f64) -> String {
    let s = format!("{v:.2}");
    if s == "-0.00" { "0.00".to_string() } else { s }
}

/// A tick label: fixed decimals, a true minus sign, never `-0`.
fn tick_label(v: f64, decimals: usize) -> String {
    let s = format!("{v:.decimals$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().any(|c| c.is_ascii_digit() && c != '0') => {
            format!("\u{2212}{rest}")
        }
        Some(rest) => rest.to_string(),
        None => s,
    }
}

/// Estimated width of `text` in DejaVu Sans at `size` px, from its advance widths
/// rounded up; the fallback fonts are narrower, so the estimate errs wide.
fn text_width(text: &str, size: f64) -> f64 {
    let em: f64 = text
        .chars()
        .map(|c| match c {
            ' ' | '.' | ',' | ':' | ';' | '\'' | '|' | '!' | 'i' | 'j' | 'l' => 0.34,
            '(' | ')' | '[' | ']' | '/' | '-' | 'f' | 't' | 'r' | 'I' => 0.42,
            'm' | 'w' | 'M' | 'W' | '%' => 1.0,
            c if c.is_ascii_uppercase() => 0.75,
            _ => 0.64,
        })
        .sum();
    em * size
}

/// Greedy word wrap of `text` to lines no wider than `max` px at `size` px; a word
/// wider than `max` gets a line of its own.
fn wrap(text: &str, max: f64, size: f64) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        let candidate = if line.is_empty() {
            word.to_string()
        } else {
            format!("{line} {word}")
        };
        if !line.is_empty() && text_width(&candidate, size) > max {
            lines.push(std::mem::replace(&mut line, word.to_string()));
        } else {
            line = candidate;
        }
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// One `<text>` element.
fn text_element(out: &mut String, x: f64, y: f64, size: f64, attrs: &str, content: &str) {
    let _ = writeln!(
        out,
        r#"<text x="{}" y="{}" font-size="{}"{attrs}>{}</text>"#,
        num(x),
        num(y),
        num(size),
        escape(content)
    );
}

/// A marker of `shape` centred on `(x, y)`, filled or hollow.
fn marker_element(out: &mut String, shape: Shape, x: f64, y: f64, colour: &str, hollow: bool) {
    let fill = if hollow { "#ffffff" } else { colour };
    let paint = format!(r#"fill="{fill}" stroke="{colour}" stroke-width="1.5""#);
    let r = 4.0;
    let poly = |pts: &[(f64, f64)]| -> String {
        pts.iter()
            .map(|(dx, dy)| format!("{},{}", num(x + dx), num(y + dy)))
            .collect::<Vec<_>>()
            .join(" ")
    };
    let _ = match shape {
        Shape::Circle => writeln!(
            out,
            r#"<circle cx="{}" cy="{}" r="{}" {paint}/>"#,
            num(x),
            num(y),
            num(r)
        ),
        Shape::Square => writeln!(
            out,
            r#"<rect x="{}" y="{}" width="{}" height="{}" {paint}/>"#,
            num(x - 0.9 * r),
            num(y - 0.9 * r),
            num(1.8 * r),
            num(1.8 * r)
        ),
        Shape::TriangleUp => writeln!(
            out,
            r#"<polygon points="{}" {paint}/>"#,
            poly(&[(0.0, -1.2 * r), (1.1 * r, 0.8 * r), (-1.1 * r, 0.8 * r)])
        ),
        Shape::Diamond => writeln!(
            out,
            r#"<polygon points="{}" {paint}/>"#,
            poly(&[(0.0, -1.25 * r), (r, 0.0), (0.0, 1.25 * r), (-r, 0.0)])
        ),
        Shape::TriangleDown => writeln!(
            out,
            r#"<polygon points="{}" {paint}/>"#,
            poly(&[(0.0, 1.2 * r), (1.1 * r, -0.8 * r), (-1.1 * r, -0.8 * r)])
        ),
    };
}

/// One legend entry: its sample and its wrapped text lines.
struct LegendEntry {
    lines: Vec<String>,
    sample: Sample,
}

impl LegendEntry {
    /// Vertical space the entry takes, px.
    fn height(&self) -> f64 {
        self.lines.len().max(1) as f64 * LINE_GAP + 8.0
    }
}

enum Sample {
    Line {
        colour: &'static str,
        shape: Shape,
        dashed: bool,
    },
    Band,
}

/// Where things go on the canvas.
struct Layout {
    left: f64,
    right: f64,
    top: f64,
    bottom: f64,
    legend_x: f64,
    caption: Vec<String>,
    caption_y: f64,
    height: f64,
}

fn finite_points(s: &Series) -> impl Iterator<Item = (f64, f64)> + '_ {
    s.points
        .iter()
        .copied()
        .filter(|(x, y)| x.is_finite() && y.is_finite())
}

fn finite_band(b: &Band) -> impl Iterator<Item = (f64, f64, f64)> + '_ {
    b.points
        .iter()
        .copied()
        .filter(|(x, l, h)| x.is_finite() && l.is_finite() && h.is_finite())
}

fn slot_colour(slot: usize) -> &'static str {
    PALETTE[slot % PALETTE.len()]
}

fn slot_shape(slot: usize) -> Shape {
    SHAPES[slot % SHAPES.len()]
}

impl LineChart {
    /// The x range: the fixed one, else the data's.
    fn x_domain(&self) -> (f64, f64) {
        if let Some((lo, hi)) = self
            .x_range
            .filter(|(lo, hi)| lo < hi && lo.is_finite() && hi.is_finite())
        {
            return (lo, hi);
        }
        let xs = self
            .series
            .iter()
            .flat_map(|s| finite_points(s).map(|p| p.0))
            .chain(self.band.iter().flat_map(|b| finite_band(b).map(|p| p.0)))
            .chain(self.marker.iter().map(|m| m.0).filter(|x| x.is_finite()));
        let (lo, hi) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), x| {
            (lo.min(x), hi.max(x))
        });
        match (lo < hi, lo.is_finite()) {
            (true, _) => (lo, hi),
            (false, true) => (lo - 1.0, lo + 1.0),
            (false, false) => (0.0, 1.0),
        }
    }

    /// The y ticks: every value drawn within the x range, widened to nice numbers.
    fn y_ticks(&self, (x0, x1): (f64, f64)) -> Ticks {
        let inside = |x: f64| x >= x0 - 1e-9 && x <= x1 + 1e-9;
        let ys = self
            .series
            .iter()
            .flat_map(|s| finite_points(s).filter(|p| inside(p.0)).map(|p| p.1))
            .chain(self.band.iter().flat_map(|b| {
                finite_band(b)
                    .filter(|p| inside(p.0))
                    .flat_map(|p| [p.1, p.2])
            }))
            .chain(self.y_includes_zero.then_some(0.0));
        let (lo, hi) = ys.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), y| {
            (lo.min(y), hi.max(y))
        });
        nice_ticks(lo, hi, Y_TICKS)
    }

    fn legend(&self) -> Vec<LegendEntry> {
        let mut entries: Vec<LegendEntry> = self
            .series
            .iter()
            .map(|s| LegendEntry {
                lines: wrap(&s.name, LEGEND_TEXT_MAX, TEXT_SIZE),
                sample: Sample::Line {
                    colour: slot_colour(s.slot),
                    shape: slot_shape(s.slot),
                    dashed: s.dashed,
                },
            })
            .collect();
        if let Some(b) = &self.band {
            entries.push(LegendEntry {
                lines: wrap(&b.name, LEGEND_TEXT_MAX, TEXT_SIZE),
                sample: Sample::Band,
            });
        }
        entries
    }

    fn layout(&self, y_labels: &[String], legend: &[LegendEntry]) -> Layout {
        let caption = wrap(&self.caption, WIDTH - 2.0 * PAD, TEXT_SIZE);
        let caption_lines = caption.len().max(1) as f64;
        // The plot's bottom edge leaves room, going down, for the tick labels, the
        // x-axis label and the caption; a tall legend pushes all three down.
        let below_plot =
            30.0 + LABEL_SIZE + 14.0 + TEXT_SIZE + (caption_lines - 1.0) * LINE_GAP + PAD;
        let legend_height: f64 = legend.iter().map(LegendEntry::height).sum();
        let bottom = (HEIGHT - below_plot).max(PLOT_TOP + legend_height);
        let height = (bottom + below_plot).ceil();
        let caption_y = height - PAD - (caption_lines - 1.0) * LINE_GAP;
        let widest_tick = y_labels
            .iter()
            .map(|l| text_width(l, TEXT_SIZE))
            .fold(0.0, f64::max);
        let left = PAD + LABEL_SIZE + 12.0 + widest_tick + 12.0;
        let widest_legend = legend
            .iter()
            .flat_map(|e| e.lines.iter().map(|l| text_width(l, TEXT_SIZE)))
            .fold(0.0, f64::max);
        let legend_width = if legend.is_empty() {
            0.0
        } else {
            LEGEND_SAMPLE + 10.0 + widest_legend
        };
        let legend_x = WIDTH - PAD - legend_width;
        Layout {
            left,
            right: legend_x - 24.0,
            top: PLOT_TOP,
            bottom,
            legend_x,
            caption,
            caption_y,
            height,
        }
    }

    /// The chart as a complete standalone SVG document.
    pub fn render(&self) -> String {
        let (x0, x1) = self.x_domain();
        let xt = Ticks {
            min: x0,
            max: x1,
            step: nice_ticks(x0, x1, X_TICKS).step.max(1.0),
        };
        let yt = self.y_ticks((x0, x1));
        let y_labels: Vec<String> = yt
            .values()
            .iter()
            .map(|v| tick_label(*v, yt.decimals()))
            .collect();
        let legend = self.legend();
        let l = self.layout(&y_labels, &legend);
        let sx = |x: f64| l.left + (x - x0) / (x1 - x0) * (l.right - l.left);
        let sy = |y: f64| l.bottom - (y - yt.min) / (yt.max - yt.min) * (l.bottom - l.top);

        let mut out = String::new();
        out.push_str("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
        let _ = writeln!(
            out,
            r#"<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="{w}" height="{h}" viewBox="0 0 {w} {h}" font-family="{FONT_FAMILY}">"#,
            w = WIDTH,
            h = format!("{:.0}", l.height)
        );
        let _ = writeln!(out, "<title>{}</title>", escape(&self.title));
        let _ = writeln!(out, "<desc>{}</desc>", escape(&self.caption));
        let _ = writeln!(
            out,
            r#"<defs><clipPath id="plot-area"><rect x="{}" y="{}" width="{}" height="{}"/></clipPath></defs>"#,
            num(l.left),
            num(l.top),
            num(l.right - l.left),
            num(l.bottom - l.top)
        );
        let _ = writeln!(
            out,
            r##"<rect x="0" y="0" width="{WIDTH}" height="{:.0}" fill="#ffffff"/>"##,
            l.height
        );
        text_element(
            &mut out,
            PAD,
            PAD + TITLE_SIZE,
            TITLE_SIZE,
            r##" font-weight="bold" fill="#000000""##,
            &self.title,
        );

        // Horizontal grid lines, and a zero line where zero lies inside the axis.
        for v in yt.values() {
            let y = sy(v);
            let zero = v.abs() < 1e-9 * yt.step && v > yt.min && v < yt.max;
            let (colour, width) = if zero {
                ("#8c8c8c", 1.2)
            } else {
                (GRID_COLOUR, 1.0)
            };
            let _ = writeln!(
                out,
                r#"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="{colour}" stroke-width="{}"/>"#,
                num(l.left),
                num(y),
                num(l.right),
                num(y),
                num(width)
            );
        }

        let _ = writeln!(out, r#"<g clip-path="url(#plot-area)">"#);
        if let Some(b) = &self.band {
            let pts: Vec<(f64, f64, f64)> = finite_band(b).collect();
            if pts.len() >= 2 {
                let upper = pts.iter().map(|(x, _, h)| (sx(*x), sy(*h)));
                let lower = pts.iter().rev().map(|(x, lo, _)| (sx(*x), sy(*lo)));
                let d: Vec<String> = upper
                    .chain(lower)
                    .map(|(x, y)| format!("{},{}", num(x), num(y)))
                    .collect();
                let _ = writeln!(
                    out,
                    r#"<polygon points="{}" fill="{BAND_COLOUR}" fill-opacity="0.28" stroke="none"/>"#,
                    d.join(" ")
                );
            }
        }
        for s in &self.series {
            let pts: Vec<(f64, f64)> = finite_points(s).collect();
            if pts.is_empty() || s.markers_only {
                continue;
            }
            let d: Vec<String> = pts
                .iter()
                .enumerate()
                .map(|(i, (x, y))| {
                    format!(
                        "{}{},{}",
                        if i == 0 { 'M' } else { 'L' },
                        num(sx(*x)),
                        num(sy(*y))
                    )
                })
                .collect();
            let dash = if s.dashed {
                format!(r#" stroke-dasharray="{DASH}""#)
            } else {
                String::new()
            };
            let _ = writeln!(
                out,
                r#"<path d="{}" fill="none" stroke="{}" stroke-width="2.2" stroke-linejoin="round" stroke-linecap="round"{dash}/>"#,
                d.join(" "),
                slot_colour(s.slot)
            );
        }
        let _ = writeln!(out, "</g>");

        // Markers on every k-th point, offset by slot so that the markers of lines
        // that coincide (scenarios with the same prescription) fall on different
        // weeks: k is at least the number of slots.
        let mut slots: Vec<usize> = self.series.iter().map(|s| s.slot).collect();
        slots.sort_unstable();
        slots.dedup();
        for s in &self.series {
            let pts: Vec<(f64, f64)> = finite_points(s)
                .filter(|(x, _)| *x >= x0 - 1e-9 && *x <= x1 + 1e-9)
                .collect();
            let every = if s.markers_only {
                1
            } else {
                pts.len()
                    .div_ceil(MARKERS_PER_SERIES)
                    .max(slots.len().min(pts.len()))
                    .max(1)
            };
            for (x, y) in pts.iter().skip(s.slot % every).step_by(every) {
                marker_element(
                    &mut out,
                    slot_shape(s.slot),
                    sx(*x),
                    sy(*y),
                    slot_colour(s.slot),
                    s.dashed,
                );
            }
        }

        // Axes, ticks and tick labels.
        let _ = writeln!(
            out,
            r#"<path d="M{},{} L{},{} L{},{}" fill="none" stroke="{AXIS_COLOUR}" stroke-width="1.2"/>"#,
            num(l.left),
            num(l.top),
            num(l.left),
            num(l.bottom),
            num(l.right),
            num(l.bottom)
        );
        let tick_text = format!(r#" text-anchor="middle" fill="{AXIS_COLOUR}""#);
        for v in xt.values() {
            let x = sx(v);
            let _ = writeln!(
                out,
                r#"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="{AXIS_COLOUR}" stroke-width="1.2"/>"#,
                num(x),
                num(l.bottom),
                num(x),
                num(l.bottom + 5.0)
            );
            text_element(
                &mut out,
                x,
                l.bottom + 5.0 + 4.0 + TEXT_SIZE,
                TEXT_SIZE,
                &tick_text,
                &tick_label(v, 0),
            );
        }
        let tick_text = format!(r#" text-anchor="end" fill="{AXIS_COLOUR}""#);
        for (v, label) in yt.values().iter().zip(&y_labels) {
            let y = sy(*v);
            let _ = writeln!(
                out,
                r#"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="{AXIS_COLOUR}" stroke-width="1.2"/>"#,
                num(l.left - 5.0),
                num(y),
                num(l.left),
                num(y)
            );
            text_element(
                &mut out,
                l.left - 10.0,
                y + 0.35 * TEXT_SIZE,
                TEXT_SIZE,
                &tick_text,
                label,
            );
        }

        // Axis labels.
        text_element(
            &mut out,
            (l.left + l.right) / 2.0,
            l.bottom + 30.0 + LABEL_SIZE,
            LABEL_SIZE,
            r##" text-anchor="middle" fill="#000000""##,
            &self.x_label,
        );
        let (yx, yy) = (PAD + LABEL_SIZE, (l.top + l.bottom) / 2.0);
        text_element(
            &mut out,
            yx,
            yy,
            LABEL_SIZE,
            &format!(
                r##" text-anchor="middle" fill="#000000" transform="rotate(-90 {} {})""##,
                num(yx),
                num(yy)
            ),
            &self.y_label,
        );

        // The marker: a dashed vertical line, its label above the plot.
        if let Some((mx, label)) = self.marker.as_ref().filter(|m| m.0 >= x0 && m.0 <= x1) {
            let x = sx(*mx);
            let _ = writeln!(
                out,
                r##"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="#555555" stroke-width="1.4" stroke-dasharray="4 4"/>"##,
                num(x),
                num(l.top - 4.0),
                num(x),
                num(l.bottom)
            );
            let half = text_width(label, TEXT_SIZE) / 2.0;
            // Centred on the line, but kept above the plot so it never runs into
            // the legend.
            let cx = x.clamp(l.left + half, (l.right - half).max(l.left + half));
            text_element(
                &mut out,
                cx,
                l.top - 10.0,
                TEXT_SIZE,
                r##" text-anchor="middle" fill="#333333""##,
                label,
            );
        }

        // The legend, right of the plot.
        let mut y = l.top + 8.0;
        for e in &legend {
            let (sx0, sx1, mid) = (l.legend_x, l.legend_x + LEGEND_SAMPLE, y);
            match e.sample {
                Sample::Line {
                    colour,
                    shape,
                    dashed,
                } => {
                    let dash = if dashed {
                        format!(r#" stroke-dasharray="{DASH}""#)
                    } else {
                        String::new()
                    };
                    let _ = writeln!(
                        out,
                        r#"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="{colour}" stroke-width="2.2"{dash}/>"#,
                        num(sx0),
                        num(mid),
                        num(sx1),
                        num(mid)
                    );
                    marker_element(&mut out, shape, (sx0 + sx1) / 2.0, mid, colour, dashed);
                }
                Sample::Band => {
                    let _ = writeln!(
                        out,
                        r#"<rect x="{}" y="{}" width="{}" height="12" fill="{BAND_COLOUR}" fill-opacity="0.28" stroke="none"/>"#,
                        num(sx0),
                        num(mid - 6.0),
                        num(LEGEND_SAMPLE)
                    );
                }
            }
            for (i, line) in e.lines.iter().enumerate() {
                text_element(
                    &mut out,
                    sx1 + 10.0,
                    mid + 0.35 * TEXT_SIZE + i as f64 * LINE_GAP,
                    TEXT_SIZE,
                    r##" fill="#000000""##,
                    line,
                );
            }
            y += e.height();
        }

        // The caption.
        for (i, line) in l.caption.iter().enumerate() {
            text_element(
                &mut out,
                PAD,
                l.caption_y + i as f64 * LINE_GAP,
                TEXT_SIZE,
                r##" fill="#333333""##,
                line,
            );
        }
        out.push_str("</svg>\n");
        out
    }
}

/// The x range of every standard chart: week 0 to the last week of any scenario.
fn week_range(runs: &[ScenarioRun], protocol_weeks: u32) -> (f64, f64) {
    let last = runs
        .iter()
        .filter_map(|r| r.weeks.last().map(|w| w.week))
        .max()
        .unwrap_or(protocol_weeks)
        .max(protocol_weeks)
        .max(1);
    (0.0, f64::from(last))
}

fn protocol_marker(protocol_weeks: u32) -> (f64, String) {
    (
        f64::from(protocol_weeks),
        format!("end of protocol (week {protocol_weeks})"),
    )
}

fn caption(what: &str) -> String {
    format!("{what} {CAUTION}")
}

/// A week-end quantity from the baseline (x = 0) to the last week.
fn trajectory(
    run: &ScenarioRun,
    baseline: f64,
    value: impl Fn(&WeekEnd) -> f64,
) -> Vec<(f64, f64)> {
    std::iter::once((0.0, baseline))
        .chain(run.weeks.iter().map(|w| (f64::from(w.week), value(&w.end))))
        .collect()
}

/// Per-week amounts from a running total: each week's total less the week before's
/// (the first week's less zero).
fn per_week<'a>(
    weeks: impl Iterator<Item = (u32, f64)> + 'a,
) -> impl Iterator<Item = (f64, f64)> + 'a {
    weeks.scan(0.0, |before, (week, total)| {
        let amount = total - *before;
        *before = total;
        Some((f64::from(week), amount))
    })
}

/// Body mass at the end of each week per scenario, from the baseline at week 0, the
/// end of the protocol marked, with an optional band (in kg) beneath the lines; masses
/// shown in units `u`.
pub fn mass_chart(
    runs: &[ScenarioRun],
    protocol_weeks: u32,
    band: Option<&Band>,
    u: Units,
) -> LineChart {
    let series = runs
        .iter()
        .enumerate()
        .map(|(slot, r)| Series {
            name: r.name.clone(),
            points: trajectory(
                r,
                u.mass(r.weeks.first().map_or(f64::NAN, |w| w.reference_mass_kg)),
                |e| u.mass(e.mass_kg),
            ),
            dashed: false,
            slot,
            markers_only: false,
        })
        .collect();
    let what = match band {
        Some(b) => format!(
            "Projected body mass at the end of each week; week 0 is the baseline. Shaded: {}.",
            b.name
        ),
        None => "Projected body mass at the end of each week; week 0 is the baseline.".to_string(),
    };
    let band = band.map(|b| Band {
        name: b.name.clone(),
        points: b
            .points
            .iter()
            .map(|&(x, lo, hi)| (x, u.mass(lo), u.mass(hi)))
            .collect(),
    });
    LineChart {
        title: "Projected body mass by scenario".to_string(),
        x_label: "Time from start [weeks]".to_string(),
        y_label: format!("Body mass [{}]", u.mass_label()),
        series,
        band,
        marker: Some(protocol_marker(protocol_weeks)),
        caption: caption(&what),
        x_range: Some(week_range(runs, protocol_weeks)),
        y_includes_zero: false,
    }
}

/// Change of fat mass (solid) and fat-free mass (dashed) from the baseline at the
/// end of each week per scenario, one colour per scenario. Changes, not totals,
/// share the axis: the two masses lie tens of kilograms apart while they change by
/// a few, so on one axis of totals both lines would look flat. The caption gives the
/// baseline masses. Masses shown in units `u`.
pub fn composition_chart(runs: &[ScenarioRun], protocol_weeks: u32, u: Units) -> LineChart {
    let mut series = Vec::with_capacity(2 * runs.len());
    for (slot, r) in runs.iter().enumerate() {
        let o = &r.outcome;
        let fat0 = o.fat_mass_kg - o.fat_mass_change_kg;
        let lean0 = o.fat_free_mass_kg - o.fat_free_mass_change_kg;
        series.push(Series {
            name: format!("{}: fat", r.name),
            points: trajectory(r, 0.0, |e| u.mass(e.fat_mass_kg - fat0)),
            dashed: false,
            slot,
            markers_only: false,
        });
        series.push(Series {
            name: format!("{}: fat-free", r.name),
            points: trajectory(r, 0.0, |e| u.mass(e.fat_free_mass_kg - lean0)),
            dashed: true,
            slot,
            markers_only: false,
        });
    }
    let baseline = runs.first().map_or(String::new(), |r| {
        let o = &r.outcome;
        format!(
            " (fat mass {}, fat-free mass {})",
            u.mass_text(o.fat_mass_kg - o.fat_mass_change_kg, 1),
            u.mass_text(o.fat_free_mass_kg - o.fat_free_mass_change_kg, 1)
        )
    });
    LineChart {
        title: "Projected change in fat mass and fat-free mass by scenario".to_string(),
        x_label: "Time from start [weeks]".to_string(),
        y_label: format!("Change from baseline [{}]", u.mass_label()),
        series,
        band: None,
        marker: Some(protocol_marker(protocol_weeks)),
        caption: caption(&format!(
            "Fat mass (solid) and fat-free mass (dashed) at the end of each week, less the baseline{baseline}; week 0 is the baseline."
        )),
        x_range: Some(week_range(runs, protocol_weeks)),
        y_includes_zero: true,
    }
}

/// Minutes per session in each protocol week per scenario; the lines stop at the
/// end of the protocol (follow-up weeks have no sessions).
pub fn minutes_chart(runs: &[ScenarioRun], protocol_weeks: u32) -> LineChart {
    let series = runs
        .iter()
        .enumerate()
        .map(|(slot, r)| Series {
            name: r.name.clone(),
            points: r
                .weeks
                .iter()
                .filter(|w| w.week <= protocol_weeks)
                .map(|w| (f64::from(w.week), f64::from(w.minutes_per_session)))
                .collect(),
            dashed: false,
            slot,
            markers_only: false,
        })
        .collect();
    LineChart {
        title: "Prescribed minutes per session by week".to_string(),
        x_label: "Time from start [weeks]".to_string(),
        y_label: "Minutes per session [min]".to_string(),
        series,
        band: None,
        marker: Some(protocol_marker(protocol_weeks)),
        caption: caption(
            "Minutes of each session, re-prescribed every week from the projected mass; no sessions after the protocol.",
        ),
        x_range: Some(week_range(runs, protocol_weeks)),
        y_includes_zero: true,
    }
}

/// Prescribed net exercise energy per protocol week (solid) against the deficit
/// achieved per week (dashed), per scenario: week-to-week differences of the
/// running totals. Energy shown in units `u`.
pub fn energy_chart(runs: &[ScenarioRun], protocol_weeks: u32, u: Units) -> LineChart {
    let mut series = Vec::with_capacity(2 * runs.len());
    for (slot, r) in runs.iter().enumerate() {
        let weeks = || r.weeks.iter();
        series.push(Series {
            name: format!("{}: prescribed", r.name),
            points: per_week(weeks().map(|w| (w.week, u.energy(w.end.prescribed_net_kcal))))
                .filter(|(x, _)| *x <= f64::from(protocol_weeks))
                .collect(),
            dashed: false,
            slot,
            markers_only: false,
        });
        series.push(Series {
            name: format!("{}: achieved", r.name),
            points: per_week(weeks().map(|w| (w.week, u.energy(w.end.achieved_deficit_kcal))))
                .collect(),
            dashed: true,
            slot,
            markers_only: false,
        });
    }
    LineChart {
        title: "Prescribed exercise energy and achieved deficit by week".to_string(),
        x_label: "Time from start [weeks]".to_string(),
        y_label: format!("Energy per week [{}/week]", u.energy_label()),
        series,
        band: None,
        marker: Some(protocol_marker(protocol_weeks)),
        caption: caption(
            "Solid: net exercise energy prescribed each week. Dashed: energy lost from the body's stores each week, from all causes; below zero the stores refill.",
        ),
        x_range: Some(week_range(runs, protocol_weeks)),
        y_includes_zero: true,
    }
}

/// The four standard charts, named `mass`, `composition`, `minutes` and `energy`
/// for `crate::output::write_charts`, in units `u` (the band in kg).
pub fn standard_charts(
    runs: &[ScenarioRun],
    protocol_weeks: u32,
    band: Option<&Band>,
    u: Units,
) -> Vec<(&'static str, LineChart)> {
    vec![
        ("mass", mass_chart(runs, protocol_weeks, band, u)),
        ("composition", composition_chart(runs, protocol_weeks, u)),
        ("minutes", minutes_chart(runs, protocol_weeks)),
        ("energy", energy_chart(runs, protocol_weeks, u)),
    ]
}

/// Cohort: the distribution of mass change at the end of the protocol per arm (first
/// scenario), as empirical cumulative distributions: for each arm the share of its
/// participants whose change is at most x.
pub fn cohort_mass_chart(r: &super::cohort::CohortReport, u: Units) -> LineChart {
    let series = r
        .arms
        .iter()
        .enumerate()
        .filter_map(|(slot, a)| {
            let s = a.scenarios.first()?;
            let mut v: Vec<f64> = s.mass_changes.iter().map(|m| u.mass(*m)).collect();
            v.sort_by(f64::total_cmp);
            let n = v.len() as f64;
            let mut points = Vec::with_capacity(2 * v.len());
            for (i, x) in v.iter().enumerate() {
                points.push((*x, i as f64 / n * 100.0));
                points.push((*x, (i + 1) as f64 / n * 100.0));
            }
            Some(Series {
                name: a.name.clone(),
                points,
                dashed: false,
                slot,
                markers_only: false,
            })
        })
        .collect();
    let scenario = r
        .arms
        .first()
        .and_then(|a| a.scenarios.first())
        .map_or(String::new(), |s| s.name.clone());
    LineChart {
        title: format!(
            "Mass change at week {} by arm, over participants (scenario \"{scenario}\")",
            r.weeks
        ),
        x_label: format!("Mass change from baseline [{}]", u.mass_label()),
        y_label: "Participants with at most this change [%]".to_string(),
        series,
        band: None,
        marker: None,
        caption: caption(
            "Each line is one arm's empirical cumulative distribution: read the share of participants losing at least a given amount at the line's height.",
        ),
        x_range: None,
        y_includes_zero: true,
    }
}

/// Cohort: minutes per session over the protocol weeks per arm (first scenario),
/// median (solid) with the 5th and 95th percentiles over participants (dashed).
pub fn cohort_minutes_chart(r: &super::cohort::CohortReport) -> LineChart {
    let mut series = Vec::new();
    for (slot, a) in r.arms.iter().enumerate().filter(|(_, a)| !a.control) {
        let Some(s) = a.scenarios.first() else {
            continue;
        };
        let line =
            |name: String, f: fn(&crate::simulate::cohort::WeekMinutes) -> f64, dashed| Series {
                name,
                points: s
                    .minutes_by_week
                    .iter()
                    .map(|w| (f64::from(w.week), f(w)))
                    .collect(),
                dashed,
                slot,
                markers_only: false,
            };
        series.push(line(format!("{}: median", a.name), |w| w.median, false));
        series.push(line(format!("{}: 5th percentile", a.name), |w| w.p5, true));
        series.push(line(
            format!("{}: 95th percentile", a.name),
            |w| w.p95,
            true,
        ));
    }
    LineChart {
        title: "Minutes per session by week and arm, over participants".to_string(),
        x_label: "Protocol week".to_string(),
        y_label: "Minutes of the longest session [min]".to_string(),
        series,
        band: None,
        marker: r
            .max_session_minutes
            .map(|m| (f64::from(r.weeks), format!("maximum {m:.0} min"))),
        caption: caption(
            "Solid: median over participants; dashed: 5th and 95th percentiles. Minutes rise as mass falls for an energy dose.",
        ),
        x_range: Some((1.0, f64::from(r.weeks.max(2)))),
        y_includes_zero: true,
    }
}

/// Cohort: power against participants per arm for each arm compared with the first
/// arm (first scenario), by the two-sample normal approximation with the simulated
/// difference and SD (Altman 1991), recruitment divided by the completion rate.
pub fn cohort_power_chart(r: &super::cohort::CohortReport) -> LineChart {
    use crate::study::sample_size::power;
    let first = r.arms.first().map(|a| a.name.clone()).unwrap_or_default();
    let scenario = r
        .arms
        .first()
        .and_then(|a| a.scenarios.first())
        .map(|s| s.name.clone())
        .unwrap_or_default();
    let comps: Vec<&super::cohort::Comparison> = r
        .comparisons
        .iter()
        .filter(|c| c.arms[0] == first && c.scenario == scenario && c.mean_difference_kg != 0.0)
        .collect();
    let largest = comps
        .iter()
        .filter_map(|c| c.n_per_arm_power90)
        .fold(20.0, f64::max)
        .min(5000.0);
    let top = nice_number(largest * 1.3, true);
    let series = comps
        .iter()
        .enumerate()
        .map(|(slot, c)| Series {
            name: format!("{} vs {}", c.arms[1], c.arms[0]),
            points: (0..=100)
                .map(|i| {
                    let n = top * f64::from(i) / 100.0;
                    (
                        n,
                        100.0 * power(n * c.completion_rate, c.mean_difference_kg, c.sd_kg),
                    )
                })
                .collect(),
            dashed: false,
            slot: slot + 1,
            markers_only: false,
        })
        .collect();
    LineChart {
        title: format!(
            "Power against participants per arm (scenario \"{scenario}\", week {})",
            r.weeks
        ),
        x_label: "Participants recruited per arm".to_string(),
        y_label: "Power [%]".to_string(),
        series,
        band: None,
        marker: None,
        caption: caption(
            "Two-sided alpha 0.05, two-sample normal approximation with the simulated difference and SD in mass change; recruits times the completion rate complete.",
        ),
        x_range: Some((0.0, top)),
        y_includes_zero: true,
    }
}
