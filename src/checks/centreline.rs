//! Checking a centreline from elsewhere: imported points → fitted path → ride → summary and verdict.
//!
//! The same stages as a design run, with [`crate::geometry::fit`] in place of the shape families
//! and no optimiser: the loads, figures and limit checks are those `design` reports.

use serde::Serialize;

use super::{Limits, Summary, Verdict, check, summarise};
use crate::brief::Brief;
use crate::dynamics::{Conditions, Ride, Stall, simulate};
use crate::geometry::Centreline;
use crate::geometry::fit::{FitError, FitOptions, FitReport, PointsAre, fit_centreline};
use crate::import::ImportedCentreline;

/// A checked centreline.
#[derive(Debug, Clone)]
pub struct CheckedCentreline {
    pub brief: Brief,
    /// What was read ("DXF POLYLINE on layer 'LW-RAIL'", …) and from which file.
    pub source: String,
    pub file: String,
    pub fit: FitReport,
    pub path: Centreline,
    pub ride: Ride,
    pub summary: Summary,
    pub verdict: Verdict,
}

/// Why a centreline could not be checked at all.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CheckFailure {
    #[error("{0}")]
    Fit(#[from] FitError),
    #[error("at the entry speed {speed_m_s:.2} m/s {stall}")]
    Stall { speed_m_s: f64, stall: Stall },
}

/// How the imported points are read.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CheckOptions {
    pub points_are: PointsAre,
    pub tolerance_m: f64,
}

/// Fit, ride and check a centreline for the brief's entry speed, losses, heartline height and limits.
pub fn check_centreline(
    brief: &Brief,
    imported: &ImportedCentreline,
    file: &str,
    opts: &CheckOptions,
) -> Result<CheckedCentreline, CheckFailure> {
    let fit_opts = FitOptions {
        tolerance_m: opts.tolerance_m,
        points_are: opts.points_are,
        heartline_height_m: brief.heartline_height_m,
        spacing_m: brief.spacing_m,
    };
    let (path, fit) = fit_centreline(&imported.points_m, &fit_opts)?;
    let cond = Conditions {
        entry_speed_m_s: brief.entry_speed_m_s,
        rolling_resistance: brief.rolling_resistance,
        drag_per_metre: brief.drag_per_metre(),
    };
    let ride = simulate(&path, &cond).map_err(|stall| CheckFailure::Stall {
        speed_m_s: brief.entry_speed_m_s,
        stall,
    })?;
    let summary = summarise(&path, &ride);
    let verdict = check(&summary, &Limits::from(brief));
    Ok(CheckedCentreline {
        brief: brief.clone(),
        source: imported.source.clone(),
        file: file.to_string(),
        fit,
        path,
        ride,
        summary,
        verdict,
    })
}
