//! Checks: the key figures of a ride and whether they meet the brief's limits.
//!
//! [`summarise`] reduces a centreline and its ride to the figures an engineer quotes (height,
//! length, peak and top loads, onset); [`check`] compares them with the brief's [`limits`] and gives a
//! [`Verdict`] line by line, each with a signed margin (positive = inside the limit).
//!
//! `min_top_g` bounds the least normal load while the rider is inverted (cos θ < 0), wherever it
//! occurs, not the load at the apex station: on a clothoid loop it lies a few degrees either side
//! of the apex. Each extreme (peak load, least inverted load, peak onset) comes with its [`Place`]:
//! arc length, pitch and car.
//!
//! For a train, [`summarise_train`] gives each car's figures and a worst-car [`Summary`] (highest
//! peak, lowest inverted and top load, …), so the checks and the optimiser constrain the worst car. The
//! duration-based acceleration envelope is in [`envelope`].
//!
//! Limits taken from a brief's defaults are ILLUSTRATIVE, not values from any standard.

pub mod envelope;
pub mod limits;

pub use limits::{CheckLine, LimitKind, Verdict, check, limits_of, onset_for_limit};

use serde::Serialize;

use crate::dynamics::{Ride, TrainRide};
use crate::geometry::Centreline;

/// Where along the ride an extreme occurs: heartline arc length, pitch of the track there and the
/// car that feels it (0 = front).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Place {
    pub s_m: f64,
    /// Pitch of the tangent above the entry direction, degrees (180 = the apex of the loop).
    pub pitch_deg: f64,
    pub car: usize,
}

/// Key figures of one design.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Summary {
    /// Heartline: top above entry, m.
    pub loop_height_m: f64,
    /// Rail centreline: highest point above rail at entry, m.
    pub rail_height_m: f64,
    /// Heartline arc length of the loop proper, m.
    pub path_length_m: f64,
    /// Horizontal distance from loop entry to loop exit along X, heartline, m.
    pub footprint_length_m: f64,
    pub min_radius_m: f64,
    pub peak_normal_g: f64,
    pub peak_normal_s_m: f64,
    /// Where the peak normal load occurs.
    pub peak_normal_at: Place,
    pub min_normal_g: f64,
    /// Least normal load while the rider is inverted (pitch past 90°, cos θ < 0), g: what
    /// `min_top_g` bounds. Infinite if the ride is never inverted. On a clothoid loop it lies a
    /// few degrees either side of the apex, below the load at the apex itself.
    pub min_inverted_normal_g: f64,
    /// Where the least inverted load occurs (the top station if never inverted).
    pub min_inverted_at: Place,
    /// Normal load at the apex station (highest point), g.
    pub top_normal_g: f64,
    pub top_speed_m_s: f64,
    pub top_s_m: f64,
    /// Largest |dn/dt| on the smooth parts of the path, g/s.
    pub peak_onset_g_s: f64,
    /// Where the peak onset occurs.
    pub peak_onset_at: Place,
    /// Largest jump of normal load at a curvature step, g (0 if the curvature is continuous).
    pub max_load_step_g: f64,
    pub peak_lateral_g: f64,
    pub min_tangential_g: f64,
    pub exit_speed_m_s: f64,
    pub time_in_loop_s: f64,
    /// Largest |roll| of the rider's cross-axis from horizontal, degrees (0 on a planar loop).
    pub peak_roll_deg: f64,
}

/// Reduce a ride to its key figures.
pub fn summarise(path: &Centreline, ride: &Ride) -> Summary {
    summarise_car(path, &PathFigures::of(path), ride, 0)
}

/// The figures of the path itself, the same for every car: worked out once per ride, not per car.
struct PathFigures {
    top: usize,
    /// First and last station on the loop proper.
    first: usize,
    last: usize,
    /// Whether each station is inverted (the rider's seat points upwards: cos θ < 0).
    inverted: Vec<bool>,
    loop_height_m: f64,
    rail_height_m: f64,
    path_length_m: f64,
    min_radius_m: f64,
    peak_roll_deg: f64,
}

impl PathFigures {
    /// One pass over the stations for what [`Centreline`]'s own methods (`top_index`,
    /// `loop_height_m`, `rail_height_m`, `min_radius_m`, `peak_roll_rad`) would each find in
    /// passes of their own: the same folds in the same order, so the same bits.
    fn of(path: &Centreline) -> PathFigures {
        let st = &path.stations;
        let mut top = 0;
        let (mut first, mut last) = (None, None);
        let mut rail_top_m = f64::MIN;
        let mut max_curvature_1_m = 0.0;
        let mut peak_roll_rad = 0.0;
        let mut inverted_at = Vec::with_capacity(st.len());
        for (i, s) in st.iter().enumerate() {
            // As `Iterator::max_by`: the last of equal maxima.
            if s.heartline_m.z.total_cmp(&st[top].heartline_m.z).is_ge() {
                top = i;
            }
            if s.in_loop {
                first.get_or_insert(i);
                last = Some(i);
            }
            rail_top_m = f64::max(rail_top_m, s.rail_m.z);
            max_curvature_1_m = f64::max(max_curvature_1_m, s.curvature_vec_1_m.norm());
            peak_roll_rad = f64::max(peak_roll_rad, s.roll_rad().abs());
            inverted_at.push(inverted(s.pitch_rad));
        }
        let top_s_m = st[top].s_m;
        PathFigures {
            // The first station at the top's arc length (a curvature step samples it twice).
            top: st.iter().position(|s| s.s_m == top_s_m).unwrap_or(0),
            first: first.expect("a loop has stations"),
            last: last.expect("a loop has stations"),
            inverted: inverted_at,
            loop_height_m: st[top].heartline_m.z - st[0].heartline_m.z,
            rail_height_m: rail_top_m - st[0].rail_m.z,
            path_length_m: path.loop_length_m(),
            min_radius_m: 1.0 / max_curvature_1_m,
            peak_roll_deg: peak_roll_rad.to_degrees(),
        }
    }
}

/// `cos θ < 0`, to the bit, mostly without the cosine: away from its zeros (π/2 and 3π/2, with a
/// band of 1e-6 rad that dwarfs both the library cosine's error and the rounding of the constants)
/// the sign of cos θ on [0, 2π] is which side of them θ lies; near them, or outside [0, 2π], the
/// cosine decides.
fn inverted(pitch_rad: f64) -> bool {
    use std::f64::consts::{FRAC_PI_2, PI};
    const BAND_RAD: f64 = 1e-6;
    let (up, down) = (FRAC_PI_2, 3.0 * FRAC_PI_2);
    let clear = (pitch_rad - up).abs() > BAND_RAD && (pitch_rad - down).abs() > BAND_RAD;
    if clear && (0.0..=2.0 * PI).contains(&pitch_rad) {
        pitch_rad > up && pitch_rad < down
    } else {
        pitch_rad.cos() < 0.0
    }
}

/// The key figures of car `car`'s ride (its points are in station order).
fn summarise_car(path: &Centreline, figs: &PathFigures, ride: &Ride, car: usize) -> Summary {
    let st = &path.stations;
    let pts = &ride.points;
    let (top, first, last) = (figs.top, figs.first, figs.last);
    let peak = (0..pts.len())
        .max_by(|&a, &b| pts[a].normal_g.total_cmp(&pts[b].normal_g))
        .unwrap_or(0);
    let least_inverted = (0..pts.len())
        .filter(|&i| figs.inverted[i])
        .min_by(|&a, &b| pts[a].normal_g.total_cmp(&pts[b].normal_g));
    let onset = (0..pts.len())
        .max_by(|&a, &b| pts[a].onset_g_s.abs().total_cmp(&pts[b].onset_g_s.abs()))
        .unwrap_or(0);
    let place = |i: usize| Place {
        s_m: pts[i].s_m,
        pitch_deg: st[i].pitch_rad.to_degrees(),
        car,
    };
    let fold = |f: &dyn Fn(usize) -> f64, init: f64, pick: fn(f64, f64) -> f64| {
        (0..pts.len()).map(f).fold(init, pick)
    };
    Summary {
        loop_height_m: figs.loop_height_m,
        rail_height_m: figs.rail_height_m,
        path_length_m: figs.path_length_m,
        footprint_length_m: st[last].heartline_m.x - st[first].heartline_m.x,
        min_radius_m: figs.min_radius_m,
        peak_normal_g: pts[peak].normal_g,
        peak_normal_s_m: pts[peak].s_m,
        peak_normal_at: place(peak),
        min_normal_g: fold(&|i| pts[i].normal_g, f64::MAX, f64::min),
        min_inverted_normal_g: least_inverted.map_or(f64::INFINITY, |i| pts[i].normal_g),
        min_inverted_at: place(least_inverted.unwrap_or(top)),
        top_normal_g: pts[top].normal_g,
        top_speed_m_s: pts[top].speed_m_s,
        top_s_m: pts[top].s_m,
        peak_onset_g_s: fold(&|i| pts[i].onset_g_s.abs(), 0.0, f64::max),
        peak_onset_at: place(onset),
        max_load_step_g: ride
            .steps
            .iter()
            .map(|s| s.jump_g.abs())
            .fold(0.0, f64::max),
        peak_lateral_g: fold(&|i| pts[i].lateral_g.abs(), 0.0, f64::max),
        min_tangential_g: fold(&|i| pts[i].tangential_g, f64::MAX, f64::min),
        exit_speed_m_s: pts[last].speed_m_s,
        time_in_loop_s: pts[last].time_s - pts[first].time_s,
        peak_roll_deg: figs.peak_roll_deg,
    }
}

/// Key figures of one car of a train.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CarSummary {
    /// 0 is the front car.
    pub car: usize,
    /// Heartline distance behind the front car, m.
    pub offset_m: f64,
    pub peak_normal_g: f64,
    pub peak_normal_s_m: f64,
    pub min_normal_g: f64,
    /// Least normal load while inverted (cos θ < 0), g, and where (infinite if never inverted).
    pub min_inverted_normal_g: f64,
    pub min_inverted_at: Place,
    pub top_normal_g: f64,
    pub top_speed_m_s: f64,
    pub peak_onset_g_s: f64,
    pub peak_onset_at: Place,
    pub peak_lateral_g: f64,
    pub min_tangential_g: f64,
}

/// Each car's figures and the worst-car summary: the highest peak, onset, step and lateral load
/// and the lowest minimum, inverted, top and tangential load of any car, each extreme with the
/// place and car where it occurs (the top speed is that of the car
/// with the lowest top load; exit speed and time in the loop are the rear car's, when the whole
/// train has left the loop). For one car it is [`summarise`] exactly.
pub fn summarise_train(path: &Centreline, train: &TrainRide) -> (Summary, Vec<CarSummary>) {
    let figs = PathFigures::of(path);
    let per: Vec<Summary> = train
        .cars
        .iter()
        .enumerate()
        .map(|(j, r)| summarise_car(path, &figs, r, j))
        .collect();
    let cars = per
        .iter()
        .enumerate()
        .map(|(j, s)| CarSummary {
            car: j,
            offset_m: j as f64 * train.train.car_pitch_m,
            peak_normal_g: s.peak_normal_g,
            peak_normal_s_m: s.peak_normal_s_m,
            min_normal_g: s.min_normal_g,
            min_inverted_normal_g: s.min_inverted_normal_g,
            min_inverted_at: s.min_inverted_at,
            top_normal_g: s.top_normal_g,
            top_speed_m_s: s.top_speed_m_s,
            peak_onset_g_s: s.peak_onset_g_s,
            peak_onset_at: s.peak_onset_at,
            peak_lateral_g: s.peak_lateral_g,
            min_tangential_g: s.min_tangential_g,
        })
        .collect();
    let mut w = per[0];
    for s in &per[1..] {
        if s.peak_normal_g > w.peak_normal_g {
            w.peak_normal_g = s.peak_normal_g;
            w.peak_normal_s_m = s.peak_normal_s_m;
            w.peak_normal_at = s.peak_normal_at;
        }
        if s.min_inverted_normal_g < w.min_inverted_normal_g {
            w.min_inverted_normal_g = s.min_inverted_normal_g;
            w.min_inverted_at = s.min_inverted_at;
        }
        if s.peak_onset_g_s > w.peak_onset_g_s {
            w.peak_onset_g_s = s.peak_onset_g_s;
            w.peak_onset_at = s.peak_onset_at;
        }
        if s.top_normal_g < w.top_normal_g {
            w.top_normal_g = s.top_normal_g;
            w.top_speed_m_s = s.top_speed_m_s;
        }
        w.min_normal_g = w.min_normal_g.min(s.min_normal_g);
        w.max_load_step_g = w.max_load_step_g.max(s.max_load_step_g);
        w.peak_lateral_g = w.peak_lateral_g.max(s.peak_lateral_g);
        w.min_tangential_g = w.min_tangential_g.min(s.min_tangential_g);
    }
    let rear = per[per.len() - 1];
    w.exit_speed_m_s = rear.exit_speed_m_s;
    w.time_in_loop_s = rear.time_in_loop_s;
    (w, cars)
}

#[cfg(test)]
mod tests {
    use super::*;

    // The one-pass path figures must be the centreline's own, to the bit, on a spread loop
    // (rail, roll and curvature all vary) and a planar one.
    #[test]
    fn path_figures_are_the_centrelines_own() {
        use crate::brief::ShapeKind;
        use crate::shape::family;
        for kind in ShapeKind::ALL {
            let f = family(kind).unwrap();
            let p = f
                .curvature_with_leads(&f.default_shape(), 9.0, 6.0)
                .unwrap();
            for shift in [0.0, 2.5] {
                let path = Centreline::build_shifted(&p, 1.1, 0.3, shift);
                let figs = PathFigures::of(&path);
                assert_eq!(figs.top, path.top_index());
                let pairs = [
                    (figs.loop_height_m, path.loop_height_m()),
                    (figs.rail_height_m, path.rail_height_m()),
                    (figs.min_radius_m, path.min_radius_m()),
                    (figs.peak_roll_deg, path.peak_roll_rad().to_degrees()),
                ];
                for (got, want) in pairs {
                    assert_eq!(got.to_bits(), want.to_bits(), "{kind} shift {shift}");
                }
            }
        }
    }

    // The inverted test must be `cos θ < 0` exactly (the library cosine is the reference),
    // including the floats next to π/2 and 3π/2 and pitches outside one turn.
    #[test]
    fn inverted_is_the_sign_of_the_cosine() {
        use std::f64::consts::{FRAC_PI_2, PI};
        let mut probes = vec![-1.0, -0.0, 0.0, PI, 2.0 * PI, 7.5, 3.0 * PI, f64::NAN];
        for edge in [FRAC_PI_2, 3.0 * FRAC_PI_2] {
            let mut x = edge;
            let mut y = edge;
            for _ in 0..64 {
                x = x.next_up();
                y = y.next_down();
                probes.extend([x, y]);
            }
            probes.extend([edge, edge + 1e-6, edge - 1e-6, edge + 2e-6, edge - 2e-6]);
        }
        probes.extend((0..20_000).map(|i| i as f64 * 2.0 * PI / 20_000.0));
        for p in probes {
            assert_eq!(inverted(p), p.cos() < 0.0, "{p}");
        }
    }
}
