//! Trains: N equal cars as a rigid chain, each car's place along the path.

use nalgebra::Vector3;

use super::ride::{fill_onset, perpendicular_force, simulate, steps_of};
use super::{Conditions, LoadPoint, Ride, Stall};
use crate::geometry::Centreline;
use crate::units::STANDARD_GRAVITY_M_S2 as G;

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
    let losses_law = cond.losses();
    let loss_rate = |u: f64, buf: &[CarPlace]| {
        let load = mean(buf, &|c| perpendicular_force(u, &c.kvec, &c.tangent).norm());
        losses_law.rate(u, load)
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
