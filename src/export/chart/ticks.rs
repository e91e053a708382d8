//! Round numbers for axes and labels: nice numbers, the two tick placements in use, and the
//! fixed-decimal printing every drawing shares.

/// How [`nice_number`] picks among 1, 2, 5 and 10 times a power of ten.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Nice {
    /// The smallest nice number not below `x` (Heckbert's `nicenum(x, false)`).
    Ceil,
    /// The nearest nice number, switching at 1.5, 3 and 7 (Heckbert's `nicenum(x, true)`; about
    /// the geometric means of neighbours). Loads-plot ticks and the elevation's scale bar.
    Round,
    /// The nearest nice number, switching at 1.5, 3.5 and 7.5 (the arithmetic midpoints of 1, 2,
    /// 5, 10). The overlays' tick step; kept apart from [`Nice::Round`] so no picture changes.
    RoundMidpoint,
}

/// A "nice" number near `x`: 1, 2, 5 or 10 times a power of ten, picked as `how` says.
/// (Heckbert, "Nice numbers for graph labels", Graphics Gems, 1990.) Returns 1 for zero,
/// negative or non-finite `x`.
pub fn nice_number(x: f64, how: Nice) -> f64 {
    if !(x.is_finite() && x > 0.0) {
        return 1.0;
    }
    let p = 10f64.powf(x.log10().floor());
    let f = x / p;
    let bounds = match how {
        Nice::Ceil => {
            let n = if f <= 1.0 {
                1.0
            } else if f <= 2.0 {
                2.0
            } else if f <= 5.0 {
                5.0
            } else {
                10.0
            };
            return n * p;
        }
        Nice::Round => [1.5, 3.0, 7.0],
        Nice::RoundMidpoint => [1.5, 3.5, 7.5],
    };
    let n = if f < bounds[0] {
        1.0
    } else if f < bounds[1] {
        2.0
    } else if f < bounds[2] {
        5.0
    } else {
        10.0
    };
    n * p
}

/// About `n` round tick values covering `[lo, hi]` (Heckbert's loose labelling): the step is 1,
/// 2 or 5 times a power of ten, the first tick is at or below `lo`, the last at or above `hi`.
///
/// ```
/// use loopwright::export::chart::nice_ticks;
/// assert_eq!(nice_ticks(0.0, 4.3, 5), vec![0.0, 1.0, 2.0, 3.0, 4.0, 5.0]);
/// assert_eq!(nice_ticks(-1.2, 4.5, 6), vec![-2.0, 0.0, 2.0, 4.0, 6.0]);
/// assert_eq!(nice_ticks(0.0, 86.0, 8), vec![0.0, 10.0, 20.0, 30.0, 40.0, 50.0, 60.0, 70.0, 80.0, 90.0]);
/// ```
///
/// Reversed bounds are swapped, an empty range is widened around its value, and non-finite
/// bounds give the ticks of `[0, 1]`.
pub fn nice_ticks(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    let (lo, hi) = if lo.is_finite() && hi.is_finite() {
        (lo.min(hi), lo.max(hi))
    } else {
        (0.0, 1.0)
    };
    let (lo, hi) = widen(lo, hi);
    let n = n.max(2);
    let step = nice_number(
        nice_number(hi - lo, Nice::Ceil) / (n - 1) as f64,
        Nice::Round,
    );
    let first = (lo / step).floor();
    let last = (hi / step).ceil();
    // Snap to multiples of the step so labels print without float noise (and −0 becomes 0).
    (0..=((last - first) as usize).min(MAX_TICKS))
        .map(|k| snap((first + k as f64) * step, step))
        .collect()
}

/// Most ticks on one axis: a bound so that absurd ranges cannot run away.
const MAX_TICKS: usize = 1000;

/// Widen an empty or nearly empty range so it can be mapped to pixels.
fn widen(lo: f64, hi: f64) -> (f64, f64) {
    let scale = lo.abs().max(hi.abs());
    if hi - lo > 1e-9 * scale.max(1e-300) {
        (lo, hi)
    } else if scale == 0.0 {
        (-1.0, 1.0)
    } else {
        (lo - 0.1 * scale, hi + 0.1 * scale)
    }
}

fn snap(v: f64, step: f64) -> f64 {
    let r = (v / step).round() * step;
    // Printing with the step's decimals does the rest; this only removes −0 and 1e-17 residues.
    if r.abs() < 1e-9 * step { 0.0 } else { r }
}

/// The tick values of one axis and the decimals their labels print with.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Ticks {
    pub values: Vec<f64>,
    pub decimals: usize,
}

impl Ticks {
    /// Loose ticks ([`nice_ticks`]): they enclose `[lo, hi]`, so a frame may start and end on one.
    pub fn loose(lo: f64, hi: f64, n: usize) -> Ticks {
        let values = nice_ticks(lo, hi, n);
        let step = if values.len() >= 2 {
            values[1] - values[0]
        } else {
            1.0
        };
        Ticks {
            decimals: decimals_for(step),
            values,
        }
    }

    /// Inside ticks: every multiple of `step` within `[lo, hi]`, the range left as it is. Values
    /// are stepped by repeated addition (as the overlays always have been drawn).
    pub fn inside(lo: f64, hi: f64, step: f64) -> Ticks {
        let mut values = Vec::new();
        let mut v = (lo / step).ceil() * step;
        while v <= hi && values.len() < MAX_TICKS {
            values.push(v);
            v += step;
        }
        Ticks {
            values,
            decimals: decimals_for(step),
        }
    }

    /// The first and last tick, or (0, 1) without ticks.
    pub fn range(&self) -> (f64, f64) {
        (
            self.values.first().copied().unwrap_or(0.0),
            self.values.last().copied().unwrap_or(1.0),
        )
    }

    /// The label of tick value `v`.
    pub fn label(&self, v: f64) -> String {
        fmt_num(v, self.decimals)
    }
}

/// The overlays' tick step: a [`Nice::RoundMidpoint`] number giving about `target` intervals
/// over `span` (never below 1e-9).
pub fn midpoint_step(span: f64, target: f64) -> f64 {
    nice_number((span / target).max(1e-9), Nice::RoundMidpoint)
}

/// Decimals needed to print values spaced `step` apart.
pub fn decimals_for(step: f64) -> usize {
    if !(step.is_finite() && step > 0.0) {
        return 0;
    }
    (-(step.log10() + 1e-9).floor()).clamp(0.0, 12.0) as usize
}

/// `v` with `decimals` decimals, or "n/a" if it is not finite.
pub fn fmt_num(v: f64, decimals: usize) -> String {
    if !v.is_finite() {
        return "n/a".into();
    }
    let t = format!("{v:.decimals$}");
    // A value that rounds to zero prints as 0, not −0 (e.g. the footprint of a closed circle).
    match t.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_string(),
        _ => t,
    }
}

/// A round number without trailing zeros: 10 → "10", 2.5 → "2.5", 0.05 → "0.05".
pub fn short_num(v: f64) -> String {
    let s = fmt_num(v, 6);
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn labels(t: &Ticks) -> Vec<String> {
        t.values.iter().map(|&v| t.label(v)).collect()
    }

    // Worked by hand with the published pseudo-code of Heckbert's loose labelling (P. S. Heckbert,
    // "Nice numbers for graph labels", Graphics Gems, Academic Press 1990, pp. 61-63):
    // range = nicenum(max - min, false); d = nicenum(range / (ntick - 1), true);
    // graphmin = floor(min / d) d; graphmax = ceil(max / d) d; nfrac = max(-floor(log10 d), 0).
    #[test]
    fn loose_ticks_follow_heckbert() {
        // 105..543, 5 ticks: range 500, d = nicenum(125) = 100, 100..600.
        let t = Ticks::loose(105.0, 543.0, 5);
        assert_eq!(labels(&t), ["100", "200", "300", "400", "500", "600"]);
        // -0.37..0.81: range nicenum(1.18) = 2, d = nicenum(0.5) = 0.5, nfrac 1.
        let t = Ticks::loose(-0.37, 0.81, 5);
        assert_eq!(labels(&t), ["-0.5", "0.0", "0.5", "1.0"]);
        // 0..0.0123: range 0.02, d = nicenum(0.005) = 0.005, graphmax ceil(2.46) d = 0.015, nfrac 3.
        let t = Ticks::loose(0.0, 0.0123, 5);
        assert_eq!(labels(&t), ["0.000", "0.005", "0.010", "0.015"]);
        // 2.6..97.1, 11 ticks: range nicenum(94.5) = 100, d = nicenum(10) = 10, 0..100.
        let t = Ticks::loose(2.6, 97.1, 11);
        assert_eq!(t.values.len(), 11);
        assert_eq!((t.range(), t.decimals), ((0.0, 100.0), 0));
    }

    // Heckbert (Graphics Gems, 1990): the step is 1, 2 or 5 × 10^k and the ticks enclose the range.
    #[test]
    fn nice_ticks_enclose_the_range_with_round_steps() {
        for &(lo, hi, n) in &[
            (0.0, 4.3, 5),
            (-1.37, 5.02, 8),
            (0.0, 86.04, 10),
            (12.5, 12.7, 4),
            (-3e-4, 7e-4, 5),
        ] {
            let t = nice_ticks(lo, hi, n);
            assert!(
                t[0] <= lo && *t.last().unwrap() >= hi,
                "{t:?} vs [{lo}, {hi}]"
            );
            let step = t[1] - t[0];
            let mantissa = step / 10f64.powf(step.log10().floor());
            assert!(
                [1.0, 2.0, 5.0].iter().any(|m| (mantissa - m).abs() < 1e-9),
                "step {step}"
            );
            assert!(
                t.windows(2)
                    .all(|w| ((w[1] - w[0]) - step).abs() < 1e-9 * step)
            );
            assert!(
                t.len() >= n / 2 && t.len() <= 2 * n + 1,
                "{} ticks for n = {n}",
                t.len()
            );
        }
        // Degenerate input still gives a usable axis.
        assert_eq!(nice_ticks(f64::NAN, 1.0, 5), nice_ticks(0.0, 1.0, 5));
        assert!(nice_ticks(3.0, 3.0, 5).len() >= 2);
        assert_eq!(nice_ticks(5.0, 0.0, 5), nice_ticks(0.0, 5.0, 5));
        assert!(nice_ticks(0.0, 0.0, 0).len() >= 2);
    }

    // Heckbert's table: round 1.4 → 1, 1.6 → 2, 3.5 → 5, 8 → 10; ceiling 1.1 → 2, 2.1 → 5, 5.1 → 10.
    // Midpoint rounding switches at 1.5, 3.5 and 7.5 instead: 3.3 → 2 and 7.3 → 5 (Heckbert: 5, 10).
    #[test]
    fn nice_number_rounds_and_ceils() {
        let cases = [
            (1.4, Nice::Round, 1.0),
            (1.6, Nice::Round, 2.0),
            (3.5, Nice::Round, 5.0),
            (8.0, Nice::Round, 10.0),
            (0.034, Nice::Round, 0.05),
            (3.3, Nice::Round, 5.0),
            (7.3, Nice::Round, 10.0),
            (1.1, Nice::Ceil, 2.0),
            (2.1, Nice::Ceil, 5.0),
            (5.1, Nice::Ceil, 10.0),
            (1.4, Nice::RoundMidpoint, 1.0),
            (3.3, Nice::RoundMidpoint, 2.0),
            (3.6, Nice::RoundMidpoint, 5.0),
            (7.3, Nice::RoundMidpoint, 5.0),
            (0.076, Nice::RoundMidpoint, 0.1),
        ];
        for (x, how, want) in cases {
            assert!(
                (nice_number(x, how) - want).abs() < 1e-12,
                "nice_number({x}, {how:?}) = {}",
                nice_number(x, how)
            );
        }
        assert_eq!(nice_number(f64::NAN, Nice::Round), 1.0);
        assert_eq!(nice_number(-2.0, Nice::Ceil), 1.0);
    }

    // Inside ticks are the multiples of the step within the range (worked by hand).
    #[test]
    fn inside_ticks_stay_within_the_range() {
        // 33 units over 10 intervals: raw step 3.3 → 2 (midpoint rounding), multiples in 0.5..9.9.
        let step = midpoint_step(33.0, 10.0);
        assert_eq!(step, 2.0);
        assert_eq!(labels(&Ticks::inside(0.5, 9.9, step)), ["2", "4", "6", "8"]);
        // 0.73 over 10: raw 0.073 → 0.05; -0.12..0.61 holds -0.10, -0.05, ..., 0.60.
        let step = midpoint_step(0.73, 10.0);
        assert!((step - 0.05).abs() < 1e-15);
        let t = Ticks::inside(-0.12, 0.61, step);
        let want: Vec<String> = (-2..=12)
            .map(|k| format!("{:.2}", k as f64 / 20.0))
            .collect();
        assert_eq!(labels(&t), want);
        // A step that cannot advance the value stops at the tick bound, not in an endless loop.
        assert_eq!(Ticks::inside(1e20, 2e20, 1e-9).values.len(), MAX_TICKS);
    }

    // Values k × 10^-n apart need n decimals (place value).
    #[test]
    fn decimals_follow_the_step() {
        for (step, want) in [
            (1e-9, 9),
            (0.05, 2),
            (0.1, 1),
            (0.2, 1),
            (1.0, 0),
            (20.0, 0),
            (0.001, 3),
        ] {
            assert_eq!(decimals_for(step), want, "step {step}");
        }
        assert_eq!(decimals_for(0.0), 0);
    }

    // Zero never prints with a sign; other values keep theirs.
    #[test]
    fn numbers_print_without_negative_zero() {
        assert_eq!(fmt_num(-0.001, 2), "0.00");
        assert_eq!(fmt_num(-0.0, 0), "0");
        assert_eq!(fmt_num(-0.5, 1), "-0.5");
        assert_eq!(fmt_num(f64::NAN, 2), "n/a");
        assert_eq!(
            [short_num(10.0), short_num(2.5), short_num(0.05)],
            ["10", "2.5", "0.05"]
        );
    }
}
