//! Rider frames: the rider's axes (forward, head, left) and the heartline's bending at one place,
//! built the same way for every centreline, designed ([`super::Centreline::build`]), spread
//! sideways ([`super::Centreline::with_lateral_shift`]) or fitted to points ([`super::fit`]).
//!
//! The convention: the head is perpendicular to the tangent and stays in the loop's vertical plane
//! (for a planar loop (−sin θ, 0, cos θ), towards the centre of curvature inside the loop); the
//! left axis is head × tangent; the curvature vector is dT/ds and its component along the head is
//! the curvature the normal load sees.

use nalgebra::Vector3;

use super::Station;

/// The rider's axes and the heartline's curvature at one place.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RiderFrame {
    /// Unit tangent (direction of travel).
    pub tangent: Vector3<f64>,
    /// Unit normal towards the rider's head.
    pub head: Vector3<f64>,
    /// Unit vector to the rider's left, head × tangent.
    pub left: Vector3<f64>,
    /// Curvature vector dT/ds, 1/m.
    pub curvature_vec_1_m: Vector3<f64>,
    /// Curvature towards the head, 1/m.
    pub curvature_1_m: f64,
}

impl RiderFrame {
    /// In the loop's vertical plane at pitch `pitch_rad` with curvature `curvature_1_m` about the
    /// left axis: T = (cos θ, 0, sin θ), head = (−sin θ, 0, cos θ), dT/ds = κ·head.
    pub fn planar(pitch_rad: f64, curvature_1_m: f64) -> RiderFrame {
        let (sn, cs) = pitch_rad.sin_cos();
        let tangent = Vector3::new(cs, 0.0, sn);
        let head = Vector3::new(-sn, 0.0, cs);
        RiderFrame {
            tangent,
            head,
            left: head.cross(&tangent),
            curvature_vec_1_m: curvature_1_m * head,
            curvature_1_m,
        }
    }

    /// On a curve r(t) with derivatives `d1` = r′ and `d2` = r″ in any parameter t, where the head
    /// is `head` (unit, perpendicular to r′): T = r′/|r′| and dT/ds = (r″ − (r″·T)T)/|r′|².
    pub fn from_derivatives(d1: Vector3<f64>, d2: Vector3<f64>, head: Vector3<f64>) -> RiderFrame {
        let speed = d1.norm();
        // In arc length (a planar loop, or the level track of a spread one) |r′| rounds to 1
        // exactly, and x / 1 = x in IEEE arithmetic: skip the five divisions, same bits.
        let unit = speed == 1.0;
        let tangent = if unit { d1 } else { d1 / speed };
        let bend = d2 - d2.dot(&tangent) * tangent;
        let curvature_vec_1_m = if unit { bend } else { bend / (speed * speed) };
        RiderFrame {
            tangent,
            head,
            left: head.cross(&tangent),
            curvature_vec_1_m,
            curvature_1_m: curvature_vec_1_m.dot(&head),
        }
    }
}

/// Where a station lies along the path and on which part of it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StationPlace {
    /// Heartline arc length from the start of the path, m.
    pub s_m: f64,
    /// Pitch of the tangent above the entry direction, rad.
    pub pitch_rad: f64,
    /// Index of the smooth piece the station belongs to.
    pub piece: usize,
    /// Whether the station lies on the loop proper.
    pub in_loop: bool,
}

impl Station {
    /// A station from its place, heartline and rail positions and rider frame.
    pub fn from_frame(
        place: StationPlace,
        heartline_m: Vector3<f64>,
        rail_m: Vector3<f64>,
        frame: RiderFrame,
    ) -> Station {
        Station {
            s_m: place.s_m,
            heartline_m,
            rail_m,
            tangent: frame.tangent,
            head: frame.head,
            left: frame.left,
            pitch_rad: place.pitch_rad,
            curvature_1_m: frame.curvature_1_m,
            curvature_vec_1_m: frame.curvature_vec_1_m,
            piece: place.piece,
            in_loop: place.in_loop,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // A helix r(t) = (R cos t, R sin t, c·t) has curvature R/(R² + c²) and its curvature vector
    // points to the axis (do Carmo, "Differential Geometry of Curves and Surfaces", §1-5).
    #[test]
    fn helix_curvature_from_derivatives() {
        let (r, c, t): (f64, f64, f64) = (3.0, 0.7, 0.4);
        let d1 = Vector3::new(-r * t.sin(), r * t.cos(), c);
        let d2 = Vector3::new(-r * t.cos(), -r * t.sin(), 0.0);
        let to_axis = Vector3::new(-t.cos(), -t.sin(), 0.0);
        let f = RiderFrame::from_derivatives(d1, d2, to_axis);
        assert!((f.curvature_1_m - r / (r * r + c * c)).abs() < 1e-15);
        assert!((f.curvature_vec_1_m - f.curvature_1_m * to_axis).norm() < 1e-15);
        assert!((f.tangent.norm() - 1.0).abs() < 1e-15 && f.tangent.dot(&f.left).abs() < 1e-15);
    }

    // In the plane, the frame at pitch θ is the rotation of (x̂, ẑ) by θ, and the left axis is ŷ
    // (right-handed axes: X forward, Y left, Z up).
    #[test]
    fn planar_frame_is_right_handed() {
        let f = RiderFrame::planar(1.0, 0.25);
        assert!((f.left - Vector3::y()).norm() < 1e-15);
        assert!((f.tangent.cross(&f.left) - f.head).norm() < 1e-15);
        assert!((f.curvature_vec_1_m - 0.25 * f.head).norm() < 1e-15);
    }
}
