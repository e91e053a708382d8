//! The force-first family's target: the normal load a rider should feel along the turn.
//!
//! The user gives the normal load n(θ) as a function of the turning angle θ by control points
//! (angles and loads, mirrored about the top when symmetric), interpolated monotonically by PCHIP
//! — Fritsch & Carlson 1980, see [`crate::numeric::pchip`] — so the target never overshoots the
//! control loads ([`TargetLoad`]). The control loads are the family's shape parameters, which the
//! optimiser may tune ([`LoadProfile`] gives their labels, bounds and the loads as written); the
//! angles, the symmetry and the transition turn stay as written.
//!
//! Unlike the other families this is no curvature: the curvature that produces a target depends on
//! the speed (κ = g·(n(θ) − cos θ)/v² in a planar loop), so the optimiser's force-first stage
//! (`optimiser::force_first`) solves it for the brief's ride. Shapes know no speed.
//!
//! ```
//! use loopwright::shape::LoadProfile;
//! use loopwright::brief::ProfileInput;
//! let spec = ProfileInput {
//!     angles_deg: Some(vec![0.0, 90.0, 180.0]),
//!     normal_g: Some(vec![3.0, 2.0, 1.0]),
//!     symmetric: Some(true),
//!     transition_deg: Some(0.0),
//!     tune: None,
//! }
//! .resolve()
//! .unwrap();
//! let target = LoadProfile::new(spec).target(&[3.0, 2.0, 1.0]);
//! // Mirrored about the top: the load at 270° is the one written for 90°.
//! let turn = 1.5 * std::f64::consts::PI;
//! assert!((target.normal_g(turn) - 2.0).abs() < 1e-12);
//! ```

use std::f64::consts::PI;

use super::{ShapeError, check_parameters};
use crate::brief::{MAX_PROFILE_POINTS, PROFILE_LOAD_RANGE_G, ProfileSpec, ShapeKind};
use crate::numeric::pchip;

/// A brief's target load profile: the control points and how they are used.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadProfile {
    spec: ProfileSpec,
}

impl LoadProfile {
    pub fn new(spec: ProfileSpec) -> LoadProfile {
        LoadProfile { spec }
    }
    /// One label per control point as written (`normal_g_1` at the first angle, …).
    pub fn labels(&self) -> &'static [&'static str] {
        &LABELS[..self.spec.normal_g.len()]
    }
    /// Bounds of each control load, g.
    pub fn bounds(&self) -> &'static [(f64, f64)] {
        &BOUNDS[..self.spec.normal_g.len()]
    }
    /// The control loads as written in the brief, g.
    pub fn written_loads(&self) -> Vec<f64> {
        self.spec.normal_g.clone()
    }
    /// Turn spent in each transition from and to straight track, rad.
    pub fn transition_rad(&self) -> f64 {
        self.spec.transition_rad
    }
    /// Check control loads `shape` against the count and bounds (as every family's parameters).
    pub fn check(&self, shape: &[f64]) -> Result<(), ShapeError> {
        check_parameters(
            ShapeKind::Profile.name(),
            shape,
            self.bounds(),
            self.labels(),
        )
    }
    /// The target n(θ) for control loads `shape` (one per control angle as written).
    pub fn target(&self, shape: &[f64]) -> TargetLoad {
        TargetLoad::new(&self.spec.angles_rad, shape, self.spec.symmetric)
    }
}

/// Monotone piecewise-cubic (PCHIP) n(θ) through the control points over the whole turn.
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
