//! Duration-based limit tables as data: what a `--limits` / `limits_file` TOML holds, parsed and
//! range-checked. Evaluating a ride against a table is [`crate::checks::envelope`]'s job.
//!
//! The built-in table ([`EnvelopeTable::illustrative`], the same as
//! `examples/limits-illustrative.toml`) is ILLUSTRATIVE: its values are from memory of published
//! practice, not copied from any standard.

use serde::{Deserialize, Serialize};

/// The shipped illustrative table (TOML).
pub const ILLUSTRATIVE_TOML: &str = include_str!("../../examples/limits-illustrative.toml");

/// Largest limits file we read, bytes.
pub const MAX_LIMITS_BYTES: u64 = 1 << 20;

/// One level: the load may exceed `max_g` (or fall below `min_g`) for at most `duration_s` at a time.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Level {
    pub duration_s: f64,
    pub max_g: f64,
    pub min_g: f64,
}

/// The limits of one rider axis.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AxisLimits {
    /// Largest |d(load)/dt|, g/s.
    pub max_onset_g_s: Option<f64>,
    #[serde(default)]
    pub level: Vec<Level>,
}

/// A limit table as read from TOML.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EnvelopeTable {
    /// What the table is and where its values come from.
    pub title: Option<String>,
    /// True for tables whose values are not from a standard (the shipped default is).
    #[serde(default)]
    pub illustrative: bool,
    pub normal: Option<AxisLimits>,
    pub lateral: Option<AxisLimits>,
    pub tangential: Option<AxisLimits>,
}

/// A limits file that cannot be used, and why.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("limits field '{field}': {message}")]
pub struct EnvelopeError {
    pub field: String,
    pub message: String,
}

/// Rider axis of a load.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Axis {
    Normal,
    Lateral,
    Tangential,
}

impl Axis {
    pub const ALL: [Axis; 3] = [Axis::Normal, Axis::Lateral, Axis::Tangential];
    pub fn name(self) -> &'static str {
        match self {
            Axis::Normal => "normal",
            Axis::Lateral => "lateral",
            Axis::Tangential => "tangential",
        }
    }
}

/// Whether a level bounds the load from above or below.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Bound {
    Above,
    Below,
}

fn bad(field: String, message: String) -> EnvelopeError {
    EnvelopeError { field, message }
}

fn finite_in(field: String, v: f64, lo: f64, hi: f64, unit: &str) -> Result<(), EnvelopeError> {
    if !v.is_finite() {
        return Err(bad(
            field,
            format!("{v} is not a finite number; give a value from {lo} to {hi} {unit}"),
        ));
    }
    if v < lo || v > hi {
        return Err(bad(
            field,
            format!("{v} {unit} is out of range; allowed {lo} to {hi} {unit}"),
        ));
    }
    Ok(())
}

impl EnvelopeTable {
    /// Parse and check a table; unknown fields, non-finite or out-of-range values are errors.
    pub fn from_toml(text: &str) -> Result<Self, EnvelopeError> {
        let t: EnvelopeTable = toml::from_str(text).map_err(|e| {
            bad(
                "(file)".into(),
                format!(
                    "not a valid limits table: {}",
                    crate::brief::toml_error(text, &e)
                ),
            )
        })?;
        t.validate()?;
        Ok(t)
    }

    /// The built-in ILLUSTRATIVE table (see the module docs).
    pub fn illustrative() -> Self {
        Self::from_toml(ILLUSTRATIVE_TOML)
            .expect("the shipped illustrative table is valid (checked by a test)")
    }

    /// The axes present, with their limits.
    pub fn axes(&self) -> impl Iterator<Item = (Axis, &AxisLimits)> {
        Axis::ALL
            .into_iter()
            .zip([&self.normal, &self.lateral, &self.tangential])
            .filter_map(|(a, l)| l.as_ref().map(|l| (a, l)))
    }

    /// Check every value: durations 0 to 3600 s, loads −20 to 20 g with min below max, onsets
    /// 0.01 to 1000 g/s, at most 64 levels per axis, and at least one limit in the table.
    pub fn validate(&self) -> Result<(), EnvelopeError> {
        if self.title.as_ref().is_some_and(|t| t.len() > 200) {
            return Err(bad("title".into(), "longer than 200 characters".into()));
        }
        let mut any = false;
        for (axis, lim) in self.axes() {
            let a = axis.name();
            if let Some(o) = lim.max_onset_g_s {
                finite_in(format!("{a}.max_onset_g_s"), o, 0.01, 1000.0, "g/s")?;
                any = true;
            }
            if lim.level.len() > 64 {
                return Err(bad(
                    format!("{a}.level"),
                    format!("{} levels; at most 64 are allowed", lim.level.len()),
                ));
            }
            for (i, l) in lim.level.iter().enumerate() {
                let f = |name: &str| format!("{a}.level[{i}].{name}");
                finite_in(f("duration_s"), l.duration_s, 0.0, 3600.0, "s")?;
                finite_in(f("max_g"), l.max_g, -20.0, 20.0, "g")?;
                finite_in(f("min_g"), l.min_g, -20.0, 20.0, "g")?;
                if l.min_g >= l.max_g {
                    return Err(bad(
                        f("min_g"),
                        format!(
                            "{} g is not below max_g = {} g; a level's lower bound must lie under its upper bound",
                            l.min_g, l.max_g
                        ),
                    ));
                }
                any = true;
            }
        }
        if !any {
            return Err(bad(
                "(file)".into(),
                "the table sets no limit; give at least one level or onset limit".into(),
            ));
        }
        Ok(())
    }
}
