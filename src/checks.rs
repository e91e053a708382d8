//! Checks: the key figures of a ride and whether they meet the brief's limits.
//!
//! [`summarise`] reduces a centreline and its ride to the figures an engineer quotes (height,
//! length, peak and top loads, onset); [`check`] compares them with the brief's [`limits`] and gives a
//! [`Verdict`] line by line, each with a signed margin (positive = inside the limit).
//!
//! For a train, [`summarise_train`] gives each car's figures and a worst-car [`Summary`] (highest
//! peak, lowest top load, …), so the checks and the optimiser constrain the worst car. The
//! duration-based acceleration envelope is in [`envelope`].
//!
//! Limits taken from a brief's defaults are ILLUSTRATIVE, not values from any standard.

pub mod envelope;
pub mod limits;

pub use limits::{CheckLine, LimitKind, Verdict, check, limits_of, onset_for_limit};

use serde::Serialize;

use crate::dynamics::{Ride, TrainRide};
use crate::geometry::Centreline;

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
    pub min_normal_g: f64,
    pub top_normal_g: f64,
    pub top_speed_m_s: f64,
    pub top_s_m: f64,
    /// Largest |dn/dt| on the smooth parts of the path, g/s.
    pub peak_onset_g_s: f64,
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
    let st = &path.stations;
    let pts = &ride.points;
    let top = path.top_index();
    let in_loop: Vec<usize> = (0..st.len()).filter(|&i| st[i].in_loop).collect();
    let (first, last) = (in_loop[0], in_loop[in_loop.len() - 1]);
    let peak = (0..pts.len())
        .max_by(|&a, &b| pts[a].normal_g.total_cmp(&pts[b].normal_g))
        .unwrap_or(0);
    let fold = |f: &dyn Fn(usize) -> f64, init: f64, pick: fn(f64, f64) -> f64| {
        (0..pts.len()).map(f).fold(init, pick)
    };
    Summary {
        loop_height_m: path.loop_height_m(),
        rail_height_m: path.rail_height_m(),
        path_length_m: path.loop_length_m(),
        footprint_length_m: st[last].heartline_m.x - st[first].heartline_m.x,
        min_radius_m: path.min_radius_m(),
        peak_normal_g: pts[peak].normal_g,
        peak_normal_s_m: pts[peak].s_m,
        min_normal_g: fold(&|i| pts[i].normal_g, f64::MAX, f64::min),
        top_normal_g: pts[top].normal_g,
        top_speed_m_s: pts[top].speed_m_s,
        top_s_m: pts[top].s_m,
        peak_onset_g_s: fold(&|i| pts[i].onset_g_s.abs(), 0.0, f64::max),
        max_load_step_g: ride
            .steps
            .iter()
            .map(|s| s.jump_g.abs())
            .fold(0.0, f64::max),
        peak_lateral_g: fold(&|i| pts[i].lateral_g.abs(), 0.0, f64::max),
        min_tangential_g: fold(&|i| pts[i].tangential_g, f64::MAX, f64::min),
        exit_speed_m_s: pts[last].speed_m_s,
        time_in_loop_s: pts[last].time_s - pts[first].time_s,
        peak_roll_deg: path.peak_roll_rad().to_degrees(),
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
    pub top_normal_g: f64,
    pub top_speed_m_s: f64,
    pub peak_onset_g_s: f64,
    pub peak_lateral_g: f64,
    pub min_tangential_g: f64,
}

/// Each car's figures and the worst-car summary: the highest peak, onset, step and lateral load
/// and the lowest minimum, top and tangential load of any car (the top speed is that of the car
/// with the lowest top load; exit speed and time in the loop are the rear car's, when the whole
/// train has left the loop). For one car it is [`summarise`] exactly.
pub fn summarise_train(path: &Centreline, train: &TrainRide) -> (Summary, Vec<CarSummary>) {
    let per: Vec<Summary> = train.cars.iter().map(|r| summarise(path, r)).collect();
    let cars = per
        .iter()
        .enumerate()
        .map(|(j, s)| CarSummary {
            car: j,
            offset_m: j as f64 * train.train.car_pitch_m,
            peak_normal_g: s.peak_normal_g,
            peak_normal_s_m: s.peak_normal_s_m,
            min_normal_g: s.min_normal_g,
            top_normal_g: s.top_normal_g,
            top_speed_m_s: s.top_speed_m_s,
            peak_onset_g_s: s.peak_onset_g_s,
            peak_lateral_g: s.peak_lateral_g,
            min_tangential_g: s.min_tangential_g,
        })
        .collect();
    let mut w = per[0];
    for s in &per[1..] {
        if s.peak_normal_g > w.peak_normal_g {
            w.peak_normal_g = s.peak_normal_g;
            w.peak_normal_s_m = s.peak_normal_s_m;
        }
        if s.top_normal_g < w.top_normal_g {
            w.top_normal_g = s.top_normal_g;
            w.top_speed_m_s = s.top_speed_m_s;
        }
        w.min_normal_g = w.min_normal_g.min(s.min_normal_g);
        w.peak_onset_g_s = w.peak_onset_g_s.max(s.peak_onset_g_s);
        w.max_load_step_g = w.max_load_step_g.max(s.max_load_step_g);
        w.peak_lateral_g = w.peak_lateral_g.max(s.peak_lateral_g);
        w.min_tangential_g = w.min_tangential_g.min(s.min_tangential_g);
    }
    let rear = per[per.len() - 1];
    w.exit_speed_m_s = rear.exit_speed_m_s;
    w.time_in_loop_s = rear.time_in_loop_s;
    (w, cars)
}
