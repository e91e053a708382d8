//! Fitting a smooth centreline through imported points, and sampling it like a designed one.
//!
//! Loads follow curvature (n = v²κ/g + cos θ), so the fitted curve must carry the curvature of
//! the points without adding any. What that takes depends on the points ([`pieces`]):
//! - Exact points (a design's own files; anything whose estimated noise is under a tenth of the
//!   tolerance, or whose differences do not grow with their order as noise does) are
//!   INTERPOLATED by the not-a-knot cubic spline: its curvature follows the points' own to O(h²),
//!   and kinks in curvature slope stay kinks instead of being rounded away (smoothing rounded the
//!   demo's apex from 0.200 g to 0.189 g and cost 0.055 g at slope kinks).
//! - Noisy points are SMOOTHED by the penalised cubic smoothing spline (Reinsch 1967; Green &
//!   Silverman, "Nonparametric Regression and Generalized Linear Models", ch. 2): for each
//!   coordinate x(t), y(t), z(t) against the chord-length parameter t it minimises
//!   Σ (yᵢ − f(tᵢ))² + λ ∫ f''(t)² dt, so curvature is continuous (C²) and its slope piecewise
//!   continuous.
//! - Where the curvature jumps (a circle entered from straight track) the points are split and
//!   each side fitted on its own, meeting at the jump's point with a common tangent; the jump is
//!   sampled twice, as the geometry stage does for a designed loop, so the ride shows a load step
//!   there rather than a steep but finite onset.
//!
//! The [`FitReport`] says which was done, the estimated noise, the jumps and the residual.
//!
//! Tolerance (smoothing only): λ is the largest smoothing for which the RMS (3D) distance between the points and
//! the fitted curve stays within `tolerance_m` (found by bisection on log λ). The same λ is used
//! for all three coordinates, so the fit does not depend on how the loop is placed or turned. The
//! report gives the RMS and largest residual achieved.
//!
//! The curve r(t) is 3D (a loop spread sideways, as `design` draws it by default): tangent
//! T = r'/|r'|, curvature vector dT/ds = (r'' − (r''·T)T)/|r'|², true arc length ∫|r'| dt.
//!
//! Rider frame, the geometry stage's convention for shifted loops: the head stays in the loop's
//! main vertical plane, head = normalize(T × n̂), left = head × T, with n̂ the plane's unit normal
//! oriented to the rider's left at entry. The plane must be vertical within [`MAX_TILT_DEG`]
//! (tilt of the points' least-squares plane, via the symmetric eigen-decomposition of their
//! scatter matrix). Its direction is that of travel at entry and exit (the mean of the fitted
//! tangents at both ends, made horizontal within the plane): for a planar loop this is the plane
//! itself, and for a loop spread sideways with parallel entry and exit it is the plane the loop was
//! spread from. The least-squares plane is not used for the direction, because a sideways spread
//! turns it: for the default demo design (2.5 m shift) it is yawed 2.4°, which tips the head
//! sideways (about sin 2.4° × n) and gave 0.13 g of spurious lateral load in the round trip, where
//! the main plane gives 0.003 g (`tests/check_centreline.rs`).
//! A planar loop gives head = (−sin θ, 0, cos θ) in its own plane, as before. The points may
//! spread off the plane by at most [`max_lateral_spread_m`] (a quarter of the loop's in-plane size).
//!
//! Points may be the rail centreline or the heartline itself. From the rail r the heartline is
//! r_h = r + h·head at each parameter t. This is exact in 3D for this head convention: head stays
//! perpendicular to n̂, so head' ∥ n̂ × head, and T_h × n̂ ∥ head again, i.e. the heartline has the
//! same head vector. Its derivatives r_h' = r' + h·head', r_h'' = r'' + h·head'' are computed in
//! closed form from r', r'', r''' (the spline's third derivative), so the heartline's curvature
//! vector and arc length (Gauss–Legendre on |r_h'|) are those of the offset curve itself, without a
//! second fit or numerical differentiation. For a planar loop this reduces to κ_h = κ_r/(1 − hκ_r),
//! ds_h = (1 − hκ_r)·ds_r. The loop proper is where |κ| exceeds [`LOOP_CURVATURE_FRACTION`] of its
//! largest value.

use nalgebra::{Matrix3, SymmetricEigen, Vector3};

pub mod pieces;

use super::{Centreline, CurvatureStep, RiderFrame, Station, StationPlace};
use crate::numeric::{GL5, PiecewiseCubic, cubic_pieces};

/// Largest tilt of the loop's plane from vertical, degrees.
pub const MAX_TILT_DEG: f64 = 2.0;
/// Stations where |κ| exceeds this fraction of the largest |κ| make up the loop proper.
pub const LOOP_CURVATURE_FRACTION: f64 = 0.01;
/// Most stations a fitted centreline is sampled at (memory bound for hostile input).
pub const MAX_STATIONS: usize = 2_000_000;
/// Default fitting tolerance (RMS distance from the points), m: points whose estimated noise is
/// under a tenth of it are interpolated; noisier points are smoothed to it. Raise it to the
/// accuracy of edited or surveyed points (e.g. 1 mm for coordinates rounded to the millimetre).
pub const DEFAULT_TOLERANCE_M: f64 = 0.000_25;
/// Points whose estimated noise is under this fraction of the tolerance count as exact.
pub const EXACT_FRACTION_OF_TOLERANCE: f64 = 0.1;
/// Points whose fifth differences are under this multiple of their fourth count as exact whatever
/// their noise estimate (a smooth curve sampled coarsely; noise gives about 1.9).
pub const SMOOTH_GROWTH: f64 = 1.2;
/// Largest lateral spread as a fraction of the loop's in-plane size.
pub const MAX_LATERAL_SPREAD_FRACTION: f64 = 0.25;

/// Largest spread of the points across the loop's plane (max − min of their distance from it), m:
/// a quarter of the loop's in-plane size (the larger of its length and height), at least 0.1 m.
/// Generous enough for a loop spread sideways so its exit passes beside its entry (the demo's
/// 2.5 m on a loop about 47 m long is 5 %); beyond it the path is not a loop in a plane.
pub fn max_lateral_spread_m(in_plane_size_m: f64) -> f64 {
    (MAX_LATERAL_SPREAD_FRACTION * in_plane_size_m).max(0.1)
}

/// Which line the points describe.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum PointsAre {
    /// The rail (track) centreline; the heartline lies the heartline height above it.
    Rail,
    /// The rider's heartline.
    Heartline,
}

/// How to fit and sample.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitOptions {
    pub tolerance_m: f64,
    pub points_are: PointsAre,
    pub heartline_height_m: f64,
    /// Largest heartline distance between stations, m.
    pub spacing_m: f64,
}

/// How the points were fitted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum FitMethod {
    /// Exact points: the not-a-knot cubic spline through every point.
    Interpolated,
    /// Noisy points: the smoothing spline, as smooth as the tolerance allows.
    Smoothed,
}

/// What the fit did, for the report.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct FitReport {
    pub points: usize,
    pub points_are: PointsAre,
    /// Interpolated (exact points) or smoothed (noisy points).
    pub method: FitMethod,
    /// Estimated noise of the points across the curve, RMS (from their fourth differences; see
    /// [`pieces`]), m.
    pub noise_estimate_m: f64,
    /// Curvature jumps found in the points; the curve is fitted in one more piece than this.
    pub curvature_jumps: usize,
    pub tolerance_m: f64,
    pub rms_residual_m: f64,
    pub max_residual_m: f64,
    /// The smoothing weight λ, m³ (0 when interpolated).
    pub smoothing_m3: f64,
    /// Tilt of the points' least-squares plane from vertical, degrees.
    pub plane_tilt_deg: f64,
    /// Largest distance of a point from the loop's main plane through the points' centroid, m.
    pub max_out_of_plane_m: f64,
    /// Spread of the points across the main plane (max − min distance from it), m: the sideways
    /// shift of a loop spread so its exit passes beside its entry; 0 for a planar loop.
    pub lateral_extent_m: f64,
    /// Unit normal of the loop's main plane (the rider's left axis at entry).
    pub plane_normal: [f64; 3],
}

/// Why points could not be fitted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("cannot fit the centreline: {0}")]
pub struct FitError(pub String);

/// A penalised cubic smoothing spline y(t) (see the module docs).
///
/// Unlike an interpolating spline its values at the knots are unknowns too, so its system is
/// pentadiagonal (Reinsch's) rather than tridiagonal; once the knot values g and second
/// derivatives γ are solved, the pieces and their evaluation are the shared ones of
/// [`crate::numeric`].
#[derive(Debug, Clone, PartialEq)]
pub struct SmoothingSpline(PiecewiseCubic);

/// The banded (pentadiagonal) Cholesky factor of R + λ·QᵀQ for knots `t`.
struct Factor {
    l0: Vec<f64>,
    l1: Vec<f64>,
    l2: Vec<f64>,
}

fn factor(h: &[f64], lam: f64) -> Factor {
    let m = h.len() - 1;
    // Column j of Q (interior knot j+1) has 1/h_j, −1/h_j − 1/h_{j+1}, 1/h_{j+1} in rows j..j+2.
    let q = |j: usize| [1.0 / h[j], -1.0 / h[j] - 1.0 / h[j + 1], 1.0 / h[j + 1]];
    let (mut d, mut e, mut f) = (vec![0.0; m], vec![0.0; m], vec![0.0; m]);
    for j in 0..m {
        let a = q(j);
        d[j] = (h[j] + h[j + 1]) / 3.0 + lam * (a[0] * a[0] + a[1] * a[1] + a[2] * a[2]);
        if j + 1 < m {
            let b = q(j + 1);
            e[j] = h[j + 1] / 6.0 + lam * (a[1] * b[0] + a[2] * b[1]);
        }
        if j + 2 < m {
            f[j] = lam * a[2] * q(j + 2)[0];
        }
    }
    let (mut l0, mut l1, mut l2) = (vec![0.0; m], vec![0.0; m], vec![0.0; m]);
    for j in 0..m {
        let p1 = if j >= 1 { l1[j - 1] } else { 0.0 };
        let p2 = if j >= 2 { l2[j - 2] } else { 0.0 };
        l0[j] = (d[j] - p1 * p1 - p2 * p2).max(1e-300).sqrt();
        let q1 = if j >= 1 { l2[j - 1] * l1[j - 1] } else { 0.0 };
        l1[j] = (e[j] - q1) / l0[j];
        l2[j] = f[j] / l0[j];
    }
    Factor { l0, l1, l2 }
}

impl Factor {
    fn solve(&self, b: &[f64]) -> Vec<f64> {
        let m = b.len();
        let mut z = vec![0.0; m];
        for j in 0..m {
            let mut v = b[j];
            if j >= 1 {
                v -= self.l1[j - 1] * z[j - 1];
            }
            if j >= 2 {
                v -= self.l2[j - 2] * z[j - 2];
            }
            z[j] = v / self.l0[j];
        }
        let mut x = vec![0.0; m];
        for j in (0..m).rev() {
            let mut v = z[j];
            if j + 1 < m {
                v -= self.l1[j] * x[j + 1];
            }
            if j + 2 < m {
                v -= self.l2[j] * x[j + 2];
            }
            x[j] = v / self.l0[j];
        }
        x
    }
}

impl SmoothingSpline {
    /// Fit values `y` at strictly increasing `t` (at least 3) with smoothing weight `lam` ≥ 0.
    pub fn fit(t: &[f64], y: &[f64], lam: f64) -> SmoothingSpline {
        let h: Vec<f64> = t.windows(2).map(|w| w[1] - w[0]).collect();
        let f = factor(&h, lam);
        Self::with_factor(t, &h, &f, y, lam)
    }

    fn with_factor(t: &[f64], h: &[f64], f: &Factor, y: &[f64], lam: f64) -> SmoothingSpline {
        let n = t.len();
        let qty: Vec<f64> = (0..n - 2)
            .map(|j| (y[j + 2] - y[j + 1]) / h[j + 1] - (y[j + 1] - y[j]) / h[j])
            .collect();
        let gamma_inner = f.solve(&qty);
        let mut gamma = vec![0.0; n];
        gamma[1..n - 1].copy_from_slice(&gamma_inner);
        // g = y − λ·Q·γ.
        let mut g = y.to_vec();
        for j in 0..n - 2 {
            let gj = gamma_inner[j];
            g[j] -= lam * gj / h[j];
            g[j + 1] -= lam * gj * (-1.0 / h[j] - 1.0 / h[j + 1]);
            g[j + 2] -= lam * gj / h[j + 1];
        }
        SmoothingSpline(PiecewiseCubic::new(t.to_vec(), cubic_pieces(h, &g, &gamma)))
    }

    /// Value and first two derivatives at `t`.
    pub fn eval(&self, t: f64) -> [f64; 3] {
        let [f, df, ddf, _] = self.0.derivatives(t);
        [f, df, ddf]
    }

    /// Value and first three derivatives at `t` (the third is constant on each interval).
    pub fn eval3(&self, t: f64) -> [f64; 4] {
        self.0.derivatives(t)
    }
}

/// The unit vector e = p/|p| and its first two derivatives, from p, p' and p''.
///
/// e' = (p' − (p'·e)e)/|p|, and differentiating once more (|p|' = p'·e):
/// e'' = [p'' − (p''·e + p'·e')e − (p'·e)e']/|p| − (p'·e)(p' − (p'·e)e)/|p|².
fn unit_derivatives(
    p: Vector3<f64>,
    dp: Vector3<f64>,
    ddp: Vector3<f64>,
) -> (Vector3<f64>, Vector3<f64>, Vector3<f64>) {
    let len = p.norm();
    let e = p / len;
    let de_num = dp - dp.dot(&e) * e;
    let de = de_num / len;
    let dde = (ddp - (ddp.dot(&e) + dp.dot(&de)) * e - dp.dot(&e) * de) / len
        - dp.dot(&e) * de_num / (len * len);
    (e, de, dde)
}

/// The fitted x, y, z splines of each piece between curvature jumps (coordinates relative to the
/// points' centroid `c`). Piece k spans the points `ends[k]..=ends[k + 1]`.
struct Curve3 {
    c: Vector3<f64>,
    ends: Vec<usize>,
    pieces: Vec<[PiecewiseCubic; 3]>,
}

impl Curve3 {
    /// Position and first three derivatives of piece `k` with respect to the chord parameter.
    fn eval(&self, k: usize, t: f64) -> [Vector3<f64>; 4] {
        let [x, y, z] = [0, 1, 2].map(|c| self.pieces[k][c].derivatives(t));
        let v = |d: usize| Vector3::new(x[d], y[d], z[d]);
        [self.c + v(0), v(1), v(2), v(3)]
    }

    /// The piece point `i`'s interval `i..i+1` belongs to.
    fn piece_of_interval(&self, i: usize) -> usize {
        self.ends[1..].partition_point(|&e| e <= i)
    }
}

/// Fit every piece of the points (split at `ends`) by `fit_one`, with the RMS and largest
/// (3D) residual over all points.
fn fit_pieces(
    t: &[f64],
    coord: &[Vec<f64>; 3],
    c: Vector3<f64>,
    ends: &[usize],
    fit_one: &dyn Fn(&[f64], &[f64]) -> PiecewiseCubic,
) -> (Curve3, f64, f64) {
    let pieces: Vec<[PiecewiseCubic; 3]> = ends
        .windows(2)
        .map(|w| [0, 1, 2].map(|k| fit_one(&t[w[0]..=w[1]], &coord[k][w[0]..=w[1]])))
        .collect();
    let curve = Curve3 {
        c,
        ends: ends.to_vec(),
        pieces,
    };
    let n = t.len();
    let res: Vec<f64> = (0..n)
        .map(|i| {
            let k = curve.piece_of_interval(i.min(n - 2));
            let d: [f64; 3] = [0, 1, 2].map(|c| curve.pieces[k][c].value(t[i]) - coord[c][i]);
            (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt()
        })
        .collect();
    let rms = (res.iter().map(|r| r * r).sum::<f64>() / n as f64).sqrt();
    (curve, rms, res.iter().copied().fold(0.0, f64::max))
}

/// Fit the points and sample the result as a centreline.
pub fn fit_centreline(
    points: &[Vector3<f64>],
    opts: &FitOptions,
) -> Result<(Centreline, FitReport), FitError> {
    let n = points.len();
    if n < 4 {
        return Err(FitError(format!("{n} points; at least 4 are needed")));
    }
    if let Some(i) = points.iter().position(|p| !p.iter().all(|c| c.is_finite())) {
        return Err(FitError(format!("point {} is not finite", i + 1)));
    }
    if !(opts.spacing_m.is_finite() && opts.spacing_m > 0.0) {
        return Err(FitError(format!(
            "spacing {} m must be a positive number of metres",
            opts.spacing_m
        )));
    }
    if !(opts.tolerance_m.is_finite() && opts.tolerance_m > 0.0) {
        return Err(FitError(format!(
            "tolerance {} m must be a positive number of metres",
            opts.tolerance_m
        )));
    }
    // Least-squares plane, for the tilt and the in-plane vertical.
    let c = points.iter().sum::<Vector3<f64>>() / n as f64;
    let scatter: Matrix3<f64> = points.iter().map(|p| (p - c) * (p - c).transpose()).sum();
    let eig = SymmetricEigen::new(scatter);
    let mut order = [0usize, 1, 2];
    order.sort_by(|&a, &b| eig.eigenvalues[a].total_cmp(&eig.eigenvalues[b]));
    let mid = eig.eigenvalues[order[1]];
    let extent = points.iter().map(|p| (p - c).norm()).fold(0.0, f64::max);
    if mid <= 1e-12 * (n as f64) * extent.max(1e-9).powi(2) {
        return Err(FitError(
            "the points lie on a straight line; there is no loop to check".into(),
        ));
    }
    let best_fit: Vector3<f64> = eig.eigenvectors.column(order[0]).into_owned();
    let tilt_deg = best_fit.z.abs().min(1.0).asin().to_degrees();
    if tilt_deg > MAX_TILT_DEG {
        return Err(FitError(format!(
            "the points' best-fit plane is tilted {tilt_deg:.2}° from vertical (allowed {MAX_TILT_DEG}°); check handles loops drawn in a vertical plane with Z up (they may be spread sideways)"
        )));
    }
    // Chord-length parameter (3D).
    let mut t = vec![0.0; n];
    for i in 1..n {
        t[i] = t[i - 1] + (points[i] - points[i - 1]).norm();
    }
    let stations = t[n - 1] / opts.spacing_m + n as f64;
    if stations.is_nan() || stations > MAX_STATIONS as f64 {
        return Err(FitError(format!(
            "the points span {:.0} m of path; at a spacing of {} m that is more than {MAX_STATIONS} stations (raise --spacing, or check the units are metres)",
            t[n - 1],
            opts.spacing_m
        )));
    }
    let h: Vec<f64> = t.windows(2).map(|w| w[1] - w[0]).collect();
    if h.iter().any(|&d| d <= 0.0) {
        return Err(FitError("two consecutive points coincide".into()));
    }
    let coord: [Vec<f64>; 3] = [0, 1, 2].map(|k| points.iter().map(|p| p[k] - c[k]).collect());
    // Exact or noisy, and where the curvature jumps (see `pieces`).
    let rough = pieces::roughness(&t, points);
    let exact = rough.noise_rms_m <= EXACT_FRACTION_OF_TOLERANCE * opts.tolerance_m
        || rough.growth < SMOOTH_GROWTH;
    let mut ends = vec![0];
    ends.extend(pieces::curvature_jumps(&t, points, rough.noise_rms_m));
    ends.push(n - 1);
    let (curve, rms, max_res, lam, method) = if exact {
        let (curve, rms, max_res) =
            fit_pieces(&t, &coord, c, &ends, &|t, y| pieces::not_a_knot(t, y));
        (curve, rms, max_res, 0.0, FitMethod::Interpolated)
    } else {
        let fit_at = |lam: f64| {
            fit_pieces(&t, &coord, c, &ends, &|t, y| {
                SmoothingSpline::fit(t, y, lam).0
            })
        };
        // Bisection on log λ: the residual grows with λ.
        let mean_h = t[n - 1] / (n - 1) as f64;
        let (mut lo, mut hi) = ((mean_h.powi(3) * 1e-12).ln(), (mean_h.powi(3) * 1e16).ln());
        if fit_at(hi.exp()).1 <= opts.tolerance_m {
            lo = hi;
        } else {
            for _ in 0..64 {
                let mid = 0.5 * (lo + hi);
                if fit_at(mid.exp()).1 <= opts.tolerance_m {
                    lo = mid
                } else {
                    hi = mid
                }
            }
        }
        let (curve, rms, max_res) = fit_at(lo.exp());
        (curve, rms, max_res, lo.exp(), FitMethod::Smoothed)
    };

    // The main plane: vertical e_z of the least-squares plane, and the direction of travel at
    // entry and exit made horizontal within it (see the module docs).
    let e_z = (Vector3::z() - best_fit * best_fit.z).normalize();
    let last_piece = curve.pieces.len() - 1;
    let tangent_at = |k: usize, tt: f64| curve.eval(k, tt)[1].normalize();
    let t_in = tangent_at(0, t[0]);
    let both_ends = t_in + tangent_at(last_piece, t[n - 1]);
    let along = both_ends - e_z * both_ends.dot(&e_z);
    let mut e_a = if along.norm() > 0.5 {
        along.normalize()
    } else {
        // Entry and exit vertical or opposed: fall back to the least-squares plane.
        e_z.cross(&best_fit).normalize()
    };
    if t_in.dot(&e_a) < 0.0 || (t_in.dot(&e_a) == 0.0 && (points[1] - points[0]).dot(&e_a) < 0.0) {
        e_a = -e_a;
    }
    let normal = e_z.cross(&e_a);
    let across: Vec<f64> = points.iter().map(|p| (p - c).dot(&normal)).collect();
    let spread = |v: &mut dyn Iterator<Item = f64>| {
        let (lo, hi) = v.fold((f64::MAX, f64::MIN), |(a, b), x| (a.min(x), b.max(x)));
        hi - lo
    };
    let lateral_extent = spread(&mut across.iter().copied());
    let in_plane_size = spread(&mut points.iter().map(|p| (p - c).dot(&e_a)))
        .max(spread(&mut points.iter().map(|p| (p - c).dot(&e_z))));
    let allowed = max_lateral_spread_m(in_plane_size);
    if lateral_extent > allowed {
        return Err(FitError(format!(
            "the points spread {lateral_extent:.3} m across the loop's plane (allowed {allowed:.3} m, a quarter of the loop's {in_plane_size:.2} m size in its plane); check handles loops in a vertical plane, spread sideways at most that much"
        )));
    }
    let out_of_plane = across.iter().map(|d| d.abs()).fold(0.0, f64::max);

    let hh = match opts.points_are {
        PointsAre::Rail => opts.heartline_height_m,
        PointsAre::Heartline => 0.0,
    };
    // Heartline position, first and second derivative, head and its derivative, at parameter t.
    struct Local {
        given: Vector3<f64>,
        head: Vector3<f64>,
        d1: Vector3<f64>,
        d2: Vector3<f64>,
        /// Curvature of the given line towards the head, 1/m.
        kappa_given: f64,
    }
    let local = |k: usize, tt: f64| -> Result<Local, FitError> {
        let [given, p, q, w] = curve.eval(k, tt);
        let (tan, dtan, ddtan) = unit_derivatives(p, q, w);
        let u = tan.cross(&normal);
        if u.norm() < 1e-3 {
            return Err(FitError(format!(
                "the path runs straight across the loop's plane near {:.2} m along it; the rider's head cannot be placed in the plane",
                tt
            )));
        }
        let (head, dhead, ddhead) = unit_derivatives(u, dtan.cross(&normal), ddtan.cross(&normal));
        Ok(Local {
            given,
            head,
            d1: p + dhead * hh,
            d2: q + ddhead * hh,
            kappa_given: dtan.dot(&head) / p.norm(),
        })
    };
    let mut stations = Vec::new();
    let mut s_h = 0.0;
    let mut pitch_prev: Option<f64> = None;
    let mut push = |k: usize, tt: f64, s_h: f64| -> Result<(), FitError> {
        let l = local(k, tt)?;
        let shrink = 1.0 - hh * l.kappa_given;
        if shrink < 0.1 {
            return Err(FitError(format!(
                "the rail radius {:.3} m near s = {s_h:.2} m is not well above the heartline height {hh} m; the heartline would fold",
                1.0 / l.kappa_given
            )));
        }
        let frame = RiderFrame::from_derivatives(l.d1, l.d2, l.head);
        let tangent = frame.tangent;
        let mut th = tangent.dot(&e_z).atan2(tangent.dot(&e_a));
        if let Some(p) = pitch_prev {
            th += (2.0 * std::f64::consts::PI) * ((p - th) / (2.0 * std::f64::consts::PI)).round();
        }
        pitch_prev = Some(th);
        let head = l.head;
        let (heartline_m, rail_m) = match opts.points_are {
            PointsAre::Rail => (l.given + head * hh, l.given),
            PointsAre::Heartline => (l.given, l.given - head * opts.heartline_height_m),
        };
        let place = StationPlace {
            s_m: s_h,
            pitch_rad: th,
            piece: k,
            in_loop: false,
        };
        stations.push(Station::from_frame(place, heartline_m, rail_m, frame));
        Ok(())
    };
    push(0, t[0], 0.0)?;
    // ds_h/dt = |r_h'|; the fold check at the stations guards the integrand's sign.
    let w = |k: usize, tt: f64| local(k, tt).map_or(0.0, |l| l.d1.norm());
    for i in 0..n - 1 {
        let (t0, t1) = (t[i], t[i + 1]);
        let piece = curve.piece_of_interval(i);
        if i > 0 && piece != curve.piece_of_interval(i - 1) {
            // A curvature jump: the same point again, on the piece after it.
            push(piece, t0, s_h)?;
        }
        // Sub-steps no longer than the spacing (at the heartline, allowing for the offset).
        let k = ((t1 - t0) / opts.spacing_m).ceil().max(1.0) as usize;
        let dt = (t1 - t0) / k as f64;
        for j in 0..k {
            let a0 = t0 + dt * j as f64;
            let ds: f64 = GL5
                .iter()
                .map(|(x, wt)| 0.5 * dt * wt * w(piece, a0 + 0.5 * dt * (x + 1.0)))
                .sum();
            s_h += ds;
            push(piece, a0 + dt, s_h)?;
        }
    }
    let steps: Vec<CurvatureStep> = (1..stations.len())
        .filter(|&i| stations[i].piece != stations[i - 1].piece)
        .map(|i| CurvatureStep {
            s_m: stations[i].s_m,
            before_1_m: stations[i - 1].curvature_1_m,
            after_1_m: stations[i].curvature_1_m,
        })
        .collect();
    let kmax = stations
        .iter()
        .map(|s| s.curvature_1_m.abs())
        .fold(0.0, f64::max);
    let idx: Vec<usize> = (0..stations.len())
        .filter(|&i| stations[i].curvature_1_m.abs() > LOOP_CURVATURE_FRACTION * kmax)
        .collect();
    let (first, last) = match (idx.first(), idx.last()) {
        (Some(&f), Some(&l)) => (f, l),
        _ => (0, stations.len() - 1),
    };
    for st in &mut stations[first..=last] {
        st.in_loop = true;
    }
    let loop_span_m = (stations[first].s_m, stations[last].s_m);
    let report = FitReport {
        points: n,
        points_are: opts.points_are,
        method,
        noise_estimate_m: rough.noise_rms_m,
        curvature_jumps: ends.len() - 2,
        tolerance_m: opts.tolerance_m,
        rms_residual_m: rms,
        max_residual_m: max_res,
        smoothing_m3: lam,
        plane_tilt_deg: tilt_deg,
        max_out_of_plane_m: out_of_plane,
        lateral_extent_m: lateral_extent,
        plane_normal: [normal.x, normal.y, normal.z],
    };
    Ok((
        Centreline {
            stations,
            steps,
            heartline_height_m: opts.heartline_height_m,
            loop_span_m,
        },
        report,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    // e = p/|p| on a helix-like curve p(t) = (cos t, sin 2t, t²): e' and e'' against central
    // differences of e itself (numerical analysis; the O(h²) error at h = 1e-4 is ~1e-8).
    #[test]
    fn unit_vector_derivatives_match_differences() {
        let p = |t: f64| Vector3::new(t.cos() + 2.0, (2.0 * t).sin(), t * t);
        let dp = |t: f64| Vector3::new(-t.sin(), 2.0 * (2.0 * t).cos(), 2.0 * t);
        let ddp = |t: f64| Vector3::new(-t.cos(), -4.0 * (2.0 * t).sin(), 2.0);
        let e = |t: f64| p(t).normalize();
        let h = 1e-4;
        for k in 0..10 {
            let t = -1.0 + 0.25 * k as f64;
            let (e0, de, dde) = unit_derivatives(p(t), dp(t), ddp(t));
            assert!((e0 - e(t)).norm() < 1e-15);
            let fd1 = (e(t + h) - e(t - h)) / (2.0 * h);
            let fd2 = (e(t + h) - 2.0 * e(t) + e(t - h)) / (h * h);
            assert!((de - fd1).norm() < 1e-7, "{t}: {de:?} vs {fd1:?}");
            assert!((dde - fd2).norm() < 1e-5, "{t}: {dde:?} vs {fd2:?}");
        }
    }
}
