//! Import: reading a centreline drawn or produced elsewhere, as ordered 3D points.
//!
//! This stage sits before geometry: it only turns a file into points (metres, Z up) and rejects
//! files that cannot be one centreline, with a message saying what was found. Fitting a smooth
//! curve through the points is the geometry stage's job ([`crate::geometry::fit`]).
//!
//! Formats, chosen by extension (`.dxf`, otherwise CSV):
//! - DXF: one POLYLINE (2D or 3D), LWPOLYLINE or SPLINE on the layer chosen with `--layer` (read with
//!   the `dxf` crate), or, where there is none, a chain of LINEs joined end to end. Coordinates are
//!   scaled from the drawing's $INSUNITS (mm, cm, dm, m, in, ft, yd; none: metres) to metres, and
//!   the report's source says so. Which axis is up is settled afterwards by [`orient()`] (a loop
//!   drawn in the XY plane is an elevation with Y up; `check --up` overrides). Without a layer the file must hold exactly one such curve, or be loopwright's
//!   own (see below). LWPOLYLINE points
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
use dxf::entities::EntityType;
use nalgebra::Vector3;
use std::path::{Path, PathBuf};

use crate::geometry::fit::PointsAre;

mod curves;
mod orient;
use curves::{lwpolyline_points, spline_points};
pub use orient::{Up, orient, unit_scale};

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
    let what = path.display().to_string();
    // One bounded read (crate::input): regular files only, capped by the bytes actually read.
    let bytes = crate::input::read_bounded(path, MAX_FILE_BYTES, "centreline file").map_err(
        |e| match e {
            crate::input::InputError::Bad { message, .. } if message.starts_with("is larger") => {
                format_err(
                    &what,
                    format!(
                        "is more than {MAX_FILE_BYTES} bytes; check reads centrelines of at most {MAX_FILE_BYTES} bytes ({MAX_POINTS} points)"
                    ),
                )
            }
            crate::input::InputError::Bad { message, .. } => format_err(&what, message),
            other => io(other.to_string()),
        },
    )?;
    if bytes.is_empty() {
        return Err(format_err(
            &what,
            "is empty; give a DXF with a polyline or spline, or a CSV of x,y,z points",
        ));
    }
    let is_dxf = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("dxf"));
    if is_dxf {
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
            // No polyline or spline: a chain of LINEs is the centreline, if there is one.
            if let Some((layer_name, raw)) = orient::line_chain(drawing, layer, what)? {
                return finish_drawing(drawing, raw, "LINE chain", &layer_name, what);
            }
            return Err(format_err(
                what,
                format!(
                    "holds no POLYLINE, LWPOLYLINE, SPLINE or LINE chain{on}; layers with such curves: {}",
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
    finish_drawing(drawing, raw, kind, layer_name, what)
}

/// Check the points of a drawing's centreline, scale them from the drawing's unit to metres and
/// say which line loopwright's own layers hold.
fn finish_drawing(
    drawing: &Drawing,
    mut raw: Vec<Vector3<f64>>,
    kind: &str,
    layer_name: &str,
    what: &str,
) -> Result<ImportedCentreline, ImportError> {
    for (i, p) in raw.iter().enumerate() {
        for (k, v) in p.iter().enumerate() {
            check_coord(
                *v,
                what,
                &format!("{kind} point {}, {}", i + 1, ["x", "y", "z"][k]),
            )?;
        }
    }
    let units = orient::to_metres(drawing, &mut raw, what)?;
    let mut c = finish(
        raw,
        format!("DXF {kind} on layer '{layer_name}', {units}"),
        what,
    )?;
    c.points_are = if layer_name.eq_ignore_ascii_case(RAIL_LAYER) {
        Some(PointsAre::Rail)
    } else if layer_name.eq_ignore_ascii_case(HEARTLINE_LAYER) {
        Some(PointsAre::Heartline)
    } else {
        None
    };
    Ok(c)
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
