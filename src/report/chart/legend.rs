//! The legend entries and the layout of the canvas around the plot.

use super::*;

/// One legend entry: its sample and its wrapped text lines.
pub(super) struct LegendEntry {
    pub(super) lines: Vec<String>,
    pub(super) sample: Sample,
}

impl LegendEntry {
    /// Vertical space the entry takes, px.
    pub(super) fn height(&self) -> f64 {
        self.lines.len().max(1) as f64 * LINE_GAP + 8.0
    }
}

pub(super) enum Sample {
    Line {
        colour: &'static str,
        shape: Shape,
        dashed: bool,
    },
    Band,
}

/// Where things go on the canvas.
pub(super) struct Layout {
    pub(super) left: f64,
    pub(super) right: f64,
    pub(super) top: f64,
    pub(super) bottom: f64,
    pub(super) legend_x: f64,
    pub(super) caption: Vec<String>,
    pub(super) caption_y: f64,
    pub(super) height: f64,
}
