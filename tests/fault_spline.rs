//! A SPLINE too long to sample is refused by its span count, exactly: with 16 points per span
//! and at most 200,000 points, 12,499 spans (199,985 points) are the most read; 12,500 spans
//! (200,001 points) must be refused naming 12,500 spans, not "200001 points".

use dxf::entities::{Entity, EntityType, Spline};
use dxf::enums::AcadVersion;
use dxf::{Drawing, Point};
use loopwright::import::{MAX_POINTS, read_centreline};

/// A degree-1 SPLINE with `spans` spans (spans + 1 control points, clamped uniform knots).
fn spline_file(dir: &std::path::Path, spans: usize) -> std::path::PathBuf {
    let m = spans + 1;
    let mut knots = vec![0.0, 0.0];
    knots.extend((1..m - 1).map(|k| k as f64));
    knots.extend([(m - 1) as f64, (m - 1) as f64]);
    let sp = Spline {
        degree_of_curve: 1,
        knot_values: knots,
        control_points: (0..m)
            .map(|i| Point::new(i as f64 * 0.01, 0.0, (i as f64 * 0.001).sin()))
            .collect(),
        ..Default::default()
    };
    let mut d = Drawing::new();
    d.header.version = AcadVersion::R2000;
    d.add_entity(Entity::new(EntityType::Spline(sp)));
    let p = dir.join(format!("s{spans}.dxf"));
    d.save_file(&p).unwrap();
    p
}

#[test]
fn a_spline_over_the_span_limit_is_refused_by_its_exact_span_count() {
    assert_eq!(MAX_POINTS, 200_000, "the figures in this test's docs");
    let dir = tempfile::tempdir().unwrap();
    let e = read_centreline(&spline_file(dir.path(), 12_500), None).unwrap_err();
    let text = e.to_string();
    assert!(
        text.contains("has 12500 spans; at most 12499 are read"),
        "{text}"
    );
    assert!(!text.contains("200001"), "{text}");
}
