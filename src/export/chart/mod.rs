//! The chart kit every loopwright drawing is built from: the loads plot ([`super::plot`]), the
//! elevation ([`super::svg`]) and the study overlays ([`super::overlay`]).
//!
//! This module owns the shared drawing primitives, so that a drawing module holds only what is
//! particular to its picture:
//! - [`Frame`] ([`frame`]): the data → pixel mapping (each axis stretched, or one scale on both),
//!   ticks, grid, axes, series, broken paths, limit lines and bands;
//! - [`ticks`]: nice numbers, the two tick placements, fixed-decimal number printing;
//! - [`mod@text`]: text elements, wrapping and clipping, the legend and the caution block;
//! - here: the colours, the font, pixel rounding, plain lines and polylines, and the page.
//!
//! The single-design drawings and the study sheets have always looked different (fonts, offsets,
//! colours written in short hex). The kit keeps both as the named [`Look`]s rather than change a
//! byte of any picture.
//!
//! Every function returns a drawing for any input: empty or non-finite data give empty series and
//! a fallback axis range, never a panic.

pub mod frame;
pub mod text;
pub mod ticks;

use svg::Document;
use svg::node::element::{Circle, Definitions, Line, Polyline, Rectangle};

pub use frame::Frame;
pub use text::{
    LegendEntry, bare_text, caution_block, clean_text, clip, fitting_font_px, legend, sheet_font,
    text, text_width_px, wrap,
};
pub use ticks::{
    Nice, Ticks, decimals_for, fmt_num, midpoint_step, nice_number, nice_ticks, short_num,
};

/// The two looks of loopwright's drawings.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Look {
    /// Single-design drawings (elevation, loads plot): every text element carries [`FONT`], its
    /// size and ink; elements carry ids.
    Drawing,
    /// Study sheets (compare and sweep overlays): text inherits a generic sans-serif from its
    /// group ([`sheet_font`]); colours in short hex.
    Sheet,
}

/// Colours of the drawings (hex RGB), chosen for loopwright and readable on white.
pub mod colour {
    /// Rail centreline (a mid blue; ACI 5 in the DXF).
    pub const RAIL: &str = "#1f5fae";
    /// Heartline (an orange; ACI 30 in the DXF).
    pub const HEARTLINE: &str = "#e07b00";
    /// Normal load.
    pub const NORMAL: &str = "#1f5fae";
    /// Tangential load.
    pub const TANGENTIAL: &str = "#2e8b3e";
    /// Lateral load.
    pub const LATERAL: &str = "#8a3fa6";
    /// Limit lines.
    pub const LIMIT: &str = "#c62828";
    /// Shading of the loop proper.
    pub const LOOP_SPAN: &str = "#e8eef6";
    /// Grid lines.
    pub const GRID: &str = "#dddddd";
    /// Duration-envelope levels (a muted brown, apart from the hard limits' red).
    pub const ENVELOPE: &str = "#8d6e63";
    /// Shading of a run that exceeds an envelope level for too long.
    pub const ENVELOPE_FAIL: &str = "#f6d5d5";
    /// Text, axes and dimensions.
    pub const INK: &str = "#222222";
    /// Secondary text (caution, notes).
    pub const MUTED: &str = "#555555";
    /// Series colours for drawings of several designs, one per design (cycled).
    pub const SERIES: [&str; 6] = [
        "#1f5fae", "#e07b00", "#2e8b3e", "#8a3fa6", "#c62828", "#00838f",
    ];
    /// Sheet look: plot outline.
    pub const SHEET_FRAME: &str = "#444";
    /// Sheet look: grid lines.
    pub const SHEET_GRID: &str = "#ddd";
    /// Sheet look: notes under the legend.
    pub const SHEET_NOTE: &str = "#555";
    /// Sheet look: limit lines.
    pub const SHEET_LIMIT: &str = "#a00";
    /// Sheet look: the caution.
    pub const SHEET_CAUTION: &str = "#a00";
    /// Loads plot of a train: the middle and rear car's normal load, and the range of every car.
    pub const CAR_MIDDLE: &str = "#0b8793";
    pub const CAR_REAR: &str = "#b8860b";
    pub const CAR_RANGE: &str = "#c9d7ec";
}

/// Font stack of the drawing look (common sans-serif fonts present on most systems).
pub const FONT: &str = "DejaVu Sans, Helvetica, Arial, sans-serif";

/// A pixel coordinate rounded to 0.01 px (keeps files small; far below what a screen shows);
/// 0 if not finite.
pub fn px(v: f64) -> f64 {
    crate::export::number::hundredths(v) / 100.0
}

/// A straight line from (x1, y1) to (x2, y2) px in `stroke` (width as the SVG default unless set).
pub fn rule(x1: f64, y1: f64, x2: f64, y2: f64, stroke: &str) -> Line {
    Line::new()
        .set("x1", px(x1))
        .set("y1", px(y1))
        .set("x2", px(x2))
        .set("y2", px(y2))
        .set("stroke", stroke)
}

/// The `points` attribute of a polyline through pixel points.
pub fn points_attr(pts: &[(f64, f64)]) -> String {
    let mut s = String::with_capacity(pts.len() * 16);
    for (k, (x, y)) in pts.iter().enumerate() {
        if k > 0 {
            s.push(' ');
        }
        crate::export::number::push_hundredths(&mut s, *x);
        s.push(',');
        crate::export::number::push_hundredths(&mut s, *y);
    }
    s
}

/// An unfilled, round-joined polyline through pixel points.
pub fn polyline(pts: &[(f64, f64)], stroke: &str, width_px: f64, dash: Option<&str>) -> Polyline {
    let line = Polyline::new()
        .set("points", points_attr(pts))
        .set("fill", "none")
        .set("stroke", stroke)
        .set("stroke-width", width_px)
        .set("stroke-linejoin", "round");
    match dash {
        Some(d) => line.set("stroke-dasharray", d),
        None => line,
    }
}

/// A filled dot of radius `r_px` at pixel (x, y).
pub fn dot(x: f64, y: f64, r_px: f64, fill: &str) -> Circle {
    Circle::new()
        .set("cx", px(x))
        .set("cy", px(y))
        .set("r", r_px)
        .set("fill", fill)
}

/// An empty page of `width_px` × `height_px` with its view box, any `defs`, and a white ground.
pub fn page(width_px: f64, height_px: f64, defs: Option<Definitions>) -> Document {
    let doc = Document::new()
        .set("width", width_px)
        .set("height", height_px)
        .set("viewBox", (0.0, 0.0, width_px, height_px));
    let doc = match defs {
        Some(d) => doc.add(d),
        None => doc,
    };
    doc.add(
        Rectangle::new()
            .set("width", "100%")
            .set("height", "100%")
            .set("fill", "white"),
    )
}
