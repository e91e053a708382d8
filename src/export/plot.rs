//! Loads plot (`<name>-loads.svg`): normal, tangential (and lateral, when present) load in g
//! against heartline arc length, with the brief's limits, the loop span shaded, the duration
//! envelope (saying whether it was enforced or only reported), and the caution. A train shows the
//! normal load of its front, middle and rear car and the range over every car, labelled; the
//! top-load marker sits on the curve of the car it belongs to. Drawn with the chart kit
//! ([`super::chart`]).

use svg::node::element::{Group, Rectangle};

use super::chart::{
    Frame, Look, caution_block, colour, dot, fitting_font_px, fmt_num, legend, page, px, rule,
    text, text_width_px,
};
use crate::model::Assessment;

/// Width of the loads plot, px.
pub const WIDTH_PX: f64 = 1080.0;
/// Height of the loads plot, px.
pub const HEIGHT_PX: f64 = 600.0;

/// Left edge of the legend, px (right of the plot area).
const LEGEND_X: f64 = 820.0;

/// One car's normal-load curve on the plot.
struct CarCurve {
    /// 0 is the front car.
    car: usize,
    label: String,
    colour: &'static str,
    dash: Option<&'static str>,
    points: Vec<(f64, f64)>,
}

/// The cars drawn for a train (none for one car, whose curve is the plain normal load): every car
/// of a train of two or three, else the front, middle and rear car.
fn car_curves(design: &Assessment) -> Vec<CarCurve> {
    let rides = &design.best.train.cars;
    let n = rides.len();
    if n < 2 {
        return Vec::new();
    }
    let mut picks = vec![(0, "front car"), (n / 2, "middle car"), (n - 1, "rear car")];
    picks.dedup_by_key(|p| p.0);
    let looks = [
        (colour::NORMAL, None),
        (colour::CAR_MIDDLE, Some("6 3")),
        (colour::CAR_REAR, Some("2 2")),
    ];
    picks
        .iter()
        .enumerate()
        .map(|(i, &(car, role))| {
            let (colour, dash) = looks[if i + 1 == picks.len() { 2 } else { i }];
            CarCurve {
                car,
                label: format!("normal g, {role} (car {})", car + 1),
                colour,
                dash,
                points: rides[car]
                    .points
                    .iter()
                    .map(|p| (p.s_m, p.normal_g))
                    .collect(),
            }
        })
        .collect()
}

/// A shaded band between the least and the largest normal load of any car at each station.
fn range_band(chart: &Frame, design: &Assessment) -> svg::node::element::Polygon {
    let rides = &design.best.train.cars;
    let n = rides.iter().map(|r| r.points.len()).min().unwrap_or(0);
    let at = |i: usize, pick: fn(f64, f64) -> f64| {
        let g = rides
            .iter()
            .map(|r| r.points[i].normal_g)
            .reduce(pick)
            .unwrap_or(0.0);
        chart.to_px(rides[0].points[i].s_m, g)
    };
    let mut pts: Vec<(f64, f64)> = (0..n).map(|i| at(i, f64::max)).collect();
    pts.extend((0..n).rev().map(|i| at(i, f64::min)));
    svg::node::element::Polygon::new()
        .set("points", super::chart::points_attr(&pts))
        .set("fill", colour::CAR_RANGE)
        .set("stroke", "none")
}

/// The car with the least normal load at the top station, and where that car's own curve is
/// then (its heartline position and load), so the marker sits on that car's curve.
fn worst_top_car(design: &Assessment) -> (usize, f64, f64) {
    if design.best.path.stations.is_empty() {
        return (0, f64::NAN, f64::NAN);
    }
    let top = design.best.path.top_index();
    let car = design
        .best
        .cars
        .iter()
        .min_by(|a, b| a.top_normal_g.total_cmp(&b.top_normal_g))
        .map_or(0, |c| c.car);
    design
        .best
        .train
        .cars
        .get(car)
        .unwrap_or(design.best.ride())
        .points
        .get(top)
        .map_or((car, f64::NAN, f64::NAN), |p| (car, p.s_m, p.normal_g))
}

/// The heartline span where the rider is inverted (pitch past 90°: cos θ < 0), from the ride's
/// stations; `None` for a path that never inverts.
fn inverted_span_m(design: &Assessment) -> Option<(f64, f64)> {
    let inverted = design
        .best
        .path
        .stations
        .iter()
        .filter(|st| st.pitch_rad.cos() < 0.0)
        .map(|st| st.s_m);
    inverted.fold(None, |acc, s| match acc {
        None => Some((s, s)),
        Some((a, b)) => Some((a.min(s), b.max(s))),
    })
}

/// Whether the duration table was enforced (a limits file: failing it is an error) or only
/// reported (the built-in illustrative table), in the words the terminal and JSON use.
pub fn envelope_status(design: &Assessment) -> &'static str {
    if design.envelope_enforced() {
        "enforced"
    } else {
        "reported, not enforced"
    }
}

/// SVG text of the loads plot.
pub fn loads_svg(design: &Assessment) -> String {
    let b = &design.brief;
    let s = &design.best.summary;
    let pts = &design.best.ride().points;
    let series = |f: fn(&crate::dynamics::LoadPoint) -> f64| -> Vec<(f64, f64)> {
        pts.iter().map(|p| (p.s_m, f(p))).collect()
    };
    let normal = series(|p| p.normal_g);
    let cars = car_curves(design);
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
    ys.extend(cars.iter().flat_map(|c| c.points.iter().map(|p| p.1)));
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

    // One title line, in full: a long brief title gets a smaller font, never an ellipsis.
    let title = format!("Loads along the heartline - {}", b.title);
    let title_px = fitting_font_px(&title, 18.0, WIDTH_PX - 80.0 - 20.0, true);
    let subtitle = format!(
        "{} loop, entry speed {} m/s ({} km/h); peak normal {} g, least normal at the top {} g{}",
        design.best.label(),
        fmt_num(b.entry_speed_m_s, 2),
        fmt_num(b.entry_speed_m_s * 3.6, 1),
        fmt_num(s.peak_normal_g, 2),
        fmt_num(s.top_normal_g, 2),
        if cars.is_empty() { "" } else { " (worst car)" }
    );
    doc = doc
        .add(
            text(80.0, 32.0, &title, title_px, "start")
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
    // The top limit bounds the load while the rider is inverted (pitch past 90°, cos θ < 0): the
    // line spans exactly that part of the heartline.
    if let Some((a, c)) = inverted_span_m(design) {
        doc = doc.add(
            chart
                .limit_line(
                    b.min_top_g,
                    a,
                    c,
                    colour::LIMIT,
                    &format!("min top {} g", fmt_num(b.min_top_g, 2)),
                    true,
                )
                .set("id", "limit-min-top"),
        );
    }

    // Envelope labels keep clear of every curve drawn.
    let mut drawn: Vec<&[(f64, f64)]> = vec![&tangential];
    if has_lateral {
        drawn.push(&lateral);
    }
    if cars.is_empty() {
        drawn.push(&normal);
    }
    drawn.extend(cars.iter().map(|c| c.points.as_slice()));
    let curves_px: Vec<(f64, f64)> = drawn
        .iter()
        .flat_map(|c| c.iter())
        .filter(|p| p.0.is_finite() && p.1.is_finite())
        .map(|p| chart.to_px(p.0, p.1))
        .collect();
    doc = doc.add(envelope_layer(design, &chart, x_range, &curves_px));
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
    let mut car_entries: Vec<(String, &str, Option<&str>)> = Vec::new();
    if cars.is_empty() {
        doc = doc.add(
            chart
                .series(&normal, colour::NORMAL, 2.4, None)
                .set("id", "normal-g"),
        );
    } else {
        doc = doc.add(range_band(&chart, design).set("id", "normal-g-range"));
        car_entries.push((
            format!(
                "normal g, range of all {} cars",
                design.best.train.cars.len()
            ),
            colour::CAR_RANGE,
            None,
        ));
        for c in &cars {
            doc = doc.add(
                chart
                    .series(&c.points, c.colour, 2.0, c.dash)
                    .set("id", format!("normal-g-car-{}", c.car))
                    .set("class", "car-normal-g"),
            );
            car_entries.push((c.label.clone(), c.colour, c.dash));
        }
    }
    // The top-load marker on the curve of the car with the least top load.
    let (top_car, top_s, top_g) = worst_top_car(design);
    if top_s.is_finite() && top_g.is_finite() {
        let fill = cars
            .iter()
            .find(|c| c.car == top_car)
            .map_or(colour::NORMAL, |c| c.colour);
        doc = doc.add(
            dot(chart.x_px(top_s), chart.y_px(top_g), 4.0, fill)
                .set("id", "top-marker")
                .set("data-car", top_car),
        );
    }
    doc = doc.add(chart.axes(Look::Drawing, "heartline arc length s (m)", "load (g)"));

    let front = if cars.is_empty() { "" } else { ", front car" };
    let mut entries: Vec<(String, &str, Option<&str>)> = if cars.is_empty() {
        vec![("normal g".into(), colour::NORMAL, None)]
    } else {
        car_entries
    };
    entries.push((format!("tangential g{front}"), colour::TANGENTIAL, None));
    if has_lateral {
        entries.push((format!("lateral g{front}"), colour::LATERAL, Some("2 3")));
    }
    entries.push(("limits".into(), colour::LIMIT, Some("8 5")));
    if design.verification.envelope.is_some() {
        entries.push(("envelope (normal)".into(), colour::ENVELOPE, Some("3 4")));
    }
    doc = doc.add(legend(Look::Drawing, LEGEND_X, chart.top + 10.0, &entries));
    let legend_end = chart.top + 10.0 + 20.0 * entries.len() as f64;
    let band_y = legend_end + 8.0;
    doc = doc
        .add(
            Rectangle::new()
                .set("x", LEGEND_X)
                .set("y", px(band_y - 6.0))
                .set("width", 28)
                .set("height", 12)
                .set("fill", colour::LOOP_SPAN)
                .set("stroke", "#b8c4d4"),
        )
        .add(text(856.0, band_y + 4.5, "loop proper", 13.0, "start"));
    if design.verification.envelope.is_some() {
        doc = doc.add(
            text(
                LEGEND_X,
                band_y + 30.0,
                &format!("envelope table: {}", envelope_status(design)),
                12.0,
                "start",
            )
            .set("id", "envelope-status")
            .set("fill", colour::MUTED),
        );
    }

    let (caution, _) = caution_block(Look::Drawing, 80.0, 560.0, 125);
    doc.add(caution).to_string()
}

/// The duration envelope on the normal axis: each level inside the plotted range as a thin dotted
/// line labelled with how long it may be exceeded, and every failing level's worst run (any axis)
/// shaded, so a reader sees where the ride stays beyond a level too long.
fn envelope_layer(
    design: &Assessment,
    chart: &Frame,
    x_range: (f64, f64),
    curves_px: &[(f64, f64)],
) -> Group {
    use crate::checks::envelope::Axis;
    let mut g = Group::new().set("id", "envelope");
    let Some(env) = &design.verification.envelope else {
        return g;
    };
    let (lo, hi) = chart.y_range;
    let mut taken: Vec<LabelBox> = Vec::new();
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
        // A level with no allowed duration is an absolute bound.
        let label = if line.allowed_s == 0.0 {
            format!("{} g absolute", fmt_num(line.level_g, 1))
        } else {
            format!(
                "{} g for ≤ {} s",
                fmt_num(line.level_g, 1),
                fmt_num(line.allowed_s, 1)
            )
        };
        let yy = chart.y_px(line.level_g);
        g = g.add(
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
        );
        let width = text_width_px(&label, ENVELOPE_LABEL_PX, false);
        if let Some(b) = clear_spot(chart, yy, width, curves_px, &taken) {
            taken.push(b);
            g = g.add(
                text(b.x0, b.y1 - 2.0, &label, ENVELOPE_LABEL_PX, "start")
                    .set("fill", colour::ENVELOPE)
                    .set("class", "envelope-label"),
            );
        }
    }
    g
}

/// Font size of the envelope labels, px.
const ENVELOPE_LABEL_PX: f64 = 10.0;

/// A label's box, px: x0..x1 across, y0 (top) .. y1 (bottom).
#[derive(Debug, Clone, Copy)]
struct LabelBox {
    x0: f64,
    x1: f64,
    y0: f64,
    y1: f64,
}

impl LabelBox {
    fn holds(&self, (x, y): (f64, f64)) -> bool {
        (self.x0..=self.x1).contains(&x) && (self.y0..=self.y1).contains(&y)
    }
    fn overlaps(&self, o: &LabelBox) -> bool {
        self.x0 < o.x1 && o.x0 < self.x1 && self.y0 < o.y1 && o.y0 < self.y1
    }
}

/// Where a label `width` px wide for the line at `yy` px fits inside the frame, just above the line
/// or else just below it, with no curve point and no other label inside it: the leftmost such
/// place on a 10 px grid, or `None` (the level is then left unlabelled rather than overdrawn).
fn clear_spot(
    chart: &Frame,
    yy: f64,
    width: f64,
    curves_px: &[(f64, f64)],
    taken: &[LabelBox],
) -> Option<LabelBox> {
    let (left, right) = (chart.left + 4.0, chart.left + chart.width - 4.0);
    let (top, bottom) = (chart.top + 2.0, chart.top + chart.height - 2.0);
    let h = ENVELOPE_LABEL_PX + 2.0;
    for (y0, y1) in [(yy - 2.0 - h, yy - 2.0), (yy + 2.0, yy + 2.0 + h)] {
        if y0 < top || y1 > bottom {
            continue;
        }
        let mut x0 = left;
        while x0 + width <= right {
            let b = LabelBox {
                x0,
                x1: x0 + width,
                y0,
                y1,
            };
            if !curves_px.iter().any(|p| b.holds(*p)) && !taken.iter().any(|t| t.overlaps(&b)) {
                return Some(b);
            }
            x0 += 10.0;
        }
    }
    None
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

    /// The lossless 10 m circle assessed like a design (envelope included) under the demo brief.
    fn assessed_circle() -> Assessment {
        let d = crate::export::svg::tests::circle_design(10.0);
        let curve = crate::model::Curve::family(crate::brief::ShapeKind::Circle, &[], 10.0);
        crate::model::assess(&d.brief, &curve, vec![], 0).unwrap()
    }

    /// The frame of the plot area, px (left, top, right, bottom), as `loads_svg` sets it.
    const AREA: (f64, f64, f64, f64) = (80.0, 84.0, 800.0, 484.0);

    // Envelope levels read "absolute" when no duration is allowed (the table's own meaning:
    // a level with 0 s may never be exceeded), and every label lies inside the frame with no
    // point of a drawn curve inside its box (boxes from the label's estimated width,
    // `text_width_px`, and its 10 px font).
    #[test]
    fn envelope_labels_say_absolute_and_stay_clear() {
        use crate::export::svg::tests::{parse, points};
        let d = assessed_circle();
        let svg = loads_svg(&d);
        assert!(
            svg.contains("g absolute"),
            "an absolute level is labelled so"
        );
        assert!(!svg.contains("for ≤ 0 s"));
        let tags = parse(&svg);
        let curves: Vec<(f64, f64)> = tags
            .iter()
            .filter(|t| t.0 == "polyline")
            .filter(|t| {
                t.1.get("id")
                    .is_some_and(|id| id.ends_with("-g") || id.starts_with("normal-g"))
            })
            .flat_map(|t| points(&t.1["points"]))
            .collect();
        assert!(curves.len() > 100);
        let labels: Vec<_> = tags
            .iter()
            .filter(|t| t.1.get("class").is_some_and(|c| c == "envelope-label"))
            .collect();
        assert!(labels.len() >= 3, "{}", labels.len());
        for t in labels {
            let x: f64 = t.1["x"].parse().unwrap();
            let y: f64 = t.1["y"].parse().unwrap();
            let w = text_width_px(&t.2, ENVELOPE_LABEL_PX, false);
            let (x0, x1, y0, y1) = (x, x + w, y - ENVELOPE_LABEL_PX, y + 2.0);
            assert!(
                x0 >= AREA.0 && x1 <= AREA.2 && y0 >= AREA.1 && y1 <= AREA.3,
                "{} outside the frame",
                t.2
            );
            assert!(
                !curves
                    .iter()
                    .any(|&(px_, py)| (x0..=x1).contains(&px_) && (y0..=y1).contains(&py)),
                "{} overlaps a curve",
                t.2
            );
        }
        // Without a limits file the table is only reported, and the plot says so.
        assert!(svg.contains("envelope table: reported, not enforced"));
        let mut enforced = d.clone();
        enforced.brief.limits_table =
            Some(crate::brief::limits_table::EnvelopeTable::illustrative());
        assert!(loads_svg(&enforced).contains("envelope table: enforced"));
    }

    // The min-top limit bounds the load while the rider is inverted: on a circle of radius R
    // entered at s0 that is s0 + πR/2 to s0 + 3πR/2 (pitch 90° to 270°; circle geometry), read
    // with the loop band as the scale (it spans the loop proper, s0 to s0 + 2πR).
    #[test]
    fn min_top_line_spans_the_inverted_part() {
        use crate::export::svg::tests::{by_id, parse};
        use std::f64::consts::PI;
        let d = assessed_circle();
        let svg = loads_svg(&d);
        let tags = parse(&svg);
        let band = by_id(&tags, "loop-span");
        let bx: f64 = band.1["x"].parse().unwrap();
        let bw: f64 = band.1["width"].parse().unwrap();
        let (l0, l1) = d.best.path.loop_span_m;
        let px_m = bw / (l1 - l0);
        let group = by_id(&tags, "limit-min-top");
        let i = tags.iter().position(|t| std::ptr::eq(t, group)).unwrap();
        let line = &tags[i + 1].1;
        let (x1, x2): (f64, f64) = (line["x1"].parse().unwrap(), line["x2"].parse().unwrap());
        let s_of = |x: f64| l0 + (x - bx) / px_m;
        let r = 10.0;
        let tol = d.best.spacing_m + 0.05 / px_m;
        assert!((s_of(x1) - (l0 + PI * r / 2.0)).abs() < tol, "{}", s_of(x1));
        assert!((s_of(x2) - (l0 + 1.5 * PI * r)).abs() < tol, "{}", s_of(x2));
    }

    // A title of any length is shown in full: no ellipsis, and set in a size whose estimated
    // width fits the page.
    #[test]
    fn long_titles_are_not_cut() {
        let mut d = crate::export::svg::tests::circle_design(10.0);
        d.brief.title = "A very long brief title ".repeat(5);
        let svg = loads_svg(&d);
        assert!(!svg.contains('…'));
        let tags = crate::export::svg::tests::parse(&svg);
        let t = crate::export::svg::tests::by_id(&tags, "title");
        assert!(t.2.contains(d.brief.title.trim_end()), "{}", t.2);
        let size: f64 = t.1["font-size"].parse().unwrap();
        assert!(80.0 + text_width_px(&t.2, size, true) <= WIDTH_PX);
    }
}
