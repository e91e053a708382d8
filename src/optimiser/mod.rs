//! Optimiser: search a shape family for the loop that best meets the brief.
//!
//! The search is split the argmin way — problems are types implementing `CostFunction`, kept
//! apart from the solvers that run them:
//!
//! - [`SizeMargin`]: for fixed shape parameters, the signed margin of a group of limits as a
//!   function of size (log of the top radius). Loads fall monotonically as a loop of fixed shape
//!   grows (for κ ≥ 0, n = v₀²κ̂/(gλ) − 2ẑκ̂ + cos θ in the lossless case), so the limits that
//!   fail on big loops (top load, height, stall) give an upper size bound and those that fail on
//!   small loops (peak load, onset, radius) a lower one. argmin's `BrentRoot` finds each bound.
//! - [`ShapeCost`]: the objective over the dimensionless shape parameters — for `tallest`, minus
//!   the height at the upper size bound; for a target height, the peak load at the size giving that
//!   height. argmin's `BrentOpt` runs it for one parameter, `NelderMead` for several.
//!
//! The search runs on a coarse sampling; the winner is then polished at the brief's spacing and
//! re-evaluated at a quarter of that spacing, where every limit must hold, before it is reported.
//! A brief no shape can meet yields [`Infeasible`], which says which limit binds and the nearest
//! value that would work.

mod diagnosis;
pub mod force_first;
mod shape;
mod size;

pub use crate::model::{Assessment, EvalFailure, Evaluation, conditions, train_of};
pub use diagnosis::{Infeasible, Nearest};
pub(crate) use diagnosis::{
    eval_failure, explain_failed_checks, explain_tallest, shape_failure, solver_failure,
};
pub use force_first::ProfileCost;
pub use shape::ShapeCost;
pub use size::SolverFailure;
pub use size::{SizeMargin, SizeRange, size_range};

use std::f64::consts::PI;
use std::sync::atomic::{AtomicUsize, Ordering};

use crate::brief::{Brief, Objective, ShapeKind};
use crate::checks::Verdict;
use crate::checks::limits::{CheckLine, Limit};
use crate::geometry::Centreline;
use crate::model::{self, Curve};
use crate::shape::family;

/// Limits are met with this much to spare during the search (g, g/s or m), so that the finer
/// verification sampling cannot tip a design that sits exactly on a limit over it.
pub(crate) const SEARCH_MARGIN: f64 = 1e-4;
/// Coarse search sampling: stations per top radius (the model scales loops sampled so).
pub(crate) use crate::model::COARSE_STATIONS_PER_RADIUS;
/// Relative room a shape's coarse size window must have to count as feasible (see `shape_cost`).
pub(crate) const SIZE_SLACK: f64 = 0.005;
/// Intervals of the first scan over a one-parameter shape family, before Brent refines the best.
pub(crate) const SCAN: usize = 4;

/// Evaluate one loop of a family at one sampling, with the brief's lateral shift.
pub fn evaluate(
    brief: &Brief,
    kind: ShapeKind,
    shape: &[f64],
    top_radius_m: f64,
    spacing_m: f64,
) -> Result<Evaluation, EvalFailure> {
    evaluate_shifted(
        brief,
        kind,
        shape,
        top_radius_m,
        spacing_m,
        brief.lateral_shift_m,
    )
}

/// The model's curve for a family loop: the force-first family's curvature is solved here (it
/// depends on the ride); the others are pure geometry at the given size.
pub fn curve_of<'a>(
    brief: &Brief,
    kind: ShapeKind,
    shape: &'a [f64],
    top_radius_m: f64,
) -> Result<Curve<'a>, EvalFailure> {
    if family(kind).is_some() {
        return Ok(Curve::family(kind, shape, top_radius_m));
    }
    let profile =
        force_first::curvature(brief, shape).map_err(|e| EvalFailure::Shape(e.to_string()))?;
    Ok(Curve::Solved {
        kind,
        shape,
        profile,
    })
}

/// As [`evaluate`], with the lateral shift given explicitly. The coarse search runs planar (the
/// shift moves loads by about a thousandth of a g and costs as much as the rest of the geometry);
/// the polish and the verification use the brief's shift, so what is reported is exact.
pub fn evaluate_shifted(
    brief: &Brief,
    kind: ShapeKind,
    shape: &[f64],
    top_radius_m: f64,
    spacing_m: f64,
    lateral_shift_m: f64,
) -> Result<Evaluation, EvalFailure> {
    let curve = curve_of(brief, kind, shape, top_radius_m)?;
    model::evaluate(brief, &curve, spacing_m, lateral_shift_m)
}

/// Heartline height per metre of top radius for a shape (geometry only; loops of one shape are similar).
pub fn height_per_radius(kind: ShapeKind, shape: &[f64]) -> Option<f64> {
    let p = family(kind)?.curvature(shape, 1.0).ok()?;
    Some(Centreline::loop_height_only(&p, 0.01))
}

/// Design the loop the brief asks for, with its own shape family: search the shape and size, then
/// assess the winner with the model ([`model::assess`]). An infeasible brief says why and the
/// nearest values that would work.
///
/// ```
/// use loopwright::{Brief, ShapeKind, design};
/// let mut brief = Brief::demo();
/// brief.spacing_m = 0.2;
/// brief.shape = ShapeKind::Circle; // a circle needs 6 + 0.2 g at the bottom: over 4.5 g
/// let why = design(&brief).unwrap_err();
/// assert!(why.to_string().contains("6 + n_top"));
/// ```
pub fn design(brief: &Brief) -> Result<Assessment, Infeasible> {
    design_family(brief, brief.shape)
}

/// Design the loop the brief asks for with a given family.
pub fn design_family(brief: &Brief, kind: ShapeKind) -> Result<Assessment, Infeasible> {
    let Some(fam) = family(kind) else {
        return force_first::design_profile(brief, kind);
    };
    let counter = AtomicUsize::new(0);
    // The polish's last full-fidelity pair: the assessment below reuses it when it is the winner.
    let kept = size::KeptPair::default();
    let failed = |e: size::SolverFailure| solver_failure(kind, e);
    let search = shape::search_shape(brief, fam.as_ref(), &counter).map_err(failed)?;
    // The coarse upper bound the search found for its winner: the polish starts there.
    let (shape, hint) = (search.shape, search.coarse_hi_m);
    let r = match brief.objective {
        Objective::Tallest => match size::polish_upper(brief, kind, &shape, hint, &counter, &kept)
            .map_err(failed)?
        {
            Some(r) => r,
            None => match size_range(brief, kind, &shape, true, &counter).map_err(failed)? {
                SizeRange::Feasible { hi_m, .. } => hi_m,
                // The search can settle where two limits meet (say the top load and the smallest
                // radius); the search margin then leaves a sliver of a gap. The midpoint may still
                // meet every limit exactly: the checks below decide, at both samplings.
                SizeRange::Gap { lo_m, hi_m } if lo_m < hi_m * (1.0 + 1e-3) => 0.5 * (lo_m + hi_m),
                other => return Err(explain_tallest(brief, kind, &shape, other, &counter)),
            },
        },
        Objective::Height { height_m } => {
            height_m
                / height_per_radius(kind, &shape)
                    .ok_or_else(|| shape_failure(kind, "no geometry"))?
        }
    };
    let curve = curve_of(brief, kind, &shape, r).map_err(|e| eval_failure(brief, kind, e))?;
    let mut a = conclude(
        brief,
        kind,
        &curve,
        fam.shape_labels().to_vec(),
        counter.load(Ordering::Relaxed),
        kept.take_at(r),
        |v| explain_failed_checks(brief, kind, v, &counter),
    )?;
    a.search_stopped = Some(search.stopped);
    Ok(a)
}

/// Assess the chosen loop with the model (brief's spacing, a quarter of it, the envelope) and
/// accept it only if every limit holds there: a failing verdict is explained by `explain`, a
/// failing enforced limit table is reported line by line.
pub(crate) fn conclude(
    brief: &Brief,
    kind: ShapeKind,
    curve: &Curve<'_>,
    shape_labels: Vec<&'static str>,
    evaluations: usize,
    evaluated: Option<(Evaluation, Evaluation)>,
    explain: impl FnOnce(&Verdict) -> Infeasible,
) -> Result<Assessment, Infeasible> {
    let a = model::assess_reusing(brief, curve, shape_labels, evaluations, evaluated)
        .map_err(|e| eval_failure(brief, kind, e))?;
    // Every design keeps the design margin inside every limit at both samplings, whatever the
    // objective (a height brief minimises the peak load, a force-first loop may be used as
    // written), so that its own files, checked against the same brief, pass.
    for v in [&a.verification.verdict, &a.best.verdict] {
        let held = with_design_margin(v);
        if !held.pass {
            return Err(explain(&held));
        }
    }
    match a.envelope() {
        Some(env) if a.envelope_enforced() && !env.pass => {
            let mut reasons = vec![format!(
                "the best loop for the brief fails the acceleration envelope of {}",
                brief.limits_file.as_deref().unwrap_or("the limits file")
            )];
            reasons.extend(env.failures());
            reasons.push("run without --limits to write the design for inspection".into());
            Err(Infeasible {
                shape: kind,
                reasons,
                nearest: vec![],
            })
        }
        _ => Ok(a),
    }
}

/// A verdict judged with the design margin: a line passes only when its figure is at least the
/// limit's design margin ([`Limit::design_margin`]) inside the limit; failing lines say so in
/// their label, so that an explanation names the margin as well as the limit.
pub(crate) fn with_design_margin(v: &Verdict) -> Verdict {
    let lines: Vec<CheckLine> = v
        .lines
        .iter()
        .map(|l| {
            let need = Limit {
                kind: l.limit,
                value: l.limit_value,
            }
            .design_margin();
            let mut l = l.clone();
            if l.pass && l.margin < need {
                l.pass = false;
                l.label = format!(
                    "{} (a design keeps {need:.3} {} inside the limit)",
                    l.label, l.unit
                );
            }
            l
        })
        .collect();
    let pass = lines.iter().all(|l| l.pass);
    Verdict { lines, pass }
}

/// Total heartline turn of a family's loop, rad (2π by construction; used by tests).
pub fn total_turn_rad(kind: ShapeKind, shape: &[f64]) -> Option<f64> {
    let p = family(kind)?.curvature(shape, 1.0).ok()?;
    let l = p.length_m();
    Some(p.pitch_rad(l) / (2.0 * PI) * 2.0 * PI)
}
