//! The force-first loop: curvature solved from a target normal load along the turn.
//!
//! The user gives the normal load n(θ) a rider should feel as a function of the turning angle θ
//! (control points, interpolated monotonically by PCHIP — Fritsch & Carlson 1980, see
//! [`crate::numeric::pchip`] — so the target never overshoots them; mirrored about the top when
//! symmetric).
//! In a planar loop the load is n = v²κ/g + cos θ, so the curvature that produces it is
//!
//! κ = g·(n(θ) − cos θ)/v²,
//!
//! and v² follows from energy with the same losses the dynamics stage uses:
//! d(v²)/ds = −2g·sin θ − 2μ·g·|n| − k·v². Taking θ as the independent variable (ds/dθ = 1/κ) gives
//! an ODE for s, x, z and v² that this module integrates with classical RK4 from entry to exit.
//! The curvature is returned as short cubic pieces of arc length (Hermite, matching κ and dκ/ds at
//! every ODE node), so the geometry stage integrates it like any other family.
//!
//! Unlike the other families, the shape depends on the ride: the entry speed and the losses set
//! the size, so there is no free `top_radius_m` ([`ShapeFamily::size_from_ride`] is true and the
//! size argument is ignored). Curvature starts and ends at zero through clothoid-like transitions:
//! over the first and last `transition` of turn κ is linear in arc length (an Euler spiral), and
//! meets the target curvature where the target takes over; the exit spiral turns exactly what is
//! left of 2π, so the loop always leaves level. A transition of 0 enters the target directly
//! (a curvature step, like a circle).
//!
//! Profiles that cannot make a loop are rejected with the reason: n ≤ cos θ somewhere (the track
//! would have to straighten or bend the other way), the speed running out, or a path so long that
//! the target is nearly straight track.
//!
//! ```
//! use loopwright::shape::{Profile, RideContext};
//! use loopwright::brief::ProfileInput;
//! let spec = ProfileInput {
//!     angles_deg: Some(vec![0.0, 180.0]),
//!     normal_g: Some(vec![3.0, 3.0]),
//!     symmetric: Some(true),
//!     transition_deg: Some(0.0),
//!     tune: None,
//! }
//! .resolve()
//! .unwrap();
//! let ride = RideContext { entry_speed_m_s: 25.0, rolling_resistance: 0.0, drag_per_metre: 0.0 };
//! let solved = Profile::new(spec, ride).solve(&[3.0, 3.0]).unwrap();
//! // Constant load n, lossless: v_top² = v₀²·((n − 1)/(n + 1))² (see the tests for the derivation).
//! assert!((solved.top_speed_m_s - 25.0 * 0.5).abs() < 1e-6);
//! ```

use std::f64::consts::PI;

use super::{CurvatureSegment, ShapeError, ShapeFamily};
use crate::brief::{MAX_PROFILE_POINTS, PROFILE_LOAD_RANGE_G, ProfileSpec, ShapeKind, defaults};
use crate::numeric::pchip;
use crate::units::STANDARD_GRAVITY_M_S2 as G;

/// What the profile family needs from the brief beyond the target: how the train is ridden.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RideContext {
    pub entry_speed_m_s: f64,
    /// Rolling resistance coefficient μ (dimensionless).
    pub rolling_resistance: f64,
    /// Drag per metre, k = ρ·CdA/m, 1/m.
    pub drag_per_metre: f64,
}

/// Force-first loop for one target load profile ridden at one speed.
#[derive(Debug, Clone, PartialEq)]
pub struct Profile {
    spec: ProfileSpec,
    ride: RideContext,
}

/// RK4 steps per radian of turn in the target part (0.25° steps).
const STEPS_PER_RAD: f64 = 4.0 * 180.0 / PI;
/// RK4 steps across each transition spiral.
const SPIRAL_STEPS: usize = 200;
/// Below this speed the target is said to run the train out of speed (illustrative).
pub const MIN_SPEED_M_S: f64 = 1.0;
/// Longer loops than this mean the target is nearly straight track somewhere.
pub const MAX_LOOP_LENGTH_M: f64 = 5000.0;

/// A solved force-first loop: the curvature pieces and what the solver predicted.
#[derive(Debug, Clone, PartialEq)]
pub struct SolvedProfile {
    pub segments: Vec<CurvatureSegment>,
    /// Heartline height of the exit above the entry, m (0 only when lossless and symmetric).
    pub exit_height_m: f64,
    pub top_speed_m_s: f64,
    pub exit_speed_m_s: f64,
    /// Arc length of the loop proper, m.
    pub length_m: f64,
}

/// Natural cubic spline n(θ) through the control points over the whole turn.
#[derive(Debug, Clone, PartialEq)]
pub struct TargetLoad {
    knots_rad: Vec<f64>,
    /// Per interval: value, slope, curvature/2, third derivative/6 in (θ − θᵢ).
    coeffs: Vec<[f64; 4]>,
}

impl TargetLoad {
    /// Monotone (PCHIP) interpolant through `(angles_rad, loads_g)`; with `symmetric` the points
    /// (to π) are mirrored to 2π.
    pub fn new(angles_rad: &[f64], loads_g: &[f64], symmetric: bool) -> TargetLoad {
        let (mut t, mut y) = (angles_rad.to_vec(), loads_g.to_vec());
        if symmetric {
            for i in (0..angles_rad.len() - 1).rev() {
                t.push(2.0 * PI - angles_rad[i]);
                y.push(loads_g[i]);
            }
        }
        let coeffs = pchip(&t, &y);
        TargetLoad {
            knots_rad: t,
            coeffs,
        }
    }
    fn locate(&self, theta: f64) -> (usize, f64) {
        let k = &self.knots_rad;
        let i = k
            .partition_point(|&x| x <= theta)
            .saturating_sub(1)
            .min(k.len() - 2);
        (i, theta - k[i])
    }
    /// Target load at turning angle `theta` (rad), g.
    pub fn normal_g(&self, theta: f64) -> f64 {
        let (i, d) = self.locate(theta);
        let c = &self.coeffs[i];
        c[0] + d * (c[1] + d * (c[2] + d * c[3]))
    }
    /// dn/dθ, g/rad.
    pub fn slope_g_rad(&self, theta: f64) -> f64 {
        let (i, d) = self.locate(theta);
        let c = &self.coeffs[i];
        c[1] + d * (2.0 * c[2] + d * 3.0 * c[3])
    }
}

fn fail(message: String) -> ShapeError {
    ShapeError {
        family: "profile",
        message,
    }
}

/// One node of the target part: turn, arc length, position, speed², curvature and its slope.
#[derive(Debug, Clone, Copy)]
struct Node {
    s_m: f64,
    kappa_1_m: f64,
    dkappa_ds_1_m2: f64,
}

impl Profile {
    /// The family for a brief's target profile ridden at the brief's speed with its losses.
    pub fn new(spec: ProfileSpec, ride: RideContext) -> Profile {
        Profile { spec, ride }
    }

    /// The target n(θ) for control loads `shape` (one per control angle as written).
    pub fn target(&self, shape: &[f64]) -> TargetLoad {
        TargetLoad::new(&self.spec.angles_rad, shape, self.spec.symmetric)
    }

    /// Speed² loss rate and load: d(v²)/ds and n at turn θ, speed² u, curvature κ.
    fn du_ds(&self, theta: f64, u: f64, kappa: f64) -> f64 {
        let n = u * kappa / G + theta.cos();
        -2.0 * G * theta.sin()
            - 2.0 * self.ride.rolling_resistance * G * n.abs()
            - self.ride.drag_per_metre * u
    }

    /// Integrate the loop for control loads `shape`.
    pub fn solve(&self, shape: &[f64]) -> Result<SolvedProfile, ShapeError> {
        let target = self.target(shape);
        let u0 = self.ride.entry_speed_m_s.powi(2);
        let th_t = self.spec.transition_rad;
        let min_u = MIN_SPEED_M_S * MIN_SPEED_M_S;
        let kappa_of = |theta: f64, u: f64| -> Result<f64, ShapeError> {
            let n = target.normal_g(theta);
            let d = n - theta.cos();
            if d <= 1e-6 {
                return Err(fail(format!(
                    "the target load {n:.3} g at θ = {:.1}° is not above cos θ = {:.3}; there the track would have to straighten or bend away from the rider's head, so it cannot turn through the loop",
                    theta.to_degrees(),
                    theta.cos()
                )));
            }
            if u < min_u {
                return Err(fail(format!(
                    "the speed runs out at θ = {:.1}° ({:.2} m/s, below {MIN_SPEED_M_S} m/s): the entry speed cannot carry these target loads round the loop",
                    theta.to_degrees(),
                    u.max(0.0).sqrt()
                )));
            }
            Ok(G * d / u)
        };
        // The target itself must exceed cos θ everywhere it applies; say so before integrating
        // (otherwise the track would run nearly straight towards the crossing and stall first).
        let th_end = 2.0 * PI - th_t;
        let scan = (((th_end - th_t) * STEPS_PER_RAD * 2.0).ceil() as usize).max(8);
        for i in 0..=scan {
            let th = th_t + (th_end - th_t) * i as f64 / scan as f64;
            kappa_of(th, u0)?;
        }
        let mut segments = Vec::new();
        // State after the entry spiral: s, x, z, u.
        let (mut s, mut z, mut u) = (0.0, 0.0, u0);
        if th_t > 0.0 {
            // The spiral's length depends on the speed where it meets the target, which depends on
            // the height the spiral climbs: solve u_join = u_end(u_join) by bisection (the
            // difference is positive for tiny u_join and negative at u_join = u0).
            let (mut lo, mut hi) = (0.0, u0);
            let mut found = None;
            for _ in 0..60 {
                let mid = 0.5 * (lo + hi);
                let k_join = kappa_of(th_t, mid.max(min_u))?;
                let length = 2.0 * th_t / k_join;
                match self.spiral(length, k_join, u0) {
                    Some((u_end, z_end)) if u_end > mid => {
                        lo = mid;
                        found = Some((mid, k_join, length, z_end));
                    }
                    _ => hi = mid,
                }
                if hi - lo < 1e-13 * u0 {
                    break;
                }
            }
            let Some((u_join, k_join, length, z_end)) = found else {
                return Err(fail("the train stalls in the entry transition; raise the entry speed or shorten transition_deg".into()));
            };
            segments.push(CurvatureSegment::clothoid(length, 0.0, k_join));
            s = length;
            z = z_end;
            u = u_join;
        }
        // Target part: RK4 in θ on (s, z, u); x is not needed here (geometry integrates it).
        let steps = (((th_end - th_t) * STEPS_PER_RAD).ceil() as usize).max(8);
        let h = (th_end - th_t) / steps as f64;
        let rhs = |theta: f64, y: [f64; 3]| -> Result<[f64; 3], ShapeError> {
            let k = kappa_of(theta, y[2])?;
            let ds = 1.0 / k;
            Ok([ds, theta.sin() * ds, self.du_ds(theta, y[2], k) * ds])
        };
        let node = |theta: f64, y: [f64; 3]| -> Result<Node, ShapeError> {
            let k = kappa_of(theta, y[2])?;
            // dκ/ds = κ·dκ/dθ, with κ = g(n − cos θ)/u: dκ/dθ = g(n' + sin θ)/u − κ·(du/dθ)/u.
            let du_dtheta = self.du_ds(theta, y[2], k) / k;
            let dk_dtheta =
                G * (target.slope_g_rad(theta) + theta.sin()) / y[2] - k * du_dtheta / y[2];
            Ok(Node {
                s_m: y[0],
                kappa_1_m: k,
                dkappa_ds_1_m2: k * dk_dtheta,
            })
        };
        let mut y = [s, z, u];
        let mut prev = node(th_t, y)?;
        let mut top_speed = u.sqrt();
        let mut body_turn = 0.0;
        for i in 0..steps {
            let th = th_t + h * i as f64;
            let k1 = rhs(th, y)?;
            let k2 = rhs(th + h / 2.0, add(y, k1, h / 2.0))?;
            let k3 = rhs(th + h / 2.0, add(y, k2, h / 2.0))?;
            let k4 = rhs(th + h, add(y, k3, h))?;
            for j in 0..3 {
                y[j] += h / 6.0 * (k1[j] + 2.0 * k2[j] + 2.0 * k3[j] + k4[j]);
            }
            if y[0] > MAX_LOOP_LENGTH_M {
                return Err(fail(format!(
                    "the path passes {MAX_LOOP_LENGTH_M} m before θ = {:.1}°: the target load is so close to cos θ that the track is nearly straight",
                    (th + h).to_degrees()
                )));
            }
            let next = node(th + h, y)?;
            let seg = hermite(&prev, &next);
            body_turn += seg.turn_rad(seg.length_m);
            segments.push(seg);
            if (th + h - PI).abs() <= h / 2.0 {
                top_speed = y[2].sqrt();
            }
            prev = next;
        }
        (s, z, u) = (y[0], y[1], y[2]);
        if th_t > 0.0 {
            // The exit spiral turns exactly what is left of 2π (the Hermite pieces' turn differs
            // from the ODE's by rounding), keeping curvature continuous and the exit level.
            let left = 2.0 * PI - th_t - body_turn;
            let length = 2.0 * left / prev.kappa_1_m;
            let (u_end, z_end) = self
                .spiral_out(length, prev.kappa_1_m, u, th_end)
                .ok_or_else(|| fail("the train stalls in the exit transition".into()))?;
            segments.push(CurvatureSegment::clothoid(length, prev.kappa_1_m, 0.0));
            s += length;
            z += z_end;
            u = u_end;
        } else {
            // No transition: the loop steps into straight track anyway; scale the pieces so they
            // turn exactly 2π.
            let f = 2.0 * PI / body_turn;
            for seg in &mut segments {
                seg.coeffs.iter_mut().for_each(|c| *c *= f);
            }
        }
        Ok(SolvedProfile {
            segments,
            exit_height_m: z,
            top_speed_m_s: top_speed,
            exit_speed_m_s: u.sqrt(),
            length_m: s,
        })
    }

    /// Entry spiral κ = k_join·t/L from pitch 0: speed² and height at its end (RK4 in arc length).
    fn spiral(&self, length: f64, k_join: f64, u0: f64) -> Option<(f64, f64)> {
        let a = k_join / length;
        self.run_spiral(length, u0, |t| (a * t * t / 2.0, a * t))
    }

    /// Exit spiral from curvature `k0` to 0 starting at pitch `theta0`: speed² and height gained.
    fn spiral_out(&self, length: f64, k0: f64, u0: f64, theta0: f64) -> Option<(f64, f64)> {
        let c = -k0 / length;
        self.run_spiral(length, u0, |t| {
            (theta0 + k0 * t + c * t * t / 2.0, k0 + c * t)
        })
    }

    fn run_spiral(
        &self,
        length: f64,
        u0: f64,
        pitch_kappa: impl Fn(f64) -> (f64, f64),
    ) -> Option<(f64, f64)> {
        let h = length / SPIRAL_STEPS as f64;
        let f = |t: f64, u: f64| {
            let (th, k) = pitch_kappa(t);
            (self.du_ds(th, u, k), th.sin())
        };
        let (mut u, mut z) = (u0, 0.0);
        for i in 0..SPIRAL_STEPS {
            let t = h * i as f64;
            let (a1, b1) = f(t, u);
            let (a2, b2) = f(t + h / 2.0, u + h / 2.0 * a1);
            let (a3, b3) = f(t + h / 2.0, u + h / 2.0 * a2);
            let (a4, b4) = f(t + h, u + h * a3);
            u += h / 6.0 * (a1 + 2.0 * a2 + 2.0 * a3 + a4);
            z += h / 6.0 * (b1 + 2.0 * b2 + 2.0 * b3 + b4);
            if u <= 0.0 {
                return None;
            }
        }
        Some((u, z))
    }
}

fn add(y: [f64; 3], k: [f64; 3], h: f64) -> [f64; 3] {
    [y[0] + h * k[0], y[1] + h * k[1], y[2] + h * k[2]]
}

/// Cubic in arc length matching κ and dκ/ds at both nodes (cubic Hermite interpolation).
fn hermite(a: &Node, b: &Node) -> CurvatureSegment {
    let h = b.s_m - a.s_m;
    let dk = (b.kappa_1_m - a.kappa_1_m) / h;
    let c2 = (3.0 * dk - 2.0 * a.dkappa_ds_1_m2 - b.dkappa_ds_1_m2) / h;
    let c3 = (a.dkappa_ds_1_m2 + b.dkappa_ds_1_m2 - 2.0 * dk) / (h * h);
    CurvatureSegment::cubic(h, [a.kappa_1_m, a.dkappa_ds_1_m2, c2, c3])
}

const LABELS: [&str; MAX_PROFILE_POINTS] = [
    "normal_g_1",
    "normal_g_2",
    "normal_g_3",
    "normal_g_4",
    "normal_g_5",
    "normal_g_6",
    "normal_g_7",
    "normal_g_8",
    "normal_g_9",
    "normal_g_10",
    "normal_g_11",
    "normal_g_12",
    "normal_g_13",
    "normal_g_14",
    "normal_g_15",
    "normal_g_16",
];
static BOUNDS: [(f64, f64); MAX_PROFILE_POINTS] = [PROFILE_LOAD_RANGE_G; MAX_PROFILE_POINTS];

impl Default for Profile {
    /// A demo target (3.5 g in, easing to 0.6 g over the top, symmetric) at the default entry
    /// speed, lossless: what [`super::family`] returns for `ShapeKind::Profile`. Briefs build their
    /// own with [`Profile::new`].
    fn default() -> Self {
        let spec = ProfileSpec {
            angles_rad: vec![0.0, PI / 4.0, PI / 2.0, PI],
            normal_g: vec![3.5, 3.2, 1.8, 0.6],
            symmetric: true,
            transition_rad: 20f64.to_radians(),
            tune: false,
        };
        let ride = RideContext {
            entry_speed_m_s: defaults::ENTRY_SPEED_M_S,
            rolling_resistance: 0.0,
            drag_per_metre: 0.0,
        };
        Profile { spec, ride }
    }
}

impl ShapeFamily for Profile {
    fn kind(&self) -> ShapeKind {
        ShapeKind::Profile
    }
    /// One label per control point as written (`normal_g_1` at the first angle, …).
    fn shape_labels(&self) -> &'static [&'static str] {
        &LABELS[..self.spec.normal_g.len()]
    }
    fn shape_bounds(&self) -> &'static [(f64, f64)] {
        &BOUNDS[..self.spec.normal_g.len()]
    }
    /// The loads as written in the brief.
    fn default_shape(&self) -> Vec<f64> {
        self.spec.normal_g.clone()
    }
    /// The loop for these control loads at the ride's speed; `top_radius_m` is ignored (the ride
    /// sets the size).
    fn loop_segments(
        &self,
        shape: &[f64],
        _top_radius_m: f64,
    ) -> Result<Vec<CurvatureSegment>, ShapeError> {
        Ok(self.solve(shape)?.segments)
    }
    fn size_from_ride(&self) -> bool {
        true
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Loop closure (elementary geometry): the loop proper turns exactly 2π, and the transitions
    // take the curvature from zero and back to zero without a step anywhere.
    #[test]
    fn default_profile_closes_with_zero_end_curvature() {
        let f = super::super::family(ShapeKind::Profile);
        assert!(f.size_from_ride());
        let p = f.curvature(&f.default_shape(), 1.0).unwrap();
        let l = p.length_m();
        assert!((p.pitch_rad(l) - 2.0 * PI).abs() < 1e-12);
        assert!(p.curvature_1_m(0.0).abs() < 1e-15 && p.curvature_1_m(l).abs() < 1e-12);
        let segs = p.segments();
        for w in segs.windows(2) {
            let (a, b) = (w[0].curvature_1_m(w[0].length_m), w[1].curvature_1_m(0.0));
            assert!((a - b).abs() <= 1e-12 * (1.0 + a.abs()), "step {a} → {b}");
        }
    }
}
