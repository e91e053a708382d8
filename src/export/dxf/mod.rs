//! DXF export: a 3D model (Z up) and a 2D elevation (XY plane) of the design, with running rails,
//! dimensions and notes, written by our own small writer ([`writer`], [`sections`]); the `dxf`
//! crate is used for reading drawings only ([`crate::import`]).
//!
//! This module owns the `<name>.dxf` file and which layer holds what (all names our own):
//! - 3D model, world coordinates in metres (X along the entry direction, Y to the rider's left at
//!   entry, Z up, heartline entry at the origin), the whole path including the leads:
//!   [`LAYER_RAIL`] (rail centreline), [`LAYER_HEARTLINE`], [`LAYER_RAIL_LEFT`] and
//!   [`LAYER_RAIL_RIGHT`] (running rails, half the brief's gauge either side of the rail
//!   centreline along the rider's left axis).
//! - 2D elevation in the XY plane (X along the track, Y up, Z = 0), above the 3D model's plan view:
//!   [`LAYER_ELEV_RAIL`] and [`LAYER_ELEV_HEARTLINE`] (the loop proper), [`LAYER_ELEV_LEAD`] (lead
//!   track), [`LAYER_ELEV_MARKS`] (entry and exit marks, direction of travel), [`LAYER_ELEV_DIMS`]
//!   (DIMENSION entities: loop height, footprint, top radius).
//! - [`LAYER_NOTES`]: key figures (MTEXT) and the caution (TEXT lines), below the plan view.
//!
//! Curves are cubic SPLINE entities fitted within [`fit::FIT_TOLERANCE_M`] of every station, or,
//! with the brief's `dxf_curves = "polyline"`, one vertex per station (3D POLYLINE; LWPOLYLINE in
//! the elevation). The file is AutoCAD 2000 (AC1015) ASCII DXF with $INSUNITS = 6 (metres),
//! extents and limits that fit the drawing, fixed dates and GUIDs derived from the brief: the same
//! brief always gives the same bytes.

pub mod elevation;
pub mod fit;
pub mod sections;
pub mod writer;

use nalgebra::{Vector2, Vector3};

use super::ExportError;
use super::chart::{clean_text, wrap};
use crate::brief::DxfCurves;
use crate::model::Assessment;
use crate::report::CAUTION;
use writer::{MODEL_SPACE_RECORD, Writer};

/// Layer of the rail centreline (3D).
pub const LAYER_RAIL: &str = "LW-RAIL";
/// Layer of the heartline (3D).
pub const LAYER_HEARTLINE: &str = "LW-HEARTLINE";
/// Running rail on the rider's left (3D).
pub const LAYER_RAIL_LEFT: &str = "LW-RAIL-LEFT";
/// Running rail on the rider's right (3D).
pub const LAYER_RAIL_RIGHT: &str = "LW-RAIL-RIGHT";
/// Elevation: rail centreline of the loop proper.
pub const LAYER_ELEV_RAIL: &str = "LW-ELEV-RAIL";
/// Elevation: heartline of the loop proper.
pub const LAYER_ELEV_HEARTLINE: &str = "LW-ELEV-HEARTLINE";
/// Elevation: lead track (rail centreline before entry and after exit).
pub const LAYER_ELEV_LEAD: &str = "LW-ELEV-LEAD";
/// Elevation: entry and exit marks and the direction of travel.
pub const LAYER_ELEV_MARKS: &str = "LW-ELEV-MARKS";
/// Elevation: dimensions.
pub const LAYER_ELEV_DIMS: &str = "LW-ELEV-DIMS";
/// Key figures and caution text.
pub const LAYER_NOTES: &str = "LW-NOTES";

/// Layers and their AutoCAD colour index (plain ACI numbers: 5 blue, 30 orange, 4 cyan,
/// 6 magenta, 8 grey, 1 red, 3 green, 7 white/black), the rail and heartline hues as in the SVGs.
const LAYERS: [(&str, u8); 10] = [
    (LAYER_RAIL, 5),
    (LAYER_HEARTLINE, 30),
    (LAYER_RAIL_LEFT, 4),
    (LAYER_RAIL_RIGHT, 6),
    (LAYER_ELEV_RAIL, 5),
    (LAYER_ELEV_HEARTLINE, 30),
    (LAYER_ELEV_LEAD, 8),
    (LAYER_ELEV_MARKS, 1),
    (LAYER_ELEV_DIMS, 3),
    (LAYER_NOTES, 7),
];

/// Most vertices written per polyline (polyline form). Up to this every station is kept; above it
/// the stations are thinned evenly (the top station always kept) so that CAD tools stay responsive.
pub const MAX_VERTICES: usize = 20_000;

/// Characters per line when the caution is split into TEXT entities (TEXT is single-line, and
/// single-line TEXT is the entity every DXF reader understands).
const NOTE_LINE_CHARS: usize = 90;

/// A DXF and what was measured writing it.
#[derive(Debug, Clone, PartialEq)]
pub struct DxfOutput {
    pub bytes: Vec<u8>,
    /// Largest distance from a station to its fitted SPLINE over every curve, m (0 in polyline form).
    pub max_fit_error_m: f64,
}

/// DXF bytes of the design.
pub fn dxf_bytes(design: &Assessment) -> Result<Vec<u8>, ExportError> {
    dxf_output(design).map(|o| o.bytes)
}

/// FNV-1a over the brief's JSON echo, two ways: 128 bits for the file's GUIDs.
fn brief_bits(design: &Assessment) -> [u64; 2] {
    let text = serde_json::to_string(&design.brief).unwrap_or_default();
    let fnv = |basis: u64| {
        text.bytes().fold(basis, |h, b| {
            (h ^ u64::from(b)).wrapping_mul(0x0000_0100_0000_01B3)
        })
    };
    [fnv(0xCBF2_9CE4_8422_2325), fnv(0x6C62_272E_07BB_0142)]
}

/// Bounding box of points.
#[derive(Clone, Copy)]
struct Bounds {
    lo: Vector3<f64>,
    hi: Vector3<f64>,
}

impl Bounds {
    fn new() -> Bounds {
        Bounds {
            lo: Vector3::repeat(f64::INFINITY),
            hi: Vector3::repeat(f64::NEG_INFINITY),
        }
    }
    fn add(&mut self, p: &Vector3<f64>) {
        self.lo = self.lo.inf(p);
        self.hi = self.hi.sup(p);
    }
}

/// Writes curves in the brief's form and keeps the largest fit error.
struct Curves<'a> {
    w: &'a mut Writer,
    /// Whether each station starts a new smooth piece (a knot the spline must have).
    breaks: Vec<bool>,
    /// Whether each station is the first at a curvature step (the curvature may jump there).
    steps: Vec<bool>,
    /// Index of the first station of the curve being written.
    from: usize,
    form: DxfCurves,
    max_err: f64,
}

impl Curves<'_> {
    fn curve3d(&mut self, layer: &str, s: &[f64], p: &[Vector3<f64>], top: usize) {
        match self.form {
            DxfCurves::Spline => {
                let brk = &self.breaks[self.from..self.from + p.len()];
                let hard = &self.steps[self.from..self.from + p.len()];
                if let Some(f) = fit::fit_cubic(s, p, brk, hard, fit::FIT_TOLERANCE_M) {
                    self.max_err = self.max_err.max(f.max_error_m);
                    self.w.spline(layer, &f.nurbs);
                }
            }
            DxfCurves::Polyline => {
                let pts: Vec<_> = thin_indices(p.len(), top, MAX_VERTICES)
                    .into_iter()
                    .map(|i| p[i])
                    .collect();
                self.w.polyline3d(layer, &pts);
            }
        }
    }

    fn curve2d(&mut self, layer: &str, s: &[f64], p: &[Vector2<f64>]) {
        let flat: Vec<Vector3<f64>> = p.iter().map(|q| Vector3::new(q.x, q.y, 0.0)).collect();
        match self.form {
            DxfCurves::Spline => self.curve3d(layer, s, &flat, 0),
            DxfCurves::Polyline => {
                let pts: Vec<_> = thin_indices(p.len(), 0, MAX_VERTICES)
                    .into_iter()
                    .map(|i| p[i])
                    .collect();
                self.w.lwpolyline(layer, &pts);
            }
        }
    }
}

/// DXF bytes of the design and the fit error measured on the way.
pub fn dxf_output(design: &Assessment) -> Result<DxfOutput, ExportError> {
    let enc = |message: String| ExportError::Encode {
        what: "DXF",
        message,
    };
    let path = &design.best.path;
    let st = &path.stations;
    if st.len() < 2 {
        return Err(enc(format!(
            "a curve needs at least 2 stations, the design has {}",
            st.len()
        )));
    }
    let finite = |v: &Vector3<f64>| v.iter().all(|c| c.is_finite());
    if let Some(x) = st
        .iter()
        .find(|x| !finite(&x.rail_m) || !finite(&x.heartline_m) || !finite(&x.left))
    {
        return Err(enc(format!(
            "the station at s = {} m has a non-finite position",
            x.s_m
        )));
    }
    let half = design.brief.gauge_m / 2.0;
    let s: Vec<f64> = st.iter().map(|x| x.s_m).collect();
    let rail: Vec<Vector3<f64>> = st.iter().map(|x| x.rail_m).collect();
    let heart: Vec<Vector3<f64>> = st.iter().map(|x| x.heartline_m).collect();
    let left: Vec<Vector3<f64>> = st.iter().map(|x| x.rail_m + x.left * half).collect();
    let right: Vec<Vector3<f64>> = st.iter().map(|x| x.rail_m - x.left * half).collect();
    let mut model = Bounds::new();
    for p in rail.iter().chain(&heart).chain(&left).chain(&right) {
        model.add(p);
    }
    let extent = (model.hi - model.lo).max().max(1.0);
    let t = extent / (0.9 * NOTE_LINE_CHARS as f64);

    // The elevation sits above the model's plan view, clear of it by room for the footprint
    // dimension below the elevation's track.
    let place = elevation::Place {
        y0: model.hi.y + (10.0 * t).max(2.0) - model.lo.z,
        text_m: t,
    };
    let in_loop: Vec<usize> = (0..st.len()).filter(|&i| st[i].in_loop).collect();
    let (first, last) = match (in_loop.first(), in_loop.last()) {
        (Some(&a), Some(&b)) if b > a => (a, b),
        _ => (0, st.len() - 1),
    };
    let top = path.top_index();

    let mut w = Writer::new();
    let mut curves = Curves {
        w: &mut w,
        form: design.brief.dxf_curves,
        max_err: 0.0,
        breaks: (0..st.len())
            .map(|i| i > 0 && st[i].piece != st[i - 1].piece)
            .collect(),
        steps: (0..st.len())
            .map(|i| {
                (i == 0 || st[i - 1].s_m < st[i].s_m)
                    && path.steps.iter().any(|k| (k.s_m - st[i].s_m).abs() < 1e-9)
            })
            .collect(),
        from: 0,
    };
    curves.curve3d(LAYER_RAIL, &s, &rail, top);
    curves.curve3d(LAYER_HEARTLINE, &s, &heart, top);
    curves.curve3d(LAYER_RAIL_LEFT, &s, &left, top);
    curves.curve3d(LAYER_RAIL_RIGHT, &s, &right, top);
    let mut sheet = Bounds::new();
    let mut elev = |range: std::ops::RangeInclusive<usize>, pts: &[Vector3<f64>]| {
        let p: Vec<Vector2<f64>> = pts[range.clone()].iter().map(|q| place.at(q)).collect();
        for q in &p {
            sheet.add(&Vector3::new(q.x, q.y, 0.0));
        }
        (s[range].to_vec(), p)
    };
    curves.from = first;
    let (ls, lp) = elev(first..=last, &rail);
    curves.curve2d(LAYER_ELEV_RAIL, &ls, &lp);
    let (ls, lp) = elev(first..=last, &heart);
    let loop_max_x = lp.iter().map(|q| q.x).fold(f64::MIN, f64::max);
    curves.curve2d(LAYER_ELEV_HEARTLINE, &ls, &lp);
    for range in [0..=first, last..=st.len() - 1] {
        if range.end() > range.start() {
            curves.from = *range.start();
            let (ls, lp) = elev(range, &rail);
            curves.curve2d(LAYER_ELEV_LEAD, &ls, &lp);
        }
    }
    let max_fit_error_m = curves.max_err;
    elevation::marks(
        &mut w,
        &place,
        MODEL_SPACE_RECORD,
        (rail[first], heart[first]),
        (rail[last], heart[last]),
    );
    elevation::dimensions(
        &mut w,
        &place,
        heart[first],
        heart[last],
        heart[top],
        design.best.top_radius_m,
        loop_max_x,
        model.lo.z,
    );
    // Room for the marks, arrow and dimensions around the elevation's curves.
    sheet.add(&Vector3::new(
        sheet.lo.x - 10.0 * t,
        sheet.lo.y - 5.0 * t,
        0.0,
    ));
    sheet.add(&Vector3::new(
        loop_max_x + 6.0 * t,
        sheet.hi.y + 3.0 * t,
        0.0,
    ));

    // Notes below the plan view: key figures, then the caution.
    let b = &design.brief;
    let sm = &design.best.summary;
    let figures = [
        format!(
            "loopwright: {} - {} loop",
            clean_text(&b.title),
            design.best.label()
        ),
        format!(
            "entry speed {:.2} m/s; loop height {:.3} m (heartline), {:.3} m (rail); footprint {:.3} m; top radius {:.3} m",
            b.entry_speed_m_s,
            sm.loop_height_m,
            sm.rail_height_m,
            sm.footprint_length_m,
            design.best.top_radius_m
        ),
        format!(
            "peak normal {:.2} g; top normal {:.2} g; heartline {:.2} m above the rail centreline; gauge {:.3} m (illustrative unless the brief sets it)",
            sm.peak_normal_g, sm.top_normal_g, path.heartline_height_m, b.gauge_m
        ),
        format!(
            "Units: metres. 3D layers: X along entry, Y left, Z up, entry heartline at the origin. Elevation layers: X along the track, Y up, entry heartline at Y = {:.3}.",
            place.y0
        ),
    ];
    let notes_top = Vector2::new(model.lo.x, model.lo.y - 3.0 * t);
    w.mtext(
        LAYER_NOTES,
        MODEL_SPACE_RECORD,
        notes_top,
        t,
        1,
        0.0,
        &figures,
    );
    let caution = wrap(CAUTION, NOTE_LINE_CHARS);
    let caution_y =
        |k: usize| notes_top.y - (figures.len() as f64 + 1.5 + 1.6 * k as f64) * 1.7 * t;
    for (k, line) in caution.iter().enumerate() {
        // Control characters would reach CAD as ^-escapes; spaces read better.
        let at = Vector2::new(notes_top.x, caution_y(k));
        w.text_line(LAYER_NOTES, MODEL_SPACE_RECORD, at, t, &clean_text(line));
    }
    let widest = t * (figures.iter().map(|l| l.chars().count()).max().unwrap_or(1) + 2) as f64;
    sheet.add(&Vector3::new(notes_top.x + widest, notes_top.y, 0.0));
    sheet.add(&Vector3::new(notes_top.x, caution_y(caution.len()), 0.0));

    let mut all = model;
    all.add(&sheet.lo);
    all.add(&sheet.hi);
    let frame = sections::Frame {
        layers: &LAYERS,
        min: all.lo,
        max: all.hi,
        dim_text_m: t,
        guid_bits: brief_bits(design),
    };
    Ok(DxfOutput {
        bytes: sections::assemble(w, &frame),
        max_fit_error_m,
    })
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
