//! The JSON report: key figures, checks, the brief echoed and the caution.

use serde::Serialize;

use super::ExportError;
use super::publish::OutputDigest;
use crate::brief::Brief;
use crate::checks::envelope::EnvelopeReport;
use crate::checks::limits::{DESIGN_MARGIN, DesignMargin};
use crate::checks::{CarSummary, CheckLine, Place};
use crate::dynamics::LoadStep;
use crate::geometry::fit::FitReport;
use crate::model::{Assessment, Origin};
use crate::report::CAUTION;

/// The report written as `<name>.json`.
#[derive(Debug, Serialize)]
pub struct Report<'a> {
    pub caution: &'static str,
    pub shape: String,
    pub feasible: bool,
    pub entry_speed_m_s: f64,
    pub loop_height_m: f64,
    pub rail_height_m: f64,
    pub path_length_m: f64,
    pub footprint_length_m: f64,
    pub top_radius_m: f64,
    pub min_radius_m: f64,
    pub peak_normal_g: f64,
    pub peak_normal_s_m: f64,
    /// Where the peak normal load occurs: arc length, pitch and car.
    pub peak_normal_at: Place,
    pub min_normal_g: f64,
    /// Least normal load while inverted (what `min_top_g` bounds; null if never inverted), and
    /// where.
    pub min_inverted_normal_g: f64,
    pub min_inverted_at: Place,
    /// Normal load at the apex station.
    pub top_normal_g: f64,
    pub top_speed_m_s: f64,
    pub peak_onset_g_s: f64,
    pub peak_onset_at: Place,
    pub max_load_step_g: f64,
    pub load_steps: &'a [LoadStep],
    pub exit_speed_m_s: f64,
    /// Heartline exit above entry, m (non-zero only for force-first loops with losses).
    pub exit_height_m: f64,
    pub time_in_loop_s: f64,
    pub shape_parameters: Vec<(&'static str, f64)>,
    pub checks: &'a [CheckLine],
    /// The margin a design keeps inside every limit (the checks compare with the limits as
    /// written).
    pub design_margin: DesignMargin,
    pub verified_at_spacing_m: f64,
    pub evaluations: usize,
    pub brief: &'a Brief,
    /// Sideways spread of the loop, m, and the largest roll of the rider's cross-axis, degrees.
    pub lateral_shift_m: f64,
    pub peak_roll_deg: f64,
    pub cars: usize,
    pub car_pitch_m: f64,
    /// Every car's figures (front first), from the verification run.
    pub per_car: &'a [CarSummary],
    /// The duration-based envelope check, level by level, with `enforced` (null if not assessed).
    pub envelope: Option<&'a EnvelopeReport>,
    /// What `<name>-loads.csv` holds: one row per heartline station of the front car (of the only
    /// car, for one car).
    pub loads_csv_rows: &'static str,
    /// The per-car table written beside it (`<name>-cars.csv`, every car at every station) for a
    /// train of two or more cars; null for one car.
    pub cars_csv: Option<String>,
    /// For a centreline read from a drawing (`check`): the file, what was read and the fit.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub drawing: Option<DrawingReport<'a>>,
    /// The files written with this report (every sibling's size and SHA-256): a set in which a
    /// file does not match was not written by one run. Absent when the report stands alone.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub outputs: Vec<OutputDigest>,
}

/// Where a checked centreline came from and how it was fitted.
#[derive(Debug, Serialize)]
pub struct DrawingReport<'a> {
    pub file: &'a str,
    pub source: &'a str,
    /// Every limit met (the same as `feasible`, named for a check).
    pub pass: bool,
    pub fit: &'a FitReport,
}

/// Build the report of a design.
pub fn report(d: &Assessment) -> Report<'_> {
    let s = &d.best.summary;
    Report {
        caution: CAUTION,
        shape: d.best.label(),
        feasible: d.verification.verdict.pass,
        entry_speed_m_s: d.brief.entry_speed_m_s,
        loop_height_m: s.loop_height_m,
        rail_height_m: s.rail_height_m,
        path_length_m: s.path_length_m,
        footprint_length_m: s.footprint_length_m,
        top_radius_m: d.best.top_radius_m,
        min_radius_m: s.min_radius_m,
        peak_normal_g: s.peak_normal_g,
        peak_normal_s_m: s.peak_normal_s_m,
        peak_normal_at: s.peak_normal_at,
        min_normal_g: s.min_normal_g,
        min_inverted_normal_g: s.min_inverted_normal_g,
        min_inverted_at: s.min_inverted_at,
        top_normal_g: s.top_normal_g,
        top_speed_m_s: s.top_speed_m_s,
        peak_onset_g_s: s.peak_onset_g_s,
        peak_onset_at: s.peak_onset_at,
        max_load_step_g: s.max_load_step_g,
        load_steps: &d.best.ride().steps,
        exit_speed_m_s: s.exit_speed_m_s,
        exit_height_m: crate::report::exit_height_m(&d.best.path),
        time_in_loop_s: s.time_in_loop_s,
        shape_parameters: d
            .shape_labels
            .iter()
            .copied()
            .zip(d.best.shape().iter().copied())
            .collect(),
        checks: &d.verification.verdict.lines,
        design_margin: DESIGN_MARGIN,
        verified_at_spacing_m: d.verification.spacing_m,
        evaluations: d.evaluations,
        brief: &d.brief,
        lateral_shift_m: d.lateral_shift_m(),
        peak_roll_deg: d.verification.summary.peak_roll_deg,
        cars: d.brief.cars,
        car_pitch_m: d.brief.car_pitch_m,
        per_car: &d.verification.cars,
        envelope: d.verification.envelope.as_ref(),
        loads_csv_rows: "front car, one row per heartline station",
        cars_csv: (d.best.train.cars.len() > 1).then(|| format!("{}-cars.csv", d.brief.name)),
        drawing: match &d.best.origin {
            Origin::Drawing { file, source, fit } => Some(DrawingReport {
                file,
                source,
                pass: d.pass(),
                fit,
            }),
            Origin::Family { .. } => None,
        },
        outputs: Vec::new(),
    }
}

/// Pretty-printed JSON bytes of the report.
pub fn report_json(d: &Assessment) -> Result<Vec<u8>, ExportError> {
    report_json_with(d, Vec::new())
}

/// The report listing the files written with it (see [`Report::outputs`]).
pub fn report_json_with(
    d: &Assessment,
    outputs: Vec<OutputDigest>,
) -> Result<Vec<u8>, ExportError> {
    let mut r = report(d);
    r.outputs = outputs;
    let mut v = serde_json::to_vec_pretty(&r).map_err(|e| ExportError::Encode {
        what: "JSON report",
        message: e.to_string(),
    })?;
    v.push(b'\n');
    Ok(v)
}
