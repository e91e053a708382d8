//! The load-versus-arc-length table (CSV), one row per heartline station.

use super::ExportError;
use crate::dynamics::Ride;
use crate::geometry::Centreline;
use crate::model::Assessment;

/// Column names; units are in each name.
pub const COLUMNS: [&str; 16] = [
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
];

/// The CSV bytes: heartline positions and loads at every station of the reported design.
pub fn loads_csv(design: &Assessment) -> Result<Vec<u8>, ExportError> {
    stations_csv(&design.best.path, &design.best.ride)
}

/// The CSV bytes of any sampled path and its ride (also used by `check`).
pub fn stations_csv(path: &Centreline, ride: &Ride) -> Result<Vec<u8>, ExportError> {
    let enc = |e: csv::Error| ExportError::Encode {
        what: "loads table",
        message: e.to_string(),
    };
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(COLUMNS).map_err(enc)?;
    for (st, p) in path.stations.iter().zip(&ride.points) {
        let h = st.heartline_m;
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
        ];
        w.write_record(rec.iter().map(|v| format!("{v:.9}")))
            .map_err(enc)?;
    }
    w.into_inner().map_err(|e| ExportError::Encode {
        what: "loads table",
        message: e.to_string(),
    })
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
    let enc = |e: csv::Error| ExportError::Encode {
        what: "per-car table",
        message: e.to_string(),
    };
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(CAR_COLUMNS).map_err(enc)?;
    let pitch = design.best.train.train.car_pitch_m;
    for (j, ride) in design.best.train.cars.iter().enumerate() {
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
            let mut rec = vec![j.to_string()];
            rec.extend(vals.iter().map(|v| format!("{v:.9}")));
            w.write_record(&rec).map_err(enc)?;
        }
    }
    w.into_inner().map_err(|e| ExportError::Encode {
        what: "per-car table",
        message: e.to_string(),
    })
}
