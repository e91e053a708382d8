//! Straight track: κ = 0, displacement t·(cos θ0, sin θ0).

use super::{Accuracy, CurvePiece, PieceWalk};

/// A straight piece.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Straight {
    pub length_m: f64,
}

/// [`Straight`] from one start pitch.
#[derive(Debug, Clone)]
pub struct StraightWalk {
    length_m: f64,
    sin0: f64,
    cos0: f64,
}

impl CurvePiece for Straight {
    type Walk = StraightWalk;
    fn length_m(&self) -> f64 {
        self.length_m
    }
    fn curvature_1_m(&self, _t: f64) -> f64 {
        0.0
    }
    fn turn_rad(&self, _t: f64) -> f64 {
        0.0
    }
    fn max_abs_curvature_1_m(&self) -> f64 {
        0.0
    }
    fn min_curvature_1_m(&self) -> f64 {
        0.0
    }
    fn walk(&self, theta0: f64, _accuracy: Accuracy) -> StraightWalk {
        StraightWalk {
            length_m: self.length_m,
            sin0: theta0.sin(),
            cos0: theta0.cos(),
        }
    }
}

impl PieceWalk for StraightWalk {
    fn to(&mut self, t: f64) -> (f64, f64) {
        (t * self.cos0, t * self.sin0)
    }
    fn end(&mut self) -> (f64, f64) {
        self.to(self.length_m)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shape::piece::Cubic;

    // Straight track at 30° climbs 3 m in 6 m (sin 30° = ½, elementary trigonometry); the
    // quadrature of a cubic with all coefficients zero, an independent integrator, agrees.
    #[test]
    fn straight_goes_along_its_pitch() {
        let theta0 = 30f64.to_radians();
        let s = Straight { length_m: 6.0 };
        let (dx, dz) = s.displacement(theta0, 6.0, Accuracy::DEFAULT);
        assert!((dz - 3.0).abs() < 1e-15 && (dx - 6.0 * 0.75f64.sqrt()).abs() < 1e-15);
        let flat = Cubic {
            length_m: 6.0,
            coeffs: [0.0; 4],
        };
        let (qx, qz) = flat.displacement(theta0, 6.0, Accuracy::DEFAULT);
        assert!((qx - dx).abs() < 1e-14 && (qz - dz).abs() < 1e-14);
    }
}
