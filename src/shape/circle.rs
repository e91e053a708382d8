//! The circular loop: one arc of constant radius, entered straight from level track.
//!
//! This is the textbook loop. Its curvature steps from 0 to 1/R at entry and back at exit, so the
//! rider's normal load jumps there (unbounded onset) — the reason real loops are not circles.

use super::{CurvatureSegment, ShapeError, ShapeFamily};
use crate::brief::ShapeKind;
use std::f64::consts::PI;

/// Constant-radius loop; it has no shape parameters, only a size.
#[derive(Debug, Clone, Copy, Default)]
pub struct Circle;

impl ShapeFamily for Circle {
    fn kind(&self) -> ShapeKind {
        ShapeKind::Circle
    }
    fn shape_labels(&self) -> &'static [&'static str] {
        &[]
    }
    fn shape_bounds(&self) -> &'static [(f64, f64)] {
        &[]
    }
    fn default_shape(&self) -> Vec<f64> {
        Vec::new()
    }
    fn loop_segments(
        &self,
        _shape: &[f64],
        top_radius_m: f64,
    ) -> Result<Vec<CurvatureSegment>, ShapeError> {
        // Two half-circles so that a segment boundary (and hence a sample) falls exactly on the top.
        let half = CurvatureSegment::arc(PI * top_radius_m, 1.0 / top_radius_m);
        Ok(vec![half, half])
    }
}
