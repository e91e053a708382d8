//! The load-versus-arc-length table (CSV), one row per heartline station, and the per-car table.
//!
//! Rows are formatted straight into one buffer (numbers only, so no quoting is ever needed).
//!
//! The track frame columns (dimensionless unit vectors in world axes) let a CAD user sweep a
//! cross-section: `tangent_*` is the direction of travel, `up_*` points towards the rider's head
//! (perpendicular to the tangent), `lateral_*` points to the rider's LEFT. The frame is
//! right-handed: tangent × lateral = up (and lateral = up × tangent). On a planar loop lateral is
//! +Y everywhere.

use super::ExportError;
use crate::dynamics::Ride;
use crate::geometry::Centreline;
use crate::model::Assessment;

/// Column names; units are in each name.
pub const COLUMNS: [&str; 25] = [
    "s_m",
    "x_m",
    "y_m",
    "z_m",
    "pitch_deg",
    "curvature_1_m",
    "speed_m_s",
    "time_s",
    "normal_g",
    "tangential_g",
    "lateral_g",
    "onset_g_s",
    "rail_x_m",
    "rail_z_m",
    "rail_y_m",
    "roll_deg",
    "tangent_x",
    "tangent_y",
    "tangent_z",
    "up_x",
    "up_y",
    "up_z",
    "lateral_x",
    "lateral_y",
    "lateral_z",
];

/// Append one row of numbers (nine decimals) to `out`, after the car index `first` if given.
fn push_row(out: &mut Vec<u8>, first: Option<usize>, values: &[f64]) {
    let mut sep: &[u8] = b"";
    if let Some(j) = first {
        super::number::push_integer(out, j as u64);
        sep = b",";
    }
    for v in values {
        out.extend_from_slice(sep);
        super::number::push_fixed(out, *v, 9);
        sep = b",";
    }
    out.push(b'\n');
}

/// The CSV bytes: heartline positions and loads at every station of the reported design.
pub fn loads_csv(design: &Assessment) -> Result<Vec<u8>, ExportError> {
    stations_csv(&design.best.path, design.best.ride())
}

/// The CSV bytes of any sampled path and its ride (also used by `check`).
pub fn stations_csv(path: &Centreline, ride: &Ride) -> Result<Vec<u8>, ExportError> {
    // About 25 numbers of ~13 characters per row.
    let mut out = Vec::with_capacity((path.stations.len() + 1) * 25 * 14);
    out.extend_from_slice(COLUMNS.join(",").as_bytes());
    out.push(b'\n');
    for (st, p) in path.stations.iter().zip(&ride.points) {
        let h = st.heartline_m;
        let (t, u, l) = (st.tangent, st.head, st.left);
        let rec = [
            st.s_m,
            h.x,
            h.y,
            h.z,
            st.pitch_rad.to_degrees(),
            st.curvature_1_m,
            p.speed_m_s,
            p.time_s,
            p.normal_g,
            p.tangential_g,
            p.lateral_g,
            p.onset_g_s,
            st.rail_m.x,
            st.rail_m.z,
            st.rail_m.y,
            st.roll_rad().to_degrees(),
            t.x,
            t.y,
            t.z,
            u.x,
            u.y,
            u.z,
            l.x,
            l.y,
            l.z,
        ];
        push_row(&mut out, None, &rec);
    }
    Ok(out)
}

/// Column names of the per-car table; units are in each name.
pub const CAR_COLUMNS: [&str; 10] = [
    "car",
    "offset_m",
    "s_m",
    "time_s",
    "speed_m_s",
    "normal_g",
    "tangential_g",
    "lateral_g",
    "onset_g_s",
    "roll_deg",
];

/// The per-car CSV bytes (`<name>-cars.csv`): one row per car per station, car 0 at the front;
/// `s_m` is the car's own heartline position and `time_s` the train's clock when it is there.
pub fn cars_csv(design: &Assessment) -> Result<Vec<u8>, ExportError> {
    let cars = &design.best.train.cars;
    let rows: usize = cars.iter().map(|r| r.points.len()).sum();
    let mut out = Vec::with_capacity((rows + 1) * 10 * 14);
    out.extend_from_slice(CAR_COLUMNS.join(",").as_bytes());
    out.push(b'\n');
    let pitch = design.best.train.train.car_pitch_m;
    for (j, ride) in cars.iter().enumerate() {
        for (st, p) in design.best.path.stations.iter().zip(&ride.points) {
            let vals = [
                j as f64 * pitch,
                p.s_m,
                p.time_s,
                p.speed_m_s,
                p.normal_g,
                p.tangential_g,
                p.lateral_g,
                p.onset_g_s,
                st.roll_rad().to_degrees(),
            ];
            push_row(&mut out, Some(j), &vals);
        }
    }
    Ok(out)
}
