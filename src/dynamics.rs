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
//! With one car it is the point-mass model, operation for operation.
//!
//! Cars not on the sampled path (behind the entry while the lead car is near it, or past the exit
//! while the rear car finishes) run on a straight continuation of the first or last station's
//! tangent: a virtual extension of the lead track. The entry speed is the train's speed when the
//! lead car is at the start of the path, the rest of the train behind it on that extension.
//!
//! ```
//! use loopwright::{dynamics::{simulate, Conditions}, geometry::Centreline, shape::family, brief::ShapeKind};
//! let c = Centreline::build(&family(ShapeKind::Circle).curvature(&[], 10.0).unwrap(), 1.1, 0.05);
//! let ride = simulate(&c, &Conditions::lossless(25.0)).unwrap();
//! // Bottom of a circle entered at v: n = 1 + v²/(gR).
//! let g = loopwright::units::STANDARD_GRAVITY_M_S2;
//! assert!((ride.points[0].normal_g - (1.0 + 625.0 / (g * 10.0))).abs() < 1e-9);
//! ```

use nalgebra::Vector3;

use crate::geometry::Centreline;
use crate::units::STANDARD_GRAVITY_M_S2 as G;

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

/// Specific force the seat applies at speed² `u`, before the tangential loss term.
fn perpendicular_force(u: f64, kvec: &Vector3<f64>, tangent: &Vector3<f64>) -> Vector3<f64> {
    let up = Vector3::new(0.0, 0.0, G);
    // Centripetal part plus the part of "up" (−g⃗) perpendicular to the track.
    u * kvec + (up - up.dot(tangent) * tangent)
}

/// Run the train along the path.
pub fn simulate(path: &Centreline, cond: &Conditions) -> Result<Ride, Stall> {
    let st = &path.stations;
    let n = st.len();
    let v0sq = cond.entry_speed_m_s * cond.entry_speed_m_s;
    let z0 = st[0].heartline_m.z;
    let (mu, k) = (cond.rolling_resistance, cond.drag_per_metre);
    let loss_rate = |u: f64, i: usize| {
        let f = perpendicular_force(u, &st[i].curvature_vec_1_m, &st[i].tangent);
        2.0 * mu * f.norm() + k * u
    };
    let mut u = vec![0.0; n];
    let mut rate = vec![0.0; n];
    let mut losses = 0.0;
    u[0] = v0sq;
    rate[0] = loss_rate(v0sq, 0);
    for i in 1..n {
        let ds = st[i].s_m - st[i - 1].s_m;
        let u_free = v0sq - 2.0 * G * (st[i].heartline_m.z - z0);
        // Heun: predict with the rate at i−1, correct with the mean of both ends.
        let pred = u_free - (losses + ds * rate[i - 1]);
        let r_pred = loss_rate(pred.max(0.0), i);
        losses += 0.5 * ds * (rate[i - 1] + r_pred);
        u[i] = u_free - losses;
        if u[i] <= 0.0 {
            return Err(Stall {
                s_m: st[i].s_m,
                height_m: st[i].heartline_m.z - z0,
            });
        }
        rate[i] = loss_rate(u[i], i);
    }
    let mut points = Vec::with_capacity(n);
    let mut time_s = 0.0;
    for i in 0..n {
        let v = u[i].sqrt();
        if i > 0 {
            let ds = st[i].s_m - st[i - 1].s_m;
            // Exact for constant acceleration over the interval.
            time_s += 2.0 * ds / (v + points.last().map_or(v, |p: &LoadPoint| p.speed_m_s));
        }
        let f = perpendicular_force(u[i], &st[i].curvature_vec_1_m, &st[i].tangent);
        points.push(LoadPoint {
            s_m: st[i].s_m,
            time_s,
            speed_m_s: v,
            normal_g: f.dot(&st[i].head) / G,
            // Felt forward load is a_t + g·sinθ = −(losses per metre)/2.
            tangential_g: -rate[i] / (2.0 * G),
            lateral_g: f.dot(&st[i].left) / G,
            onset_g_s: 0.0,
        });
    }
    fill_onset(path, &mut points);
    let steps = steps_of(path, &points);
    Ok(Ride { points, steps })
}

/// A train: `cars` equal cars, `car_pitch_m` apart along the heartline (car 0 leads).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Train {
    pub cars: usize,
    pub car_pitch_m: f64,
}

impl Train {
    /// One car: the point-mass model.
    pub fn single() -> Self {
        Train {
            cars: 1,
            car_pitch_m: 0.0,
        }
    }
    /// Heartline distance from the front car to the rear car, m.
    pub fn length_m(&self) -> f64 {
        self.cars.saturating_sub(1) as f64 * self.car_pitch_m
    }
    /// Index of the middle car (the front one of the two middle cars for even counts).
    pub fn middle(&self) -> usize {
        self.cars.saturating_sub(1) / 2
    }
}

/// Every car's ride: `cars[j]` holds car j's loads at each station (the moment it passes it).
#[derive(Debug, Clone, PartialEq)]
pub struct TrainRide {
    pub train: Train,
    pub cars: Vec<Ride>,
}

/// Where a car is: height, unit tangent and curvature vector of the heartline there.
#[derive(Debug, Clone, Copy)]
struct CarPlace {
    z_m: f64,
    tangent: Vector3<f64>,
    kvec: Vector3<f64>,
}

/// The path at any arc length: cubic Hermite height (dz/ds = T_z, error O(h⁴)) and linear tangent
/// and curvature between stations; a straight continuation beyond either end.
fn place_at(path: &Centreline, s: f64) -> CarPlace {
    let st = &path.stations;
    let (first, last) = (&st[0], &st[st.len() - 1]);
    if s <= first.s_m {
        return CarPlace {
            z_m: first.heartline_m.z + first.tangent.z * (s - first.s_m),
            tangent: first.tangent,
            kvec: Vector3::zeros(),
        };
    }
    if s >= last.s_m {
        return CarPlace {
            z_m: last.heartline_m.z + last.tangent.z * (s - last.s_m),
            tangent: last.tangent,
            kvec: Vector3::zeros(),
        };
    }
    let hi = st.partition_point(|p| p.s_m <= s).min(st.len() - 1);
    let (a, b) = (&st[hi - 1], &st[hi]);
    let h = b.s_m - a.s_m;
    if h <= 0.0 {
        return CarPlace {
            z_m: a.heartline_m.z,
            tangent: a.tangent,
            kvec: a.curvature_vec_1_m,
        };
    }
    let t = (s - a.s_m) / h;
    let (t2, t3) = (t * t, t * t * t);
    let z = (2.0 * t3 - 3.0 * t2 + 1.0) * a.heartline_m.z
        + (t3 - 2.0 * t2 + t) * h * a.tangent.z
        + (-2.0 * t3 + 3.0 * t2) * b.heartline_m.z
        + (t3 - t2) * h * b.tangent.z;
    let tangent = (a.tangent * (1.0 - t) + b.tangent * t).normalize();
    CarPlace {
        z_m: z,
        tangent,
        kvec: a.curvature_vec_1_m * (1.0 - t) + b.curvature_vec_1_m * t,
    }
}

/// Run a train along the path (see the module docs for the model). A one-car train gives exactly
/// [`simulate`]'s ride.
pub fn simulate_train(
    path: &Centreline,
    cond: &Conditions,
    train: &Train,
) -> Result<TrainRide, Stall> {
    // A one-car chain is the point mass (the general integration below reproduces it exactly, see
    // `simulate_chain` and its test); the point-mass code is several times cheaper, and the
    // optimiser calls this hundreds of times per design.
    if train.cars <= 1 {
        return Ok(TrainRide {
            train: *train,
            cars: vec![simulate(path, cond)?],
        });
    }
    simulate_chain(path, cond, train)
}

/// The rigid-chain integration behind [`simulate_train`] for any number of cars, one included.
pub fn simulate_chain(
    path: &Centreline,
    cond: &Conditions,
    train: &Train,
) -> Result<TrainRide, Stall> {
    let st = &path.stations;
    let n = st.len();
    let cars = train.cars.max(1);
    let ncars = cars as f64;
    let pitch = train.car_pitch_m;
    // One entry per (car, station): the lead car's position when that car passes that station.
    // Sorted by a running maximum of the position, so that each car keeps its stations in path
    // order even where rounding makes the two stations at a curvature step differ by an ulp.
    let mut keyed: Vec<(f64, (f64, usize, usize))> = Vec::with_capacity(n * cars);
    for j in 0..cars {
        let mut run = f64::MIN;
        for (i, s) in st.iter().enumerate() {
            let s_lead = s.s_m + j as f64 * pitch;
            run = run.max(s_lead);
            keyed.push((run, (s_lead, j, i)));
        }
    }
    keyed.sort_by(|a, b| a.0.total_cmp(&b.0));
    let entries: Vec<(f64, usize, usize)> = keyed.into_iter().map(|(_, e)| e).collect();
    // Every car's place at an entry (computed as the integration reaches it, so memory stays
    // O(entries)); the car named by the entry is exactly on its station.
    let place_all = |e: usize, buf: &mut Vec<CarPlace>| {
        let (s_lead, jj, i) = entries[e];
        buf.clear();
        buf.extend((0..cars).map(|k| {
            if k == jj {
                CarPlace {
                    z_m: st[i].heartline_m.z,
                    tangent: st[i].tangent,
                    kvec: st[i].curvature_vec_1_m,
                }
            } else {
                place_at(path, s_lead - k as f64 * pitch)
            }
        }));
    };
    let mean =
        |buf: &[CarPlace], f: &dyn Fn(&CarPlace) -> f64| buf.iter().map(f).sum::<f64>() / ncars;
    let m = entries.len();
    let v0sq = cond.entry_speed_m_s * cond.entry_speed_m_s;
    let (mu, k) = (cond.rolling_resistance, cond.drag_per_metre);
    let loss_rate = |u: f64, buf: &[CarPlace]| {
        let load = mean(buf, &|c| perpendicular_force(u, &c.kvec, &c.tangent).norm());
        2.0 * mu * load + k * u
    };
    let mut buf = Vec::with_capacity(cars);
    let mut u = vec![0.0; m];
    let mut rate = vec![0.0; m];
    let mut tzbar = vec![0.0; m];
    let mut losses = 0.0;
    place_all(0, &mut buf);
    let z0 = mean(&buf, &|c| c.z_m);
    tzbar[0] = mean(&buf, &|c| c.tangent.z);
    u[0] = v0sq;
    rate[0] = loss_rate(v0sq, &buf);
    for e in 1..m {
        place_all(e, &mut buf);
        let zbar = mean(&buf, &|c| c.z_m);
        tzbar[e] = mean(&buf, &|c| c.tangent.z);
        let ds = entries[e].0 - entries[e - 1].0;
        let u_free = v0sq - 2.0 * G * (zbar - z0);
        let pred = u_free - (losses + ds * rate[e - 1]);
        let r_pred = loss_rate(pred.max(0.0), &buf);
        losses += 0.5 * ds * (rate[e - 1] + r_pred);
        u[e] = u_free - losses;
        if u[e] <= 0.0 {
            return Err(Stall {
                s_m: entries[e].0,
                height_m: zbar - z0,
            });
        }
        rate[e] = loss_rate(u[e], &buf);
    }
    let mut time = vec![0.0; m];
    for e in 1..m {
        let ds = entries[e].0 - entries[e - 1].0;
        time[e] = time[e - 1] + 2.0 * ds / (u[e].sqrt() + u[e - 1].sqrt());
    }
    let mut rides: Vec<Vec<LoadPoint>> = vec![Vec::with_capacity(n); cars];
    for (e, &(_, j, i)) in entries.iter().enumerate() {
        let f = perpendicular_force(u[e], &st[i].curvature_vec_1_m, &st[i].tangent);
        rides[j].push(LoadPoint {
            s_m: st[i].s_m,
            time_s: time[e],
            speed_m_s: u[e].sqrt(),
            normal_g: f.dot(&st[i].head) / G,
            tangential_g: (st[i].tangent.z - tzbar[e]) - rate[e] / (2.0 * G),
            lateral_g: f.dot(&st[i].left) / G,
            onset_g_s: 0.0,
        });
    }
    let cars_out = rides
        .into_iter()
        .map(|mut points| {
            // Each car's points are in station order: its keys never decrease and the sort is stable.
            fill_onset(path, &mut points);
            let steps = steps_of(path, &points);
            Ride { points, steps }
        })
        .collect();
    Ok(TrainRide {
        train: Train {
            cars,
            car_pitch_m: pitch,
        },
        cars: cars_out,
    })
}

/// dn/dt by central differences (one-sided at the ends of each smooth piece).
fn fill_onset(path: &Centreline, points: &mut [LoadPoint]) {
    let st = &path.stations;
    let n = points.len();
    for i in 0..n {
        let same = |j: usize| {
            st[j].piece == st[i].piece && (points[j].time_s - points[i].time_s).abs() > 0.0
        };
        let lo = if i > 0 && same(i - 1) { i - 1 } else { i };
        let hi = if i + 1 < n && same(i + 1) { i + 1 } else { i };
        if lo != hi {
            points[i].onset_g_s = (points[hi].normal_g - points[lo].normal_g)
                / (points[hi].time_s - points[lo].time_s);
        }
    }
}

fn steps_of(path: &Centreline, points: &[LoadPoint]) -> Vec<LoadStep> {
    let st = &path.stations;
    (1..points.len())
        .filter(|&i| st[i].piece != st[i - 1].piece)
        .map(|i| LoadStep {
            s_m: st[i].s_m,
            jump_g: points[i].normal_g - points[i - 1].normal_g,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::brief::ShapeKind;
    use crate::shape::family;

    fn circle(r: f64) -> Centreline {
        Centreline::build(
            &family(ShapeKind::Circle)
                .curvature_with_leads(&[], r, 3.0)
                .unwrap(),
            1.1,
            0.05,
        )
    }

    // Textbook vertical circular motion (e.g. Halliday, Resnick & Walker, "Fundamentals of
    // Physics", ch. 6): bottom n = 1 + v²/(gR), top n = v_top²/(gR) − 1 with v_top² = v² − 4gR.
    #[test]
    fn circle_matches_textbook_bottom_and_top() {
        let (v, r) = (25.0, 9.0);
        let path = circle(r);
        let ride = simulate(&path, &Conditions::lossless(v)).unwrap();
        let top = path.top_index();
        let vt2 = v * v - 4.0 * G * r;
        assert!((ride.points[top].normal_g - (vt2 / (G * r) - 1.0)).abs() < 1e-9);
        assert!((ride.points[top].speed_m_s - vt2.sqrt()).abs() < 1e-9);
        // The station just after the entry step is the bottom of the circle.
        let bottom = path.stations.iter().position(|s| s.piece == 1).unwrap();
        assert!((ride.points[bottom].normal_g - (1.0 + v * v / (G * r))).abs() < 1e-9);
        assert_eq!(ride.steps.len(), 2);
        assert!((ride.steps[0].jump_g - v * v / (G * r)).abs() < 1e-9);
    }

    // Crest: on a convex hump of radius r the rider feels 1 − v²/(gr) (same textbook source).
    #[test]
    fn crest_matches_textbook() {
        use crate::shape::{CurvatureProfile, CurvatureSegment};
        let r = 20.0;
        let half = CurvatureSegment::arc(0.3 * r, -1.0 / r);
        let p = CurvatureProfile::new(vec![CurvatureSegment::straight(2.0), half, half], (1, 2));
        let path = Centreline::build(&p, 1.1, 0.05);
        let v = 12.0;
        let ride = simulate(&path, &Conditions::lossless(v)).unwrap();
        // Top of the hump: the station where pitch returns through zero after the first arc.
        let i = path.stations.iter().position(|s| s.piece == 1).unwrap();
        assert!((ride.points[i].normal_g - (1.0 - v * v / (G * r))).abs() < 1e-9);
    }

    // Energy conservation (lossless): ½v² + g·z constant to 1e-9 relative (first principles).
    #[test]
    fn lossless_energy_is_conserved() {
        let f = family(ShapeKind::Clothoid);
        let path = Centreline::build(
            &f.curvature_with_leads(&[0.6], 7.0, 5.0).unwrap(),
            1.1,
            0.05,
        );
        let ride = simulate(&path, &Conditions::lossless(24.0)).unwrap();
        let e0 = 0.5 * 24.0f64.powi(2);
        for (p, s) in ride.points.iter().zip(&path.stations) {
            let e = 0.5 * p.speed_m_s.powi(2) + G * s.heartline_m.z;
            assert!(((e - e0) / e0).abs() < 1e-9);
            assert!(p.tangential_g.abs() < 1e-15 && p.lateral_g.abs() < 1e-15);
        }
    }

    // Drag alone on level track: d(v²)/ds = −k v² gives v² = v₀² e^{−ks} (first principles).
    #[test]
    fn drag_on_level_track_decays_exponentially() {
        use crate::shape::{CurvatureProfile, CurvatureSegment};
        let p = CurvatureProfile::new(vec![CurvatureSegment::straight(200.0)], (0, 0));
        let path = Centreline::build(&p, 1.1, 0.05);
        let k = 1.225 * 1.0 / 5000.0;
        let ride = simulate(
            &path,
            &Conditions {
                entry_speed_m_s: 20.0,
                rolling_resistance: 0.0,
                drag_per_metre: k,
            },
        )
        .unwrap();
        let last = ride.points.last().unwrap();
        let expect = (400.0 * (-k * 200.0f64).exp()).sqrt();
        assert!(
            (last.speed_m_s - expect).abs() < 1e-6,
            "{} vs {expect}",
            last.speed_m_s
        );
    }

    // Rolling resistance alone on level track: d(v²)/ds = −2μg, so v² = v₀² − 2μg·s (first principles).
    #[test]
    fn rolling_resistance_on_level_track_is_linear_in_v_squared() {
        use crate::shape::{CurvatureProfile, CurvatureSegment};
        let p = CurvatureProfile::new(vec![CurvatureSegment::straight(100.0)], (0, 0));
        let path = Centreline::build(&p, 1.1, 0.05);
        let ride = simulate(
            &path,
            &Conditions {
                entry_speed_m_s: 20.0,
                rolling_resistance: 0.02,
                drag_per_metre: 0.0,
            },
        )
        .unwrap();
        let expect = (400.0 - 2.0 * 0.02 * G * 100.0f64).sqrt();
        assert!((ride.points.last().unwrap().speed_m_s - expect).abs() < 1e-9);
        assert!((ride.points[10].tangential_g + 0.02).abs() < 1e-12);
    }

    #[test]
    fn too_slow_a_train_stalls() {
        let path = circle(10.0);
        let err = simulate(&path, &Conditions::lossless(12.0)).unwrap_err();
        // v²/(2g) = 7.34 m is where it stops (energy).
        assert!((err.height_m - 144.0 / (2.0 * G)).abs() < 0.05);
    }
}
