//! One ride: speed from energy with losses, time, and the loads on the rider's axes.

use nalgebra::Vector3;

use super::{Conditions, LoadPoint, LoadStep, Ride, Stall};
use crate::geometry::Centreline;
use crate::units::STANDARD_GRAVITY_M_S2 as G;

/// Specific force the seat applies at speed² `u`, before the tangential loss term.
pub(super) fn perpendicular_force(
    u: f64,
    kvec: &Vector3<f64>,
    tangent: &Vector3<f64>,
) -> Vector3<f64> {
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
    let losses_law = cond.losses();
    let loss_rate = |u: f64, i: usize| {
        let f = perpendicular_force(u, &st[i].curvature_vec_1_m, &st[i].tangent);
        losses_law.rate(u, f.norm())
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

/// dn/dt by central differences (one-sided at the ends of each smooth piece).
pub(super) fn fill_onset(path: &Centreline, points: &mut [LoadPoint]) {
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

pub(super) fn steps_of(path: &Centreline, points: &[LoadPoint]) -> Vec<LoadStep> {
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
