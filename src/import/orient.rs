//! What CAD drawings leave implicit: the drawing's unit ($INSUNITS), which axis is up (a 2D
//! elevation is drawn in the XY plane with Y up), and a centreline drawn as a chain of LINEs.

use std::collections::HashMap;

use dxf::Drawing;
use dxf::entities::{EntityType, Line};
use dxf::enums::Units;
use nalgebra::{Matrix3, SymmetricEigen, Vector3};

use super::{ImportError, ImportedCentreline, format_err};

/// The axis of a drawing that points up.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Up {
    X,
    Y,
    Z,
}

impl Up {
    fn name(self) -> &'static str {
        match self {
            Up::X => "X",
            Up::Y => "Y",
            Up::Z => "Z",
        }
    }

    /// A proper rotation (determinant +1, so left and right are kept) taking this axis to +Z.
    fn to_z_up(self, p: Vector3<f64>) -> Vector3<f64> {
        match self {
            Up::Z => p,
            // Rotation by +90° about X: Y → Z, Z → −Y.
            Up::Y => Vector3::new(p.x, -p.z, p.y),
            // Rotation by −90° about Y: X → Z, Z → −X.
            Up::X => Vector3::new(-p.z, p.y, p.x),
        }
    }
}

/// Metres per drawing unit for $INSUNITS, with its name; `None` for units a loop is never drawn
/// in. Factors are the exact definitions (1 in = 25.4 mm, 1 ft = 0.3048 m, 1 yd = 0.9144 m:
/// International Yard and Pound Agreement, 1959).
pub fn unit_scale(u: Units) -> Option<(f64, &'static str)> {
    Some(match u {
        Units::Unitless => (1.0, "no unit ($INSUNITS 0), read as metres"),
        Units::Inches => (0.0254, "inches ($INSUNITS 1)"),
        Units::Feet => (0.3048, "feet ($INSUNITS 2)"),
        Units::Millimeters => (0.001, "millimetres ($INSUNITS 4)"),
        Units::Centimeters => (0.01, "centimetres ($INSUNITS 5)"),
        Units::Meters => (1.0, "metres ($INSUNITS 6)"),
        Units::Yards => (0.9144, "yards ($INSUNITS 10)"),
        Units::Decimeters => (0.1, "decimetres ($INSUNITS 14)"),
        _ => return None,
    })
}

/// Scale points read in the drawing's unit to metres; the note says what was done.
pub fn to_metres(
    drawing: &Drawing,
    points: &mut [Vector3<f64>],
    what: &str,
) -> Result<String, ImportError> {
    let u = drawing.header.default_drawing_units;
    let Some((scale, name)) = unit_scale(u) else {
        return Err(format_err(
            what,
            format!(
                "has $INSUNITS {} ({u:?}); check reads drawings in mm, cm, dm, m, inches, feet or yards",
                u as i16
            ),
        ));
    };
    if scale != 1.0 {
        for p in points.iter_mut() {
            *p *= scale;
        }
        Ok(format!("units: {name} converted to metres (x {scale})"))
    } else {
        Ok(format!("units: {name}"))
    }
}

/// A chain of LINEs: its layer and its points in order.
pub type LineChain = (String, Vec<Vector3<f64>>);

/// The LINEs on `layer` (any layer when `None`) joined end to end into one ordered chain.
/// Ends are joined when they agree to 1 µm of the drawing's size; a branch or a gap is refused.
pub fn line_chain(
    drawing: &Drawing,
    layer: Option<&str>,
    what: &str,
) -> Result<Option<LineChain>, ImportError> {
    let lines: Vec<(&str, &Line)> = drawing
        .entities()
        .filter_map(|e| match &e.specific {
            EntityType::Line(l) if layer.is_none_or(|n| e.common.layer.eq_ignore_ascii_case(n)) => {
                Some((e.common.layer.as_str(), l))
            }
            _ => None,
        })
        .collect();
    if lines.is_empty() {
        return Ok(None);
    }
    let mut layers: Vec<&str> = lines.iter().map(|l| l.0).collect();
    layers.sort_unstable();
    layers.dedup();
    if layers.len() > 1 {
        return Err(format_err(
            what,
            format!(
                "holds LINEs on several layers ({}); choose the centreline's with --layer",
                layers.join(", ")
            ),
        ));
    }
    let v = |p: &dxf::Point| Vector3::new(p.x, p.y, p.z);
    let segs: Vec<[Vector3<f64>; 2]> = lines.iter().map(|(_, l)| [v(&l.p1), v(&l.p2)]).collect();
    let size = segs.iter().flatten().map(|p| p.amax()).fold(1.0, f64::max);
    let q = 1e-6 * size;
    let key = |p: &Vector3<f64>| {
        let r = |c: f64| (c / q).round() as i64;
        (r(p.x), r(p.y), r(p.z))
    };
    // A LINE of no length joins nothing (CAD leaves them where a point was clicked twice).
    let segs: Vec<[Vector3<f64>; 2]> = segs
        .into_iter()
        .filter(|s| key(&s[0]) != key(&s[1]))
        .collect();
    if segs.is_empty() {
        return Ok(None);
    }
    // Which segments touch each end point.
    let mut at: HashMap<(i64, i64, i64), Vec<usize>> = HashMap::new();
    for (i, s) in segs.iter().enumerate() {
        for p in s {
            at.entry(key(p)).or_default().push(i);
        }
    }
    if let Some(p) = at.values().find(|v| v.len() > 2) {
        let s = segs[p[0]][0];
        return Err(format_err(
            what,
            format!(
                "has {} LINEs meeting near ({:.3}, {:.3}, {:.3}); a centreline drawn as LINEs must be one unbranched chain",
                p.len(),
                s.x,
                s.y,
                s.z
            ),
        ));
    }
    // Start at a free end (an open chain), or anywhere on a closed one.
    let start = segs
        .iter()
        .enumerate()
        .find_map(|(i, s)| {
            s.iter()
                .position(|p| at[&key(p)].len() == 1)
                .map(|k| (i, k))
        })
        .unwrap_or((0, 0));
    let mut used = vec![false; segs.len()];
    let (mut i, mut k) = start;
    let mut out = vec![segs[i][k]];
    loop {
        used[i] = true;
        let end = segs[i][1 - k];
        out.push(end);
        let Some(&j) = at[&key(&end)].iter().find(|&&j| !used[j]) else {
            break;
        };
        k = if key(&segs[j][0]) == key(&end) { 0 } else { 1 };
        i = j;
    }
    let n_used = used.iter().filter(|u| **u).count();
    if n_used < segs.len() {
        return Err(format_err(
            what,
            format!(
                "has {} LINEs on layer '{}' but only {n_used} join end to end; the chain has a gap",
                segs.len(),
                layers[0]
            ),
        ));
    }
    Ok(Some((layers[0].to_string(), out)))
}

/// The normal of the points' least-squares plane.
fn plane_normal(points: &[Vector3<f64>]) -> Vector3<f64> {
    let n = points.len().max(1) as f64;
    let c = points.iter().sum::<Vector3<f64>>() / n;
    let scatter: Matrix3<f64> = points.iter().map(|p| (p - c) * (p - c).transpose()).sum();
    let eig = SymmetricEigen::new(scatter);
    let k = (0..3)
        .min_by(|&a, &b| eig.eigenvalues[a].total_cmp(&eig.eigenvalues[b]))
        .unwrap_or(0);
    eig.eigenvectors.column(k).into_owned()
}

/// Turn the points so that `up` (or the detected up axis) is +Z, and say so in the source.
/// Detection: a loop lying in a horizontal plane (best-fit normal within 10° of Z, as a 2D
/// elevation drawn in the XY plane) has Y up; otherwise Z is up (any vertical plane).
pub fn orient(mut c: ImportedCentreline, up: Option<Up>) -> ImportedCentreline {
    let (axis, how) = match up {
        Some(u) => (u, "given with --up"),
        None => {
            let n = plane_normal(&c.points_m);
            if n.z.abs() > 10f64.to_radians().cos() {
                (
                    Up::Y,
                    "detected: drawn in a horizontal plane, read as an elevation",
                )
            } else {
                (Up::Z, "detected: drawn in a vertical plane")
            }
        }
    };
    if axis != Up::Z {
        for p in c.points_m.iter_mut() {
            *p = axis.to_z_up(*p);
        }
    }
    c.source = format!("{}; up: {} ({how})", c.source, axis.name());
    c
}

#[cfg(test)]
mod tests {
    use super::*;

    // Each turn is a proper rotation (det +1) taking its axis to +Z (rotation matrices about the
    // coordinate axes, any linear algebra text).
    #[test]
    fn turns_are_proper_rotations_to_z() {
        for u in [Up::X, Up::Y, Up::Z] {
            let m = Matrix3::from_columns(&[
                u.to_z_up(Vector3::x()),
                u.to_z_up(Vector3::y()),
                u.to_z_up(Vector3::z()),
            ]);
            assert!((m.determinant() - 1.0).abs() < 1e-15);
            let axis = match u {
                Up::X => Vector3::x(),
                Up::Y => Vector3::y(),
                Up::Z => Vector3::z(),
            };
            assert_eq!(u.to_z_up(axis), Vector3::z());
        }
    }
}
