//! The brief as the study page sends it: a brief file's text plus brief fields as flag texts.
//!
//! A request names brief fields by their command-line flag (`entry-speed`, `max-g`, ...) and gives
//! each value as the text a user would type after that flag. Each text is parsed exactly as the
//! command line parses it (the same `FromStr` and unit parsers clap calls for `BriefArgs`), the
//! brief file's text is read with [`BriefInput::from_toml`] as `design` reads a file, the flags
//! are laid over it with [`BriefInput::overlay`] and the result is checked by
//! [`BriefInput::resolve`]. So a brief the page accepts is the brief
//! `loopwright design FILE --flag value ...` accepts, and a brief it refuses is refused with the
//! same field, value and range in the message.
//!
//! The only difference is deliberate: a request may never name a file on the server. `--limits`
//! and a brief's `limits_file` are refused, since opening a path sent over HTTP would let anyone
//! who can reach the page read the server's files.

use std::collections::BTreeMap;

use crate::brief::{Brief, BriefInput, SpeedText};
use crate::units::parse_limit_or_off;

/// Largest brief file text accepted in a request (the command line's cap is 1 MiB; a brief is a
/// few hundred bytes, and the request body cap is lower still).
pub const MAX_BRIEF_TEXT_BYTES: usize = 64 * 1024;

/// How a flag's text is parsed (as clap parses the flag of the same name).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Parse {
    /// A plain number (`f64::from_str`).
    Number,
    /// A whole number (`i64::from_str`).
    Whole,
    /// A number or none/off/inf ([`parse_limit_or_off`]).
    LimitOrOff,
    /// Text kept as written (speed with a unit, family name, file stem), checked by `resolve`.
    Text,
}

/// Every brief flag of `design` that the page offers, in the order the page shows them.
/// (`--limits` is absent on purpose: see the module documentation.)
pub const FLAGS: [&str; 19] = [
    "shape",
    "entry-speed",
    "max-g",
    "min-top-g",
    "max-onset",
    "max-height",
    "min-radius",
    "height",
    "heartline-height",
    "rolling-resistance",
    "drag-area",
    "mass",
    "air-density",
    "lead-length",
    "spacing",
    "cars",
    "car-pitch",
    "lateral-shift",
    "name",
];

fn parse_kind(flag: &str) -> Option<Parse> {
    Some(match flag {
        "shape" | "entry-speed" | "name" => Parse::Text,
        "max-onset" | "max-height" => Parse::LimitOrOff,
        "cars" => Parse::Whole,
        f if FLAGS.contains(&f) => Parse::Number,
        _ => return None,
    })
}

/// A brief as a request carries it.
#[derive(Debug, Clone, Default)]
pub struct BriefRequest {
    /// The brief file's text (TOML); empty: no file, the documented defaults.
    pub brief_toml: String,
    /// Flag name (without `--`) to the text after it; an empty text is a flag not given.
    pub fields: BTreeMap<String, String>,
}

/// A request that cannot be answered, with the message the page shows (always a 4xx).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{0}")]
pub struct Refused(pub String);

fn number<T: std::str::FromStr>(flag: &str, text: &str) -> Result<T, Refused>
where
    T::Err: std::fmt::Display,
{
    text.parse::<T>()
        .map_err(|e| Refused(format!("invalid value '{text}' for '--{flag}': {e}")))
}

/// The flags of a request as a partial brief, field by field as `BriefArgs::as_input` builds it.
pub fn flags_input(fields: &BTreeMap<String, String>) -> Result<BriefInput, Refused> {
    let mut b = BriefInput::default();
    for (flag, text) in fields {
        if flag == "limits" {
            return Err(Refused(
                "--limits names a file on the server; the study page opens no file named in a request\n\
                 hint: run `loopwright design --limits FILE` on the command line to enforce a limit table"
                    .into(),
            ));
        }
        let kind = parse_kind(flag).ok_or_else(|| {
            Refused(format!(
                "unknown brief field '--{flag}'; the page's fields are --{}",
                FLAGS.join(", --")
            ))
        })?;
        if text.is_empty() {
            continue;
        }
        match kind {
            Parse::Text => {
                let t = Some(text.clone());
                match flag.as_str() {
                    "shape" => b.shape = t,
                    "name" => b.name = t,
                    _ => b.entry_speed = t.map(SpeedText::Text),
                }
            }
            Parse::LimitOrOff => {
                let v = parse_limit_or_off(text)
                    .map_err(|e| Refused(format!("invalid value '{text}' for '--{flag}': {e}")))?;
                match flag.as_str() {
                    "max-onset" => b.max_onset_g_s = Some(v),
                    _ => b.max_height_m = Some(v),
                }
            }
            Parse::Whole => b.cars = Some(number(flag, text)?),
            Parse::Number => {
                let v = Some(number::<f64>(flag, text)?);
                match flag.as_str() {
                    "max-g" => b.max_g = v,
                    "min-top-g" => b.min_top_g = v,
                    "min-radius" => b.min_radius_m = v,
                    "height" => b.height_m = v,
                    "heartline-height" => b.heartline_height_m = v,
                    "rolling-resistance" => b.rolling_resistance = v,
                    "drag-area" => b.drag_area_m2 = v,
                    "mass" => b.mass_kg = v,
                    "air-density" => b.air_density_kg_m3 = v,
                    "lead-length" => b.lead_length_m = v,
                    "spacing" => b.spacing_m = v,
                    "car-pitch" => b.car_pitch_m = v,
                    _ => b.lateral_shift_m = v,
                }
            }
        }
    }
    Ok(b)
}

/// The brief file's text read as `design` reads a brief file; a `limits_file` is refused.
pub fn file_input(text: &str) -> Result<BriefInput, Refused> {
    if text.len() > MAX_BRIEF_TEXT_BYTES {
        return Err(Refused(format!(
            "the brief file is {} bytes; a brief is a small TOML file (at most {MAX_BRIEF_TEXT_BYTES} bytes here)",
            text.len()
        )));
    }
    let file = BriefInput::from_toml(text).map_err(|e| Refused(format!("brief file: {e}")))?;
    if let Some(path) = &file.limits_file {
        return Err(Refused(format!(
            "brief field 'limits_file' = '{path}' names a file on the server; the study page opens no file named in a request\n\
             hint: remove limits_file from the brief here, or run `loopwright design` on the command line to enforce a limit table"
        )));
    }
    Ok(file)
}

/// The brief file overlaid with the flags, not yet resolved.
pub fn merged_input(req: &BriefRequest) -> Result<BriefInput, Refused> {
    Ok(file_input(&req.brief_toml)?.overlay(flags_input(&req.fields)?))
}

/// The complete, checked brief of a request (the same checks and messages as the command line).
pub fn resolve(req: &BriefRequest) -> Result<Brief, Refused> {
    merged_input(req)?.resolve().map_err(|e| {
        Refused(format!(
            "{e}\nhint: fix the field in the brief panel or the brief file"
        ))
    })
}

/// The text a field of a brief file shows in the page's field for `flag` (empty if not set),
/// written so that sending it back as that flag gives the same value.
pub fn field_text(input: &BriefInput, flag: &str) -> String {
    let num = |v: Option<f64>| v.map_or(String::new(), |x| x.to_string());
    let limit = |v: Option<f64>| {
        v.map_or(String::new(), |x| {
            if x.is_infinite() {
                "none".into()
            } else {
                x.to_string()
            }
        })
    };
    match flag {
        "shape" => input.shape.clone().unwrap_or_default(),
        "name" => input.name.clone().unwrap_or_default(),
        "entry-speed" => match &input.entry_speed {
            Some(SpeedText::Text(t)) => t.clone(),
            Some(SpeedText::Number(v)) => v.to_string(),
            None => String::new(),
        },
        "max-g" => num(input.max_g),
        "min-top-g" => num(input.min_top_g),
        "max-onset" => limit(input.max_onset_g_s),
        "max-height" => limit(input.max_height_m),
        "min-radius" => num(input.min_radius_m),
        "height" => num(input.height_m),
        "heartline-height" => num(input.heartline_height_m),
        "rolling-resistance" => num(input.rolling_resistance),
        "drag-area" => num(input.drag_area_m2),
        "mass" => num(input.mass_kg),
        "air-density" => num(input.air_density_kg_m3),
        "lead-length" => num(input.lead_length_m),
        "spacing" => num(input.spacing_m),
        "cars" => input.cars.map_or(String::new(), |c| c.to_string()),
        "car-pitch" => num(input.car_pitch_m),
        "lateral-shift" => num(input.lateral_shift_m),
        _ => String::new(),
    }
}

/// The flag a diagnosis hint's field is set with, and the text to set it to (as the hint prints
/// it: three decimals, or `none` to switch a limit off).
pub fn hint_flag(field: &str, value: f64) -> Option<(&'static str, String)> {
    let flag = match field {
        "max_g" => "max-g",
        "min_top_g" => "min-top-g",
        "max_onset_g_s" => "max-onset",
        "max_height_m" => "max-height",
        "min_radius_m" => "min-radius",
        "entry_speed" => "entry-speed",
        "height_m" => "height",
        _ => return None,
    };
    let text = if value.is_infinite() {
        "none".to_string()
    } else {
        format!("{value:.3}")
    };
    Some((flag, text))
}
