//! Cubic curvature: κ a cubic polynomial of arc length, displacement by Gauss–Legendre quadrature.
//!
//! The pitch at a quadrature node lies within a fraction of a radian of the sub-interval's
//! midpoint pitch, so each sub-interval takes one library sine and cosine (at the midpoint) and
//! its nodes take short Taylor series of the small difference, accurate to below an ulp.
//!
//! [`quadrature_displacement`] is also the fallback of the closed forms where they would lose
//! precision, on their own (lower-degree) polynomial.

use super::{Accuracy, CurvePiece, PieceWalk};
use crate::numeric::{GL4, GL8, cubic_integral, cubic_second, cubic_slope, cubic_value};

/// Most quadrature sub-intervals in one call: a bound on the work hostile input can ask for.
const MAX_PARTS: usize = 100_000;

/// A piece with κ(t) = c0 + c1·t + c2·t² + c3·t³.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cubic {
    pub length_m: f64,
    /// Coefficients in 1/m, 1/m², 1/m³, 1/m⁴.
    pub coeffs: [f64; 4],
}

/// [`Cubic`] from one start pitch: quadrature from station to station (from the piece start each
/// time would cost O(n²) over n stations), summing as it goes.
#[derive(Debug, Clone)]
pub struct CubicWalk {
    cubic: Cubic,
    theta0: f64,
    accuracy: Accuracy,
    at_m: f64,
    sum: (f64, f64),
}

impl Cubic {
    /// κ at the ends and wherever the slope 3c3·t² + 2c2·t + c1 vanishes inside: every
    /// candidate for an extreme of κ on the piece.
    fn extremes(&self) -> impl Iterator<Item = f64> + '_ {
        let len = self.length_m;
        let [_, c1, c2, c3] = self.coeffs;
        let (a, b, c) = (3.0 * c3, 2.0 * c2, c1);
        let mut roots = [f64::NAN; 2];
        if a.abs() > 1e-300 {
            let disc = b * b - 4.0 * a * c;
            if disc >= 0.0 {
                roots = [
                    (-b + disc.sqrt()) / (2.0 * a),
                    (-b - disc.sqrt()) / (2.0 * a),
                ];
            }
        } else if b.abs() > 1e-300 {
            roots[0] = -c / b;
        }
        // NaN (no root) fails the range test.
        let inside = roots.into_iter().filter(move |&r| r > 0.0 && r < len);
        [0.0, len]
            .into_iter()
            .chain(inside)
            .map(|t| self.curvature_1_m(t))
    }
}

impl CurvePiece for Cubic {
    type Walk = CubicWalk;
    fn length_m(&self) -> f64 {
        self.length_m
    }
    fn curvature_1_m(&self, t: f64) -> f64 {
        cubic_value(&self.coeffs, t)
    }
    fn turn_rad(&self, t: f64) -> f64 {
        cubic_integral(&self.coeffs, t)
    }
    fn max_abs_curvature_1_m(&self) -> f64 {
        self.extremes().fold(0.0, |m, k| m.max(k.abs()))
    }
    fn min_curvature_1_m(&self) -> f64 {
        self.extremes().fold(f64::INFINITY, f64::min)
    }
    fn walk(&self, theta0: f64, accuracy: Accuracy) -> CubicWalk {
        CubicWalk {
            cubic: *self,
            theta0,
            accuracy,
            at_m: 0.0,
            sum: (0.0, 0.0),
        }
    }
}

impl PieceWalk for CubicWalk {
    fn to(&mut self, t: f64) -> (f64, f64) {
        let (dx, dz) =
            quadrature_displacement(&self.cubic.coeffs, self.theta0, self.at_m, t, self.accuracy);
        self.sum = (self.sum.0 + dx, self.sum.1 + dz);
        self.at_m = t;
        self.sum
    }
    fn end(&mut self) -> (f64, f64) {
        // The last station t = L·n/n may differ from L by an ulp or two.
        let len = self.cubic.length_m;
        if (len - self.at_m).abs() <= 4.0 * f64::EPSILON * len {
            self.sum
        } else {
            self.to(len)
        }
    }
}

/// Displacement from local `t0` to `t1` along κ = the cubic `coeffs`, from pitch `theta0` at
/// t = 0, by Gauss–Legendre quadrature on sub-intervals that turn the tangent by at most
/// [`Accuracy::max_turn_rad`] and are at most [`Accuracy::max_step_m`] long (4 points where they
/// are coarse enough, else 8; see [`Accuracy::DEFAULT`] for the error bound).
pub fn quadrature_displacement(
    coeffs: &[f64; 4],
    theta0: f64,
    t0: f64,
    t1: f64,
    accuracy: Accuracy,
) -> (f64, f64) {
    let t = t0.abs().max(t1.abs());
    let kappa_bound = cubic_value(&coeffs.map(f64::abs), t);
    let len = (t1 - t0).abs();
    // One sub-interval is the common case (a station apart): decided by products, so that no
    // division lies on the path of every station (the same count but where x/d rounds to 1 for
    // an x an ulp above d, which then takes two).
    let (parts, h) = if len * kappa_bound <= accuracy.max_turn_rad && len <= accuracy.max_step_m {
        (1, t1 - t0)
    } else {
        let parts = ceil_to_usize(
            (len * kappa_bound / accuracy.max_turn_rad).max(len / accuracy.max_step_m),
        )
        .clamp(1, MAX_PARTS);
        (parts, (t1 - t0) / parts as f64)
    };
    let coarse =
        h.abs() * kappa_bound <= accuracy.coarse_turn_rad && h.abs() <= accuracy.coarse_step_m;
    let rule: &[(f64, f64)] = if coarse { &GL4 } else { &GL8 };
    // Largest turn from a sub-interval's midpoint to any of its nodes.
    let half_turn = 0.5 * h.abs() * kappa_bound;
    if half_turn > SMALL_TURN_RAD {
        return libm_nodes(coeffs, theta0, t0, h, parts, rule);
    }
    // A search's coarse stations turn up to ~0.2 rad per sub-interval: six terms serve them.
    let short_series = half_turn <= SHORT_SERIES_TURN_RAD;
    let (mut dx, mut dz) = (0.0, 0.0);
    for p in 0..parts {
        // One sine and cosine per sub-interval, at its midpoint m; each node's pitch is
        // θ(m) + Δ with |Δ| ≤ half_turn, whose sine and cosine a short Taylor series gives to
        // below an ulp, and the rotation by θ(m) is one complex product of the weighted sums.
        // The library's sincos was most of a coarse station's cost, four times per interval.
        let m = t0 + h * (p as f64 + 0.5);
        let (sin_m, cos_m) = (theta0 + cubic_integral(coeffs, m)).sin_cos();
        // κ about m: κ(m + u) = κ + κ'·u + (κ''/2)·u² + c3·u³, so
        // Δ(u) = ∫₀ᵘ κ(m + v) dv = u·(κ + u·(κ'/2 + u·(κ''/6 + u·c3/4))).
        let turn_poly = [
            cubic_value(coeffs, m),
            0.5 * cubic_slope(coeffs, m),
            0.5 * cubic_second(coeffs, m) * (1.0 / 3.0),
            0.25 * coeffs[3],
        ];
        let (sum_c, sum_s) = match (coarse, short_series) {
            (true, true) => node_sums::<4, 6>(&GL4, h, &turn_poly),
            (true, false) => node_sums::<4, 9>(&GL4, h, &turn_poly),
            (false, true) => node_sums::<8, 6>(&GL8, h, &turn_poly),
            (false, false) => node_sums::<8, 9>(&GL8, h, &turn_poly),
        };
        dx += 0.5 * h * (cos_m * sum_c - sin_m * sum_s);
        dz += 0.5 * h * (sin_m * sum_c + cos_m * sum_s);
    }
    (dx, dz)
}

/// Σ w·cos Δ and Σ w·sin Δ over the `R` nodes of `rule` on a sub-interval of length `h` about
/// its midpoint, Δ(u) = u·(p0 + u·(p1 + u·(p2 + u·p3))). sin Δ and cos Δ come from their Taylor
/// series to `N` terms each (sin: Δ … Δ^(2N−1), cos: 1 … Δ^(2N−2)); by A&S 4.3.65–66 the error
/// of these alternating series with falling terms is below the first omitted term (see
/// [`SHORT_SERIES_TURN_RAD`] and [`SMALL_TURN_RAD`]). Fixed sizes so that the node loops unroll
/// and pair up in vector registers.
fn node_sums<const R: usize, const N: usize>(
    rule: &[(f64, f64); R],
    h: f64,
    turn_poly: &[f64; 4],
) -> (f64, f64) {
    let [p0, p1, p2, p3] = *turn_poly;
    // Structure of arrays, the node index innermost: each step is one operation on every node,
    // which the compiler pairs into vector registers.
    let mut turn = [0.0; R];
    for (d, &(node, _)) in turn.iter_mut().zip(rule) {
        let u = 0.5 * h * node;
        *d = u * (p0 + u * (p1 + u * (p2 + u * p3)));
    }
    let mut t2 = [0.0; R];
    for (q, d) in t2.iter_mut().zip(&turn) {
        *q = d * d;
    }
    let (mut ps, mut pc) = ([0.0; R], [0.0; R]);
    for k in (1..N).rev() {
        for i in 0..R {
            ps[i] = ps[i] * t2[i] + SIN_TERMS[k];
            pc[i] = pc[i] * t2[i] + COS_TERMS[k];
        }
    }
    let (mut sum_c, mut sum_s) = (0.0, 0.0);
    for i in 0..R {
        let w = rule[i].1;
        // sin Δ = Δ + Δ³·(−1/3! + Δ²·(1/5! − …)), cos Δ = 1 + Δ²·(−1/2! + Δ²·(1/4! − …)).
        sum_s += w * (turn[i] + turn[i] * t2[i] * ps[i]);
        sum_c += w * (1.0 + t2[i] * pc[i]);
    }
    (sum_c, sum_s)
}

/// Largest |Δ| (rad) that nine terms of the series serve ([`node_sums`]): the first omitted
/// terms, Δ¹⁷/17! and Δ¹⁸/18!, are below 4e-20 at 0.52, far below an ulp of the result.
/// Sub-intervals of [`Accuracy::DEFAULT`] turn at most 1 rad, 0.5 either side of the midpoint
/// (the margin is for the rounding of the sub-interval count).
const SMALL_TURN_RAD: f64 = 0.52;

/// Largest |Δ| (rad) that six terms serve: the first omitted terms, Δ¹³/13! ≤ 3e-21 and
/// Δ¹²/12! ≤ 3e-19 at 0.15, are below an ulp of the result.
const SHORT_SERIES_TURN_RAD: f64 = 0.15;

/// (−1)ᵏ/(2k+1)! and (−1)ᵏ/(2k)!, k = 0 … 8.
const SIN_TERMS: [f64; 9] = taylor_terms(1);
const COS_TERMS: [f64; 9] = taylor_terms(0);

const fn taylor_terms(first: u32) -> [f64; 9] {
    let mut out = [0.0; 9];
    let mut k = 0;
    while k < 9 {
        // (2k + first)! is exact in f64: the largest here, 17!, has an odd part below 2^53.
        let mut fact = 1.0;
        let mut i = 2;
        while i <= 2 * k + first {
            fact *= i as f64;
            i += 1;
        }
        out[k as usize] = if k % 2 == 0 { 1.0 / fact } else { -1.0 / fact };
        k += 1;
    }
    out
}

/// The plain rule: the library's sine and cosine at every node. For sub-intervals that turn
/// more than 2·[`SMALL_TURN_RAD`], which only a caller's own looser [`Accuracy`] allows.
fn libm_nodes(
    coeffs: &[f64; 4],
    theta0: f64,
    t0: f64,
    h: f64,
    parts: usize,
    rule: &[(f64, f64)],
) -> (f64, f64) {
    let (mut dx, mut dz) = (0.0, 0.0);
    for p in 0..parts {
        let a = t0 + h * p as f64;
        for &(node, w) in rule {
            let tau = a + 0.5 * h * (node + 1.0);
            let (sn, cs) = (theta0 + cubic_integral(coeffs, tau)).sin_cos();
            dx += 0.5 * h * w * cs;
            dz += 0.5 * h * w * sn;
        }
    }
    (dx, dz)
}

/// ⌈x⌉ as a count, exactly as `x.ceil() as usize` (NaN and negatives give 0, huge values
/// saturate) without the library call `ceil` is on a baseline x86-64 target.
fn ceil_to_usize(x: f64) -> usize {
    let i = x as usize;
    if (i as f64) < x {
        i.saturating_add(1)
    } else {
        i
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shape::piece::{Arc, Clothoid};

    // A cubic with only c0 non-zero is an arc: its quadrature must match the arc's closed form
    // (elementary geometry), walked station by station as the geometry stage does.
    #[test]
    fn cubic_with_zero_slope_is_an_arc() {
        let (len, k, theta0) = (30.0, 1.0 / 9.0, 0.3);
        let arc = Arc {
            length_m: len,
            curvature_1_m: k,
        };
        let cubic = Cubic {
            length_m: len,
            coeffs: [k, 0.0, 0.0, 0.0],
        };
        let mut walk = cubic.walk(theta0, Accuracy::DEFAULT);
        for j in 1..=60 {
            let t = len * j as f64 / 60.0;
            let (x, z) = walk.to(t);
            let (ax, az) = arc.displacement(theta0, t, Accuracy::DEFAULT);
            assert!((x - ax).abs() < 1e-12 && (z - az).abs() < 1e-12, "t = {t}");
        }
        let (ex, ez) = walk.end();
        let (ax, az) = arc.displacement(theta0, len, Accuracy::DEFAULT);
        assert!((ex - ax).abs() < 1e-12 && (ez - az).abs() < 1e-12);
    }

    // A cubic with c2 = c3 = 0 is a clothoid: the walk by quadrature must match the Fresnel form
    // (A&S 7.3.1; the Fresnel form itself is checked against mpmath in clothoid.rs).
    #[test]
    fn cubic_with_linear_curvature_is_a_clothoid() {
        let (len, k0, c, theta0) = (40.0, 0.02, 0.004, -0.2);
        let spiral = Clothoid {
            length_m: len,
            start_1_m: k0,
            slope_1_m2: c,
        };
        let cubic = Cubic {
            length_m: len,
            coeffs: [k0, c, 0.0, 0.0],
        };
        let mut walk = cubic.walk(theta0, Accuracy::DEFAULT);
        for j in 0..=25 {
            let t = len * j as f64 / 25.0;
            let (x, z) = walk.to(t);
            let (fx, fz) = spiral
                .fresnel_displacement(theta0, t, Accuracy::DEFAULT)
                .unwrap();
            assert!((x - fx).abs() < 1e-11 && (z - fz).abs() < 1e-11, "t = {t}");
        }
    }

    // The nodes' short series against the C library's sine and cosine (glibc's libm, an
    // independent implementation), across each series' whole range: within 2 ulp.
    #[test]
    fn node_series_match_the_library_sine_and_cosine() {
        fn check<const N: usize>(range: f64) -> f64 {
            let mut worst: f64 = 0.0;
            for i in -10_000..=10_000 {
                let x = range * i as f64 / 10_000.0;
                // One node at u = 1 (h = 2, node 1, weight 1): Δ = p0 = x.
                let (c, s) = node_sums::<1, N>(&[(1.0, 1.0)], 2.0, &[x, 0.0, 0.0, 0.0]);
                for (got, want) in [(c, x.cos()), (s, x.sin())] {
                    let ulp = f64::EPSILON * want.abs().max(f64::MIN_POSITIVE);
                    worst = worst.max((got - want).abs() / ulp);
                }
            }
            worst
        }
        let short = check::<6>(SHORT_SERIES_TURN_RAD);
        let long = check::<9>(SMALL_TURN_RAD);
        assert!(short <= 2.0 && long <= 2.0, "{short} {long} ulp");
    }

    // A caller's looser accuracy (sub-intervals turning 3 rad) takes the library at every node;
    // its answer still approximates the arc's closed form (elementary geometry).
    #[test]
    fn loose_accuracy_falls_back_to_the_library_at_every_node() {
        let loose = Accuracy {
            max_turn_rad: 3.0,
            max_step_m: 100.0,
            ..Accuracy::DEFAULT
        };
        let (len, k, theta0) = (30.0, 0.2, 0.3);
        let (x, z) = quadrature_displacement(&[k, 0.0, 0.0, 0.0], theta0, 0.0, len, loose);
        let (plain_x, plain_z) = libm_nodes(&[k, 0.0, 0.0, 0.0], theta0, 0.0, 15.0, 2, &GL8);
        assert_eq!((x, z), (plain_x, plain_z));
        let arc = Arc {
            length_m: len,
            curvature_1_m: k,
        };
        let (ax, az) = arc.displacement(theta0, len, Accuracy::DEFAULT);
        assert!(
            (x - ax).abs() < 1e-6 && (z - az).abs() < 1e-6,
            "{x} {z} vs {ax} {az}"
        );
    }

    // The integer ceiling must be `f64::ceil` (the standard library's) cast to a count.
    #[test]
    fn integer_ceiling_is_the_ceiling() {
        let probes = [
            0.0,
            -0.0,
            0.3,
            1.0,
            1.0 + f64::EPSILON,
            2.5,
            1e15 + 0.5,
            4503599627370497.0,
            1e20,
            -0.7,
            -3.0,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            1e-300,
        ];
        for x in probes {
            assert_eq!(ceil_to_usize(x), x.ceil() as usize, "{x}");
        }
    }

    // κ(t) = 2t − t² on [0, 3] peaks at t = 1 with κ = 1 inside, but |κ| is largest at the end,
    // |κ(3)| = 3; on [0, 2] the interior peak wins (calculus: κ' = 2 − 2t).
    #[test]
    fn largest_curvature_finds_interior_extremes() {
        let mut p = Cubic {
            length_m: 3.0,
            coeffs: [0.0, 2.0, -1.0, 0.0],
        };
        assert_eq!(p.max_abs_curvature_1_m(), 3.0);
        // Signed, the least κ is the end value −3 on [0, 3] and κ(0) = 0 on [0, 2].
        assert_eq!(p.min_curvature_1_m(), -3.0);
        p.length_m = 2.0;
        assert_eq!(p.max_abs_curvature_1_m(), 1.0);
        assert_eq!(p.min_curvature_1_m(), 0.0);
        // With a cubic term: κ = t³ − 3t has its extremes at t = ±1 (κ(1) = −2) on [0, 1.5].
        let q = Cubic {
            length_m: 1.5,
            coeffs: [0.0, -3.0, 0.0, 1.0],
        };
        assert!((q.max_abs_curvature_1_m() - 2.0).abs() < 1e-15);
        assert!((q.min_curvature_1_m() + 2.0).abs() < 1e-15);
    }
}
