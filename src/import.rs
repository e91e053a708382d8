//! Import: reading a centreline drawn or produced elsewhere, as ordered 3D points.
//!
//! This stage sits before geometry: it only turns a file into points (metres, Z up) and rejects
//! files that cannot be one centreline, with a message saying what was found. Fitting a smooth
//! curve through the points is the geometry stage's job ([`crate::geometry::fit`]).
//!
//! Formats, chosen by extension (`.dxf`, otherwise CSV):
//! - DXF: one POLYLINE (2D or 3D), LWPOLYLINE or SPLINE on the layer chosen with `--layer` (read with
//!   the `dxf` crate). Without a layer the file must hold exactly one such curve. LWPOLYLINE points
//!   are mapped from their object coordinate system by the DXF "arbitrary axis algorithm"; arc
//!   bulges are sampled as arcs. SPLINE entities are evaluated from control points, knots and
//!   weights (de Boor's algorithm), or their fit points are used when they have no control points.
//! - CSV: a header naming `x_m,y_m,z_m` (or `x,y,z`, any case, in any columns), or no header and
//!   the first three columns are x, y, z. Lines starting with `#` are skipped.
//!
//! Which line the points are. loopwright's own files say it, and are read by it: its loads CSV has
//! the heartline in `x_m,y_m,z_m` and the rail in `rail_x_m,rail_y_m,rail_z_m` (recognised by
//! those rail columns), and its DXF draws the rail on [`RAIL_LAYER`] and the heartline on
//! [`HEARTLINE_LAYER`]. Asked for no line in particular, a loads CSV gives its heartline; asked
//! for the rail, its rail columns. A request the file contradicts (the heartline of a file that
//! holds only the rail, the rail from the heartline layer) is refused, never read as the other.
//!
//! Consecutive points closer than 1 µm (e.g. the doubled station at a curvature step) are merged.
//!
//! ```
//! use loopwright::import::parse_csv;
//! let c = parse_csv("x_m,y_m,z_m\n0,0,0\n1,0,0\n2,0,0.1\n3,0,0.3\n4,0,0.6\n5,0,1\n6,0,1.5\n7,0,2.1\n", "demo").unwrap();
//! assert_eq!(c.points_m.len(), 8);
//! assert!(loopwright::import::parse_csv("x_m,y_m,z_m\n0,0,nan\n", "bad").is_err());
//! ```

use dxf::Drawing;
use dxf::entities::{EntityType, LwPolyline, Spline};
use nalgebra::Vector3;
use std::path::{Path, PathBuf};

use crate::geometry::fit::PointsAre;

/// The layer of loopwright's own DXF holding the rail centreline (`export::dxf` writes it; a test
/// checks the two agree).
pub const RAIL_LAYER: &str = "LW-RAIL";
/// The layer of loopwright's own DXF holding the heartline.
pub const HEARTLINE_LAYER: &str = "LW-HEARTLINE";
/// The rail columns of loopwright's loads CSV (x, y, z).
pub const RAIL_COLUMNS: [&str; 3] = ["rail_x_m", "rail_y_m", "rail_z_m"];

/// Largest file read, bytes: a centreline of the most points allowed is well under this.
pub const MAX_FILE_BYTES: u64 = 64 << 20;
/// Most points accepted (after sampling arcs and splines).
pub const MAX_POINTS: usize = 200_000;
/// Fewest points a smoothing spline of a loop can be fitted to.
pub const MIN_POINTS: usize = 8;
/// Consecutive points closer than this are one point, m.
const DUPLICATE_M: f64 = 1e-6;
/// Points per span when sampling LWPOLYLINE arcs and SPLINE entities.
const SAMPLES_PER_SPAN: usize = 16;
/// Largest coordinate magnitude accepted, m (beyond it the file is not in metres or is corrupt).
const MAX_COORD_M: f64 = 1e6;

/// Ordered centreline points read from a file.
#[derive(Debug, Clone, PartialEq)]
pub struct ImportedCentreline {
    pub points_m: Vec<Vector3<f64>>,
    /// What was read, for reports ("CSV columns x_m,y_m,z_m", "DXF LWPOLYLINE on layer TRACK").
    pub source: String,
    /// Consecutive duplicate points merged.
    pub merged_duplicates: usize,
    /// Which line the file says the points are (loopwright's loads CSV and DXF layers); `None`
    /// when it does not say.
    pub points_are: Option<PointsAre>,
}

/// Why a file could not be read as a centreline.
#[derive(Debug, thiserror::Error)]
pub enum ImportError {
    /// The file could not be opened or read.
    #[error("cannot read {path}: {message}")]
    Io { path: PathBuf, message: String },
    /// The file was read but is not a usable centreline.
    #[error("{what}: {message}")]
    Format { what: String, message: String },
}

fn format_err(what: &str, message: impl Into<String>) -> ImportError {
    ImportError::Format {
        what: what.to_string(),
        message: message.into(),
    }
}

/// Read a centreline file: DXF by extension (`.dxf`, any case), otherwise CSV; whichever line
/// the file says it holds.
pub fn read_centreline(
    path: &Path,
    layer: Option<&str>,
) -> Result<ImportedCentreline, ImportError> {
    read_centreline_as(path, layer, None)
}

/// Read a centreline file as the line `wanted` (rail or heartline; `None`: whichever the file
/// says): a loads CSV gives that line's columns, and a file that says it holds the other line is
/// refused (see the module docs).
pub fn read_centreline_as(
    path: &Path,
    layer: Option<&str>,
    wanted: Option<PointsAre>,
) -> Result<ImportedCentreline, ImportError> {
    let io = |message: String| ImportError::Io {
        path: path.to_path_buf(),
        message,
    };
    let meta = std::fs::metadata(path).map_err(|e| io(e.to_string()))?;
    let what = path.display().to_string();
    if meta.len() > MAX_FILE_BYTES {
        return Err(format_err(
            &what,
            format!(
                "is {} bytes; check reads centrelines of at most {MAX_FILE_BYTES} bytes ({MAX_POINTS} points)",
                meta.len()
            ),
        ));
    }
    if meta.len() == 0 {
        return Err(format_err(
            &what,
            "is empty; give a DXF with a polyline or spline, or a CSV of x,y,z points",
        ));
    }
    let is_dxf = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("dxf"));
    if is_dxf {
        let bytes = std::fs::read(path).map_err(|e| io(e.to_string()))?;
        let c = parse_dxf_bytes(&bytes, layer, wanted, &what)?;
        match (wanted, c.points_are) {
            (Some(w), Some(said)) if w != said => {
                let (w, said, other) = match w {
                    PointsAre::Rail => ("rail", "heartline", RAIL_LAYER),
                    PointsAre::Heartline => ("heartline", "rail", HEARTLINE_LAYER),
                };
                Err(format_err(
                    &what,
                    format!(
                        "{} is loopwright's {said} layer; --points {w} would read it as the {w}. Use --points {said}, or --layer {other}",
                        c.source
                    ),
                ))
            }
            _ => Ok(c),
        }
    } else {
        if layer.is_some() {
            return Err(format_err(
                &what,
                "--layer applies to DXF files only; this file is read as CSV",
            ));
        }
        let bytes = std::fs::read(path).map_err(|e| io(e.to_string()))?;
        let text = String::from_utf8(bytes).map_err(|_| {
            format_err(
                &what,
                "is not UTF-8 text; a CSV of x,y,z points was expected",
            )
        })?;
        parse_csv_as(&text, &what, wanted)
    }
}

/// Parse CSV text of x, y, z points, whichever line it says it holds.
pub fn parse_csv(text: &str, what: &str) -> Result<ImportedCentreline, ImportError> {
    parse_csv_as(text, what, None)
}

/// Parse CSV text of x, y, z points as the line `wanted` (see the module docs for the accepted
/// layouts and how loopwright's loads CSV is read).
pub fn parse_csv_as(
    text: &str,
    what: &str,
    wanted: Option<PointsAre>,
) -> Result<ImportedCentreline, ImportError> {
    let lines: Vec<&str> = text
        .lines()
        .filter(|l| !l.trim().is_empty() && !l.trim_start().starts_with('#'))
        .collect();
    if lines.is_empty() {
        return Err(format_err(
            what,
            "holds no rows; give x,y,z points, one per row",
        ));
    }
    let joined = lines.join("\n");
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .trim(csv::Trim::All)
        .flexible(true)
        .from_reader(joined.as_bytes());
    let mut records = reader.records();
    let first = match records.next() {
        Some(Ok(r)) => r,
        Some(Err(e)) => return Err(format_err(what, format!("is not valid CSV: {e}"))),
        None => return Err(format_err(what, "holds no rows")),
    };
    let numeric = |s: &str| s.parse::<f64>().is_ok();
    let (cols, header, source, points_are) =
        if first.iter().take(3).all(numeric) && first.len() >= 3 {
            (
                [0, 1, 2],
                false,
                "CSV, first three columns as x, y, z".to_string(),
                None,
            )
        } else {
            header_columns(&first, what, wanted)?
        };
    let mut points = Vec::new();
    let row_of = |rec: &csv::StringRecord, row: usize| -> Result<Vector3<f64>, ImportError> {
        let mut p = [0.0; 3];
        for (k, &c) in cols.iter().enumerate() {
            let cell = rec.get(c).ok_or_else(|| {
                format_err(
                    what,
                    format!(
                        "row {row} has {} columns; column {} is missing",
                        rec.len(),
                        c + 1
                    ),
                )
            })?;
            let v: f64 = cell.parse().map_err(|_| {
                format_err(
                    what,
                    format!("row {row}, column {}: '{cell}' is not a number", c + 1),
                )
            })?;
            check_coord(v, what, &format!("row {row}, {}", ["x", "y", "z"][k]))?;
            p[k] = v;
        }
        Ok(Vector3::new(p[0], p[1], p[2]))
    };
    if !header {
        points.push(row_of(&first, 1)?);
    }
    for (i, rec) in records.enumerate() {
        let rec = rec.map_err(|e| format_err(what, format!("is not valid CSV: {e}")))?;
        if points.len() >= MAX_POINTS {
            return Err(format_err(
                what,
                format!(
                    "has more than {MAX_POINTS} points; thin it (a loop needs a point every few centimetres at most)"
                ),
            ));
        }
        points.push(row_of(&rec, i + 2)?);
    }
    let mut c = finish(points, source, what)?;
    c.points_are = points_are;
    Ok(c)
}

/// The x, y, z columns of a CSV header for the line `wanted`, what they are, and which line the
/// header says they hold (see the module docs).
fn header_columns(
    first: &csv::StringRecord,
    what: &str,
    wanted: Option<PointsAre>,
) -> Result<([usize; 3], bool, String, Option<PointsAre>), ImportError> {
    let find = |names: &[&str]| {
        first
            .iter()
            .position(|h| names.iter().any(|n| h.eq_ignore_ascii_case(n)))
    };
    let all = |c: [Option<usize>; 3]| match c {
        [Some(x), Some(y), Some(z)] => Some([x, y, z]),
        _ => None,
    };
    let heart = all([
        find(&["x_m", "x"]),
        find(&["y_m", "y"]),
        find(&["z_m", "z"]),
    ]);
    let rail = all(RAIL_COLUMNS.map(|n| find(&[n])));
    let named = |c: [usize; 3]| format!("{},{},{}", &first[c[0]], &first[c[1]], &first[c[2]]);
    Ok(match (heart, rail, wanted) {
        (_, Some(r), Some(PointsAre::Rail)) | (None, Some(r), None) => (
            r,
            true,
            format!("CSV rail columns {}", named(r)),
            Some(PointsAre::Rail),
        ),
        (Some(h), Some(r), _) => (
            h,
            true,
            format!(
                "loopwright loads CSV, heartline columns {} (the rail is in {}: --points rail reads it)",
                named(h),
                named(r)
            ),
            Some(PointsAre::Heartline),
        ),
        (Some(h), None, _) => (h, true, format!("CSV columns {}", named(h)), None),
        (None, Some(r), Some(PointsAre::Heartline)) => {
            return Err(format_err(
                what,
                format!(
                    "holds only the rail columns {}, not the heartline that --points heartline asks for; use --points rail",
                    named(r)
                ),
            ));
        }
        (None, None, _) => {
            let found: Vec<&str> = first.iter().collect();
            return Err(format_err(
                what,
                format!(
                    "has a header without x_m, y_m and z_m columns (found: {}); name them, or give three numeric columns without a header",
                    found.join(", ")
                ),
            ));
        }
    })
}

fn check_coord(v: f64, what: &str, at: &str) -> Result<(), ImportError> {
    if !v.is_finite() {
        return Err(format_err(
            what,
            format!(
                "{at} = {v} is not a finite number; every coordinate must be a finite value in metres"
            ),
        ));
    }
    if v.abs() > MAX_COORD_M {
        return Err(format_err(
            what,
            format!("{at} = {v} m is beyond ±{MAX_COORD_M} m; give coordinates in metres"),
        ));
    }
    Ok(())
}

/// Merge duplicates and check the count.
fn finish(
    raw: Vec<Vector3<f64>>,
    source: String,
    what: &str,
) -> Result<ImportedCentreline, ImportError> {
    let mut points: Vec<Vector3<f64>> = Vec::with_capacity(raw.len());
    let mut merged = 0;
    for p in raw {
        match points.last() {
            Some(q) if (p - q).norm() < DUPLICATE_M => merged += 1,
            _ => points.push(p),
        }
    }
    if points.len() < MIN_POINTS {
        return Err(format_err(
            what,
            format!(
                "has {} distinct points; at least {MIN_POINTS} are needed to fit a smooth centreline",
                points.len()
            ),
        ));
    }
    if points.len() > MAX_POINTS {
        return Err(format_err(
            what,
            format!(
                "has {} points; at most {MAX_POINTS} are accepted",
                points.len()
            ),
        ));
    }
    Ok(ImportedCentreline {
        points_m: points,
        source,
        merged_duplicates: merged,
        points_are: None,
    })
}

/// The centreline on `layer` of a loaded drawing; with no layer, its only curve, or in a file of
/// loopwright's own (rail and heartline layers) the line `wanted`, the rail by default.
pub fn from_drawing(
    drawing: &Drawing,
    layer: Option<&str>,
    wanted: Option<PointsAre>,
    what: &str,
) -> Result<ImportedCentreline, ImportError> {
    let is_curve = |t: &EntityType| {
        matches!(
            t,
            EntityType::Polyline(_) | EntityType::LwPolyline(_) | EntityType::Spline(_)
        )
    };
    let curves: Vec<_> = drawing
        .entities()
        .filter(|e| is_curve(&e.specific))
        .collect();
    let mut layers: Vec<String> = drawing.layers().map(|l| l.name.clone()).collect();
    for e in drawing.entities() {
        if !layers.contains(&e.common.layer) {
            layers.push(e.common.layer.clone());
        }
    }
    let curve_layers: Vec<String> = {
        let mut v: Vec<String> = curves.iter().map(|e| e.common.layer.clone()).collect();
        v.dedup();
        v
    };
    let chosen: Vec<_> = match layer {
        Some(name) => {
            // DXF layer names are case-insensitive.
            if !layers.iter().any(|l| l.eq_ignore_ascii_case(name)) {
                return Err(format_err(
                    what,
                    format!(
                        "has no layer '{name}'; layers in the file: {}",
                        if layers.is_empty() {
                            "(none)".into()
                        } else {
                            layers.join(", ")
                        }
                    ),
                ));
            }
            curves
                .iter()
                .filter(|e| e.common.layer.eq_ignore_ascii_case(name))
                .collect()
        }
        None => {
            // loopwright's own DXF holds the rail and the heartline, each on its layer: with no
            // layer asked, read the line wanted (the rail unless the heartline is asked for), as
            // a loads CSV gives its columns.
            let own = match wanted {
                Some(PointsAre::Heartline) => HEARTLINE_LAYER,
                _ => RAIL_LAYER,
            };
            let on_own: Vec<_> = curves
                .iter()
                .filter(|e| e.common.layer.eq_ignore_ascii_case(own))
                .collect();
            if curves.len() > 1 && on_own.len() == 1 {
                on_own
            } else {
                curves.iter().collect()
            }
        }
    };
    let on = layer.map_or(String::new(), |l| format!(" on layer '{l}'"));
    let e = match chosen.len() {
        0 => {
            return Err(format_err(
                what,
                format!(
                    "holds no POLYLINE, LWPOLYLINE or SPLINE{on}; layers with such curves: {}",
                    if curve_layers.is_empty() {
                        "(none)".into()
                    } else {
                        curve_layers.join(", ")
                    }
                ),
            ));
        }
        1 => chosen[0],
        n => {
            return Err(format_err(
                what,
                format!(
                    "holds {n} curves{on} (layers: {}); put the centreline alone on a layer and choose it with --layer",
                    curve_layers.join(", ")
                ),
            ));
        }
    };
    let layer_name = &e.common.layer;
    let (kind, raw) = match &e.specific {
        EntityType::Polyline(p) => (
            "POLYLINE",
            p.vertices()
                .map(|v| Vector3::new(v.location.x, v.location.y, v.location.z))
                .collect(),
        ),
        EntityType::LwPolyline(p) => ("LWPOLYLINE", lwpolyline_points(p)),
        EntityType::Spline(s) => (
            "SPLINE",
            spline_points(s)
                .map_err(|m| format_err(what, format!("SPLINE on layer '{layer_name}': {m}")))?,
        ),
        _ => unreachable!("filtered to curves above"),
    };
    for (i, p) in raw.iter().enumerate() {
        for (k, v) in p.iter().enumerate() {
            check_coord(
                *v,
                what,
                &format!("{kind} point {}, {}", i + 1, ["x", "y", "z"][k]),
            )?;
        }
    }
    let mut c = finish(raw, format!("DXF {kind} on layer '{layer_name}'"), what)?;
    c.points_are = if layer_name.eq_ignore_ascii_case(RAIL_LAYER) {
        Some(PointsAre::Rail)
    } else if layer_name.eq_ignore_ascii_case(HEARTLINE_LAYER) {
        Some(PointsAre::Heartline)
    } else {
        None
    };
    Ok(c)
}

/// The DXF "arbitrary axis algorithm": the object coordinate system of an extrusion direction.
fn ocs_axes(n: Vector3<f64>) -> (Vector3<f64>, Vector3<f64>, Vector3<f64>) {
    let n = if n.norm() > 0.0 {
        n.normalize()
    } else {
        Vector3::z()
    };
    let ax = if n.x.abs() < 1.0 / 64.0 && n.y.abs() < 1.0 / 64.0 {
        Vector3::y().cross(&n)
    } else {
        Vector3::z().cross(&n)
    };
    let ax = ax.normalize();
    let ay = n.cross(&ax).normalize();
    (ax, ay, n)
}

/// LWPOLYLINE vertices in world coordinates, with bulged spans sampled as circular arcs.
fn lwpolyline_points(p: &LwPolyline) -> Vec<Vector3<f64>> {
    let ext = &p.extrusion_direction;
    let (ax, ay, _) = ocs_axes(Vector3::new(ext.x, ext.y, ext.z));
    let world = |x: f64, y: f64| ax * x + ay * y;
    let mut out = Vec::new();
    let v = &p.vertices;
    for (i, a) in v.iter().enumerate() {
        out.push(world(a.x, a.y));
        let Some(b) = v.get(i + 1) else { break };
        if a.bulge.abs() > 1e-12 && a.bulge.is_finite() {
            // Bulge = tan(included angle / 4); the arc's centre lies off the chord midpoint.
            let angle = 4.0 * a.bulge.atan();
            let (dx, dy) = (b.x - a.x, b.y - a.y);
            let chord = dx.hypot(dy);
            if chord > 0.0 {
                let r = chord / (2.0 * (angle / 2.0).sin());
                let mid = (0.5 * (a.x + b.x), 0.5 * (a.y + b.y));
                let off = r * (angle / 2.0).cos();
                let (nx, ny) = (-dy / chord, dx / chord);
                let c = (mid.0 + off * nx, mid.1 + off * ny);
                let a0 = (a.y - c.1).atan2(a.x - c.0);
                for k in 1..SAMPLES_PER_SPAN {
                    let t = a0 + angle * k as f64 / SAMPLES_PER_SPAN as f64;
                    out.push(world(c.0 + r.abs() * t.cos(), c.1 + r.abs() * t.sin()));
                }
            }
        }
    }
    out
}

/// Points along a SPLINE: its B-spline evaluated densely, or its fit points.
fn spline_points(s: &Spline) -> Result<Vec<Vector3<f64>>, String> {
    let ctrl = &s.control_points;
    if ctrl.is_empty() {
        if s.fit_points.is_empty() {
            return Err("has neither control points nor fit points".into());
        }
        return Ok(s
            .fit_points
            .iter()
            .map(|p| Vector3::new(p.x, p.y, p.z))
            .collect());
    }
    let p = usize::try_from(s.degree_of_curve)
        .map_err(|_| format!("degree {} is not valid", s.degree_of_curve))?;
    let knots = &s.knot_values;
    if p == 0 || p > 10 || knots.len() != ctrl.len() + p + 1 {
        return Err(format!(
            "degree {p} with {} control points needs {} knots, found {}",
            ctrl.len(),
            ctrl.len() + p + 1,
            knots.len()
        ));
    }
    if knots.windows(2).any(|w| w[1] < w[0]) || knots.iter().any(|k| !k.is_finite()) {
        return Err("knots must be finite and non-decreasing".into());
    }
    let w: Vec<f64> = if s.weight_values.len() == ctrl.len() {
        s.weight_values.clone()
    } else {
        vec![1.0; ctrl.len()]
    };
    if w.iter().any(|v| !(v.is_finite() && *v > 0.0)) {
        return Err("weights must be positive".into());
    }
    // Homogeneous control points for rational evaluation.
    let hom: Vec<[f64; 4]> = ctrl
        .iter()
        .zip(&w)
        .map(|(c, wi)| [c.x * wi, c.y * wi, c.z * wi, *wi])
        .collect();
    let (t0, t1) = (knots[p], knots[ctrl.len()]);
    if t1 <= t0 {
        return Err("the knot vector spans no parameter range".into());
    }
    let spans = ctrl.len() - p;
    let n = (spans * SAMPLES_PER_SPAN).clamp(2, MAX_POINTS);
    let mut out = Vec::with_capacity(n + 1);
    for i in 0..=n {
        let t = t0 + (t1 - t0) * i as f64 / n as f64;
        // Knot span k with knots[k] <= t < knots[k+1] (last span closed at t1).
        let mut k = knots.partition_point(|&x| x <= t).saturating_sub(1);
        k = k.clamp(p, ctrl.len() - 1);
        // de Boor's algorithm.
        let mut d: Vec<[f64; 4]> = (0..=p).map(|j| hom[j + k - p]).collect();
        for r in 1..=p {
            for j in (r..=p).rev() {
                let i0 = j + k - p;
                let den = knots[i0 + p + 1 - r] - knots[i0];
                let a = if den > 0.0 {
                    (t - knots[i0]) / den
                } else {
                    0.0
                };
                let prev = d[j - 1];
                for (v, pv) in d[j].iter_mut().zip(prev) {
                    *v = (1.0 - a) * pv + a * *v;
                }
            }
        }
        let q = d[p];
        out.push(Vector3::new(q[0] / q[3], q[1] / q[3], q[2] / q[3]));
    }
    Ok(out)
}

/// Parse DXF bytes and read the centreline on `layer` (or, with none, the line `wanted` of a file
/// of loopwright's own; see [`from_drawing`]).
///
/// The third-party DXF parser is run under `catch_unwind`: a malformed file must give the user a
/// message, never a crash, whatever the parser does with it (found by fuzzing: see `fuzz/`).
pub fn parse_dxf_bytes(
    bytes: &[u8],
    layer: Option<&str>,
    wanted: Option<PointsAre>,
    what: &str,
) -> Result<ImportedCentreline, ImportError> {
    // Silence the default panic report for this call only; the user gets our message instead.
    let hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(|_| {}));
    let parsed = std::panic::catch_unwind(|| Drawing::load(&mut std::io::Cursor::new(bytes)));
    std::panic::set_hook(hook);
    let drawing = match parsed {
        Ok(Ok(d)) => d,
        Ok(Err(e)) => return Err(format_err(what, format!("is not a readable DXF: {e}"))),
        Err(_) => {
            return Err(format_err(
                what,
                "is not a readable DXF (the DXF parser gave up on it)",
            ));
        }
    };
    from_drawing(&drawing, layer, wanted, what)
}
