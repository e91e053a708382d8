//! Model: the one place where the stages are chained.
//!
//! ```text
//! brief → centreline (a shape family at a size, a solved curvature, or a fitted drawing)
//!       → ride (speed, loads per car) → verdict (every limit, worst car) → [envelope]
//! ```
//!
//! [`evaluate`] runs the chain once for one centreline under one brief at one sampling; it is what
//! the optimiser's inner loop calls. [`assess`] runs it at the brief's spacing and again at a
//! quarter of it, and checks the finer ride against the brief's duration table (enforced when the
//! brief names one, reported otherwise): its [`Assessment`] is what every exporter and report
//! takes, whether the loop was designed (`design`, `compare`, `sweep`) or read from a drawing
//! (`check`). Nothing upstream of this module chains stages, and nothing here formats text.
//!
//! ```
//! use loopwright::{Brief, ShapeKind, model::{Curve, evaluate}};
//! let brief = Brief::demo();
//! // A clothoid loop of the demo brief, 9 m top radius, sampled every 0.1 m.
//! let e = evaluate(&brief, &Curve::family(ShapeKind::Clothoid, &[0.5], 9.0), 0.1, 0.0).unwrap();
//! assert!(e.summary.loop_height_m > 20.0 && e.summary.peak_normal_g > 1.0);
//! ```

use nalgebra::Vector3;
use std::cell::RefCell;
use std::rc::Rc;

use crate::brief::{Brief, ShapeKind};
use crate::checks::envelope::{EnvelopeReport, EnvelopeTable, evaluate as evaluate_envelope};
use crate::checks::{self, CarSummary, Summary, Verdict, limits_of, summarise_train};
use crate::dynamics::{Conditions, Ride, Stall, Train, TrainRide, simulate_train};
use crate::geometry::fit::{FitError, FitOptions, FitReport, PointsAre, fit_centreline};
use crate::geometry::{Centreline, UnitLoop};
use crate::import::ImportedCentreline;
use crate::shape::{CurvatureProfile, family};

/// Which centreline to evaluate.
#[derive(Debug, Clone)]
pub enum Curve<'a> {
    /// A loop of a geometric shape family with its shape parameters, sized by its top radius.
    Family {
        kind: ShapeKind,
        shape: &'a [f64],
        top_radius_m: f64,
    },
    /// A loop whose curvature was solved elsewhere (the force-first family), leads included.
    Solved {
        kind: ShapeKind,
        shape: &'a [f64],
        profile: CurvatureProfile,
    },
    /// Points read from a drawing, to be fitted (interpolated when exact, smoothed when noisy,
    /// in pieces at curvature jumps; see [`crate::geometry::fit`]).
    Drawing(&'a Drawing),
}

impl<'a> Curve<'a> {
    /// A family loop.
    pub fn family(kind: ShapeKind, shape: &'a [f64], top_radius_m: f64) -> Self {
        Curve::Family {
            kind,
            shape,
            top_radius_m,
        }
    }
}

/// A centreline read from a file, with how to fit it.
#[derive(Debug, Clone)]
pub struct Drawing {
    pub points_m: Vec<Vector3<f64>>,
    pub points_are: PointsAre,
    pub tolerance_m: f64,
    /// The file it came from, for reports.
    pub file: String,
    /// What was read ("DXF POLYLINE on layer 'LW-RAIL'", …).
    pub source: String,
}

impl Drawing {
    /// Points read from `file` (see [`crate::import::read_centreline`]) to be fitted within
    /// `tolerance_m` RMS.
    pub fn from_import(
        imported: ImportedCentreline,
        file: &str,
        points_are: PointsAre,
        tolerance_m: f64,
    ) -> Drawing {
        Drawing {
            points_m: imported.points_m,
            points_are,
            tolerance_m,
            file: file.to_string(),
            source: imported.source,
        }
    }
}

/// Where an evaluated centreline came from.
#[derive(Debug, Clone)]
pub enum Origin {
    /// A shape family (or the force-first family) with its parameters.
    Family {
        kind: ShapeKind,
        shape: Vec<f64>,
        /// The curvature pieces, leads included (exact, whatever the sampling).
        profile: CurvatureProfile,
    },
    /// A fitted drawing.
    Drawing {
        file: String,
        source: String,
        fit: FitReport,
    },
}

/// One centreline evaluated under one brief at one sampling.
#[derive(Debug, Clone)]
pub struct Evaluation {
    pub origin: Origin,
    /// Heartline radius at the top, m (the size of a family loop; measured for the others).
    pub top_radius_m: f64,
    pub spacing_m: f64,
    pub path: Centreline,
    /// Every car's ride (the front car's is [`Evaluation::ride`]).
    pub train: TrainRide,
    /// Worst-car figures: the checks and the search constrain the worst car.
    pub summary: Summary,
    /// Each car's figures (front first).
    pub cars: Vec<CarSummary>,
    pub verdict: Verdict,
    /// The duration-based envelope check of every car, once assessed ([`assess`]; the search
    /// itself does not evaluate it).
    pub envelope: Option<EnvelopeReport>,
}

impl Evaluation {
    /// The front car's ride (for one car, the point-mass ride). A train always has a car.
    pub fn ride(&self) -> &Ride {
        &self.train.cars[0]
    }

    /// The shape family, for a designed loop.
    pub fn kind(&self) -> Option<ShapeKind> {
        match &self.origin {
            Origin::Family { kind, .. } => Some(*kind),
            Origin::Drawing { .. } => None,
        }
    }

    /// What the loop is, for titles: the family's name, or "fitted centreline".
    pub fn label(&self) -> String {
        self.kind()
            .map_or_else(|| "fitted centreline".to_string(), |k| k.to_string())
    }

    /// The family's shape parameters (empty for a drawing).
    pub fn shape(&self) -> &[f64] {
        match &self.origin {
            Origin::Family { shape, .. } => shape,
            Origin::Drawing { .. } => &[],
        }
    }

    /// The curvature pieces of a designed loop, leads included (`None` for a drawing).
    pub fn profile(&self) -> Option<&CurvatureProfile> {
        match &self.origin {
            Origin::Family { profile, .. } => Some(profile),
            Origin::Drawing { .. } => None,
        }
    }

    /// The smallest heartline radius, m: exact from the curvature pieces when there are any (a
    /// coarse sampling can step over the tightest point of a spline), never above the sampled one
    /// (which also sees the lateral shift).
    pub fn min_radius_m(&self) -> f64 {
        match &self.origin {
            Origin::Family { profile, .. } => self.summary.min_radius_m.min(profile.min_radius_m()),
            Origin::Drawing { .. } => self.summary.min_radius_m,
        }
    }
}

/// Why a centreline could not be evaluated at all.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EvalFailure {
    /// The shape parameters make no loop.
    #[error("{0}")]
    Shape(String),
    /// The drawing's points cannot be fitted as a loop.
    #[error("{0}")]
    Fit(#[from] FitError),
    /// The train stops before the end.
    #[error("{0}")]
    Stall(Stall),
}

/// The train a brief describes.
pub fn train_of(brief: &Brief) -> Train {
    Train {
        cars: brief.cars,
        car_pitch_m: brief.car_pitch_m,
    }
}

/// Dynamics conditions from a brief.
pub fn conditions(brief: &Brief) -> Conditions {
    Conditions {
        entry_speed_m_s: brief.entry_speed_m_s,
        rolling_resistance: brief.rolling_resistance,
        drag_per_metre: brief.drag_per_metre(),
    }
}

/// The shape search's coarse sampling: stations per metre of top radius (spacing R/16).
pub(crate) const COARSE_STATIONS_PER_RADIUS: f64 = 16.0;

/// The loop of one family shape at unit top radius, sampled as the coarse search samples it, so
/// that the size search's next sizes of the same shape scale it ([`Centreline::build_scaled`])
/// instead of integrating every station again. One per thread (sweeps design on several): the
/// size search asks for one shape at several sizes in a row. Only when the loop is planar,
/// sampled at exactly R/[`COARSE_STATIONS_PER_RADIUS`] and has pieces to scale
/// ([`UnitLoop::scales_any`]) — whether this shape was seen before or not, so that an
/// evaluation's result never depends on what ran before it.
struct UnitLoopMemo {
    kind: ShapeKind,
    shape_bits: Vec<u64>,
    lead_bits: u64,
    unit: Rc<UnitLoop>,
}

thread_local! {
    static UNIT_LOOP: RefCell<Option<UnitLoopMemo>> = const { RefCell::new(None) };
}

/// The unit-radius loop of `kind` and `shape` with leads of `lead_m`, from the thread's memo or
/// recorded afresh; `None` when the family cannot build it or it has nothing to scale.
fn unit_loop(kind: ShapeKind, shape: &[f64], lead_m: f64) -> Option<Rc<UnitLoop>> {
    let shape_bits: Vec<u64> = shape.iter().map(|v| v.to_bits()).collect();
    UNIT_LOOP.with(|memo| {
        let mut memo = memo.borrow_mut();
        if let Some(m) = memo.as_ref()
            && m.kind == kind
            && m.shape_bits == shape_bits
            && m.lead_bits == lead_m.to_bits()
        {
            return (!m.unit.is_empty()).then(|| m.unit.clone());
        }
        let profile = family(kind)?
            .curvature_with_leads(shape, 1.0, lead_m)
            .ok()?;
        let unit = Rc::new(UnitLoop::record(&profile, 1.0 / COARSE_STATIONS_PER_RADIUS));
        *memo = Some(UnitLoopMemo {
            kind,
            shape_bits,
            lead_bits: lead_m.to_bits(),
            unit: unit.clone(),
        });
        (!unit.is_empty()).then_some(unit)
    })
}

/// Build the centreline of `curve` sampled every `spacing_m` (a family loop spread sideways by
/// `lateral_shift_m`; a drawing keeps its own shape), with where it came from.
fn centreline(
    brief: &Brief,
    curve: &Curve<'_>,
    spacing_m: f64,
    lateral_shift_m: f64,
) -> Result<(Centreline, Origin), EvalFailure> {
    let family_loop = |kind: ShapeKind,
                       shape: &[f64],
                       profile: CurvatureProfile,
                       scale_from: Option<(Rc<UnitLoop>, f64)>| {
        let h = brief.heartline_height_m;
        let path = match scale_from {
            Some((unit, size)) => Centreline::build_scaled(&profile, h, spacing_m, &unit, size),
            None => Centreline::build_shifted(&profile, h, spacing_m, lateral_shift_m),
        };
        let origin = Origin::Family {
            kind,
            shape: shape.to_vec(),
            profile,
        };
        (path, origin)
    };
    match curve {
        Curve::Family {
            kind,
            shape,
            top_radius_m,
        } => {
            let fam = family(*kind).ok_or_else(|| {
                EvalFailure::Shape(format!(
                    "the {kind} family's curvature depends on the ride: it is solved by the optimiser, not sized"
                ))
            })?;
            let profile = fam
                .curvature_with_leads(shape, *top_radius_m, brief.lead_length_m)
                .map_err(|e| EvalFailure::Shape(e.to_string()))?;
            // The coarse search's planar loops are their shape's unit loop scaled.
            let coarse_planar =
                lateral_shift_m == 0.0 && spacing_m == *top_radius_m / COARSE_STATIONS_PER_RADIUS;
            let scale_from = (coarse_planar && UnitLoop::scales_any(&profile))
                .then(|| unit_loop(*kind, shape, brief.lead_length_m))
                .flatten()
                .map(|u| (u, *top_radius_m));
            Ok(family_loop(*kind, shape, profile, scale_from))
        }
        Curve::Solved {
            kind,
            shape,
            profile,
        } => Ok(family_loop(*kind, shape, profile.clone(), None)),
        Curve::Drawing(d) => {
            let opts = FitOptions {
                tolerance_m: d.tolerance_m,
                points_are: d.points_are,
                heartline_height_m: brief.heartline_height_m,
                spacing_m,
            };
            let (path, fit) = fit_centreline(&d.points_m, &opts)?;
            let origin = Origin::Drawing {
                file: d.file.clone(),
                source: d.source.clone(),
                fit,
            };
            Ok((path, origin))
        }
    }
}

/// Evaluate one centreline under the brief at one sampling: geometry, every car's ride, the
/// worst-car figures and the verdict on the brief's limits. `lateral_shift_m` applies to family
/// loops (the search runs planar; what is reported uses the brief's shift).
pub fn evaluate(
    brief: &Brief,
    curve: &Curve<'_>,
    spacing_m: f64,
    lateral_shift_m: f64,
) -> Result<Evaluation, EvalFailure> {
    let (path, origin) = centreline(brief, curve, spacing_m, lateral_shift_m)?;
    let top_radius_m = match curve {
        Curve::Family { top_radius_m, .. } => *top_radius_m,
        // A solved or fitted loop's size comes from its shape: report the top radius it has.
        _ => 1.0 / path.top().curvature_1_m,
    };
    let train =
        simulate_train(&path, &conditions(brief), &train_of(brief)).map_err(EvalFailure::Stall)?;
    let (summary, cars) = summarise_train(&path, &train);
    let verdict = checks::check(&summary, &limits_of(brief));
    Ok(Evaluation {
        origin,
        top_radius_m,
        spacing_m,
        path,
        train,
        summary,
        cars,
        verdict,
        envelope: None,
    })
}

/// One centreline assessed under one brief: what every exporter and report takes.
#[derive(Debug, Clone)]
pub struct Assessment {
    pub brief: Brief,
    /// Names of the family's shape parameters (empty for a drawing).
    pub shape_labels: Vec<&'static str>,
    /// At the brief's spacing: drawn, tabulated and reported.
    pub best: Evaluation,
    /// The same centreline at a quarter of the spacing: every limit is confirmed here, and the
    /// duration envelope assessed.
    pub verification: Evaluation,
    /// How many loops the search evaluated (0 when nothing was searched).
    pub evaluations: usize,
    /// Why the shape search stopped (`None` when nothing was searched).
    pub search_stopped: Option<String>,
}

impl Assessment {
    /// The duration envelope of the verification ride (always assessed by [`assess`]).
    pub fn envelope(&self) -> Option<&EnvelopeReport> {
        self.verification.envelope.as_ref()
    }

    /// Whether the brief names a limit table, so that the envelope is enforced, not only reported.
    pub fn envelope_enforced(&self) -> bool {
        self.brief.limits_table.is_some()
    }

    /// How a drawing was fitted (`None` for a designed loop).
    pub fn fit(&self) -> Option<&FitReport> {
        match &self.best.origin {
            Origin::Drawing { fit, .. } => Some(fit),
            Origin::Family { .. } => None,
        }
    }

    /// Sideways spread of the loop, m: the brief's for a designed loop, the measured spread across
    /// its main plane for a drawing.
    pub fn lateral_shift_m(&self) -> f64 {
        match &self.best.origin {
            Origin::Family { .. } => self.brief.lateral_shift_m,
            Origin::Drawing { fit, .. } => fit.lateral_extent_m,
        }
    }

    /// Every limit met: the verdict at both samplings, and an enforced envelope.
    pub fn pass(&self) -> bool {
        self.best.verdict.pass
            && self.verification.verdict.pass
            && (!self.envelope_enforced() || self.envelope().is_some_and(|e| e.pass))
    }
}

/// Evaluate `curve` at the brief's spacing and at a quarter of it, with the brief's lateral
/// shift, and assess the finer ride against the brief's duration table (the built-in
/// ILLUSTRATIVE one, reported only, when the brief names none).
pub fn assess(
    brief: &Brief,
    curve: &Curve<'_>,
    shape_labels: Vec<&'static str>,
    evaluations: usize,
) -> Result<Assessment, EvalFailure> {
    assess_reusing(brief, curve, shape_labels, evaluations, None)
}

/// [`assess`], reusing `evaluated` — this curve already evaluated at the brief's spacing and at a
/// quarter of it (with the brief's lateral shift), as [`evaluate`] gives them — when there is one.
pub fn assess_reusing(
    brief: &Brief,
    curve: &Curve<'_>,
    shape_labels: Vec<&'static str>,
    evaluations: usize,
    evaluated: Option<(Evaluation, Evaluation)>,
) -> Result<Assessment, EvalFailure> {
    let (best, mut verification) = match evaluated {
        Some(pair) => pair,
        None => (
            evaluate(brief, curve, brief.spacing_m, brief.lateral_shift_m)?,
            evaluate(brief, curve, brief.spacing_m / 4.0, brief.lateral_shift_m)?,
        ),
    };
    let table = brief
        .limits_table
        .clone()
        .unwrap_or_else(EnvelopeTable::illustrative);
    let envelope = evaluate_envelope(&table, &verification.path, &verification.train);
    // Enforced only when the brief names a table; the built-in one is reported, not enforced.
    verification.envelope = Some(if brief.limits_table.is_some() {
        envelope
    } else {
        envelope.reported_only()
    });
    Ok(Assessment {
        brief: brief.clone(),
        shape_labels,
        best,
        verification,
        evaluations,
        search_stopped: None,
    })
}

/// Check a centreline from a drawing under a brief: fit, ride every car, verdict and envelope,
/// exactly as a designed loop is assessed (what `loopwright check` runs).
///
/// ```
/// use loopwright::{Brief, model::{Drawing, check}, geometry::fit::PointsAre};
/// // A design's own heartline, read back as points, checks with the design's loads.
/// let mut brief = Brief::demo();
/// brief.spacing_m = 0.25;
/// let d = loopwright::design(&brief).unwrap();
/// let points_m = d.best.path.stations.iter().map(|s| s.heartline_m).collect();
/// let drawing = Drawing {
///     points_m,
///     points_are: PointsAre::Heartline,
///     tolerance_m: 0.00025,
///     file: "own.csv".into(),
///     source: "heartline points".into(),
/// };
/// let c = check(&brief, &drawing).unwrap();
/// let (a, b) = (c.best.summary.peak_normal_g, d.best.summary.peak_normal_g);
/// assert!((a - b).abs() < 0.05, "{a} vs {b}");
/// ```
pub fn check(brief: &Brief, drawing: &Drawing) -> Result<Assessment, EvalFailure> {
    assess(brief, &Curve::Drawing(drawing), Vec::new(), 0)
}
