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
    Design, EvalFailure, Evaluation, Infeasible, Nearest, conditions, eval_failure, evaluate,
    limit_field,
};
use crate::brief::{Brief, Objective, ShapeKind};
use crate::checks::onset_for_limit;
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

    /// Sum of limit violations (0 when every limit holds).
    fn violation(&self, e: &Evaluation) -> f64 {
        let (b, s) = (self.brief, &e.summary);
        let m = MARGIN;
        let mut v = (s.peak_normal_g - b.max_g + m).max(0.0)
            + (b.min_top_g + m - s.top_normal_g).max(0.0)
            + (b.min_radius_m + m - s.min_radius_m).max(0.0);
        if let Some(o) = b.max_onset_g_s {
            v += (onset_for_limit(s) - o + m).clamp(0.0, 1e3);
        }
        if let Some(h) = b.max_height_m {
            v += (s.loop_height_m - h + m).max(0.0);
        }
        v
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
) -> Vec<f64> {
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
    let found = match NelderMead::new(simplex).with_sd_tolerance(1e-6) {
        Ok(solver) => Executor::new(
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
        .ok()
        .and_then(|r| r.state().get_best_param().cloned())
        .unwrap_or_else(|| x0.clone()),
        Err(_) => x0.clone(),
    };
    let found = problem.clamp(&found);
    if let Objective::Height { height_m } = brief.objective
        && let Some(shifted) = match_height(&problem, &found, height_m)
    {
        return shifted;
    }
    found
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
pub fn design_profile(brief: &Brief, kind: ShapeKind) -> Result<Design, Infeasible> {
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
    } else {
        target.written_loads()
    };
    let best = evaluate(brief, kind, &shape, 1.0, brief.spacing_m)
        .map_err(|e| eval_failure(brief, kind, e))?;
    let verification = evaluate(brief, kind, &shape, 1.0, brief.spacing_m / 4.0)
        .map_err(|e| eval_failure(brief, kind, e))?;
    if !verification.verdict.pass || !best.verdict.pass {
        let mut reasons = Vec::new();
        let mut nearest = Vec::new();
        for l in verification.verdict.failures() {
            let (field, unit) = limit_field(l.limit);
            reasons.push(format!(
                "{} is {:.3} {unit}, limit {field} = {:.3} {unit}",
                l.label, l.value, l.limit_value
            ));
            if l.value.is_finite() {
                nearest.push(Nearest {
                    field,
                    value: l.value,
                    unit,
                });
            }
        }
        reasons.push(if spec.tune {
            "tuning the control loads found no profile meeting every limit".into()
        } else {
            "the loads were used as written; set tune = true in [profile] to let the optimiser adjust them".into()
        });
        return Err(Infeasible {
            shape: kind,
            reasons,
            nearest,
        });
    }
    Ok(Design {
        brief: brief.clone(),
        shape_labels: target.labels().to_vec(),
        best,
        verification,
        evaluations: counter.load(Ordering::Relaxed) + 2,
    })
}
