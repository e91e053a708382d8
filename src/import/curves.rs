//! DXF curve entities as points: LWPOLYLINE vertices and bulges mapped from their object
//! coordinate system, SPLINE entities evaluated from control points, knots and weights.

use dxf::entities::{LwPolyline, Spline};
use nalgebra::Vector3;

use super::{MAX_POINTS, SAMPLES_PER_SPAN};

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
pub(super) fn lwpolyline_points(p: &LwPolyline) -> Vec<Vector3<f64>> {
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
pub(super) fn spline_points(s: &Spline) -> Result<Vec<Vector3<f64>>, String> {
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
    // n intervals give n + 1 points: refuse by the span count, so the message names what the
    // file holds rather than a point count one over the limit.
    let max_spans = (MAX_POINTS - 1) / SAMPLES_PER_SPAN;
    if spans > max_spans {
        return Err(format!(
            "has {spans} spans; at most {max_spans} are read ({SAMPLES_PER_SPAN} points per span, at most {MAX_POINTS} points)"
        ));
    }
    let n = (spans * SAMPLES_PER_SPAN).clamp(2, MAX_POINTS);
    // Uniform parameters plus every interior knot, so a sample falls exactly on each joint (where
    // a spline written in pieces may change curvature).
    let mut ts: Vec<f64> = (0..=n)
        .map(|i| t0 + (t1 - t0) * i as f64 / n as f64)
        .collect();
    ts.extend(knots.iter().copied().filter(|&k| k > t0 && k < t1));
    ts.sort_by(f64::total_cmp);
    ts.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * (t1 - t0));
    let mut out = Vec::with_capacity(ts.len());
    for t in ts {
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
