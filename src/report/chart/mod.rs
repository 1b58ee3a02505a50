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

mod axes;
mod cohort;
mod engine;
mod legend;
mod logged;
mod standard;
mod svg;

pub use axes::{Ticks, nice_number, nice_ticks};
pub use cohort::{cohort_mass_chart, cohort_minutes_chart, cohort_power_chart};
pub use logged::{WeighInPoint, logged_charts, logged_mass_chart, weigh_in_points};
pub use standard::{composition_chart, energy_chart, mass_chart, minutes_chart, standard_charts};
pub use svg::escape;

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
/// How much wider bold text runs than regular in the sans-serif families asked for
/// (DejaVu Sans Bold against Book, about 10 %; from memory), rounded up.
const BOLD_WIDTH: f64 = 1.12;
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
