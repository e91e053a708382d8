//! Cubic curvature: κ a cubic polynomial of arc length, displacement by Gauss–Legendre quadrature.
//!
//! [`quadrature_displacement`] is also the fallback of the closed forms where they would lose
//! precision, on their own (lower-degree) polynomial.

use super::{Accuracy, CurvePiece, PieceWalk};
use crate::numeric::{GL4, GL8, cubic_integral, cubic_value};

/// Most quadrature sub-intervals in one call: a bound on the work hostile input can ask for.
const MAX_PARTS: usize = 100_000;

/// A piece with κ(t) = c0 + c1·t + c2·t² + c3·t³.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cubic {
    pub length_m: f64,
    /// Coefficients in 1/m, 1/m², 1/m³, 1/m⁴.
    pub coeffs: [f64; 4],
}

/// [`Cubic`] from one start pitch: quadrature from station to station (from the piece start each
/// time would cost O(n²) over n stations), summing as it goes.
#[derive(Debug, Clone)]
pub struct CubicWalk {
    cubic: Cubic,
    theta0: f64,
    accuracy: Accuracy,
    at_m: f64,
    sum: (f64, f64),
}

impl Cubic {
    /// κ at the ends and wherever the slope 3c3·t² + 2c2·t + c1 vanishes inside: every
    /// candidate for an extreme of κ on the piece.
    fn extremes(&self) -> impl Iterator<Item = f64> + '_ {
        let len = self.length_m;
        let [_, c1, c2, c3] = self.coeffs;
        let (a, b, c) = (3.0 * c3, 2.0 * c2, c1);
        let mut roots = [f64::NAN; 2];
        if a.abs() > 1e-300 {
            let disc = b * b - 4.0 * a * c;
            if disc >= 0.0 {
                roots = [
                    (-b + disc.sqrt()) / (2.0 * a),
                    (-b - disc.sqrt()) / (2.0 * a),
                ];
            }
        } else if b.abs() > 1e-300 {
            roots[0] = -c / b;
        }
        // NaN (no root) fails the range test.
        let inside = roots.into_iter().filter(move |&r| r > 0.0 && r < len);
        [0.0, len]
            .into_iter()
            .chain(inside)
            .map(|t| self.curvature_1_m(t))
    }
}

impl CurvePiece for Cubic {
    type Walk = CubicWalk;
    fn length_m(&self) -> f64 {
        self.length_m
    }
    fn curvature_1_m(&self, t: f64) -> f64 {
        cubic_value(&self.coeffs, t)
    }
    fn turn_rad(&self, t: f64) -> f64 {
        cubic_integral(&self.coeffs, t)
    }
    fn max_abs_curvature_1_m(&self) -> f64 {
        self.extremes().fold(0.0, |m, k| m.max(k.abs()))
    }
    fn min_curvature_1_m(&self) -> f64 {
        self.extremes().fold(f64::INFINITY, f64::min)
    }
    fn walk(&self, theta0: f64, accuracy: Accuracy) -> CubicWalk {
        CubicWalk {
            cubic: *self,
            theta0,
            accuracy,
            at_m: 0.0,
            sum: (0.0, 0.0),
        }
    }
}

impl PieceWalk for CubicWalk {
    fn to(&mut self, t: f64) -> (f64, f64) {
        let (dx, dz) =
            quadrature_displacement(&self.cubic.coeffs, self.theta0, self.at_m, t, self.accuracy);
        self.sum = (self.sum.0 + dx, self.sum.1 + dz);
        self.at_m = t;
        self.sum
    }
    fn end(&mut self) -> (f64, f64) {
        // The last station t = L·n/n may differ from L by an ulp or two.
        let len = self.cubic.length_m;
        if (len - self.at_m).abs() <= 4.0 * f64::EPSILON * len {
            self.sum
        } else {
            self.to(len)
        }
    }
}

/// Displacement from local `t0` to `t1` along κ = the cubic `coeffs`, from pitch `theta0` at
/// t = 0, by Gauss–Legendre quadrature on sub-intervals that turn the tangent by at most
/// [`Accuracy::max_turn_rad`] and are at most [`Accuracy::max_step_m`] long (4 points where they
/// are coarse enough, else 8; see [`Accuracy::DEFAULT`] for the error bound).
pub fn quadrature_displacement(
    coeffs: &[f64; 4],
    theta0: f64,
    t0: f64,
    t1: f64,
    accuracy: Accuracy,
) -> (f64, f64) {
    let t = t0.abs().max(t1.abs());
    let kappa_bound = cubic_value(&coeffs.map(f64::abs), t);
    let len = (t1 - t0).abs();
    let parts =
        ceil_to_usize((len * kappa_bound / accuracy.max_turn_rad).max(len / accuracy.max_step_m))
            .clamp(1, MAX_PARTS);
    let h = (t1 - t0) / parts as f64;
    let coarse =
        h.abs() * kappa_bound <= accuracy.coarse_turn_rad && h.abs() <= accuracy.coarse_step_m;
    let rule: &[(f64, f64)] = if coarse { &GL4 } else { &GL8 };
    let (mut dx, mut dz) = (0.0, 0.0);
    // Pitches first, then their sines and cosines, then the sums (in node order, as always): the
    // library's sincos clobbers every vector register, so nothing else stays live across it.
    let mut pitch = [0.0; 8];
    let mut sin_cos = [(0.0, 0.0); 8];
    for p in 0..parts {
        let a = t0 + h * p as f64;
        for (th, &(node, _)) in pitch.iter_mut().zip(rule) {
            let tau = a + 0.5 * h * (node + 1.0);
            *th = theta0 + cubic_integral(coeffs, tau);
        }
        for (sc, th) in sin_cos.iter_mut().zip(&pitch[..rule.len()]) {
            *sc = th.sin_cos();
        }
        for (&(_, w), &(sn, cs)) in rule.iter().zip(&sin_cos) {
            dx += 0.5 * h * w * cs;
            dz += 0.5 * h * w * sn;
        }
    }
    (dx, dz)
}

/// ⌈x⌉ as a count, exactly as `x.ceil() as usize` (NaN and negatives give 0, huge values
/// saturate) without the library call `ceil` is on a baseline x86-64 target.
fn ceil_to_usize(x: f64) -> usize {
    let i = x as usize;
    if (i as f64) < x {
        i.saturating_add(1)
    } else {
        i
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shape::piece::{Arc, Clothoid};

    // A cubic with only c0 non-zero is an arc: its quadrature must match the arc's closed form
    // (elementary geometry), walked station by station as the geometry stage does.
    #[test]
    fn cubic_with_zero_slope_is_an_arc() {
        let (len, k, theta0) = (30.0, 1.0 / 9.0, 0.3);
        let arc = Arc {
            length_m: len,
            curvature_1_m: k,
        };
        let cubic = Cubic {
            length_m: len,
            coeffs: [k, 0.0, 0.0, 0.0],
        };
        let mut walk = cubic.walk(theta0, Accuracy::DEFAULT);
        for j in 1..=60 {
            let t = len * j as f64 / 60.0;
            let (x, z) = walk.to(t);
            let (ax, az) = arc.displacement(theta0, t, Accuracy::DEFAULT);
            assert!((x - ax).abs() < 1e-12 && (z - az).abs() < 1e-12, "t = {t}");
        }
        let (ex, ez) = walk.end();
        let (ax, az) = arc.displacement(theta0, len, Accuracy::DEFAULT);
        assert!((ex - ax).abs() < 1e-12 && (ez - az).abs() < 1e-12);
    }

    // A cubic with c2 = c3 = 0 is a clothoid: the walk by quadrature must match the Fresnel form
    // (A&S 7.3.1; the Fresnel form itself is checked against mpmath in clothoid.rs).
    #[test]
    fn cubic_with_linear_curvature_is_a_clothoid() {
        let (len, k0, c, theta0) = (40.0, 0.02, 0.004, -0.2);
        let spiral = Clothoid {
            length_m: len,
            start_1_m: k0,
            slope_1_m2: c,
        };
        let cubic = Cubic {
            length_m: len,
            coeffs: [k0, c, 0.0, 0.0],
        };
        let mut walk = cubic.walk(theta0, Accuracy::DEFAULT);
        for j in 0..=25 {
            let t = len * j as f64 / 25.0;
            let (x, z) = walk.to(t);
            let (fx, fz) = spiral
                .fresnel_displacement(theta0, t, Accuracy::DEFAULT)
                .unwrap();
            assert!((x - fx).abs() < 1e-11 && (z - fz).abs() < 1e-11, "t = {t}");
        }
    }

    // The integer ceiling must be `f64::ceil` (the standard library's) cast to a count.
    #[test]
    fn integer_ceiling_is_the_ceiling() {
        let probes = [
            0.0,
            -0.0,
            0.3,
            1.0,
            1.0 + f64::EPSILON,
            2.5,
            1e15 + 0.5,
            4503599627370497.0,
            1e20,
            -0.7,
            -3.0,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            1e-300,
        ];
        for x in probes {
            assert_eq!(ceil_to_usize(x), x.ceil() as usize, "{x}");
        }
    }

    // κ(t) = 2t − t² on [0, 3] peaks at t = 1 with κ = 1 inside, but |κ| is largest at the end,
    // |κ(3)| = 3; on [0, 2] the interior peak wins (calculus: κ' = 2 − 2t).
    #[test]
    fn largest_curvature_finds_interior_extremes() {
        let mut p = Cubic {
            length_m: 3.0,
            coeffs: [0.0, 2.0, -1.0, 0.0],
        };
        assert_eq!(p.max_abs_curvature_1_m(), 3.0);
        // Signed, the least κ is the end value −3 on [0, 3] and κ(0) = 0 on [0, 2].
        assert_eq!(p.min_curvature_1_m(), -3.0);
        p.length_m = 2.0;
        assert_eq!(p.max_abs_curvature_1_m(), 1.0);
        assert_eq!(p.min_curvature_1_m(), 0.0);
        // With a cubic term: κ = t³ − 3t has its extremes at t = ±1 (κ(1) = −2) on [0, 1.5].
        let q = Cubic {
            length_m: 1.5,
            coeffs: [0.0, -3.0, 0.0, 1.0],
        };
        assert!((q.max_abs_curvature_1_m() - 2.0).abs() < 1e-15);
        assert!((q.min_curvature_1_m() + 2.0).abs() < 1e-15);
    }
}
