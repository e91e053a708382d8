//! Diagnosis: why no loop of a family meets a brief, and the nearest value of each brief field
//! that would work on its own.
//!
//! Every suggested value ([`Nearest`]) is found by re-running the whole design
//! ([`design_family`]) with it: a search along that one field (expanding steps from the brief's
//! value, then bisection), on a coarse sampling, and the value finally confirmed at the brief's own
//! spacing, rounded to the precision it is printed with. So a hint applied alone, as printed,
//! gives a feasible design. A field is suggested only when relaxing it alone can work: those are
//! the limits that bind. The designs a hint search runs do not search for hints themselves.

use serde::Serialize;
use std::cell::Cell;
use std::fmt;
use std::sync::atomic::AtomicUsize;

use super::size::{SizeRange, SolverFailure, radius_grid};
use super::{EvalFailure, design_family, evaluate};
use crate::brief::{Brief, Objective, ShapeKind, defaults};
use crate::checks::limits::{Bound, Side, limits_of};
use crate::checks::{Summary, Verdict};

/// A suggestion of the nearest value of a brief field that would make the brief feasible on its
/// own, confirmed by designing the brief with it. An infinite value means "switch the limit off".
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Nearest {
    pub field: &'static str,
    pub value: f64,
    pub unit: &'static str,
}

impl fmt::Display for Nearest {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.value.is_infinite() {
            write!(f, "{} = none", self.field)
        } else {
            write!(f, "{} = {:.3} {}", self.field, self.value, self.unit)
        }
    }
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
            let alts: Vec<String> = self.nearest.iter().map(Nearest::to_string).collect();
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
            nearest: nearest_feasible(brief, kind),
        },
    }
}

/// Explain a verdict's failures; the hints come from [`nearest_feasible`].
pub(crate) fn explain_failed_checks(
    brief: &Brief,
    kind: ShapeKind,
    v: &Verdict,
    _counter: &AtomicUsize,
) -> Infeasible {
    if probing() {
        return probe_failure(kind);
    }
    let mut reasons = Vec::new();
    for l in v.failures() {
        let (field, unit) = (l.limit.field(), l.limit.unit());
        if l.value.is_finite() {
            reasons.push(format!(
                "{} is {:.3} {unit}, limit {field} = {:.3} {unit}",
                l.label, l.value, l.limit_value
            ));
        } else {
            reasons.push(format!(
                "{} is unbounded: the curvature steps where the loop meets straight track (limit {field} = {:.3} {unit})",
                l.label, l.limit_value
            ));
        }
    }
    if let Objective::Height { height_m } = brief.objective {
        let mut tall = brief.clone();
        tall.objective = Objective::Tallest;
        if let Ok(d) = quietly(|| design_family(&tall, kind)) {
            reasons.push(format!(
                "the tallest {kind} loop these limits allow at {:.2} m/s is {:.2} m (asked for {height_m:.2} m)",
                brief.entry_speed_m_s, d.best.summary.loop_height_m
            ));
        }
    }
    if reasons.is_empty() {
        reasons.push("the design failed its final re-check at finer sampling".into());
    }
    Infeasible {
        shape: kind,
        reasons,
        nearest: nearest_feasible(brief, kind),
    }
}

/// Explain why no size of the best shape meets the brief (tallest objective).
pub(crate) fn explain_tallest(
    brief: &Brief,
    kind: ShapeKind,
    shape: &[f64],
    range: SizeRange,
    _counter: &AtomicUsize,
) -> Infeasible {
    if probing() {
        return probe_failure(kind);
    }
    let at = |r: f64| evaluate(brief, kind, shape, r, brief.spacing_m);
    let mut reasons = Vec::new();
    match range {
        SizeRange::Gap { lo_m, hi_m } => {
            // Loads fall as the loop grows: at the largest size the upper-side limits allow, some
            // lower-side limits fail; the smallest size meeting those is larger, and fails the top.
            let mut binding = Vec::new();
            if let Ok(e) = at(hi_m) {
                let s = e.summary;
                reasons.push(format!(
                    "at the largest size the top-load{} limit allows (top radius {hi_m:.2} m, top load {:.3} g), {}",
                    if brief.max_height_m.is_some() { " and height" } else { "" },
                    s.top_normal_g,
                    describe_failures(brief, &s, Side::Lower, &mut binding)
                ));
                if kind == ShapeKind::Circle && binding.contains(&"peak-load") {
                    reasons.push(format!(
                        "a circular loop needs a bottom load of at least 6 + n_top g (lossless closed form: {:.3} g for n_top = {:.3} g); the limit is {:.3} g",
                        6.0 + brief.min_top_g,
                        brief.min_top_g,
                        brief.max_g
                    ));
                }
            }
            // An unbounded onset (a curvature step) fails at every size: no loop is large enough.
            let step = binding.contains(&"onset")
                && at(hi_m).is_ok_and(|e| {
                    crate::checks::limits::onset_for_limit(&e.summary).is_infinite()
                });
            binding.retain(|n| !(step && *n == "onset"));
            let what = if binding.is_empty() {
                "the peak-load, onset and radius limits".to_string()
            } else {
                format!("the {} limit", binding.join(" and "))
            };
            let large = match at(lo_m) {
                Err(EvalFailure::Stall(_)) => format!(
                    "a loop large enough to meet {what} (top radius {lo_m:.2} m or more) stalls before its top"
                ),
                Ok(e) => format!(
                    "a loop large enough to meet {what} (top radius {lo_m:.2} m or more): {}",
                    upper_failures(brief, &e.summary)
                ),
                Err(e) => format!("a loop large enough to meet {what} cannot be evaluated: {e}"),
            };
            if !(step && binding.is_empty()) {
                reasons.push(large);
            }
        }
        SizeRange::UpperFailsEverywhere => {
            let r = radius_grid(brief)[0];
            reasons.push(match at(r) {
                Err(EvalFailure::Stall(stall)) => format!(
                    "even the smallest loop considered (top radius {r:.2} m) stalls: at {:.2} m/s {stall}",
                    brief.entry_speed_m_s
                ),
                Ok(e) => format!(
                    "even the smallest loop considered (top radius {r:.2} m) fails: {}",
                    upper_failures(brief, &e.summary)
                ),
                Err(e) => format!("even the smallest loop considered (top radius {r:.2} m): {e}"),
            });
        }
        SizeRange::LowerFailsEverywhere { hi_m } => {
            if let Ok(e) = at(hi_m) {
                let mut binding = Vec::new();
                reasons.push(format!(
                    "at every size {}",
                    describe_failures(brief, &e.summary, Side::Lower, &mut binding)
                ));
            } else {
                reasons.push("no size meets the peak-load, onset and radius limits".into());
            }
        }
        SizeRange::Feasible { .. } => {}
    }
    if reasons.is_empty() {
        reasons.push("no size meets every limit".into());
    }
    Infeasible {
        shape: kind,
        reasons,
        nearest: nearest_feasible(brief, kind),
    }
}

/// Say which limits of one side fail in `s` (with the value and the limit), and collect their
/// short names ("peak-load", ...) in `names`.
fn describe_failures(
    brief: &Brief,
    s: &Summary,
    side: Side,
    names: &mut Vec<&'static str>,
) -> String {
    let mut parts = Vec::new();
    for l in limits_of(brief).iter().filter(|l| l.kind.side() == side) {
        let v = l.kind.measure(s);
        if l.margin(v) >= 0.0 {
            continue;
        }
        names.push(short_name(l.kind.field()));
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
    }
    if parts.is_empty() {
        "the limits conflict".into()
    } else {
        parts.join(" and ")
    }
}

/// The failing limits of the upper side (top load, height) in `s`, described.
fn upper_failures(brief: &Brief, s: &Summary) -> String {
    describe_failures(brief, s, Side::Upper, &mut Vec::new())
}

/// A limit's short name for sentences ("the peak-load limit").
fn short_name(field: &str) -> &'static str {
    match field {
        "max_g" => "peak-load",
        "min_top_g" => "top-load",
        "max_onset_g_s" => "onset",
        "max_height_m" => "height",
        _ => "radius",
    }
}

// ---- hint searches -------------------------------------------------------------------------

thread_local! {
    /// Set while a hint search runs its designs: their failures need no explanation or hints.
    static PROBING: Cell<bool> = const { Cell::new(false) };
}

fn probing() -> bool {
    PROBING.with(Cell::get)
}

/// Run `f` with explanations and hint searches switched off (for the designs a search runs).
fn quietly<T>(f: impl FnOnce() -> T) -> T {
    let was = PROBING.with(|p| p.replace(true));
    let out = f();
    PROBING.with(|p| p.set(was));
    out
}

fn probe_failure(kind: ShapeKind) -> Infeasible {
    shape_failure(kind, "infeasible (hint probe)")
}

/// Sample spacing of the hint searches, m: coarse, since each candidate is a whole design; the
/// value found is confirmed at the brief's own spacing.
const HINT_SEARCH_SPACING_M: f64 = 0.25;
/// Decimals a hint is printed (and rounded) with, so that the printed value is the confirmed one.
const HINT_DECIMALS: f64 = 1e3;
/// Halvings of the bracket around a window edge.
const BISECTIONS: usize = 8;
/// Expanding steps tried on each side before giving up.
const EXPANSIONS: usize = 12;
/// Confirmation attempts at the brief's spacing, each a step further inside.
const NUDGES: usize = 4;

/// Which way a field may move to relax the brief.
#[derive(Clone, Copy, PartialEq)]
enum Relax {
    Up,
    Down,
    Either,
}

/// One brief field a hint may change: its range and the way it relaxes.
struct Field {
    name: &'static str,
    unit: &'static str,
    relax: Relax,
    lo: f64,
    hi: f64,
    /// Whether "no limit" (+∞) may be suggested when no finite value works.
    may_switch_off: bool,
}

impl Nearest {
    /// The brief with this hint applied (the field set to the value; +∞ switches a limit off).
    /// A field no hint names leaves the brief as it is.
    pub fn applied_to(&self, brief: &Brief) -> Brief {
        let (mut b, value) = (brief.clone(), self.value);
        match self.field {
            "max_g" => b.max_g = value,
            "min_top_g" => b.min_top_g = value,
            "max_onset_g_s" => b.max_onset_g_s = value.is_finite().then_some(value),
            "max_height_m" => b.max_height_m = value.is_finite().then_some(value),
            "min_radius_m" => b.min_radius_m = value,
            "entry_speed" => b.entry_speed_m_s = value,
            "height_m" => b.objective = Objective::Height { height_m: value },
            _ => {}
        }
        b
    }
}

/// The brief with `field` set to `value`, if that is a valid brief (ranges and cross-checks of
/// [`crate::brief::BriefInput::resolve`]).
fn with_field(brief: &Brief, field: &'static str, value: f64) -> Option<Brief> {
    let b = Nearest {
        field,
        value,
        unit: "",
    }
    .applied_to(brief);
    let height_ok = match (b.objective, b.max_height_m) {
        (Objective::Height { height_m }, Some(m)) => height_m <= m,
        _ => true,
    };
    (b.min_top_g < b.max_g && b.heartline_height_m < b.min_radius_m && height_ok).then_some(b)
}

/// The fields worth searching for this brief: its limits, the entry speed, and the height asked.
fn fields_of(brief: &Brief) -> Vec<Field> {
    let f = |name, unit, relax, lo, hi, may_switch_off| Field {
        name,
        unit,
        relax,
        lo,
        hi,
        may_switch_off,
    };
    let mut v = vec![
        f("max_g", "g", Relax::Up, brief.max_g, 20.0, false),
        f(
            "min_top_g",
            "g",
            Relax::Down,
            defaults::MIN_TOP_G_CRAWL,
            brief.min_top_g,
            false,
        ),
    ];
    if let Some(o) = brief.max_onset_g_s {
        v.push(f("max_onset_g_s", "g/s", Relax::Up, o, 1000.0, true));
    }
    if let Some(h) = brief.max_height_m {
        v.push(f("max_height_m", "m", Relax::Up, h, 500.0, true));
    }
    let r_lo = (brief.heartline_height_m + 1e-3).max(0.1);
    v.push(f(
        "min_radius_m",
        "m",
        Relax::Down,
        r_lo,
        brief.min_radius_m,
        false,
    ));
    v.push(f("entry_speed", "m/s", Relax::Either, 1.0, 150.0, false));
    if let Objective::Height { height_m } = brief.objective {
        let hi = brief.max_height_m.unwrap_or(500.0);
        v.push(f(
            "height_m",
            "m",
            Relax::Either,
            0.5,
            hi.max(height_m),
            false,
        ));
    }
    v
}

/// The brief's value of a field.
fn value_of(brief: &Brief, field: &str) -> f64 {
    match field {
        "max_g" => brief.max_g,
        "min_top_g" => brief.min_top_g,
        "max_onset_g_s" => brief.max_onset_g_s.unwrap_or(f64::INFINITY),
        "max_height_m" => brief.max_height_m.unwrap_or(f64::INFINITY),
        "min_radius_m" => brief.min_radius_m,
        "entry_speed" => brief.entry_speed_m_s,
        "height_m" => match brief.objective {
            Objective::Height { height_m } => height_m,
            Objective::Tallest => f64::NAN,
        },
        _ => f64::NAN,
    }
}

/// Whether the brief with `field = value` designs, at the given spacing (no hints inside).
fn designs(
    brief: &Brief,
    kind: ShapeKind,
    field: &'static str,
    value: f64,
    spacing_m: f64,
) -> bool {
    let Some(mut b) = with_field(brief, field, value) else {
        return false;
    };
    b.spacing_m = spacing_m;
    quietly(|| design_family(&b, kind).is_ok())
}

/// For every field whose change alone makes the brief feasible, the nearest such value, confirmed
/// by a design at the brief's spacing. Empty while a hint search itself is running.
pub(crate) fn nearest_feasible(brief: &Brief, kind: ShapeKind) -> Vec<Nearest> {
    if probing() {
        return Vec::new();
    }
    fields_of(brief)
        .iter()
        .filter_map(|f| nearest_value(brief, kind, f))
        .collect()
}

/// Round `v` to the printed precision, away from `bad` (towards the feasible side).
fn round_away(v: f64, bad: f64) -> f64 {
    let x = v * HINT_DECIMALS;
    (if bad > v { x.floor() } else { x.ceil() }) / HINT_DECIMALS
}

/// Search one field: expanding steps from the brief's value (both ways for `Either`), then
/// bisection between the last failing and the first working value, on the coarse spacing; the
/// edge is then rounded and confirmed at the brief's spacing, stepping further inside if needed.
fn nearest_value(brief: &Brief, kind: ShapeKind, f: &Field) -> Option<Nearest> {
    let v0 = value_of(brief, f.name);
    if !v0.is_finite() {
        return None;
    }
    let coarse = brief.spacing_m.max(HINT_SEARCH_SPACING_M);
    let ok = |v: f64| designs(brief, kind, f.name, v, coarse);
    let dirs: &[f64] = match f.relax {
        Relax::Up => &[1.0],
        Relax::Down => &[-1.0],
        Relax::Either => &[1.0, -1.0],
    };
    let end = |d: f64| if d > 0.0 { f.hi } else { f.lo };
    // A one-way limit relaxed as far as it goes must work, or it does not bind on its own.
    if f.relax != Relax::Either && !ok(end(dirs[0])) {
        return (f.may_switch_off && designs(brief, kind, f.name, f64::INFINITY, brief.spacing_m))
            .then_some(Nearest {
                field: f.name,
                value: f64::INFINITY,
                unit: f.unit,
            });
    }
    let step0 = match f.relax {
        Relax::Either => 0.01 * v0.abs().max(1.0),
        _ => (end(dirs[0]) - v0).abs() / 64.0,
    };
    let growth: f64 = if f.relax == Relax::Either { 1.6 } else { 2.0 };
    let mut last = vec![v0; dirs.len()];
    let mut found = None;
    'expand: for k in 0..EXPANSIONS {
        let step = step0 * growth.powi(k as i32);
        for (i, &d) in dirs.iter().enumerate() {
            let v = (v0 + d * step).clamp(f.lo, f.hi);
            if v == last[i] {
                continue;
            }
            if ok(v) {
                found = Some((v, last[i]));
                break 'expand;
            }
            last[i] = v;
        }
    }
    let (mut good, mut bad) = found?;
    for _ in 0..BISECTIONS {
        let mid = 0.5 * (good + bad);
        if ok(mid) { good = mid } else { bad = mid }
    }
    // Confirm at the brief's spacing, as printed; step further inside if the edge moved.
    let dir = if good > bad { 1.0 } else { -1.0 };
    let nudge0 = (good - bad).abs().max(1.0 / HINT_DECIMALS);
    (0..NUDGES)
        .map(|i| round_away(good + dir * nudge0 * (2f64.powi(i as i32) - 1.0), bad))
        .filter(|v| (f.lo..=f.hi).contains(v))
        .find(|&v| designs(brief, kind, f.name, v, brief.spacing_m))
        .map(|value| Nearest {
            field: f.name,
            value,
            unit: f.unit,
        })
}
