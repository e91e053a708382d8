//! `check`: a centreline from a file, fitted and ridden, must give the loads of the design that
//! produced it (round trips through CSV and DXF), and malformed files must be refused clearly.
//!
//! The expectation in the round trips is loopwright's own design, computed from the analytic
//! curvature of its shape family; the check sees only sampled points (through the file format)
//! and rebuilds curvature from a smoothing spline, so agreement within 0.05 g (the floor)
//! tests the import, the fit and the heartline/rail offset together. The smoothing spline itself is
//! compared with scipy's `make_smoothing_spline` (PyPI), an independent implementation of the same
//! penalised criterion.

mod common;

use loopwright::brief::Brief;
use loopwright::checks::centreline::{CheckOptions, CheckedCentreline, check_centreline};
use loopwright::geometry::fit::{DEFAULT_TOLERANCE_M, PointsAre, SmoothingSpline};
use loopwright::import::{read_centreline, MAX_FILE_BYTES};
use loopwright::optimiser::{Design, design};
use std::path::Path;

fn demo() -> Design {
    design(&Brief::demo()).expect("the demo brief is feasible")
}

fn check_file(d: &Design, file: &Path, layer: Option<&str>, points_are: PointsAre) -> CheckedCentreline {
    let imported = read_centreline(file, layer).unwrap();
    let opts = CheckOptions { points_are, tolerance_m: DEFAULT_TOLERANCE_M };
    check_centreline(&d.brief, &imported, "test", &opts).unwrap()
}

/// Largest |Δ normal_g| over every design station, the check's loads interpolated at the same
/// heartline arc length (both start at the heartline entry point).
fn worst_load_difference(d: &Design, c: &CheckedCentreline) -> f64 {
    let (cs, cn): (Vec<f64>, Vec<f64>) = c.path.stations.iter().zip(&c.ride.points).map(|(s, p)| (s.s_m, p.normal_g)).unzip();
    let mut worst: f64 = 0.0;
    for (st, p) in d.best.path.stations.iter().zip(&d.best.ride.points) {
        let i = cs.partition_point(|&s| s <= st.s_m).clamp(1, cs.len() - 1);
        let f = ((st.s_m - cs[i - 1]) / (cs[i] - cs[i - 1])).clamp(0.0, 1.0);
        let n = cn[i - 1] + f * (cn[i] - cn[i - 1]);
        worst = worst.max((n - p.normal_g).abs());
    }
    worst
}

fn write_points(file: &Path, pts: impl Iterator<Item = (f64, f64, f64)>) {
    let mut text = String::from("x_m,y_m,z_m\n");
    for (x, y, z) in pts {
        text.push_str(&format!("{x:.9},{y:.9},{z:.9}\n"));
    }
    std::fs::write(file, text).unwrap();
}

/// Issue floor: design → heartline CSV → check gives the design's loads within 0.05 g; and the
/// rail points (heartline offset by the heartline height) give them too.
#[test]
fn csv_round_trip_reproduces_the_design_loads() {
    let d = demo();
    let dir = tempfile::tempdir().unwrap();
    let heart = dir.path().join("heart.csv");
    write_points(&heart, d.best.path.stations.iter().map(|s| (s.heartline_m.x, s.heartline_m.y, s.heartline_m.z)));
    let c = check_file(&d, &heart, None, PointsAre::Heartline);
    let w = worst_load_difference(&d, &c);
    eprintln!("heartline CSV round trip: worst |Δn| = {w:.4} g; peak {:.4} vs {:.4} g", c.summary.peak_normal_g, d.best.summary.peak_normal_g);
    assert!(w < 0.05, "worst {w} g");
    assert!((c.summary.loop_height_m - d.best.summary.loop_height_m).abs() < 0.01);
    let rail = dir.path().join("rail.csv");
    write_points(&rail, d.best.path.stations.iter().map(|s| (s.rail_m.x, s.rail_m.y, s.rail_m.z)));
    let c = check_file(&d, &rail, None, PointsAre::Rail);
    let w = worst_load_difference(&d, &c);
    eprintln!("rail CSV round trip: worst |Δn| = {w:.4} g");
    assert!(w < 0.05, "worst {w} g");
    assert!((c.summary.rail_height_m - d.best.summary.rail_height_m).abs() < 0.01);
}

/// Issue floor: design → DXF (the exporter's LW-RAIL and LW-HEARTLINE 3D polylines) → check.
#[test]
fn dxf_round_trip_reproduces_the_design_loads() {
    use loopwright::export::dxf::{LAYER_HEARTLINE, LAYER_RAIL, dxf_bytes};
    let d = demo();
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("loop.dxf");
    std::fs::write(&file, dxf_bytes(&d).unwrap()).unwrap();
    for (layer, kind) in [(LAYER_RAIL, PointsAre::Rail), (LAYER_HEARTLINE, PointsAre::Heartline)] {
        let c = check_file(&d, &file, Some(layer), kind);
        let w = worst_load_difference(&d, &c);
        eprintln!("DXF {layer} round trip: worst |Δn| = {w:.4} g");
        assert!(w < 0.05, "{layer}: worst {w} g");
    }
}

/// Our smoothing spline against scipy's make_smoothing_spline for the same λ (same criterion):
/// values, slopes and second derivatives agree to 1e-7 relative.
#[test]
fn smoothing_spline_matches_scipy() {
    let n = 60;
    let t: Vec<f64> = (0..n).map(|i| i as f64 * 0.37 + 0.05 * ((i * 7 % 5) as f64)).collect();
    let y: Vec<f64> = t.iter().enumerate().map(|(i, &x)| (0.4 * x).sin() * 3.0 + 0.02 * (((i * 13) % 7) as f64 - 3.0)).collect();
    let dir = tempfile::tempdir().unwrap();
    let (data, ours) = (dir.path().join("data.csv"), dir.path().join("ours.csv"));
    std::fs::write(&data, t.iter().zip(&y).map(|(a, b)| format!("{a:.17},{b:.17}\n")).collect::<String>()).unwrap();
    for lam in ["0.01", "3.0"] {
        let s = SmoothingSpline::fit(&t, &y, lam.parse().unwrap());
        let mut rows = String::new();
        for k in 0..200 {
            let x = t[0] + (t[n - 1] - t[0]) * k as f64 / 199.0;
            let [f, df, ddf] = s.eval(x);
            rows.push_str(&format!("{x:.17},{f:.17},{df:.17},{ddf:.17}\n"));
        }
        std::fs::write(&ours, rows).unwrap();
        let out = common::python("smoothing_spline_check.py", &[&data], &[lam, ours.to_str().unwrap()]);
        assert!(out.contains("worst"), "{out}");
    }
}
