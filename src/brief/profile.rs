//! The force-first family's `[profile]` table: target normal load at control angles of the turn,
//! as written ([`ProfileInput`]) and checked ([`ProfileSpec`]).

use serde::{Deserialize, Serialize};

use super::{BriefError, err, in_range};

/// The `[profile]` table as written: target normal load at control angles of the turn.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ProfileInput {
    /// Turning angles of the control points, degrees, from 0 (entry) rising to 360 (exit), or to
    /// 180 (the top) when `symmetric`.
    pub angles_deg: Option<Vec<f64>>,
    /// Target normal load at each control angle, g.
    pub normal_g: Option<Vec<f64>>,
    /// Mirror the control points about the top (default true).
    pub symmetric: Option<bool>,
    /// Turn spent in the clothoid-like transition at entry and at exit, degrees (default 20).
    pub transition_deg: Option<f64>,
    /// Let the optimiser tune the control loads under the brief's limits and objective (default false:
    /// the loads are used exactly as written).
    pub tune: Option<bool>,
}

/// A checked target load profile, angles in radians over the whole turn [0, 2π].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ProfileSpec {
    /// Control angles as written, rad (to π if symmetric, else to 2π).
    pub angles_rad: Vec<f64>,
    /// Control loads as written, g.
    pub normal_g: Vec<f64>,
    pub symmetric: bool,
    pub transition_rad: f64,
    pub tune: bool,
}

/// Most control points a profile may have (they become optimiser parameters).
pub const MAX_PROFILE_POINTS: usize = 16;
/// Control loads allowed, g: a loop needs n > cos θ, so nothing below −1 g can turn it; above 15 g
/// is beyond any ride.
pub const PROFILE_LOAD_RANGE_G: (f64, f64) = (-1.0, 15.0);

impl ProfileInput {
    /// Check the table: angles rising from 0 to 180° (symmetric) or 360°, loads in range.
    pub fn resolve(&self) -> Result<ProfileSpec, BriefError> {
        let symmetric = self.symmetric.unwrap_or(true);
        let end = if symmetric { 180.0 } else { 360.0 };
        let angles = self.angles_deg.clone().ok_or_else(|| {
            err(
                "profile.angles_deg",
                "missing; give the control angles in degrees, 0 to 180 (symmetric) or 0 to 360",
            )
        })?;
        let loads = self.normal_g.clone().ok_or_else(|| {
            err(
                "profile.normal_g",
                "missing; give the target normal load in g at each control angle",
            )
        })?;
        if angles.len() < 2 || angles.len() > MAX_PROFILE_POINTS {
            return Err(err(
                "profile.angles_deg",
                format!(
                    "has {} control points; give 2 to {MAX_PROFILE_POINTS}",
                    angles.len()
                ),
            ));
        }
        if loads.len() != angles.len() {
            return Err(err(
                "profile.normal_g",
                format!(
                    "has {} values but angles_deg has {}; give one load per angle",
                    loads.len(),
                    angles.len()
                ),
            ));
        }
        for (i, &a) in angles.iter().enumerate() {
            in_range("profile.angles_deg", a, 0.0, end, "degrees")?;
            if i > 0 && a <= angles[i - 1] {
                return Err(err(
                    "profile.angles_deg",
                    format!(
                        "{a}° does not rise above {}°; angles must increase",
                        angles[i - 1]
                    ),
                ));
            }
        }
        if angles[0] != 0.0 || angles[angles.len() - 1] != end {
            return Err(err(
                "profile.angles_deg",
                format!(
                    "must start at 0° and end at {end}° (symmetric = {symmetric}) so the target covers the whole turn; got {}° to {}°",
                    angles[0],
                    angles[angles.len() - 1]
                ),
            ));
        }
        let (lo, hi) = PROFILE_LOAD_RANGE_G;
        for &n in &loads {
            in_range("profile.normal_g", n, lo, hi, "g")?;
        }
        let transition_deg = in_range(
            "profile.transition_deg",
            self.transition_deg.unwrap_or(20.0),
            0.0,
            90.0,
            "degrees",
        )?;
        Ok(ProfileSpec {
            angles_rad: angles.iter().map(|a| a.to_radians()).collect(),
            normal_g: loads,
            symmetric,
            transition_rad: transition_deg.to_radians(),
            tune: self.tune.unwrap_or(false),
        })
    }
}
