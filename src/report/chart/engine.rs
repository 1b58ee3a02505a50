//! The drawing engine: a [`LineChart`] rendered as one standalone SVG document, in
//! layers (frame, grid, data, markers, axes, labels, legend, caption).

use super::axes::{Ticks, nice_ticks, num, tick_label};
use super::legend::{Layout, LegendEntry, Sample};
use super::svg::{escape, marker_element, text_element, text_width, wrap};
use super::*;
use std::fmt::Write as _;

pub(super) fn finite_points(s: &Series) -> impl Iterator<Item = (f64, f64)> + '_ {
    s.points
        .iter()
        .copied()
        .filter(|(x, y)| x.is_finite() && y.is_finite())
}

pub(super) fn finite_band(b: &Band) -> impl Iterator<Item = (f64, f64, f64)> + '_ {
    b.points
        .iter()
        .copied()
        .filter(|(x, l, h)| x.is_finite() && l.is_finite() && h.is_finite())
}

pub(super) fn slot_colour(slot: usize) -> &'static str {
    PALETTE[slot % PALETTE.len()]
}

pub(super) fn slot_shape(slot: usize) -> Shape {
    SHAPES[slot % SHAPES.len()]
}

/// The scales of one rendering: data ranges, ticks and where the plot sits.
pub(super) struct Frame {
    x0: f64,
    x1: f64,
    xt: Ticks,
    yt: Ticks,
    y_labels: Vec<String>,
    l: Layout,
}

impl Frame {
    /// Canvas x of data x.
    fn sx(&self, x: f64) -> f64 {
        self.l.left + (x - self.x0) / (self.x1 - self.x0) * (self.l.right - self.l.left)
    }

    /// Canvas y of data y.
    fn sy(&self, y: f64) -> f64 {
        self.l.bottom
            - (y - self.yt.min) / (self.yt.max - self.yt.min) * (self.l.bottom - self.l.top)
    }
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

    pub(super) fn legend(&self) -> Vec<LegendEntry> {
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

    /// The scales for this chart and its legend.
    fn frame(&self, legend: &[LegendEntry]) -> Frame {
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
        let l = self.layout(&y_labels, legend);
        Frame {
            x0,
            x1,
            xt,
            yt,
            y_labels,
            l,
        }
    }

    /// The chart as a complete standalone SVG document.
    pub fn render(&self) -> String {
        let legend = self.legend();
        let f = self.frame(&legend);
        let mut out = String::new();
        self.draw_head(&f, &mut out);
        draw_grid(&f, &mut out);
        self.draw_data(&f, &mut out);
        self.draw_markers(&f, &mut out);
        draw_axes(&f, &mut out);
        self.draw_axis_labels(&f, &mut out);
        self.draw_marker_line(&f, &mut out);
        draw_legend(&f, &legend, &mut out);
        draw_caption(&f, &mut out);
        out.push_str("</svg>\n");
        out
    }

    /// The XML prologue, title, description, clip path, background and title.
    fn draw_head(&self, f: &Frame, out: &mut String) {
        out.push_str("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
        let _ = writeln!(
            out,
            r#"<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="{w}" height="{h}" viewBox="0 0 {w} {h}" font-family="{FONT_FAMILY}">"#,
            w = WIDTH,
            h = format!("{:.0}", f.l.height)
        );
        let _ = writeln!(out, "<title>{}</title>", escape(&self.title));
        let _ = writeln!(out, "<desc>{}</desc>", escape(&self.caption));
        let _ = writeln!(
            out,
            r#"<defs><clipPath id="plot-area"><rect x="{}" y="{}" width="{}" height="{}"/></clipPath></defs>"#,
            num(f.l.left),
            num(f.l.top),
            num(f.l.right - f.l.left),
            num(f.l.bottom - f.l.top)
        );
        let _ = writeln!(
            out,
            r##"<rect x="0" y="0" width="{WIDTH}" height="{:.0}" fill="#ffffff"/>"##,
            f.l.height
        );
        text_element(
            out,
            PAD,
            PAD + TITLE_SIZE,
            self.title_size(),
            r##" font-weight="bold" fill="#000000""##,
            &self.title,
        );
    }

    /// The title's font size, px: 18, or smaller so that a long title
    /// (a long scenario name) fits the canvas between the paddings instead of being
    /// cut off at its right edge.
    pub fn title_size(&self) -> f64 {
        let width_at_1px = text_width(&self.title, 1.0) * BOLD_WIDTH;
        if width_at_1px <= 0.0 {
            return TITLE_SIZE;
        }
        TITLE_SIZE.min((WIDTH - 2.0 * PAD) / width_at_1px)
    }

    /// The title's estimated width at [`LineChart::title_size`], px, and the width it
    /// has (the canvas less the paddings).
    pub fn title_width(&self) -> (f64, f64) {
        (
            text_width(&self.title, self.title_size()) * BOLD_WIDTH,
            WIDTH - 2.0 * PAD,
        )
    }

    /// The band and the lines, clipped to the plot.
    fn draw_data(&self, f: &Frame, out: &mut String) {
        let _ = writeln!(out, r#"<g clip-path="url(#plot-area)">"#);
        if let Some(b) = &self.band {
            let pts: Vec<(f64, f64, f64)> = finite_band(b).collect();
            if pts.len() >= 2 {
                let upper = pts.iter().map(|(x, _, h)| (f.sx(*x), f.sy(*h)));
                let lower = pts.iter().rev().map(|(x, lo, _)| (f.sx(*x), f.sy(*lo)));
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
                        num(f.sx(*x)),
                        num(f.sy(*y))
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
    }

    /// Markers on every k-th point of every series.
    fn draw_markers(&self, f: &Frame, out: &mut String) {
        // Markers on every k-th point, offset by slot so that the markers of lines
        // that coincide (scenarios with the same prescription) fall on different
        // weeks: k is at least the number of slots.
        let mut slots: Vec<usize> = self.series.iter().map(|s| s.slot).collect();
        slots.sort_unstable();
        slots.dedup();
        for s in &self.series {
            let pts: Vec<(f64, f64)> = finite_points(s)
                .filter(|(x, _)| *x >= f.x0 - 1e-9 && *x <= f.x1 + 1e-9)
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
                    out,
                    slot_shape(s.slot),
                    f.sx(*x),
                    f.sy(*y),
                    slot_colour(s.slot),
                    s.dashed,
                );
            }
        }
    }

    /// The two axis labels.
    fn draw_axis_labels(&self, f: &Frame, out: &mut String) {
        // Axis labels.
        text_element(
            out,
            (f.l.left + f.l.right) / 2.0,
            f.l.bottom + 30.0 + LABEL_SIZE,
            LABEL_SIZE,
            r##" text-anchor="middle" fill="#000000""##,
            &self.x_label,
        );
        let (yx, yy) = (PAD + LABEL_SIZE, (f.l.top + f.l.bottom) / 2.0);
        text_element(
            out,
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
    }

    /// The marker: a dashed vertical line, its label above the plot.
    fn draw_marker_line(&self, f: &Frame, out: &mut String) {
        // The marker: a dashed vertical line, its label above the plot.
        if let Some((mx, label)) = self.marker.as_ref().filter(|m| m.0 >= f.x0 && m.0 <= f.x1) {
            let x = f.sx(*mx);
            let _ = writeln!(
                out,
                r##"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="#555555" stroke-width="1.4" stroke-dasharray="4 4"/>"##,
                num(x),
                num(f.l.top - 4.0),
                num(x),
                num(f.l.bottom)
            );
            let half = text_width(label, TEXT_SIZE) / 2.0;
            // Centred on the line, but kept above the plot so it never runs into
            // the legend.
            let cx = x.clamp(f.l.left + half, (f.l.right - half).max(f.l.left + half));
            text_element(
                out,
                cx,
                f.l.top - 10.0,
                TEXT_SIZE,
                r##" text-anchor="middle" fill="#333333""##,
                label,
            );
        }
    }
}

/// Horizontal grid lines, and a zero line where zero lies inside the axis.
fn draw_grid(f: &Frame, out: &mut String) {
    // Horizontal grid lines, and a zero line where zero lies inside the axis.
    for v in f.yt.values() {
        let y = f.sy(v);
        let zero = v.abs() < 1e-9 * f.yt.step && v > f.yt.min && v < f.yt.max;
        let (colour, width) = if zero {
            ("#8c8c8c", 1.2)
        } else {
            (GRID_COLOUR, 1.0)
        };
        let _ = writeln!(
            out,
            r#"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="{colour}" stroke-width="{}"/>"#,
            num(f.l.left),
            num(y),
            num(f.l.right),
            num(y),
            num(width)
        );
    }
}

/// Axes, ticks and tick labels.
fn draw_axes(f: &Frame, out: &mut String) {
    // Axes, ticks and tick labels.
    let _ = writeln!(
        out,
        r#"<path d="M{},{} L{},{} L{},{}" fill="none" stroke="{AXIS_COLOUR}" stroke-width="1.2"/>"#,
        num(f.l.left),
        num(f.l.top),
        num(f.l.left),
        num(f.l.bottom),
        num(f.l.right),
        num(f.l.bottom)
    );
    let tick_text = format!(r#" text-anchor="middle" fill="{AXIS_COLOUR}""#);
    for v in f.xt.values() {
        let x = f.sx(v);
        let _ = writeln!(
            out,
            r#"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="{AXIS_COLOUR}" stroke-width="1.2"/>"#,
            num(x),
            num(f.l.bottom),
            num(x),
            num(f.l.bottom + 5.0)
        );
        text_element(
            out,
            x,
            f.l.bottom + 5.0 + 4.0 + TEXT_SIZE,
            TEXT_SIZE,
            &tick_text,
            &tick_label(v, 0),
        );
    }
    let tick_text = format!(r#" text-anchor="end" fill="{AXIS_COLOUR}""#);
    for (v, label) in f.yt.values().iter().zip(&f.y_labels) {
        let y = f.sy(*v);
        let _ = writeln!(
            out,
            r#"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="{AXIS_COLOUR}" stroke-width="1.2"/>"#,
            num(f.l.left - 5.0),
            num(y),
            num(f.l.left),
            num(y)
        );
        text_element(
            out,
            f.l.left - 10.0,
            y + 0.35 * TEXT_SIZE,
            TEXT_SIZE,
            &tick_text,
            label,
        );
    }
}

/// The legend, right of the plot.
pub(super) fn draw_legend(f: &Frame, legend: &[LegendEntry], out: &mut String) {
    // The legend, right of the plot.
    let mut y = f.l.top + 8.0;
    for e in legend {
        let (sx0, sx1, mid) = (f.l.legend_x, f.l.legend_x + LEGEND_SAMPLE, y);
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
                marker_element(out, shape, (sx0 + sx1) / 2.0, mid, colour, dashed);
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
                out,
                sx1 + 10.0,
                mid + 0.35 * TEXT_SIZE + i as f64 * LINE_GAP,
                TEXT_SIZE,
                r##" fill="#000000""##,
                line,
            );
        }
        y += e.height();
    }
}

/// The caption.
fn draw_caption(f: &Frame, out: &mut String) {
    // The caption.
    for (i, line) in f.l.caption.iter().enumerate() {
        text_element(
            out,
            PAD,
            f.l.caption_y + i as f64 * LINE_GAP,
            TEXT_SIZE,
            r##" fill="#333333""##,
            line,
        );
    }
}
