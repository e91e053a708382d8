//! Loads plot (`<name>-loads.svg`): normal, tangential (and lateral, when present) load in g
//! against heartline arc length, with the brief's limits, the loop span shaded, the duration
//! envelope when the brief has one, and the caution. Drawn with the chart kit ([`super::chart`]).

use svg::node::element::{Group, Rectangle};

use super::chart::{
    Frame, LegendEntry, Look, caution_block, clip, colour, dot, fmt_num, legend, page, px, rule,
    text,
};
use crate::model::Assessment;

/// Width of the loads plot, px.
pub const WIDTH_PX: f64 = 1000.0;
/// Height of the loads plot, px.
pub const HEIGHT_PX: f64 = 600.0;

/// SVG text of the loads plot.
pub fn loads_svg(design: &Assessment) -> String {
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

    let chart = Frame::with_loose_ticks((80.0, 84.0, 720.0, 400.0), x_range, y_range, 10, 8);
    let mut doc = page(WIDTH_PX, HEIGHT_PX, None);

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
            chart.x_px(l0.min(l1)).max(chart.left),
            chart.x_px(l0.max(l1)).min(chart.left + chart.width),
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
    let z = chart.y_px(0.0);
    doc = doc.add(
        rule(chart.left, z, chart.left + chart.width, z, "#999999")
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
            dot(
                chart.x_px(top_s),
                chart.y_px(s.top_normal_g),
                4.0,
                colour::NORMAL,
            )
            .set("id", "top-marker"),
        );
    }
    doc = doc.add(chart.axes(Look::Drawing, "heartline arc length s (m)", "load (g)"));

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
    doc = doc.add(legend(Look::Drawing, 820.0, chart.top + 10.0, &entries));
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

    let (caution, _) = caution_block(Look::Drawing, 80.0, 560.0, 125);
    doc.add(caution).to_string()
}

/// The duration envelope on the normal axis: each level inside the plotted range as a thin dotted
/// line labelled with how long it may be exceeded, and every failing level's worst run (any axis)
/// shaded, so a reader sees where the ride stays beyond a level too long.
fn envelope_layer(design: &Assessment, chart: &Frame, x_range: (f64, f64)) -> Group {
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
        let yy = chart.y_px(line.level_g);
        g = g
            .add(
                rule(
                    chart.x_px(x_range.0),
                    yy,
                    chart.x_px(x_range.1),
                    yy,
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
                    chart.x_px(x_range.0) + 4.0,
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

    // Closed forms for a lossless circle of radius R entered at v (vertical circular motion, e.g.
    // Halliday, Resnick & Walker, ch. 6 and 8): bottom n = 1 + v²/(gR), top n = v²/(gR) − 5.
    // Read back from the drawing with its own 0 g and max-g lines as the scale.
    #[test]
    fn loads_plot_shows_closed_form_loads() {
        use crate::export::svg::tests::{by_id, circle_design, parse, points, shows_caution};
        use crate::units::STANDARD_GRAVITY_M_S2 as G;
        let d = circle_design(10.0);
        let svg = loads_svg(&d);
        assert_eq!(svg.matches("<svg").count(), 1);
        assert!(shows_caution(&svg));
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
}
