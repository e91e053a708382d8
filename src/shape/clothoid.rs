//! The teardrop loop: a clothoid in, a circular arc over the top, the mirrored clothoid out.
//!
//! Curvature rises linearly with arc length from 0 at entry to 1/R at the start of the top arc
//! (an Euler spiral, whose positions are Fresnel integrals), stays at 1/R over the top, and falls
//! back symmetrically. One shape parameter sets how much of each half-turn the clothoid does:
//! `spiral_fraction` φ in (0, 1]. Each clothoid turns φ·π and has length L₁ = 2φπR (because a
//! clothoid from 0 to 1/R turns L₁/(2R)); the top arc turns 2π(1 − φ). φ = 1 is a pure double spiral.

use super::{CurvatureSegment, ShapeError, ShapeFamily};
use crate::brief::ShapeKind;
use std::f64::consts::PI;

/// Clothoid ("teardrop") loop.
#[derive(Debug, Clone, Copy, Default)]
pub struct Clothoid;

impl ShapeFamily for Clothoid {
    fn kind(&self) -> ShapeKind {
        ShapeKind::Clothoid
    }
    fn shape_labels(&self) -> &'static [&'static str] {
        &["spiral_fraction"]
    }
    fn shape_bounds(&self) -> &'static [(f64, f64)] {
        &[(0.05, 1.0)]
    }
    fn default_shape(&self) -> Vec<f64> {
        vec![0.6]
    }
    fn loop_segments(
        &self,
        shape: &[f64],
        top_radius_m: f64,
    ) -> Result<Vec<CurvatureSegment>, ShapeError> {
        let phi = shape[0];
        let r = top_radius_m;
        let spiral_m = 2.0 * phi * PI * r;
        let mut segs = vec![CurvatureSegment::clothoid(spiral_m, 0.0, 1.0 / r)];
        let arc_m = 2.0 * PI * (1.0 - phi) * r;
        if arc_m > 1e-9 * r {
            // Split the arc in two so a segment boundary falls exactly on the top.
            let half = CurvatureSegment::arc(arc_m / 2.0, 1.0 / r);
            segs.push(half);
            segs.push(half);
        }
        segs.push(CurvatureSegment::clothoid(spiral_m, 1.0 / r, 0.0));
        Ok(segs)
    }
}
