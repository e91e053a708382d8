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

pub mod force_first;

pub use force_first::ProfileCost;

use argmin::core::{CostFunction, Error as ArgminError, Executor, State};
use argmin::solver::brent::{BrentOpt, BrentRoot};
use argmin::solver::neldermead::NelderMead;
use serde::Serialize;
use std::f64::consts::PI;
use std::fmt;
use std::sync::atomic::{AtomicUsize, Ordering};

use crate::brief::{Brief, Objective, ShapeKind};
use crate::checks::envelope::{EnvelopeReport, EnvelopeTable, evaluate as evaluate_envelope};
use crate::checks::{
    CarSummary, Limits, Summary, Verdict, check, onset_for_limit, summarise_train,
};
use crate::dynamics::{Conditions, Ride, Stall, Train, TrainRide, simulate_train};
use crate::geometry::Centreline;
use crate::shape::{CurvatureProfile, ShapeFamily, family};

/// Limits are met with this much to spare during the search (g, g/s or m), so that the finer
/// verification sampling cannot tip a design that sits exactly on a limit over it.
const SEARCH_MARGIN: f64 = 1e-4;
/// Coarse search sampling: stations per top radius.
const COARSE_STATIONS_PER_RADIUS: f64 = 16.0;
/// Relative room a shape's coarse size window must have to count as feasible (see `shape_cost`).
const SIZE_SLACK: f64 = 0.005;
/// Intervals of the first scan over a one-parameter shape family, before Brent refines the best.
const SCAN: usize = 4;

/// One fully evaluated loop.
#[derive(Debug, Clone)]
pub struct Evaluation {
    pub kind: ShapeKind,
    pub shape: Vec<f64>,
    pub top_radius_m: f64,
    pub spacing_m: f64,
    pub profile: CurvatureProfile,
    pub path: Centreline,
    /// The front car's ride (for one car, the point-mass ride).
    pub ride: Ride,
    /// Every car's ride.
    pub train: TrainRide,
    /// Worst-car figures: the checks and the search constrain the worst car.
    pub summary: Summary,
    /// Each car's figures (front first).
    pub cars: Vec<CarSummary>,
    pub verdict: Verdict,
    /// The duration-based envelope check of every car, once assessed ([`Design::assess_envelope`];
    /// the search itself does not evaluate it).
    pub envelope: Option<EnvelopeReport>,
}

/// The result of a design run: the reported evaluation plus its finer re-check.
#[derive(Debug, Clone)]
pub struct Design {
    pub brief: Brief,
    pub shape_labels: Vec<&'static str>,
    pub best: Evaluation,
    /// The same loop at a quarter of the spacing: every limit was confirmed here.
    pub verification: Evaluation,
    /// How many loops the search evaluated.
    pub evaluations: usize,
}

impl Design {
    /// Check the verification ride (every car) against an envelope table, e.g. a user's `--limits`
    /// file or [`EnvelopeTable::illustrative`]; the result is kept in `verification.envelope`.
    pub fn assess_envelope(&mut self, table: &EnvelopeTable) -> &EnvelopeReport {
        let v = &mut self.verification;
        v.envelope
            .insert(evaluate_envelope(table, &v.path, &v.train))
    }
}

/// A suggestion of the nearest value of a brief field that would make the brief feasible.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Nearest {
    pub field: &'static str,
    pub value: f64,
    pub unit: &'static str,
}

/// Why no loop of a family meets the brief.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Infeasible {
    pub shape: ShapeKind,
    /// Plain-language reasons, most important first.
    pub reasons: Vec<String>,
    /// Values of brief fields that would work, each on its own.
    pub nearest: Vec<Nearest>,
}

impl fmt::Display for Infeasible {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "no {} loop meets the brief: {}",
            self.shape,
            self.reasons.join("; ")
        )?;
        if !self.nearest.is_empty() {
            let alts: Vec<String> = self
                .nearest
                .iter()
                .map(|n| format!("{} = {:.3} {}", n.field, n.value, n.unit))
                .collect();
            write!(
                f,
                ". Nearest feasible, each on its own: {}",
                alts.join(" or ")
            )?;
        }
        Ok(())
    }
}

impl std::error::Error for Infeasible {}

/// Evaluate one loop at one sampling.
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
    if kind == ShapeKind::Profile && brief.profile.is_none() {
        return Err(EvalFailure::Shape(
            "the profile family needs a [profile] table in the brief".into(),
        ));
    }
    let (profile, sized) = match family(kind) {
        Some(fam) => (
            fam.curvature_with_leads(shape, top_radius_m, brief.lead_length_m),
            true,
        ),
        None => (force_first::curvature(brief, shape), false),
    };
    let profile = profile.map_err(|e| EvalFailure::Shape(e.to_string()))?;
    let path = Centreline::build_shifted(
        &profile,
        brief.heartline_height_m,
        spacing_m,
        lateral_shift_m,
    );
    // A force-first loop's size comes from the ride: report the top radius it actually has.
    let top_radius_m = if sized {
        top_radius_m
    } else {
        1.0 / path.top().curvature_1_m
    };
    let cond = conditions(brief);
    let train = simulate_train(&path, &cond, &train_of(brief)).map_err(EvalFailure::Stall)?;
    let (summary, cars) = summarise_train(&path, &train);
    let verdict = check(&summary, &Limits::from(brief));
    let ride = train.cars[0].clone();
    let envelope = None;
    Ok(Evaluation {
        kind,
        shape: shape.to_vec(),
        top_radius_m,
        spacing_m,
        profile,
        path,
        ride,
        train,
        summary,
        cars,
        verdict,
        envelope,
    })
}

/// The train a brief describes.
pub fn train_of(brief: &Brief) -> Train {
    Train {
        cars: brief.cars,
        car_pitch_m: brief.car_pitch_m,
    }
}

/// Why a loop could not be evaluated at all.
#[derive(Debug, Clone, PartialEq)]
pub enum EvalFailure {
    Shape(String),
    Stall(Stall),
}

/// Dynamics conditions from a brief.
pub fn conditions(brief: &Brief) -> Conditions {
    Conditions {
        entry_speed_m_s: brief.entry_speed_m_s,
        rolling_resistance: brief.rolling_resistance,
        drag_per_metre: brief.drag_per_metre(),
    }
}

/// Which side of the size range a group of limits bounds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// Limits that fail on big loops: top load, height, stall.
    Upper,
    /// Limits that fail on small loops: peak load, onset, radius.
    Lower,
}

/// Signed margin of one side's limits (the smallest), minus the search margin.
fn side_margin(brief: &Brief, eval: &Result<Evaluation, EvalFailure>, side: Side) -> f64 {
    match (eval, side) {
        // A stall is an upper-side failure; deeper into it is worse, so keep it clearly negative.
        (Err(EvalFailure::Stall(_)), Side::Upper) => -10.0,
        (Err(EvalFailure::Stall(_)), Side::Lower) => 1.0,
        (Err(EvalFailure::Shape(_)), _) => -1e3,
        (Ok(e), Side::Upper) => {
            let s = &e.summary;
            let mut m = s.top_normal_g - brief.min_top_g;
            if let Some(h) = brief.max_height_m {
                m = m.min(h - s.loop_height_m);
            }
            m - SEARCH_MARGIN
        }
        (Ok(e), Side::Lower) => {
            let s = &e.summary;
            // The profile's own smallest radius is exact whatever the sampling (a coarse sampling
            // can step over the tightest point of a spline); the sampled one also sees the shift.
            let radius_m = s.min_radius_m.min(e.profile.min_radius_m());
            let mut m = (brief.max_g - s.peak_normal_g).min(radius_m - brief.min_radius_m);
            if let Some(o) = brief.max_onset_g_s {
                // An unbounded onset (curvature step) can never pass; give it a finite, clearly
                // negative margin so the root finder still sees a sign.
                // Onset comes from differences of the load, so it moves more than the loads
                // themselves when the sampling is refined: keep 0.5 % of the limit in hand so the
                // verification at a quarter of the spacing cannot tip it over.
                m = m.min((0.995 * o - onset_for_limit(s)).max(-1e3));
            }
            m - SEARCH_MARGIN
        }
    }
}

/// Problem: margin of one side's limits as a function of ln(top radius), for a fixed shape.
pub struct SizeMargin<'a> {
    pub brief: &'a Brief,
    pub kind: ShapeKind,
    pub shape: &'a [f64],
    pub side: Side,
    pub fine: bool,
    pub counter: &'a AtomicUsize,
}

impl SizeMargin<'_> {
    fn spacing(&self, r: f64) -> f64 {
        if self.fine {
            self.brief.spacing_m
        } else {
            self.brief.spacing_m.max(r / COARSE_STATIONS_PER_RADIUS)
        }
    }
    fn eval(&self, ln_r: f64) -> Result<Evaluation, EvalFailure> {
        self.counter.fetch_add(1, Ordering::Relaxed);
        let r = ln_r.exp();
        let shift = if self.fine {
            self.brief.lateral_shift_m
        } else {
            0.0
        };
        evaluate_shifted(self.brief, self.kind, self.shape, r, self.spacing(r), shift)
    }
}

impl CostFunction for SizeMargin<'_> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, ln_r: &f64) -> Result<f64, ArgminError> {
        Ok(side_margin(self.brief, &self.eval(*ln_r), self.side))
    }
}

/// Root of a margin between `a` (sign sa) and `b`, by argmin's Brent method.
fn brent_root(problem: SizeMargin<'_>, a: f64, b: f64) -> f64 {
    let solver = BrentRoot::new(a.min(b), a.max(b), 1e-8);
    match Executor::new(problem, solver)
        .configure(|s| s.max_iters(100))
        .run()
    {
        Ok(res) => res
            .state()
            .get_best_param()
            .copied()
            .unwrap_or(0.5 * (a + b)),
        Err(_) => 0.5 * (a + b),
    }
}

/// The feasible size interval of one shape, if any.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SizeRange {
    /// Top radii from `lo_m` to `hi_m` meet every limit. `lo_m` may lie above the smallest such
    /// radius (a grid radius where the lower-side limits already pass): no caller needs the exact
    /// lower bound of a feasible range, and finding it would cost a root search.
    Feasible { lo_m: f64, hi_m: f64 },
    /// The lower bound lies above the upper bound: no size works.
    Gap { lo_m: f64, hi_m: f64 },
    /// The upper-side limits fail at every size tried (e.g. the train stalls even on a tiny loop).
    UpperFailsEverywhere,
    /// The lower-side limits fail at every size tried (e.g. unbounded onset).
    LowerFailsEverywhere { hi_m: f64 },
}

/// Search range of top radius, m.
fn radius_grid(brief: &Brief) -> Vec<f64> {
    let lo = (0.25 * brief.min_radius_m).max(0.05);
    // The largest loop worth considering: the height energy allows, with some room.
    let hi =
        (brief.entry_speed_m_s.powi(2) / (2.0 * crate::units::STANDARD_GRAVITY_M_S2)).max(4.0 * lo);
    let n = 28;
    (0..n)
        .map(|i| lo * (hi / lo).powf(i as f64 / (n - 1) as f64))
        .collect()
}

/// Find the feasible top-radius interval of one shape.
pub fn size_range(
    brief: &Brief,
    kind: ShapeKind,
    shape: &[f64],
    fine: bool,
    counter: &AtomicUsize,
) -> SizeRange {
    let grid = radius_grid(brief);
    let mk = |side| SizeMargin {
        brief,
        kind,
        shape,
        side,
        fine,
        counter,
    };
    let up = mk(Side::Upper);
    // Both margins at a grid point come from one evaluation, made only when a search needs it.
    let mut memo: Vec<Option<(f64, f64)>> = vec![None; grid.len()];
    let mut margins = |i: usize| {
        *memo[i].get_or_insert_with(|| {
            let e = up.eval(grid[i].ln());
            (
                side_margin(brief, &e, Side::Upper),
                side_margin(brief, &e, Side::Lower),
            )
        })
    };
    // The upper margin falls and the lower one rises with size (module docs), so the first grid
    // point where each changes sign is found by bisection: the same points a scan along the grid
    // finds, with about a third of the evaluations.
    // Upper bound: first failure of the upper side.
    let hi_at = first_true(grid.len(), |i| margins(i).0 < 0.0);
    let hi = match hi_at {
        Some(0) => return SizeRange::UpperFailsEverywhere,
        Some(i) => brent_root(mk(Side::Upper), grid[i - 1].ln(), grid[i].ln()).exp(),
        None => grid[grid.len() - 1],
    };
    // The lower side already passes at the last grid radius below the upper bound: feasible for
    // certain (the lower margin rises with size), so the exact lower bound is not needed.
    let below = hi_at.map_or(grid.len() - 1, |h| h - 1);
    if margins(below).1 >= 0.0 {
        return SizeRange::Feasible {
            lo_m: grid[below],
            hi_m: hi,
        };
    }
    // Lower bound: first pass of the lower side.
    let lo = match first_true(grid.len(), |i| margins(i).1 >= 0.0) {
        Some(0) => grid[0],
        Some(i) => brent_root(mk(Side::Lower), grid[i - 1].ln(), grid[i].ln()).exp(),
        None => return SizeRange::LowerFailsEverywhere { hi_m: hi },
    };
    if lo <= hi {
        SizeRange::Feasible { lo_m: lo, hi_m: hi }
    } else {
        SizeRange::Gap { lo_m: lo, hi_m: hi }
    }
}

/// The upper size bound at full fidelity, found near the coarse one: the coarse search's bound is
/// within a fraction of a percent, so a bracket of ±2 % around it replaces the full radius grid at
/// the brief's spacing. `None` when the coarse range is not feasible or the bracket does not hold
/// the sign change (the caller then runs the full search, which also explains infeasibility).
fn polish_upper(
    brief: &Brief,
    kind: ShapeKind,
    shape: &[f64],
    counter: &AtomicUsize,
) -> Option<f64> {
    let SizeRange::Feasible { hi_m, .. } = size_range(brief, kind, shape, false, counter) else {
        return None;
    };
    let fine = SizeMargin {
        brief,
        kind,
        shape,
        side: Side::Upper,
        fine: true,
        counter,
    };
    let margin = |x: f64| side_margin(brief, &fine.eval(x), Side::Upper);
    // Try a tight bracket first (the planar, coarse bound is usually within a few tenths of a
    // percent), then a wider one.
    let (a, b) = [0.003, 0.02].into_iter().find_map(|w: f64| {
        let (a, b) = ((hi_m * (1.0 - w)).ln(), (hi_m * (1.0 + w)).ln());
        (margin(a) >= 0.0 && margin(b) < 0.0).then_some((a, b))
    })?;
    let r = brent_root(
        SizeMargin {
            brief,
            kind,
            shape,
            side: Side::Upper,
            fine: true,
            counter,
        },
        a,
        b,
    )
    .exp();
    // The lower-side limits must hold there too; otherwise let the full search decide and explain.
    (side_margin(brief, &fine.eval(r.ln()), Side::Lower) >= 0.0).then_some(r)
}

/// Smallest `i < n` with `pred(i)`, for a predicate false then true along `0..n`; `None` if never true.
fn first_true(n: usize, mut pred: impl FnMut(usize) -> bool) -> Option<usize> {
    let (mut lo, mut hi) = (0, n);
    while lo < hi {
        let mid = (lo + hi) / 2;
        if pred(mid) { hi = mid } else { lo = mid + 1 }
    }
    (lo < n).then_some(lo)
}

/// Heartline height per metre of top radius for a shape (geometry only; loops of one shape are similar).
pub fn height_per_radius(kind: ShapeKind, shape: &[f64]) -> Option<f64> {
    let p = family(kind)?.curvature(shape, 1.0).ok()?;
    Some(Centreline::build(&p, 0.0, 0.01).loop_height_m())
}

/// Problem: the objective over a family's dimensionless shape parameters.
pub struct ShapeCost<'a> {
    pub brief: &'a Brief,
    pub kind: ShapeKind,
    pub counter: &'a AtomicUsize,
}

impl ShapeCost<'_> {
    fn in_bounds(&self, shape: &[f64]) -> bool {
        family(self.kind).is_some_and(|f| {
            f.shape_bounds()
                .iter()
                .zip(shape)
                .all(|((lo, hi), v)| v >= lo && v <= hi)
        })
    }

    /// Cost of a shape: lower is better; feasible shapes cost below 1e3.
    pub fn shape_cost(&self, shape: &[f64]) -> f64 {
        if !self.in_bounds(shape) {
            return 1e6;
        }
        match self.brief.objective {
            Objective::Tallest => {
                match size_range(self.brief, self.kind, shape, false, self.counter) {
                    // The coarse search is planar and coarse; at full fidelity the size window
                    // moves by a few tenths of a percent (the shift lowers the top load a little).
                    // A shape counts as feasible only with SIZE_SLACK of window to spare, so the
                    // search does not settle in a corner where two limits meet and the full model
                    // then finds no size at all.
                    SizeRange::Feasible { lo_m, hi_m } if hi_m < lo_m * (1.0 + SIZE_SLACK) => {
                        1e3 + (lo_m * (1.0 + SIZE_SLACK) / hi_m).ln()
                    }
                    SizeRange::Feasible { hi_m, .. } => {
                        let h = height_per_radius(self.kind, shape).unwrap_or(0.0) * hi_m;
                        let h = self.brief.max_height_m.map_or(h, |m| h.min(m));
                        // Among equally tall loops (height capped), prefer the lower peak load.
                        let peak = match evaluate_shifted(
                            self.brief,
                            self.kind,
                            shape,
                            hi_m,
                            self.brief.spacing_m.max(hi_m / COARSE_STATIONS_PER_RADIUS),
                            0.0,
                        ) {
                            Ok(e) => e.summary.peak_normal_g,
                            Err(_) => 0.0,
                        };
                        -h + 1e-3 * peak
                    }
                    SizeRange::Gap { lo_m, hi_m } => 1e3 + (lo_m / hi_m).ln(),
                    SizeRange::UpperFailsEverywhere | SizeRange::LowerFailsEverywhere { .. } => 1e5,
                }
            }
            Objective::Height { height_m } => {
                let Some(h1) = height_per_radius(self.kind, shape) else {
                    return 1e6;
                };
                let r = height_m / h1;
                self.counter.fetch_add(1, Ordering::Relaxed);
                match evaluate(
                    self.brief,
                    self.kind,
                    shape,
                    r,
                    self.brief.spacing_m.max(r / COARSE_STATIONS_PER_RADIUS),
                ) {
                    Ok(e) => {
                        let s = &e.summary;
                        let mut penalty = (self.brief.min_top_g - s.top_normal_g).max(0.0)
                            + (self.brief.min_radius_m - s.min_radius_m).max(0.0);
                        if let Some(o) = self.brief.max_onset_g_s {
                            penalty += (onset_for_limit(s) - o).clamp(0.0, 1e3);
                        }
                        s.peak_normal_g + 100.0 * penalty
                    }
                    Err(EvalFailure::Stall(_)) => 1e4,
                    Err(_) => 1e6,
                }
            }
        }
    }
}

impl CostFunction for ShapeCost<'_> {
    type Param = Vec<f64>;
    type Output = f64;
    fn cost(&self, p: &Vec<f64>) -> Result<f64, ArgminError> {
        Ok(self.shape_cost(p))
    }
}

/// [`ShapeCost`] that remembers every shape it has costed: the scan, the solver and the final
/// comparison ask for some shapes more than once, and a shape's cost never changes.
struct MemoShapeCost<'a> {
    inner: ShapeCost<'a>,
    seen: std::cell::RefCell<Vec<(Vec<f64>, f64)>>,
}

impl<'a> MemoShapeCost<'a> {
    fn new(inner: ShapeCost<'a>) -> Self {
        Self {
            inner,
            seen: std::cell::RefCell::new(Vec::new()),
        }
    }
    fn shape_cost(&self, shape: &[f64]) -> f64 {
        if let Some((_, c)) = self
            .seen
            .borrow()
            .iter()
            .find(|(s, _)| s.as_slice() == shape)
        {
            return *c;
        }
        let c = self.inner.shape_cost(shape);
        self.seen.borrow_mut().push((shape.to_vec(), c));
        c
    }
}

impl CostFunction for MemoShapeCost<'_> {
    type Param = Vec<f64>;
    type Output = f64;
    fn cost(&self, p: &Vec<f64>) -> Result<f64, ArgminError> {
        Ok(self.shape_cost(p))
    }
}

/// One-parameter view of [`ShapeCost`] for argmin's `BrentOpt`.
struct ShapeCost1<'a, 'b>(&'b MemoShapeCost<'a>);

impl CostFunction for ShapeCost1<'_, '_> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, p: &f64) -> Result<f64, ArgminError> {
        Ok(self.0.shape_cost(&[*p]))
    }
}

/// Best shape parameters found by the outer search.
fn search_shape(brief: &Brief, fam: &dyn ShapeFamily, counter: &AtomicUsize) -> Vec<f64> {
    let bounds = fam.shape_bounds();
    let problem = MemoShapeCost::new(ShapeCost {
        brief,
        kind: fam.kind(),
        counter,
    });
    match bounds.len() {
        0 => Vec::new(),
        1 => {
            let (lo, hi) = bounds[0];
            // A coarse scan first: the cost may have plateaus (height capped) where Brent alone wanders.
            let scan: Vec<f64> = (0..=SCAN)
                .map(|i| lo + (hi - lo) * i as f64 / SCAN as f64)
                .collect();
            let best = scan
                .iter()
                .copied()
                .min_by(|a, b| {
                    problem
                        .shape_cost(&[*a])
                        .total_cmp(&problem.shape_cost(&[*b]))
                })
                .unwrap_or(lo);
            let step = (hi - lo) / SCAN as f64;
            // An optimum on a bound (common: the pointiest teardrop is the tallest) is confirmed by
            // one probe just inside it; Brent would otherwise creep towards the bound in golden steps.
            if best == lo || best == hi {
                let inside = if best == lo {
                    lo + 1e-3 * (hi - lo)
                } else {
                    hi - 1e-3 * (hi - lo)
                };
                if problem.shape_cost(&[best]) <= problem.shape_cost(&[inside]) {
                    return vec![best];
                }
            }
            let (a, b) = ((best - step).max(lo), (best + step).min(hi));
            let solver = BrentOpt::new(a, b).set_tolerance(1e-3, 1e-4);
            let found = Executor::new(ShapeCost1(&problem), solver)
                .configure(|s| s.max_iters(20))
                .run()
                .ok()
                .and_then(|r| r.state().get_best_param().copied())
                .unwrap_or(best);
            if problem.shape_cost(&[found]) <= problem.shape_cost(&[best]) {
                vec![found]
            } else {
                vec![best]
            }
        }
        _ => {
            let x0 = fam.default_shape();
            let mut simplex = vec![x0.clone()];
            for i in 0..x0.len() {
                let mut v = x0.clone();
                let (lo, hi) = bounds[i];
                v[i] = (v[i] + 0.15 * (hi - lo)).min(hi);
                simplex.push(v);
            }
            let solver = NelderMead::new(simplex)
                .with_sd_tolerance(1e-6)
                .expect("positive tolerance");
            Executor::new(problem, solver)
                .configure(|s| s.max_iters(80))
                .run()
                .ok()
                .and_then(|r| r.state().get_best_param().cloned())
                .unwrap_or(x0)
        }
    }
}

/// Design the loop the brief asks for, with its own shape family.
pub fn design(brief: &Brief) -> Result<Design, Infeasible> {
    design_family(brief, brief.shape)
}

/// Design the loop the brief asks for with a given family.
pub fn design_family(brief: &Brief, kind: ShapeKind) -> Result<Design, Infeasible> {
    let Some(fam) = family(kind) else {
        return force_first::design_profile(brief, kind);
    };
    let counter = AtomicUsize::new(0);
    let shape = search_shape(brief, fam.as_ref(), &counter);
    let r = match brief.objective {
        Objective::Tallest => match polish_upper(brief, kind, &shape, &counter) {
            Some(r) => r,
            None => match size_range(brief, kind, &shape, true, &counter) {
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
    let best = evaluate(brief, kind, &shape, r, brief.spacing_m)
        .map_err(|e| eval_failure(brief, kind, e))?;
    let verification = evaluate(brief, kind, &shape, r, brief.spacing_m / 4.0)
        .map_err(|e| eval_failure(brief, kind, e))?;
    if !verification.verdict.pass || !best.verdict.pass {
        return Err(explain_failed_checks(
            brief,
            kind,
            &verification.verdict,
            &counter,
        ));
    }
    let mut d = Design {
        brief: brief.clone(),
        shape_labels: fam.shape_labels().to_vec(),
        best,
        verification,
        evaluations: counter.load(Ordering::Relaxed),
    };
    d.assess_envelope(&EnvelopeTable::illustrative());
    Ok(d)
}

fn shape_failure(kind: ShapeKind, msg: &str) -> Infeasible {
    Infeasible {
        shape: kind,
        reasons: vec![msg.to_string()],
        nearest: vec![],
    }
}

fn eval_failure(brief: &Brief, kind: ShapeKind, e: EvalFailure) -> Infeasible {
    match e {
        EvalFailure::Shape(m) => shape_failure(kind, &m),
        EvalFailure::Stall(s) => Infeasible {
            shape: kind,
            reasons: vec![format!("at {:.2} m/s {s}", brief.entry_speed_m_s)],
            nearest: vec![],
        },
    }
}

fn limit_field(kind: crate::checks::LimitKind) -> (&'static str, &'static str) {
    use crate::checks::LimitKind::*;
    match kind {
        MaxG => ("max_g", "g"),
        MinTopG => ("min_top_g", "g"),
        MaxOnset => ("max_onset_g_s", "g/s"),
        MaxHeight => ("max_height_m", "m"),
        MinRadius => ("min_radius_m", "m"),
    }
}

/// Explain a verdict's failures and suggest, for each, the limit value that the design would meet.
fn explain_failed_checks(
    brief: &Brief,
    kind: ShapeKind,
    v: &Verdict,
    counter: &AtomicUsize,
) -> Infeasible {
    let mut reasons = Vec::new();
    let mut nearest = Vec::new();
    for l in v.failures() {
        let (field, unit) = limit_field(l.limit);
        if l.value.is_finite() {
            reasons.push(format!(
                "{} is {:.3} {unit}, limit {field} = {:.3} {unit}",
                l.label, l.value, l.limit_value
            ));
            nearest.push(Nearest {
                field,
                value: l.value,
                unit,
            });
        } else {
            reasons.push(format!(
                "{} is unbounded: the curvature steps where the loop meets straight track (limit {field} = {:.3} {unit})",
                l.label, l.limit_value
            ));
        }
    }
    if let Objective::Height { height_m } = brief.objective {
        if let Some(v) = min_speed_for_height(brief, kind, counter) {
            nearest.push(Nearest {
                field: "entry_speed",
                value: v,
                unit: "m/s",
            });
        }
        let mut tall = brief.clone();
        tall.objective = Objective::Tallest;
        if let Ok(d) = design_family(&tall, kind) {
            reasons.push(format!(
                "the tallest {kind} loop these limits allow at {:.2} m/s is {:.2} m (asked for {height_m:.2} m)",
                brief.entry_speed_m_s, d.best.summary.loop_height_m
            ));
            nearest.push(Nearest {
                field: "height_m",
                value: d.best.summary.loop_height_m,
                unit: "m",
            });
        }
    }
    if reasons.is_empty() {
        reasons.push("the design failed its final re-check at finer sampling".into());
    }
    Infeasible {
        shape: kind,
        reasons,
        nearest,
    }
}

/// Bisection for the edge of a feasible region: `good` passes `ok`, `bad` fails it; after `iters`
/// halvings the passing end nearest the edge is returned.
fn bisect_edge(mut good: f64, mut bad: f64, iters: usize, mut ok: impl FnMut(f64) -> bool) -> f64 {
    for _ in 0..iters {
        let mid = 0.5 * (good + bad);
        if ok(mid) { good = mid } else { bad = mid }
    }
    good
}

/// The entry speed nearest the brief's at which a loop of its target height meets every limit.
///
/// Too slow a train cannot reach the top with enough load; too fast a one overloads the bottom, so
/// the feasible speeds form a window that may lie on either side. A scan finds the feasible speed
/// nearest the brief's, and bisection sharpens the window edge facing it.
fn min_speed_for_height(brief: &Brief, kind: ShapeKind, counter: &AtomicUsize) -> Option<f64> {
    let Objective::Height { height_m } = brief.objective else {
        return None;
    };
    let ok = |v: f64| {
        let mut b = brief.clone();
        b.entry_speed_m_s = v;
        counter.fetch_add(1, Ordering::Relaxed);
        design_family_quiet(&b, kind)
    };
    // Energy alone: below √(2gH) the train cannot climb H at all.
    let v_lo = (2.0 * crate::units::STANDARD_GRAVITY_M_S2 * height_m).sqrt();
    let v_hi = (2.0 * brief.entry_speed_m_s).max(1.5 * v_lo).min(150.0);
    let n = 16;
    let grid: Vec<f64> = (0..=n)
        .map(|i| v_lo + (v_hi - v_lo) * i as f64 / n as f64)
        .collect();
    let feasible: Vec<bool> = grid.iter().map(|&v| ok(v)).collect();
    let v0 = brief.entry_speed_m_s;
    let best = (0..grid.len())
        .filter(|&i| feasible[i])
        .min_by(|&a, &b| (grid[a] - v0).abs().total_cmp(&(grid[b] - v0).abs()))?;
    // The neighbour towards the brief's speed is infeasible (or the brief's own speed is).
    let (good, bad) = if grid[best] > v0 {
        (grid[best], if best > 0 { grid[best - 1] } else { v0 })
    } else {
        (
            grid[best],
            if best + 1 < grid.len() {
                grid[best + 1]
            } else {
                v0
            },
        )
    };
    Some(bisect_edge(good, bad, 12, ok))
}

/// Whether a height-objective brief is feasible, without building explanations (no recursion).
fn design_family_quiet(brief: &Brief, kind: ShapeKind) -> bool {
    let counter = AtomicUsize::new(0);
    let Some(fam) = family(kind) else {
        return false;
    };
    let shape = search_shape(brief, fam.as_ref(), &counter);
    let Objective::Height { height_m } = brief.objective else {
        return false;
    };
    let Some(h1) = height_per_radius(kind, &shape) else {
        return false;
    };
    evaluate(brief, kind, &shape, height_m / h1, brief.spacing_m)
        .map(|e| e.verdict.pass)
        .unwrap_or(false)
}

/// Explain why no size of the best shape meets the brief (tallest objective).
fn explain_tallest(
    brief: &Brief,
    kind: ShapeKind,
    shape: &[f64],
    range: SizeRange,
    counter: &AtomicUsize,
) -> Infeasible {
    let at = |r: f64| evaluate(brief, kind, shape, r, brief.spacing_m);
    let mut reasons = Vec::new();
    let mut nearest = Vec::new();
    match range {
        SizeRange::Gap { lo_m, hi_m } => {
            // At the largest size the upper limits allow, the lower limits fail, and vice versa.
            if let Ok(e) = at(hi_m) {
                let s = e.summary;
                reasons.push(format!(
                    "at the largest size the top-load{} limit allows (top radius {hi_m:.2} m, top load {:.3} g), {}",
                    if brief.max_height_m.is_some() { " and height" } else { "" },
                    s.top_normal_g,
                    describe_lower_failures(brief, &s, &mut nearest)
                ));
                if kind == ShapeKind::Circle {
                    reasons.push(format!(
                        "a circular loop needs a bottom load of at least 6 + n_top g (lossless closed form: {:.3} g for n_top = {:.3} g); the limit is {:.3} g",
                        6.0 + brief.min_top_g,
                        brief.min_top_g,
                        brief.max_g
                    ));
                }
            }
            match at(lo_m) {
                // Near −1 g at the top the train is barely creeping over: that is the stall boundary,
                // not a top-load limit worth suggesting.
                Ok(e) if e.summary.top_normal_g > -0.95 => {
                    nearest.push(Nearest { field: "min_top_g", value: e.summary.top_normal_g, unit: "g" })
                }
                _ => reasons.push(format!(
                    "a loop small enough to meet the peak-load limit (top radius {lo_m:.2} m) would stall before its top"
                )),
            }
        }
        SizeRange::UpperFailsEverywhere => {
            reasons.push(format!(
                "even the smallest loop considered (top radius {:.2} m) fails the top-load or height limit, or stalls",
                radius_grid(brief)[0]
            ));
        }
        SizeRange::LowerFailsEverywhere { hi_m } => {
            if let Ok(e) = at(hi_m) {
                reasons.push(format!(
                    "at every size {}",
                    describe_lower_failures(brief, &e.summary, &mut nearest)
                ));
            } else {
                reasons.push("no size meets the peak-load, onset and radius limits".into());
            }
        }
        SizeRange::Feasible { .. } => {}
    }
    // The lowest speed that would carry a loop at all under these limits: bisection on speed.
    let ok = |v: f64| {
        let mut b = brief.clone();
        b.entry_speed_m_s = v;
        matches!(
            size_range(&b, kind, shape, true, counter),
            SizeRange::Feasible { .. }
        )
    };
    if !matches!(range, SizeRange::LowerFailsEverywhere { .. }) && !ok(brief.entry_speed_m_s) {
        let (lo, hi) = (brief.entry_speed_m_s, brief.entry_speed_m_s * 1.5);
        if ok(hi) {
            nearest.push(Nearest {
                field: "entry_speed",
                value: bisect_edge(hi, lo, 20, ok),
                unit: "m/s",
            });
        }
    }
    if reasons.is_empty() {
        reasons.push("no size meets every limit".into());
    }
    Infeasible {
        shape: kind,
        reasons,
        nearest,
    }
}

/// Say which of the peak-load, onset and radius limits fail in `s`, and record the value that would pass.
fn describe_lower_failures(brief: &Brief, s: &Summary, nearest: &mut Vec<Nearest>) -> String {
    let mut parts = Vec::new();
    if s.peak_normal_g > brief.max_g {
        parts.push(format!(
            "the peak normal load is {:.3} g, above max_g = {:.3} g",
            s.peak_normal_g, brief.max_g
        ));
        nearest.push(Nearest {
            field: "max_g",
            value: s.peak_normal_g,
            unit: "g",
        });
    }
    if let Some(o) = brief.max_onset_g_s {
        let v = onset_for_limit(s);
        if v > o {
            if v.is_finite() {
                parts.push(format!(
                    "the peak onset is {v:.3} g/s, above max_onset_g_s = {o:.3} g/s"
                ));
                nearest.push(Nearest {
                    field: "max_onset_g_s",
                    value: v,
                    unit: "g/s",
                });
            } else {
                parts.push(format!(
                    "the onset is unbounded where the curvature steps from straight track (a {:.3} g jump); no circular loop meets max_onset_g_s = {o:.3} g/s",
                    s.max_load_step_g
                ));
            }
        }
    }
    if s.min_radius_m < brief.min_radius_m {
        parts.push(format!(
            "the smallest radius is {:.3} m, below min_radius_m = {:.3} m",
            s.min_radius_m, brief.min_radius_m
        ));
        nearest.push(Nearest {
            field: "min_radius_m",
            value: s.min_radius_m,
            unit: "m",
        });
    }
    if parts.is_empty() {
        "the limits conflict".into()
    } else {
        parts.join(" and ")
    }
}

/// Total heartline turn of a family's loop, rad (2π by construction; used by tests).
pub fn total_turn_rad(kind: ShapeKind, shape: &[f64]) -> Option<f64> {
    let p = family(kind)?.curvature(shape, 1.0).ok()?;
    let l = p.length_m();
    Some(p.pitch_rad(l) / (2.0 * PI) * 2.0 * PI)
}
