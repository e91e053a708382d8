//! Curve pieces: the kinds of piece a curvature profile is made of, and how each one integrates
//! into position.
//!
//! In the spirit of kurbo's `ParamCurve`, `ParamCurveArclen` and `ParamCurveCurvature`, every
//! piece type implements one small trait, [`CurvePiece`], with its own maths in its own file:
//! [`Straight`] and [`Arc`] in closed form, [`Clothoid`] (κ linear in arc length) by the Fresnel
//! integrals, [`Cubic`] (κ a cubic of arc length) by Gauss–Legendre quadrature. The parameter is
//! always the local arc length t ∈ [0, length], so a piece needs no reparametrisation.
//!
//! A piece is planar: starting at pitch θ0 (tangent angle above the entry direction), its pitch is
//! θ(t) = θ0 + turn(t) with turn(t) = ∫₀ᵗ κ, and its displacement is ∫₀ᵗ (cos θ, sin θ) dτ along
//! (x, z). How closely that is integrated is the caller's choice, an [`Accuracy`]; every command
//! uses [`Accuracy::DEFAULT`]. [`CurvePiece::walk`] works out the station-independent terms once
//! per piece (the Fresnel integrals and phase at the start, sin θ0 and cos θ0) and then gives the
//! displacement at each station; quadrature pieces continue from the previous station.
//!
//! ```
//! use loopwright::shape::piece::{Accuracy, Arc, CurvePiece};
//! // A quarter of a 10 m circle from level: 10 m forward and 10 m up.
//! let quarter = Arc { length_m: 5.0 * std::f64::consts::PI, curvature_1_m: 0.1 };
//! let (dx, dz) = quarter.displacement(0.0, quarter.length_m, Accuracy::DEFAULT);
//! assert!((dx - 10.0).abs() < 1e-12 && (dz - 10.0).abs() < 1e-12);
//! assert!((quarter.turn_rad(quarter.length_m) - std::f64::consts::FRAC_PI_2).abs() < 1e-15);
//! ```

mod arc;
mod clothoid;
mod cubic;
mod straight;

pub use arc::{Arc, ArcWalk};
pub use clothoid::{Clothoid, ClothoidWalk};
pub use cubic::{Cubic, CubicWalk, quadrature_displacement};
pub use straight::{Straight, StraightWalk};

/// How closely piece displacements are integrated. The fields are today's tuned values in
/// [`Accuracy::DEFAULT`], which every command passes (its outputs are fingerprinted with it).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Accuracy {
    /// Largest tangent turn of one quadrature sub-interval, rad.
    pub max_turn_rad: f64,
    /// Longest quadrature sub-interval, m.
    pub max_step_m: f64,
    /// Sub-intervals turning at most this much (rad) and at most [`Accuracy::coarse_step_m`]
    /// long use the 4-point Gauss–Legendre rule instead of the 8-point one.
    pub coarse_turn_rad: f64,
    /// See [`Accuracy::coarse_turn_rad`], m.
    pub coarse_step_m: f64,
    /// Largest |w| (the Fresnel argument) at which a clothoid uses the Fresnel integrals; past it
    /// the differences of C and S cancel badly and quadrature takes over (negative: always).
    pub max_fresnel_arg: f64,
}

impl Accuracy {
    /// The accuracy of every command. By the Gauss–Legendre error term (A&S 25.4.30),
    /// h^(2n+1)(n!)⁴/((2n+1)((2n)!)³)·f⁽²ⁿ⁾ with f⁽²ⁿ⁾ ≈ κ²ⁿ, 8 points on sub-intervals turning at
    /// most 1 rad leave below 1e-22·h, and 4 points where the turn is at most 0.1 rad (every
    /// coarse search station) already leave below 1e-16·h, at half the cost. |w| ≤ 10 keeps the
    /// Fresnel differences to about 1e-14 m.
    pub const DEFAULT: Accuracy = Accuracy {
        max_turn_rad: 1.0,
        max_step_m: 4.0,
        coarse_turn_rad: 0.1,
        coarse_step_m: 0.5,
        max_fresnel_arg: 10.0,
    };
}

impl Default for Accuracy {
    fn default() -> Self {
        Self::DEFAULT
    }
}

/// A piece of planar curve parametrised by its own arc length t ∈ [0, `length_m`].
pub trait CurvePiece {
    /// The piece prepared for one start pitch (see [`PieceWalk`]).
    type Walk: PieceWalk;
    /// Arc length of the piece, m.
    fn length_m(&self) -> f64;
    /// Curvature κ at local arc length `t`, 1/m.
    fn curvature_1_m(&self, t: f64) -> f64;
    /// Pitch change from the piece start to `t`, ∫₀ᵗ κ, rad (exact).
    fn turn_rad(&self, t: f64) -> f64;
    /// The largest |κ| anywhere on the piece, 1/m.
    fn max_abs_curvature_1_m(&self) -> f64;
    /// The least (signed) κ anywhere on the piece, 1/m: negative where the piece bends back.
    fn min_curvature_1_m(&self) -> f64;
    /// Work out the station-independent terms for start pitch `theta0`, once per piece.
    fn walk(&self, theta0: f64, accuracy: Accuracy) -> Self::Walk;
    /// Displacement (Δx, Δz) from the piece start to `t`, starting at pitch `theta0`. For many
    /// stations on one piece use [`CurvePiece::walk`].
    fn displacement(&self, theta0: f64, t: f64, accuracy: Accuracy) -> (f64, f64) {
        self.walk(theta0, accuracy).to(t)
    }
}

/// Displacements at the stations of one piece, in increasing arc length.
pub trait PieceWalk {
    /// Displacement from the piece start to `t`; `t` must not decrease from call to call.
    fn to(&mut self, t: f64) -> (f64, f64);
    /// Displacement from the piece start to its end. Closed forms evaluate it at the length
    /// itself; a quadrature walk whose last station already is the end, to the rounding of the
    /// stations' own arithmetic, returns where it stands rather than integrate over that gap.
    fn end(&mut self) -> (f64, f64);
}

/// Any of the piece types: what a stored segment is (see [`crate::shape::CurvatureSegment::piece`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum AnyPiece {
    Straight(Straight),
    Arc(Arc),
    Clothoid(Clothoid),
    Cubic(Cubic),
}

/// The walk of [`AnyPiece`].
#[derive(Debug, Clone)]
pub enum AnyWalk {
    Straight(StraightWalk),
    Arc(ArcWalk),
    Clothoid(ClothoidWalk),
    Cubic(CubicWalk),
}

/// Apply `$body` to the piece or walk inside any variant of `$ty`, binding it to `$p`.
macro_rules! each_variant {
    ($ty:ident, $value:expr, $p:ident => $body:expr) => {
        match $value {
            $ty::Straight($p) => $body,
            $ty::Arc($p) => $body,
            $ty::Clothoid($p) => $body,
            $ty::Cubic($p) => $body,
        }
    };
}

impl CurvePiece for AnyPiece {
    type Walk = AnyWalk;
    fn length_m(&self) -> f64 {
        each_variant!(AnyPiece, self, p => p.length_m())
    }
    fn curvature_1_m(&self, t: f64) -> f64 {
        each_variant!(AnyPiece, self, p => p.curvature_1_m(t))
    }
    fn turn_rad(&self, t: f64) -> f64 {
        each_variant!(AnyPiece, self, p => p.turn_rad(t))
    }
    fn max_abs_curvature_1_m(&self) -> f64 {
        each_variant!(AnyPiece, self, p => p.max_abs_curvature_1_m())
    }
    fn min_curvature_1_m(&self) -> f64 {
        each_variant!(AnyPiece, self, p => p.min_curvature_1_m())
    }
    fn walk(&self, theta0: f64, accuracy: Accuracy) -> AnyWalk {
        match self {
            AnyPiece::Straight(p) => AnyWalk::Straight(p.walk(theta0, accuracy)),
            AnyPiece::Arc(p) => AnyWalk::Arc(p.walk(theta0, accuracy)),
            AnyPiece::Clothoid(p) => AnyWalk::Clothoid(p.walk(theta0, accuracy)),
            AnyPiece::Cubic(p) => AnyWalk::Cubic(p.walk(theta0, accuracy)),
        }
    }
}

impl PieceWalk for AnyWalk {
    fn to(&mut self, t: f64) -> (f64, f64) {
        each_variant!(AnyWalk, self, w => w.to(t))
    }
    fn end(&mut self) -> (f64, f64) {
        each_variant!(AnyWalk, self, w => w.end())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::GL8;
    use crate::shape::CurvatureSegment;

    /// ∫₀ᵗ κ by 8-point Gauss–Legendre on 16 sub-intervals: exact (to rounding) for κ of degree ≤ 15.
    fn integrate_curvature(p: &impl CurvePiece, t: f64) -> f64 {
        let h = t / 16.0;
        (0..16)
            .flat_map(|i| {
                GL8.map(|(x, w)| 0.5 * h * w * p.curvature_1_m(h * (i as f64 + 0.5 * (x + 1.0))))
            })
            .sum()
    }

    // turn(t) = ∫₀ᵗ κ (fundamental theorem of calculus), checked by an independent quadrature of
    // each piece type's own curvature, reached through the stored segment as the profile does.
    #[test]
    fn turn_is_the_integral_of_curvature_for_every_piece() {
        let segments = [
            CurvatureSegment::straight(7.0),
            CurvatureSegment::arc(9.0, -0.08),
            CurvatureSegment::clothoid(12.0, 0.02, 0.11),
            CurvatureSegment::cubic(6.0, [0.05, 0.01, -0.004, 0.0007]),
        ];
        for seg in segments {
            let p = seg.piece();
            assert_eq!(p.length_m(), seg.length_m);
            for t in [0.0, 1.3, seg.length_m] {
                let want = integrate_curvature(&p, t);
                assert!((p.turn_rad(t) - want).abs() < 1e-14, "{seg:?} at {t}");
            }
        }
    }

    // A finer accuracy than the default moves no displacement by more than the default's error
    // bound (the Gauss–Legendre error term quoted at `Accuracy::DEFAULT`), here 1e-12 m.
    #[test]
    fn finer_accuracy_agrees_with_the_default() {
        let fine = Accuracy {
            max_turn_rad: 0.05,
            max_step_m: 0.25,
            coarse_turn_rad: 0.0,
            coarse_step_m: 0.0,
            max_fresnel_arg: -1.0,
        };
        let segments = [
            CurvatureSegment::clothoid(30.0, 0.0, 0.12),
            CurvatureSegment::cubic(25.0, [0.02, 0.006, 0.0003, -0.000_01]),
        ];
        for seg in segments {
            let p = seg.piece();
            let (x, z) = p.displacement(0.4, seg.length_m, Accuracy::DEFAULT);
            let (xf, zf) = p.displacement(0.4, seg.length_m, fine);
            assert!((x - xf).abs() < 1e-12 && (z - zf).abs() < 1e-12, "{seg:?}");
        }
    }
}
