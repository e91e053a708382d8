//! The load-versus-arc-length table (CSV), one row per heartline station.

use super::ExportError;
use crate::dynamics::Ride;
use crate::geometry::Centreline;
use crate::optimiser::Design;

/// Column names; units are in each name.
pub const COLUMNS: [&str; 14] = [
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
];

/// The CSV bytes: heartline positions and loads at every station of the reported design.
pub fn loads_csv(design: &Design) -> Result<Vec<u8>, ExportError> {
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
        ];
        w.write_record(rec.iter().map(|v| format!("{v:.9}")))
            .map_err(enc)?;
    }
    w.into_inner().map_err(|e| ExportError::Encode {
        what: "loads table",
        message: e.to_string(),
    })
}
