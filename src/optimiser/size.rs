//! The size problem: for fixed shape parameters, the signed margin of a group of limits as a
//! function of size (log of the top radius), and the search for the feasible size interval.
//!
//! Loads fall monotonically as a loop of fixed shape grows (for κ ≥ 0, n = v₀²κ̂/(gλ) − 2ẑκ̂ + cos θ
//! in the lossless case), so the limits that fail on big loops (top load, height, stall) give an
//! upper size bound and those that fail on small loops (peak load, onset, radius) a lower one.
//! argmin's `BrentRoot` finds each bound.

use argmin::core::{CostFunction, Error as ArgminError, Executor, State, TerminationReason};
use argmin::solver::brent::BrentRoot;
use std::cell::RefCell;
use std::sync::atomic::{AtomicUsize, Ordering};

use super::{COARSE_STATIONS_PER_RADIUS, EvalFailure, Evaluation, SEARCH_MARGIN, evaluate_shifted};
use crate::brief::{Brief, ShapeKind};
use crate::checks::limits::{Side, limits_of};

/// Signed margin of one side's limits (the smallest), minus the search margin.
pub(crate) fn side_margin(
    brief: &Brief,
    eval: Result<&Evaluation, &EvalFailure>,
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
#[derive(Clone, Copy)]
pub struct SizeMargin<'a> {
    pub brief: &'a Brief,
    pub kind: ShapeKind,
    pub shape: &'a [f64],
    pub side: Side,
    pub fine: bool,
    pub counter: &'a AtomicUsize,
    /// Where a full-fidelity pair is kept for reuse (see [`KeptPair`]); `None` keeps nothing.
    pub kept: Option<&'a KeptPair>,
}

/// The last full-fidelity evaluation pair of a polish (at the brief's spacing and a quarter of
/// it) with its top radius: the polish's closing check of the other side at the root, and the
/// assessment of the winner, are the same two loops, so they reuse it instead of building and
/// riding them again.
#[derive(Default)]
pub struct KeptPair(RefCell<Option<(u64, Evaluation, Evaluation)>>);

impl KeptPair {
    /// Both evaluations, if the kept pair is at exactly this top radius (the same bits).
    pub fn take_at(&self, top_radius_m: f64) -> Option<(Evaluation, Evaluation)> {
        let mut kept = self.0.borrow_mut();
        match kept.take() {
            Some((bits, at, quarter)) if bits == top_radius_m.to_bits() => Some((at, quarter)),
            other => {
                *kept = other;
                None
            }
        }
    }
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
        self.eval_at(ln_r, 1.0)
    }
    /// Evaluate at the search's spacing times `refine`.
    fn eval_at(&self, ln_r: f64, refine: f64) -> Result<Evaluation, EvalFailure> {
        self.counter.fetch_add(1, Ordering::Relaxed);
        let r = ln_r.exp();
        let shift = if self.fine {
            self.brief.lateral_shift_m
        } else {
            0.0
        };
        evaluate_shifted(
            self.brief,
            self.kind,
            self.shape,
            r,
            self.spacing(r) * refine,
            shift,
        )
    }
    /// [`Self::margin`] at the search's own spacing only (a single evaluation even at full
    /// fidelity, and none kept): for points that only steer a root finder.
    fn margin_sampled_once(&self, ln_r: f64) -> f64 {
        side_margin(self.brief, self.eval(ln_r).as_ref(), self.side)
    }
    /// The margin of this side. At full fidelity, the smaller of the margins at the brief's
    /// spacing and at the quarter of it where the design is verified: a loop whose curvature
    /// has a corner at the top (the spline's top slope, the double spiral) has a top load that
    /// moves to first order with where the stations fall, so both samplings must hold.
    fn margin(&self, ln_r: f64) -> f64 {
        let (up, low) = self.both_margins(ln_r);
        match self.side {
            Side::Upper => up,
            Side::Lower => low,
        }
    }
    /// The upper and lower sides' margins from the same evaluation(s), as [`Self::margin`].
    fn both_margins(&self, ln_r: f64) -> (f64, f64) {
        let both = |e: Result<&Evaluation, &EvalFailure>| {
            (
                side_margin(self.brief, e, Side::Upper),
                side_margin(self.brief, e, Side::Lower),
            )
        };
        if !self.fine {
            return both(self.eval(ln_r).as_ref());
        }
        let bits = ln_r.exp().to_bits();
        let pair = self.kept.and_then(|k| match &*k.0.borrow() {
            Some((b, at, quarter)) if *b == bits => Some((both(Ok(at)), both(Ok(quarter)))),
            _ => None,
        });
        let (m, q) = match pair {
            Some(margins) => margins,
            None => {
                // The old pair is replaced below: let it go first (a megabyte or more, which a
                // fresh process would otherwise fault in anew).
                if let Some(k) = self.kept {
                    k.0.borrow_mut().take();
                }
                let (at, quarter) = (self.eval(ln_r), self.eval_at(ln_r, 0.25));
                let margins = (both(at.as_ref()), both(quarter.as_ref()));
                if let (Some(k), Ok(at), Ok(quarter)) = (self.kept, at, quarter) {
                    *k.0.borrow_mut() = Some((bits, at, quarter));
                }
                margins
            }
        };
        (m.0.min(q.0), m.1.min(q.1))
    }
}

impl CostFunction for SizeMargin<'_> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, ln_r: &f64) -> Result<f64, ArgminError> {
        Ok(self.margin(*ln_r))
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
    let solver = BrentRoot::new(a.min(b), a.max(b), ROOT_TOL);
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
    /// radius (a radius where the lower-side limits already pass) when the window is wider than
    /// the shape search's slack: no caller needs the exact lower bound of a wide range, and
    /// finding it would cost a root search. A narrower window's `lo_m` is exact.
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
    size_range_near(brief, kind, shape, fine, counter, None)
}

/// The secant's first step from a size hint, in ln(top radius).
const HINT_STEP: f64 = 0.03;

/// As [`size_range`], starting from `hint_m`, the upper bound of a neighbouring shape: a secant
/// in 1/R from there finds the bounds, a narrow window's or a gap's lower bound exactly
/// ([`from_hint`]: 4 to 6 evaluations where the grid and Brent take 15 or so). When a secant
/// loses its root (a stall, a bound more than a factor 2 from the hint), or without a hint, the
/// full grid search runs, so a hint changes only the cost, never the classification's rules.
pub(crate) fn size_range_near(
    brief: &Brief,
    kind: ShapeKind,
    shape: &[f64],
    fine: bool,
    counter: &AtomicUsize,
    hint_m: Option<f64>,
) -> Result<SizeRange, SolverFailure> {
    let mk = |side| SizeMargin {
        brief,
        kind,
        shape,
        side,
        fine,
        counter,
        kept: None,
    };
    let grid = radius_grid(brief);
    if let Some(h) = hint_m.filter(|h| h.is_finite() && *h > 0.0)
        && let Some(range) = from_hint(&mk(Side::Upper), h, grid[grid.len() - 1])?
    {
        return Ok(range);
    }
    let up = mk(Side::Upper);
    // Both margins at a grid point come from one evaluation, made only when a search needs it.
    let mut memo: Vec<Option<(f64, f64)>> = vec![None; grid.len()];
    let mut margins = |i: usize| *memo[i].get_or_insert_with(|| up.both_margins(grid[i].ln()));
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
        // A window narrower than the shape search's slack is measured exactly (its penalty
        // needs the true lower bound), when the lower side fails a grid step further down.
        let lo = if below > 0
            && hi < grid[below] * (1.0 + super::SIZE_SLACK)
            && margins(below - 1).1 < 0.0
        {
            brent_root(mk(Side::Lower), grid[below - 1].ln(), grid[below].ln())?.exp()
        } else {
            grid[below]
        };
        return Ok(SizeRange::Feasible { lo_m: lo, hi_m: hi });
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
/// within a fraction of a percent, so a secant in 1/R within ±2 % of it replaces the full radius
/// grid at the brief's spacing. The coarse bound is `coarse_hi_m` when the shape search already
/// found it (else the coarse range is searched here). `None` when the coarse range is not feasible
/// or the window does not hold the sign change (the caller then runs the full search, which also
/// explains infeasibility).
pub(crate) fn polish_upper(
    brief: &Brief,
    kind: ShapeKind,
    shape: &[f64],
    coarse_hi_m: Option<f64>,
    counter: &AtomicUsize,
    kept: &KeptPair,
) -> Result<Option<f64>, SolverFailure> {
    // The shape search already found this shape's coarse bound: start from it rather than
    // redoing the coarse range.
    let hi_m = match coarse_hi_m {
        Some(h) => h,
        None => match size_range(brief, kind, shape, false, counter)? {
            SizeRange::Feasible { hi_m, .. } => hi_m,
            _ => return Ok(None),
        },
    };
    let fine = SizeMargin {
        brief,
        kind,
        shape,
        side: Side::Upper,
        fine: true,
        counter,
        kept: Some(kept),
    };
    // Start from just below the coarse bound (the planar, coarse bound is usually within a few
    // tenths of a percent), or further below, and close in by secant within ±2 %.
    let hi_w = hi_m * 1.02;
    // The start only seeds the secant (0.3 % or 2 % inside the coarse bound, where the margin
    // dwarfs the difference between the two samplings), so it is sampled once, at the brief's
    // spacing. Every later point, which decides the root, takes both.
    let Some((a, fa)) = [0.997, 0.98].into_iter().find_map(|w: f64| {
        let a = (hi_m * w).ln();
        let fa = fine.margin_sampled_once(a);
        (fa >= 0.0).then_some((a, fa))
    }) else {
        return Ok(None);
    };
    let secant = secant_root(
        &mut |x| fine.margin(x),
        (a, fa),
        hi_m.ln(),
        (a, hi_w.ln()),
        POLISH_ROOT_TOL,
    );
    // Brent needs a start that passes at both samplings, which the seed was not checked for.
    let a_passes = || fine.margin(a) >= 0.0;
    let ln_r = match secant {
        Secant::Root(x) => x,
        Secant::Bracket(lo, hi) if lo != a || a_passes() => brent_root(fine, lo, hi)?,
        Secant::Bracket(..) => return Ok(None),
        Secant::Lost => {
            // The old bracket search decides (a bound just past the window, a stall).
            let b = hi_w.ln();
            if fine.margin(b) >= 0.0 || !a_passes() {
                return Ok(None);
            }
            brent_root(fine, a, b)?
        }
    };
    // The lower-side limits must hold there too; otherwise let the full search decide and explain.
    // (At the root itself, usually the secant's last evaluation: the kept pair answers.)
    let lower = SizeMargin {
        side: Side::Lower,
        ..fine
    };
    Ok((lower.margin(ln_r) >= 0.0).then_some(ln_r.exp()))
}

/// The size range found from a neighbouring shape's upper bound `hint_m`, by a secant in 1/R on
/// the upper margin from the hint and a step beside it (towards the root), within a factor of 2
/// of the hint and the search range's end `largest_m`. The range is feasible from the largest
/// radius tried below the bound with the slack where the lower-side limits hold (or from the
/// bound less the slack, tried once); otherwise a second secant finds the exact lower bound (so
/// that a narrow window or a gap is measured exactly, as the shape search's penalty needs).
/// `None` (the caller runs the full search) when a secant loses its root: a hint changes only the
/// cost, never the classification's rules.
fn from_hint(
    up: &SizeMargin<'_>,
    hint_m: f64,
    largest_m: f64,
) -> Result<Option<SizeRange>, SolverFailure> {
    // Every evaluation's (ln R, upper margin, lower margin).
    let tried = std::cell::RefCell::new(Vec::<(f64, f64, f64)>::new());
    let both = |x: f64| {
        let m = up.both_margins(x);
        tried.borrow_mut().push((x, m.0, m.1));
        m
    };
    let x0 = hint_m.ln();
    let f0 = both(x0).0;
    let x1 = x0 + if f0 >= 0.0 { HINT_STEP } else { -HINT_STEP };
    let window = (
        x0 - std::f64::consts::LN_2,
        (2.0 * hint_m).min(largest_m).ln(),
    );
    let root = match secant_root(&mut |x| both(x).0, (x0, f0), x1, window, ROOT_TOL) {
        Secant::Root(x) => x,
        Secant::Bracket(lo, hi) => brent_root(*up, lo, hi)?,
        Secant::Lost => return Ok(None),
    };
    let hi_m = root.exp();
    let need = root - super::SIZE_SLACK.ln_1p();
    let held = tried
        .borrow()
        .iter()
        .filter(|(x, u, l)| *x <= need && *u >= 0.0 && *l >= 0.0)
        .map(|t| t.0)
        .fold(None, |m: Option<f64>, x| Some(m.map_or(x, |m| m.max(x))));
    if let Some(x) = held {
        return Ok(Some(SizeRange::Feasible {
            lo_m: x.exp(),
            hi_m,
        }));
    }
    let low_need = both(need).1;
    if low_need >= 0.0 {
        return Ok(Some(SizeRange::Feasible {
            lo_m: need.exp(),
            hi_m,
        }));
    }
    // The lower-side limits fail there: find where they start to hold. Their margin rises with
    // size, so the secant runs on its negative (falling, as the upper one).
    let low = SizeMargin {
        side: Side::Lower,
        ..*up
    };
    let window = (need, largest_m.ln());
    let lo = match secant_root(
        &mut |x| -low.margin(x),
        (need, -low_need),
        root,
        window,
        ROOT_TOL,
    ) {
        Secant::Root(x) => x,
        Secant::Bracket(pass, fail) => brent_root(low, pass, fail)?,
        Secant::Lost => return Ok(None),
    };
    let lo_m = lo.exp();
    Ok(Some(if lo_m <= hi_m {
        SizeRange::Feasible { lo_m, hi_m }
    } else {
        SizeRange::Gap { lo_m, hi_m }
    }))
}

/// Tolerance of the size roots, in ln(top radius): the same as the Brent searches'.
const ROOT_TOL: f64 = 1e-8;
/// Step below which the polish's secant stops, in ln(top radius). Looser than [`ROOT_TOL`] on
/// purpose: a secant step this small leaves the next iterate ~1e-12 from the root (the error
/// shrinks with the product of the last two steps, Numerical Recipes 3rd ed. §9.2; measured
/// 1e-13 on the demo brief), where waiting for a step under 1e-8 cost one more full-fidelity
/// pair on a lossy brief. The winner moves by about 1e-12 of its size.
const POLISH_ROOT_TOL: f64 = 1e-6;
/// Secant steps before the root finder gives up and hands over to Brent.
const SECANT_STEPS: usize = 8;

/// Outcome of [`secant_root`].
enum Secant {
    /// The root, in ln(top radius).
    Root(f64),
    /// The secant did not settle (a corner where another limit takes over, sampling jitter), but
    /// it found this sign change (ln radii, margin ≥ 0 at the first): Brent finishes there.
    Bracket(f64, f64),
    /// The root lies outside the window (or the margin jumps, as at a stall): search afresh.
    Lost,
}

/// Root of a size margin `f` (ln R → margin) by the secant method in u = 1/R, from a point `a`
/// (ln R, margin) and a second point `x1`, within `window` (ln radii). When lossless the top load
/// is linear in 1/R (module docs: in n = v₀²κ̂/(gλ) − 2ẑκ̂ + cos θ only the scale λ changes with
/// size), so the secant lands on the root in one step and the next evaluation confirms it; with
/// losses the margin stays smooth in 1/R and the secant converges superlinearly (Press et al.,
/// Numerical Recipes 3rd ed. §9.2). About 3 evaluations where Brent on ln R takes 8 or so.
fn secant_root(
    f: &mut impl FnMut(f64) -> f64,
    a: (f64, f64),
    x1: f64,
    window: (f64, f64),
    tol: f64,
) -> Secant {
    let u = |x: f64| (-x).exp();
    let (mut x0, mut f0) = a;
    let mut x1 = x1;
    let mut f1 = f(x1);
    // The tightest known sign change: (last ln R with margin ≥ 0, first with margin < 0).
    let (mut pass, mut fail) = (None::<f64>, None::<f64>);
    let mut note = |x: f64, fx: f64| {
        if fx >= 0.0 {
            pass = Some(pass.map_or(x, |p| p.max(x)));
        } else {
            fail = Some(fail.map_or(x, |p| p.min(x)));
        }
    };
    note(x0, f0);
    for _ in 0..SECANT_STEPS {
        note(x1, f1);
        if f1 == 0.0 {
            return Secant::Root(x1);
        }
        if f1 == f0 || !f1.is_finite() || !f0.is_finite() {
            break;
        }
        let u2 = u(x1) - f1 * (u(x1) - u(x0)) / (f1 - f0);
        if u2 <= 0.0 {
            break;
        }
        let x2 = -u2.ln();
        if !(window.0..=window.1).contains(&x2) {
            break;
        }
        if (x2 - x1).abs() < tol {
            return Secant::Root(x2);
        }
        (x0, f0) = (x1, f1);
        x1 = x2;
        f1 = f(x1);
    }
    match (pass, fail) {
        (Some(p), Some(f)) if p < f => Secant::Bracket(p, f),
        _ => Secant::Lost,
    }
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
