//! Decimal text for the exports' numbers, written straight into a buffer and byte-identical to
//! Rust's own formatting (`{:.N}` and `{}` of a value rounded to hundredths).
//!
//! A design's tables, drawings and charts hold about 100,000 numbers; through `core::fmt` they
//! took about a third of a whole `design` process. Here the common case is one multiplication,
//! a truncation to an integer and a division by a hundred per two digits; anything outside it
//! (exact ties, huge values, NaN, infinities) goes to `core::fmt`, so the text is always what
//! `format!` would give.
//!
//! ```
//! use loopwright::export::number::{push_fixed, push_hundredths};
//! let mut s = String::new();
//! push_fixed(&mut s, -2.0 / 3.0, 9);
//! s.push(' ');
//! push_hundredths(&mut s, 12.3449);
//! assert_eq!(s, "-0.666666667 12.34");
//! ```

/// 10^k for the decimal counts handled directly.
const POW10: [u64; 10] = [
    1,
    10,
    100,
    1_000,
    10_000,
    100_000,
    1_000_000,
    10_000_000,
    100_000_000,
    1_000_000_000,
];

/// Scaled values below 2^52 are handled directly: their unit in the last place is at most 1/2,
/// which the rounding argument in [`push_fixed`] needs, and they fit a `u64`.
const DIRECT_BELOW: f64 = 4_503_599_627_370_496.0;

/// Append `v` with `decimals` digits after the point: the same text as `format!("{v:.decimals$}")`.
pub fn push_fixed(out: &mut impl TextSink, v: f64, decimals: usize) {
    if let Some(&unit) = POW10.get(decimals) {
        let a = v.abs();
        let scale = unit as f64;
        // a·scale exactly is p + e (the rounding error of a product is itself a double). With
        // p < 2^52, p and every integer are multiples of ulp(p) ≤ 1/2, so unless p sits exactly
        // half way between integers, |p − round(p)| ≤ 1/2 − ulp(p) and |e| ≤ ulp(p)/2 cannot
        // carry a·scale across the half: round(p) is the correctly rounded value that `core::fmt`
        // prints. Exact halves (where `core::fmt` rounds to even and e decides) go to it instead.
        let p = a * scale;
        if p < DIRECT_BELOW {
            // Truncation is exact here (p < 2^52), and so is the fraction p − ⌊p⌋.
            let floor = p as u64;
            let frac = p - floor as f64;
            if frac != 0.5 {
                let r = floor + u64::from(frac > 0.5);
                // `core::fmt` keeps the sign of a negative value that rounds to zero, and of −0.
                push_scaled(out, v.is_sign_negative(), r, decimals);
                return;
            }
        }
    }
    out.push_ascii(format!("{v:.decimals$}").as_bytes());
}

/// `v` in whole hundredths (half away from zero, as `f64::round`); 0 for a value that is not
/// finite. The charts' pixel rounding ([`crate::export::chart::px`]) divides it by 100.
pub fn hundredths(v: f64) -> f64 {
    if v.is_finite() {
        (v * 100.0).round()
    } else {
        0.0
    }
}

/// Append [`hundredths`]`(v) / 100` in shortest form: the same text as
/// `format!("{}", hundredths(v) / 100.0)`.
pub fn push_hundredths(out: &mut impl TextSink, v: f64) {
    let w = hundredths(v);
    // w/100 is the double nearest the decimal w/100, which has at most two decimals; below 2^40
    // doubles are far closer together than 0.01, so that decimal, trailing zeros dropped, is the
    // shortest text that reads back as the double: what `{}` prints.
    if w.abs() < 1_099_511_627_776.0 {
        let n = w.abs() as u64;
        // Trailing zeros of the fraction are dropped (and with them the point).
        let (n, decimals) = match n % 100 {
            0 => (n / 100, 0),
            f if f % 10 == 0 => (n / 10, 1),
            _ => (n, 2),
        };
        push_scaled(out, w.is_sign_negative(), n, decimals);
        return;
    }
    out.push_ascii(format!("{}", w / 100.0).as_bytes());
}

/// Append the whole number `n`: the same text as `format!("{n}")`.
pub fn push_integer(out: &mut impl TextSink, n: u64) {
    push_scaled(out, false, n, 0);
}

/// Append `n / 10^decimals` with exactly `decimals` digits after the point (`decimals` < 20),
/// after a minus sign when `negative`: digits are written right to left into one buffer.
fn push_scaled(out: &mut impl TextSink, negative: bool, n: u64, decimals: usize) {
    let mut buf = [0u8; 48];
    let mut i = buf.len();
    let mut n = n;
    // The fraction, two digits at a time, then the point.
    let mut left = decimals;
    while left >= 2 {
        let k = 2 * (n % 100) as usize;
        n /= 100;
        i -= 2;
        buf[i..i + 2].copy_from_slice(&PAIRS[k..k + 2]);
        left -= 2;
    }
    if left == 1 {
        i -= 1;
        buf[i] = b'0' + (n % 10) as u8;
        n /= 10;
    }
    if decimals > 0 {
        i -= 1;
        buf[i] = b'.';
    }
    // The integer part: at least one digit.
    while n >= 100 {
        let k = 2 * (n % 100) as usize;
        n /= 100;
        i -= 2;
        buf[i..i + 2].copy_from_slice(&PAIRS[k..k + 2]);
    }
    if n >= 10 {
        let k = 2 * n as usize;
        i -= 2;
        buf[i..i + 2].copy_from_slice(&PAIRS[k..k + 2]);
    } else {
        i -= 1;
        buf[i] = b'0' + n as u8;
    }
    if negative {
        i -= 1;
        buf[i] = b'-';
    }
    out.push_ascii(&buf[i..]);
}

/// A text buffer the numbers are appended to: a `String`, or the bytes of a file being encoded.
pub trait TextSink {
    /// Append ASCII text (digits, point, sign; or `core::fmt`'s own text for a number).
    fn push_ascii(&mut self, text: &[u8]);
}

impl TextSink for Vec<u8> {
    fn push_ascii(&mut self, text: &[u8]) {
        self.extend_from_slice(text);
    }
}

impl TextSink for String {
    fn push_ascii(&mut self, text: &[u8]) {
        // Only ever ASCII (see the callers above): the check cannot fail.
        self.push_str(std::str::from_utf8(text).unwrap_or_default());
    }
}

/// "00" to "99", back to back.
const PAIRS: &[u8; 200] = b"0001020304050607080910111213141516171819\
2021222324252627282930313233343536373839\
4041424344454647484950515253545556575859\
6061626364656667686970717273747576777879\
8081828384858687888990919293949596979899";

#[cfg(test)]
mod tests {
    //! The reference is Rust's own float formatting (`core::fmt`, correctly rounded): every text
    //! must be byte for byte what `format!` gives for the same value.
    use super::*;
    use proptest::prelude::*;

    fn fixed(v: f64, d: usize) -> String {
        let mut s = String::new();
        push_fixed(&mut s, v, d);
        s
    }

    fn hundredths_text(v: f64) -> String {
        let mut s = String::new();
        push_hundredths(&mut s, v);
        s
    }

    #[test]
    fn edge_values_match_core_fmt() {
        let values = [
            0.0,
            -0.0,
            -1e-12,
            5e-10,
            1.0000000005,
            0.25,
            0.125,
            2.5,
            3.5,
            -2.5,
            0.1 + 0.2,
            999_999.999_999_999_5,
            1e6,
            4.5e6,
            1e15,
            1e300,
            -1e300,
            f64::MIN_POSITIVE,
            5e-324,
            f64::MAX,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            9.80665,
            -0.005,
            0.015,
            1.005,
        ];
        for &v in &values {
            for d in 0..=12 {
                assert_eq!(fixed(v, d), format!("{v:.d$}"), "{v:e} with {d} decimals");
            }
            let px = if v.is_finite() {
                (v * 100.0).round() / 100.0
            } else {
                0.0
            };
            assert_eq!(hundredths_text(v), format!("{px}"), "{v:e} to hundredths");
        }
    }

    #[test]
    fn every_half_of_the_last_digit_matches_core_fmt() {
        // Values on and next to the decimal halves, where rounding is decided.
        for k in 0..20_000u32 {
            let base = f64::from(k) + 0.5;
            for d in [0usize, 1, 2, 3, 6, 9] {
                let v = base / POW10[d] as f64;
                for w in [v, v.next_up(), v.next_down(), -v] {
                    assert_eq!(fixed(w, d), format!("{w:.d$}"), "{w:e} with {d} decimals");
                }
            }
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(20_000))]
        #[test]
        fn fixed_matches_core_fmt(m in -1.0f64..1.0, e in -12i32..9, d in 0usize..10) {
            let v = m * 10f64.powi(e);
            prop_assert_eq!(fixed(v, d), format!("{v:.d$}"));
        }

        #[test]
        fn any_bits_match_core_fmt(bits in any::<u64>(), d in 0usize..10) {
            let v = f64::from_bits(bits);
            prop_assert_eq!(fixed(v, d), format!("{v:.d$}"));
        }

        #[test]
        fn hundredths_match_core_fmt(m in -1.0f64..1.0, e in -4i32..14) {
            let v = m * 10f64.powi(e);
            let px = (v * 100.0).round() / 100.0;
            prop_assert_eq!(hundredths_text(v), format!("{px}"));
        }

        #[test]
        fn integers_match_core_fmt(n in any::<u64>()) {
            let mut s = String::new();
            push_integer(&mut s, n);
            prop_assert_eq!(s, format!("{n}"));
        }
    }
}
