//! Overlay drawings for studies: the compare elevations and loads of every family on one sheet,
//! and the sweep summary (achievable loop height against entry speed).
//!
//! Drawn with the chart kit ([`super::chart`]) in its [`Look::Sheet`]: a frame with ticks inside
//! the padded data range (midpoint-rounded steps), a legend with notes, and the caution at the
//! foot of every sheet. Elevations are drawn at one scale on both axes (metres are metres in X and
//! Z) with the origin at the loop entry of the heartline, shared by every family.

use svg::node::element::Group;

use super::chart::{
    Frame, Look, Ticks, bare_text, caution_block, colour, dot, fitting_font_px, legend,
    midpoint_step, page, sheet_font, wrap,
};
use crate::brief::{Objective, ShapeKind};
use crate::compare::Comparison;
use crate::model::Assessment;
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

/// A legend line: label, sample colour, dash pattern.
type LegendItem = (String, &'static str, Option<&'static str>);

/// The frame of a sheet showing `x` and `y` padded by 5 % each side; with `equal` one metre is as
/// long on both axes. Ticks lie inside the range, about one per 80 px across and 60 px up.
fn sheet_frame(x: (f64, f64), y: (f64, f64), equal: bool) -> Frame {
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
    let x_ticks = Ticks::inside(x.0, x.1, midpoint_step(x.1 - x.0, area.2 / 80.0));
    let y_ticks = Ticks::inside(y.0, y.1, midpoint_step(y.1 - y.0, area.3 / 60.0));
    Frame::new(area, x, y).ticks(x_ticks, y_ticks)
}

/// The legend right of the plot, then each note wrapped to 30 characters in grey.
fn legend_with_notes(items: &[LegendItem], notes: &[String]) -> Group {
    let (x, top) = (WIDTH - MARGIN.1 + 16.0, MARGIN.2 + 10.0);
    let mut g = legend(Look::Sheet, x, top, items);
    let mut y = top + 20.0 * items.len() as f64;
    for n in notes {
        y += 4.0;
        for line in wrap(n, 30) {
            g = g.add(bare_text(x, y + 4.0, &line).set("fill", colour::SHEET_NOTE));
            y += 15.0;
        }
    }
    g
}

/// A sheet with a title, the caution at the foot and the given content.
fn sheet(title: &str, subtitle: &str, content: Vec<Group>) -> String {
    let mut doc = page(WIDTH, HEIGHT, None)
        .add(
            sheet_font(
                bare_text(MARGIN.0, 24.0, title),
                fitting_font_px(title, 16.0, WIDTH - MARGIN.0 - 10.0, true),
            )
            .set("font-weight", "bold")
            .set("id", "sheet-title"),
        )
        .add(sheet_font(bare_text(MARGIN.0, 42.0, subtitle), 12.0));
    for c in content {
        doc = doc.add(c);
    }
    doc = doc.add(caution_block(Look::Sheet, 12.0, HEIGHT - 30.0, 150).0);
    let mut s = doc.to_string();
    s.push('\n');
    s
}

/// A note per infeasible family: drawn dashed at its binding limit with the limits it fails, or
/// not drawn when no size meets even that limit.
fn infeasible_notes(c: &Comparison) -> Vec<String> {
    c.entries
        .iter()
        .filter(|e| e.result.is_err())
        .map(|e| match &e.failing {
            Some(shown) => {
                let failed: Vec<&str> = shown.fails.iter().map(|l| l.field()).collect();
                format!(
                    "{}: FAILING, drawn dashed at the {}; fails {} (reason in the compare table)",
                    e.kind,
                    shown.sized,
                    if failed.is_empty() {
                        "the limit table".to_string()
                    } else {
                        failed.join(", ")
                    }
                )
            }
            None => format!(
                "{}: infeasible at every size, not drawn (reason in the compare table)",
                e.kind
            ),
        })
        .collect()
}

/// The loop an overlay draws for each family (its design, or its failing loop), with whether it
/// fails.
fn shown_loops(c: &Comparison) -> impl Iterator<Item = (ShapeKind, &Assessment, bool)> {
    c.entries
        .iter()
        .filter_map(|e| e.shown().map(|d| (e.kind, d, e.result.is_err())))
}

/// Every family's heartline elevation on one sheet, one scale on both axes, origin at loop entry.
pub fn elevation_overlay_svg(c: &Comparison) -> String {
    let mut curves = Vec::new();
    for (kind, d, failing) in shown_loops(c) {
        let st = &d.best.path.stations;
        let entry = st.iter().find(|s| s.in_loop).unwrap_or(&st[0]).heartline_m;
        let pts: Vec<(f64, f64)> = st
            .iter()
            .map(|s| (s.heartline_m.x - entry.x, s.heartline_m.z - entry.z))
            .collect();
        curves.push((kind, d.best.summary.loop_height_m, failing, pts));
    }
    let (xr, zr) = enclose(((0.0, 0.0), (0.0, 0.0)), &curves);
    let frame = sheet_frame(xr, zr, true);
    let (mut plot, items) =
        family_curves(&frame, &curves, |kind, h| format!("{kind}: {h:.2} m tall"));
    plot = plot.add(dot(frame.x_px(0.0), frame.y_px(0.0), 4.0, "black"));
    let axes = frame.axes(
        Look::Sheet,
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
        vec![axes, plot, legend_with_notes(&items, &notes)],
    )
}

/// A family's curve for an overlay: the family, the figure its legend quotes, whether it fails the
/// brief (drawn dashed, labelled failing), and the points.
type FamilyCurve = (ShapeKind, f64, bool, Vec<(f64, f64)>);

/// Dash pattern of a failing family's curve.
const FAILING_DASH: &str = "7 4";

/// The x and y ranges `start` grown to take in every point of every curve, in order.
fn enclose(start: ((f64, f64), (f64, f64)), curves: &[FamilyCurve]) -> ((f64, f64), (f64, f64)) {
    let points = curves.iter().flat_map(|c| &c.3);
    points.fold(start, |(xr, yr), &(x, y)| {
        ((xr.0.min(x), xr.1.max(x)), (yr.0.min(y), yr.1.max(y)))
    })
}

/// One curve per family in its colour (dashed and labelled "FAILING" when the family fails the
/// brief), and the legend entries labelled by `label(kind, figure)`.
fn family_curves(
    frame: &Frame,
    curves: &[FamilyCurve],
    label: impl Fn(ShapeKind, f64) -> String,
) -> (Group, Vec<LegendItem>) {
    let mut plot = Group::new();
    let mut items = Vec::new();
    for (kind, figure, failing, pts) in curves {
        let dash = if *failing { FAILING_DASH } else { "none" };
        plot = plot.add(
            frame
                .path(
                    pts.iter().map(|p| Some(*p)),
                    family_colour(*kind),
                    dash,
                    2.0,
                )
                .set("class", if *failing { "failing" } else { "feasible" }),
        );
        let text = label(*kind, *figure);
        if *failing {
            items.push((
                text.replacen(':', " FAILS:", 1),
                family_colour(*kind),
                Some(FAILING_DASH),
            ));
        } else {
            items.push((text, family_colour(*kind), None));
        }
    }
    (plot, items)
}

/// Every family's normal load against arc length from loop entry, with the brief's limits.
pub fn loads_overlay_svg(c: &Comparison) -> String {
    let b = &c.brief;
    let mut curves = Vec::new();
    for (kind, d, failing) in shown_loops(c) {
        let s0 = d.best.path.loop_span_m.0;
        let pts: Vec<(f64, f64)> = d
            .best
            .ride()
            .points
            .iter()
            .map(|p| (p.s_m - s0, p.normal_g))
            .collect();
        curves.push((kind, d.best.summary.peak_normal_g, failing, pts));
    }
    let (sr, gr) = enclose(((0.0, 1.0), (b.min_top_g.min(0.0), b.max_g)), &curves);
    let frame = sheet_frame(sr, gr, false);
    let (mut plot, mut items) = family_curves(&frame, &curves, |kind, peak| {
        format!("{kind}: peak {peak:.2} g")
    });
    let limit = |g: f64, dash: &'static str| {
        frame.path(
            [Some((sr.0, g)), Some((sr.1, g))],
            colour::SHEET_LIMIT,
            dash,
            1.5,
        )
    };
    // The top-load limit bounds the load while the rider is inverted (pitch past 90°): drawn over
    // the part of the arc length where any family drawn is inverted.
    let inverted = shown_loops(c)
        .flat_map(|(_, d, _)| {
            let s0 = d.best.path.loop_span_m.0;
            d.best
                .path
                .stations
                .iter()
                .filter(|st| st.pitch_rad.cos() < 0.0)
                .map(move |st| st.s_m - s0)
        })
        .fold(None, |acc: Option<(f64, f64)>, s| {
            Some(acc.map_or((s, s), |(a, b)| (a.min(s), b.max(s))))
        });
    plot = plot.add(limit(b.max_g, "8 4"));
    if let Some((a, e)) = inverted {
        plot = plot.add(
            frame
                .path(
                    [Some((a, b.min_top_g)), Some((e, b.min_top_g))],
                    colour::SHEET_LIMIT,
                    "2 3",
                    1.5,
                )
                .set("id", "limit-min-top"),
        );
    }
    items.push((
        format!("max_g {:.2} g", b.max_g),
        colour::SHEET_LIMIT,
        Some("8 4"),
    ));
    items.push((
        format!("min_top_g {:.2} g (inverted)", b.min_top_g),
        colour::SHEET_LIMIT,
        Some("2 3"),
    ));
    let axes = frame.axes(
        Look::Sheet,
        "heartline arc length from loop entry, m",
        "normal load, g",
    );
    let mut notes = infeasible_notes(c);
    notes.push("a vertical jump marks a curvature step: its onset is unbounded".into());
    let subtitle = format!(
        "normal load along the heartline; entry speed {:.2} m/s; limits illustrative",
        b.entry_speed_m_s
    );
    sheet(
        &format!("{}: compare loads", b.title),
        &subtitle,
        vec![axes, plot, legend_with_notes(&items, &notes)],
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
    let frame = sheet_frame(xr, yr, false);
    let mut plot = Group::new();
    let mut items = Vec::new();
    let many_tops = keys.iter().any(|k| k.2 != keys[0].2);
    let mut not_drawn = Vec::new();
    for (i, key) in keys.iter().enumerate() {
        let mut pts: Vec<&SweepRow> = rows
            .iter()
            .filter(|r| (r.point.kind, r.point.max_g, r.point.min_top_g) == *key)
            .collect();
        pts.sort_by(|a, b| a.point.entry_speed_m_s.total_cmp(&b.point.entry_speed_m_s));
        // A curve with no feasible point is not drawn, so it gets no legend entry either (the
        // note counts the infeasible designs).
        if pts.iter().all(|r| value(r).is_none()) {
            not_drawn.push(format!("{} at {:.2} g", key.0, key.1));
            continue;
        }
        let colour = family_colour(key.0);
        let g_index = max_gs.iter().position(|g| *g == key.1).unwrap_or(0);
        let dash = DASHES[g_index % DASHES.len()];
        let width = if many_tops {
            1.2 + 1.2 * ((i % 3) as f64)
        } else {
            2.0
        };
        plot = plot.add(
            frame.path(
                pts.iter()
                    .map(|r| value(r).map(|v| (r.point.entry_speed_m_s, v))),
                colour,
                dash,
                width,
            ),
        );
        for r in &pts {
            if let Some(v) = value(r) {
                plot = plot.add(dot(
                    frame.x_px(r.point.entry_speed_m_s),
                    frame.y_px(v),
                    2.5,
                    colour,
                ));
            }
        }
        let label = if many_tops {
            format!("{}, {:.2} g, top {:.2} g", key.0, key.1, key.2)
        } else {
            format!("{}, max {:.2} g", key.0, key.1)
        };
        items.push((label, colour, Some(dash)));
    }
    let y_label = if tallest {
        "achievable loop height (heartline), m"
    } else {
        "peak normal load, g"
    };
    let axes = frame.axes(Look::Sheet, "entry speed, m/s", y_label);
    let feasible = rows.iter().filter(|r| r.result.is_ok()).count();
    let mut notes = vec![format!(
        "{feasible} of {} designs feasible; gaps are infeasible designs",
        rows.len()
    )];
    if !not_drawn.is_empty() {
        notes.push(format!(
            "not drawn (no feasible design): {}",
            not_drawn.join(", ")
        ));
    }
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
        vec![axes, plot, legend_with_notes(&items, &notes)],
    )
}
