//! The 2D elevation of the DXF, drawn in the XY plane (X along the track, Y up, Z = 0) so that a
//! 2D CAD user sees the loop in the plan view at once: loop rail and heartline, lead track, entry
//! and exit marks, the direction of travel, true DIMENSION entities (loop height, footprint, top
//! radius) with their drawn blocks.

use nalgebra::{Vector2, Vector3};

use super::sections::DIM_STYLE;
use super::writer::Writer;
use super::{LAYER_ELEV_DIMS, LAYER_ELEV_MARKS};

/// Where the elevation sits and how big its text is.
pub struct Place {
    /// Elevation Y of world height z = 0 (the heartline's entry level).
    pub y0: f64,
    /// Text height and arrow size, m.
    pub text_m: f64,
}

impl Place {
    /// A world point in the elevation.
    pub fn at(&self, p: &Vector3<f64>) -> Vector2<f64> {
        Vector2::new(p.x, self.y0 + p.z)
    }
}

fn v3(p: Vector2<f64>) -> Vector3<f64> {
    Vector3::new(p.x, p.y, 0.0)
}

/// An arrowhead with its tip at `tip`, pointing along unit `dir`, `size` long.
fn arrow(w: &mut Writer, layer: &str, owner: u32, tip: Vector2<f64>, dir: Vector2<f64>, size: f64) {
    let back = tip - dir * size;
    let side = Vector2::new(-dir.y, dir.x) * (size / 5.0);
    w.triangle(layer, owner, [tip, back + side, back - side]);
}

/// Entry and exit marks across the track, and the arrow of travel on the lead-in.
pub fn marks(
    w: &mut Writer,
    pl: &Place,
    model: u32,
    entry: (Vector3<f64>, Vector3<f64>),
    exit: (Vector3<f64>, Vector3<f64>),
) {
    let t = pl.text_m;
    for ((rail, heart), label) in [(entry, "LOOP ENTRY"), (exit, "LOOP EXIT")] {
        let (r, h) = (pl.at(&rail), pl.at(&heart));
        w.line(
            LAYER_ELEV_MARKS,
            model,
            v3(r - Vector2::new(0.0, t)),
            v3(h + Vector2::new(0.0, t)),
        );
        w.text_line(
            LAYER_ELEV_MARKS,
            model,
            h + Vector2::new(0.3 * t, 0.5 * t),
            t,
            label,
        );
    }
    // The arrow runs along the lead-in, above the heartline, pointing in the direction of travel (+X).
    let h = pl.at(&entry.1) + Vector2::new(0.0, 2.0 * t);
    let (a, b) = (h - Vector2::new(8.0 * t, 0.0), h - Vector2::new(t, 0.0));
    w.line(LAYER_ELEV_MARKS, model, v3(a), v3(b - Vector2::new(t, 0.0)));
    arrow(w, LAYER_ELEV_MARKS, model, b, Vector2::x(), t);
    w.text_line(
        LAYER_ELEV_MARKS,
        model,
        a + Vector2::new(0.0, 0.5 * t),
        0.8 * t,
        "TRAVEL",
    );
}

/// A linear dimension between `p1` and `p2` measured along unit `along`, its line offset to
/// `line_at`; the block draws extension lines, the dimension line, two arrows and the value.
fn linear(
    w: &mut Writer,
    t: f64,
    p1: Vector2<f64>,
    p2: Vector2<f64>,
    along: Vector2<f64>,
    line_at: Vector2<f64>,
) {
    let measured = (p2 - p1).dot(&along).abs();
    let across = Vector2::new(-along.y, along.x);
    // Feet of the two extension lines on the dimension line.
    let foot = |p: Vector2<f64>| p + across * (line_at - p).dot(&across);
    let (f1, f2) = (foot(p1), foot(p2));
    let mid = (f1 + f2) / 2.0;
    let angle_deg = along.y.atan2(along.x).to_degrees();
    // Text on the far side of the dimension line from the measured points.
    let out = if (line_at - p1).dot(&across) >= 0.0 {
        across
    } else {
        -across
    };
    let text_at = mid + out * (0.9 * t);
    let block = w.dim_block(|b, rec| {
        let layer = "0";
        for (p, f) in [(p1, f1), (p2, f2)] {
            let dir = (f - p).try_normalize(1e-12).unwrap_or(out);
            b.line(layer, rec, v3(p + dir * (0.5 * t)), v3(f + dir * (0.5 * t)));
        }
        b.line(layer, rec, v3(f1), v3(f2));
        let d = (f2 - f1).try_normalize(1e-12).unwrap_or(along);
        arrow(b, layer, rec, f1, -d, t);
        arrow(b, layer, rec, f2, d, t);
        b.mtext(
            layer,
            rec,
            text_at,
            t,
            5,
            angle_deg,
            &[format!("{measured:.3} m")],
        );
    });
    w.linear_dimension(
        LAYER_ELEV_DIMS,
        DIM_STYLE,
        &block,
        p1,
        p2,
        line_at,
        text_at,
        angle_deg,
        measured,
    );
}

/// Loop height (vertical, right of the loop), footprint (horizontal, below the track) and the
/// top radius (radial, from the centre of curvature to the heartline top).
#[allow(clippy::too_many_arguments)]
pub fn dimensions(
    w: &mut Writer,
    pl: &Place,
    entry_heart: Vector3<f64>,
    exit_heart: Vector3<f64>,
    top_heart: Vector3<f64>,
    top_radius_m: f64,
    loop_max_x: f64,
    rail_min_z: f64,
) {
    let t = pl.text_m;
    let (e, x, top) = (pl.at(&entry_heart), pl.at(&exit_heart), pl.at(&top_heart));
    // Loop height: from the entry heartline to the heartline top.
    linear(
        w,
        t,
        e,
        top,
        Vector2::y(),
        Vector2::new(loop_max_x + 3.0 * t, e.y),
    );
    // Footprint: entry to exit along X (heartline).
    let below = pl.y0 + rail_min_z - 3.0 * t;
    linear(w, t, e, x, Vector2::x(), Vector2::new(e.x, below));
    if top_radius_m.is_finite() && top_radius_m > 0.0 {
        let centre = top - Vector2::new(0.0, top_radius_m);
        let text_at = (centre + top) / 2.0 + Vector2::new(0.8 * t, 0.0);
        let block = w.dim_block(|b, rec| {
            let layer = "0";
            b.line(layer, rec, v3(centre), v3(top));
            arrow(b, layer, rec, top, Vector2::y(), t);
            // A small cross marks the centre.
            for d in [Vector2::x(), Vector2::y()] {
                b.line(
                    layer,
                    rec,
                    v3(centre - d * (0.5 * t)),
                    v3(centre + d * (0.5 * t)),
                );
            }
            b.mtext(
                layer,
                rec,
                text_at,
                t,
                4,
                90.0,
                &[format!("R {top_radius_m:.3} m")],
            );
        });
        w.radial_dimension(
            LAYER_ELEV_DIMS,
            DIM_STYLE,
            &block,
            centre,
            top,
            text_at,
            top_radius_m,
        );
    }
}
