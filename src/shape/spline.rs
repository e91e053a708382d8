//! The variable-radius loop: curvature a smooth cubic spline of arc length.
//!
//! Over the first half of the loop, u = s/L in [0, ½], the curvature relative to the top is a
//! cubic spline through (0, 0), (⅛, a), (¼, b), (⅜, c), (½, 1): natural (zero second derivative)
//! at entry, slope `d` = df/du at the top. The second half mirrors the first, so the loop is
//! symmetric. κ = f(u)/R, and the length follows from the 2π turn: L = 2πR / ∫₀¹ f du. Shape
//! parameters `a, b, c` are the control values and `d` the top slope.
//!
//! With d = 0 the curvature is smooth (C²) over the top. A free top slope lets the family make a
//! curvature peak at the top, which the teardrop's double spiral is: f(u) = 2u (a = ¼, b = ½,
//! c = ¾, d = 2) is exactly the clothoid family with spiral fraction 1, so the variable-radius
//! family contains the tallest teardrop of most briefs instead of only approaching it.

use super::{CurvatureSegment, ShapeError, ShapeFamily};
use crate::brief::ShapeKind;
use crate::numeric::{
    cubic_integral, cubic_pieces, cubic_second, cubic_slope, cubic_value, solve_tridiagonal,
};
use std::f64::consts::PI;

/// Variable-radius spline loop.
#[derive(Debug, Clone, Copy, Default)]
pub struct Spline;

/// Width of each of the four spline intervals over the half loop, in u.
const H: f64 = 0.125;

/// Cubic spline through `y` at u = 0, ⅛, ¼, ⅜, ½: natural at the first knot, slope `end_slope` at
/// the last. Returns the per-interval coefficients in the local variable (u − uᵢ).
fn half_spline(y: [f64; 5], end_slope: f64) -> [[f64; 4]; 4] {
    let h = H;
    // Unknown second derivatives M1..M4 (M0 = 0, natural). Rows 1–3 are the standard continuity
    // equations h·M(i−1) + 4h·M(i) + h·M(i+1) = 6(y(i+1) − 2y(i) + y(i−1))/h; the last row imposes
    // the end slope: (y4 − y3)/h + h·(2·M4 + M3)/6 = d. The system is tridiagonal.
    let sub = [0.0, h, h, h / 6.0];
    let diag = [4.0 * h, 4.0 * h, 4.0 * h, 2.0 * h / 6.0];
    let sup = [h, h, h, 0.0];
    let mut rhs = [0.0f64; 4];
    for i in 1..=3 {
        rhs[i - 1] = 6.0 * (y[i + 1] - 2.0 * y[i] + y[i - 1]) / h;
    }
    rhs[3] = end_slope - (y[4] - y[3]) / h;
    let m = solve_tridiagonal(&sub, &diag, &sup, &rhs);
    let mm = [0.0, m[0], m[1], m[2], m[3]];
    let pieces = cubic_pieces(&[h; 4], &y, &mm);
    [pieces[0], pieces[1], pieces[2], pieces[3]]
}

impl ShapeFamily for Spline {
    fn kind(&self) -> ShapeKind {
        ShapeKind::Spline
    }
    fn shape_labels(&self) -> &'static [&'static str] {
        &["control_a", "control_b", "control_c", "top_slope"]
    }
    fn shape_bounds(&self) -> &'static [(f64, f64)] {
        // The top slope spans a curvature dip at the top (negative), the smooth top (0) and peaks
        // up to twice the double spiral's slope (2).
        &[(0.02, 1.5), (0.05, 1.5), (0.1, 1.5), (-2.0, 4.0)]
    }
    fn default_shape(&self) -> Vec<f64> {
        // The double spiral (module docs): the tallest teardrop of many briefs, so the search
        // starts no worse than it.
        vec![0.25, 0.5, 0.75, 2.0]
    }
    fn loop_segments(
        &self,
        shape: &[f64],
        top_radius_m: f64,
    ) -> Result<Vec<CurvatureSegment>, ShapeError> {
        let y = [0.0, shape[0], shape[1], shape[2], 1.0];
        let pieces = half_spline(y, shape[3]);
        // ∫ over the half loop in u, exact for cubics; the whole loop doubles it.
        let h = H;
        let half_area: f64 = pieces.iter().map(|c| cubic_integral(c, h)).sum();
        // Curvature must stay non-negative so the loop turns one way; sample densely to check.
        for c in &pieces {
            for k in 0..=40 {
                let t = h * k as f64 / 40.0;
                if cubic_value(c, t) < -1e-12 {
                    return Err(ShapeError {
                        family: "spline",
                        message: format!("control values {shape:?} make the curvature negative"),
                    });
                }
            }
        }
        let area = 2.0 * half_area;
        let length_m = 2.0 * PI * top_radius_m / area;
        let r = top_radius_m;
        // Convert each piece from u to arc length: u = s/L, so the k-th coefficient scales by 1/Lᵏ.
        let scale = |c: [f64; 4]| {
            [
                c[0] / r,
                c[1] / (r * length_m),
                c[2] / (r * length_m.powi(2)),
                c[3] / (r * length_m.powi(3)),
            ]
        };
        let seg_m = h * length_m;
        let mut segs: Vec<CurvatureSegment> = pieces
            .iter()
            .map(|&c| CurvatureSegment::cubic(seg_m, scale(c)))
            .collect();
        // Mirror: piece i of the second half is piece (3 − i) run backwards. For p(t) on [0, h]
        // run backwards, q(t) = p(h − t); expand the polynomial in t.
        for c in pieces.iter().rev() {
            let q = [
                cubic_value(c, h),
                -cubic_slope(c, h),
                cubic_second(c, h) / 2.0,
                -c[3],
            ];
            segs.push(CurvatureSegment::cubic(seg_m, scale(q)));
        }
        Ok(segs)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The spline must interpolate its control values, be natural at entry and flat at the top:
    // the defining conditions of a cubic spline (de Boor, "A Practical Guide to Splines", ch. IV).
    #[test]
    fn spline_meets_its_defining_conditions() {
        let y = [0.0, 0.3, 0.6, 0.9, 1.0];
        let p = half_spline(y, 0.0);
        let h = H;
        let ev = |c: [f64; 4], t: f64| cubic_value(&c, t);
        let d1 = |c: [f64; 4], t: f64| cubic_slope(&c, t);
        let d2 = |c: [f64; 4], t: f64| cubic_second(&c, t);
        for i in 0..4 {
            assert!((ev(p[i], 0.0) - y[i]).abs() < 1e-12);
            assert!((ev(p[i], h) - y[i + 1]).abs() < 1e-12);
        }
        for i in 0..3 {
            assert!((d1(p[i], h) - d1(p[i + 1], 0.0)).abs() < 1e-9);
            assert!((d2(p[i], h) - d2(p[i + 1], 0.0)).abs() < 1e-9);
        }
        assert!(d2(p[0], 0.0).abs() < 1e-12);
        assert!(d1(p[3], h).abs() < 1e-9);
        // With a top slope the end condition is that slope.
        let p = half_spline(y, 1.7);
        assert!((d1(p[3], h) - 1.7).abs() < 1e-9);
        assert!(d2(p[0], 0.0).abs() < 1e-12);
    }

    // f(u) = 2u is a cubic spline (a line) meeting every condition with a = ¼, b = ½, c = ¾,
    // d = 2, so the family reproduces the double spiral exactly: the clothoid family with spiral
    // fraction 1, whose curvature rises linearly from 0 at entry to 1/R at the top
    // (clothoid.rs; an Euler spiral, curvature linear in arc length by definition).
    #[test]
    fn spline_contains_the_double_spiral() {
        let r = 6.0;
        let sp = Spline.curvature(&[0.25, 0.5, 0.75, 2.0], r).unwrap();
        let cl = super::super::Clothoid.curvature(&[1.0], r).unwrap();
        assert!((sp.length_m() - cl.length_m()).abs() < 1e-9);
        for i in 0..=100 {
            let s = cl.length_m() * i as f64 / 100.0;
            assert!(
                (sp.curvature_1_m(s) - cl.curvature_1_m(s)).abs() < 1e-9,
                "{s}"
            );
        }
    }
}
