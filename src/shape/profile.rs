//! The force-first family's target: the normal load a rider should feel along the turn.
//!
//! The user gives the normal load n(θ) as a function of the turning angle θ by control points
//! (angles and loads, mirrored about the top when symmetric), interpolated by a natural cubic
//! spline ([`TargetLoad`]). The control loads are the family's shape parameters, which the
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

/// Natural cubic spline n(θ) through the control points over the whole turn.
#[derive(Debug, Clone, PartialEq)]
pub struct TargetLoad {
    knots_rad: Vec<f64>,
    /// Per interval: value, slope, curvature/2, third derivative/6 in (θ − θᵢ).
    coeffs: Vec<[f64; 4]>,
}

impl TargetLoad {
    /// Spline through `(angles_rad, loads_g)`; with `symmetric` the points (to π) are mirrored to 2π.
    pub fn new(angles_rad: &[f64], loads_g: &[f64], symmetric: bool) -> TargetLoad {
        let (mut t, mut y) = (angles_rad.to_vec(), loads_g.to_vec());
        if symmetric {
            for i in (0..angles_rad.len() - 1).rev() {
                t.push(2.0 * PI - angles_rad[i]);
                y.push(loads_g[i]);
            }
        }
        let coeffs = natural_spline(&t, &y);
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

/// Natural cubic spline coefficients (zero second derivative at both ends), by the tridiagonal
/// system for the second derivatives (de Boor, "A Practical Guide to Splines", ch. IV).
fn natural_spline(t: &[f64], y: &[f64]) -> Vec<[f64; 4]> {
    let n = t.len();
    let h: Vec<f64> = (0..n - 1).map(|i| t[i + 1] - t[i]).collect();
    let mut m = vec![0.0; n];
    if n > 2 {
        // Thomas algorithm on rows 1..n−2.
        let k = n - 2;
        let (mut diag, mut rhs) = (vec![0.0; k], vec![0.0; k]);
        for r in 0..k {
            let i = r + 1;
            diag[r] = 2.0 * (h[i - 1] + h[i]);
            rhs[r] = 6.0 * ((y[i + 1] - y[i]) / h[i] - (y[i] - y[i - 1]) / h[i - 1]);
        }
        for r in 1..k {
            let w = h[r] / diag[r - 1];
            diag[r] -= w * h[r];
            rhs[r] -= w * rhs[r - 1];
        }
        for r in (0..k).rev() {
            let next = if r + 1 < k { m[r + 2] } else { 0.0 };
            m[r + 1] = (rhs[r] - h[r + 1] * next) / diag[r];
        }
    }
    (0..n - 1)
        .map(|i| {
            let b = (y[i + 1] - y[i]) / h[i] - h[i] * (2.0 * m[i] + m[i + 1]) / 6.0;
            [y[i], b, m[i] / 2.0, (m[i + 1] - m[i]) / (6.0 * h[i])]
        })
        .collect()
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

#[cfg(test)]
mod tests {
    use super::*;

    // Natural cubic spline defining conditions (de Boor, ch. IV): interpolation, C² joins, zero
    // second derivative at both ends; compared with scipy's CubicSpline(bc_type="natural") in
    // tests/force_first.rs as well.
    #[test]
    fn target_spline_is_natural_and_interpolates() {
        let t = [0.0, 0.5, 1.7, 3.0, PI];
        let y = [1.0, 3.0, 2.5, 0.5, 0.4];
        let c = natural_spline(&t, &y);
        for i in 0..4 {
            let h = t[i + 1] - t[i];
            let ev = |p: [f64; 4], d: f64| p[0] + d * (p[1] + d * (p[2] + d * p[3]));
            assert!((ev(c[i], 0.0) - y[i]).abs() < 1e-12 && (ev(c[i], h) - y[i + 1]).abs() < 1e-12);
            if i < 3 {
                let d2 = |p: [f64; 4], d: f64| 2.0 * p[2] + 6.0 * p[3] * d;
                assert!((d2(c[i], h) - d2(c[i + 1], 0.0)).abs() < 1e-9);
            }
        }
        assert!(c[0][2].abs() < 1e-15);
        let h = t[4] - t[3];
        assert!((2.0 * c[3][2] + 6.0 * c[3][3] * h).abs() < 1e-9);
    }
}
