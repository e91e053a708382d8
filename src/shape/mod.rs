//! Shape families: dimensionless shape parameters and a size → curvature along arc length.
//!
//! A shape family owns only the *curvature* of the heartline as a function of arc length, κ(s),
//! as a [`CurvatureProfile`] made of polynomial pieces. It knows nothing of speeds or loads. Each
//! kind of piece (straight, arc, clothoid, cubic) is a type in [`piece`] that knows how it turns
//! and how it integrates into position from a given start pitch; the geometry stage places the
//! pieces end to end, samples them and builds the track frames.
//!
//! Every family is one file implementing [`ShapeFamily`]. Its size is always the heartline radius
//! of curvature at the top of the loop, `top_radius_m`, so that the optimiser can treat all
//! families alike: for fixed shape parameters the loop is geometrically similar at every size.
//! The force-first `profile` is the exception: `profile.rs` holds only its target load profile,
//! whose curvature depends on the ride and is solved by the optimiser's force-first stage.
//!
//! ```
//! use loopwright::shape::{family, CurvatureProfile};
//! use loopwright::brief::ShapeKind;
//! let circle = family(ShapeKind::Circle).unwrap();
//! let profile = circle.curvature(&[], 10.0).unwrap();
//! // A full circle of radius 10 m turns through 2π over 2π·10 m.
//! assert!((profile.length_m() - 2.0 * std::f64::consts::PI * 10.0).abs() < 1e-9);
//! assert!((profile.pitch_rad(profile.length_m()) - 2.0 * std::f64::consts::PI).abs() < 1e-12);
//! ```

mod circle;
mod clothoid;
pub mod piece;
mod profile;
mod spline;

pub use circle::Circle;
pub use clothoid::Clothoid;
pub use profile::{LoadProfile, TargetLoad};
pub use spline::Spline;

use crate::brief::ShapeKind;
use piece::{AnyPiece, CurvePiece};

/// Why a family could not produce a curvature profile for the given parameters.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{family} shape: {message}")]
pub struct ShapeError {
    pub family: &'static str,
    pub message: String,
}

/// What kind of piece a curvature segment is: which [`piece`] type it stands for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SegmentKind {
    /// κ = 0.
    Straight,
    /// κ constant.
    Arc,
    /// κ linear in arc length (an Euler spiral).
    Clothoid,
    /// κ a cubic polynomial of arc length.
    Cubic,
}

/// One piece of the profile as stored: κ(t) = c0 + c1·t + c2·t² + c3·t³ for local arc length t in
/// [0, length], with the coefficients the `kind` does not use zero. Its behaviour is that of
/// [`CurvatureSegment::piece`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CurvatureSegment {
    pub kind: SegmentKind,
    pub length_m: f64,
    /// Polynomial coefficients in units 1/m, 1/m², 1/m³, 1/m⁴.
    pub coeffs: [f64; 4],
}

impl CurvatureSegment {
    pub fn straight(length_m: f64) -> Self {
        Self {
            kind: SegmentKind::Straight,
            length_m,
            coeffs: [0.0; 4],
        }
    }
    pub fn arc(length_m: f64, curvature_1_m: f64) -> Self {
        Self {
            kind: SegmentKind::Arc,
            length_m,
            coeffs: [curvature_1_m, 0.0, 0.0, 0.0],
        }
    }
    /// Curvature going linearly from `start` to `end` over `length_m`.
    pub fn clothoid(length_m: f64, start_1_m: f64, end_1_m: f64) -> Self {
        let slope = (end_1_m - start_1_m) / length_m;
        Self {
            kind: SegmentKind::Clothoid,
            length_m,
            coeffs: [start_1_m, slope, 0.0, 0.0],
        }
    }
    pub fn cubic(length_m: f64, coeffs: [f64; 4]) -> Self {
        Self {
            kind: SegmentKind::Cubic,
            length_m,
            coeffs,
        }
    }
    /// The piece this segment stands for.
    pub fn piece(&self) -> AnyPiece {
        let (length_m, [c0, c1, ..]) = (self.length_m, self.coeffs);
        match self.kind {
            SegmentKind::Straight => AnyPiece::Straight(piece::Straight { length_m }),
            SegmentKind::Arc => AnyPiece::Arc(piece::Arc {
                length_m,
                curvature_1_m: c0,
            }),
            SegmentKind::Clothoid => AnyPiece::Clothoid(piece::Clothoid {
                length_m,
                start_1_m: c0,
                slope_1_m2: c1,
            }),
            SegmentKind::Cubic => AnyPiece::Cubic(piece::Cubic {
                length_m,
                coeffs: self.coeffs,
            }),
        }
    }
    /// κ at local arc length `t`.
    pub fn curvature_1_m(&self, t: f64) -> f64 {
        self.piece().curvature_1_m(t)
    }
    /// ∫₀ᵗ κ dτ, the pitch turned within this segment (exact for the polynomial).
    pub fn turn_rad(&self, t: f64) -> f64 {
        self.piece().turn_rad(t)
    }
}

/// The heartline curvature along arc length, from the start of the lead-in to the end of the lead-out.
#[derive(Debug, Clone, PartialEq)]
pub struct CurvatureProfile {
    segments: Vec<CurvatureSegment>,
    /// Arc length at the start of each segment.
    starts_m: Vec<f64>,
    /// Pitch at the start of each segment.
    pitch_starts_rad: Vec<f64>,
    /// Indices of the first and last segment that belong to the loop proper (not lead track).
    loop_range: (usize, usize),
}

impl CurvatureProfile {
    /// Build a profile from segments; `loop_range` marks the loop proper (inclusive indices).
    pub fn new(segments: Vec<CurvatureSegment>, loop_range: (usize, usize)) -> Self {
        let mut starts_m = Vec::with_capacity(segments.len());
        let mut pitch_starts_rad = Vec::with_capacity(segments.len());
        let (mut s, mut theta) = (0.0, 0.0);
        for seg in &segments {
            starts_m.push(s);
            pitch_starts_rad.push(theta);
            s += seg.length_m;
            theta += seg.turn_rad(seg.length_m);
        }
        Self {
            segments,
            starts_m,
            pitch_starts_rad,
            loop_range,
        }
    }

    /// Add level lead track of `lead_m` before and after the loop.
    pub fn with_leads(segments: Vec<CurvatureSegment>, lead_m: f64) -> Self {
        if lead_m <= 0.0 {
            let n = segments.len();
            return Self::new(segments, (0, n.saturating_sub(1)));
        }
        let n = segments.len();
        let mut all = Vec::with_capacity(n + 2);
        all.push(CurvatureSegment::straight(lead_m));
        all.extend(segments);
        all.push(CurvatureSegment::straight(lead_m));
        Self::new(all, (1, n))
    }

    pub fn segments(&self) -> &[CurvatureSegment] {
        &self.segments
    }
    /// Indices of the first and last segment of the loop proper (inclusive).
    pub fn loop_range(&self) -> (usize, usize) {
        self.loop_range
    }
    /// Arc length where segment `i` starts.
    pub fn segment_start_m(&self, i: usize) -> f64 {
        self.starts_m[i]
    }
    /// Pitch where segment `i` starts.
    pub fn segment_pitch_rad(&self, i: usize) -> f64 {
        self.pitch_starts_rad[i]
    }
    /// Total length including lead track.
    pub fn length_m(&self) -> f64 {
        match self.segments.last() {
            Some(last) => self.starts_m[self.starts_m.len() - 1] + last.length_m,
            None => 0.0,
        }
    }
    /// Arc-length interval of the loop proper.
    pub fn loop_span_m(&self) -> (f64, f64) {
        let (a, b) = self.loop_range;
        (
            self.starts_m[a],
            self.starts_m[b] + self.segments[b].length_m,
        )
    }

    fn locate(&self, s_m: f64) -> (usize, f64) {
        let i = match self.starts_m.binary_search_by(|x| x.total_cmp(&s_m)) {
            Ok(i) => i,
            Err(0) => 0,
            Err(i) => i - 1,
        };
        let i = i.min(self.segments.len() - 1);
        (
            i,
            (s_m - self.starts_m[i]).clamp(0.0, self.segments[i].length_m),
        )
    }
    /// κ at arc length `s_m` (right-hand value at a segment boundary).
    pub fn curvature_1_m(&self, s_m: f64) -> f64 {
        let (i, t) = self.locate(s_m);
        self.segments[i].curvature_1_m(t)
    }
    /// Pitch (angle of the tangent above the entry direction) at `s_m`.
    pub fn pitch_rad(&self, s_m: f64) -> f64 {
        let (i, t) = self.locate(s_m);
        self.pitch_starts_rad[i] + self.segments[i].turn_rad(t)
    }
    /// The largest |κ| anywhere, 1/m.
    pub fn max_curvature_1_m(&self) -> f64 {
        self.segments
            .iter()
            .map(|seg| seg.piece().max_abs_curvature_1_m())
            .fold(0.0, f64::max)
    }
    /// The smallest radius of curvature anywhere, m (infinite for straight track).
    pub fn min_radius_m(&self) -> f64 {
        1.0 / self.max_curvature_1_m()
    }
}

/// A family of loop shapes.
///
/// Implementors turn dimensionless shape parameters and a size (the heartline radius at the top)
/// into a curvature profile of the loop proper that turns through exactly 2π and is symmetric
/// about its midpoint, so the loop leaves level at entry height.
pub trait ShapeFamily: Send + Sync {
    /// Which family this is.
    fn kind(&self) -> ShapeKind;
    /// Names of the dimensionless shape parameters, for reports.
    fn shape_labels(&self) -> &'static [&'static str];
    /// Bounds of each shape parameter.
    fn shape_bounds(&self) -> &'static [(f64, f64)];
    /// A sensible starting shape for the optimiser.
    fn default_shape(&self) -> Vec<f64>;
    /// The loop proper (without lead track) for these parameters at this top radius.
    fn loop_segments(
        &self,
        shape: &[f64],
        top_radius_m: f64,
    ) -> Result<Vec<CurvatureSegment>, ShapeError>;
    /// The whole profile with `lead_m` of level track before and after.
    fn curvature(&self, shape: &[f64], top_radius_m: f64) -> Result<CurvatureProfile, ShapeError> {
        self.curvature_with_leads(shape, top_radius_m, 0.0)
    }
    /// As [`ShapeFamily::curvature`], with lead track.
    fn curvature_with_leads(
        &self,
        shape: &[f64],
        top_radius_m: f64,
        lead_m: f64,
    ) -> Result<CurvatureProfile, ShapeError> {
        let name = self.kind().name();
        check_parameters(name, shape, self.shape_bounds(), self.shape_labels())?;
        if !(top_radius_m.is_finite() && top_radius_m > 0.0) {
            return Err(ShapeError {
                family: name,
                message: format!("top radius {top_radius_m} m must be positive"),
            });
        }
        Ok(CurvatureProfile::with_leads(
            self.loop_segments(shape, top_radius_m)?,
            lead_m,
        ))
    }
}

/// Check shape parameters against a family's count, bounds and labels (for the message).
pub fn check_parameters(
    family: &'static str,
    shape: &[f64],
    bounds: &[(f64, f64)],
    labels: &[&str],
) -> Result<(), ShapeError> {
    if shape.len() != bounds.len() {
        return Err(ShapeError {
            family,
            message: format!(
                "expects {} shape parameters, got {}",
                bounds.len(),
                shape.len()
            ),
        });
    }
    for ((v, (lo, hi)), label) in shape.iter().zip(bounds).zip(labels) {
        if !v.is_finite() || v < lo || v > hi {
            return Err(ShapeError {
                family,
                message: format!("{label} = {v} is outside {lo}..{hi}"),
            });
        }
    }
    Ok(())
}

/// The family implementing `kind`: the families sized by their top radius ([`ShapeKind::ALL`]).
/// `None` for the force-first `profile`, whose curvature follows from the ride: the optimiser's
/// force-first stage solves it from the brief's [`LoadProfile`].
pub fn family(kind: ShapeKind) -> Option<Box<dyn ShapeFamily>> {
    match kind {
        ShapeKind::Circle => Some(Box::new(Circle)),
        ShapeKind::Clothoid => Some(Box::new(Clothoid)),
        ShapeKind::Spline => Some(Box::new(Spline)),
        ShapeKind::Profile => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    // Every family must turn exactly 2π and be symmetric (κ(s) = κ(L − s)): the loop-closure
    // condition for a planar loop that leaves level at entry height (elementary geometry).
    #[test]
    fn every_family_turns_a_full_circle_symmetrically() {
        for kind in ShapeKind::ALL {
            let f = family(kind).unwrap();
            let p = f.curvature(&f.default_shape(), 7.5).unwrap();
            let l = p.length_m();
            assert!((p.pitch_rad(l) - 2.0 * PI).abs() < 1e-12, "{kind}");
            for i in 0..=50 {
                let s = l * i as f64 / 50.0 * 0.999 + 1e-6;
                assert!(
                    (p.curvature_1_m(s) - p.curvature_1_m(l - s)).abs() < 1e-9,
                    "{kind} at {s}"
                );
            }
            // The top (mid-length) has the requested radius.
            assert!(
                (p.curvature_1_m(l / 2.0) - 1.0 / 7.5).abs() < 1e-12,
                "{kind}"
            );
        }
    }
}
