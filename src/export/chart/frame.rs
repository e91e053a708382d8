//! The plotting frame: a rectangle of the page, the data ranges it shows and how data maps to
//! its pixels, its ticks, grid and axes, and the lines drawn in it.

use svg::node::element::path::Data;
use svg::node::element::{Group, Line, Path, Polyline, Rectangle};

use super::text::{bare_text, sheet_font, text};
use super::ticks::Ticks;
use super::{Look, colour, polyline, px, rule};

/// A plot area mapping data (x, y) to pixels; SVG y grows downwards, data y upwards.
#[derive(Debug, Clone, PartialEq)]
pub struct Frame {
    /// Plot area, px: left, top, width, height.
    pub left: f64,
    pub top: f64,
    pub width: f64,
    pub height: f64,
    /// Data shown, (min, max); x min is at the left edge, y max at the top edge.
    pub x_range: (f64, f64),
    pub y_range: (f64, f64),
    /// Ticks drawn by [`Frame::grid`] and [`Frame::axes`] (none unless given).
    pub x_ticks: Ticks,
    pub y_ticks: Ticks,
    /// `Some(k)`: one scale of k px per data unit on both axes (drawings in metres); `None`: each
    /// axis stretched over the area.
    px_per_unit: Option<f64>,
}

impl Frame {
    /// The area (left, top, width, height) px showing `x` and `y` (data ranges, min and max),
    /// each axis stretched to fill it; no ticks.
    pub fn new(area: (f64, f64, f64, f64), x: (f64, f64), y: (f64, f64)) -> Frame {
        Frame {
            left: area.0,
            top: area.1,
            width: area.2.max(1.0),
            height: area.3.max(1.0),
            x_range: x,
            y_range: y,
            x_ticks: Ticks::default(),
            y_ticks: Ticks::default(),
            px_per_unit: None,
        }
    }

    /// A frame with about `nx` and `ny` loose ticks ([`Ticks::loose`]) showing at least `x` and
    /// `y`: each range is widened to its outermost ticks, so the frame starts and ends on a
    /// labelled value.
    pub fn with_loose_ticks(
        area: (f64, f64, f64, f64),
        x: (f64, f64),
        y: (f64, f64),
        nx: usize,
        ny: usize,
    ) -> Frame {
        let (x_ticks, y_ticks) = (Ticks::loose(x.0, x.1, nx), Ticks::loose(y.0, y.1, ny));
        Frame::new(area, x_ticks.range(), y_ticks.range()).ticks(x_ticks, y_ticks)
    }

    /// One scale on both axes: `px_per_unit` pixels per data unit, the ranges' top-left corner
    /// (x min, y max) at pixel (`left`, `top`); the area is as large as the ranges need.
    pub fn uniform(left: f64, top: f64, px_per_unit: f64, x: (f64, f64), y: (f64, f64)) -> Frame {
        Frame {
            width: (x.1 - x.0) * px_per_unit,
            height: (y.1 - y.0) * px_per_unit,
            px_per_unit: Some(px_per_unit),
            ..Frame::new((left, top, 0.0, 0.0), x, y)
        }
    }

    /// The frame with these ticks.
    pub fn ticks(self, x_ticks: Ticks, y_ticks: Ticks) -> Frame {
        Frame {
            x_ticks,
            y_ticks,
            ..self
        }
    }

    /// Pixel x of data x.
    pub fn x_px(&self, x: f64) -> f64 {
        let (a, b) = self.x_range;
        match self.px_per_unit {
            Some(k) => self.left + (x - a) * k,
            None => self.left + (x - a) / (b - a) * self.width,
        }
    }

    /// Pixel y of data y.
    pub fn y_px(&self, y: f64) -> f64 {
        let (a, b) = self.y_range;
        match self.px_per_unit {
            Some(k) => self.top + (b - y) * k,
            None => self.top + (b - y) / (b - a) * self.height,
        }
    }

    /// Pixel (x, y) of data (x, y).
    pub fn to_px(&self, x: f64, y: f64) -> (f64, f64) {
        (self.x_px(x), self.y_px(y))
    }

    /// Grid lines at every tick (drawing look; the sheet look draws them with [`Frame::axes`]).
    pub fn grid(&self) -> Group {
        let mut g = Group::new()
            .set("id", "grid")
            .set("stroke", colour::GRID)
            .set("stroke-width", 1);
        let (right, bottom) = (self.left + self.width, self.top + self.height);
        for &t in &self.x_ticks.values {
            let x = px(self.x_px(t));
            g = g.add(
                Line::new()
                    .set("x1", x)
                    .set("y1", px(self.top))
                    .set("x2", x)
                    .set("y2", px(bottom)),
            );
        }
        for &t in &self.y_ticks.values {
            let y = px(self.y_px(t));
            g = g.add(
                Line::new()
                    .set("x1", px(self.left))
                    .set("y1", y)
                    .set("x2", px(right))
                    .set("y2", y),
            );
        }
        g
    }

    /// Outline, tick labels and axis titles. Drawing look: ink outline with 5 px tick marks,
    /// labels in [`super::FONT`]. Sheet look: grey outline, a grid line per tick and labels
    /// inheriting the group's font.
    pub fn axes(&self, look: Look, x_title: &str, y_title: &str) -> Group {
        let (l, t, w, h) = (self.left, self.top, self.width, self.height);
        let bottom = t + h;
        let outline = Rectangle::new()
            .set("x", px(l))
            .set("y", px(t))
            .set("width", px(w))
            .set("height", px(h))
            .set("fill", "none");
        let mut g = match look {
            Look::Drawing => Group::new()
                .set("id", "axes")
                .add(outline.set("stroke", colour::INK).set("stroke-width", 1.2)),
            Look::Sheet => {
                sheet_font(Group::new(), 12.0).add(outline.set("stroke", colour::SHEET_FRAME))
            }
        };
        // Label and title offsets of each look, px: x labels below, y labels left, x title
        // below, y title left.
        let (x_label_dy, y_label_dx, x_title_dy, y_title_dx) = match look {
            Look::Drawing => (19.0, 8.0, 40.0, 48.0),
            Look::Sheet => (16.0, 6.0, 36.0, 50.0),
        };
        for &v in &self.x_ticks.values {
            let x = self.x_px(v);
            let label = self.x_ticks.label(v);
            g = match look {
                Look::Drawing => g.add(tick_mark(x, bottom, x, bottom + 5.0)).add(text(
                    x,
                    bottom + x_label_dy,
                    &label,
                    12.0,
                    "middle",
                )),
                Look::Sheet => g
                    .add(rule(x, t, x, bottom, colour::SHEET_GRID))
                    .add(bare_text(x, bottom + x_label_dy, &label).set("text-anchor", "middle")),
            };
        }
        for &v in &self.y_ticks.values {
            let y = self.y_px(v);
            let label = self.y_ticks.label(v);
            g = match look {
                Look::Drawing => g.add(tick_mark(l - 5.0, y, l, y)).add(text(
                    l - y_label_dx,
                    y + 4.0,
                    &label,
                    12.0,
                    "end",
                )),
                // The label sits 4 px below the rounded grid line.
                Look::Sheet => g
                    .add(rule(l, y, l + w, y, colour::SHEET_GRID))
                    .add(bare_text(l - y_label_dx, px(y) + 4.0, &label).set("text-anchor", "end")),
            };
        }
        let (x_title, y_title) = match look {
            Look::Drawing => (
                text(l + w / 2.0, bottom + x_title_dy, x_title, 13.0, "middle"),
                text(l - y_title_dx, t + h / 2.0, y_title, 13.0, "middle"),
            ),
            Look::Sheet => (
                bare_text(l + w / 2.0, bottom + x_title_dy, x_title).set("text-anchor", "middle"),
                bare_text(l - y_title_dx, t + h / 2.0, y_title).set("text-anchor", "middle"),
            ),
        };
        g.add(x_title).add(y_title.set(
            "transform",
            format!("rotate(-90 {} {})", px(l - y_title_dx), px(t + h / 2.0)),
        ))
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
            .map(|&(x, y)| self.to_px(x, y))
            .collect();
        let pts = if pts.len() > 4 * self.width as usize {
            decimate_columns(&pts)
        } else {
            pts
        };
        polyline(&pts, stroke, width_px, dash)
    }

    /// A `<path>` through data points, `None` lifting the pen (a gap in the line). The dash is
    /// always written ("none" when solid), as on the study sheets.
    pub fn path(
        &self,
        pts: impl IntoIterator<Item = Option<(f64, f64)>>,
        stroke: &str,
        dash: &str,
        width_px: f64,
    ) -> Path {
        let mut data = Data::new();
        let mut pen_down = false;
        for p in pts {
            match p {
                Some((x, y)) => {
                    let at = (px(self.x_px(x)), px(self.y_px(y)));
                    data = if pen_down {
                        data.line_to(at)
                    } else {
                        data.move_to(at)
                    };
                    pen_down = true;
                }
                None => pen_down = false,
            }
        }
        Path::new()
            .set("d", data)
            .set("fill", "none")
            .set("stroke", stroke)
            .set("stroke-width", width_px)
            .set("stroke-dasharray", dash)
            .set("stroke-linejoin", "round")
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
            self.x_px(x0).max(self.left),
            self.x_px(x1).min(self.left + self.width),
        );
        // Entirely outside the frame (or empty): draw nothing rather than a line off the chart.
        if (b - a).is_nan() || b <= a {
            return Group::new();
        }
        let yy = self.y_px(y);
        let label = if beside {
            text(b + 6.0, yy + 4.0, label, 12.0, "start")
        } else {
            text(b - 4.0, yy - 6.0, label, 12.0, "end")
        };
        Group::new()
            .add(
                rule(a, yy, b, yy, stroke)
                    .set("stroke-width", 1.8)
                    .set("stroke-dasharray", "8 5"),
            )
            .add(label.set("fill", stroke))
    }

    /// A full-height band between data x0 and x1 (e.g. the loop proper).
    pub fn band_x(&self, x0: f64, x1: f64, fill: &str) -> Rectangle {
        let a = self
            .x_px(x0.min(x1))
            .clamp(self.left, self.left + self.width);
        let b = self
            .x_px(x0.max(x1))
            .clamp(self.left, self.left + self.width);
        Rectangle::new()
            .set("x", px(a))
            .set("y", px(self.top))
            .set("width", px(b - a))
            .set("height", px(self.height))
            .set("fill", fill)
    }
}

/// An ink tick mark of the drawing look.
fn tick_mark(x1: f64, y1: f64, x2: f64, y2: f64) -> Line {
    rule(x1, y1, x2, y2, colour::INK).set("stroke-width", 1)
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

#[cfg(test)]
mod tests {
    use super::*;

    // The mapping must send the range ends to the frame edges, y flipped (SVG y grows downwards).
    #[test]
    fn frame_maps_range_to_area() {
        let c = Frame::with_loose_ticks((10.0, 20.0, 100.0, 50.0), (0.0, 10.0), (-1.0, 4.0), 5, 5);
        assert_eq!((c.x_px(c.x_range.0), c.x_px(c.x_range.1)), (10.0, 110.0));
        assert_eq!((c.y_px(c.y_range.0), c.y_px(c.y_range.1)), (70.0, 20.0));
    }

    // One scale on both axes: 4 px per unit, so 10 units are 40 px either way.
    #[test]
    fn uniform_frame_keeps_one_scale() {
        let f = Frame::uniform(10.0, 20.0, 4.0, (-5.0, 5.0), (0.0, 10.0));
        assert_eq!((f.width, f.height), (40.0, 40.0));
        assert_eq!(f.to_px(-5.0, 10.0), (10.0, 20.0));
        assert_eq!(f.to_px(5.0, 0.0), (50.0, 60.0));
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
