//! Reading the points before fitting: how noisy they are, where their curvature jumps, and the
//! interpolant used when they are exact.
//!
//! Noise. For points sampled from a smooth curve, the fourth differences of the coordinates are
//! of order h⁴·r'''' (tiny at the spacing of a design's stations), and the fifth smaller again;
//! for independent noise of standard deviation σ per coordinate they have standard deviation
//! √70·σ and √252·σ (the sums of squared binomial coefficients, C(8,4) and C(10,5)), so they
//! grow with the order. The points are parameterised by chord length, which follows them along
//! the curve, so what shows is the noise across the curve (the part that bends curvature): for
//! noise of σ across a planar curve the median of |Δ⁴p| is √70·σ·0.674 (the median of a
//! half-normal), about 5.6σ, so the median divided by 6 estimates σ within about 10 %; the median
//! keeps the few large differences at curvature jumps and slope kinks out of it. Divided
//! differences on the chord parameter, scaled by k!·h̄ᵏ, stand for Δᵏ when the spacing varies.
//!
//! Jumps. The discrete curvature vector at point i is the change of unit chord direction over
//! the mean chord length (within O(h²) of the curvature). Across a curvature jump at point i it
//! changes by the whole jump between i−1 and i+1, while on a smooth curve (even one with a kink in
//! curvature slope) the change over two intervals is about 2h·|κ'| and the same a few points away.
//! A jump is a change that is a local spike, [`SPIKE_RATIO`] times the change three points away on
//! both sides, at least [`JUMP_FRACTION`] of the largest curvature, and far above what the
//! estimated noise can make.
//!
//! Interpolant: the not-a-knot cubic spline (de Boor, "A Practical Guide to Splines", ch. IV): the
//! third derivative is continuous at the second and last-but-one knots, so the end conditions
//! assume nothing about the curvature at the ends, and a piece that begins at a curvature jump
//! starts with its own curvature (a natural end would force zero there).

use nalgebra::Vector3;

use crate::numeric::{PiecewiseCubic, cubic_pieces, solve_tridiagonal};

/// A jump's change in curvature is at least this many times the change three points away.
pub const SPIKE_RATIO: f64 = 5.0;
/// A jump is at least this fraction of the largest curvature of the points.
pub const JUMP_FRACTION: f64 = 0.05;
/// A jump is at least this many times the curvature change the estimated noise can make.
const NOISE_MARGIN: f64 = 8.0;
/// Fewest points on each side of a jump (and between two jumps).
pub const MIN_PIECE_POINTS: usize = 5;

/// The scaled k-th divided difference of the points at `i..=i+k` (Δᵏp for even spacing).
fn difference(t: &[f64], p: &[Vector3<f64>], i: usize, k: usize) -> Vector3<f64> {
    let mut d: Vec<Vector3<f64>> = p[i..=i + k].to_vec();
    for order in 1..=k {
        for j in 0..=k - order {
            d[j] = (d[j + 1] - d[j]) / (t[i + j + order] - t[i + j]);
        }
    }
    let mean_h = (t[i + k] - t[i]) / k as f64;
    let factorial: f64 = (1..=k).map(|m| m as f64).product();
    d[0] * factorial * mean_h.powi(k as i32)
}

fn median(mut v: Vec<f64>) -> f64 {
    if v.is_empty() {
        return 0.0;
    }
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// What the differences say about the points' noise.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Roughness {
    /// Estimated noise of the points across the curve (RMS), m.
    pub noise_rms_m: f64,
    /// Median |Δ⁵p| over median |Δ⁴p|: about 1.9 for noise, well below 1 for a smooth curve.
    pub growth: f64,
}

/// Estimate the points' noise (see the module docs); needs at least 6 points.
pub fn roughness(t: &[f64], p: &[Vector3<f64>]) -> Roughness {
    let n = p.len();
    if n < 6 {
        return Roughness {
            noise_rms_m: 0.0,
            growth: 0.0,
        };
    }
    let d4 = median((0..n - 4).map(|i| difference(t, p, i, 4).norm()).collect());
    let d5 = median((0..n - 5).map(|i| difference(t, p, i, 5).norm()).collect());
    Roughness {
        noise_rms_m: d4 / 6.0,
        growth: if d4 > 0.0 { d5 / d4 } else { 0.0 },
    }
}

/// Indices of the points where the curvature jumps (see the module docs), increasing, each at
/// least [`MIN_PIECE_POINTS`] − 1 intervals from the ends and from each other.
pub fn curvature_jumps(t: &[f64], p: &[Vector3<f64>], noise_rms_m: f64) -> Vec<usize> {
    let n = p.len();
    if n < 2 * MIN_PIECE_POINTS - 1 {
        return Vec::new();
    }
    let unit: Vec<Vector3<f64>> = (0..n - 1).map(|i| (p[i + 1] - p[i]).normalize()).collect();
    // Discrete curvature at points 1..n−2 (index 0 and n−1 left at zero, never used).
    let mut kappa = vec![Vector3::zeros(); n];
    for i in 1..n - 1 {
        kappa[i] = (unit[i] - unit[i - 1]) / (0.5 * (t[i + 1] - t[i - 1]));
    }
    let kmax = kappa.iter().map(|k| k.norm()).fold(0.0, f64::max);
    // Change across point i, for i in 2..n−3.
    let mut change = vec![0.0; n];
    for i in 2..n - 2 {
        change[i] = (kappa[i + 1] - kappa[i - 1]).norm();
    }
    let mut jumps: Vec<usize> = Vec::new();
    let last_ok = n - MIN_PIECE_POINTS;
    for i in (MIN_PIECE_POINTS - 1)..=last_ok {
        let c = change[i];
        let h = 0.5 * (t[i + 1] - t[i - 1]);
        // Curvature noise of the second differences (√6·σ per coordinate), changed over two
        // points (√2): about 3.5·σ/h² in the RMS distance σ.
        let noise = 3.5 * noise_rms_m / (h * h);
        let far = |j: Option<usize>| j.filter(|&j| j >= 2 && j < n - 2).map(|j| change[j]);
        let background = far(i.checked_sub(3))
            .into_iter()
            .chain(far(Some(i + 3)))
            .fold(0.0, f64::max);
        let spike = c > SPIKE_RATIO * background
            && c >= change[i - 1]
            && c > change[i + 1]
            && c >= JUMP_FRACTION * kmax
            && c > NOISE_MARGIN * noise;
        let clear = jumps.last().is_none_or(|&j| i - j >= MIN_PIECE_POINTS - 1);
        if spike && clear {
            jumps.push(i);
        }
    }
    jumps
}

/// The not-a-knot cubic spline through (t[i], y[i]) (see the module docs); at least 4 knots,
/// `t` strictly increasing. With 2 or 3 knots, the line or parabola through them.
pub fn not_a_knot(t: &[f64], y: &[f64]) -> PiecewiseCubic {
    let n = t.len();
    let h: Vec<f64> = t.windows(2).map(|w| w[1] - w[0]).collect();
    let mut m = vec![0.0; n];
    if n == 3 {
        // One parabola: the same second derivative at every knot.
        let s = 2.0 * ((y[2] - y[1]) / h[1] - (y[1] - y[0]) / h[0]) / (h[0] + h[1]);
        m = vec![s; 3];
    } else if n >= 4 {
        // Rows for interior knots 1..n−2 in M (second derivatives), with M₀ and M_{n−1}
        // eliminated by the continuity of M' at knots 1 and n−2.
        let rows = n - 2;
        let mut sub: Vec<f64> = (1..n - 1).map(|i| h[i - 1]).collect();
        let mut diag: Vec<f64> = (1..n - 1).map(|i| 2.0 * (h[i - 1] + h[i])).collect();
        let mut sup: Vec<f64> = (1..n - 1).map(|i| h[i]).collect();
        let rhs: Vec<f64> = (1..n - 1)
            .map(|i| 6.0 * ((y[i + 1] - y[i]) / h[i] - (y[i] - y[i - 1]) / h[i - 1]))
            .collect();
        // M₀ = M₁ + h₀(M₁ − M₂)/h₁.
        diag[0] += h[0] * (h[0] + h[1]) / h[1];
        sup[0] -= h[0] * h[0] / h[1];
        // M_{n−1} = M_{n−2} + h_{n−2}(M_{n−2} − M_{n−3})/h_{n−3}.
        let (a, b) = (h[n - 3], h[n - 2]);
        diag[rows - 1] += b * (a + b) / a;
        sub[rows - 1] -= b * b / a;
        let inner = solve_tridiagonal(&sub, &diag, &sup, &rhs);
        m[1..n - 1].copy_from_slice(&inner);
        m[0] = m[1] + h[0] * (m[1] - m[2]) / h[1];
        m[n - 1] = m[n - 2] + b * (m[n - 2] - m[n - 3]) / a;
    }
    PiecewiseCubic::new(t.to_vec(), cubic_pieces(&h, y, &m))
}

#[cfg(test)]
mod tests {
    use super::*;

    // The not-a-knot spline reproduces every cubic polynomial exactly (de Boor, "A Practical
    // Guide to Splines", ch. IV: the end conditions hold for any cubic), on uneven knots.
    #[test]
    fn not_a_knot_reproduces_cubics() {
        let f = |x: f64| 0.3 - 1.2 * x + 0.7 * x * x - 0.15 * x * x * x;
        let d2 = |x: f64| 1.4 - 0.9 * x;
        for n in [3usize, 4, 5, 9] {
            let t: Vec<f64> = (0..n)
                .map(|i| i as f64 * 0.8 + 0.1 * (i % 3) as f64)
                .collect();
            let y: Vec<f64> = t.iter().map(|&x| f(x)).collect();
            let s = not_a_knot(&t, &y);
            for k in 0..=40 {
                let x = t[0] + (t[n - 1] - t[0]) * k as f64 / 40.0;
                let [v, _, dd, _] = s.derivatives(x);
                if n >= 4 {
                    assert!((v - f(x)).abs() < 1e-12, "n {n}, x {x}: {v} vs {}", f(x));
                    assert!(
                        (dd - d2(x)).abs() < 1e-10,
                        "n {n}, x {x}: {dd} vs {}",
                        d2(x)
                    );
                } else {
                    // Three knots: the parabola through them (exact at the knots).
                    if k == 0 || k == 40 {
                        assert!((v - f(x)).abs() < 1e-12);
                    }
                }
            }
        }
    }

    /// Points every `h` along a straight line, then a circle of radius `r` from point `at` on.
    fn line_then_circle(n: usize, at: usize, h: f64, r: f64) -> (Vec<f64>, Vec<Vector3<f64>>) {
        let p: Vec<Vector3<f64>> = (0..n)
            .map(|i| {
                if i <= at {
                    Vector3::new(h * i as f64, 0.0, 0.0)
                } else {
                    let phi = h * (i - at) as f64 / r;
                    Vector3::new(h * at as f64 + r * phi.sin(), 0.0, r * (1.0 - phi.cos()))
                }
            })
            .collect();
        let mut t = vec![0.0; n];
        for i in 1..n {
            t[i] = t[i - 1] + (p[i] - p[i - 1]).norm();
        }
        (t, p)
    }

    // Exact points of straight track entering a circle (curvature 0 → 1/R at one point): one jump
    // there; the fourth differences are those of the circle itself (h⁴/R³ ≈ 1.4e-7 m, so the
    // estimate is far below any tolerance) and the fifth are much smaller (they do not grow).
    #[test]
    fn a_circle_entered_from_straight_is_one_jump() {
        let (t, p) = line_then_circle(80, 30, 0.1, 9.0);
        let r = roughness(&t, &p);
        assert!(r.noise_rms_m < 1e-7 && r.growth < 0.1, "{r:?}");
        assert_eq!(curvature_jumps(&t, &p, r.noise_rms_m), vec![30]);
    }

    // A clothoid entry (curvature rising linearly from 0 to 1/9 m over 6 m, a kink in curvature
    // slope at both ends) has no jump.
    #[test]
    fn a_kink_in_curvature_slope_is_no_jump() {
        let (h, n) = (0.1, 120);
        let mut p = vec![Vector3::zeros(); n];
        let (mut th, mut x, mut z) = (0.0f64, 0.0, 0.0);
        for (i, q) in p.iter_mut().enumerate().skip(1) {
            // Midpoint rule on κ(s) = min(s − 2, 6)/54 for s > 2 (straight before).
            let s = h * (i as f64 - 0.5);
            let k = ((s - 2.0).clamp(0.0, 6.0)) / 54.0;
            th += k * h;
            x += h * th.cos();
            z += h * th.sin();
            *q = Vector3::new(x, 0.0, z);
        }
        let mut t = vec![0.0; n];
        for i in 1..n {
            t[i] = t[i - 1] + (p[i] - p[i - 1]).norm();
        }
        let r = roughness(&t, &p);
        assert!(curvature_jumps(&t, &p, r.noise_rms_m).is_empty());
    }

    // Independent uniform noise of ±a per coordinate has standard deviation a/√3 (variance of the
    // uniform distribution); across a planar curve that is one coordinate's worth, which the
    // estimate finds within 20 %; and the differences grow with the order (√(252/70) ≈ 1.9 for
    // pure noise).
    #[test]
    fn noise_is_estimated() {
        let (_, p0) = line_then_circle(400, 100, 0.1, 9.0);
        let mut seed: u64 = 7;
        let mut rnd = || {
            seed = (seed * 1_103_515_245 + 12_345) % (1 << 31);
            seed as f64 / (1u64 << 31) as f64 - 0.5
        };
        let a = 0.001;
        let p: Vec<Vector3<f64>> = p0
            .iter()
            .map(|q| q + Vector3::new(2.0 * a * rnd(), 0.0, 2.0 * a * rnd()))
            .collect();
        let mut t = vec![0.0; p.len()];
        for i in 1..p.len() {
            t[i] = t[i - 1] + (p[i] - p[i - 1]).norm();
        }
        let r = roughness(&t, &p);
        let want = a / 3.0f64.sqrt();
        assert!(
            (r.noise_rms_m / want - 1.0).abs() < 0.2,
            "{} vs {want}",
            r.noise_rms_m
        );
        assert!(r.growth > 1.5, "{r:?}");
    }
}
