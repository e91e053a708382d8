//! Elevation drawing (`<name>.svg`): the loop seen from the side, X to the right, Z up.
//!
//! This module owns the elevation: rail centreline and heartline at one scale on both axes, a
//! legend, a scale bar of round length, dimensions (loop height of the heartline, rail height,
//! loop footprint), the path length, a title and the caution. [`elevation_svg_many`] draws
//! several designs at one scale with their entry points on a shared origin. The world → pixel
//! mapping (one scale on both axes), text, legend, colours and the page come from the chart kit
//! ([`super::chart`]).

use svg::node::element::{Definitions, Group, Line, Marker, Path, Rectangle};

use super::chart::{
    Frame, LegendEntry, Look, Nice, caution_block, clip, colour, fmt_num, legend, nice_number,
    page, polyline, px, rule, short_num, text, wrap,
};
use super::dxf::thin_indices;
use crate::model::Assessment;

/// Width of the elevation, px.
pub const WIDTH_PX: f64 = 1000.0;
/// Tallest the drawing of the track itself may be, px.
const MAX_DRAWING_HEIGHT_PX: f64 = 600.0;
/// Margins around the track drawing, px: left, right (room for two vertical dimensions).
const LEFT_PX: f64 = 60.0;
const RIGHT_PX: f64 = 150.0;
/// Right margin when several designs are drawn (no dimensions there).
const RIGHT_MANY_PX: f64 = 40.0;
/// Most points drawn per curve; more add file size but nothing visible at this width.
const MAX_POINTS: usize = 8000;

/// World bounds (x_min, x_max, z_min, z_max) of the rail and heartline of every design, always
/// including the shared origin; a range under 1 m is widened so the scale stays finite.
fn bounds(designs: &[&Assessment]) -> (f64, f64, f64, f64) {
    let (mut x0, mut x1, mut z0, mut z1) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    for d in designs {
        for st in &d.best.path.stations {
            for p in [st.rail_m, st.heartline_m] {
                if p.x.is_finite() && p.z.is_finite() {
                    (x0, x1, z0, z1) = (x0.min(p.x), x1.max(p.x), z0.min(p.z), z1.max(p.z));
                }
            }
        }
    }
    let pad = |a: f64, b: f64| {
        if b - a < 1.0 {
            (a - (1.0 - (b - a)) / 2.0, b + (1.0 - (b - a)) / 2.0)
        } else {
            (a, b)
        }
    };
    let ((x0, x1), (z0, z1)) = (pad(x0, x1), pad(z0, z1));
    (x0, x1, z0, z1)
}

/// SVG text of the elevation of one design.
pub fn elevation_svg(design: &Assessment) -> String {
    elevation_svg_many(&[design])
}

/// SVG text of the elevations of several designs at one scale, entry points on a shared origin.
/// One design gets rail and heartline colours and its dimensions; several get one colour each
/// (heartline solid, rail dashed) and their heights in the legend.
pub fn elevation_svg_many(designs: &[&Assessment]) -> String {
    let single = designs.len() == 1;
    let mut y = 32.0;

    // Title block.
    let (title, subtitle) = match designs {
        [d] => (
            d.brief.title.clone(),
            format!(
                "{} loop, entry speed {} m/s ({} km/h). Elevation: X along the entry direction, Z up; metres.",
                d.best.label(),
                fmt_num(d.brief.entry_speed_m_s, 2),
                fmt_num(d.brief.entry_speed_m_s * 3.6, 1)
            ),
        ),
        [] => ("No design to draw".to_string(), String::new()),
        _ => (
            format!("{} designs compared", designs.len()),
            "One scale, entry points on a shared origin; heartline solid, rail centreline dashed. X along entry, Z up; metres."
                .to_string(),
        ),
    };
    let mut head = Group::new().set("id", "title");
    for line in wrap(&title, 80) {
        head = head.add(text(LEFT_PX, y, &line, 18.0, "start").set("font-weight", "bold"));
        y += 24.0;
    }
    head = head.add(text(LEFT_PX, y, &subtitle, 13.0, "start"));
    y += 30.0;

    // Drawing area and the one scale.
    let (x_min, x_max, z_min, z_max) = bounds(designs);
    let avail_w = WIDTH_PX - LEFT_PX - if single { RIGHT_PX } else { RIGHT_MANY_PX };
    let scale = (avail_w / (x_max - x_min)).min(MAX_DRAWING_HEIGHT_PX / (z_max - z_min));
    let frame = Frame::uniform(LEFT_PX, y, scale, (x_min, x_max), (z_min, z_max));
    let bottom = frame.top + frame.height;
    let right = frame.left + frame.width;

    let mut track = Group::new().set("id", "track");
    let mut entries: Vec<(String, &str, Option<&str>)> = Vec::new();
    for (i, d) in designs.iter().enumerate() {
        let st = &d.best.path.stations;
        let top = if st.is_empty() {
            0
        } else {
            d.best.path.top_index()
        };
        let keep = thin_indices(st.len(), top, MAX_POINTS);
        let curve = |f: &dyn Fn(usize) -> (f64, f64)| -> Vec<(f64, f64)> {
            keep.iter()
                .map(|&k| f(k))
                .filter(|p| p.0.is_finite() && p.1.is_finite())
                .collect()
        };
        let rail = curve(&|k| frame.to_px(st[k].rail_m.x, st[k].rail_m.z));
        let heart = curve(&|k| frame.to_px(st[k].heartline_m.x, st[k].heartline_m.z));
        let (rail_colour, heart_colour, rail_dash) = if single {
            (colour::RAIL, colour::HEARTLINE, None)
        } else {
            let c = colour::SERIES[i % colour::SERIES.len()];
            (c, c, Some("7 4"))
        };
        let rail_width = if single { 2.6 } else { 1.6 };
        track = track
            .add(polyline(&rail, rail_colour, rail_width, rail_dash).set("id", format!("rail-{i}")))
            .add(polyline(&heart, heart_colour, 2.0, None).set("id", format!("heartline-{i}")));
        if single {
            entries.push(("rail centreline".into(), rail_colour, None));
            entries.push(("heartline".into(), heart_colour, None));
        } else {
            let s = &d.best.summary;
            let label = format!(
                "{} ({}, {} m/s): loop height {} m heartline, {} m rail",
                clip(&d.brief.name, 24),
                d.best.label(),
                fmt_num(d.brief.entry_speed_m_s, 1),
                fmt_num(s.loop_height_m, 2),
                fmt_num(s.rail_height_m, 2)
            );
            entries.push((label, heart_colour, None));
        }
    }

    let mut dims = Group::new().set("id", "dimensions");
    let mut below = bottom + 16.0;
    if let [d] = designs {
        let st = &d.best.path.stations;
        let s = &d.best.summary;
        if let Some(first) = st.first() {
            let top = d.best.path.top();
            let rail_top = st
                .iter()
                .max_by(|a, b| a.rail_m.z.total_cmp(&b.rail_m.z))
                .unwrap_or(first);
            // Heartline loop height: from the heartline at entry to its top.
            let x1 = right + 28.0;
            dims = dims.add(vertical_dim(
                &frame,
                x1,
                (first.heartline_m.x, first.heartline_m.z),
                (top.heartline_m.x, top.heartline_m.z),
                &format!("loop height (heartline) {} m", fmt_num(s.loop_height_m, 2)),
                colour::HEARTLINE,
            ));
            // Rail height: from the rail at entry to the rail's highest point.
            dims = dims.add(vertical_dim(
                &frame,
                x1 + 56.0,
                (first.rail_m.x, first.rail_m.z),
                (rail_top.rail_m.x, rail_top.rail_m.z),
                &format!("rail height {} m", fmt_num(s.rail_height_m, 2)),
                colour::RAIL,
            ));
            // Footprint: the loop proper's extent along X, heartline (for a circle, whose entry
            // and exit share one X, its diameter); the entry-to-exit distance is added when it
            // differs.
            let in_loop: Vec<_> = st.iter().filter(|s| s.in_loop).collect();
            let lowest = in_loop
                .iter()
                .min_by(|a, b| a.heartline_m.x.total_cmp(&b.heartline_m.x));
            let highest = in_loop
                .iter()
                .max_by(|a, b| a.heartline_m.x.total_cmp(&b.heartline_m.x));
            if let (Some(a), Some(b)) = (lowest, highest) {
                let extent_m = b.heartline_m.x - a.heartline_m.x;
                let mut label = format!("loop footprint (heartline) {} m", fmt_num(extent_m, 2));
                if (extent_m - s.footprint_length_m).abs() >= 0.005 {
                    label.push_str(&format!(
                        "; entry to exit {} m",
                        fmt_num(s.footprint_length_m, 2)
                    ));
                }
                let (xa, _) = frame.to_px(a.heartline_m.x, 0.0);
                let (xb, _) = frame.to_px(b.heartline_m.x, 0.0);
                if (xb - xa).abs() >= 20.0 {
                    dims = dims.add(
                        horizontal_dim(
                            &frame,
                            bottom + 26.0,
                            (a.heartline_m.x, a.heartline_m.z),
                            (b.heartline_m.x, b.heartline_m.z),
                            &label,
                        )
                        .set("id", "footprint"),
                    );
                } else {
                    // A loop too narrow to dimension at this scale: say it in words.
                    dims = dims.add(
                        text(LEFT_PX, bottom + 40.0, &label, 13.0, "start").set("id", "footprint"),
                    );
                }
                below = bottom + 56.0;
            }
            dims = dims.add(marks(&frame, d));
            dims = dims.add(text(
                LEFT_PX,
                below + 10.0,
                &format!(
                    "path length in loop (heartline) {} m; heartline {} m above the rail; top radius {} m",
                    fmt_num(s.path_length_m, 2),
                    fmt_num(d.brief.heartline_height_m, 2),
                    fmt_num(d.best.top_radius_m, 2)
                ),
                13.0,
                "start",
            ));
            below += 26.0;
        }
    }

    // Scale bar of a round length near a fifth of the drawing's width.
    let bar_y = below + 18.0;
    let (bar, bar_w) = scale_bar(LEFT_PX, bar_y, scale, (x_max - x_min) / 5.0);
    let legend_x = (LEFT_PX + bar_w + 60.0).max(LEFT_PX + 260.0);
    let legend_entries: Vec<LegendEntry> = entries
        .iter()
        .map(|(l, c, d)| (l.as_str(), *c, *d))
        .collect();
    let legend_end = bar_y + 20.0 * legend_entries.len() as f64;
    let caution_y = legend_end.max(bar_y + 34.0) + 22.0;
    let (caution, last) = caution_block(Look::Drawing, LEFT_PX, caution_y, 130);
    let height = (last + 20.0).ceil();

    page(WIDTH_PX, height, Some(arrow_defs()))
        .add(head)
        .add(track)
        .add(dims)
        .add(bar)
        .add(legend(Look::Drawing, legend_x, bar_y, &legend_entries))
        .add(caution)
        .to_string()
}

/// What the elevation marks on the loop itself: the direction of travel (an arrow over the entry
/// lead), the top radius (from the heartline's top down to its centre of curvature) and the point
/// of peak normal load (a dot on the heartline with its value).
fn marks(frame: &Frame, d: &Assessment) -> Group {
    let st = &d.best.path.stations;
    let s = &d.best.summary;
    let mut g = Group::new().set("id", "marks");
    let (Some(first), Some(entry)) = (st.first(), st.iter().find(|s| s.in_loop)) else {
        return g;
    };
    // Direction of travel: along +X from the start of the lead to the loop entry, 14 px above it.
    let (x0, y0) = frame.to_px(first.heartline_m.x, first.heartline_m.z);
    let (x1, _) = frame.to_px(entry.heartline_m.x, entry.heartline_m.z);
    let (x0, x1) = (x0, x1.max(x0 + 30.0));
    g = g
        .add(
            dim_line(x0, y0 - 14.0, x1, y0 - 14.0, colour::INK, 1.4)
                .set("marker-end", "url(#arrow)")
                .set("id", "travel-arrow"),
        )
        .add(text(x0, y0 - 20.0, "direction of travel", 11.0, "start"));
    // Top radius: the top's centre of curvature lies R below it (the track is level there).
    let top = d.best.path.top();
    let r = d.best.top_radius_m;
    if r.is_finite() && r > 0.0 {
        let (tx, ty) = frame.to_px(top.heartline_m.x, top.heartline_m.z);
        let (_, cy) = frame.to_px(top.heartline_m.x, top.heartline_m.z - r);
        g = g
            .add(
                dim_line(tx, cy, tx, ty, colour::INK, 1.0)
                    .set("marker-end", "url(#arrow)")
                    .set("id", "top-radius"),
            )
            .add(crate::export::chart::dot(tx, cy, 2.5, colour::INK))
            .add(text(
                tx + 6.0,
                (cy + ty) / 2.0,
                &format!("top radius {} m", fmt_num(r, 2)),
                12.0,
                "start",
            ));
    }
    // Peak normal load: where the worst car feels it.
    let peak = st.iter().min_by(|a, b| {
        (a.s_m - s.peak_normal_s_m)
            .abs()
            .total_cmp(&(b.s_m - s.peak_normal_s_m).abs())
    });
    if let Some(p) = peak
        && s.peak_normal_g.is_finite()
    {
        let (px_, py_) = frame.to_px(p.heartline_m.x, p.heartline_m.z);
        g = g
            .add(
                crate::export::chart::dot(px_, py_, 4.5, colour::LIMIT)
                    .set("id", "peak-load")
                    .set("data-s-m", fmt_num(p.s_m, 2)),
            )
            .add(
                text(
                    px_ - 8.0,
                    py_ - 8.0,
                    &format!("peak {} g", fmt_num(s.peak_normal_g, 2)),
                    12.0,
                    "end",
                )
                .set("fill", colour::LIMIT),
            );
    }
    g
}

/// An arrowhead marker, reversed at the start of a line (SVG 2 `auto-start-reverse`).
fn arrow_defs() -> Definitions {
    Definitions::new().add(
        Marker::new()
            .set("id", "arrow")
            .set("viewBox", "0 0 10 10")
            .set("refX", 10)
            .set("refY", 5)
            .set("markerWidth", 7)
            .set("markerHeight", 7)
            .set("orient", "auto-start-reverse")
            .add(
                Path::new()
                    .set("d", "M0,1 L10,5 L0,9 z")
                    .set("fill", colour::INK),
            ),
    )
}

/// A line of a dimension: `width_px` wide in `stroke`.
fn dim_line(x1: f64, y1: f64, x2: f64, y2: f64, stroke: &str, width_px: f64) -> Line {
    rule(x1, y1, x2, y2, stroke).set("stroke-width", width_px)
}

/// A vertical dimension at pixel x `x_px` between world points `a` and `b`, with extension lines
/// from the points and the label written along the dimension line.
fn vertical_dim(
    frame: &Frame,
    x_px: f64,
    a: (f64, f64),
    b: (f64, f64),
    label: &str,
    ext: &str,
) -> Group {
    let (ax, ay) = frame.to_px(a.0, a.1);
    let (bx, by) = frame.to_px(b.0, b.1);
    // Too short to hold arrows and a label (e.g. a degenerate path): leave it out.
    let len = (ay - by).abs();
    if len.is_nan() || len < 20.0 {
        return Group::new();
    }
    let mid = (ay + by) / 2.0;
    let lx = x_px + 14.0;
    Group::new()
        .add(dim_line(ax + 3.0, ay, x_px + 6.0, ay, ext, 0.8).set("stroke-dasharray", "3 3"))
        .add(dim_line(bx + 3.0, by, x_px + 6.0, by, ext, 0.8).set("stroke-dasharray", "3 3"))
        .add(
            dim_line(x_px, ay, x_px, by, colour::INK, 1.1)
                .set("marker-start", "url(#arrow)")
                .set("marker-end", "url(#arrow)"),
        )
        .add(
            text(lx, mid, label, 12.5, "middle")
                .set("transform", format!("rotate(-90 {} {})", px(lx), px(mid))),
        )
}

/// A horizontal dimension at pixel y `y_px` between world points `a` and `b`, label below.
fn horizontal_dim(frame: &Frame, y_px: f64, a: (f64, f64), b: (f64, f64), label: &str) -> Group {
    let (ax, ay) = frame.to_px(a.0, a.1);
    let (bx, by) = frame.to_px(b.0, b.1);
    Group::new()
        .add(
            dim_line(ax, ay + 3.0, ax, y_px + 6.0, colour::HEARTLINE, 0.8)
                .set("stroke-dasharray", "3 3"),
        )
        .add(
            dim_line(bx, by + 3.0, bx, y_px + 6.0, colour::HEARTLINE, 0.8)
                .set("stroke-dasharray", "3 3"),
        )
        .add(
            dim_line(ax, y_px, bx, y_px, colour::INK, 1.1)
                .set("marker-start", "url(#arrow)")
                .set("marker-end", "url(#arrow)"),
        )
        .add(text((ax + bx) / 2.0, y_px + 17.0, label, 12.5, "middle"))
}

/// A scale bar at (x, y) px of a round length near `target_m`, in two halves; returns the group
/// and its width in px.
fn scale_bar(x: f64, y: f64, scale_px_m: f64, target_m: f64) -> (Group, f64) {
    let len_m = nice_number(target_m, Nice::Round);
    let w = len_m * scale_px_m;
    let half = w / 2.0;
    let label = format!("{} m", short_num(len_m));
    let g = Group::new()
        .set("id", "scale-bar")
        .add(
            Rectangle::new()
                .set("id", "scale-bar-frame")
                .set("x", px(x))
                .set("y", px(y - 4.0))
                .set("width", px(w))
                .set("height", 8)
                .set("fill", "white")
                .set("stroke", colour::INK)
                .set("stroke-width", 1),
        )
        .add(
            Rectangle::new()
                .set("x", px(x))
                .set("y", px(y - 4.0))
                .set("width", px(half))
                .set("height", 8)
                .set("fill", colour::INK),
        )
        .add(text(x, y + 20.0, "0", 12.0, "middle"))
        .add(text(
            x + half,
            y + 20.0,
            &short_num(len_m / 2.0),
            12.0,
            "middle",
        ))
        .add(text(x + w, y + 20.0, &label, 12.0, "middle").set("id", "scale-bar-label"))
        .add(text(x + w + 26.0, y + 4.0, "scale", 12.0, "start").set("fill", colour::MUTED));
    (g, w)
}

#[cfg(test)]
pub(crate) mod tests;
