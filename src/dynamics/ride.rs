//! One ride: speed from energy with losses, time, and the loads on the rider's axes.

use nalgebra::Vector3;

use super::train::{Entry, Places, Tracker, Train, TrainRide, schedule};
use super::{Conditions, LoadPoint, LoadStep, Ride, Stall};
use crate::geometry::Centreline;
use crate::units::STANDARD_GRAVITY_M_S2 as G;

/// Specific force the seat applies at speed² `u`, before the tangential loss term: the
/// centripetal part plus `lift`, the part of "up" (−g⃗) perpendicular to the track
/// ([`lift_of`]).
fn perpendicular_force(u: f64, kvec: &Vector3<f64>, lift: &Vector3<f64>) -> Vector3<f64> {
    u * kvec + lift
}

/// The part of "up" (−g⃗) perpendicular to the track of unit tangent `tangent`: the speed-free
/// half of the seat's force, worked out once per place rather than at every speed tried there.
pub(super) fn lift_of(tangent: &Vector3<f64>) -> Vector3<f64> {
    let up = Vector3::new(0.0, 0.0, G);
    up - up.dot(tangent) * tangent
}

/// How the train moves: at every entry of its schedule, the speed², the loss rate d(losses)/ds,
/// the mean over the cars of the tangent's vertical part (mean sin θ) and the time.
struct Motion {
    cars: usize,
    entries: Vec<Entry>,
    speed_sq: Vec<f64>,
    speed_m_s: Vec<f64>,
    loss_rate: Vec<f64>,
    mean_sin_pitch: Vec<f64>,
    time_s: Vec<f64>,
}

/// The integrator's means over the cars at one entry of the schedule, of a function of a car's
/// curvature vector and lift ([`lift_of`]).
#[inline]
fn mean(places: &Places, f: impl Fn(&Vector3<f64>, &Vector3<f64>) -> f64) -> f64 {
    match places {
        // A lone car's mean is its own value (the sum below starts from −0, so it would give
        // that value over 1); reading it off the station skips the copy and the division on the
        // integrator's critical path: the point mass runs hundreds of times per design.
        Places::Lone(st) => f(&st.curvature_vec_1_m, &lift_of(&st.tangent)),
        Places::Train(buf) => {
            buf.iter().map(|c| f(&c.kvec, &c.lift)).sum::<f64>() / buf.len() as f64
        }
    }
}

/// The one ride integrator, for a train of any length (one car is the point mass): energy of the
/// centre of mass, u = v₀² − 2g·(z̄ − z̄₀) − D, with the loss integral D by Heun's method along the
/// lead car's arc length (see the module docs).
fn integrate(path: &Centreline, cond: &Conditions, train: &Train) -> Result<Motion, Stall> {
    let cars = train.cars.max(1);
    let pitch_m = train.car_pitch_m;
    let entries = schedule(path, cars, pitch_m);
    let m = entries.len();
    let v0sq = cond.entry_speed_m_s * cond.entry_speed_m_s;
    let law = cond.losses();
    // Without rolling resistance the contact force does not enter the loss rate (its term is
    // 2·0·|a⊥| = 0 exactly), so neither it nor the cars' curvature is worked out.
    let rolling = law.rolling_resistance != 0.0;
    let loss_rate = |u: f64, at: &Places| {
        let contact = if rolling {
            mean(at, |kvec, lift| perpendicular_force(u, kvec, lift).norm())
        } else {
            0.0
        };
        law.rate(u, contact)
    };
    let mut cars_at = Tracker::new(path, cars, rolling);
    let mut u = vec![0.0; m];
    let mut rate = vec![0.0; m];
    let mut tzbar = vec![0.0; m];
    let mut losses = 0.0;
    let z0;
    (z0, tzbar[0]) = cars_at.advance(path, &entries[0], pitch_m);
    u[0] = v0sq;
    rate[0] = loss_rate(v0sq, &cars_at.places(path, &entries[0]));
    for e in 1..m {
        let zbar;
        (zbar, tzbar[e]) = cars_at.advance(path, &entries[e], pitch_m);
        let at = cars_at.places(path, &entries[e]);
        let ds = entries[e].s_lead_m - entries[e - 1].s_lead_m;
        let u_free = v0sq - 2.0 * G * (zbar - z0);
        // Heun: predict with the rate at e−1, correct with the mean of both ends.
        let pred = u_free - (losses + ds * rate[e - 1]);
        let r_pred = loss_rate(pred.max(0.0), &at);
        losses += 0.5 * ds * (rate[e - 1] + r_pred);
        u[e] = u_free - losses;
        if u[e] <= 0.0 {
            return Err(Stall {
                s_m: entries[e].s_lead_m,
                height_m: zbar - z0,
            });
        }
        rate[e] = loss_rate(u[e], &at);
    }
    let speed: Vec<f64> = u.iter().map(|u| u.sqrt()).collect();
    let mut time = vec![0.0; m];
    for e in 1..m {
        let ds = entries[e].s_lead_m - entries[e - 1].s_lead_m;
        // Exact for constant acceleration over the interval.
        time[e] = time[e - 1] + 2.0 * ds / (speed[e] + speed[e - 1]);
    }
    Ok(Motion {
        cars,
        entries,
        speed_sq: u,
        speed_m_s: speed,
        loss_rate: rate,
        mean_sin_pitch: tzbar,
        time_s: time,
    })
}

/// Every car's loads at each station, the moment it passes it: one pass over the schedule, each
/// entry handed to its own car (cost grows with the entries, not entries × cars).
fn car_rides(path: &Centreline, motion: &Motion) -> Vec<Ride> {
    let st = &path.stations;
    let mut points: Vec<Vec<LoadPoint>> = (0..motion.cars)
        .map(|_| Vec::with_capacity(st.len()))
        .collect();
    for (e, entry) in motion.entries.iter().enumerate() {
        let s = &st[entry.station];
        let u = motion.speed_sq[e];
        let f = perpendicular_force(u, &s.curvature_vec_1_m, &lift_of(&s.tangent));
        // Felt forward load a_t + g·sin θⱼ = g·(sin θⱼ − mean sin θ) − (losses per metre)/2.
        // A lone car has no couplers: its first term is exactly zero, and leaving it out
        // keeps the sign of a zero load (−0 on lossless level track).
        let losses_g = motion.loss_rate[e] / (2.0 * G);
        let tangential_g = if motion.cars == 1 {
            -losses_g
        } else {
            (s.tangent.z - motion.mean_sin_pitch[e]) - losses_g
        };
        points[entry.car].push(LoadPoint {
            s_m: s.s_m,
            time_s: motion.time_s[e],
            speed_m_s: motion.speed_m_s[e],
            normal_g: f.dot(&s.head) / G,
            tangential_g,
            lateral_g: f.dot(&s.left) / G,
            onset_g_s: 0.0,
        });
    }
    points
        .into_iter()
        .map(|mut points| {
            // Each car's points are in station order: its keys never decrease and the sort is
            // stable.
            fill_onset(path, &mut points);
            let steps = steps_of(path, &points);
            Ride { points, steps }
        })
        .collect()
}

/// Run one car (the point mass) along the path.
pub fn simulate(path: &Centreline, cond: &Conditions) -> Result<Ride, Stall> {
    let motion = integrate(path, cond, &Train::single())?;
    Ok(car_rides(path, &motion).swap_remove(0))
}

/// Run a train along the path (see the module docs for the model); one car is [`simulate`].
pub fn simulate_train(
    path: &Centreline,
    cond: &Conditions,
    train: &Train,
) -> Result<TrainRide, Stall> {
    let motion = integrate(path, cond, train)?;
    let cars = train.cars.max(1);
    Ok(TrainRide {
        train: Train {
            cars,
            car_pitch_m: train.car_pitch_m,
        },
        cars: car_rides(path, &motion),
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
                .unwrap()
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
        let f = family(ShapeKind::Clothoid).unwrap();
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
