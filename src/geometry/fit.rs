//! Fitting a smooth centreline through imported points, and sampling it like a designed one.
//!
//! Finite differences of raw points give noisy curvature, and loads follow curvature
//! (n = v²κ/g + cos θ), so the points are smoothed first. The smoother is the penalised cubic
//! smoothing spline (Reinsch 1967; Green & Silverman, "Nonparametric Regression and Generalized
//! Linear Models", ch. 2): for each in-plane coordinate y(t) against chord-length parameter t it
//! minimises Σ (yᵢ − f(tᵢ))² + λ ∫ f''(t)² dt. The result is a cubic spline, so curvature is
//! continuous (C²) and its slope piecewise continuous.
//!
//! Tolerance: λ is the largest smoothing for which the RMS distance between the points and the
//! fitted curve stays within `tolerance_m` (found by bisection on log λ). The same λ is used for
//! both coordinates. The report gives the RMS and largest residual achieved.
//!
//! The loop is treated as planar: the points' best-fit plane (least squares, via the symmetric
//! eigen-decomposition of their scatter matrix) must be vertical within [`MAX_TILT_DEG`] and hold
//! the points within [`max_out_of_plane_m`]. Its normal is the rider's left axis. Points may be the
//! rail centreline (the heartline is then offset by the heartline height towards the rider's head,
//! exact for plane curves: κ_h = κ_r/(1 − hκ_r), ds_h = (1 − hκ_r)·ds_r) or the heartline itself.
//! The loop proper is where |κ| exceeds [`LOOP_CURVATURE_FRACTION`] of its largest value.

use nalgebra::{Matrix3, SymmetricEigen, Vector3};

use super::{Centreline, Station};

/// Largest tilt of the loop's plane from vertical, degrees.
pub const MAX_TILT_DEG: f64 = 2.0;
/// Stations where |κ| exceeds this fraction of the largest |κ| make up the loop proper.
pub const LOOP_CURVATURE_FRACTION: f64 = 0.01;
/// Most stations a fitted centreline is sampled at (memory bound for hostile input).
pub const MAX_STATIONS: usize = 2_000_000;
/// Default fitting tolerance (RMS distance from the points), m. Chosen so that exact points of a
/// designed loop come back within 0.05 g (the round-trip tests); raise it to the accuracy of
/// edited or surveyed points (e.g. 1 mm for coordinates rounded to the millimetre).
pub const DEFAULT_TOLERANCE_M: f64 = 0.000_25;

/// Largest distance of any point from the fitted plane, m: 0.1 m or 2 % of the loop's extent.
pub fn max_out_of_plane_m(extent_m: f64) -> f64 {
    (0.02 * extent_m).max(0.1)
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

/// What the fit did, for the report.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct FitReport {
    pub points: usize,
    pub points_are: PointsAre,
    pub tolerance_m: f64,
    pub rms_residual_m: f64,
    pub max_residual_m: f64,
    /// The smoothing weight λ, m³.
    pub smoothing_m3: f64,
    pub plane_tilt_deg: f64,
    pub max_out_of_plane_m: f64,
    /// Unit normal of the loop's plane (the rider's left axis).
    pub plane_normal: [f64; 3],
}

/// Why points could not be fitted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("cannot fit the centreline: {0}")]
pub struct FitError(pub String);

/// A penalised cubic smoothing spline y(t) (see the module docs).
#[derive(Debug, Clone, PartialEq)]
pub struct SmoothingSpline {
    knots: Vec<f64>,
    /// Per interval: value, slope, curvature/2, third derivative/6 in (t − tᵢ).
    coeffs: Vec<[f64; 4]>,
}

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
        let coeffs = (0..n - 1)
            .map(|i| {
                let b = (g[i + 1] - g[i]) / h[i] - h[i] * (2.0 * gamma[i] + gamma[i + 1]) / 6.0;
                [
                    g[i],
                    b,
                    gamma[i] / 2.0,
                    (gamma[i + 1] - gamma[i]) / (6.0 * h[i]),
                ]
            })
            .collect();
        SmoothingSpline {
            knots: t.to_vec(),
            coeffs,
        }
    }

    /// Value and first two derivatives at `t`.
    pub fn eval(&self, t: f64) -> [f64; 3] {
        let k = &self.knots;
        let i = k
            .partition_point(|&x| x <= t)
            .saturating_sub(1)
            .min(k.len() - 2);
        let d = t - k[i];
        let c = &self.coeffs[i];
        [
            c[0] + d * (c[1] + d * (c[2] + d * c[3])),
            c[1] + d * (2.0 * c[2] + d * 3.0 * c[3]),
            2.0 * c[2] + 6.0 * c[3] * d,
        ]
    }
}

/// 5-point Gauss–Legendre nodes and weights on [−1, 1] (Abramowitz & Stegun, Table 25.4).
const GL5: [(f64, f64); 5] = [
    (-0.906_179_845_938_664, 0.236_926_885_056_189_1),
    (-0.538_469_310_105_683_1, 0.478_628_670_499_366_5),
    (0.0, 0.568_888_888_888_888_9),
    (0.538_469_310_105_683_1, 0.478_628_670_499_366_5),
    (0.906_179_845_938_664, 0.236_926_885_056_189_1),
];

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
    // Best-fit plane.
    let c = points.iter().sum::<Vector3<f64>>() / n as f64;
    let scatter: Matrix3<f64> = points.iter().map(|p| (p - c) * (p - c).transpose()).sum();
    let eig = SymmetricEigen::new(scatter);
    let mut order = [0usize, 1, 2];
    order.sort_by(|&a, &b| eig.eigenvalues[a].total_cmp(&eig.eigenvalues[b]));
    let (small, mid) = (eig.eigenvalues[order[0]], eig.eigenvalues[order[1]]);
    let extent = points.iter().map(|p| (p - c).norm()).fold(0.0, f64::max);
    if mid <= 1e-12 * (n as f64) * extent.max(1e-9).powi(2) {
        return Err(FitError(
            "the points lie on a straight line; there is no loop to check".into(),
        ));
    }
    let mut normal: Vector3<f64> = eig.eigenvectors.column(order[0]).into_owned();
    let tilt_deg = normal.z.abs().min(1.0).asin().to_degrees();
    if tilt_deg > MAX_TILT_DEG {
        return Err(FitError(format!(
            "the points' best-fit plane is tilted {tilt_deg:.2}° from vertical (allowed {MAX_TILT_DEG}°); check handles loops drawn in a vertical plane with Z up"
        )));
    }
    let out_of_plane = points
        .iter()
        .map(|p| (p - c).dot(&normal).abs())
        .fold(0.0, f64::max);
    let allowed = max_out_of_plane_m(extent);
    if out_of_plane > allowed {
        return Err(FitError(format!(
            "a point lies {out_of_plane:.3} m off the loop's best-fit plane (allowed {allowed:.3} m); check handles planar loops only"
        )));
    }
    let _ = small;
    // In-plane axes: e_z vertical, e_a horizontal along the direction of travel at entry.
    let e_z = (Vector3::z() - normal * normal.z).normalize();
    let mut e_a = e_z.cross(&normal).normalize();
    if (points[1] - points[0]).dot(&e_a) < 0.0 {
        e_a = -e_a;
    }
    // Left axis (head × tangent in the design frame is e_z × e_a).
    normal = e_z.cross(&e_a);
    let a: Vec<f64> = points.iter().map(|p| (p - c).dot(&e_a)).collect();
    let z: Vec<f64> = points.iter().map(|p| (p - c).dot(&e_z)).collect();
    let mut t = vec![0.0; n];
    for i in 1..n {
        t[i] = t[i - 1] + (a[i] - a[i - 1]).hypot(z[i] - z[i - 1]);
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
    let fit_at = |lam: f64| {
        let f = factor(&h, lam);
        let sa = SmoothingSpline::with_factor(&t, &h, &f, &a, lam);
        let sz = SmoothingSpline::with_factor(&t, &h, &f, &z, lam);
        let res: Vec<f64> = (0..n)
            .map(|i| (sa.eval(t[i])[0] - a[i]).hypot(sz.eval(t[i])[0] - z[i]))
            .collect();
        let rms = (res.iter().map(|r| r * r).sum::<f64>() / n as f64).sqrt();
        (sa, sz, rms, res.iter().copied().fold(0.0, f64::max))
    };
    // Bisection on log λ: the residual grows with λ.
    let mean_h = t[n - 1] / (n - 1) as f64;
    let (mut lo, mut hi) = ((mean_h.powi(3) * 1e-12).ln(), (mean_h.powi(3) * 1e16).ln());
    if fit_at(hi.exp()).2 <= opts.tolerance_m {
        lo = hi;
    } else {
        for _ in 0..64 {
            let mid = 0.5 * (lo + hi);
            if fit_at(mid.exp()).2 <= opts.tolerance_m {
                lo = mid
            } else {
                hi = mid
            }
        }
    }
    let lam = lo.exp();
    let (sa, sz, rms, max_res) = fit_at(lam);

    // Heartline quantities at parameter t.
    let hh = match opts.points_are {
        PointsAre::Rail => opts.heartline_height_m,
        PointsAre::Heartline => 0.0,
    };
    let at = |tt: f64| {
        let [ax, a1, a2] = sa.eval(tt);
        let [zx, z1, z2] = sz.eval(tt);
        let speed = a1.hypot(z1);
        let kappa = (a1 * z2 - z1 * a2) / speed.powi(3);
        (ax, zx, a1, z1, speed, kappa)
    };
    let mut stations = Vec::new();
    let mut s_h = 0.0;
    let mut pitch_prev: Option<f64> = None;
    let mut push = |tt: f64, s_h: f64| -> Result<(), FitError> {
        let (ax, zx, a1, z1, _, kappa) = at(tt);
        let mut th = z1.atan2(a1);
        if let Some(p) = pitch_prev {
            th += (2.0 * std::f64::consts::PI) * ((p - th) / (2.0 * std::f64::consts::PI)).round();
        }
        pitch_prev = Some(th);
        let shrink = 1.0 - hh * kappa;
        if shrink < 0.1 {
            return Err(FitError(format!(
                "the rail radius {:.3} m near s = {s_h:.2} m is not well above the heartline height {hh} m; the heartline would fold",
                1.0 / kappa
            )));
        }
        let (sn, cs) = th.sin_cos();
        let tangent = e_a * cs + e_z * sn;
        let head = e_z * cs - e_a * sn;
        let left = head.cross(&tangent);
        let given = c + e_a * ax + e_z * zx;
        let (heartline_m, rail_m, k_h) = match opts.points_are {
            PointsAre::Rail => (given + head * hh, given, kappa / shrink),
            PointsAre::Heartline => (given, given - head * opts.heartline_height_m, kappa),
        };
        stations.push(Station {
            s_m: s_h,
            heartline_m,
            rail_m,
            tangent,
            head,
            left,
            pitch_rad: th,
            curvature_1_m: k_h,
            curvature_vec_1_m: head * k_h,
            piece: 0,
            in_loop: false,
        });
        Ok(())
    };
    push(0.0, 0.0)?;
    let w = |tt: f64| {
        let (_, _, _, _, speed, kappa) = at(tt);
        speed * (1.0 - hh * kappa)
    };
    for i in 0..n - 1 {
        let (t0, t1) = (t[i], t[i + 1]);
        // Sub-steps no longer than the spacing (at the heartline, allowing for the offset).
        let k = ((t1 - t0) / opts.spacing_m).ceil().max(1.0) as usize;
        let dt = (t1 - t0) / k as f64;
        for j in 0..k {
            let a0 = t0 + dt * j as f64;
            let ds: f64 = GL5
                .iter()
                .map(|(x, wt)| 0.5 * dt * wt * w(a0 + 0.5 * dt * (x + 1.0)))
                .sum();
            s_h += ds;
            push(a0 + dt, s_h)?;
        }
    }
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
        tolerance_m: opts.tolerance_m,
        rms_residual_m: rms,
        max_residual_m: max_res,
        smoothing_m3: lam,
        plane_tilt_deg: tilt_deg,
        max_out_of_plane_m: out_of_plane,
        plane_normal: [normal.x, normal.y, normal.z],
    };
    Ok((
        Centreline {
            stations,
            steps: Vec::new(),
            heartline_height_m: opts.heartline_height_m,
            loop_span_m,
        },
        report,
    ))
}
