//! Compare: one brief designed with every shape family, side by side.
//!
//! This stage sits after the optimiser: it runs [`design_family`] once per family (in parallel) and
//! keeps each outcome, feasible or not, so that an infeasible family stays in the table with its
//! reason instead of aborting the others. An infeasible family is still shown: sized where its
//! binding limit is just met ([`Shown`]; e.g. a circle under 4.5 g at the largest size meeting the
//! top-load limit, where it peaks near 6 + n_top g), evaluated by the model, its failing limits
//! named, so the comparison shows what the family would cost. [`KeyFigures`] is the flat set of numbers a concept study
//! quotes for one design; the sweep stage reuses it for its rows. Files (CSV, JSON, SVG overlays)
//! are encoded by the export stage.
//!
//! ```no_run
//! use loopwright::{brief::Brief, compare::compare};
//! let c = compare(&Brief::demo(), &loopwright::brief::ShapeKind::ALL);
//! for e in &c.entries {
//!     match &e.result {
//!         Ok(d) => println!("{}: {:.2} m", e.kind, d.best.summary.loop_height_m),
//!         Err(why) => println!("{}: infeasible: {why}", e.kind),
//!     }
//! }
//! ```

use std::sync::atomic::{AtomicUsize, Ordering};

use rayon::prelude::*;
use serde::Serialize;

use crate::brief::{Brief, Objective, ShapeKind};
use crate::checks::limits::{LimitKind, Side};
use crate::model::{self, Assessment};
use crate::optimiser::{
    Infeasible, SizeRange, curve_of, design_family, height_per_radius, size_range,
};
use crate::shape::{LoadProfile, family};

/// The key figures of one design, as quoted in compare tables and sweep rows.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct KeyFigures {
    /// Heartline: top above entry, m.
    pub loop_height_m: f64,
    /// Rail centreline: highest point above rail at entry, m.
    pub rail_height_m: f64,
    /// Heartline arc length of the loop proper, m.
    pub path_length_m: f64,
    /// Horizontal distance from loop entry to loop exit, m.
    pub footprint_length_m: f64,
    pub top_radius_m: f64,
    pub min_radius_m: f64,
    pub peak_normal_g: f64,
    pub top_normal_g: f64,
    pub top_speed_m_s: f64,
    /// Largest |dn/dt| on the smooth parts of the path, g/s.
    pub peak_onset_g_s: f64,
    /// Largest jump of normal load at a curvature step, g (0 when curvature is continuous; any
    /// jump makes the onset unbounded there).
    pub max_load_step_g: f64,
    pub time_in_loop_s: f64,
    pub exit_speed_m_s: f64,
}

impl KeyFigures {
    /// The figures of the reported (not the verification) evaluation, as the design report gives them.
    pub fn of(d: &Assessment) -> KeyFigures {
        let s = &d.best.summary;
        KeyFigures {
            loop_height_m: s.loop_height_m,
            rail_height_m: s.rail_height_m,
            path_length_m: s.path_length_m,
            footprint_length_m: s.footprint_length_m,
            top_radius_m: d.best.top_radius_m,
            min_radius_m: s.min_radius_m,
            peak_normal_g: s.peak_normal_g,
            top_normal_g: s.top_normal_g,
            top_speed_m_s: s.top_speed_m_s,
            peak_onset_g_s: s.peak_onset_g_s,
            max_load_step_g: s.max_load_step_g,
            time_in_loop_s: s.time_in_loop_s,
            exit_speed_m_s: s.exit_speed_m_s,
        }
    }

    /// Whether the onset is unbounded somewhere (the normal load steps at a curvature step).
    pub fn onset_unbounded(&self) -> bool {
        self.max_load_step_g > 1e-9
    }
}

/// One family's outcome.
#[derive(Debug, Clone)]
pub struct Entry {
    pub kind: ShapeKind,
    pub result: Result<Assessment, Infeasible>,
    /// For an infeasible family, the loop it would be at its binding limit (`None` when feasible,
    /// or when no size meets even that limit).
    pub failing: Option<Shown>,
}

/// An infeasible family's loop, sized where the limit that sets its size is just met and
/// assessed like any design, with the limits it then fails.
#[derive(Debug, Clone)]
pub struct Shown {
    pub assessment: Assessment,
    /// How it was sized, for reports (e.g. "largest size meeting min_top_g").
    pub sized: String,
    /// The brief limits it fails there.
    pub fails: Vec<LimitKind>,
}

impl Entry {
    /// Key figures if feasible, else the reason text.
    pub fn figures(&self) -> Result<KeyFigures, String> {
        match &self.result {
            Ok(d) => Ok(KeyFigures::of(d)),
            Err(e) => Err(e.to_string()),
        }
    }

    /// The loop drawn and tabulated for this family: the design, or the failing loop.
    pub fn shown(&self) -> Option<&Assessment> {
        match &self.result {
            Ok(d) => Some(d),
            Err(_) => self.failing.as_ref().map(|f| &f.assessment),
        }
    }

    /// Key figures of the loop shown (feasible or failing).
    pub fn shown_figures(&self) -> Option<KeyFigures> {
        self.shown().map(KeyFigures::of)
    }

    /// Whether the shown loop fails `limit` (never for a feasible family).
    pub fn fails(&self, limit: LimitKind) -> bool {
        self.failing
            .as_ref()
            .is_some_and(|f| f.fails.contains(&limit))
    }
}

/// Size an infeasible family where its binding limit is just met and assess it: for the tallest
/// objective, the largest loop of the family's default shape that meets the size-capping limits
/// (top load, height: [`Side::Upper`]), which is where the optimiser would have stopped had the
/// other limits allowed; for a height objective, the asked height. `None` if not even that works.
fn sized_at_binding_limit(brief: &Brief, kind: ShapeKind) -> Option<Shown> {
    // A force-first family has no size to choose: it is shown with its target loads as written.
    let (shape, labels) = match family(kind) {
        Some(fam) => (fam.default_shape(), fam.shape_labels().to_vec()),
        None => {
            let target = LoadProfile::new(brief.profile.clone()?);
            (target.written_loads(), target.labels().to_vec())
        }
    };
    let counter = AtomicUsize::new(0);
    let (r, sized) = match brief.objective {
        _ if family(kind).is_none() => (1.0, "its target loads".to_string()),
        Objective::Height { height_m } => (
            height_m / height_per_radius(kind, &shape)?,
            format!("the asked height {height_m:.2} m"),
        ),
        Objective::Tallest => match size_range(brief, kind, &shape, true, &counter).ok()? {
            SizeRange::Feasible { hi_m, .. }
            | SizeRange::Gap { hi_m, .. }
            | SizeRange::LowerFailsEverywhere { hi_m } => (hi_m, String::new()),
            SizeRange::UpperFailsEverywhere => return None,
        },
    };
    let curve = curve_of(brief, kind, &shape, r).ok()?;
    let a = model::assess(brief, &curve, labels, counter.load(Ordering::Relaxed)).ok()?;
    let v = &a.verification.verdict;
    let fails: Vec<LimitKind> = v.failures().map(|l| l.limit).collect();
    let sized = if sized.is_empty() {
        // The size-capping limit closest to its bound is the one met.
        let binding = v
            .lines
            .iter()
            .filter(|l| l.pass && l.limit.side() == Side::Upper)
            .min_by(|a, b| a.margin.abs().total_cmp(&b.margin.abs()))
            .map_or("the size-capping limits", |l| l.limit.field());
        format!("largest size meeting {binding}")
    } else {
        sized
    };
    Some(Shown {
        assessment: a,
        sized,
        fails,
    })
}

/// The brief designed with several families.
#[derive(Debug, Clone)]
pub struct Comparison {
    pub brief: Brief,
    /// In the order the families were asked for.
    pub entries: Vec<Entry>,
}

impl Comparison {
    /// How many families produced a feasible loop.
    pub fn feasible_count(&self) -> usize {
        self.entries.iter().filter(|e| e.result.is_ok()).count()
    }
}

/// Design `brief` with each of `kinds` (the brief's own `shape` is ignored). Families run in
/// parallel; each result is exactly what [`design_family`] returns for it alone, and an
/// infeasible one is also sized at its binding limit ([`Entry::failing`]).
pub fn compare(brief: &Brief, kinds: &[ShapeKind]) -> Comparison {
    let entries = kinds
        .par_iter()
        .map(|&kind| {
            let mut b = brief.clone();
            b.shape = kind;
            let result = design_family(&b, kind);
            let failing = match result {
                Ok(_) => None,
                Err(_) => sized_at_binding_limit(&b, kind),
            };
            Entry {
                kind,
                result,
                failing,
            }
        })
        .collect();
    Comparison {
        brief: brief.clone(),
        entries,
    }
}
