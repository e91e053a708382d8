//! loopwright: vertical-loop geometry for roller-coaster concept studies.
//!
//! Data flows one way, one module per stage:
//! [`brief`] → [`shape`] → [`geometry`] → [`dynamics`] → [`checks`] → [`optimiser`] → [`export`]
//! (with [`report`] for the terminal). No stage uses a later one. `check` enters through
//! [`import`] (a centreline from a file) and [`geometry::fit`] instead of [`shape`]. Studies over
//! many loops, [`compare`] (every family) and [`sweep`] (a grid of briefs), sit between optimiser
//! and export. [`numeric`] (quadrature rules, cubic splines) sits below them all and imports none.
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
pub mod numeric;
pub mod optimiser;
pub mod report;
pub mod shape;
pub mod sweep;
pub mod units;
