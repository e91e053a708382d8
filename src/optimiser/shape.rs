//! The shape problem: the objective over a family's dimensionless shape parameters, and its
//! search. For `tallest`, minus the height at the upper size bound; for a target height, the peak
//! load at the size giving that height. One parameter: a scan, then argmin's `BrentOpt`; several:
//! a space-filling (Halton) scan of the whole box, then argmin's `NelderMead` from the best few,
//! one-parameter scans through the winner and restarts. A shape whose size window is short of the
//! slack costs its height less an exact penalty, so the search can follow a limit's boundary.

use argmin::core::{CostFunction, Error as ArgminError, Executor, State};
use argmin::solver::brent::BrentOpt;
use argmin::solver::neldermead::NelderMead;
use std::sync::atomic::{AtomicUsize, Ordering};

use super::size::{SizeRange, SolverFailure, size_range_near};
use super::{
    COARSE_STATIONS_PER_RADIUS, EvalFailure, SIZE_SLACK, evaluate, evaluate_shifted,
    height_per_radius,
};
use crate::brief::{Brief, Objective, ShapeKind};
use crate::checks::limits::{LimitKind, limits_of};
use crate::shape::{ShapeFamily, family};

/// Costs of shapes without a usable answer, ordered so that the search moves from the worst
/// towards feasibility: a shape with a size costs minus its height in metres (penalised by
/// [`WINDOW_PENALTY`] when its size window is short), or its peak load in g for a height brief;
/// one that stalls, one with no size at all and one outside its bounds or making no loop cost
/// more, in that order.
pub const COST_STALL: f64 = 1e4;
pub const COST_NO_SIZE: f64 = 1e5;
pub const COST_UNUSABLE: f64 = 1e6;
/// Weight of the exact penalty on a size window short of the slack: the cost of a shape whose
/// window misses by a fraction ε is −h(1 − Pε). Relaxing a load limit by a fraction ε buys far
/// less than Pε of height (loads scale as 1/size), so the penalised minimum is a feasible one
/// (the exact-penalty theorem: Nocedal & Wright, Numerical Optimization, 2nd ed., §17.2).
pub const WINDOW_PENALTY: f64 = 5.0;

/// Problem: the objective over a family's dimensionless shape parameters.
pub struct ShapeCost<'a> {
    pub brief: &'a Brief,
    pub kind: ShapeKind,
    pub counter: &'a AtomicUsize,
    /// The last upper size bound found, m: the next shape's size search starts near it
    /// (neighbouring shapes have neighbouring sizes).
    pub size_hint_m: std::cell::Cell<Option<f64>>,
    /// The upper size bound of the shape costed last, if it had a feasible one (the polish of the
    /// winner starts from it).
    pub last_hi_m: std::cell::Cell<Option<f64>>,
    /// Whether the shape costed last meets every limit with a window to spare (tallest briefs;
    /// a height brief's shapes are all candidates).
    pub feasible: std::cell::Cell<bool>,
}

impl ShapeCost<'_> {
    /// A height, capped at the brief's largest.
    fn capped(&self, height_m: f64) -> f64 {
        self.brief
            .max_height_m
            .map_or(height_m, |m| height_m.min(m))
    }

    fn in_bounds(&self, shape: &[f64]) -> bool {
        family(self.kind).is_some_and(|f| {
            f.shape_bounds()
                .iter()
                .zip(shape)
                .all(|((lo, hi), v)| v >= lo && v <= hi)
        })
    }

    /// Cost of a shape: lower is better; [`ShapeCost::feasible`] says afterwards whether the
    /// shape meets every limit. The size search inside can fail only as a solver
    /// ([`SolverFailure`]), never silently.
    pub fn shape_cost(&self, shape: &[f64]) -> Result<f64, SolverFailure> {
        if !self.in_bounds(shape) {
            return Ok(COST_UNUSABLE);
        }
        Ok(match self.brief.objective {
            Objective::Tallest => {
                self.last_hi_m.set(None);
                self.feasible.set(false);
                let range = size_range_near(
                    self.brief,
                    self.kind,
                    shape,
                    false,
                    self.counter,
                    self.size_hint_m.get(),
                )?;
                match range {
                    SizeRange::Feasible { hi_m, .. } => {
                        self.size_hint_m.set(Some(hi_m));
                        self.last_hi_m.set(Some(hi_m));
                    }
                    SizeRange::Gap { hi_m, .. } => self.size_hint_m.set(Some(hi_m)),
                    _ => {}
                }
                let h_per_r = height_per_radius(self.kind, shape).unwrap_or(0.0);
                match range {
                    // The coarse search is planar and coarse; at full fidelity the size window
                    // moves by a few tenths of a percent (the shift lowers the top load a little).
                    // A shape counts as feasible only with SIZE_SLACK of window to spare, so the
                    // search does not settle in a corner where two limits meet and the full model
                    // then finds no size at all. Short of that, the cost is the height at the
                    // upper bound plus an exact penalty on the missing window (continuous across
                    // the boundary, so the polish can slide along it: where a lower-side limit
                    // binds, the optimum lies on that boundary, and a cliff there stalls
                    // Nelder-Mead short of it).
                    SizeRange::Feasible { lo_m, hi_m } if hi_m >= lo_m * (1.0 + SIZE_SLACK) => {
                        self.feasible.set(true);
                        let h = self.capped(h_per_r * hi_m);
                        if h >= h_per_r * hi_m {
                            return Ok(-h);
                        }
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
                    SizeRange::Feasible { lo_m, hi_m } | SizeRange::Gap { lo_m, hi_m } => {
                        let h = self.capped(h_per_r * hi_m);
                        -h + WINDOW_PENALTY * h * (lo_m * (1.0 + SIZE_SLACK) / hi_m).ln()
                    }
                    SizeRange::UpperFailsEverywhere | SizeRange::LowerFailsEverywhere { .. } => {
                        COST_NO_SIZE
                    }
                }
            }
            Objective::Height { height_m } => {
                let Some(h1) = height_per_radius(self.kind, shape) else {
                    return Ok(COST_UNUSABLE);
                };
                let r = height_m / h1;
                self.counter.fetch_add(1, Ordering::Relaxed);
                self.feasible.set(false);
                match evaluate(
                    self.brief,
                    self.kind,
                    shape,
                    r,
                    self.brief.spacing_m.max(r / COARSE_STATIONS_PER_RADIUS),
                ) {
                    Ok(e) => {
                        // The peak load is the objective; the other limits are soft penalties
                        // (an unbounded onset counts as 1000 g/s). The size is fixed by the
                        // height, so there is no size window to keep slack in: the coarse
                        // figures keep a reserve inside each limit instead, or a search that
                        // converges onto a limit's boundary finds it crossed between the coarse
                        // samples when the winner is verified at full fidelity.
                        let s = &e.summary;
                        let limits = limits_of(self.brief);
                        let short = |kind: LimitKind, cap: f64| -> f64 {
                            limits
                                .iter()
                                .filter(|l| l.kind == kind)
                                .map(|l| l.shortfall(kind.measure(s), l.fixed_size_reserve(), cap))
                                .sum()
                        };
                        let penalty = short(LimitKind::MinTopG, f64::INFINITY)
                            + short(LimitKind::MinRadius, f64::INFINITY)
                            + short(LimitKind::MaxOnset, 1e3);
                        self.feasible.set(penalty == 0.0);
                        s.peak_normal_g + 100.0 * penalty
                    }
                    Err(EvalFailure::Stall(_)) => COST_STALL,
                    Err(_) => COST_UNUSABLE,
                }
            }
        })
    }
}

impl CostFunction for ShapeCost<'_> {
    type Param = Vec<f64>;
    type Output = f64;
    fn cost(&self, p: &Vec<f64>) -> Result<f64, ArgminError> {
        self.shape_cost(p).map_err(ArgminError::new)
    }
}

/// A shape's cost, or the solver failure that stopped its size search.
type ShapeCostResult = Result<f64, SolverFailure>;
/// A shape costed: its parameters, its cost, its coarse upper size bound, m, and whether it meets
/// every limit.
type SeenShape = (Vec<f64>, ShapeCostResult, Option<f64>, bool);

/// [`ShapeCost`] that remembers every shape it has costed: the scan, the solver and the final
/// comparison ask for some shapes more than once, and a shape's cost never changes.
struct MemoShapeCost<'a> {
    inner: ShapeCost<'a>,
    /// Each shape costed, its cost and its coarse upper size bound.
    seen: std::cell::RefCell<Vec<SeenShape>>,
}

impl<'a> MemoShapeCost<'a> {
    fn new(inner: ShapeCost<'a>) -> Self {
        Self {
            inner,
            seen: std::cell::RefCell::new(Vec::new()),
        }
    }
    /// The cost of a shape; a shape outside the family's bounds costs its projection onto them
    /// plus its distance from them (in units of each range, times [`OUT_OF_BOUNDS`]), so that a
    /// polish against a bound slides along it instead of meeting a wall. Only shapes inside the
    /// bounds are remembered, so only they can be the answer.
    fn shape_cost(&self, shape: &[f64]) -> Result<f64, SolverFailure> {
        let bounds = family(self.inner.kind).map_or(&[][..], |f| f.shape_bounds());
        if bounds.len() == shape.len() {
            let inside = clamp_to(bounds, shape);
            if inside.as_slice() != shape {
                let out: f64 = bounds
                    .iter()
                    .zip(shape.iter().zip(&inside))
                    .map(|((lo, hi), (x, y))| ((x - y) / (hi - lo)).abs())
                    .sum();
                return Ok(self.inside_cost(&inside)? + OUT_OF_BOUNDS * out);
            }
        }
        self.inside_cost(shape)
    }
    fn inside_cost(&self, shape: &[f64]) -> Result<f64, SolverFailure> {
        if let Some((_, c, ..)) = self
            .seen
            .borrow()
            .iter()
            .find(|(s, ..)| s.as_slice() == shape)
        {
            return c.clone();
        }
        let c = self.inner.shape_cost(shape);
        self.seen.borrow_mut().push((
            shape.to_vec(),
            c.clone(),
            self.inner.last_hi_m.get(),
            self.inner.feasible.get(),
        ));
        c
    }
    /// The answer of a search that settled on `shape`: itself if it meets every limit, else the
    /// best shape costed that does (a penalised shape can cost less than every feasible one
    /// when no limit is far from binding), else itself (the design then explains why).
    fn settle(&self, shape: Vec<f64>) -> Vec<f64> {
        let seen = self.seen.borrow();
        let feasible = |x: &[f64]| seen.iter().any(|(s, .., f)| s.as_slice() == x && *f);
        if feasible(&shape) {
            return shape;
        }
        seen.iter()
            .filter(|(.., f)| *f)
            .filter_map(|(s, c, ..)| c.as_ref().ok().map(|c| (*c, s)))
            .min_by(|a, b| a.0.total_cmp(&b.0))
            .map_or(shape, |(_, s)| s.clone())
    }
    /// The coarse upper size bound found for a shape already costed.
    fn coarse_hi_m(&self, shape: &[f64]) -> Option<f64> {
        self.seen
            .borrow()
            .iter()
            .find(|(s, ..)| s.as_slice() == shape)
            .and_then(|(_, _, hi, _)| *hi)
    }
}

/// Cost per unit of distance outside the shape bounds (in units of each parameter's range): a
/// metre of height per 1 % of range.
const OUT_OF_BOUNDS: f64 = 100.0;

/// `shape` moved onto the box `bounds`.
fn clamp_to(bounds: &[(f64, f64)], shape: &[f64]) -> Vec<f64> {
    bounds
        .iter()
        .zip(shape)
        .map(|((lo, hi), x)| x.clamp(*lo, *hi))
        .collect()
}

/// One-parameter view of [`ShapeCost`] for argmin's `BrentOpt`.
struct ShapeCost1<'a, 'b>(&'b MemoShapeCost<'a>);

impl CostFunction for ShapeCost1<'_, '_> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, p: &f64) -> Result<f64, ArgminError> {
        self.0.shape_cost(&[*p]).map_err(ArgminError::new)
    }
}

/// View of the memoised [`ShapeCost`] for argmin's `NelderMead` over some of the parameters
/// (`free`), the others held at `base`.
struct ShapeCostSub<'a, 'b> {
    memo: &'b MemoShapeCost<'a>,
    base: Vec<f64>,
    free: Vec<usize>,
}

impl CostFunction for ShapeCostSub<'_, '_> {
    type Param = Vec<f64>;
    type Output = f64;
    fn cost(&self, p: &Vec<f64>) -> Result<f64, ArgminError> {
        let mut x = self.base.clone();
        for (k, &i) in self.free.iter().enumerate() {
            x[i] = p[k];
        }
        self.memo.shape_cost(&x).map_err(ArgminError::new)
    }
}

/// A solver's error as a [`SolverFailure`]: the size search's own failure when that is what
/// stopped it (it travels through argmin's error type), else argmin's error, named.
fn solver_error(solver: &'static str, e: ArgminError) -> SolverFailure {
    match e.downcast::<SolverFailure>() {
        Ok(inner) => inner,
        Err(e) => SolverFailure::argmin(solver, e),
    }
}

/// The shape search's answer and why it stopped.
#[derive(Debug, Clone, PartialEq)]
pub struct ShapeSearch {
    pub shape: Vec<f64>,
    /// How the search ended, for reports ("scan: optimum on a bound", argmin's termination text).
    pub stopped: String,
    /// The shape's upper size bound on the coarse sampling, if the search found one.
    pub coarse_hi_m: Option<f64>,
}

/// Best shape parameters found by the outer search.
pub(crate) fn search_shape(
    brief: &Brief,
    fam: &dyn ShapeFamily,
    counter: &AtomicUsize,
) -> Result<ShapeSearch, SolverFailure> {
    let bounds = fam.shape_bounds();
    let problem = MemoShapeCost::new(ShapeCost {
        brief,
        kind: fam.kind(),
        counter,
        size_hint_m: std::cell::Cell::new(None),
        last_hi_m: std::cell::Cell::new(None),
        feasible: std::cell::Cell::new(false),
    });
    let done = |shape: Vec<f64>, stopped: &str| {
        let shape = problem.settle(shape);
        Ok(ShapeSearch {
            coarse_hi_m: problem.coarse_hi_m(&shape),
            shape,
            stopped: stopped.to_string(),
        })
    };
    match bounds.len() {
        0 => done(Vec::new(), "no shape parameters"),
        1 => {
            let (lo, hi) = bounds[0];
            // A coarse scan first: the cost may have plateaus (height capped) where Brent alone wanders.
            let mut best = lo;
            let mut best_cost = f64::INFINITY;
            for i in 0..=SCAN_1D {
                let x = lo + (hi - lo) * i as f64 / SCAN_1D as f64;
                let c = problem.shape_cost(&[x])?;
                // The first of equal costs wins, as a minimum over the scan in order.
                if c < best_cost {
                    (best, best_cost) = (x, c);
                }
            }
            let step = (hi - lo) / SCAN_1D as f64;
            // An optimum on a bound (common: the pointiest teardrop is the tallest) is confirmed by
            // one probe just inside it; Brent would otherwise creep towards the bound in golden steps.
            if best == lo || best == hi {
                let inside = if best == lo {
                    lo + 1e-3 * (hi - lo)
                } else {
                    hi - 1e-3 * (hi - lo)
                };
                if best_cost <= problem.shape_cost(&[inside])? {
                    return done(
                        vec![best],
                        "scan: optimum on a bound, confirmed by a probe inside",
                    );
                }
            }
            let (a, b) = ((best - step).max(lo), (best + step).min(hi));
            let solver = BrentOpt::new(a, b).set_tolerance(1e-3, 1e-4);
            let res = Executor::new(ShapeCost1(&problem), solver)
                .configure(|s| s.max_iters(20))
                .run()
                .map_err(|e| solver_error("shape search (Brent)", e))?;
            let state = res.state();
            let stopped = state
                .get_termination_reason()
                .map_or("no termination reason", |r| r.text())
                .to_string();
            let found = state.get_best_param().copied().unwrap_or(best);
            if problem.shape_cost(&[found])? <= best_cost {
                done(vec![found], &format!("Brent: {stopped}"))
            } else {
                done(
                    vec![best],
                    &format!("Brent: {stopped}; the scan's best kept"),
                )
            }
        }
        _ => {
            let s = global_search(&problem, bounds, &fam.default_shape())?;
            done(s.shape, &s.stopped)
        }
    }
}

/// Intervals of the first scan over a one-parameter family: fine enough that the scan's best lies
/// in the global optimum's valley (with 4, a clothoid brief at 22 m/s came out 0.3 m shorter at
/// 5 g than at 4 g), before Brent refines it.
const SCAN_1D: usize = 3 * super::SCAN;
/// Points of the first scan over a family with several shape parameters, besides its default shape.
const SCAN_POINTS: usize = 40;
/// Starts of the local polish over every parameter (the best slices, or the best scan points of
/// a two-parameter family), in order of cost.
const POLISH_STARTS: usize = 3;
/// Intervals between the values of the last parameter that the slices hold.
const SLICES: usize = 6;
/// Nelder–Mead iterations of each slice. The optimum of a slice often sits on a ridge where two
/// limits meet (height falls about fifty times faster on one side than the other), which
/// Nelder–Mead climbs slowly: at 40 iterations one slice of the gallery's sweep stopped half way
/// up it and the search settled in another valley 1.5 cm lower (a relaxed brief came out 0.061 %
/// shorter); 80 reach the ridge's top on the gallery grid and the monotone grid.
const SLICE_ITERS: u64 = 80;
/// Nelder–Mead iterations per polish.
const POLISH_ITERS: u64 = 40;
/// Edge of the polish's first simplex, as a fraction of each parameter's range.
const POLISH_STEP: f64 = 0.06;
/// Rounds of the one-parameter scans through the best shape, and their intervals per parameter.
const PARAMETER_SCANS: usize = 2;
const PARAMETER_SCAN_STEPS: usize = 8;
/// Restarts of the polish from the best shape, the first simplex's edge (halved at each) and
/// their iterations.
const RESTARTS: usize = 2;
const RESTART_STEP: f64 = 0.03;
const RESTART_ITERS: u64 = 60;
/// A gain in cost (m of height, or g) below which a stage counts as having found nothing.
const MEANINGFUL_GAIN: f64 = 1e-4;

/// Point `i` (from 1) of the Halton sequence in `dim` dimensions (radical inverses in the first
/// primes): a deterministic, space-filling sample of the unit cube (Halton, Numer. Math. 2 (1960) 84).
fn halton(i: usize, dim: usize) -> Vec<f64> {
    const PRIMES: [usize; 6] = [2, 3, 5, 7, 11, 13];
    PRIMES[..dim.min(PRIMES.len())]
        .iter()
        .map(|&b| {
            let (mut f, mut r, mut n) = (1.0, 0.0, i);
            while n > 0 {
                f /= b as f64;
                r += f * (n % b) as f64;
                n /= b;
            }
            r
        })
        .collect()
}

/// Global search for several shape parameters: the cost landscape has several valleys (the
/// issue's local optima made relaxed briefs come out shorter), so a space-filling scan of the
/// whole box (the default shape plus Halton points) finds the valleys and Nelder–Mead polishes
/// the best few; one-parameter scans through the winner look for neighbouring valleys, and
/// restarts refine it. Shapes outside the bounds cost their projection plus a penalty, so a
/// polish slides along a bound. Deterministic: the same brief always takes the same path.
fn global_search(
    problem: &MemoShapeCost<'_>,
    bounds: &[(f64, f64)],
    default: &[f64],
) -> Result<ShapeSearch, SolverFailure> {
    let mut scan: Vec<(f64, Vec<f64>)> = Vec::with_capacity(SCAN_POINTS + 1);
    let points = std::iter::once(default.to_vec()).chain((1..=SCAN_POINTS).map(|i| {
        halton(i, bounds.len())
            .iter()
            .zip(bounds)
            .map(|(t, (lo, hi))| lo + t * (hi - lo))
            .collect()
    }));
    for x in points {
        scan.push((problem.shape_cost(&x)?, x));
    }
    // Stable: of equal costs the earlier point comes first.
    scan.sort_by(|a, b| a.0.total_cmp(&b.0));
    let (mut best_cost, mut best) = scan[0].clone();
    let mut stopped = format!("scan of {} shapes", scan.len());
    // The valleys lie mostly along the last parameter (the variable-radius family's top slope:
    // valleys about 0.1 % apart in height, so a polish from a scan point settles in whichever is
    // nearest). Profile it: for each of a few values of the last parameter, the best of the
    // others (Nelder–Mead, each slice starting from its neighbour's answer); then polish every
    // parameter from the best slices.
    if bounds.len() >= 3 {
        let last = bounds.len() - 1;
        let (lo, hi) = bounds[last];
        let free: Vec<usize> = (0..last).collect();
        let mut start = best.clone();
        let mut slices: Vec<(f64, Vec<f64>)> = Vec::with_capacity(SLICES + 1);
        for k in 0..=SLICES {
            start[last] = lo + (hi - lo) * k as f64 / SLICES as f64;
            let (c, p, _) = polish_some(problem, bounds, &start, &free, POLISH_STEP, SLICE_ITERS)?;
            start = p.clone();
            slices.push((c, p));
        }
        slices.sort_by(|a, b| a.0.total_cmp(&b.0));
        for (_, from) in slices.iter().take(POLISH_STARTS) {
            let (c, p, reason) = polish(problem, bounds, from, POLISH_STEP, POLISH_ITERS)?;
            if c < best_cost {
                (best_cost, best) = (c, p);
                stopped = format!(
                    "scan of {} shapes, {} slices of the last parameter, then Nelder-Mead from the best {POLISH_STARTS}: {reason}",
                    scan.len(),
                    SLICES + 1
                );
            }
        }
    } else {
        for (_, start) in scan.iter().take(POLISH_STARTS) {
            let (c, p, reason) = polish(problem, bounds, start, POLISH_STEP, POLISH_ITERS)?;
            if c < best_cost {
                (best_cost, best) = (c, p);
                stopped = format!(
                    "scan of {} shapes, then Nelder-Mead from the best {POLISH_STARTS}: {reason}",
                    scan.len()
                );
            }
        }
    }
    // Neighbouring valleys along one parameter (the top slope of the variable-radius family has
    // several of nearly equal height): scan each parameter across its range from the best, and
    // polish again from any better point found.
    for _ in 0..PARAMETER_SCANS {
        let mut moved = false;
        for (i, (lo, hi)) in bounds.iter().enumerate() {
            for k in 0..=PARAMETER_SCAN_STEPS {
                let mut x = best.clone();
                x[i] = lo + (hi - lo) * k as f64 / PARAMETER_SCAN_STEPS as f64;
                let c = problem.shape_cost(&x)?;
                if c < best_cost - MEANINGFUL_GAIN {
                    (best_cost, best, moved) = (c, x, true);
                }
            }
        }
        if !moved {
            break;
        }
        let (c, p, reason) = polish(problem, bounds, &best, POLISH_STEP, POLISH_ITERS)?;
        if c < best_cost {
            (best_cost, best) = (c, p);
            stopped = format!("{stopped}; parameter scan, then Nelder-Mead: {reason}");
        }
    }
    // Refine the best valley: restarts with a fresh, smaller simplex until one gains nothing
    // (a collapsed simplex is Nelder-Mead's known failure; a restart is the standard remedy,
    // Numerical Recipes 3rd ed. §10.5).
    let mut step = RESTART_STEP;
    for _ in 0..RESTARTS {
        let (c, p, reason) = polish(problem, bounds, &best, step, RESTART_ITERS)?;
        let gain = best_cost - c;
        if c < best_cost {
            (best_cost, best) = (c, p);
            stopped = format!("{stopped}; restart: {reason}");
        }
        if gain < MEANINGFUL_GAIN {
            break;
        }
        step *= 0.5;
    }
    Ok(ShapeSearch {
        shape: best,
        stopped,
        coarse_hi_m: None,
    })
}

/// Nelder–Mead from `start` with a first simplex of edge `step` (a fraction of each parameter's
/// range), at most `iters` iterations: the best cost, shape and why it stopped.
fn polish(
    problem: &MemoShapeCost<'_>,
    bounds: &[(f64, f64)],
    start: &[f64],
    step: f64,
    iters: u64,
) -> Result<(f64, Vec<f64>, String), SolverFailure> {
    let all: Vec<usize> = (0..bounds.len()).collect();
    polish_some(problem, bounds, start, &all, step, iters)
}

/// [`polish`] moving only the parameters `free` (the others stay as in `start`).
fn polish_some(
    problem: &MemoShapeCost<'_>,
    bounds: &[(f64, f64)],
    start: &[f64],
    free: &[usize],
    step: f64,
    iters: u64,
) -> Result<(f64, Vec<f64>, String), SolverFailure> {
    let sub = |x: &[f64]| free.iter().map(|&i| x[i]).collect::<Vec<f64>>();
    let mut simplex = vec![sub(start)];
    for (k, &i) in free.iter().enumerate() {
        let (lo, hi) = bounds[i];
        let mut v = sub(start);
        let step = step * (hi - lo);
        // Step inwards, so that every vertex is a usable shape.
        v[k] = if v[k] + step <= hi {
            v[k] + step
        } else {
            v[k] - step
        };
        simplex.push(v);
    }
    let solver = NelderMead::new(simplex)
        .with_sd_tolerance(1e-5)
        .map_err(|e| solver_error("shape search (Nelder-Mead)", e))?;
    let view = ShapeCostSub {
        memo: problem,
        base: start.to_vec(),
        free: free.to_vec(),
    };
    let res = Executor::new(view, solver)
        .configure(|s| s.max_iters(iters))
        .run()
        .map_err(|e| solver_error("shape search (Nelder-Mead)", e))?;
    let state = res.state();
    let reason = state
        .get_termination_reason()
        .map_or("no termination reason", |r| r.text())
        .to_string();
    let Some(p) = state.get_best_param() else {
        return Err(SolverFailure {
            solver: "shape search (Nelder-Mead)",
            reason,
        });
    };
    let mut x = start.to_vec();
    for (k, &i) in free.iter().enumerate() {
        x[i] = p[k];
    }
    // Nelder-Mead may end just outside a bound it leant on: its answer is the shape on the bound.
    let x = clamp_to(bounds, &x);
    Ok((problem.shape_cost(&x)?, x, reason))
}
