//! The loss law: rolling resistance and aerodynamic drag, the one place it is written.
//!
//! With u = v² along heartline arc length s, a car losing energy to rolling resistance μ (on the
//! contact force a⊥ the track applies perpendicular to itself, in m/s²) and to drag k = ρ·CdA/m
//! (per metre) follows
//!
//! du/ds = −2g·sin θ − 2μ·|a⊥| − k·u.
//!
//! Every speed calculation uses this type: the ride integrator of this stage ([`Losses::rate`], the
//! loss part only, gravity being exact from heights), the force-first solver (the whole slope on a
//! planar path, [`Losses::planar_slope`]) and the level lead-in before a force-first loop (its
//! closed form, [`Losses::after_level_run`]).

use crate::units::STANDARD_GRAVITY_M_S2 as G;

/// Rolling resistance and drag of a train.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Losses {
    /// Rolling resistance coefficient μ (dimensionless).
    pub rolling_resistance: f64,
    /// Drag per metre, k = ρ·CdA/m, 1/m.
    pub drag_per_metre: f64,
}

impl Losses {
    /// No rolling resistance, no drag.
    pub const NONE: Losses = Losses {
        rolling_resistance: 0.0,
        drag_per_metre: 0.0,
    };

    /// 2μ·`per`: speed² lost per metre to rolling resistance per unit of contact force `per`.
    fn rolling(&self, per: f64) -> f64 {
        2.0 * self.rolling_resistance * per
    }

    /// k·u: speed² lost per metre to drag at speed² `speed_sq`.
    fn drag(&self, speed_sq: f64) -> f64 {
        self.drag_per_metre * speed_sq
    }

    /// Speed² lost per metre, 2μ·|a⊥| + k·u, at speed² `speed_sq` (m²/s²) with the contact force
    /// `contact_m_s2` = |a⊥| (m/s²).
    pub fn rate(&self, speed_sq: f64, contact_m_s2: f64) -> f64 {
        self.rolling(contact_m_s2) + self.drag(speed_sq)
    }

    /// The whole slope d(v²)/ds on a planar path at pitch `pitch_rad` where the seat pushes with
    /// `normal_g` (so |a⊥| = g·|n|): −2g·sin θ − 2μg·|n| − k·u. The rolling term is formed as
    /// (2μg)·|n|, the order the force-first solver has always used (its outputs are pinned to the
    /// bit by the golden files).
    pub fn planar_slope(&self, pitch_rad: f64, speed_sq: f64, normal_g: f64) -> f64 {
        -2.0 * G * pitch_rad.sin() - self.rolling(G) * normal_g.abs() - self.drag(speed_sq)
    }

    /// Speed² after `length_m` of level track entered at speed² `speed_sq` (may be negative: the
    /// train stopped before the end). On the level a⊥ = g, so du/ds = −2μg − k·u, whose solution is
    /// u = (u₀ + 2μg/k)·e^(−kL) − 2μg/k, or u₀ − 2μgL without drag.
    pub fn after_level_run(&self, speed_sq: f64, length_m: f64) -> f64 {
        let k = self.drag_per_metre;
        if k > 0.0 {
            (speed_sq + self.rolling(G) / k) * (-k * length_m).exp() - self.rolling(G) / k
        } else {
            speed_sq - self.rolling(G) * length_m
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The level-run closed form against its own ODE du/ds = −2μg − k·u (first principles),
    // integrated independently with many small RK4 steps.
    #[test]
    fn level_run_solves_its_differential_equation() {
        let losses = Losses {
            rolling_resistance: 0.015,
            drag_per_metre: 2.45e-4,
        };
        let (u0, length_m) = (24.0f64 * 24.0, 30.0);
        let f = |u: f64| -2.0 * 0.015 * G - 2.45e-4 * u;
        let steps = 3000;
        let h = length_m / steps as f64;
        let mut u = u0;
        for _ in 0..steps {
            let (a, b) = (f(u), f(u + h / 2.0 * f(u)));
            let c = f(u + h / 2.0 * b);
            let d = f(u + h * c);
            u += h / 6.0 * (a + 2.0 * b + 2.0 * c + d);
        }
        assert!((losses.after_level_run(u0, length_m) - u).abs() < 1e-9);
        // Without drag: u₀ − 2μgL exactly (first principles).
        let rolling = Losses {
            drag_per_metre: 0.0,
            ..losses
        };
        let expect = u0 - 2.0 * 0.015 * G * length_m;
        assert!((rolling.after_level_run(u0, length_m) - expect).abs() < 1e-12);
    }

    // On level track at rest in the vertical (pitch 0, n = 1 g) the planar slope is the level-run
    // slope −2μg − k·u, and on a frictionless climb at 90° it is −2g (first principles).
    #[test]
    fn planar_slope_is_the_law() {
        let losses = Losses {
            rolling_resistance: 0.02,
            drag_per_metre: 1e-3,
        };
        let u = 400.0;
        let expect = -2.0 * 0.02 * G - 1e-3 * u;
        assert!((losses.planar_slope(0.0, u, 1.0) - expect).abs() < 1e-12);
        assert!((losses.rate(u, G) + expect).abs() < 1e-12);
        let climb = Losses::NONE.planar_slope(std::f64::consts::FRAC_PI_2, u, 0.0);
        assert!((climb + 2.0 * G).abs() < 1e-12);
    }
}
