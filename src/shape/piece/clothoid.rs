//! Clothoid (Euler spiral): κ linear in arc length, displacement by the Fresnel integrals.
//!
//! With κ(τ) = k0 + c·τ, θ(τ) = θ0 + k0·τ + c·τ²/2; complete the square: θ = φ + sgn(c)·(π/2)·w²,
//! where a = √(|c|/π), w = a(τ + k0/c), φ = θ0 − k0²/(2c). Then ∫₀ᵗ e^{iθ} dτ =
//! (e^{iφ}/a)·[ΔC + i·sgn(c)·ΔS] with C, S the Fresnel integrals of A&S 7.3.1 between w(0) and
//! w(t), from the `fresnel` crate (a translation of Cephes). Where |w| passes
//! [`Accuracy::max_fresnel_arg`] (nearly constant curvature), or c = 0, the piece is integrated by
//! quadrature as the polynomial it also is.

use std::f64::consts::PI;

use super::cubic::quadrature_displacement;
use super::{Accuracy, CurvePiece, PieceWalk};

/// A piece whose curvature goes linearly from `start_1_m` at a rate of `slope_1_m2`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Clothoid {
    pub length_m: f64,
    /// κ at the piece start, 1/m.
    pub start_1_m: f64,
    /// dκ/ds, 1/m².
    pub slope_1_m2: f64,
}

/// [`Clothoid`] from one start pitch: the Fresnel integrals and phase at the start, worked out once.
#[derive(Debug, Clone)]
pub struct ClothoidWalk {
    clothoid: Clothoid,
    theta0: f64,
    fresnel: Option<FresnelStart>,
    accuracy: Accuracy,
}

/// The station-independent terms of the Fresnel form (see the module docs).
#[derive(Debug, Clone, Copy)]
struct FresnelStart {
    c: f64,
    k0: f64,
    a: f64,
    s0: f64,
    c0: f64,
    sp: f64,
    cp: f64,
    max_arg: f64,
}

impl FresnelStart {
    fn new(theta0: f64, k0: f64, c: f64, max_arg: f64) -> Option<Self> {
        if c == 0.0 {
            return None;
        }
        let a = (c.abs() / PI).sqrt();
        let w0 = a * k0 / c;
        if w0.abs() > max_arg {
            return None;
        }
        let (s0, c0) = fresnel::fresnl(w0);
        let phi = theta0 - k0 * k0 / (2.0 * c);
        let (sp, cp) = phi.sin_cos();
        Some(Self {
            c,
            k0,
            a,
            s0,
            c0,
            sp,
            cp,
            max_arg,
        })
    }

    fn displacement(&self, t: f64) -> Option<(f64, f64)> {
        let w1 = self.a * (t + self.k0 / self.c);
        if w1.abs() > self.max_arg {
            return None;
        }
        let (s1, c1) = fresnel::fresnl(w1);
        let (dc, ds) = (c1 - self.c0, (s1 - self.s0) * self.c.signum());
        let (sp, cp, a) = (self.sp, self.cp, self.a);
        Some(((cp * dc - sp * ds) / a, (sp * dc + cp * ds) / a))
    }
}

impl Clothoid {
    /// The coefficients of κ as a cubic, for the quadrature fallback.
    fn coeffs(&self) -> [f64; 4] {
        [self.start_1_m, self.slope_1_m2, 0.0, 0.0]
    }

    /// Displacement from the start to `t` by the Fresnel integrals alone; `None` where that form
    /// would lose precision (see the module docs) and [`CurvePiece::displacement`] uses quadrature.
    pub fn fresnel_displacement(
        &self,
        theta0: f64,
        t: f64,
        accuracy: Accuracy,
    ) -> Option<(f64, f64)> {
        FresnelStart::new(
            theta0,
            self.start_1_m,
            self.slope_1_m2,
            accuracy.max_fresnel_arg,
        )?
        .displacement(t)
    }
}

impl CurvePiece for Clothoid {
    type Walk = ClothoidWalk;
    fn length_m(&self) -> f64 {
        self.length_m
    }
    fn curvature_1_m(&self, t: f64) -> f64 {
        self.start_1_m + t * self.slope_1_m2
    }
    fn turn_rad(&self, t: f64) -> f64 {
        t * (self.start_1_m + t * (self.slope_1_m2 / 2.0))
    }
    fn max_abs_curvature_1_m(&self) -> f64 {
        // Linear: the extremes are at the ends.
        let ends = [self.curvature_1_m(0.0), self.curvature_1_m(self.length_m)];
        ends[0].abs().max(ends[1].abs())
    }
    fn min_curvature_1_m(&self) -> f64 {
        self.curvature_1_m(0.0)
            .min(self.curvature_1_m(self.length_m))
    }
    fn walk(&self, theta0: f64, accuracy: Accuracy) -> ClothoidWalk {
        ClothoidWalk {
            clothoid: *self,
            theta0,
            fresnel: FresnelStart::new(
                theta0,
                self.start_1_m,
                self.slope_1_m2,
                accuracy.max_fresnel_arg,
            ),
            accuracy,
        }
    }
}

impl PieceWalk for ClothoidWalk {
    fn to(&mut self, t: f64) -> (f64, f64) {
        self.fresnel
            .as_ref()
            .and_then(|f| f.displacement(t))
            .unwrap_or_else(|| {
                let c = self.clothoid.coeffs();
                quadrature_displacement(&c, self.theta0, 0.0, t, self.accuracy)
            })
    }
    fn end(&mut self) -> (f64, f64) {
        self.to(self.clothoid.length_m)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// (x, C(x), S(x)) from mpmath at 30 digits (tests/py/gen_fresnel.py).
    fn mpmath_fresnel() -> Vec<[f64; 3]> {
        include_str!("../../../tests/reference/fresnel_mpmath.csv")
            .lines()
            .skip(1)
            .map(|l| {
                let v: Vec<f64> = l.split(',').map(|x| x.parse().unwrap()).collect();
                [v[0], v[1], v[2]]
            })
            .collect()
    }

    // A clothoid from zero curvature with scale A (κ = s/A²) is, by A&S 7.3.1 with the
    // substitution x = s/(A√π), at A√π·(C(x), S(x)): checked against mpmath's C and S, both by the
    // Fresnel form and (with the Fresnel form switched off) by the quadrature fallback.
    #[test]
    fn clothoid_matches_the_mpmath_fresnel_integrals() {
        let a: f64 = 12.0;
        let scale = a * PI.sqrt();
        let quadrature_only = Accuracy {
            max_fresnel_arg: -1.0,
            ..Accuracy::DEFAULT
        };
        let rows = mpmath_fresnel();
        assert!(rows.len() > 150);
        for [x, c_ref, s_ref] in rows.into_iter().filter(|r| r[0] <= 4.0) {
            let s = x * scale;
            let spiral = Clothoid {
                length_m: s,
                start_1_m: 0.0,
                slope_1_m2: 1.0 / (a * a),
            };
            let want = (scale * c_ref, scale * s_ref);
            let (fx, fz) = spiral
                .fresnel_displacement(0.0, s, Accuracy::DEFAULT)
                .unwrap();
            assert!(
                (fx - want.0).abs() < 1e-13 && (fz - want.1).abs() < 1e-13,
                "x = {x}"
            );
            let (qx, qz) = spiral.displacement(0.0, s, quadrature_only);
            assert!(
                (qx - want.0).abs() < 1e-12 && (qz - want.1).abs() < 1e-12,
                "x = {x}"
            );
        }
    }

    // Fresnel (closed form) and Gauss–Legendre quadrature are independent integrators of the same
    // Euler spiral; from any start pitch and curvature they must agree to near machine precision
    // (numerical analysis, no source needed).
    #[test]
    fn fresnel_and_quadrature_agree_from_any_start() {
        for &(theta0, k0, c, t) in &[
            (0.0, 0.0, 0.01, 30.0),
            (1.0, 0.1, -0.004, 25.0),
            (2.5, 0.05, 0.002, 12.0),
        ] {
            let spiral = Clothoid {
                length_m: t,
                start_1_m: k0,
                slope_1_m2: c,
            };
            let (fx, fz) = spiral
                .fresnel_displacement(theta0, t, Accuracy::DEFAULT)
                .unwrap();
            let (qx, qz) =
                quadrature_displacement(&spiral.coeffs(), theta0, 0.0, t, Accuracy::DEFAULT);
            assert!(
                (fx - qx).abs() < 1e-10 && (fz - qz).abs() < 1e-10,
                "{fx} {qx} {fz} {qz}"
            );
        }
    }

    // Nearly constant curvature (|w| past the limit) or none at all falls back to quadrature
    // rather than lose precision: the result is then the arc's (elementary geometry).
    #[test]
    fn constant_curvature_falls_back_to_quadrature() {
        let spiral = Clothoid {
            length_m: 10.0,
            start_1_m: 0.1,
            slope_1_m2: 0.0,
        };
        assert!(
            spiral
                .fresnel_displacement(0.0, 10.0, Accuracy::DEFAULT)
                .is_none()
        );
        let (x, z) = spiral.displacement(0.0, 10.0, Accuracy::DEFAULT);
        assert!(
            (x - 10.0 * 1f64.sin()).abs() < 1e-12 && (z - 10.0 * (1.0 - 1f64.cos())).abs() < 1e-12
        );
    }
}
