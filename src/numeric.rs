//! Numerical building blocks shared by the stages: Gauss–Legendre rules, cubic polynomials in
//! Horner form, the tridiagonal (Thomas) solve, the cubic splines built on it and monotone
//! (PCHIP) interpolation.
//!
//! It sits below every stage and imports nothing from the crate, so `shape` and `geometry` can
//! both use it. The operation order of each routine is part of its contract: the outputs of the
//! shipped briefs are fingerprinted (`tests/golden.rs`), so a tidier rearrangement that rounds
//! differently is a change of results, not a refactor.
//!
//! A cubic piece is `[c0, c1, c2, c3]`, the polynomial c0 + c1·d + c2·d² + c3·d³ in the local
//! variable d (distance from the piece's start).
//!
//! ```
//! use loopwright::numeric::{natural_spline, PiecewiseCubic};
//! // A natural spline through points on a straight line is that line.
//! let t = vec![0.0, 1.0, 2.5, 4.0];
//! let y: Vec<f64> = t.iter().map(|x| 3.0 - 0.5 * x).collect();
//! let s = PiecewiseCubic::new(t.clone(), natural_spline(&t, &y));
//! assert!((s.value(3.0) - 1.5).abs() < 1e-12);
//! assert!((s.slope(0.7) + 0.5).abs() < 1e-12);
//! ```

/// 4-point Gauss–Legendre nodes and weights on [−1, 1] (Abramowitz & Stegun, Table 25.4).
pub const GL4: [(f64, f64); 4] = [
    (-0.861_136_311_594_052_6, 0.347_854_845_137_453_86),
    (-0.339_981_043_584_856_3, 0.652_145_154_862_546_1),
    (0.339_981_043_584_856_3, 0.652_145_154_862_546_1),
    (0.861_136_311_594_052_6, 0.347_854_845_137_453_86),
];

/// 5-point Gauss–Legendre nodes and weights on [−1, 1] (Abramowitz & Stegun, Table 25.4).
pub const GL5: [(f64, f64); 5] = [
    (-0.906_179_845_938_664, 0.236_926_885_056_189_1),
    (-0.538_469_310_105_683_1, 0.478_628_670_499_366_5),
    (0.0, 0.568_888_888_888_888_9),
    (0.538_469_310_105_683_1, 0.478_628_670_499_366_5),
    (0.906_179_845_938_664, 0.236_926_885_056_189_1),
];

/// 8-point Gauss–Legendre nodes and weights on [−1, 1] (Abramowitz & Stegun, Table 25.4).
pub const GL8: [(f64, f64); 8] = [
    (-0.960_289_856_497_536_2, 0.101_228_536_290_376_26),
    (-0.796_666_477_413_626_7, 0.222_381_034_453_374_47),
    (-0.525_532_409_916_329, 0.313_706_645_877_887),
    (-0.183_434_642_495_65, 0.362_683_783_378_362),
    (0.183_434_642_495_65, 0.362_683_783_378_362),
    (0.525_532_409_916_329, 0.313_706_645_877_887),
    (0.796_666_477_413_626_7, 0.222_381_034_453_374_47),
    (0.960_289_856_497_536_2, 0.101_228_536_290_376_26),
];

/// The cubic's value at `d`.
pub fn cubic_value(c: &[f64; 4], d: f64) -> f64 {
    c[0] + d * (c[1] + d * (c[2] + d * c[3]))
}

/// The cubic's first derivative at `d`.
pub fn cubic_slope(c: &[f64; 4], d: f64) -> f64 {
    c[1] + d * (2.0 * c[2] + d * 3.0 * c[3])
}

/// The cubic's second derivative at `d`.
pub fn cubic_second(c: &[f64; 4], d: f64) -> f64 {
    2.0 * c[2] + 6.0 * c[3] * d
}

/// ∫₀ᵈ of the cubic (exact).
pub fn cubic_integral(c: &[f64; 4], d: f64) -> f64 {
    d * (c[0] + d * (c[1] / 2.0 + d * (c[2] / 3.0 + d * c[3] / 4.0)))
}

/// Solve a tridiagonal system by the Thomas algorithm (Gaussian elimination without pivoting;
/// fine for the diagonally dominant systems of cubic splines).
///
/// Row i reads sub[i]·x[i−1] + diag[i]·x[i] + sup[i]·x[i+1] = rhs[i]; `sub[0]` and the last
/// `sup` are not used. All four slices have the same length; an empty system has an empty answer.
pub fn solve_tridiagonal(sub: &[f64], diag: &[f64], sup: &[f64], rhs: &[f64]) -> Vec<f64> {
    let n = diag.len();
    let (mut d, mut r) = (diag.to_vec(), rhs.to_vec());
    for i in 1..n {
        let w = sub[i] / d[i - 1];
        d[i] -= w * sup[i - 1];
        r[i] -= w * r[i - 1];
    }
    let mut x = vec![0.0; n];
    for i in (0..n).rev() {
        x[i] = if i + 1 < n {
            (r[i] - sup[i] * x[i + 1]) / d[i]
        } else {
            r[i] / d[i]
        };
    }
    x
}

/// The cubic pieces of the spline with values `y` and second derivatives `m` at knots `h` apart
/// (`h[i]` is the width of interval i; `y` and `m` have one entry more than `h`).
pub fn cubic_pieces(h: &[f64], y: &[f64], m: &[f64]) -> Vec<[f64; 4]> {
    (0..h.len())
        .map(|i| {
            let b = (y[i + 1] - y[i]) / h[i] - h[i] * (2.0 * m[i] + m[i + 1]) / 6.0;
            [y[i], b, m[i] / 2.0, (m[i + 1] - m[i]) / (6.0 * h[i])]
        })
        .collect()
}

/// Natural cubic spline through (t[i], y[i]) (zero second derivative at both ends), by the
/// tridiagonal system for the second derivatives (de Boor, "A Practical Guide to Splines",
/// ch. IV). `t` strictly increasing; one piece per interval; fewer than two knots give none.
pub fn natural_spline(t: &[f64], y: &[f64]) -> Vec<[f64; 4]> {
    let n = t.len().min(y.len());
    if n < 2 {
        return Vec::new();
    }
    let h: Vec<f64> = (0..n - 1).map(|i| t[i + 1] - t[i]).collect();
    let mut m = vec![0.0; n];
    // Rows for the interior knots 1..n−2; the end values stay 0 (natural).
    let inner = 1..n - 1;
    let diag: Vec<f64> = inner.clone().map(|i| 2.0 * (h[i - 1] + h[i])).collect();
    let rhs: Vec<f64> = inner
        .clone()
        .map(|i| 6.0 * ((y[i + 1] - y[i]) / h[i] - (y[i] - y[i - 1]) / h[i - 1]))
        .collect();
    let sub: Vec<f64> = inner.clone().map(|i| h[i - 1]).collect();
    let sup: Vec<f64> = inner.map(|i| h[i]).collect();
    m[1..n - 1].copy_from_slice(&solve_tridiagonal(&sub, &diag, &sup, &rhs));
    cubic_pieces(&h, &y[..n], &m)
}

/// Monotone piecewise-cubic Hermite interpolation (PCHIP) through (t[i], y[i]): Fritsch &
/// Carlson, "Monotone piecewise cubic interpolation", SIAM J. Numer. Anal. 17 (1980) 238–246,
/// with the knot slopes of scipy's `PchipInterpolator` (a weighted harmonic mean of the
/// neighbouring secants, zero where they change sign or either is zero; one-sided three-point
/// slopes at the ends, limited to keep the shape). Between two knots the curve stays within their
/// values, so it never overshoots the data. `t` strictly increasing; fewer than two knots give no
/// pieces, two give the straight line.
pub fn pchip(t: &[f64], y: &[f64]) -> Vec<[f64; 4]> {
    let n = t.len().min(y.len());
    if n < 2 {
        return Vec::new();
    }
    let h: Vec<f64> = (0..n - 1).map(|i| t[i + 1] - t[i]).collect();
    let delta: Vec<f64> = (0..n - 1).map(|i| (y[i + 1] - y[i]) / h[i]).collect();
    let mut d = vec![0.0; n];
    if n == 2 {
        d = vec![delta[0]; 2];
    } else {
        for k in 1..n - 1 {
            let (a, b) = (delta[k - 1], delta[k]);
            if a * b > 0.0 {
                let w1 = 2.0 * h[k] + h[k - 1];
                let w2 = h[k] + 2.0 * h[k - 1];
                d[k] = (w1 + w2) / (w1 / a + w2 / b);
            }
        }
        d[0] = pchip_end_slope(h[0], h[1], delta[0], delta[1]);
        d[n - 1] = pchip_end_slope(h[n - 2], h[n - 3], delta[n - 2], delta[n - 3]);
    }
    (0..n - 1)
        .map(|i| {
            let c2 = (3.0 * delta[i] - 2.0 * d[i] - d[i + 1]) / h[i];
            let c3 = (d[i] + d[i + 1] - 2.0 * delta[i]) / (h[i] * h[i]);
            [y[i], d[i], c2, c3]
        })
        .collect()
}

/// PCHIP's slope at an end knot from the end interval (`h0`, `d0`) and its neighbour (`h1`, `d1`):
/// the three-point formula, zeroed if it opposes the end secant and capped at three times the
/// secant where the data turn (Fritsch & Carlson's region of monotonicity; as scipy does).
fn pchip_end_slope(h0: f64, h1: f64, d0: f64, d1: f64) -> f64 {
    let d = ((2.0 * h0 + h1) * d0 - h0 * d1) / (h0 + h1);
    if d.signum() != d0.signum() || d0 == 0.0 {
        0.0
    } else if d0.signum() != d1.signum() && d.abs() > 3.0 * d0.abs() {
        3.0 * d0
    } else {
        d
    }
}

/// A piecewise cubic y(t): knots and one cubic piece per interval, in (t − tᵢ).
#[derive(Debug, Clone, PartialEq)]
pub struct PiecewiseCubic {
    knots: Vec<f64>,
    pieces: Vec<[f64; 4]>,
}

impl PiecewiseCubic {
    /// `pieces.len()` must be `knots.len() − 1` (at least one piece).
    pub fn new(knots: Vec<f64>, pieces: Vec<[f64; 4]>) -> Self {
        debug_assert!(!pieces.is_empty() && knots.len() == pieces.len() + 1);
        Self { knots, pieces }
    }

    /// The piece holding `t` and the local variable; outside the knots the end pieces extend.
    fn locate(&self, t: f64) -> (&[f64; 4], f64) {
        let k = &self.knots;
        let i = k
            .partition_point(|&x| x <= t)
            .saturating_sub(1)
            .min(k.len() - 2);
        (&self.pieces[i], t - k[i])
    }

    pub fn value(&self, t: f64) -> f64 {
        let (c, d) = self.locate(t);
        cubic_value(c, d)
    }

    pub fn slope(&self, t: f64) -> f64 {
        let (c, d) = self.locate(t);
        cubic_slope(c, d)
    }

    /// Value and first three derivatives at `t` (the third is constant on each piece).
    pub fn derivatives(&self, t: f64) -> [f64; 4] {
        let (c, d) = self.locate(t);
        [
            cubic_value(c, d),
            cubic_slope(c, d),
            cubic_second(c, d),
            6.0 * c[3],
        ]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // A tridiagonal system with a known answer: build rhs = A·x for a chosen x (no source needed:
    // the check is the definition of a solution).
    #[test]
    fn thomas_solves_a_known_system() {
        let sub = [0.0, 1.0, 0.5, 2.0];
        let diag = [4.0, 5.0, 3.0, 6.0];
        let sup = [1.0, 2.0, 1.0, 0.0];
        let x = [1.0, -2.0, 0.5, 3.0];
        let rhs: Vec<f64> = (0..4)
            .map(|i| {
                let lo = if i > 0 { sub[i] * x[i - 1] } else { 0.0 };
                let hi = if i < 3 { sup[i] * x[i + 1] } else { 0.0 };
                lo + diag[i] * x[i] + hi
            })
            .collect();
        let got = solve_tridiagonal(&sub, &diag, &sup, &rhs);
        for (g, want) in got.iter().zip(x) {
            assert!((g - want).abs() < 1e-14, "{g} vs {want}");
        }
        assert!(solve_tridiagonal(&[], &[], &[], &[]).is_empty());
    }

    // The Horner forms against the expanded polynomial and its calculus (elementary algebra).
    #[test]
    fn cubic_helpers_are_the_polynomial_and_its_calculus() {
        let c = [0.5, -1.25, 0.75, 0.125];
        let d = 1.7f64;
        let p = 0.5 - 1.25 * d + 0.75 * d * d + 0.125 * d.powi(3);
        let dp = -1.25 + 1.5 * d + 0.375 * d * d;
        let ddp = 1.5 + 0.75 * d;
        let ip = 0.5 * d - 0.625 * d * d + 0.25 * d.powi(3) + 0.031_25 * d.powi(4);
        assert!((cubic_value(&c, d) - p).abs() < 1e-14);
        assert!((cubic_slope(&c, d) - dp).abs() < 1e-14);
        assert!((cubic_second(&c, d) - ddp).abs() < 1e-14);
        assert!((cubic_integral(&c, d) - ip).abs() < 1e-14);
    }

    // Hostile sizes never panic: fewer than two knots give an empty spline.
    #[test]
    fn too_few_knots_give_no_pieces() {
        assert!(natural_spline(&[], &[]).is_empty());
        assert!(natural_spline(&[1.0], &[2.0]).is_empty());
        // Two knots: the straight line between them.
        assert_eq!(
            natural_spline(&[0.0, 2.0], &[1.0, 5.0]),
            vec![[1.0, 2.0, 0.0, 0.0]]
        );
    }
}
