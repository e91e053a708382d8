//! Overlay drawings for studies: the compare elevations and loads of every family on one sheet,
//! and the sweep summary (achievable loop height against entry speed).
//!
//! Self-contained on the `svg` crate: a small [`Frame`] maps data to the sheet, draws axes with
//! round-number ticks and a legend. Elevations are drawn at one scale on both axes (metres are
//! metres in X and Z) with the origin at the loop entry of the heartline, shared by every family.
//! Every sheet carries [`CAUTION`].

use svg::Document;
use svg::node::element::path::Data;
use svg::node::element::{Circle, Group, Line, Path, Rectangle, Text};

use crate::brief::{Objective, ShapeKind};
use crate::compare::Comparison;
use crate::report::CAUTION;
use crate::sweep::SweepRow;

/// Sheet size, px.
const WIDTH: f64 = 960.0;
const HEIGHT: f64 = 640.0;
/// Plot area margins: left, right, top, bottom, px.
const MARGIN: (f64, f64, f64, f64) = (70.0, 230.0, 50.0, 90.0);

/// The line colour of a family (our own palette; later families cycle through the spare ones).
pub fn family_colour(kind: ShapeKind) -> &'static str {
    const SPARE: [&str; 3] = ["#7a4fa3", "#b58a1f", "#1f8f8f"];
    match kind {
        ShapeKind::Circle => "#b5462f",
        ShapeKind::Clothoid => "#2f6db5",
        ShapeKind::Spline => "#3a8a3a",
        #[allow(unreachable_patterns)]
        other => SPARE[ShapeKind::ALL.iter().position(|k| *k == other).unwrap_or(0) % SPARE.len()],
    }
}

/// Dash patterns told apart in print, for curves of the same colour.
const DASHES: [&str; 4] = ["none", "8 4", "2 3", "10 3 2 3"];

/// Round a pixel coordinate so files stay short and stable.
fn px(v: f64) -> f32 {
    ((v * 100.0).round() / 100.0) as f32
}

/// A round tick step giving about `target` intervals over `span`.
fn tick_step(span: f64, target: f64) -> f64 {
    let raw = (span / target).max(1e-9);
    let mag = 10f64.powf(raw.log10().floor());
    let unit = raw / mag;
    mag * if unit < 1.5 {
        1.0
    } else if unit < 3.5 {
        2.0
    } else if unit < 7.5 {
        5.0
    } else {
        10.0
    }
}

fn tick_label(v: f64, step: f64) -> String {
    let decimals = if step >= 1.0 {
        0
    } else {
        (-step.log10().floor()) as usize
    };
    let s = format!("{v:.decimals$}");
    if s.starts_with('-') && s[1..].bytes().all(|b| b == b'0' || b == b'.') {
        s[1..].to_string()
    } else {
        s
    }
}

/// Data ranges mapped to the plot area.
pub struct Frame {
    x: (f64, f64),
    y: (f64, f64),
    area: (f64, f64, f64, f64), // left, top, width, height
}

impl Frame {
    /// A frame showing `x` and `y` (padded a little); with `equal` one metre is as long on both axes.
    pub fn new(x: (f64, f64), y: (f64, f64), equal: bool) -> Frame {
        let pad = |(a, b): (f64, f64)| {
            let span = (b - a).abs().max(1e-6);
            (a - 0.05 * span, b + 0.05 * span)
        };
        let (mut x, mut y) = (pad(x), pad(y));
        let area = (
            MARGIN.0,
            MARGIN.2,
            WIDTH - MARGIN.0 - MARGIN.1,
            HEIGHT - MARGIN.2 - MARGIN.3,
        );
        if equal {
            let scale = (area.2 / (x.1 - x.0)).min(area.3 / (y.1 - y.0));
            let grow = |(a, b): (f64, f64), len: f64| {
                let extra = len / scale - (b - a);
                (a - extra / 2.0, b + extra / 2.0)
            };
            x = grow(x, area.2);
            y = grow(y, area.3);
        }
        Frame { x, y, area }
    }
    fn sx(&self, v: f64) -> f64 {
        self.area.0 + (v - self.x.0) / (self.x.1 - self.x.0) * self.area.2
    }
    fn sy(&self, v: f64) -> f64 {
        self.area.1 + (self.y.1 - v) / (self.y.1 - self.y.0) * self.area.3
    }

    /// A polyline through data points; `None` breaks the line.
    fn polyline(
        &self,
        pts: impl IntoIterator<Item = Option<(f64, f64)>>,
        colour: &str,
        dash: &str,
        width: f64,
    ) -> Path {
        let mut data = Data::new();
        let mut pen_down = false;
        for p in pts {
            match p {
                Some((x, y)) => {
                    let at = (px(self.sx(x)), px(self.sy(y)));
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
            .set("stroke", colour)
            .set("stroke-width", width)
            .set("stroke-dasharray", dash)
            .set("stroke-linejoin", "round")
    }

    /// Axes, grid lines and tick labels.
    fn axes(&self, x_label: &str, y_label: &str) -> Group {
        let (l, t, w, h) = self.area;
        let mut g = Group::new()
            .set("font-family", "sans-serif")
            .set("font-size", 12);
        g = g.add(
            Rectangle::new()
                .set("x", px(l))
                .set("y", px(t))
                .set("width", px(w))
                .set("height", px(h))
                .set("fill", "none")
                .set("stroke", "#444"),
        );
        let xs = tick_step(self.x.1 - self.x.0, w / 80.0);
        let mut v = (self.x.0 / xs).ceil() * xs;
        while v <= self.x.1 {
            let x = px(self.sx(v));
            g = g.add(
                Line::new()
                    .set("x1", x)
                    .set("x2", x)
                    .set("y1", px(t))
                    .set("y2", px(t + h))
                    .set("stroke", "#ddd"),
            );
            g = g.add(
                Text::new(tick_label(v, xs))
                    .set("x", x)
                    .set("y", px(t + h + 16.0))
                    .set("text-anchor", "middle"),
            );
            v += xs;
        }
        let ys = tick_step(self.y.1 - self.y.0, h / 60.0);
        let mut v = (self.y.0 / ys).ceil() * ys;
        while v <= self.y.1 {
            let y = px(self.sy(v));
            g = g.add(
                Line::new()
                    .set("x1", px(l))
                    .set("x2", px(l + w))
                    .set("y1", y)
                    .set("y2", y)
                    .set("stroke", "#ddd"),
            );
            g = g.add(
                Text::new(tick_label(v, ys))
                    .set("x", px(l - 6.0))
                    .set("y", px(y as f64 + 4.0))
                    .set("text-anchor", "end"),
            );
            v += ys;
        }
        g = g.add(
            Text::new(x_label)
                .set("x", px(l + w / 2.0))
                .set("y", px(t + h + 36.0))
                .set("text-anchor", "middle"),
        );
        g.add(
            Text::new(y_label)
                .set("x", px(l - 50.0))
                .set("y", px(t + h / 2.0))
                .set("text-anchor", "middle")
                .set(
                    "transform",
                    format!("rotate(-90 {} {})", px(l - 50.0), px(t + h / 2.0)),
                ),
        )
    }
}

/// One legend line: a sample stroke and a label.
struct LegendItem {
    colour: String,
    dash: &'static str,
    label: String,
}

fn legend(items: &[LegendItem], notes: &[String]) -> Group {
    let x = WIDTH - MARGIN.1 + 16.0;
    let mut g = Group::new()
        .set("font-family", "sans-serif")
        .set("font-size", 12);
    let mut y = MARGIN.2 + 10.0;
    for it in items {
        g = g.add(
            Line::new()
                .set("x1", px(x))
                .set("x2", px(x + 28.0))
                .set("y1", px(y))
                .set("y2", px(y))
                .set("stroke", it.colour.as_str())
                .set("stroke-width", 2.5)
                .set("stroke-dasharray", it.dash),
        );
        g = g.add(
            Text::new(it.label.as_str())
                .set("x", px(x + 34.0))
                .set("y", px(y + 4.0)),
        );
        y += 20.0;
    }
    for n in notes {
        y += 4.0;
        for line in wrap(n, 30) {
            g = g.add(
                Text::new(line)
                    .set("x", px(x))
                    .set("y", px(y + 4.0))
                    .set("fill", "#555"),
            );
            y += 15.0;
        }
    }
    g
}

/// Break text into lines of at most `width` characters at spaces.
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = vec![String::new()];
    for word in text.split_whitespace() {
        let last = lines.last_mut().expect("one line");
        if !last.is_empty() && last.len() + 1 + word.len() > width {
            lines.push(word.to_string());
        } else {
            if !last.is_empty() {
                last.push(' ');
            }
            last.push_str(word);
        }
    }
    lines
}

/// A sheet with a title, the caution at the foot and the given content.
fn sheet(title: &str, subtitle: &str, content: Vec<Group>) -> String {
    let mut doc = Document::new()
        .set("xmlns", "http://www.w3.org/2000/svg")
        .set("viewBox", (0, 0, WIDTH as i32, HEIGHT as i32))
        .set("width", WIDTH as i32)
        .set("height", HEIGHT as i32)
        .add(
            Rectangle::new()
                .set("width", "100%")
                .set("height", "100%")
                .set("fill", "white"),
        )
        .add(
            Text::new(title)
                .set("x", MARGIN.0)
                .set("y", 24)
                .set("font-family", "sans-serif")
                .set("font-size", 16)
                .set("font-weight", "bold"),
        )
        .add(
            Text::new(subtitle)
                .set("x", MARGIN.0)
                .set("y", 42)
                .set("font-family", "sans-serif")
                .set("font-size", 12),
        );
    for c in content {
        doc = doc.add(c);
    }
    let mut foot = Group::new()
        .set("font-family", "sans-serif")
        .set("font-size", 10)
        .set("fill", "#a00");
    for (i, line) in wrap(CAUTION, 150).into_iter().enumerate() {
        foot = foot.add(
            Text::new(line)
                .set("x", 12)
                .set("y", px(HEIGHT - 30.0 + 12.0 * i as f64)),
        );
    }
    doc = doc.add(foot);
    let mut s = doc.to_string();
    s.push('\n');
    s
}

fn infeasible_notes(c: &Comparison) -> Vec<String> {
    c.entries
        .iter()
        .filter(|e| e.result.is_err())
        .map(|e| {
            format!(
                "{}: infeasible, not drawn (reason in the compare table)",
                e.kind
            )
        })
        .collect()
}

/// Every family's heartline elevation on one sheet, one scale on both axes, origin at loop entry.
pub fn elevation_overlay_svg(c: &Comparison) -> String {
    let mut curves = Vec::new();
    let (mut xr, mut zr) = ((0.0f64, 0.0f64), (0.0f64, 0.0f64));
    for e in &c.entries {
        let Ok(d) = &e.result else { continue };
        let st = &d.best.path.stations;
        let entry = st.iter().find(|s| s.in_loop).unwrap_or(&st[0]).heartline_m;
        let pts: Vec<(f64, f64)> = st
            .iter()
            .map(|s| (s.heartline_m.x - entry.x, s.heartline_m.z - entry.z))
            .collect();
        for &(x, z) in &pts {
            xr = (xr.0.min(x), xr.1.max(x));
            zr = (zr.0.min(z), zr.1.max(z));
        }
        curves.push((e.kind, d.best.summary.loop_height_m, pts));
    }
    let frame = Frame::new(xr, zr, true);
    let (mut plot, items) =
        family_curves(&frame, &curves, |kind, h| format!("{kind}: {h:.2} m tall"));
    plot = plot.add(
        Circle::new()
            .set("cx", px(frame.sx(0.0)))
            .set("cy", px(frame.sy(0.0)))
            .set("r", 4)
            .set("fill", "black"),
    );
    let axes = frame.axes(
        "X along the entry direction, m (0 = loop entry)",
        "Z (height above entry), m",
    );
    let subtitle = format!(
        "heartline elevations, same scale, shared origin at loop entry (dot); entry speed {:.2} m/s",
        c.brief.entry_speed_m_s
    );
    let mut notes = infeasible_notes(c);
    notes.push(format!(
        "{} m of level lead track drawn each side",
        c.brief.lead_length_m
    ));
    sheet(
        &format!("{}: compare elevations", c.brief.title),
        &subtitle,
        vec![axes, plot, legend(&items, &notes)],
    )
}

/// A family's curve for an overlay: the family, the figure its legend quotes, and the points.
type FamilyCurve = (ShapeKind, f64, Vec<(f64, f64)>);

/// One solid curve per family in its colour, and the legend entries labelled by `label(kind, figure)`.
fn family_curves(
    frame: &Frame,
    curves: &[FamilyCurve],
    label: impl Fn(ShapeKind, f64) -> String,
) -> (Group, Vec<LegendItem>) {
    let mut plot = Group::new();
    let mut items = Vec::new();
    for (kind, figure, pts) in curves {
        plot = plot.add(frame.polyline(
            pts.iter().map(|p| Some(*p)),
            family_colour(*kind),
            "none",
            2.0,
        ));
        items.push(LegendItem {
            colour: family_colour(*kind).into(),
            dash: "none",
            label: label(*kind, *figure),
        });
    }
    (plot, items)
}

/// Every family's normal load against arc length from loop entry, with the brief's limits.
pub fn loads_overlay_svg(c: &Comparison) -> String {
    let b = &c.brief;
    let mut curves = Vec::new();
    let (mut sr, mut gr) = ((0.0f64, 1.0f64), (b.min_top_g.min(0.0), b.max_g));
    for e in &c.entries {
        let Ok(d) = &e.result else { continue };
        let s0 = d.best.path.loop_span_m.0;
        let pts: Vec<(f64, f64)> = d
            .best
            .ride
            .points
            .iter()
            .map(|p| (p.s_m - s0, p.normal_g))
            .collect();
        for &(s, g) in &pts {
            sr = (sr.0.min(s), sr.1.max(s));
            gr = (gr.0.min(g), gr.1.max(g));
        }
        curves.push((e.kind, d.best.summary.peak_normal_g, pts));
    }
    let frame = Frame::new(sr, gr, false);
    let (mut plot, mut items) = family_curves(&frame, &curves, |kind, peak| {
        format!("{kind}: peak {peak:.2} g")
    });
    let limit = |g: f64, dash: &'static str| {
        frame.polyline([Some((sr.0, g)), Some((sr.1, g))], "#a00", dash, 1.5)
    };
    plot = plot
        .add(limit(b.max_g, "8 4"))
        .add(limit(b.min_top_g, "2 3"));
    items.push(LegendItem {
        colour: "#a00".into(),
        dash: "8 4",
        label: format!("max_g {:.2} g", b.max_g),
    });
    items.push(LegendItem {
        colour: "#a00".into(),
        dash: "2 3",
        label: format!("min_top_g {:.2} g (at top)", b.min_top_g),
    });
    let axes = frame.axes("heartline arc length from loop entry, m", "normal load, g");
    let mut notes = infeasible_notes(c);
    notes.push("a vertical jump marks a curvature step: its onset is unbounded".into());
    let subtitle = format!(
        "normal load along the heartline; entry speed {:.2} m/s; limits illustrative",
        b.entry_speed_m_s
    );
    sheet(
        &format!("{}: compare loads", b.title),
        &subtitle,
        vec![axes, plot, legend(&items, &notes)],
    )
}

/// The sweep summary: achievable loop height (tallest objective) or peak normal load (target
/// height) against entry speed, one curve per family, max g and min top g. Infeasible designs
/// break their curve.
pub fn sweep_summary_svg(rows: &[SweepRow], title: &str, objective: Objective) -> String {
    let tallest = matches!(objective, Objective::Tallest);
    let value = |r: &SweepRow| {
        r.result.as_ref().ok().map(|f| {
            if tallest {
                f.loop_height_m
            } else {
                f.peak_normal_g
            }
        })
    };
    // Curves keyed by (family, max g, min top g) in first-seen (grid) order.
    let mut keys: Vec<(ShapeKind, f64, f64)> = Vec::new();
    for r in rows {
        let k = (r.point.kind, r.point.max_g, r.point.min_top_g);
        if !keys.contains(&k) {
            keys.push(k);
        }
    }
    let mut max_gs: Vec<f64> = keys.iter().map(|k| k.1).collect();
    max_gs.dedup();
    max_gs.sort_by(f64::total_cmp);
    max_gs.dedup();
    let (mut xr, mut yr) = ((f64::MAX, f64::MIN), (0.0f64, f64::MIN));
    for r in rows {
        xr = (
            xr.0.min(r.point.entry_speed_m_s),
            xr.1.max(r.point.entry_speed_m_s),
        );
        if let Some(v) = value(r) {
            yr = (yr.0.min(v), yr.1.max(v));
        }
    }
    if rows.is_empty() {
        xr = (0.0, 1.0);
    }
    if yr.1 < yr.0 {
        yr = (0.0, 1.0);
    }
    let frame = Frame::new(xr, yr, false);
    let mut plot = Group::new();
    let mut items = Vec::new();
    let many_tops = keys.iter().any(|k| k.2 != keys[0].2);
    for (i, key) in keys.iter().enumerate() {
        let mut pts: Vec<&SweepRow> = rows
            .iter()
            .filter(|r| (r.point.kind, r.point.max_g, r.point.min_top_g) == *key)
            .collect();
        pts.sort_by(|a, b| a.point.entry_speed_m_s.total_cmp(&b.point.entry_speed_m_s));
        let colour = family_colour(key.0);
        let g_index = max_gs.iter().position(|g| *g == key.1).unwrap_or(0);
        let dash = DASHES[g_index % DASHES.len()];
        let width = if many_tops {
            1.2 + 1.2 * ((i % 3) as f64)
        } else {
            2.0
        };
        plot = plot.add(
            frame.polyline(
                pts.iter()
                    .map(|r| value(r).map(|v| (r.point.entry_speed_m_s, v))),
                colour,
                dash,
                width,
            ),
        );
        for r in &pts {
            if let Some(v) = value(r) {
                plot = plot.add(
                    Circle::new()
                        .set("cx", px(frame.sx(r.point.entry_speed_m_s)))
                        .set("cy", px(frame.sy(v)))
                        .set("r", 2.5)
                        .set("fill", colour),
                );
            }
        }
        let label = if many_tops {
            format!("{}, {:.2} g, top {:.2} g", key.0, key.1, key.2)
        } else {
            format!("{}, max {:.2} g", key.0, key.1)
        };
        items.push(LegendItem {
            colour: colour.into(),
            dash,
            label,
        });
    }
    let y_label = if tallest {
        "achievable loop height (heartline), m"
    } else {
        "peak normal load, g"
    };
    let axes = frame.axes("entry speed, m/s", y_label);
    let feasible = rows.iter().filter(|r| r.result.is_ok()).count();
    let mut notes = vec![format!(
        "{feasible} of {} designs feasible; gaps are infeasible designs",
        rows.len()
    )];
    if let (false, Some(k)) = (many_tops, keys.first()) {
        notes.push(format!("min_top_g = {:.2} g throughout", k.2));
    }
    let subtitle = if tallest {
        "sweep summary: tallest loop each family can reach under each g-limit".to_string()
    } else {
        "sweep summary: lowest peak load for the target height".to_string()
    };
    sheet(
        &format!("{title}: sweep"),
        &subtitle,
        vec![axes, plot, legend(&items, &notes)],
    )
}
