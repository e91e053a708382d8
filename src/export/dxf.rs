//! DXF export: the rail centreline and the heartline as 3D polylines, plus the caution as text.
//!
//! This module owns the `<name>.dxf` file. Coordinates are the geometry's own, in metres: X along
//! the entry direction, Y to the rider's left at entry, Z up, heartline entry at the origin.
//! Layers (our own names): [`LAYER_RAIL`], [`LAYER_HEARTLINE`], [`LAYER_NOTES`]. The file is
//! written as AutoCAD 2000 (AC1015) ASCII DXF with handles, which ezdxf loads without audit errors
//! (checked by `tests/dxf_audit.rs`). Not 2004+: for those the `dxf` crate writes a transparency of
//! 0 (an invalid value) on every entity, which readers then have to repair.

use dxf::entities::{Entity, EntityType, Polyline, Text, Vertex};
use dxf::enums::{AcadVersion, DrawingUnits, Units};
use dxf::tables::Layer;
use dxf::{Color, Drawing, Point, Vector};
use nalgebra::Vector3;

use super::ExportError;
use super::chart::{clean_text, wrap};
use crate::model::Assessment;
use crate::report::CAUTION;

/// Layer of the rail centreline.
pub const LAYER_RAIL: &str = "LW-RAIL";
/// Layer of the heartline.
pub const LAYER_HEARTLINE: &str = "LW-HEARTLINE";
/// Layer of the title and caution text.
pub const LAYER_NOTES: &str = "LW-NOTES";

/// AutoCAD colour index of each layer: 5 blue (rail), 30 orange (heartline), 8 grey (notes).
/// Plain ACI numbers; the same hues are used in the SVG drawings.
const LAYER_COLOURS: [(&str, u8); 3] = [(LAYER_RAIL, 5), (LAYER_HEARTLINE, 30), (LAYER_NOTES, 8)];

/// Lineweight code −1, "by layer" (DXF reference, group 370); the crate's default 0 would mean a
/// fixed 0.00 mm line.
const BY_LAYER: i16 = -1;

/// Most vertices written per polyline. Up to this every station is kept; above it the stations
/// are thinned evenly (the top station always kept) so that CAD tools stay responsive.
pub const MAX_VERTICES: usize = 20_000;

/// Characters per line when the caution is split into TEXT entities (TEXT is single-line, and
/// single-line TEXT is the entity every DXF reader understands).
const NOTE_LINE_CHARS: usize = 90;

/// DXF bytes of the design.
pub fn dxf_bytes(design: &Assessment) -> Result<Vec<u8>, ExportError> {
    let enc = |message: String| ExportError::Encode {
        what: "DXF",
        message,
    };
    let path = &design.best.path;
    let stations = &path.stations;
    if stations.len() < 2 {
        return Err(enc(format!(
            "a polyline needs at least 2 stations, the design has {}",
            stations.len()
        )));
    }
    let top = path.top_index();
    let keep = thin_indices(stations.len(), top, MAX_VERTICES);
    let finite = |v: &Vector3<f64>| v.iter().all(|c| c.is_finite());
    if let Some(&i) = keep
        .iter()
        .find(|&&i| !finite(&stations[i].rail_m) || !finite(&stations[i].heartline_m))
    {
        return Err(enc(format!(
            "station {i} (s = {} m) has a non-finite position",
            stations[i].s_m
        )));
    }

    let (mut lo, mut hi) = (
        Vector3::repeat(f64::INFINITY),
        Vector3::repeat(f64::NEG_INFINITY),
    );
    for &i in &keep {
        for p in [stations[i].rail_m, stations[i].heartline_m] {
            lo = lo.inf(&p);
            hi = hi.sup(&p);
        }
    }

    // Notes stand in the XZ plane below the track (normal −Y, so they read in a front view). With
    // that normal the arbitrary-axis algorithm of the DXF reference gives OCS x = world X and
    // OCS y = world Z, so a location (x, z) in OCS is the world point (x, 0, z).
    let header = format!(
        "loopwright: {} - {} loop, entry speed {:.2} m/s, loop height {:.3} m (heartline), {:.3} m (rail). Units: m.",
        design.brief.title,
        design.best.label(),
        design.brief.entry_speed_m_s,
        design.best.summary.loop_height_m,
        design.best.summary.rail_height_m
    );
    let mut lines = wrap(&header, NOTE_LINE_CHARS);
    lines.extend(wrap(CAUTION, NOTE_LINE_CHARS));
    // A line of NOTE_LINE_CHARS characters (about 0.9 height each) spans the drawing's extent.
    let extent = (hi.x - lo.x).max(hi.z - lo.z).max(1.0);
    let height = extent / (0.9 * NOTE_LINE_CHARS as f64);
    let note_z = |k: usize| lo.z - 3.0 * height - 1.6 * height * k as f64;

    let mut drawing = Drawing::new();
    drawing.header.version = AcadVersion::R2000;
    drawing.header.default_drawing_units = Units::Meters;
    // $MEASUREMENT = 1: metric, so CAD tools pick metric line types and hatch patterns.
    drawing.header.drawing_units = DrawingUnits::Metric;
    // Extents let "zoom extents" frame the drawing at once (the crate writes 0,0,0 otherwise).
    drawing.header.minimum_drawing_extents = Point::new(lo.x, lo.y, note_z(lines.len()));
    drawing.header.maximum_drawing_extents = Point::new(hi.x.max(lo.x + extent), hi.y, hi.z);
    for (name, aci) in LAYER_COLOURS {
        drawing.add_layer(Layer {
            name: name.into(),
            color: Color::from_index(aci),
            ..Default::default()
        });
    }

    let rail: Vec<Point> = keep.iter().map(|&i| point(&stations[i].rail_m)).collect();
    let heart: Vec<Point> = keep
        .iter()
        .map(|&i| point(&stations[i].heartline_m))
        .collect();
    add_polyline(&mut drawing, LAYER_RAIL, &rail);
    add_polyline(&mut drawing, LAYER_HEARTLINE, &heart);

    for (k, line) in lines.iter().enumerate() {
        let text = Text {
            location: Point::new(lo.x, note_z(k), 0.0),
            text_height: height,
            // Control characters would reach CAD as ^-escapes; spaces read better.
            value: clean_text(line),
            normal: Vector::new(0.0, -1.0, 0.0),
            ..Default::default()
        };
        let mut e = Entity::new(EntityType::Text(text));
        e.common.layer = LAYER_NOTES.into();
        e.common.lineweight_enum_value = BY_LAYER;
        drawing.add_entity(e);
    }

    let mut out = Vec::new();
    drawing.save(&mut out).map_err(|e| enc(e.to_string()))?;
    Ok(out)
}

fn point(v: &Vector3<f64>) -> Point {
    Point::new(v.x, v.y, v.z)
}

/// A 3D polyline (POLYLINE with flag 8, VERTEX entities, SEQEND) on `layer`.
fn add_polyline(drawing: &mut Drawing, layer: &str, points: &[Point]) {
    let mut poly = Polyline::default();
    poly.set_is_3d_polyline(true);
    for p in points {
        let mut v = Vertex::new(p.clone());
        v.set_is_3d_polyline_vertex(true);
        poly.add_vertex(drawing, v);
    }
    let mut e = Entity::new(EntityType::Polyline(poly));
    e.common.layer = layer.into();
    e.common.lineweight_enum_value = BY_LAYER;
    drawing.add_entity(e);
}

/// Indices of the stations to write: all of them up to `max` (at least 2), else `max` evenly
/// spaced ones that always include the first, the last and `top`.
pub fn thin_indices(len: usize, top: usize, max: usize) -> Vec<usize> {
    let max = max.max(2);
    if len <= max {
        return (0..len).collect();
    }
    let mut idx: Vec<usize> = (0..max).map(|k| k * (len - 1) / (max - 1)).collect();
    // With only the two ends kept there is no interior slot to give to the top.
    if top < len && idx.len() > 2 && idx.binary_search(&top).is_err() {
        // Replace the nearest kept index so the count stays at `max` and the top is exact.
        let pos = idx.partition_point(|&i| i < top);
        let near = if pos == 0 {
            0
        } else if pos == idx.len() || top - idx[pos - 1] <= idx[pos] - top {
            pos - 1
        } else {
            pos
        };
        // Never replace the first or last station.
        let near = near.clamp(1, idx.len() - 2);
        idx[near] = top;
        idx.sort_unstable();
        idx.dedup();
    }
    idx
}

#[cfg(test)]
mod tests {
    use super::*;

    // Thinning contract (this module's doc): all stations kept up to the cap; above it exactly the
    // cap, sorted, with first, last and top present.
    #[test]
    fn thinning_keeps_ends_and_top() {
        assert_eq!(thin_indices(5, 2, 10), vec![0, 1, 2, 3, 4]);
        let idx = thin_indices(100_001, 33_333, 1000);
        assert_eq!(idx.len(), 1000);
        assert_eq!((idx[0], *idx.last().unwrap()), (0, 100_000));
        assert!(idx.binary_search(&33_333).is_ok());
        assert!(idx.windows(2).all(|w| w[0] < w[1]));
        // Degenerate caps still give a valid, sorted list.
        assert_eq!(thin_indices(10, 9, 0), vec![0, 9]);
        assert_eq!(thin_indices(10, 5, 2), vec![0, 9]);
    }
}
