//! Compare: one brief designed with every shape family, side by side.
//!
//! This stage sits after the optimiser: it runs [`design_family`] once per family (in parallel) and
//! keeps each outcome, feasible or not, so that an infeasible family stays in the table with its
//! reason instead of aborting the others. [`KeyFigures`] is the flat set of numbers a concept study
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

use rayon::prelude::*;
use serde::Serialize;

use crate::brief::{Brief, ShapeKind};
use crate::model::Assessment;
use crate::optimiser::{Infeasible, design_family};

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
}

impl Entry {
    /// Key figures if feasible, else the reason text.
    pub fn figures(&self) -> Result<KeyFigures, String> {
        match &self.result {
            Ok(d) => Ok(KeyFigures::of(d)),
            Err(e) => Err(e.to_string()),
        }
    }
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

/// Assessment `brief` with each of `kinds` (the brief's own `shape` is ignored). Families run in
/// parallel; each result is exactly what [`design_family`] returns for it alone.
pub fn compare(brief: &Brief, kinds: &[ShapeKind]) -> Comparison {
    let entries = kinds
        .par_iter()
        .map(|&kind| {
            let mut b = brief.clone();
            b.shape = kind;
            Entry {
                kind,
                result: design_family(&b, kind),
            }
        })
        .collect();
    Comparison {
        brief: brief.clone(),
        entries,
    }
}
