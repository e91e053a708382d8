//! Unit parsing for user input: speeds with a suffix, and the constants every stage shares.
//!
//! Inside loopwright every quantity is SI and carries its unit in its name (`speed_m_s`,
//! `radius_m`). This module owns the one place where a user's text becomes such a number (a
//! speed with its unit; an optional limit, or a word switching it off).
//!
//! ```
//! use loopwright::units::parse_speed_m_s;
//! assert_eq!(parse_speed_m_s("25").unwrap(), 25.0);
//! assert!((parse_speed_m_s("90km/h").unwrap() - 25.0).abs() < 1e-12);
//! assert!((parse_speed_m_s("10 mph").unwrap() - 4.4704).abs() < 1e-12);
//! assert!(parse_speed_m_s("25 furlongs").is_err());
//! ```

/// Standard gravity, m/s² (the conventional value adopted by the 3rd CGPM, 1901).
pub const STANDARD_GRAVITY_M_S2: f64 = 9.806_65;

/// Parse a speed such as `25`, `25m/s`, `90 km/h` or `56mph` into metres per second.
///
/// A bare number is metres per second. The result is not range-checked here; the brief does that.
pub fn parse_speed_m_s(text: &str) -> Result<f64, String> {
    let t = text.trim();
    let split = t
        .find(|c: char| {
            !(c.is_ascii_digit() || c == '.' || c == '-' || c == '+' || c == 'e' || c == 'E')
        })
        .unwrap_or(t.len());
    // "1e" followed by a unit letter would be mis-split; numbers with exponents and units are rare
    // enough that we only accept the split when the number part parses.
    let (num, unit) = t.split_at(split);
    let value: f64 = num.trim().parse().map_err(|_| {
        format!("'{text}' is not a speed; write a number with an optional unit, e.g. 25, 25m/s, 90km/h, 56mph")
    })?;
    let factor = match unit.trim().to_ascii_lowercase().as_str() {
        "" | "m/s" | "mps" => 1.0,
        "km/h" | "kmh" | "kph" => 1000.0 / 3600.0,
        // International mile = 1609.344 m exactly (1959 international yard and pound agreement).
        "mph" | "mi/h" => 1609.344 / 3600.0,
        other => {
            return Err(format!(
                "unknown speed unit '{other}' in '{text}'; use m/s (default), km/h or mph"
            ));
        }
    };
    Ok(value * factor)
}

/// Words that switch an optional limit off, on a flag or in a brief file.
const OFF_WORDS: [&str; 5] = ["none", "off", "inf", "infinity", "+inf"];

/// Parse an optional limit as written on a flag: a number, or `none` / `off` / `inf` for no limit
/// (returned as +∞, a cap that never binds; [`crate::brief::BriefInput::resolve`] turns it into "no limit").
///
/// ```
/// use loopwright::units::parse_limit_or_off;
/// assert_eq!(parse_limit_or_off("8").unwrap(), 8.0);
/// assert_eq!(parse_limit_or_off("none").unwrap(), f64::INFINITY);
/// assert!(parse_limit_or_off("lots").is_err());
/// ```
pub fn parse_limit_or_off(text: &str) -> Result<f64, String> {
    let t = text.trim();
    if OFF_WORDS.contains(&t.to_ascii_lowercase().as_str()) {
        return Ok(f64::INFINITY);
    }
    t.parse::<f64>().map_err(|_| {
        format!("'{text}' is not a number; give a value, or none (also off, inf) for no limit")
    })
}

/// Format metres per second with the km/h equivalent, for reports.
pub fn describe_speed(speed_m_s: f64) -> String {
    format!("{speed_m_s:.2} m/s ({:.1} km/h)", speed_m_s * 3.6)
}
