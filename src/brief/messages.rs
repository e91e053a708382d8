//! How input errors read: TOML errors with line, column and the line itself, field values that
//! are a number or a text without Rust type names, and numbers in engineering form.

use std::fmt;

/// Serde: a value that is a number or a text, with `expecting` in the message when it is neither
/// (a derived untagged enum would name its Rust type instead).
pub fn number_or_text<'de, D: serde::Deserializer<'de>>(
    d: D,
    expecting: &'static str,
) -> Result<Result<f64, String>, D::Error> {
    struct V(&'static str);
    impl serde::de::Visitor<'_> for V {
        type Value = Result<f64, String>;
        fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
            f.write_str(self.0)
        }
        fn visit_f64<E>(self, v: f64) -> Result<Self::Value, E> {
            Ok(Ok(v))
        }
        fn visit_i64<E>(self, v: i64) -> Result<Self::Value, E> {
            Ok(Ok(v as f64))
        }
        fn visit_u64<E>(self, v: u64) -> Result<Self::Value, E> {
            Ok(Ok(v as f64))
        }
        fn visit_str<E>(self, v: &str) -> Result<Self::Value, E> {
            Ok(Err(v.to_string()))
        }
    }
    d.deserialize_any(V(expecting))
}

/// A number as echoed in messages: plain when of ordinary size, in engineering form (`1e300`,
/// `2.5e-9`) when very large or small, so that no message is hundreds of digits long.
pub fn eng(v: f64) -> String {
    let a = v.abs();
    if v.is_finite() && a != 0.0 && !(1e-3..1e6).contains(&a) {
        format!("{v:e}")
    } else {
        format!("{v}")
    }
}

/// A TOML error as a user reads it: line and column, the line itself (which names the field),
/// the key of a duplicate, and no Rust type names.
pub fn toml_error(text: &str, e: &toml::de::Error) -> String {
    let mut message = e.message().to_string();
    // Derived deserialisers name Rust types; say what is expected instead.
    for (from, to) in [
        ("struct ProfileInput", "a [profile] table"),
        ("struct BriefInput", "a brief (TOML key = value lines)"),
        ("struct SweepInput", "a [sweep] table"),
        ("struct EnvelopeTable", "a limits table"),
        ("struct AxisLimits", "an axis table (max_onset_g_s, level)"),
        ("struct Level", "a level table (duration_s, max_g, min_g)"),
        ("expected f64", "expected a number"),
        ("expected i64", "expected a whole number"),
        ("expected usize", "expected a whole number"),
        ("expected a sequence", "expected a list such as [1, 2]"),
    ] {
        message = message.replace(from, to);
    }
    let Some(span) = e.span() else {
        return message;
    };
    let start = span.start.min(text.len());
    let before = &text[..start];
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let column = before[line_start..].chars().count() + 1;
    let line_text = text[line_start..].lines().next().unwrap_or("").trim();
    if message == "duplicate key" {
        let key = text.get(span.clone()).unwrap_or("").trim();
        message = format!("duplicate key `{key}` (each field may be given once)");
    }
    let shown: String = line_text.chars().take(80).collect();
    format!("line {line}, column {column} (`{shown}`): {message}")
}
