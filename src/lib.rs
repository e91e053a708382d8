//! loopwright: vertical-loop geometry for roller-coaster concept studies.
//!
//! One model chains the stages, and every command uses it:
//!
//! ```text
//! brief → centreline (a shape family at a size, a solved curvature, or a fitted drawing)
//!       → ride (speed, loads per car) → verdict (every limit, every car) → exports
//! ```
//!
//! [`brief`] → [`shape`] → [`geometry`] → [`dynamics`] → [`checks`] → [`model`] →
//! [`optimiser`] → [`compare`] / [`sweep`] → [`export`] and [`report`]. No module uses one later
//! in the flow; only [`model`] chains stages; only [`export`] and [`report`] format text; shape
//! families know no speed. `check` enters through [`import`] (a centreline from a file), which
//! the model fits with [`geometry::fit`].
//!
//! The front door: design a loop for a brief and read its key figures.
//!
//! ```
//! use loopwright::{Brief, design};
//! let mut brief = Brief::demo(); // 25 m/s, at most 4.5 g, at least 0.2 g at the top
//! brief.spacing_m = 0.2;         // a coarser sampling keeps the example quick
//! let d = design(&brief).expect("the demo brief is feasible");
//! let s = &d.verification.summary; // figures confirmed at a quarter of the spacing
//! assert!(s.peak_normal_g <= 4.5 && s.top_normal_g >= 0.2);
//! assert!(s.loop_height_m > 20.0);
//! ```
//!
//! CAUTION: results are for concept studies only. Final design must follow the governing standard
//! (e.g. ASTM F2291, EN 13814), local codes and a licensed engineer's review. Default limits are
//! illustrative.

pub mod brief;
pub mod checks;
pub mod cli;
pub mod compare;
pub mod dynamics;
pub mod export;
pub mod geometry;
pub mod import;
pub mod input;
pub mod model;
pub mod numeric;
pub mod optimiser;
pub mod report;
pub mod serve;
pub mod shape;
pub mod sweep;
pub mod units;

pub use brief::{Brief, BriefInput, ShapeKind};
pub use checks::{Summary, Verdict};
pub use model::{Assessment, Curve, Drawing, Evaluation, check, evaluate};
pub use optimiser::{Infeasible, design, design_family};
pub use report::CAUTION;
