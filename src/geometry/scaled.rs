//! Similar loops: a family loop at any size is its unit-size loop scaled, so the costly part of a
//! centreline — each station's displacement along a piece integrated by quadrature — is worked
//! out once per shape at unit size and scaled for each size the size search tries.
//!
//! A family's loop segments at top radius R are its unit-radius segments with every length ×R
//! and every curvature ÷R (similar figures: turn angles, and so pitches, do not change). At a
//! spacing proportional to R — the shape search's coarse sampling — each segment has the same
//! station count at every size, each station sits at R times its unit arc length, and its
//! displacement along the segment is R times the unit one. Scaled and integrated displacements
//! differ by rounding only (this module's tests hold them together for every family). Only
//! pieces integrated by quadrature (cubic curvature: the variable-radius family) are scaled: the
//! closed forms (straight, arc, the clothoid's Fresnel integrals) cost about as much to evaluate
//! as to scale, so loops made of them are built exactly as before, to the bit.
//! The lead track has a fixed length and is integrated as always; so is any segment whose length
//! or station count does not match (a family that is not similar, or a count that rounds the
//! other way).

use super::station_count;
use crate::shape::piece::{Accuracy, AnyPiece, CurvePiece, PieceWalk};
use crate::shape::{CurvatureProfile, CurvatureSegment};

/// A loop's station displacements at unit size, segment by segment (its loop segments of cubic
/// curvature only).
#[derive(Debug, Clone)]
pub struct UnitLoop {
    segments: Vec<Option<UnitSegment>>,
}

#[derive(Debug, Clone)]
struct UnitSegment {
    length_m: f64,
    /// Station intervals of the segment (its stations are j = 0 … n).
    intervals: usize,
    /// Displacement from the segment's start at each station j = 0 … n, then at its end.
    displacement_m: Vec<(f64, f64)>,
}

/// Whether this module scales `seg`: a piece integrated by quadrature (cubic curvature).
fn is_scaled(seg: &CurvatureSegment) -> bool {
    matches!(seg.piece(), AnyPiece::Cubic(_))
}

impl UnitLoop {
    /// Whether the loop proper of `profile` has a segment a unit loop would scale; without one a
    /// scaled build is the build, and recording a unit loop is wasted work.
    pub fn scales_any(profile: &CurvatureProfile) -> bool {
        let (first, last) = profile.loop_range();
        profile
            .segments()
            .get(first..=last)
            .is_some_and(|loop_segments| loop_segments.iter().any(is_scaled))
    }

    /// Walk the loop segments of `unit_profile` (the loop at unit top radius, leads included)
    /// at `spacing_m` (the sampling per metre of top radius) as [`super::Centreline::build`] would.
    pub fn record(unit_profile: &CurvatureProfile, spacing_m: f64) -> UnitLoop {
        let (first, last) = unit_profile.loop_range();
        let segments = unit_profile
            .segments()
            .iter()
            .enumerate()
            .map(|(i, seg)| {
                if i < first || i > last || !is_scaled(seg) {
                    return None;
                }
                let n = station_count(seg.length_m, spacing_m);
                let mut walk = seg
                    .piece()
                    .walk(unit_profile.segment_pitch_rad(i), Accuracy::DEFAULT);
                let mut displacement_m: Vec<(f64, f64)> = (0..=n)
                    .map(|j| walk.to(seg.length_m * j as f64 / n as f64))
                    .collect();
                displacement_m.push(walk.end());
                Some(UnitSegment {
                    length_m: seg.length_m,
                    intervals: n,
                    displacement_m,
                })
            })
            .collect();
        UnitLoop { segments }
    }

    /// Whether the loop has no segment to scale (no cubic curvature): building it scaled would be
    /// building it.
    pub fn is_empty(&self) -> bool {
        self.segments.iter().all(Option::is_none)
    }

    /// The unit displacements of segment `i` of a profile scaled by `scale`, when that segment
    /// is the unit one scaled (its length within 1e-12 of `scale` × the unit length, the same
    /// loop segment) and has the same `intervals`; `None`: integrate it.
    pub(super) fn segment(
        &self,
        profile: &CurvatureProfile,
        i: usize,
        intervals: usize,
        scale: f64,
    ) -> Option<&[(f64, f64)]> {
        let (first, last) = profile.loop_range();
        let unit = self.segments.get(i)?.as_ref()?;
        let length_m = profile.segments()[i].length_m;
        let similar = (length_m - scale * unit.length_m).abs() <= 1e-12 * length_m;
        (i >= first && i <= last && unit.intervals == intervals && similar)
            .then_some(unit.displacement_m.as_slice())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::brief::ShapeKind;
    use crate::geometry::Centreline;
    use crate::shape::family;

    // Similar figures (elementary geometry): every family's loop at top radius R is its unit
    // loop scaled by R, so the scaled build must reproduce the integrated build (itself checked
    // against the arc's closed form and mpmath's Fresnel integrals) to rounding, station by
    // station, at the coarse sampling R/16, with every cubic loop segment taken from the unit
    // loop and every other one integrated (the same bits as the build).
    #[test]
    fn scaled_unit_loop_matches_the_integrated_build() {
        let per_radius = 16.0;
        for kind in ShapeKind::ALL {
            let f = family(kind).unwrap();
            let bounds = f.shape_bounds();
            let mut checked = 0;
            for u in [0.0, 0.37, 0.5, 0.81, 1.0] {
                let shape: Vec<f64> = bounds.iter().map(|(lo, hi)| lo + u * (hi - lo)).collect();
                // Some corners of a family's box make no loop (e.g. negative curvature).
                let Ok(unit_profile) = f.curvature_with_leads(&shape, 1.0, 5.0) else {
                    continue;
                };
                checked += 1;
                let unit = UnitLoop::record(&unit_profile, 1.0 / per_radius);
                for r in [2.5, 7.3, 16.0, 31.7] {
                    let profile = f.curvature_with_leads(&shape, r, 5.0).unwrap();
                    let spacing = r / per_radius;
                    let (first, last) = profile.loop_range();
                    for i in first..=last {
                        let seg = &profile.segments()[i];
                        let n = station_count(seg.length_m, spacing);
                        let cubic = matches!(seg.piece(), AnyPiece::Cubic(_));
                        assert_eq!(
                            unit.segment(&profile, i, n, r).is_some(),
                            cubic,
                            "{kind} {shape:?} R {r}: segment {i}"
                        );
                    }
                    // The variable-radius family is the one made of cubic pieces.
                    assert_eq!(unit.is_empty(), kind != ShapeKind::Spline, "{kind}");
                    assert_eq!(UnitLoop::scales_any(&profile), kind == ShapeKind::Spline);
                    let direct = Centreline::build(&profile, 1.1, spacing);
                    let scaled = Centreline::build_scaled(&profile, 1.1, spacing, &unit, r);
                    assert_eq!(direct.stations.len(), scaled.stations.len());
                    assert_eq!(direct.steps, scaled.steps);
                    for (a, b) in direct.stations.iter().zip(&scaled.stations) {
                        assert_eq!(a.s_m, b.s_m);
                        assert_eq!(a.pitch_rad, b.pitch_rad);
                        let tol = 1e-12 * (r + 10.0);
                        assert!(
                            (a.heartline_m - b.heartline_m).norm() < tol
                                && (a.rail_m - b.rail_m).norm() < tol,
                            "{kind} {shape:?} R {r} at s = {}: {} vs {}",
                            a.s_m,
                            a.heartline_m,
                            b.heartline_m
                        );
                    }
                    let (h, hs) = (direct.loop_height_m(), scaled.loop_height_m());
                    assert!((h - hs).abs() < 1e-13 * h, "{kind} R {r}: {h} vs {hs}");
                }
            }
            assert!(checked >= 3, "{kind}: only {checked} shapes make a loop");
        }
    }

    // A profile that is not the unit loop scaled (another radius than the scale says) is
    // integrated, not scaled: the guard compares every segment's length.
    #[test]
    fn a_loop_of_another_size_is_not_scaled() {
        let f = family(ShapeKind::Spline).unwrap();
        let shape = f.default_shape();
        let unit = UnitLoop::record(&f.curvature_with_leads(&shape, 1.0, 5.0).unwrap(), 0.0625);
        let profile = f.curvature_with_leads(&shape, 9.0, 5.0).unwrap();
        let (first, last) = profile.loop_range();
        for i in first..=last {
            let n = station_count(profile.segments()[i].length_m, 9.0 / 16.0);
            assert!(unit.segment(&profile, i, n, 9.0).is_some());
            assert!(unit.segment(&profile, i, n, 9.5).is_none());
        }
        // The lead track is never taken from the unit loop.
        assert!(unit.segment(&profile, 0, 2, 9.0).is_none());
    }
}
