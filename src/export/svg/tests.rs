//! Tests of the elevation drawing, and the SVG helpers the other drawings' tests share.

use super::*;
use crate::brief::{Brief, ShapeKind};
use crate::optimiser::evaluate;
use crate::report::CAUTION;
use svg::parser::Event;

/// A lossless circle of top radius 10 m: geometry gives a heartline loop height of 2R = 20 m
/// and a rail height of 2R + 2h (rail h below the heartline at the bottom, h above at the top).
pub(crate) fn circle_design(radius_m: f64) -> Assessment {
    let mut brief = Brief::demo();
    brief.shape = ShapeKind::Circle;
    brief.rolling_resistance = 0.0;
    brief.drag_area_m2 = 0.0;
    // Closed forms of the planar circle.
    brief.lateral_shift_m = 0.0;
    let best = evaluate(&brief, ShapeKind::Circle, &[], radius_m, 0.05).expect("circle evaluates");
    Assessment {
        brief,
        shape_labels: vec![],
        verification: best.clone(),
        best,
        evaluations: 1,
        search_stopped: None,
    }
}

/// Every tag with its attributes, plus the text that follows each tag.
pub(crate) fn parse(svg: &str) -> Vec<(String, std::collections::HashMap<String, String>, String)> {
    let mut out: Vec<(String, std::collections::HashMap<String, String>, String)> = Vec::new();
    for ev in svg::read(svg).unwrap() {
        match ev {
            Event::Tag(name, _, attrs) => out.push((
                name.into(),
                attrs
                    .iter()
                    .map(|(k, v)| (k.clone(), v.to_string()))
                    .collect(),
                String::new(),
            )),
            Event::Text(t) => {
                if let Some(last) = out.last_mut() {
                    last.2.push_str(t);
                }
            }
            Event::Error(e) => panic!("SVG does not parse: {e}"),
            _ => {}
        }
    }
    out
}

/// True if `svg` shows the caution's first words (the first wrapped line holds them).
pub(crate) fn shows_caution(svg: &str) -> bool {
    let head: Vec<&str> = CAUTION.split_whitespace().take(5).collect();
    svg.contains(&head.join(" "))
}

pub(crate) fn by_id<'a>(
    tags: &'a [(String, std::collections::HashMap<String, String>, String)],
    id: &str,
) -> &'a (String, std::collections::HashMap<String, String>, String) {
    tags.iter()
        .find(|t| t.1.get("id").map(String::as_str) == Some(id))
        .unwrap_or_else(|| panic!("no #{id}"))
}

pub(crate) fn points(attr: &str) -> Vec<(f64, f64)> {
    attr.split_whitespace()
        .map(|p| {
            let (x, y) = p.split_once(',').unwrap();
            (x.parse().unwrap(), y.parse().unwrap())
        })
        .collect()
}

// Measured as a reader would, with the drawing's own scale bar, the heartline's height is the
// closed-form 2R and the rail's 2R + 2h (circle geometry); the same scale horizontally gives
// the circle's width 2R + 2h of the rail (its leftmost and rightmost points at mid-height).
#[test]
fn elevation_measures_true_to_the_scale_bar() {
    let d = circle_design(10.0);
    let svg = elevation_svg(&d);
    assert_eq!(svg.matches("<svg").count(), 1);
    let tags = parse(&svg);
    let bar_w: f64 = by_id(&tags, "scale-bar-frame").1["width"].parse().unwrap();
    let label = by_id(&tags, "scale-bar-label").2.trim().to_string();
    let bar_m: f64 = label
        .strip_suffix(" m")
        .expect("label in metres")
        .parse()
        .unwrap();
    let px_per_m = bar_w / bar_m;

    let heart = points(&by_id(&tags, "heartline-0").1["points"]);
    let rail = points(&by_id(&tags, "rail-0").1["points"]);
    let span = |p: &[(f64, f64)], f: fn(&(f64, f64)) -> f64| {
        let v: Vec<f64> = p.iter().map(f).collect();
        v.iter().copied().fold(f64::MIN, f64::max) - v.iter().copied().fold(f64::MAX, f64::min)
    };
    // Entry is the lowest heartline point (level lead track), so the y span is the height.
    let tol = 0.02 / px_per_m + 1e-3; // 0.01 px rounding at each end, plus sampling of the arc
    let h = 1.1;
    assert!((span(&heart, |p| p.1) / px_per_m - 20.0).abs() < tol);
    assert!((span(&rail, |p| p.1) / px_per_m - (20.0 + 2.0 * h)).abs() < tol);
    // Horizontal, same scale: lead track L, the circle (centre above x = L, so x from L − R to
    // L + R), back to x = L, then L of exit track to 2L.
    let (lead, r) = (d.brief.lead_length_m, 10.0);
    let width = (lead + r).max(2.0 * lead) - (lead - r).min(0.0);
    assert!((span(&heart, |p| p.0) / px_per_m - width).abs() < tol);

    assert!(shows_caution(&svg));
    assert!(svg.contains(&format!(
        "loop height (heartline) {:.2} m",
        d.best.summary.loop_height_m
    )));
    assert!(svg.contains(&d.brief.title));
}

// Several designs share one scale and the entry origin: the pixel of world (0, 0) is the
// first heartline point of each.
#[test]
fn many_designs_share_origin_and_scale() {
    let (a, b) = (circle_design(8.0), circle_design(12.0));
    let tags = parse(&elevation_svg_many(&[&a, &b]));
    let first = |id: &str| points(&by_id(&tags, id).1["points"])[0];
    let (p0, p1) = (first("heartline-0"), first("heartline-1"));
    assert!(
        (p0.0 - p1.0).abs() < 0.011 && (p0.1 - p1.1).abs() < 0.011,
        "{p0:?} {p1:?}"
    );
    let h = |id: &str| span_y(&points(&by_id(&tags, id).1["points"]));
    // Heights in the ratio of the radii (both are 2R).
    assert!((h("heartline-1") / h("heartline-0") - 1.5).abs() < 1e-3);
}

fn span_y(p: &[(f64, f64)]) -> f64 {
    let ys = p.iter().map(|p| p.1);
    ys.clone().fold(f64::MIN, f64::max) - ys.fold(f64::MAX, f64::min)
}

// No panic and still a parseable SVG with the caution for degenerate input.
#[test]
fn degenerate_designs_still_draw() {
    let mut d = circle_design(10.0);
    d.best.path.stations.truncate(1);
    d.best.train.cars[0].points.truncate(1);
    d.brief.title = "bad\u{1}title <&>".into();
    for svg in [
        elevation_svg(&d),
        elevation_svg_many(&[]),
        super::super::plot::loads_svg(&d),
    ] {
        let tags = parse(&svg);
        assert!(tags.iter().any(|t| t.0 == "svg"));
        assert!(svg.contains("CAUTION"));
    }
    d.best.path.stations.clear();
    d.best.train.cars[0].points.clear();
    let _ = parse(&elevation_svg(&d));
    let _ = parse(&super::super::plot::loads_svg(&d));
    assert!(super::super::dxf::dxf_bytes(&d).is_err());
}
// A circle's entry and exit share one X, so its footprint along X is its diameter 2R, not
// 0 (circle geometry); the drawing also marks the direction of travel (+X at entry), the top
// radius (a line from the top down R to the centre, on the drawing's own scale) and the point
// of peak load (the bottom of a lossless circle, n = 1 + v²/(gR): Halliday, Resnick & Walker).
#[test]
fn elevation_marks_travel_top_radius_peak_and_a_true_footprint() {
    let d = circle_design(10.0);
    let svg = elevation_svg(&d);
    let tags = parse(&svg);
    let foot: String = tags
        .iter()
        .filter(|t| t.0 == "text")
        .map(|t| t.2.clone())
        .filter(|t| t.contains("loop footprint"))
        .collect();
    assert!(
        foot.contains("loop footprint (heartline) 20.00 m"),
        "{foot}"
    );
    assert!(foot.contains("entry to exit 0.00 m"), "{foot}");
    // Direction: the arrow points along +X (its end, with the arrowhead, to the right).
    let arrow = &by_id(&tags, "travel-arrow").1;
    let (x1, x2): (f64, f64) = (arrow["x1"].parse().unwrap(), arrow["x2"].parse().unwrap());
    assert!(x2 > x1 && arrow["marker-end"].contains("arrow"));
    assert!(svg.contains("direction of travel"));
    // Top radius: R on the scale bar's scale.
    let bar = &by_id(&tags, "scale-bar-frame").1;
    let bar_px: f64 = bar["width"].parse().unwrap();
    let bar_m: f64 = tags
        .iter()
        .filter(|t| t.0 == "text")
        .find_map(|t| t.2.strip_suffix(" m").and_then(|v| v.parse::<f64>().ok()))
        .unwrap();
    let line = &by_id(&tags, "top-radius").1;
    let (y1, y2): (f64, f64) = (line["y1"].parse().unwrap(), line["y2"].parse().unwrap());
    let r_m = (y1 - y2).abs() * bar_m / bar_px;
    assert!((r_m - 10.0).abs() < 0.02, "{r_m}");
    assert!(svg.contains("top radius 10.00 m"));
    // Peak load at the circle's bottom, i.e. at the heartline's lowest drawn height in the loop.
    let peak = &by_id(&tags, "peak-load").1;
    let s_peak: f64 = peak["data-s-m"].parse().unwrap();
    let (l0, l1) = d.best.path.loop_span_m;
    let at_bottom = (s_peak - l0).abs() < 0.06 || (s_peak - l1).abs() < 0.06;
    assert!(at_bottom, "peak at s = {s_peak}, loop {l0}..{l1}");
}
