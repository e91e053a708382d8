//! The size problem: for fixed shape parameters, the signed margin of a group of limits as a
//! function of size (log of the top radius), and the search for the feasible size interval.
//!
//! Loads fall monotonically as a loop of fixed shape grows (for κ ≥ 0, n = v₀²κ̂/(gλ) − 2ẑκ̂ + cos θ
//! in the lossless case), so the limits that fail on big loops (top load, height, stall) give an
//! upper size bound and those that fail on small loops (peak load, onset, radius) a lower one.
//! argmin's `BrentRoot` finds each bound.

use argmin::core::{CostFunction, Error as ArgminError, Executor, State, TerminationReason};
use argmin::solver::brent::BrentRoot;
use std::sync::atomic::{AtomicUsize, Ordering};

use super::{COARSE_STATIONS_PER_RADIUS, EvalFailure, Evaluation, SEARCH_MARGIN, evaluate_shifted};
use crate::brief::{Brief, ShapeKind};
use crate::checks::limits::{Side, limits_of};

/// Signed margin of one side's limits (the smallest), minus the search margin.
pub(crate) fn side_margin(
    brief: &Brief,
    eval: &Result<Evaluation, EvalFailure>,
    side: Side,
) -> f64 {
    match (eval, side) {
        // A stall is an upper-side failure; deeper into it is worse, so keep it clearly negative.
        (Err(EvalFailure::Stall(_)), Side::Upper) => -10.0,
        (Err(EvalFailure::Stall(_)), Side::Lower) => 1.0,
        (Err(EvalFailure::Shape(_) | EvalFailure::Fit(_)), _) => -1e3,
        (Ok(e), side) => {
            let mut s = e.summary;
            s.min_radius_m = e.min_radius_m();
            limits_of(brief)
                .iter()
                .filter(|l| l.kind.side() == side)
                .map(|l| l.search_margin(l.kind.measure(&s)))
                .fold(f64::INFINITY, f64::min)
                - SEARCH_MARGIN
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

/// A solver that stopped without an answer: argmin's error or termination reason, named.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("the {solver} stopped without an answer: {reason}")]
pub struct SolverFailure {
    pub solver: &'static str,
    pub reason: String,
}

impl SolverFailure {
    pub(crate) fn argmin(solver: &'static str, e: ArgminError) -> Self {
        SolverFailure {
            solver,
            reason: e.to_string(),
        }
    }
}

/// Root of a margin between `a` and `b` (opposite signs), by argmin's Brent method; anything but
/// convergence is a [`SolverFailure`].
pub(crate) fn brent_root(problem: SizeMargin<'_>, a: f64, b: f64) -> Result<f64, SolverFailure> {
    const SOLVER: &str = "size root finder (Brent)";
    let solver = BrentRoot::new(a.min(b), a.max(b), 1e-8);
    let res = Executor::new(problem, solver)
        .configure(|s| s.max_iters(100))
        .run()
        .map_err(|e| SolverFailure::argmin(SOLVER, e))?;
    let state = res.state();
    match (state.get_termination_reason(), state.get_best_param()) {
        (Some(TerminationReason::SolverConverged), Some(x)) => Ok(*x),
        (reason, _) => Err(SolverFailure {
            solver: SOLVER,
            reason: reason.map_or("no result".into(), |r| r.text().to_string()),
        }),
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
pub(crate) fn radius_grid(brief: &Brief) -> Vec<f64> {
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
) -> Result<SizeRange, SolverFailure> {
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
        Some(0) => return Ok(SizeRange::UpperFailsEverywhere),
        Some(i) => brent_root(mk(Side::Upper), grid[i - 1].ln(), grid[i].ln())?.exp(),
        None => grid[grid.len() - 1],
    };
    // The lower side already passes at the last grid radius below the upper bound: feasible for
    // certain (the lower margin rises with size), so the exact lower bound is not needed.
    let below = hi_at.map_or(grid.len() - 1, |h| h - 1);
    if margins(below).1 >= 0.0 {
        return Ok(SizeRange::Feasible {
            lo_m: grid[below],
            hi_m: hi,
        });
    }
    // Lower bound: first pass of the lower side.
    let lo = match first_true(grid.len(), |i| margins(i).1 >= 0.0) {
        Some(0) => grid[0],
        Some(i) => brent_root(mk(Side::Lower), grid[i - 1].ln(), grid[i].ln())?.exp(),
        None => return Ok(SizeRange::LowerFailsEverywhere { hi_m: hi }),
    };
    Ok(if lo <= hi {
        SizeRange::Feasible { lo_m: lo, hi_m: hi }
    } else {
        SizeRange::Gap { lo_m: lo, hi_m: hi }
    })
}

/// The upper size bound at full fidelity, found near the coarse one: the coarse search's bound is
/// within a fraction of a percent, so a bracket of ±2 % around it replaces the full radius grid at
/// the brief's spacing. `None` when the coarse range is not feasible or the bracket does not hold
/// the sign change (the caller then runs the full search, which also explains infeasibility).
pub(crate) fn polish_upper(
    brief: &Brief,
    kind: ShapeKind,
    shape: &[f64],
    counter: &AtomicUsize,
) -> Result<Option<f64>, SolverFailure> {
    let SizeRange::Feasible { hi_m, .. } = size_range(brief, kind, shape, false, counter)? else {
        return Ok(None);
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
    let Some((a, b)) = [0.003, 0.02].into_iter().find_map(|w: f64| {
        let (a, b) = ((hi_m * (1.0 - w)).ln(), (hi_m * (1.0 + w)).ln());
        (margin(a) >= 0.0 && margin(b) < 0.0).then_some((a, b))
    }) else {
        return Ok(None);
    };
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
    )?
    .exp();
    // The lower-side limits must hold there too; otherwise let the full search decide and explain.
    Ok((side_margin(brief, &fine.eval(r.ln()), Side::Lower) >= 0.0).then_some(r))
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
