//! Limits as data: each of the brief's scalar limits is a [`Limit`] — which figure it bounds, from
//! which side, its brief field and unit — with one signed margin. The verdict, the optimiser's
//! search margins and penalties, and the infeasibility diagnosis all read limits through this
//! module; no other module knows what a limit means.
//!
//! Limits taken from a brief's defaults are ILLUSTRATIVE, not values from any standard.
//!
//! ```
//! use loopwright::checks::limits::{LimitKind, limits_of};
//! let limits = limits_of(&loopwright::Brief::demo());
//! let max_g = limits.iter().find(|l| l.kind == LimitKind::MaxG).unwrap();
//! assert_eq!((max_g.kind.field(), max_g.value), ("max_g", 4.5));
//! assert_eq!(max_g.margin(4.0), 0.5); // positive inside the limit
//! ```

use serde::Serialize;

use super::Summary;
use crate::brief::Brief;

/// Which limit a check line is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LimitKind {
    MaxG,
    MinTopG,
    MaxOnset,
    MaxHeight,
    MinRadius,
}

/// Whether a limit caps its figure or sets a floor.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Bound {
    AtMost,
    AtLeast,
}

/// Which end of a loop's size range a limit bounds: loads fall as a loop of fixed shape grows, so
/// the top-load floor and the height cap fail on big loops, the peak-load and onset caps and the
/// radius floor on small ones.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// Fails on big loops: top load, height (and a stall).
    Upper,
    /// Fails on small loops: peak load, onset, radius.
    Lower,
}

/// The margin a design keeps inside every limit of its brief, stated in the report (README "Design
/// margin", JSON `design_margin`). The search sizes and shapes a loop to clear each limit by this
/// much, so that a design does not sit exactly on a limit: re-checking its own drawing or loads
/// table (a smoothing fit, a different sampling) must still pass. The verdict itself compares
/// with the limit as written.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DesignMargin {
    /// On load limits (`max_g`, `min_top_g`), g: a little over the 0.01 g to which `check`
    /// reproduces a design's loads from its own files.
    pub load_g: f64,
    /// On the onset limit, as a fraction of the limit (onset comes from differences of the load,
    /// so it moves more than the load when a curve is refitted or resampled).
    pub onset_fraction: f64,
    /// On the height and radius limits, m (a fit of a design's points stays within 0.25 mm).
    pub length_m: f64,
}

/// The design margin of every design (see [`DesignMargin`]).
pub const DESIGN_MARGIN: DesignMargin = DesignMargin {
    load_g: 0.015,
    onset_fraction: 0.02,
    length_m: 0.005,
};

/// The onset limit keeps this fraction of itself in hand during the search: onset comes from
/// differences of the load, so it moves more than the loads when the sampling is refined, and the
/// verification at a quarter of the spacing must not tip it over.
const ONSET_SEARCH_SCALE: f64 = 0.995;
/// Reserve of a fixed-size search on the load limits, g (see [`Limit::fixed_size_reserve`]).
const FIXED_SIZE_LOAD_RESERVE_G: f64 = 1e-3;
/// Reserve of a fixed-size search on the length limits, as a fraction of the limit.
const FIXED_SIZE_LENGTH_RESERVE: f64 = 1e-3;
/// A search margin never goes below this: an unbounded onset (curvature step) must still give the
/// root finder a finite, clearly negative value.
const SEARCH_MARGIN_FLOOR: f64 = -1e3;

impl LimitKind {
    /// The brief field that sets it.
    pub fn field(self) -> &'static str {
        match self {
            LimitKind::MaxG => "max_g",
            LimitKind::MinTopG => "min_top_g",
            LimitKind::MaxOnset => "max_onset_g_s",
            LimitKind::MaxHeight => "max_height_m",
            LimitKind::MinRadius => "min_radius_m",
        }
    }

    pub fn unit(self) -> &'static str {
        match self {
            LimitKind::MaxG | LimitKind::MinTopG => "g",
            LimitKind::MaxOnset => "g/s",
            LimitKind::MaxHeight | LimitKind::MinRadius => "m",
        }
    }

    /// What the figure is, for reports.
    pub fn label(self) -> &'static str {
        match self {
            LimitKind::MaxG => "peak normal load",
            LimitKind::MinTopG => "least normal load while inverted",
            LimitKind::MaxOnset => "peak onset",
            LimitKind::MaxHeight => "loop height (heartline)",
            LimitKind::MinRadius => "smallest radius (heartline)",
        }
    }

    pub fn bound(self) -> Bound {
        match self {
            LimitKind::MaxG | LimitKind::MaxOnset | LimitKind::MaxHeight => Bound::AtMost,
            LimitKind::MinTopG | LimitKind::MinRadius => Bound::AtLeast,
        }
    }

    pub fn side(self) -> Side {
        match self {
            LimitKind::MinTopG | LimitKind::MaxHeight => Side::Upper,
            LimitKind::MaxG | LimitKind::MaxOnset | LimitKind::MinRadius => Side::Lower,
        }
    }

    /// The design's figure this limit bounds (an onset is unbounded where the load steps).
    pub fn measure(self, s: &Summary) -> f64 {
        match self {
            LimitKind::MaxG => s.peak_normal_g,
            // The least load anywhere the rider is inverted, not only at the apex station.
            LimitKind::MinTopG => s.min_inverted_normal_g,
            LimitKind::MaxOnset => onset_for_limit(s),
            LimitKind::MaxHeight => s.loop_height_m,
            LimitKind::MinRadius => s.min_radius_m,
        }
    }
}

/// The design's onset figure for the onset limit: unbounded if the load steps anywhere.
pub fn onset_for_limit(s: &Summary) -> f64 {
    if s.max_load_step_g > 1e-9 {
        f64::INFINITY
    } else {
        s.peak_onset_g_s
    }
}

/// One limit of a brief.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Limit {
    pub kind: LimitKind,
    /// The limit's value, in the kind's unit.
    pub value: f64,
}

impl Limit {
    /// Signed margin of a measured figure: positive inside the limit, negative outside.
    pub fn margin(&self, measured: f64) -> f64 {
        match self.kind.bound() {
            Bound::AtMost => self.value - measured,
            Bound::AtLeast => measured - self.value,
        }
    }

    /// The design margin of this limit in its own unit ([`DESIGN_MARGIN`]).
    pub fn design_margin(&self) -> f64 {
        match self.kind {
            LimitKind::MaxG | LimitKind::MinTopG => DESIGN_MARGIN.load_g,
            LimitKind::MaxOnset => DESIGN_MARGIN.onset_fraction * self.value.abs(),
            LimitKind::MaxHeight | LimitKind::MinRadius => DESIGN_MARGIN.length_m,
        }
    }

    /// The margin the size search works with: the margin beyond the design margin; the onset
    /// limit keeps a further 0.5 % of itself in hand, and no margin falls below a finite floor
    /// (see the constants).
    pub fn search_margin(&self, measured: f64) -> f64 {
        let m = match self.kind {
            LimitKind::MaxOnset => {
                (ONSET_SEARCH_SCALE * self.value - measured).max(SEARCH_MARGIN_FLOOR)
            }
            _ => self.margin(measured),
        };
        m - self.design_margin()
    }

    /// What a search at a fixed size (a height brief) keeps in hand beyond the design margin: a
    /// converged search sits on the limit as measured at the coarse spacing, and the winner is
    /// verified at a quarter of the brief's. Measured on the spline family's height grid
    /// (tests/global_optimum.rs): the smallest radius 1 mm lower at full fidelity on a 6 m limit,
    /// the peak onset 0.007 g/s higher on a 6 g/s one. Onset keeps what the size search keeps
    /// (0.5 %); loads 0.001 g; radius and height 0.1 %.
    pub fn fixed_size_reserve(&self) -> f64 {
        match self.kind {
            LimitKind::MaxOnset => (1.0 - ONSET_SEARCH_SCALE) * self.value.abs(),
            LimitKind::MaxG | LimitKind::MinTopG => FIXED_SIZE_LOAD_RESERVE_G,
            LimitKind::MaxHeight | LimitKind::MinRadius => {
                FIXED_SIZE_LENGTH_RESERVE * self.value.abs()
            }
        }
    }

    /// The loosest value of this limit that a design with figure `measured` meets with its design
    /// margin (and the onset's search reserve) to spare: what a hint should suggest.
    pub fn admitting(&self, measured: f64) -> f64 {
        match self.kind {
            LimitKind::MaxOnset => {
                measured / (ONSET_SEARCH_SCALE * (1.0 - DESIGN_MARGIN.onset_fraction))
            }
            _ => match self.kind.bound() {
                Bound::AtMost => measured + self.design_margin(),
                Bound::AtLeast => measured - self.design_margin(),
            },
        }
    }

    /// How far a figure is outside the limit moved inwards by its design margin and `reserve`
    /// (0 when inside), for soft penalties; an unbounded onset counts as `cap`.
    pub fn shortfall(&self, measured: f64, reserve: f64, cap: f64) -> f64 {
        let reserve = reserve + self.design_margin();
        let over = match self.kind.bound() {
            Bound::AtMost => measured - self.value + reserve,
            Bound::AtLeast => self.value + reserve - measured,
        };
        over.clamp(0.0, cap)
    }
}

/// Every scalar limit of a brief, in report order (peak load, top load, onset, height, radius);
/// the optional ones only when set.
pub fn limits_of(b: &Brief) -> Vec<Limit> {
    let mut v = vec![
        Limit {
            kind: LimitKind::MaxG,
            value: b.max_g,
        },
        Limit {
            kind: LimitKind::MinTopG,
            value: b.min_top_g,
        },
    ];
    if let Some(o) = b.max_onset_g_s {
        v.push(Limit {
            kind: LimitKind::MaxOnset,
            value: o,
        });
    }
    if let Some(h) = b.max_height_m {
        v.push(Limit {
            kind: LimitKind::MaxHeight,
            value: h,
        });
    }
    v.push(Limit {
        kind: LimitKind::MinRadius,
        value: b.min_radius_m,
    });
    v
}

/// One limit compared with the design's value.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CheckLine {
    pub limit: LimitKind,
    pub label: String,
    /// The design's value (infinite onset at a curvature step is written as null in JSON).
    pub value: f64,
    pub limit_value: f64,
    pub unit: &'static str,
    /// Positive inside the limit, negative outside.
    pub margin: f64,
    pub pass: bool,
}

/// All checks of one design.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Verdict {
    pub lines: Vec<CheckLine>,
    pub pass: bool,
}

impl Verdict {
    /// The failing lines.
    pub fn failures(&self) -> impl Iterator<Item = &CheckLine> {
        self.lines.iter().filter(|l| !l.pass)
    }
}

/// Compare a summary with limits.
pub fn check(s: &Summary, limits: &[Limit]) -> Verdict {
    let lines: Vec<CheckLine> = limits
        .iter()
        .map(|l| {
            let value = l.kind.measure(s);
            let margin = l.margin(value);
            CheckLine {
                limit: l.kind,
                label: l.kind.label().into(),
                value,
                limit_value: l.value,
                unit: l.kind.unit(),
                margin,
                pass: margin >= 0.0,
            }
        })
        .collect();
    let pass = lines.iter().all(|l| l.pass);
    Verdict { lines, pass }
}
