//! Loads plot (`<name>-loads.svg`) and the small chart kit every loopwright drawing shares.
//!
//! This module owns:
//! - [`loads_svg`]: normal, tangential (and lateral, when present) load in g against heartline arc
//!   length, with the brief's limits, the loop span shaded, and the caution;
//! - the reusable pieces, so that later plots (e.g. several designs overlaid) need no new
//!   plumbing: [`nice_ticks`] / [`nice_number`] for round axis values, [`Chart`] for the data →
//!   pixel mapping with grid, axes, series and limit lines, [`legend`], [`caution_block`],
//!   [`wrap`] and [`clean_text`];
//! - the colours of the drawings ([`colour`]), our own choice.
//!
//! Every function here returns a drawing for any input: empty or non-finite data give empty
//! series and a fallback axis range, never a panic.

use svg::Document;
use svg::node::element::{Circle, Group, Line, Polyline, Rectangle, Text};

use crate::model::Assessment as Design;
use crate::report::CAUTION;

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
}

/// Font stack of all text (common sans-serif fonts present on most systems).
pub const FONT: &str = "DejaVu Sans, Helvetica, Arial, sans-serif";

/// Width of the loads plot, px.
pub const WIDTH_PX: f64 = 1000.0;
/// Height of the loads plot, px.
pub const HEIGHT_PX: f64 = 600.0;

/// A "nice" number near `x`: 1, 2, 5 or 10 times a power of ten. With `round` the nearest such
/// number, otherwise the smallest one not below `x`. (Heckbert, "Nice numbers for graph labels",
/// Graphics Gems, 1990.) Returns 1 for zero, negative or non-finite `x`.
pub fn nice_number(x: f64, round: bool) -> f64 {
    if !(x.is_finite() && x > 0.0) {
        return 1.0;
    }
    let p = 10f64.powf(x.log10().floor());
    let f = x / p;
    let n = if round {
        if f < 1.5 {
            1.0
        } else if f < 3.0 {
            2.0
        } else if f < 7.0 {
            5.0
        } else {
            10.0
        }
    } else if f <= 1.0 {
        1.0
    } else if f <= 2.0 {
        2.0
    } else if f <= 5.0 {
        5.0
    } else {
        10.0
    };
    n * p
}

/// About `n` round tick values covering `[lo, hi]` (Heckbert's loose labelling): the step is 1,
/// 2 or 5 times a power of ten, the first tick is at or below `lo`, the last at or above `hi`.
///
/// ```
/// use loopwright::export::plot::nice_ticks;
/// assert_eq!(nice_ticks(0.0, 4.3, 5), vec![0.0, 1.0, 2.0, 3.0, 4.0, 5.0]);
/// assert_eq!(nice_ticks(-1.2, 4.5, 6), vec![-2.0, 0.0, 2.0, 4.0, 6.0]);
/// assert_eq!(nice_ticks(0.0, 86.0, 8), vec![0.0, 10.0, 20.0, 30.0, 40.0, 50.0, 60.0, 70.0, 80.0, 90.0]);
/// ```
///
/// Reversed bounds are swapped, an empty range is widened around its value, and non-finite
/// bounds give the ticks of `[0, 1]`.
pub fn nice_ticks(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    let (lo, hi) = if lo.is_finite() && hi.is_finite() {
        (lo.min(hi), lo.max(hi))
    } else {
        (0.0, 1.0)
    };
    let (lo, hi) = widen(lo, hi);
    let n = n.max(2);
    let step = nice_number(nice_number(hi - lo, false) / (n - 1) as f64, true);
    let first = (lo / step).floor();
    let last = (hi / step).ceil();
    // Snap to multiples of the step so labels print without float noise (and −0 becomes 0).
    (0..=((last - first) as usize).min(1000))
        .map(|k| snap((first + k as f64) * step, step))
        .collect()
}

/// Widen an empty or nearly empty range so it can be mapped to pixels.
fn widen(lo: f64, hi: f64) -> (f64, f64) {
    let scale = lo.abs().max(hi.abs());
    if hi - lo > 1e-9 * scale.max(1e-300) {
        (lo, hi)
    } else if scale == 0.0 {
        (-1.0, 1.0)
    } else {
        (lo - 0.1 * scale, hi + 0.1 * scale)
    }
}

fn snap(v: f64, step: f64) -> f64 {
    let r = (v / step).round() * step;
    // Printing with the step's decimals does the rest; this only removes −0 and 1e-17 residues.
    if r.abs() < 1e-9 * step { 0.0 } else { r }
}

/// Decimals needed to print values spaced `step` apart.
pub fn decimals_for(step: f64) -> usize {
    if !(step.is_finite() && step > 0.0) {
        return 0;
    }
    (-(step.log10() + 1e-9).floor()).clamp(0.0, 12.0) as usize
}

/// `v` with `decimals` decimals, or "n/a" if it is not finite.
pub fn fmt_num(v: f64, decimals: usize) -> String {
    if !v.is_finite() {
        return "n/a".into();
    }
    let t = format!("{v:.decimals$}");
    // A value that rounds to zero prints as 0, not −0 (e.g. the footprint of a closed circle).
    match t.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_string(),
        _ => t,
    }
}

/// Text safe for XML 1.0: control characters (not allowed there) become spaces.
pub fn clean_text(text: &str) -> String {
    text.chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect()
}

/// Split `text` at whitespace into lines of at most `width` characters (longer words stay whole).
pub fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// At most `n` characters of `s`, with an ellipsis if cut.
pub fn clip(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_string()
    } else {
        format!("{}…", s.chars().take(n).collect::<String>())
    }
}

/// A `<text>` element at (x, y) px; `anchor` is "start", "middle" or "end".
pub fn text(x: f64, y: f64, content: &str, size_px: f64, anchor: &str) -> Text {
    Text::new(clean_text(content))
        .set("x", px(x))
        .set("y", px(y))
        .set("font-size", px(size_px))
        .set("text-anchor", anchor)
        .set("font-family", FONT)
        .set("fill", colour::INK)
}

/// A pixel coordinate rounded to 0.01 px (keeps files small; far below what a screen shows).
pub fn px(v: f64) -> f64 {
    if v.is_finite() {
        (v * 100.0).round() / 100.0
    } else {
        0.0
    }
}

/// A legend entry: label, stroke colour, optional dash pattern.
pub type LegendEntry<'a> = (&'a str, &'a str, Option<&'a str>);

/// A legend: one line sample and label per entry, stacked from (x, y) down, 20 px apart.
pub fn legend(x: f64, y: f64, entries: &[LegendEntry]) -> Group {
    let mut g = Group::new().set("id", "legend");
    for (k, (label, stroke, dash)) in entries.iter().enumerate() {
        let yy = y + 20.0 * k as f64;
        let mut sample = Line::new()
            .set("x1", px(x))
            .set("y1", px(yy))
            .set("x2", px(x + 28.0))
            .set("y2", px(yy))
            .set("stroke", *stroke)
            .set("stroke-width", 2.5);
        if let Some(d) = dash {
            sample = sample.set("stroke-dasharray", *d);
        }
        g = g
            .add(sample)
            .add(text(x + 36.0, yy + 4.5, label, 13.0, "start"));
    }
    g
}

/// The caution, wrapped to `chars` characters a line, from baseline `y` down; returns the group
/// and the y of the last baseline.
pub fn caution_block(x: f64, y: f64, chars: usize) -> (Group, f64) {
    let mut g = Group::new().set("id", "caution");
    let mut yy = y;
    for (k, line) in wrap(CAUTION, chars).iter().enumerate() {
        yy = y + 16.0 * k as f64;
        g = g.add(text(x, yy, line, 12.0, "start").set("fill", colour::MUTED));
    }
    (g, yy)
}

/// A plot area mapping data (x, y) to pixels, with round ticks on both axes.
///
/// The data range of each axis is widened to its outermost ticks, so the frame starts and ends
/// on a labelled value.
#[derive(Debug, Clone, PartialEq)]
pub struct Chart {
    /// Plot area, px: left, top, width, height.
    pub left: f64,
    pub top: f64,
    pub width: f64,
    pub height: f64,
    pub x_ticks: Vec<f64>,
    pub y_ticks: Vec<f64>,
    /// Data range shown, (min, max), equal to the first and last tick.
    pub x_range: (f64, f64),
    pub y_range: (f64, f64),
}

impl Chart {
    /// A chart on the area (left, top, width, height) px showing at least `x` and `y` (data
    /// ranges, min and max), with about `nx` and `ny` ticks.
    pub fn new(
        area: (f64, f64, f64, f64),
        x: (f64, f64),
        y: (f64, f64),
        nx: usize,
        ny: usize,
    ) -> Chart {
        let x_ticks = nice_ticks(x.0, x.1, nx);
        let y_ticks = nice_ticks(y.0, y.1, ny);
        let range = |t: &[f64]| {
            (
                t.first().copied().unwrap_or(0.0),
                t.last().copied().unwrap_or(1.0),
            )
        };
        Chart {
            left: area.0,
            top: area.1,
            width: area.2.max(1.0),
            height: area.3.max(1.0),
            x_range: range(&x_ticks),
            y_range: range(&y_ticks),
            x_ticks,
            y_ticks,
        }
    }

    /// Pixel x of data x.
    pub fn px(&self, x: f64) -> f64 {
        let (a, b) = self.x_range;
        self.left + (x - a) / (b - a) * self.width
    }

    /// Pixel y of data y (SVG y grows downwards, data y upwards).
    pub fn py(&self, y: f64) -> f64 {
        let (a, b) = self.y_range;
        self.top + (b - y) / (b - a) * self.height
    }

    /// Grid lines at every tick.
    pub fn grid(&self) -> Group {
        let mut g = Group::new()
            .set("id", "grid")
            .set("stroke", colour::GRID)
            .set("stroke-width", 1);
        for &t in &self.x_ticks {
            let x = px(self.px(t));
            g = g.add(
                Line::new()
                    .set("x1", x)
                    .set("y1", px(self.top))
                    .set("x2", x)
                    .set("y2", px(self.top + self.height)),
            );
        }
        for &t in &self.y_ticks {
            let y = px(self.py(t));
            g = g.add(
                Line::new()
                    .set("x1", px(self.left))
                    .set("y1", y)
                    .set("x2", px(self.left + self.width))
                    .set("y2", y),
            );
        }
        g
    }

    /// Frame, tick labels and axis titles.
    pub fn axes(&self, x_title: &str, y_title: &str) -> Group {
        let frame = Rectangle::new()
            .set("x", px(self.left))
            .set("y", px(self.top))
            .set("width", px(self.width))
            .set("height", px(self.height))
            .set("fill", "none")
            .set("stroke", colour::INK)
            .set("stroke-width", 1.2);
        let mut g = Group::new().set("id", "axes").add(frame);
        let bottom = self.top + self.height;
        let dx = decimals_for(step_of(&self.x_ticks));
        for &t in &self.x_ticks {
            let x = self.px(t);
            g = g.add(tick(x, bottom, x, bottom + 5.0)).add(text(
                x,
                bottom + 19.0,
                &fmt_num(t, dx),
                12.0,
                "middle",
            ));
        }
        let dy = decimals_for(step_of(&self.y_ticks));
        for &t in &self.y_ticks {
            let y = self.py(t);
            g = g.add(tick(self.left - 5.0, y, self.left, y)).add(text(
                self.left - 8.0,
                y + 4.0,
                &fmt_num(t, dy),
                12.0,
                "end",
            ));
        }
        let (cx, cy) = (self.left + self.width / 2.0, self.top + self.height / 2.0);
        g.add(text(cx, bottom + 40.0, x_title, 13.0, "middle")).add(
            text(self.left - 48.0, cy, y_title, 13.0, "middle").set(
                "transform",
                format!("rotate(-90 {} {})", px(self.left - 48.0), px(cy)),
            ),
        )
    }

    /// A polyline through the finite points; with more than four points per pixel column it
    /// keeps, per column, the first, lowest, highest and last point, so peaks survive.
    pub fn series(
        &self,
        points: &[(f64, f64)],
        stroke: &str,
        width_px: f64,
        dash: Option<&str>,
    ) -> Polyline {
        let pts: Vec<(f64, f64)> = points
            .iter()
            .filter(|p| p.0.is_finite() && p.1.is_finite())
            .map(|&(x, y)| (self.px(x), self.py(y)))
            .collect();
        let pts = if pts.len() > 4 * self.width as usize {
            decimate_columns(&pts)
        } else {
            pts
        };
        let mut line = Polyline::new()
            .set("points", points_attr(&pts))
            .set("fill", "none")
            .set("stroke", stroke)
            .set("stroke-width", width_px)
            .set("stroke-linejoin", "round");
        if let Some(d) = dash {
            line = line.set("stroke-dasharray", d);
        }
        line
    }

    /// A dashed horizontal line at data y from data x0 to x1 with its label above its right end,
    /// or, with `beside`, just right of its end (for short markers that a curve passes through).
    pub fn limit_line(
        &self,
        y: f64,
        x0: f64,
        x1: f64,
        stroke: &str,
        label: &str,
        beside: bool,
    ) -> Group {
        let (a, b) = (
            self.px(x0).max(self.left),
            self.px(x1).min(self.left + self.width),
        );
        // Entirely outside the frame (or empty): draw nothing rather than a line off the chart.
        if (b - a).is_nan() || b <= a {
            return Group::new();
        }
        let yy = self.py(y);
        let label = if beside {
            text(b + 6.0, yy + 4.0, label, 12.0, "start")
        } else {
            text(b - 4.0, yy - 6.0, label, 12.0, "end")
        };
        Group::new()
            .add(
                Line::new()
                    .set("x1", px(a))
                    .set("y1", px(yy))
                    .set("x2", px(b))
                    .set("y2", px(yy))
                    .set("stroke", stroke)
                    .set("stroke-width", 1.8)
                    .set("stroke-dasharray", "8 5"),
            )
            .add(label.set("fill", stroke))
    }

    /// A full-height band between data x0 and x1 (e.g. the loop proper).
    pub fn band_x(&self, x0: f64, x1: f64, fill: &str) -> Rectangle {
        let a = self.px(x0.min(x1)).clamp(self.left, self.left + self.width);
        let b = self.px(x0.max(x1)).clamp(self.left, self.left + self.width);
        Rectangle::new()
            .set("x", px(a))
            .set("y", px(self.top))
            .set("width", px(b - a))
            .set("height", px(self.height))
            .set("fill", fill)
    }
}

fn tick(x1: f64, y1: f64, x2: f64, y2: f64) -> Line {
    Line::new()
        .set("x1", px(x1))
        .set("y1", px(y1))
        .set("x2", px(x2))
        .set("y2", px(y2))
        .set("stroke", colour::INK)
        .set("stroke-width", 1)
}

fn step_of(ticks: &[f64]) -> f64 {
    if ticks.len() >= 2 {
        ticks[1] - ticks[0]
    } else {
        1.0
    }
}

/// The `points` attribute of a polyline.
pub fn points_attr(pts: &[(f64, f64)]) -> String {
    let mut s = String::with_capacity(pts.len() * 16);
    for (k, (x, y)) in pts.iter().enumerate() {
        if k > 0 {
            s.push(' ');
        }
        s.push_str(&format!("{},{}", px(*x), px(*y)));
    }
    s
}

/// Keep, per whole-pixel column of a left-to-right series, the first, lowest, highest and last
/// point (in their original order).
fn decimate_columns(pts: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    let mut start = 0;
    while start < pts.len() {
        let col = pts[start].0.floor();
        let mut end = start;
        while end < pts.len() && pts[end].0.floor() == col {
            end += 1;
        }
        let run = &pts[start..end];
        let lo = (0..run.len())
            .min_by(|&a, &b| run[b].1.total_cmp(&run[a].1))
            .unwrap_or(0);
        let hi = (0..run.len())
            .max_by(|&a, &b| run[b].1.total_cmp(&run[a].1))
            .unwrap_or(0);
        let mut keep = vec![0, lo, hi, run.len() - 1];
        keep.sort_unstable();
        keep.dedup();
        out.extend(keep.into_iter().map(|k| run[k]));
        // Guard against a non-advancing scan (cannot happen: `end > start` always).
        start = end.max(start + 1);
    }
    out
}

/// SVG text of the loads plot.
pub fn loads_svg(design: &Design) -> String {
    let b = &design.brief;
    let s = &design.best.summary;
    let pts = &design.best.ride.points;
    let series = |f: fn(&crate::dynamics::LoadPoint) -> f64| -> Vec<(f64, f64)> {
        pts.iter().map(|p| (p.s_m, f(p))).collect()
    };
    let normal = series(|p| p.normal_g);
    let tangential = series(|p| p.tangential_g);
    let lateral = series(|p| p.lateral_g);
    let has_lateral = pts.iter().any(|p| p.lateral_g.abs() > 1e-9);

    // Ranges cover the data, the limits and 0 g.
    let finite = |v: &f64| v.is_finite();
    let xs = pts.iter().map(|p| p.s_m).filter(finite);
    let x_range = xs
        .clone()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, c), v| {
            (a.min(v), c.max(v))
        });
    let x_range = if x_range.0 <= x_range.1 {
        x_range
    } else {
        (0.0, 1.0)
    };
    let mut ys = vec![0.0, b.max_g, b.min_top_g];
    ys.extend(normal.iter().chain(&tangential).map(|p| p.1));
    if has_lateral {
        ys.extend(lateral.iter().map(|p| p.1));
    }
    let y_range = ys
        .iter()
        .copied()
        .filter(finite)
        .fold((0.0, 0.0), |(a, c): (f64, f64), v| (a.min(v), c.max(v)));
    // Headroom above the highest value keeps the limit label clear of the frame.
    let y_range = (y_range.0, y_range.1 + 0.04 * (y_range.1 - y_range.0));

    let chart = Chart::new((80.0, 84.0, 720.0, 400.0), x_range, y_range, 10, 8);
    let mut doc = Document::new()
        .set("width", WIDTH_PX)
        .set("height", HEIGHT_PX)
        .set("viewBox", (0, 0, WIDTH_PX, HEIGHT_PX))
        .add(
            Rectangle::new()
                .set("width", "100%")
                .set("height", "100%")
                .set("fill", "white"),
        );

    // One title line: a long brief title is cut (the elevation shows it in full).
    let title = format!("Loads along the heartline - {}", clip(&b.title, 60));
    let subtitle = format!(
        "{} loop, entry speed {} m/s ({} km/h); peak normal {} g, normal at the top {} g",
        design.best.label(),
        fmt_num(b.entry_speed_m_s, 2),
        fmt_num(b.entry_speed_m_s * 3.6, 1),
        fmt_num(s.peak_normal_g, 2),
        fmt_num(s.top_normal_g, 2)
    );
    doc = doc
        .add(
            text(80.0, 32.0, &title, 18.0, "start")
                .set("font-weight", "bold")
                .set("id", "title"),
        )
        .add(text(80.0, 56.0, &subtitle, 13.0, "start"));

    let (l0, l1) = design.best.path.loop_span_m;
    if l0.is_finite() && l1.is_finite() {
        let band = chart
            .band_x(l0, l1, colour::LOOP_SPAN)
            .set("id", "loop-span");
        doc = doc.add(band);
        // Label the band only where it is wide enough to hold the word.
        let (a, b) = (
            chart.px(l0.min(l1)).max(chart.left),
            chart.px(l0.max(l1)).min(chart.left + chart.width),
        );
        if b - a >= 40.0 {
            doc = doc.add(
                text((a + b) / 2.0, chart.top + 16.0, "loop", 12.0, "middle")
                    .set("fill", colour::MUTED)
                    .set("font-style", "italic"),
            );
        }
    }
    doc = doc.add(chart.grid());
    // 0 g reference, solid and darker than the grid.
    let z = chart.py(0.0);
    doc = doc.add(
        Line::new()
            .set("x1", px(chart.left))
            .set("y1", px(z))
            .set("x2", px(chart.left + chart.width))
            .set("y2", px(z))
            .set("stroke", "#999999")
            .set("stroke-width", 1)
            .set("id", "zero-g"),
    );

    doc = doc.add(
        chart
            .limit_line(
                b.max_g,
                x_range.0,
                x_range.1,
                colour::LIMIT,
                &format!("max g {} g", fmt_num(b.max_g, 2)),
                false,
            )
            .set("id", "limit-max-g"),
    );
    // The top limit applies at the top station only: a short line there, not a full-width one.
    let half = 0.06 * (chart.x_range.1 - chart.x_range.0);
    let top_s = s.top_s_m;
    if top_s.is_finite() {
        doc = doc.add(
            chart
                .limit_line(
                    b.min_top_g,
                    top_s - half,
                    top_s + half,
                    colour::LIMIT,
                    &format!("min top {} g", fmt_num(b.min_top_g, 2)),
                    true,
                )
                .set("id", "limit-min-top"),
        );
    }

    doc = doc.add(envelope_layer(design, &chart, x_range));
    doc = doc.add(
        chart
            .series(&tangential, colour::TANGENTIAL, 2.0, None)
            .set("id", "tangential-g"),
    );
    if has_lateral {
        doc = doc.add(
            chart
                .series(&lateral, colour::LATERAL, 2.0, Some("2 3"))
                .set("id", "lateral-g"),
        );
    }
    doc = doc.add(
        chart
            .series(&normal, colour::NORMAL, 2.4, None)
            .set("id", "normal-g"),
    );
    if top_s.is_finite() && s.top_normal_g.is_finite() {
        doc = doc.add(
            Circle::new()
                .set("cx", px(chart.px(top_s)))
                .set("cy", px(chart.py(s.top_normal_g)))
                .set("r", 4)
                .set("fill", colour::NORMAL)
                .set("id", "top-marker"),
        );
    }
    doc = doc.add(chart.axes("heartline arc length s (m)", "load (g)"));

    let mut entries: Vec<LegendEntry> = vec![
        ("normal g", colour::NORMAL, None),
        ("tangential g", colour::TANGENTIAL, None),
    ];
    if has_lateral {
        entries.push(("lateral g", colour::LATERAL, Some("2 3")));
    }
    entries.push(("limits", colour::LIMIT, Some("8 5")));
    if design.verification.envelope.is_some() {
        entries.push(("envelope (normal)", colour::ENVELOPE, Some("3 4")));
    }
    doc = doc.add(legend(820.0, chart.top + 10.0, &entries));
    let legend_end = chart.top + 10.0 + 20.0 * entries.len() as f64;
    let band_y = legend_end + 8.0;
    doc = doc
        .add(
            Rectangle::new()
                .set("x", 820)
                .set("y", px(band_y - 6.0))
                .set("width", 28)
                .set("height", 12)
                .set("fill", colour::LOOP_SPAN)
                .set("stroke", "#b8c4d4"),
        )
        .add(text(856.0, band_y + 4.5, "loop proper", 13.0, "start"));

    let (caution, _) = caution_block(80.0, 560.0, 125);
    doc.add(caution).to_string()
}

/// The duration envelope on the normal axis: each level inside the plotted range as a thin dotted
/// line labelled with how long it may be exceeded, and every failing level's worst run (any axis)
/// shaded, so a reader sees where the ride stays beyond a level too long.
fn envelope_layer(design: &Design, chart: &Chart, x_range: (f64, f64)) -> Group {
    use crate::checks::envelope::Axis;
    let mut g = Group::new().set("id", "envelope");
    let Some(env) = &design.verification.envelope else {
        return g;
    };
    let (lo, hi) = chart.y_range;
    for line in env.plot_lines() {
        if let Some((a, b)) = line.run_s_m
            && !line.pass
        {
            g = g.add(
                chart
                    .band_x(a, b, colour::ENVELOPE_FAIL)
                    .set("class", "envelope-fail"),
            );
        }
        if line.axis != Axis::Normal || !(lo..=hi).contains(&line.level_g) {
            continue;
        }
        let how_long = if line.allowed_s == 0.0 {
            "0 s".to_string()
        } else {
            format!("{} s", fmt_num(line.allowed_s, 1))
        };
        let yy = chart.py(line.level_g);
        g = g
            .add(
                Line::new()
                    .set("x1", px(chart.px(x_range.0)))
                    .set("y1", px(yy))
                    .set("x2", px(chart.px(x_range.1)))
                    .set("y2", px(yy))
                    .set(
                        "stroke",
                        if line.pass {
                            colour::ENVELOPE
                        } else {
                            colour::LIMIT
                        },
                    )
                    .set("stroke-width", 1)
                    .set("stroke-dasharray", "3 4")
                    .set("class", "envelope-level"),
            )
            .add(
                text(
                    chart.px(x_range.0) + 4.0,
                    yy - 4.0,
                    &format!("{} g for ≤ {how_long}", fmt_num(line.level_g, 1)),
                    10.0,
                    "start",
                )
                .set("fill", colour::ENVELOPE),
            );
    }
    g
}

#[cfg(test)]
mod tests {
    use super::*;

    // Heckbert (Graphics Gems, 1990): the step is 1, 2 or 5 × 10^k and the ticks enclose the range.
    #[test]
    fn nice_ticks_enclose_the_range_with_round_steps() {
        for &(lo, hi, n) in &[
            (0.0, 4.3, 5),
            (-1.37, 5.02, 8),
            (0.0, 86.04, 10),
            (12.5, 12.7, 4),
            (-3e-4, 7e-4, 5),
        ] {
            let t = nice_ticks(lo, hi, n);
            assert!(
                t[0] <= lo && *t.last().unwrap() >= hi,
                "{t:?} vs [{lo}, {hi}]"
            );
            let step = t[1] - t[0];
            let mantissa = step / 10f64.powf(step.log10().floor());
            assert!(
                [1.0, 2.0, 5.0].iter().any(|m| (mantissa - m).abs() < 1e-9),
                "step {step}"
            );
            assert!(
                t.windows(2)
                    .all(|w| ((w[1] - w[0]) - step).abs() < 1e-9 * step)
            );
            assert!(
                t.len() >= n / 2 && t.len() <= 2 * n + 1,
                "{} ticks for n = {n}",
                t.len()
            );
        }
        // Degenerate input still gives a usable axis.
        assert_eq!(nice_ticks(f64::NAN, 1.0, 5), nice_ticks(0.0, 1.0, 5));
        assert!(nice_ticks(3.0, 3.0, 5).len() >= 2);
        assert_eq!(nice_ticks(5.0, 0.0, 5), nice_ticks(0.0, 5.0, 5));
        assert!(nice_ticks(0.0, 0.0, 0).len() >= 2);
    }

    // Heckbert's table: round 1.4 → 1, 1.6 → 2, 3.5 → 5, 8 → 10; ceiling 1.1 → 2, 2.1 → 5, 5.1 → 10.
    #[test]
    fn nice_number_rounds_and_ceils() {
        let cases = [
            (1.4, true, 1.0),
            (1.6, true, 2.0),
            (3.5, true, 5.0),
            (8.0, true, 10.0),
            (0.034, true, 0.05),
        ];
        for (x, r, want) in
            cases
                .into_iter()
                .chain([(1.1, false, 2.0), (2.1, false, 5.0), (5.1, false, 10.0)])
        {
            assert!(
                (nice_number(x, r) - want).abs() < 1e-12,
                "nice_number({x}, {r}) = {}",
                nice_number(x, r)
            );
        }
    }

    // The mapping must send the range ends to the frame edges, y flipped (SVG y grows downwards).
    #[test]
    fn chart_maps_range_to_frame() {
        let c = Chart::new((10.0, 20.0, 100.0, 50.0), (0.0, 10.0), (-1.0, 4.0), 5, 5);
        assert_eq!((c.px(c.x_range.0), c.px(c.x_range.1)), (10.0, 110.0));
        assert_eq!((c.py(c.y_range.0), c.py(c.y_range.1)), (70.0, 20.0));
    }

    // Closed forms for a lossless circle of radius R entered at v (vertical circular motion, e.g.
    // Halliday, Resnick & Walker, ch. 6 and 8): bottom n = 1 + v²/(gR), top n = v²/(gR) − 5.
    // Read back from the drawing with its own 0 g and max-g lines as the scale.
    #[test]
    fn loads_plot_shows_closed_form_loads() {
        use crate::export::svg::tests::{by_id, circle_design, parse, points};
        use crate::units::STANDARD_GRAVITY_M_S2 as G;
        let d = circle_design(10.0);
        let svg = loads_svg(&d);
        assert_eq!(svg.matches("<svg").count(), 1);
        assert!(
            svg.contains(
                CAUTION
                    .split_whitespace()
                    .take(5)
                    .collect::<Vec<_>>()
                    .join(" ")
                    .as_str()
            )
        );
        assert!(svg.contains("min top") && svg.contains("max g"));
        let tags = parse(&svg);
        let y_of = |id: &str| -> f64 { by_id(&tags, id).1["y1"].parse().unwrap() };
        let y0 = y_of("zero-g");
        let limit = by_id(&tags, "limit-max-g");
        let i = tags.iter().position(|t| std::ptr::eq(t, limit)).unwrap();
        let y_max: f64 = tags[i + 1].1["y1"].parse().unwrap(); // the dashed line inside the group
        let g_of = |y: f64| d.brief.max_g * (y0 - y) / (y0 - y_max);
        let normal = points(&by_id(&tags, "normal-g").1["points"]);
        let peak = normal.iter().map(|p| p.1).fold(f64::MAX, f64::min);
        let v2_gr = d.brief.entry_speed_m_s.powi(2) / (G * 10.0);
        let px_g = 0.02 / ((y0 - y_max) / d.brief.max_g); // 0.01 px rounding on each reading
        assert!(
            (g_of(peak) - (1.0 + v2_gr)).abs() < px_g + 1e-6,
            "peak {}",
            g_of(peak)
        );
        let top: f64 = by_id(&tags, "top-marker").1["cy"].parse().unwrap();
        assert!(
            (g_of(top) - (v2_gr - 5.0)).abs() < px_g + 1e-6,
            "top {}",
            g_of(top)
        );
        // A planar loop has no lateral load, so no lateral series is drawn.
        assert!(!svg.contains("lateral-g"));
    }

    // Zero never prints with a sign; other values keep theirs.
    #[test]
    fn numbers_print_without_negative_zero() {
        assert_eq!(fmt_num(-0.001, 2), "0.00");
        assert_eq!(fmt_num(-0.0, 0), "0");
        assert_eq!(fmt_num(-0.5, 1), "-0.5");
        assert_eq!(fmt_num(f64::NAN, 2), "n/a");
    }

    // Wrapping must not lose or reorder words and must respect the width.
    #[test]
    fn wrap_respects_width_and_keeps_words() {
        let lines = wrap(CAUTION, 40);
        assert!(lines.len() > 3);
        assert!(lines.iter().all(|l| l.chars().count() <= 40));
        assert_eq!(
            lines.join(" "),
            CAUTION.split_whitespace().collect::<Vec<_>>().join(" ")
        );
        assert!(wrap("", 10).is_empty());
    }

    // Decimation keeps each column's extremes (a peak must survive thinning).
    #[test]
    fn decimation_keeps_peaks() {
        let pts: Vec<(f64, f64)> = (0..1000)
            .map(|i| (i as f64 / 100.0, if i == 537 { -50.0 } else { 0.0 }))
            .collect();
        let d = decimate_columns(&pts);
        assert!(d.len() < 50);
        assert!(d.contains(&(5.37, -50.0)));
        assert_eq!((d[0], *d.last().unwrap()), (pts[0], pts[999]));
    }
}
