//! Diagnosis: why no loop of a family meets a brief, and the nearest value of a brief field that
//! would work, each found by re-running the search.

use serde::Serialize;
use std::fmt;
use std::sync::atomic::{AtomicUsize, Ordering};

use super::shape::search_shape;
use super::size::{SizeRange, SolverFailure, radius_grid, size_range};
use super::{EvalFailure, design_family, evaluate, height_per_radius};
use crate::brief::{Brief, Objective, ShapeKind};
use crate::checks::limits::{Bound, Limit, LimitKind, Side, limits_of};
use crate::checks::{Summary, Verdict};
use crate::shape::family;

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

/// A solver that stopped without an answer, as the reason a family has no design.
pub(crate) fn solver_failure(kind: ShapeKind, e: SolverFailure) -> Infeasible {
    shape_failure(
        kind,
        &format!(
            "{e}; try a coarser --spacing or relax a limit, and report the brief if it persists"
        ),
    )
}

pub(crate) fn shape_failure(kind: ShapeKind, msg: &str) -> Infeasible {
    Infeasible {
        shape: kind,
        reasons: vec![msg.to_string()],
        nearest: vec![],
    }
}

pub(crate) fn eval_failure(brief: &Brief, kind: ShapeKind, e: EvalFailure) -> Infeasible {
    match e {
        EvalFailure::Shape(m) => shape_failure(kind, &m),
        EvalFailure::Fit(f) => shape_failure(kind, &f.to_string()),
        EvalFailure::Stall(s) => Infeasible {
            shape: kind,
            reasons: vec![format!("at {:.2} m/s {s}", brief.entry_speed_m_s)],
            nearest: vec![],
        },
    }
}

/// Explain a verdict's failures and suggest, for each, the limit value that the design would meet.
pub(crate) fn explain_failed_checks(
    brief: &Brief,
    kind: ShapeKind,
    v: &Verdict,
    counter: &AtomicUsize,
) -> Infeasible {
    let mut reasons = Vec::new();
    let mut nearest = Vec::new();
    for l in v.failures() {
        let (field, unit) = (l.limit.field(), l.limit.unit());
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
    let fam = family(kind);
    let Ok(search) = search_shape(brief, fam.as_ref(), &counter) else {
        return false; // a solver failure is not a feasible design
    };
    let shape = search.shape;
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
pub(crate) fn explain_tallest(
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
                    let l = Limit { kind: LimitKind::MinTopG, value: brief.min_top_g };
                    nearest.push(Nearest { field: "min_top_g", value: l.admitting(l.kind.measure(&e.summary)), unit: "g" })
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
            Ok(SizeRange::Feasible { .. })
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

/// Say which of the limits that fail on small loops (peak load, onset, radius) fail in `s`, and
/// record the value that would pass.
fn describe_lower_failures(brief: &Brief, s: &Summary, nearest: &mut Vec<Nearest>) -> String {
    let mut parts = Vec::new();
    for l in limits_of(brief)
        .iter()
        .filter(|l| l.kind.side() == Side::Lower)
    {
        let v = l.kind.measure(s);
        if l.margin(v) >= 0.0 {
            continue;
        }
        let (field, unit) = (l.kind.field(), l.kind.unit());
        if !v.is_finite() {
            parts.push(format!(
                "the onset is unbounded where the curvature steps from straight track (a {:.3} g jump); no circular loop meets {field} = {:.3} {unit}",
                s.max_load_step_g, l.value
            ));
            continue;
        }
        let side = match l.kind.bound() {
            Bound::AtMost => "above",
            Bound::AtLeast => "below",
        };
        parts.push(format!(
            "the {} is {v:.3} {unit}, {side} {field} = {:.3} {unit}",
            l.kind.label(),
            l.value
        ));
        nearest.push(Nearest {
            field,
            value: l.admitting(v),
            unit,
        });
    }
    if parts.is_empty() {
        "the limits conflict".into()
    } else {
        parts.join(" and ")
    }
}
