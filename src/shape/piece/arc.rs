//! Circular arc: κ constant, displacement ((sin θ − sin θ0)/κ, (cos θ0 − cos θ)/κ) with
//! θ = θ0 + κt.

use super::cubic::quadrature_displacement;
use super::{Accuracy, CurvePiece, PieceWalk};

/// Below this |κ| the closed form would divide by (almost) zero; the arc is integrated as the
/// (nearly straight) polynomial it also is.
const MIN_CURVATURE_1_M: f64 = 1e-300;

/// A piece of constant curvature (positive turning towards the rider's head).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Arc {
    pub length_m: f64,
    pub curvature_1_m: f64,
}

/// [`Arc`] from one start pitch.
#[derive(Debug, Clone)]
pub struct ArcWalk {
    arc: Arc,
    theta0: f64,
    sin0: f64,
    cos0: f64,
    accuracy: Accuracy,
}

impl CurvePiece for Arc {
    type Walk = ArcWalk;
    fn length_m(&self) -> f64 {
        self.length_m
    }
    fn curvature_1_m(&self, _t: f64) -> f64 {
        self.curvature_1_m
    }
    fn turn_rad(&self, t: f64) -> f64 {
        t * self.curvature_1_m
    }
    fn max_abs_curvature_1_m(&self) -> f64 {
        self.curvature_1_m.abs()
    }
    fn min_curvature_1_m(&self) -> f64 {
        self.curvature_1_m
    }
    fn walk(&self, theta0: f64, accuracy: Accuracy) -> ArcWalk {
        ArcWalk {
            arc: *self,
            theta0,
            sin0: theta0.sin(),
            cos0: theta0.cos(),
            accuracy,
        }
    }
}

impl PieceWalk for ArcWalk {
    fn to(&mut self, t: f64) -> (f64, f64) {
        let k = self.arc.curvature_1_m;
        if k.abs() > MIN_CURVATURE_1_M {
            let th = self.theta0 + k * t;
            ((th.sin() - self.sin0) / k, (self.cos0 - th.cos()) / k)
        } else {
            quadrature_displacement(&[k, 0.0, 0.0, 0.0], self.theta0, 0.0, t, self.accuracy)
        }
    }
    fn end(&mut self) -> (f64, f64) {
        self.to(self.arc.length_m)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shape::piece::Cubic;

    // From level, a circle of radius R turned through θ = t/R is at R(sin θ, 1 − cos θ)
    // (elementary geometry); from pitch θ0 the same chord is rotated by θ0. The quadrature of the
    // equal cubic (only c0 non-zero), an independent integrator, agrees too.
    #[test]
    fn arc_matches_the_circle_and_the_quadrature() {
        let r = 12.0;
        let theta0: f64 = 0.7;
        for k in [1.0 / r, -1.0 / r] {
            let arc = Arc {
                length_m: 40.0,
                curvature_1_m: k,
            };
            let as_cubic = Cubic {
                length_m: 40.0,
                coeffs: [k, 0.0, 0.0, 0.0],
            };
            for t in [0.5, 9.0, 23.0, 40.0] {
                let th = t / r;
                let (lx, lz) = (r * th.sin(), k.signum() * r * (1.0 - th.cos()));
                let want = (
                    lx * theta0.cos() - lz * theta0.sin(),
                    lx * theta0.sin() + lz * theta0.cos(),
                );
                let got = arc.displacement(theta0, t, Accuracy::DEFAULT);
                assert!((got.0 - want.0).abs() < 1e-12 && (got.1 - want.1).abs() < 1e-12);
                let q = as_cubic.displacement(theta0, t, Accuracy::DEFAULT);
                assert!((q.0 - want.0).abs() < 1e-12 && (q.1 - want.1).abs() < 1e-12);
            }
        }
    }

    // Zero curvature cannot use the closed form (it divides by κ); the fallback is straight track.
    #[test]
    fn zero_curvature_arc_is_straight() {
        let arc = Arc {
            length_m: 5.0,
            curvature_1_m: 0.0,
        };
        let (dx, dz) = arc.displacement(0.0, 5.0, Accuracy::DEFAULT);
        assert!((dx - 5.0).abs() < 1e-14 && dz.abs() < 1e-15, "{dx} {dz}");
    }
}
