//! Dynamics: speed, time and the loads a rider feels along a centreline.
//!
//! Speed follows from energy with losses. With u = v², along heartline arc length s:
//!
//! du/ds = −2g·sin θ − 2μ·|a⊥| − k·u,   k = ρ·CdA/m,
//!
//! where a⊥ is the contact (specific) force perpendicular to the track, in m/s², μ the rolling
//! resistance coefficient and CdA the drag area. We integrate it as u = v₀² − 2g·(z − z₀) − D(s)
//! with the losses D(s) = ∫(2μ|a⊥| + k·u) ds, so the lossless case conserves energy exactly
//! (to rounding) and only the loss integral carries truncation error (trapezoid, second order).
//! The loss law itself is [`Losses`], shared with the force-first solver of the optimiser.
//!
//! Loads are the specific force f = a − g⃗ the seat applies, in g, resolved on the rider's axes:
//! normal (towards the head) n = v²κ/g + cos θ in a planar loop, tangential (forward), lateral (left).
//! Onset is dn/dt, from central differences within each smooth piece of the path; at a curvature
//! step the load jumps and the jump is reported separately (its onset is unbounded).
//!
//! Trains ([`simulate_train`]): N equal cars a fixed pitch p apart along the heartline move as one
//! rigid chain, all at one speed v. With the lead car at s, car j sits at s_j = s − j·p. Energy of
//! the whole train (each car of mass m = M/N): d/ds(½Mv²) = −Σⱼ m·g·dzⱼ/ds − Σⱼ μ·m·|a⊥ⱼ| − ½ρCdA·v²,
//! and dividing by ½M,
//!
//! d(v²)/ds = −2g·meanⱼ(sin θⱼ) − 2μ·meanⱼ|a⊥ⱼ| − k·v²,   k = ρ·CdA/M,
//!
//! so the speed follows the height of the train's centre of mass, z̄ = meanⱼ zⱼ, and we integrate
//! u = v₀² − 2g·(z̄ − z̄₀) − D exactly as for the point mass. Each car feels f = a − g⃗ at its own
//! place: normal and lateral from v² and its own curvature, and forward a_t + g·sin θⱼ with the
//! common a_t = ½ du/ds, i.e. g·(sin θⱼ − mean sin θ) − (losses)/2 — the couplers push the cars
//! still climbing and hold back those already falling. The model is derived here from the energy
//! balance of a rigid, inextensible chain of equal masses (first principles). Train-length effects
//! on coaster loads are discussed in the physics-education literature (e.g. A.-M. Pendrill's
//! roller-coaster papers in Physics Education — cited from memory, not checked against the text).
//! One integrator runs every train; with one car it is the point-mass model ([`simulate`]).
//!
//! Cars not on the sampled path (behind the entry while the lead car is near it, or past the exit
//! while the rear car finishes) run on a straight continuation of the first or last station's
//! tangent: a virtual extension of the lead track. The entry speed is the train's speed when the
//! lead car is at the start of the path, the rest of the train behind it on that extension.
//!
//! Files: `losses.rs` the loss law; `ride.rs` the one ride integrator and the loads it derives;
//! `train.rs` the train, the order in which its cars pass the stations and where each car is.
//!
//! ```
//! use loopwright::{dynamics::{simulate, Conditions}, geometry::Centreline, shape::family, brief::ShapeKind};
//! let c = Centreline::build(&family(ShapeKind::Circle).unwrap().curvature(&[], 10.0).unwrap(), 1.1, 0.05);
//! let ride = simulate(&c, &Conditions::lossless(25.0)).unwrap();
//! // Bottom of a circle entered at v: n = 1 + v²/(gR).
//! let g = loopwright::units::STANDARD_GRAVITY_M_S2;
//! assert!((ride.points[0].normal_g - (1.0 + 625.0 / (g * 10.0))).abs() < 1e-9);
//! ```

mod losses;
mod ride;
mod train;

pub use losses::Losses;
pub use ride::{simulate, simulate_train};
pub use train::{Train, TrainRide};

/// What the dynamics need beyond the path.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Conditions {
    pub entry_speed_m_s: f64,
    /// Rolling resistance coefficient μ (dimensionless).
    pub rolling_resistance: f64,
    /// Drag per metre, k = ρ·CdA/m, 1/m.
    pub drag_per_metre: f64,
}

impl Conditions {
    /// No rolling resistance, no drag.
    pub fn lossless(entry_speed_m_s: f64) -> Self {
        Self {
            entry_speed_m_s,
            rolling_resistance: 0.0,
            drag_per_metre: 0.0,
        }
    }

    /// The loss law for these conditions.
    pub fn losses(&self) -> Losses {
        Losses {
            rolling_resistance: self.rolling_resistance,
            drag_per_metre: self.drag_per_metre,
        }
    }
}

/// Loads and motion at one station.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct LoadPoint {
    pub s_m: f64,
    pub time_s: f64,
    pub speed_m_s: f64,
    /// Normal load towards the rider's head, g (negative: the rider leaves the seat).
    pub normal_g: f64,
    /// Forward load, g (the seat back pushing: positive).
    pub tangential_g: f64,
    /// Load towards the rider's left, g.
    pub lateral_g: f64,
    /// dn/dt, g/s.
    pub onset_g_s: f64,
}

/// A step in normal load at a curvature step.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct LoadStep {
    pub s_m: f64,
    pub jump_g: f64,
}

/// The ride along a centreline.
#[derive(Debug, Clone, PartialEq)]
pub struct Ride {
    pub points: Vec<LoadPoint>,
    pub steps: Vec<LoadStep>,
}

/// The train ran out of speed before the end of the path.
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
#[error("the train stalls at s = {s_m:.2} m (speed reaches zero at height {height_m:.2} m)")]
pub struct Stall {
    pub s_m: f64,
    pub height_m: f64,
}
