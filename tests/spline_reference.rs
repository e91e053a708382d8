//! The cubic splines of `numeric` and of the spline shape family, checked against scipy's
//! `CubicSpline` (PyPI), an independent implementation of the same definitions (de Boor, "A
//! Practical Guide to Splines", ch. IV).

mod common;

use loopwright::brief::ShapeKind;
use loopwright::numeric::{PiecewiseCubic, natural_spline};
use loopwright::shape::family;
use std::f64::consts::PI;

/// Write "t value" lines and run the scipy check with `end` conditions and tolerance `tol`.
fn check(points: &[(f64, f64)], knots: &[f64], values: &[f64], end: &str, tol: f64) {
    let grid: String = points
        .iter()
        .map(|(t, v)| format!("{t} {v:.17e}\n"))
        .collect();
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("grid.txt");
    std::fs::write(&f, grid).unwrap();
    let join = |v: &[f64]| {
        v.iter()
            .map(|x| format!("{x:.17e}"))
            .collect::<Vec<_>>()
            .join(",")
    };
    let out = common::python(
        "cubic_spline_check.py",
        &[&f],
        &[&join(knots), &join(values), end, &tol.to_string()],
    );
    assert!(out.contains("worst"), "{out}");
    eprintln!("{out}");
}

#[test]
fn natural_spline_matches_scipy() {
    let knots = [0.0, 0.4, 1.1, 1.5, 2.6, 3.0, 4.2];
    let values = [1.0, -0.5, 0.8, 2.2, 0.3, -1.1, 0.6];
    let s = PiecewiseCubic::new(knots.to_vec(), natural_spline(&knots, &values));
    let points: Vec<(f64, f64)> = (0..=84)
        .map(|i| {
            let t = 4.2 * i as f64 / 84.0;
            (t, s.value(t))
        })
        .collect();
    check(&points, &knots, &values, "natural", 1e-12);
}

// The spline family's curvature over the first half of the loop is κ(s)·R = f(s/L), f the cubic
// spline through (0, 0), (⅛, a), (¼, b), (⅜, c), (½, 1), natural at entry and flat at the top
// (shape/spline.rs); L follows from the 2π turn.
#[test]
fn spline_family_curvature_matches_scipy() {
    let shape = [0.3, 0.75, 0.9, 0.0];
    let r = 9.0;
    let p = family(ShapeKind::Spline)
        .unwrap()
        .curvature(&shape, r)
        .unwrap();
    let len = p.length_m();
    assert!((p.pitch_rad(len) - 2.0 * PI).abs() < 1e-12);
    let points: Vec<(f64, f64)> = (0..=100)
        .map(|i| {
            let u = 0.5 * i as f64 / 100.0;
            (u, p.curvature_1_m(u * len) * r)
        })
        .collect();
    let knots = [0.0, 0.125, 0.25, 0.375, 0.5];
    let values = [0.0, shape[0], shape[1], shape[2], 1.0];
    check(&points, &knots, &values, "natural-flat", 1e-12);
}
