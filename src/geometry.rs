//! Geometry: a curvature profile integrated into the heartline and the rail centreline.
//!
//! The shape stage gives κ(s) of the heartline. This module integrates pitch θ(s) = ∫κ ds (exact,
//! the profile is polynomial) and position (x, z) = ∫(cos θ, sin θ) ds, then offsets the rail from
//! the heartline along the track normal, away from the rider's head. Axes: X along the entry
//! direction, Y to the rider's left at entry, Z up; the entry point of the heartline is the origin.
//!
//! Each segment integrates itself (closed forms, Fresnel integrals or Gauss–Legendre quadrature:
//! [`crate::shape::piece`]) at [`Accuracy::DEFAULT`]; this module places the segments end to end
//! and samples them.
//!
//! Lateral shift ([`Centreline::build_shifted`]): the planar loop is spread sideways so that its
//! exit track passes beside its entry track, y(σ) = shift · S((σ − a)/(b − a)) over the loop proper
//! [a, b] of the planar arc length σ, with S(u) = 6u⁵ − 15u⁴ + 10u³ ("smootherstep"). S' and S''
//! vanish at both ends, so y, its slope and its curvature join the level lead track smoothly and
//! the curvature stays continuous. The 3D heartline is r(σ) = (x(σ), y(σ), z(σ)); its true arc
//! length s = ∫ √(1 + y'²) dσ is integrated per sample interval (8-point Gauss–Legendre), so
//! `s_m` stays the true heartline arc length; the curvature vector is (r'' − (r''·T)T)/|r'|².
//! The rider's head keeps the planar loop's direction (−sin θ, 0, cos θ), which is exactly
//! perpendicular to the 3D tangent: the track is not banked to cancel the lateral load the shift
//! causes, and the resulting roll of the rider's cross-axis is [`Station::roll_rad`].
//!
//! ```
//! use loopwright::{geometry::Centreline, shape::{family}, brief::ShapeKind};
//! let profile = family(ShapeKind::Circle).unwrap().curvature(&[], 10.0).unwrap();
//! let c = Centreline::build(&profile, 1.1, 0.05);
//! // A circle of radius 10 m tops out 20 m up and comes back to where it started.
//! assert!((c.top().heartline_m.z - 20.0).abs() < 1e-9);
//! assert!(c.stations.last().unwrap().heartline_m.norm() < 1e-9);
//! ```

pub mod fit;
mod frame;
mod scaled;

use std::f64::consts::PI;
use std::ops::ControlFlow;

use nalgebra::Vector3;

use crate::numeric::GL4;
use crate::shape::CurvatureProfile;
use crate::shape::piece::{Accuracy, CurvePiece, PieceWalk};
pub use frame::{RiderFrame, StationPlace};
pub use scaled::UnitLoop;

/// One sample of the path.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Station {
    /// Heartline arc length from the start of the lead-in, m.
    pub s_m: f64,
    /// Heartline position, m.
    pub heartline_m: Vector3<f64>,
    /// Rail centreline position, m.
    pub rail_m: Vector3<f64>,
    /// Unit tangent (direction of travel).
    pub tangent: Vector3<f64>,
    /// Unit normal towards the rider's head ("up" in the seat).
    pub head: Vector3<f64>,
    /// Unit vector to the rider's left, head × tangent.
    pub left: Vector3<f64>,
    /// Pitch of the tangent above the entry direction, rad (0 → 2π through a loop).
    pub pitch_rad: f64,
    /// Heartline curvature about the rider's left axis, 1/m (positive curving towards the head).
    pub curvature_1_m: f64,
    /// Curvature vector dT/ds, 1/m.
    pub curvature_vec_1_m: Vector3<f64>,
    /// Index of the smooth piece this station belongs to; it increases at every curvature step.
    pub piece: usize,
    /// Whether the station lies on the loop proper (not lead track).
    pub in_loop: bool,
}

/// A jump in curvature where two segments meet (e.g. a circle entered from straight track).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CurvatureStep {
    pub s_m: f64,
    pub before_1_m: f64,
    pub after_1_m: f64,
}

/// The sampled path: heartline, rail, frames.
#[derive(Debug, Clone, PartialEq)]
pub struct Centreline {
    pub stations: Vec<Station>,
    pub steps: Vec<CurvatureStep>,
    pub heartline_height_m: f64,
    /// Arc-length interval of the loop proper.
    pub loop_span_m: (f64, f64),
}

impl Centreline {
    /// Sample `profile` every `spacing_m` or closer (every segment boundary is a station) and build
    /// heartline, rail and frames. At a curvature step the boundary appears twice, once with the
    /// curvature before and once after, so the step in load is visible in the table.
    pub fn build(
        profile: &CurvatureProfile,
        heartline_height_m: f64,
        spacing_m: f64,
    ) -> Centreline {
        Self::build_from(profile, heartline_height_m, spacing_m, None)
    }

    /// [`Centreline::build`] of a loop similar to `unit` (recorded at `spacing_m / scale`),
    /// `scale` times its size: each loop station's displacement is the unit one scaled instead
    /// of integrated again (see [`UnitLoop`]). Equal to the build to rounding.
    pub fn build_scaled(
        profile: &CurvatureProfile,
        heartline_height_m: f64,
        spacing_m: f64,
        unit: &UnitLoop,
        scale: f64,
    ) -> Centreline {
        Self::build_from(profile, heartline_height_m, spacing_m, Some((unit, scale)))
    }

    fn build_from(
        profile: &CurvatureProfile,
        heartline_height_m: f64,
        spacing_m: f64,
        unit: Option<(&UnitLoop, f64)>,
    ) -> Centreline {
        // Room for every station up front: the search builds thousands of paths.
        let segments = profile.segments().len();
        let mut stations =
            Vec::with_capacity((profile.length_m() / spacing_m) as usize + 3 * segments + 1);
        let steps = sample_profile(profile, spacing_m, unit, |p| {
            stations.push(planar_station(p, heartline_height_m));
            ControlFlow::Continue(())
        });
        Centreline {
            stations,
            steps,
            heartline_height_m,
            loop_span_m: profile.loop_span_m(),
        }
    }

    /// [`Centreline::build`]`(profile, _, spacing_m).loop_height_m()`, to the bit, without the
    /// stations: the same samples, but no frames, rail or station list, and the walk ends once
    /// the path is past its top and can only fall (what the shape search asks of every shape).
    pub fn loop_height_only(profile: &CurvatureProfile, spacing_m: f64) -> f64 {
        // The walk may stop at a sample past the top when the pitch there lies in (π + 0.1, 2π)
        // and no later piece bends the other way: the pitch then only grows to the exit's 2π,
        // so every later quadrature term of z (w·h·sin θ) is ≤ 0 and no later sample climbs
        // back above this one, itself clearly below the top (checked with a margin that dwarfs
        // rounding). Where a piece further on may turn back, the walk goes to the end.
        let bends_back: Vec<bool> = profile
            .segments()
            .iter()
            .map(|seg| seg.piece().min_curvature_1_m() < 0.0)
            .collect();
        let segs = profile.segments();
        let end_pitch_rad = segs.last().map_or(0.0, |seg| {
            profile.segment_pitch_rad(segs.len() - 1) + seg.piece().turn_rad(seg.length_m)
        });
        // A path that turns past the exit's 2π could climb again: walk it to the end.
        let mut last_bend_back = if end_pitch_rad <= 2.0 * PI + 1e-12 {
            bends_back.iter().rposition(|&b| b)
        } else {
            Some(segs.len())
        };
        // Past 2π by rounding, sin θ ≤ 1e-12: z may rise by that much per metre still to go.
        let slack_m = 1e-9 + 1e-11 * profile.length_m();
        let mut first_z = None;
        let mut top_z = f64::MIN;
        sample_profile(profile, spacing_m, None, |p| {
            let z0 = *first_z.get_or_insert(p.z_m);
            // As `top`: the last maximum in total order.
            if p.z_m.total_cmp(&top_z).is_ge() {
                top_z = p.z_m;
            }
            if last_bend_back.is_some_and(|i| i < p.segment) {
                last_bend_back = None;
            }
            let falling = p.pitch_rad > PI + 0.1 && p.pitch_rad < 2.0 * PI - 0.1;
            let clear = p.z_m + slack_m * (1.0 + (top_z - z0).abs()) < top_z;
            if last_bend_back.is_none() && falling && clear {
                ControlFlow::Break(())
            } else {
                ControlFlow::Continue(())
            }
        });
        top_z - first_z.unwrap_or(0.0)
    }

    /// The highest heartline station.
    pub fn top(&self) -> &Station {
        self.stations
            .iter()
            .max_by(|a, b| a.heartline_m.z.total_cmp(&b.heartline_m.z))
            .expect("a centreline has stations")
    }

    /// Index of the highest heartline station.
    pub fn top_index(&self) -> usize {
        let top = self.top().s_m;
        self.stations.iter().position(|s| s.s_m == top).unwrap_or(0)
    }

    /// Heartline height of the top above the heartline at entry, m.
    pub fn loop_height_m(&self) -> f64 {
        self.top().heartline_m.z - self.stations[0].heartline_m.z
    }

    /// Height of the rail's highest point above the rail at entry, m.
    pub fn rail_height_m(&self) -> f64 {
        let top = self
            .stations
            .iter()
            .map(|s| s.rail_m.z)
            .fold(f64::MIN, f64::max);
        top - self.stations[0].rail_m.z
    }

    /// Arc length of the loop proper (heartline), m.
    pub fn loop_length_m(&self) -> f64 {
        self.loop_span_m.1 - self.loop_span_m.0
    }

    /// Smallest heartline radius of curvature on the loop, m.
    pub fn min_radius_m(&self) -> f64 {
        1.0 / self
            .stations
            .iter()
            .map(|s| s.curvature_vec_1_m.norm())
            .fold(0.0, f64::max)
    }
}

/// One planar sample of a profile: where [`sample_profile`] puts a station.
#[derive(Debug, Clone, Copy)]
struct PlanarSample {
    s_m: f64,
    x_m: f64,
    z_m: f64,
    pitch_rad: f64,
    curvature_1_m: f64,
    piece: usize,
    in_loop: bool,
    /// Index of the profile segment it lies on.
    segment: usize,
}

/// Sample `profile` every `spacing_m` or closer (every segment boundary is a sample), handing each
/// sample to `visit` in order until it breaks; returns the curvature steps met on the way. At a
/// curvature step the boundary is sampled twice, once with the curvature before and once after.
fn sample_profile(
    profile: &CurvatureProfile,
    spacing_m: f64,
    unit: Option<(&UnitLoop, f64)>,
    mut visit: impl FnMut(PlanarSample) -> ControlFlow<()>,
) -> Vec<CurvatureStep> {
    let mut steps = Vec::new();
    let (mut x, mut z) = (0.0, 0.0);
    let mut piece = 0;
    let loop_span_m = profile.loop_span_m();
    let mut prev_end_curv: Option<f64> = None;
    for (i, seg) in profile.segments().iter().enumerate() {
        let s0 = profile.segment_start_m(i);
        let theta0 = profile.segment_pitch_rad(i);
        let curve = seg.piece();
        let k_start = curve.curvature_1_m(0.0);
        let n = station_count(seg.length_m, spacing_m);
        let first = match prev_end_curv {
            None => 0,
            Some(k_prev) if (k_prev - k_start).abs() > 1e-12 * (1.0 + k_prev.abs()) => {
                steps.push(CurvatureStep {
                    s_m: s0,
                    before_1_m: k_prev,
                    after_1_m: k_start,
                });
                piece += 1;
                0
            }
            // Continuous curvature: the previous segment's last station serves as this one's first.
            Some(_) => 1,
        };
        // The start terms are worked out once per segment, not per station.
        let mut walk = curve.walk(theta0, Accuracy::DEFAULT);
        let scaled = unit.and_then(|(u, scale)| Some((u.segment(profile, i, n, scale)?, scale)));
        for j in first..=n {
            let t = seg.length_m * j as f64 / n as f64;
            let (dx, dz) = match scaled {
                Some((d, scale)) => (scale * d[j].0, scale * d[j].1),
                None => walk.to(t),
            };
            let s_m = s0 + t;
            let in_loop = s_m >= loop_span_m.0 - 1e-9 && s_m <= loop_span_m.1 + 1e-9;
            let sample = PlanarSample {
                s_m,
                x_m: x + dx,
                z_m: z + dz,
                pitch_rad: theta0 + curve.turn_rad(t),
                curvature_1_m: curve.curvature_1_m(t),
                piece,
                in_loop,
                segment: i,
            };
            if visit(sample).is_break() {
                return steps;
            }
        }
        let (dx, dz) = match scaled {
            Some((d, scale)) => (scale * d[n + 1].0, scale * d[n + 1].1),
            None => walk.end(),
        };
        x += dx;
        z += dz;
        prev_end_curv = Some(curve.curvature_1_m(seg.length_m));
    }
    steps
}

/// Station intervals of a segment `length_m` long sampled every `spacing_m` or closer: at least
/// two, and even, so that a station sits on every segment midpoint too.
fn station_count(length_m: f64, spacing_m: f64) -> usize {
    let n = ((length_m / spacing_m).ceil() as usize).max(2);
    n + n % 2
}

fn planar_station(p: PlanarSample, heartline_height_m: f64) -> Station {
    // Inside the loop the rider's head points to the centre of curvature.
    let frame = RiderFrame::planar(p.pitch_rad, p.curvature_1_m);
    let heartline_m = Vector3::new(p.x_m, 0.0, p.z_m);
    let place = StationPlace {
        s_m: p.s_m,
        pitch_rad: p.pitch_rad,
        piece: p.piece,
        in_loop: p.in_loop,
    };
    let rail_m = heartline_m - heartline_height_m * frame.head;
    Station::from_frame(place, heartline_m, rail_m, frame)
}

/// Default lateral shift, m: one train envelope width (the rule is in [`crate::brief::defaults`]).
pub const DEFAULT_LATERAL_SHIFT_M: f64 = crate::brief::defaults::LATERAL_SHIFT_M;

/// y, dy/dσ and d²y/dσ² of the smootherstep spread over `[a, a + len]`.
pub fn lateral_offset(shift_m: f64, a: f64, len: f64, sigma: f64) -> (f64, f64, f64) {
    if len <= 0.0 || sigma <= a {
        return (0.0, 0.0, 0.0);
    }
    if sigma >= a + len {
        return (shift_m, 0.0, 0.0);
    }
    let u = (sigma - a) / len;
    let y = u * u * u * (10.0 + u * (-15.0 + 6.0 * u));
    let dy = 30.0 * u * u * (1.0 - u) * (1.0 - u);
    let ddy = 60.0 * u * (1.0 - u) * (1.0 - 2.0 * u);
    (shift_m * y, shift_m * dy / len, shift_m * ddy / (len * len))
}

impl Station {
    /// Roll of the rider's cross-axis from horizontal, rad: asin(left · ẑ). Positive means the
    /// rider's right side is down (the aircraft convention). Zero everywhere on a planar loop.
    pub fn roll_rad(&self) -> f64 {
        // + 0.0 turns −0 into 0, so tables do not print "-0.000" on level track.
        self.left.z.clamp(-1.0, 1.0).asin() + 0.0
    }
}

impl Centreline {
    /// As [`Centreline::build`], with the loop spread `lateral_shift_m` to the rider's left (negative:
    /// to the right) so that the exit passes beside the entry; see the module docs. A shift of 0
    /// is the planar loop itself: the spread pass would only work the same frames out again from
    /// the derivatives (equal to rounding, as `tests/train_shift_envelope.rs` checks), and it cost
    /// about a third of every planar centreline, which the whole shape search builds.
    pub fn build_shifted(
        profile: &CurvatureProfile,
        heartline_height_m: f64,
        spacing_m: f64,
        lateral_shift_m: f64,
    ) -> Centreline {
        let planar = Self::build(profile, heartline_height_m, spacing_m);
        if lateral_shift_m == 0.0 {
            planar
        } else {
            planar.with_lateral_shift(lateral_shift_m)
        }
    }

    /// Spread a planar centreline sideways (see the module docs). Station spacing stays that of the
    /// planar arc length σ; `s_m` becomes the true 3D heartline arc length.
    ///
    /// The stations are rewritten in place (no second buffer per evaluation). A zero shift makes
    /// every term of the arc-length integral exactly 0 (y' = 0·S' = 0): σ + 0 = σ;
    /// [`Centreline::build_shifted`] does not run the pass for it.
    pub fn with_lateral_shift(mut self, shift_m: f64) -> Centreline {
        let (a, b) = self.loop_span_m;
        let len = b - a;
        let h = self.heartline_height_m;
        // Planar arc lengths of boundaries (curvature steps, loop ends) are station arc lengths;
        // each maps to the true arc length of the first station that has it.
        let mut marks: Vec<(f64, Option<f64>)> = self.steps.iter().map(|c| (c.s_m, None)).collect();
        marks.push((a, None));
        marks.push((b, None));
        // s = σ + ∫(√(1 + y'²) − 1) dσ: only the small excess is integrated, so a zero shift gives
        // s = σ exactly and the excess keeps full relative precision.
        let mut excess = 0.0;
        let mut s0 = 0.0;
        for (i, st) in self.stations.iter_mut().enumerate() {
            let sigma = st.s_m;
            if i > 0 {
                let half = 0.5 * (sigma - s0);
                // y'² is a polynomial of degree 8 in σ and y' stays small (|y'| ≤ 1.875·shift/len),
                // so the excess y'²/(√(1 + y'²) + 1) ≈ y'²/2 is all but a polynomial: 4 points
                // (exact to degree 7) leave an error far below rounding on a sample interval.
                for (node, w) in GL4 {
                    let (_, dy, _) = lateral_offset(shift_m, a, len, s0 + half * (node + 1.0));
                    let d2 = dy * dy;
                    excess += half * w * d2 / ((1.0 + d2).sqrt() + 1.0);
                }
            }
            s0 = sigma;
            let (y, dy, ddy) = lateral_offset(shift_m, a, len, sigma);
            // The planar tangent is (cos θ, 0, sin θ): reuse it rather than recompute sin_cos.
            let (sn, cs) = (st.tangent.z, st.tangent.x);
            // Planar curvature of the profile (κ about the left axis of the unshifted loop).
            let k = st.curvature_1_m;
            // r′ and r″ in the planar arc length σ; the head keeps the planar loop's direction.
            let rp = Vector3::new(cs, dy, sn);
            let rpp = Vector3::new(-k * sn, ddy, k * cs);
            let frame = RiderFrame::from_derivatives(rp, rpp, st.head);
            let heartline_m = Vector3::new(st.heartline_m.x, y, st.heartline_m.z);
            let place = StationPlace {
                s_m: sigma + excess,
                pitch_rad: st.pitch_rad,
                piece: st.piece,
                in_loop: st.in_loop,
            };
            for (at, to) in marks.iter_mut() {
                if to.is_none() && *at == sigma {
                    *to = Some(place.s_m);
                }
            }
            let rail_m = heartline_m - h * frame.head;
            *st = Station::from_frame(place, heartline_m, rail_m, frame);
        }
        let to_true = |(at, to): (f64, Option<f64>)| to.unwrap_or(at);
        for (c, &mark) in self.steps.iter_mut().zip(&marks) {
            c.s_m = to_true(mark);
        }
        let n = marks.len();
        self.loop_span_m = (to_true(marks[n - 2]), to_true(marks[n - 1]));
        self
    }

    /// Largest |roll| of the rider's cross-axis anywhere on the path, rad.
    pub fn peak_roll_rad(&self) -> f64 {
        self.stations
            .iter()
            .map(|s| s.roll_rad().abs())
            .fold(0.0, f64::max)
    }

    /// Lateral extent of the heartline, m (max y − min y).
    pub fn lateral_extent_m(&self) -> f64 {
        let ys = self.stations.iter().map(|s| s.heartline_m.y);
        ys.clone().fold(f64::MIN, f64::max) - ys.fold(f64::MAX, f64::min)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::brief::ShapeKind;
    use crate::shape::family;
    use std::f64::consts::PI;

    // Every family's loop must close level at entry height (loop-closure; see shape module).
    #[test]
    fn loops_leave_level_at_entry_height() {
        for kind in ShapeKind::ALL {
            let f = family(kind).unwrap();
            let p = f
                .curvature_with_leads(&f.default_shape(), 8.0, 5.0)
                .unwrap();
            let c = Centreline::build(&p, 1.1, 0.05);
            let last = c.stations.last().unwrap();
            assert!(
                last.heartline_m.z.abs() < 1e-9,
                "{kind}: exit z = {}",
                last.heartline_m.z
            );
            assert!((last.pitch_rad - 2.0 * PI).abs() < 1e-12);
            // The rail sits heartline_height below the heartline on level track.
            assert!((last.rail_m.z + 1.1).abs() < 1e-12);
        }
    }

    // The height-only walk must give the full build's loop height to the bit (it stands in for
    // it in the shape search), for every family, shapes across their bounds, and sizes.
    #[test]
    fn height_only_walk_matches_the_full_build() {
        for kind in ShapeKind::ALL {
            let f = family(kind).unwrap();
            let bounds = f.shape_bounds();
            for u in [0.0, 0.13, 0.5, 0.77, 1.0] {
                let shape: Vec<f64> = bounds.iter().map(|(lo, hi)| lo + u * (hi - lo)).collect();
                for (r, spacing) in [(1.0, 0.01), (9.0, 0.3), (14.0, 0.05)] {
                    let Ok(p) = f.curvature(&shape, r) else {
                        continue;
                    };
                    let full = Centreline::build(&p, 1.1, spacing).loop_height_m();
                    let fast = Centreline::loop_height_only(&p, spacing);
                    assert_eq!(full.to_bits(), fast.to_bits(), "{kind} {shape:?} r {r}");
                }
            }
        }
    }

    // Smootherstep y = 6u⁵ − 15u⁴ + 10u³ (Perlin's "improved noise" fade curve): y(0)=0, y(1)=1,
    // y', y'' vanish at both ends; derivatives checked against central differences of y itself.
    #[test]
    fn lateral_offset_is_smootherstep_with_matching_derivatives() {
        let (shift, a, len) = (3.0, 5.0, 40.0);
        assert_eq!(lateral_offset(shift, a, len, a), (0.0, 0.0, 0.0));
        assert_eq!(lateral_offset(shift, a, len, a + len), (shift, 0.0, 0.0));
        let (y, _, ddy) = lateral_offset(shift, a, len, a + 0.5 * len);
        assert!((y - 1.5).abs() < 1e-15 && ddy.abs() < 1e-15);
        let h = 1e-4;
        for i in 1..20 {
            let x = a + len * i as f64 / 20.0;
            let (y0, dy, ddy) = lateral_offset(shift, a, len, x);
            let (ym, _, _) = lateral_offset(shift, a, len, x - h);
            let (yp, _, _) = lateral_offset(shift, a, len, x + h);
            assert!(((yp - ym) / (2.0 * h) - dy).abs() < 1e-8);
            assert!(((yp - 2.0 * y0 + ym) / (h * h) - ddy).abs() < 1e-5);
        }
    }

    // s_m must be the true 3D arc length: a chord of a smooth curve is shorter than its arc by
    // κ²Δs³/24 to leading order (Taylor expansion of the arc, e.g. do Carmo, "Differential
    // Geometry of Curves and Surfaces", §1-5), so |Δs − chord| must stay within that bound.
    #[test]
    fn shifted_arc_length_is_true_3d_arc_length() {
        let f = family(ShapeKind::Clothoid).unwrap();
        let p = f
            .curvature_with_leads(&f.default_shape(), 8.0, 5.0)
            .unwrap();
        let c = Centreline::build_shifted(&p, 1.1, 0.05, 3.0);
        let mut worst = 0.0f64;
        for w in c.stations.windows(2) {
            let ds = w[1].s_m - w[0].s_m;
            let chord = (w[1].heartline_m - w[0].heartline_m).norm();
            let k = w[0]
                .curvature_vec_1_m
                .norm()
                .max(w[1].curvature_vec_1_m.norm());
            let bound = 1.2 * k * k * ds.powi(3) / 24.0 + 1e-12;
            worst = worst.max((ds - chord).abs() / bound);
            assert!(
                ds - chord >= -1e-12 && ds - chord <= bound,
                "Δs {ds} chord {chord} bound {bound}"
            );
        }
        assert!(
            worst > 0.1,
            "the chord test never came near its bound ({worst}); is it testing anything?"
        );
        // The exit passes beside the entry, 3 m to the left, level.
        let last = c.stations.last().unwrap();
        assert!((last.heartline_m.y - 3.0).abs() < 1e-12 && last.heartline_m.z.abs() < 1e-9);
        assert!(c.peak_roll_rad() > 0.01);
        // Frames stay orthonormal.
        for st in &c.stations {
            assert!(
                (st.tangent.norm() - 1.0).abs() < 1e-12 && st.head.dot(&st.tangent).abs() < 1e-12
            );
            assert!((st.left.norm() - 1.0).abs() < 1e-12);
            assert!(st.curvature_vec_1_m.dot(&st.tangent).abs() < 1e-12);
        }
    }
}
