//! Design with the force-first `profile` family: the loads as written, or tuned.
//!
//! The curvature comes from the solver ([`solve`]): [`curvature`] turns a brief and control loads
//! into the loop's [`CurvatureProfile`], for [`super::evaluate`] to ride and check.
//!
//! A force-first loop has no free size (the ride sets it), so there is no size search. With
//! `tune = false` the brief's control loads are used exactly and the result is checked. With
//! `tune = true`, [`ProfileCost`] (an argmin `CostFunction` over the control loads) is minimised
//! by Nelder–Mead: for `tallest`, minus the loop height with a penalty for every limit missed; for
//! a target height, the peak load with a penalty for the height error. A target height is then met
//! exactly by shifting all control loads by one common offset (bisection: a higher load everywhere
//! makes a smaller loop).

mod solve;

pub use solve::{ProfileSolver, SolvedProfile};

use argmin::core::{CostFunction, Error as ArgminError, Executor, State};
use argmin::solver::neldermead::NelderMead;
use std::sync::atomic::{AtomicUsize, Ordering};

use super::{
    Assessment, EvalFailure, Evaluation, Infeasible, SolverFailure, conclude, conditions, curve_of,
    eval_failure, evaluate, solver_failure,
};
use crate::brief::{Brief, Objective, ShapeKind};
use crate::checks::limits::{LimitKind, limits_of};
use crate::shape::{CurvatureProfile, LoadProfile, ShapeError};

/// The solver for the brief's target load profile (`None` without a `[profile]` table). The
/// brief's entry speed is where the lead-in starts, as for every family; the loop proper starts
/// after the losses of the level lead-in ([`crate::dynamics::Losses::after_level_run`]).
pub fn solver(brief: &Brief) -> Option<ProfileSolver> {
    let spec = brief.profile.as_ref()?;
    let losses = conditions(brief).losses();
    let u = losses.after_level_run(brief.entry_speed_m_s.powi(2), brief.lead_length_m);
    Some(ProfileSolver::new(
        LoadProfile::new(spec.clone()),
        u.max(0.0).sqrt(),
        losses,
    ))
}

/// The brief's force-first loop for control loads `shape`, with the brief's lead track.
pub fn curvature(brief: &Brief, shape: &[f64]) -> Result<CurvatureProfile, ShapeError> {
    let solver = solver(brief).ok_or_else(|| ShapeError {
        family: ShapeKind::Profile.name(),
        message: "needs a [profile] table in the brief".into(),
    })?;
    let segments = solver.solve(shape)?.segments;
    Ok(CurvatureProfile::with_leads(segments, brief.lead_length_m))
}

/// Weight of a limit violation (per g, g/s or m) against the objective.
const PENALTY: f64 = 1000.0;
/// The search keeps this far inside every limit (g, g/s or m): the penalty is soft, and the coarse
/// search sampling differs slightly from the fine verification.
const MARGIN: f64 = 5e-3;

/// Problem: the objective over the control loads of a force-first loop.
pub struct ProfileCost<'a> {
    pub brief: &'a Brief,
    pub kind: ShapeKind,
    pub bounds: &'a [(f64, f64)],
    pub counter: &'a AtomicUsize,
}

impl ProfileCost<'_> {
    /// Parameters clamped into their bounds (Nelder–Mead itself is unbounded).
    pub fn clamp(&self, p: &[f64]) -> Vec<f64> {
        p.iter()
            .zip(self.bounds)
            .map(|(v, (lo, hi))| v.clamp(*lo, *hi))
            .collect()
    }

    fn coarse(&self, shape: &[f64]) -> Result<Evaluation, EvalFailure> {
        self.counter.fetch_add(1, Ordering::Relaxed);
        // The loop's size is unknown before solving; 0.25 m is coarse for any loop worth riding.
        evaluate(
            self.brief,
            self.kind,
            shape,
            1.0,
            self.brief.spacing_m.max(0.25),
        )
    }

    /// Sum of limit violations, each limit moved [`MARGIN`] inwards (0 when every limit holds;
    /// an unbounded onset counts as 1000 g/s).
    fn violation(&self, e: &Evaluation) -> f64 {
        limits_of(self.brief)
            .iter()
            .map(|l| {
                let cap = if l.kind == LimitKind::MaxOnset {
                    1e3
                } else {
                    f64::INFINITY
                };
                l.shortfall(l.kind.measure(&e.summary), MARGIN, cap)
            })
            .sum()
    }

    pub fn shape_cost(&self, p: &[f64]) -> f64 {
        let shape = self.clamp(p);
        let e = match self.coarse(&shape) {
            Ok(e) => e,
            Err(_) => return 1e6,
        };
        let s = &e.summary;
        match self.brief.objective {
            Objective::Tallest => {
                let h = self
                    .brief
                    .max_height_m
                    .map_or(s.loop_height_m, |m| s.loop_height_m.min(m));
                -h + 1e-3 * s.peak_normal_g + PENALTY * self.violation(&e)
            }
            Objective::Height { height_m } => {
                s.peak_normal_g
                    + PENALTY * self.violation(&e)
                    + 10.0 * (s.loop_height_m - height_m).abs()
            }
        }
    }
}

impl CostFunction for ProfileCost<'_> {
    type Param = Vec<f64>;
    type Output = f64;
    fn cost(&self, p: &Vec<f64>) -> Result<f64, ArgminError> {
        Ok(self.shape_cost(p))
    }
}

/// Control loads tuned for the brief's objective.
fn tune(
    brief: &Brief,
    kind: ShapeKind,
    x0: Vec<f64>,
    bounds: &[(f64, f64)],
    counter: &AtomicUsize,
) -> Result<Vec<f64>, SolverFailure> {
    const SOLVER: &str = "control-load tuning (Nelder-Mead)";
    let problem = ProfileCost {
        brief,
        kind,
        bounds,
        counter,
    };
    let mut simplex = vec![x0.clone()];
    for i in 0..x0.len() {
        let mut v = x0.clone();
        // Steps of 0.3 g, inwards at an upper bound.
        v[i] = if v[i] + 0.3 <= bounds[i].1 {
            v[i] + 0.3
        } else {
            v[i] - 0.3
        };
        simplex.push(v);
    }
    let solver = NelderMead::new(simplex)
        .with_sd_tolerance(1e-6)
        .map_err(|e| SolverFailure::argmin(SOLVER, e))?;
    let res = Executor::new(
        ProfileCost {
            brief,
            kind,
            bounds,
            counter,
        },
        solver,
    )
    .configure(|s| s.max_iters(150))
    .run()
    .map_err(|e| SolverFailure::argmin(SOLVER, e))?;
    let found = res.state().get_best_param().cloned().ok_or(SolverFailure {
        solver: SOLVER,
        reason: "no result".into(),
    })?;
    let found = problem.clamp(&found);
    if let Objective::Height { height_m } = brief.objective
        && let Some(shifted) = match_height(&problem, &found, height_m)
    {
        return Ok(shifted);
    }
    Ok(found)
}

/// Shift every control load by one offset so the loop is `height_m` tall (bisection on the offset).
fn match_height(problem: &ProfileCost<'_>, shape: &[f64], height_m: f64) -> Option<Vec<f64>> {
    let at = |c: f64| {
        let p: Vec<f64> = shape.iter().map(|v| v + c).collect();
        let p = problem.clamp(&p);
        let h = evaluate(
            problem.brief,
            problem.kind,
            &p,
            1.0,
            problem.brief.spacing_m,
        )
        .ok()?
        .summary
        .loop_height_m;
        Some((p, h))
    };
    // Height falls as the loads rise; bracket the offset within ±3 g.
    let (mut lo, mut hi) = (-3.0, 3.0);
    let mut best = None;
    for _ in 0..40 {
        let mid = 0.5 * (lo + hi);
        match at(mid) {
            // Too tall (or unsolvable because the loads are too low): raise the loads.
            Some((p, h)) => {
                if h > height_m {
                    lo = mid;
                } else {
                    hi = mid;
                }
                best = Some((p, h));
            }
            None => lo = mid,
        }
    }
    best.filter(|(_, h)| (h - height_m).abs() < 1e-3)
        .map(|(p, _)| p)
}

/// Design a force-first loop for the brief.
pub fn design_profile(brief: &Brief, kind: ShapeKind) -> Result<Assessment, Infeasible> {
    let spec = brief.profile.as_ref().ok_or_else(|| Infeasible {
        shape: kind,
        reasons: vec![
            "shape = \"profile\" needs a [profile] table with angles_deg and normal_g".into(),
        ],
        nearest: vec![],
    })?;
    let target = LoadProfile::new(spec.clone());
    let counter = AtomicUsize::new(0);
    let shape = if spec.tune {
        tune(
            brief,
            kind,
            target.written_loads(),
            target.bounds(),
            &counter,
        )
        .map_err(|e| solver_failure(kind, e))?
    } else {
        target.written_loads()
    };
    let curve = curve_of(brief, kind, &shape, 1.0).map_err(|e| eval_failure(brief, kind, e))?;
    conclude(
        brief,
        kind,
        &curve,
        target.labels().to_vec(),
        counter.load(Ordering::Relaxed) + 2,
        None,
        |verdict| {
            let mut reasons = Vec::new();
            for l in verdict.failures() {
                let (field, unit) = (l.limit.field(), l.limit.unit());
                reasons.push(format!(
                    "{} is {:.3} {unit}, limit {field} = {:.3} {unit}",
                    l.label, l.value, l.limit_value
                ));
            }
            reasons.push(if spec.tune {
                "tuning the control loads found no profile meeting every limit".into()
            } else {
                "the loads were used as written; set tune = true in [profile] to let the optimiser adjust them".into()
            });
            Infeasible {
                shape: kind,
                reasons,
                // Each hint re-designs the brief with it (the diagnosis's searches).
                nearest: super::diagnosis::nearest_feasible(brief, kind),
            }
        },
    )
}
