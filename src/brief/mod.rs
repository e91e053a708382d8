//! The brief: what the engineer asks for, read from TOML and flags, checked and given defaults.
//!
//! A [`BriefInput`] holds optional fields exactly as a user wrote them (TOML file or command-line
//! flags; flags override the file through [`BriefInput::overlay`]). [`BriefInput::resolve`] turns it
//! into a [`Brief`]: every field present, in SI units, finite and in range, or a [`BriefError`]
//! that names the field, the value and the allowed range.
//!
//! Default limits are ILLUSTRATIVE (common practice, no source): they are not taken from any
//! standard and must be replaced by the governing standard's values in real work.
//!
//! ```
//! use loopwright::brief::BriefInput;
//! let input: BriefInput = toml::from_str("entry_speed = \"90 km/h\"\nmax_g = 4.5").unwrap();
//! let brief = input.resolve().unwrap();
//! assert!((brief.entry_speed_m_s - 25.0).abs() < 1e-12);
//! assert_eq!(brief.min_top_g, 0.2); // illustrative default
//! ```

pub mod limits_table;
mod messages;
mod profile;

pub use messages::{eng, number_or_text, toml_error};

pub use profile::{MAX_PROFILE_POINTS, PROFILE_LOAD_RANGE_G, ProfileInput, ProfileSpec};

use serde::{Deserialize, Serialize};
use std::fmt;

use crate::units::{parse_limit_or_off, parse_speed_m_s};

/// The demo brief shipped in `examples/demo-brief.toml` (an invented scenario).
pub const DEMO_BRIEF_TOML: &str = include_str!("../../examples/demo-brief.toml");

/// Which shape family to design with.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Hash)]
#[serde(rename_all = "lowercase")]
pub enum ShapeKind {
    /// Constant radius, entered straight from level track.
    Circle,
    /// Teardrop: clothoid in, circular arc over the top, clothoid out.
    Clothoid,
    /// Curvature a smooth cubic spline of arc length, symmetric about the top.
    Spline,
    /// Force-first: curvature solved from a target normal load along the turn (`[profile]` table).
    Profile,
}

impl ShapeKind {
    /// Every family, in the order reports list them.
    pub const ALL: [ShapeKind; 3] = [ShapeKind::Circle, ShapeKind::Clothoid, ShapeKind::Spline];
    /// Families whose curvature depends on the ride (entry speed and losses), not on a size.
    /// They are kept out of [`ShapeKind::ALL`]: they have no free size, so "every family at this
    /// top radius" comparisons do not apply to them, and they need a `[profile]` table.
    pub const FORCE_FIRST: [ShapeKind; 1] = [ShapeKind::Profile];

    /// The name used in briefs, flags and file names.
    pub fn name(self) -> &'static str {
        match self {
            ShapeKind::Circle => "circle",
            ShapeKind::Clothoid => "clothoid",
            ShapeKind::Spline => "spline",
            ShapeKind::Profile => "profile",
        }
    }

    /// Parse a family name as written by a user.
    pub fn parse(text: &str) -> Result<Self, BriefError> {
        ShapeKind::ALL
            .into_iter()
            .chain(ShapeKind::FORCE_FIRST)
            .find(|k| k.name() == text.trim().to_ascii_lowercase())
            .ok_or_else(|| BriefError {
                field: "shape".into(),
                message: format!(
                    "unknown shape family '{text}'; choose one of circle, clothoid, spline, profile"
                ),
            })
    }
}

impl fmt::Display for ShapeKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// What the optimiser is asked to find.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Objective {
    /// The tallest loop the limits allow at the entry speed.
    Tallest,
    /// A loop of this heartline height with the lowest peak normal load.
    Height { height_m: f64 },
}

/// A speed as written in TOML: a number (m/s) or a string with a unit.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(untagged)]
pub enum SpeedText {
    /// Metres per second.
    Number(f64),
    /// A number with a unit suffix: m/s, km/h or mph.
    Text(String),
}

impl<'de> Deserialize<'de> for SpeedText {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        Ok(
            match number_or_text(
                d,
                "a speed: a number in m/s or text with a unit such as \"90 km/h\"",
            )? {
                Ok(v) => SpeedText::Number(v),
                Err(t) => SpeedText::Text(t),
            },
        )
    }
}

/// A brief as the user wrote it: every field optional.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BriefInput {
    pub name: Option<String>,
    pub title: Option<String>,
    pub shape: Option<String>,
    pub entry_speed: Option<SpeedText>,
    pub max_g: Option<f64>,
    pub min_top_g: Option<f64>,
    /// An optional limit: a number, or `"none"` / `"off"` / `"inf"` (kept as +∞, a cap that never
    /// binds) to switch it off, so that flags can switch off a limit a brief file sets.
    #[serde(default, deserialize_with = "limit_or_off")]
    pub max_onset_g_s: Option<f64>,
    /// As `max_onset_g_s`: a number or `"none"` / `"off"` / `"inf"`.
    #[serde(default, deserialize_with = "limit_or_off")]
    pub max_height_m: Option<f64>,
    pub min_radius_m: Option<f64>,
    pub height_m: Option<f64>,
    pub heartline_height_m: Option<f64>,
    pub rolling_resistance: Option<f64>,
    pub drag_area_m2: Option<f64>,
    pub mass_kg: Option<f64>,
    pub air_density_kg_m3: Option<f64>,
    pub lead_length_m: Option<f64>,
    pub spacing_m: Option<f64>,
    pub cars: Option<i64>,
    pub car_pitch_m: Option<f64>,
    pub lateral_shift_m: Option<f64>,
    /// Running-rail gauge for the DXF's rail layers, m (ILLUSTRATIVE default).
    pub gauge_m: Option<f64>,
    /// How the DXF draws its curves: `"spline"` (default) or `"polyline"`.
    pub dxf_curves: Option<String>,
    pub limits_file: Option<String>,
    /// Target load profile of the `profile` family (TOML table `[profile]`).
    pub profile: Option<ProfileInput>,
}

/// A complete, checked brief in SI units.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Brief {
    pub name: String,
    pub title: String,
    pub shape: ShapeKind,
    pub entry_speed_m_s: f64,
    pub max_g: f64,
    pub min_top_g: f64,
    pub max_onset_g_s: Option<f64>,
    pub max_height_m: Option<f64>,
    pub min_radius_m: f64,
    pub objective: Objective,
    pub heartline_height_m: f64,
    pub rolling_resistance: f64,
    pub drag_area_m2: f64,
    pub mass_kg: f64,
    pub air_density_kg_m3: f64,
    pub lead_length_m: f64,
    pub spacing_m: f64,
    /// Cars in the train (1: the point-mass model). `mass_kg` is the whole train, shared equally.
    pub cars: usize,
    /// Heartline distance between neighbouring cars, m.
    pub car_pitch_m: f64,
    /// Sideways spread of the loop so the exit passes beside the entry, m (positive: to the
    /// rider's left; 0: planar loop).
    pub lateral_shift_m: f64,
    /// Distance between the two running rails, centre to centre, m: drawn in the DXF only (the
    /// ride model runs on the rail centreline). ILLUSTRATIVE default, see [`defaults::GAUGE_M`].
    pub gauge_m: f64,
    /// How the DXF draws its curves (cubic splines or one vertex per station).
    pub dxf_curves: DxfCurves,
    /// Duration-based limit table (TOML) for the envelope check; `None`: the built-in ILLUSTRATIVE one.
    pub limits_file: Option<String>,
    /// The table `limits_file` names, once read ([`Brief::with_limits_table`]): enforced by every
    /// command. Not part of the brief's echo (the file name is).
    #[serde(skip)]
    pub limits_table: Option<limits_table::EnvelopeTable>,
    /// The target load profile (always present when `shape` is `profile`).
    pub profile: Option<ProfileSpec>,
}

/// How the DXF draws the centrelines and rails.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum DxfCurves {
    /// Cubic SPLINE entities fitted within a stated tolerance (small files, smooth in CAD).
    Spline,
    /// One vertex per station (3D POLYLINE, LWPOLYLINE in the elevation).
    Polyline,
}

/// A field of the brief that cannot be used, and why.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("brief field '{field}': {message}")]
pub struct BriefError {
    pub field: String,
    pub message: String,
}

/// Defaults, all ILLUSTRATIVE (common practice, no source) unless a source is named.
pub mod defaults {
    pub const ENTRY_SPEED_M_S: f64 = 25.0;
    pub const MAX_G: f64 = 4.5;
    pub const MIN_TOP_G: f64 = 0.2;
    /// The floor a `min_top_g` at or below −1 g stands for. At the top of a loop the rider feels
    /// n = v²κ/g − 1 ≥ −1 g whenever the train moves (the textbook vertical-circle result), so such
    /// a limit never binds and only asks that the train pass the top. A search for "just passes"
    /// would sit on the stall, a discontinuity no verification can confirm; the floor keeps a
    /// crawl margin of v²κ/g ≥ 0.01 instead (about 1 m/s over a 9 m top radius). Illustrative.
    pub const MIN_TOP_G_CRAWL: f64 = -0.99;
    /// Smallest heartline radius of curvature allowed anywhere; keeps `tallest` from shrinking the
    /// top to a point (common practice, no source).
    pub const MIN_RADIUS_M: f64 = 4.0;
    /// Heartline above the rail centreline (common practice, no source).
    pub const HEARTLINE_HEIGHT_M: f64 = 1.1;
    /// Wheel rolling-resistance coefficient (from memory of published coaster estimates, 0.01-0.03).
    pub const ROLLING_RESISTANCE: f64 = 0.015;
    /// Drag coefficient times frontal area of the train (from memory, of the order of 1 m²).
    pub const DRAG_AREA_M2: f64 = 1.0;
    /// Train mass (illustrative).
    pub const MASS_KG: f64 = 5000.0;
    /// Sea-level air density of the ICAO / ISO 2533 standard atmosphere.
    pub const AIR_DENSITY_KG_M3: f64 = 1.225;
    /// Level track drawn before and after the loop (illustrative).
    pub const LEAD_LENGTH_M: f64 = 5.0;
    /// Heartline sample spacing for the reported design.
    pub const SPACING_M: f64 = 0.05;
    /// One car: the point-mass model.
    pub const CARS: usize = 1;
    /// Car pitch, m (illustrative; from memory, coaster cars are of the order of 2-3 m long).
    pub const CAR_PITCH_M: f64 = 2.5;
    /// Lateral shift, m: one train envelope width, so that the envelopes of the entry and exit
    /// trains (each this wide, centred on its track) just clear each other where the tracks pass.
    /// 2.5 m is a car about 1.5–2 m wide plus clearance (common practice, no source; illustrative).
    pub const LATERAL_SHIFT_M: f64 = 2.5;
    /// Running-rail gauge, centre to centre (ILLUSTRATIVE: a round figure from memory of steel
    /// coaster track, no source; set the real track's value).
    pub const GAUGE_M: f64 = 1.1;
}

fn err(field: &str, message: impl Into<String>) -> BriefError {
    BriefError {
        field: field.into(),
        message: message.into(),
    }
}

/// Check a number is finite and within `[lo, hi]`; the message gives the unit and range.
fn in_range(field: &str, value: f64, lo: f64, hi: f64, unit: &str) -> Result<f64, BriefError> {
    if !value.is_finite() {
        return Err(err(
            field,
            format!(
                "{} is not a finite number; give a value from {} to {} {unit}",
                eng(value),
                eng(lo),
                eng(hi)
            ),
        ));
    }
    if value < lo || value > hi {
        return Err(err(
            field,
            format!(
                "{} {unit} is out of range; allowed {} to {} {unit}",
                eng(value),
                eng(lo),
                eng(hi)
            ),
        ));
    }
    Ok(value)
}

/// Serde: an optional limit in a brief file, a number or one of the off words (as +∞).
fn limit_or_off<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
    match number_or_text(d, "a number, or \"none\" (also off, inf) for no limit")? {
        Ok(v) => Ok(Some(v)),
        Err(w) => parse_limit_or_off(&w)
            .map(Some)
            .map_err(serde::de::Error::custom),
    }
}

/// An optional cap: +∞ (switched off) is no limit; anything else must be finite and in range.
fn optional_cap(
    field: &str,
    value: Option<f64>,
    lo: f64,
    hi: f64,
    unit: &str,
) -> Result<Option<f64>, BriefError> {
    match value {
        None => Ok(None),
        Some(v) if v == f64::INFINITY => Ok(None),
        Some(v) => in_range(field, v, lo, hi, unit).map(Some).map_err(|e| {
            err(
                field,
                format!("{}; none (also off, inf) switches it off", e.message),
            )
        }),
    }
}

impl BriefInput {
    /// Parse TOML text; unknown fields are an error (a typo must not be ignored silently).
    pub fn from_toml(text: &str) -> Result<Self, BriefError> {
        toml::from_str(text).map_err(|e| {
            err(
                "(file)",
                format!("not a valid brief: {}", toml_error(text, &e)),
            )
        })
    }

    /// Fields set in `over` replace those in `self` (flags over a file).
    pub fn overlay(self, over: BriefInput) -> BriefInput {
        macro_rules! pick {
            ($($f:ident),*) => { BriefInput { $($f: over.$f.or(self.$f)),* } };
        }
        pick!(
            name,
            title,
            shape,
            entry_speed,
            max_g,
            min_top_g,
            max_onset_g_s,
            max_height_m,
            min_radius_m,
            height_m,
            heartline_height_m,
            rolling_resistance,
            drag_area_m2,
            mass_kg,
            air_density_kg_m3,
            lead_length_m,
            spacing_m,
            cars,
            car_pitch_m,
            lateral_shift_m,
            gauge_m,
            dxf_curves,
            limits_file,
            profile
        )
    }

    /// Fill defaults, convert units and check every field.
    pub fn resolve(&self) -> Result<Brief, BriefError> {
        use defaults as d;
        let name = self.name.clone().unwrap_or_else(|| "loop".to_string());
        if name.is_empty()
            || name.len() > 64
            || !name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_')
        {
            return Err(err(
                "name",
                format!("'{name}' cannot be a file stem; use 1 to 64 letters, digits, '-' or '_'"),
            ));
        }
        let title = self.title.clone().unwrap_or_else(|| name.clone());
        if title.len() > 200 {
            return Err(err("title", "longer than 200 characters"));
        }
        let shape = match &self.shape {
            Some(s) => ShapeKind::parse(s)?,
            None => ShapeKind::Clothoid,
        };
        let entry_speed_m_s = match &self.entry_speed {
            None => d::ENTRY_SPEED_M_S,
            Some(SpeedText::Number(v)) => *v,
            Some(SpeedText::Text(t)) => parse_speed_m_s(t).map_err(|m| err("entry_speed", m))?,
        };
        let entry_speed_m_s = in_range("entry_speed", entry_speed_m_s, 1.0, 150.0, "m/s")?;
        let max_g = in_range("max_g", self.max_g.unwrap_or(d::MAX_G), 1.0, 20.0, "g")?;
        // At or below −1 g the floor cannot bind (see `MIN_TOP_G_CRAWL`): a relaxed brief, kept
        // at the crawl margin so that the train is still carried over the top.
        let min_top_g = in_range(
            "min_top_g",
            self.min_top_g.unwrap_or(d::MIN_TOP_G),
            -20.0,
            20.0,
            "g",
        )?
        .max(d::MIN_TOP_G_CRAWL);
        if min_top_g >= max_g {
            return Err(err(
                "min_top_g",
                format!(
                    "{min_top_g} g is not below max_g = {max_g} g; the top load must lie under the peak limit"
                ),
            ));
        }
        let max_onset_g_s = optional_cap("max_onset_g_s", self.max_onset_g_s, 0.01, 1000.0, "g/s")?;
        let max_height_m = optional_cap("max_height_m", self.max_height_m, 0.5, 500.0, "m")?;
        let min_radius_m = in_range(
            "min_radius_m",
            self.min_radius_m.unwrap_or(d::MIN_RADIUS_M),
            0.1,
            500.0,
            "m",
        )?;
        let objective = match self.height_m {
            None => Objective::Tallest,
            Some(h) => Objective::Height {
                height_m: in_range("height_m", h, 0.5, 500.0, "m")?,
            },
        };
        if let (Objective::Height { height_m }, Some(max_h)) = (objective, max_height_m)
            && height_m > max_h
        {
            return Err(err(
                "height_m",
                format!(
                    "{height_m} m is above max_height_m = {max_h} m; the two contradict each other"
                ),
            ));
        }
        let heartline_height_m = in_range(
            "heartline_height_m",
            self.heartline_height_m.unwrap_or(d::HEARTLINE_HEIGHT_M),
            0.0,
            5.0,
            "m",
        )?;
        if heartline_height_m >= min_radius_m {
            return Err(err(
                "heartline_height_m",
                format!(
                    "{heartline_height_m} m is not below min_radius_m = {min_radius_m} m; the rail would fold over itself at the tightest point"
                ),
            ));
        }
        let (cars, car_pitch_m, lateral_shift_m, limits_file) = self.resolve_train_and_shift()?;
        let profile = match (shape, &self.profile) {
            // Checked even when another family is chosen (a user may switch with --shape), so a
            // brief can be designed with both.
            (_, Some(p)) => Some(p.resolve()?),
            (ShapeKind::Profile, None) => {
                return Err(err(
                    "profile",
                    "shape = \"profile\" needs a [profile] table with angles_deg and normal_g (see examples/profile-brief.toml)",
                ));
            }
            _ => None,
        };
        let gauge_m = in_range("gauge_m", self.gauge_m.unwrap_or(d::GAUGE_M), 0.1, 5.0, "m")?;
        let dxf_curves = match self.dxf_curves.as_deref() {
            None | Some("spline") => DxfCurves::Spline,
            Some("polyline") => DxfCurves::Polyline,
            Some(other) => {
                return Err(err(
                    "dxf_curves",
                    format!("'{other}' is not a curve form; use \"spline\" or \"polyline\""),
                ));
            }
        };
        Ok(Brief {
            gauge_m,
            dxf_curves,
            cars,
            car_pitch_m,
            lateral_shift_m,
            limits_file,
            limits_table: None,
            profile,
            name,
            title,
            shape,
            entry_speed_m_s,
            max_g,
            min_top_g,
            max_onset_g_s,
            max_height_m,
            min_radius_m,
            objective,
            heartline_height_m,
            rolling_resistance: in_range(
                "rolling_resistance",
                self.rolling_resistance.unwrap_or(d::ROLLING_RESISTANCE),
                0.0,
                0.5,
                "(dimensionless)",
            )?,
            drag_area_m2: in_range(
                "drag_area_m2",
                self.drag_area_m2.unwrap_or(d::DRAG_AREA_M2),
                0.0,
                50.0,
                "m²",
            )?,
            mass_kg: in_range(
                "mass_kg",
                self.mass_kg.unwrap_or(d::MASS_KG),
                10.0,
                1.0e6,
                "kg",
            )?,
            air_density_kg_m3: in_range(
                "air_density_kg_m3",
                self.air_density_kg_m3.unwrap_or(d::AIR_DENSITY_KG_M3),
                0.0,
                2.0,
                "kg/m³",
            )?,
            lead_length_m: in_range(
                "lead_length_m",
                self.lead_length_m.unwrap_or(d::LEAD_LENGTH_M),
                0.0,
                200.0,
                "m",
            )?,
            spacing_m: in_range(
                "spacing_m",
                self.spacing_m.unwrap_or(d::SPACING_M),
                0.005,
                1.0,
                "m",
            )?,
        })
    }
}

impl BriefInput {
    /// The train, lateral-shift and limits-file fields, checked.
    fn resolve_train_and_shift(&self) -> Result<(usize, f64, f64, Option<String>), BriefError> {
        use defaults as d;
        let cars = match self.cars {
            None => d::CARS,
            Some(n) if (1..=40).contains(&n) => n as usize,
            Some(n) => {
                return Err(err(
                    "cars",
                    format!("{n} is out of range; allowed 1 to 40 cars"),
                ));
            }
        };
        let car_pitch_m = in_range(
            "car_pitch_m",
            self.car_pitch_m.unwrap_or(d::CAR_PITCH_M),
            0.5,
            20.0,
            "m",
        )?;
        let train_m = (cars - 1) as f64 * car_pitch_m;
        if train_m > 300.0 {
            return Err(err(
                "car_pitch_m",
                format!(
                    "{cars} cars at {car_pitch_m} m make a {train_m:.1} m train; allowed at most 300 m"
                ),
            ));
        }
        let shift = self.lateral_shift_m.unwrap_or(d::LATERAL_SHIFT_M);
        let lateral_shift_m = in_range("lateral_shift_m", shift, -50.0, 50.0, "m")?;
        if self
            .limits_file
            .as_ref()
            .is_some_and(|f| f.trim().is_empty())
        {
            return Err(err(
                "limits_file",
                "is empty; give the path of a TOML limit table",
            ));
        }
        Ok((cars, car_pitch_m, lateral_shift_m, self.limits_file.clone()))
    }
}

impl Brief {
    /// The built-in demo brief.
    pub fn demo() -> Brief {
        BriefInput::from_toml(DEMO_BRIEF_TOML)
            .and_then(|b| b.resolve())
            .expect("the shipped demo brief is valid (checked by a test)")
    }

    /// Drag deceleration per unit speed squared, 1/m: ρ·CdA/m, the k in d(v²)/ds = … − k·v².
    pub fn drag_per_metre(&self) -> f64 {
        self.air_density_kg_m3 * self.drag_area_m2 / self.mass_kg
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flags_override_the_file_field_by_field() {
        let file = BriefInput::from_toml("max_g = 4.0\nmin_top_g = 0.3\nname = \"a\"").unwrap();
        let flags = BriefInput {
            max_g: Some(5.0),
            ..Default::default()
        };
        let b = file.overlay(flags).resolve().unwrap();
        assert_eq!((b.max_g, b.min_top_g, b.name.as_str()), (5.0, 0.3, "a"));
    }

    #[test]
    fn unknown_fields_are_rejected_with_their_name() {
        let e = BriefInput::from_toml("max_gee = 4.0").unwrap_err();
        assert!(e.to_string().contains("max_gee"), "{e}");
    }

    #[test]
    fn the_demo_brief_is_valid() {
        let b = Brief::demo();
        assert_eq!(b.name, "copperwing");
        assert_eq!(b.entry_speed_m_s, 25.0);
    }

    // 1 mph = 0.44704 m/s exactly (international mile, 1959); 90 km/h = 25 m/s.
    #[test]
    fn speeds_in_toml_accept_units() {
        for (text, v) in [
            ("entry_speed = 25", 25.0),
            ("entry_speed = \"90km/h\"", 25.0),
            ("entry_speed = \"50 mph\"", 22.352),
        ] {
            let b = BriefInput::from_toml(text).unwrap().resolve().unwrap();
            assert!((b.entry_speed_m_s - v).abs() < 1e-12, "{text}");
        }
    }
}
