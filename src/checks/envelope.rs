//! Duration-based acceleration limits: the envelope check.
//!
//! Standards limit a load by how long it lasts. An [`EnvelopeTable`] gives, per rider axis
//! (normal, lateral, tangential), levels of (duration s, max g, min g) and an optional onset limit
//! (g/s). A level reads: "the load may stay above `max_g` (or below `min_g`) continuously for at
//! most `duration_s`"; a level with duration 0 is an absolute bound. [`evaluate`] measures, on the
//! computed loads of every car, the longest time spent continuously above or below each level
//! (crossing times by linear interpolation between samples) and the steepest rate of change, and
//! reports pass or fail line by line with the worst car. A table the brief names is enforced; the
//! built-in one is only reported, and its failures read as warnings, never "FAIL".
//!
//! The built-in table ([`EnvelopeTable::illustrative`], the same as
//! `examples/limits-illustrative.toml`) is ILLUSTRATIVE: its values are from memory of published
//! practice, not copied from any standard. Verify every value against the current edition of the
//! governing standard (e.g. ASTM F2291, EN 13814) before relying on it.
//!
//! ```
//! use loopwright::checks::envelope::EnvelopeTable;
//! let t = EnvelopeTable::from_toml("[normal]\nlevel = [{ duration_s = 1.0, max_g = 5.0, min_g = -1.5 }]").unwrap();
//! assert_eq!(t.normal.as_ref().unwrap().level.len(), 1);
//! assert!(EnvelopeTable::from_toml("[normal]\nlevel = [{ duration_s = -1.0, max_g = 5.0, min_g = -1.5 }]").is_err());
//! ```

use crate::dynamics::{LoadPoint, Ride, TrainRide};
use crate::geometry::Centreline;
use serde::Serialize;

pub use crate::brief::limits_table::{
    Axis, AxisLimits, Bound, EnvelopeError, EnvelopeTable, ILLUSTRATIVE_TOML, Level,
    MAX_LIMITS_BYTES,
};

/// The load of one rider axis at a point.
fn axis_load(axis: Axis, p: &LoadPoint) -> f64 {
    match axis {
        Axis::Normal => p.normal_g,
        Axis::Lateral => p.lateral_g,
        Axis::Tangential => p.tangential_g,
    }
}

/// The longest run of a series above `level` (crossing times by linear interpolation), as
/// (duration s, start s_m, end s_m) or `None` if it never goes above.
pub fn longest_above(
    points: &[LoadPoint],
    value: impl Fn(&LoadPoint) -> f64,
    level: f64,
) -> Option<(f64, f64, f64)> {
    let mut best: Option<(f64, f64, f64)> = None;
    let mut start: Option<(f64, f64)> = None;
    let cross = |a: &LoadPoint, b: &LoadPoint| {
        let (ya, yb) = (value(a), value(b));
        let f = if yb != ya {
            ((level - ya) / (yb - ya)).clamp(0.0, 1.0)
        } else {
            1.0
        };
        (
            a.time_s + f * (b.time_s - a.time_s),
            a.s_m + f * (b.s_m - a.s_m),
        )
    };
    let close = |start: (f64, f64), end: (f64, f64), best: &mut Option<(f64, f64, f64)>| {
        let d = end.0 - start.0;
        if best.is_none_or(|b| d > b.0) {
            *best = Some((d, start.1, end.1));
        }
    };
    for (i, p) in points.iter().enumerate() {
        let above = value(p) > level;
        if i == 0 {
            if above {
                start = Some((p.time_s, p.s_m));
            }
            continue;
        }
        let q = &points[i - 1];
        let was = value(q) > level;
        match (was, above) {
            (false, true) => start = Some(cross(q, p)),
            (true, false) => {
                if let Some(s0) = start.take() {
                    close(s0, cross(q, p), &mut best);
                }
            }
            _ => {}
        }
    }
    if let (Some(s0), Some(p)) = (start, points.last()) {
        close(s0, (p.time_s, p.s_m), &mut best);
    }
    best
}

/// Steepest |d(load)/dt| of one axis within the smooth pieces of the path, g/s; unbounded where the
/// load jumps at a curvature step (two samples at one instant with different loads).
pub fn peak_onset(path: &Centreline, ride: &Ride, axis: Axis) -> f64 {
    let st = &path.stations;
    let p = &ride.points;
    let mut worst = 0.0f64;
    for i in 1..p.len() {
        let dy = axis_load(axis, &p[i]) - axis_load(axis, &p[i - 1]);
        let dt = p[i].time_s - p[i - 1].time_s;
        if st[i].piece != st[i - 1].piece || dt <= 0.0 {
            if dy.abs() > 1e-9 {
                worst = f64::INFINITY;
            }
            continue;
        }
        worst = worst.max((dy / dt).abs());
    }
    worst
}

/// One level compared with the worst car.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LevelResult {
    pub axis: Axis,
    pub bound: Bound,
    pub level_g: f64,
    /// Longest time allowed beyond the level, s (0: never).
    pub allowed_s: f64,
    /// Longest time the worst car spent beyond it continuously, s (0 if never).
    pub longest_s: f64,
    /// Whether any car went beyond the level at all.
    pub exceeded: bool,
    /// The car with the longest run (0 = front).
    pub worst_car: usize,
    /// Heartline arc length where that run starts and ends (of the car's own position), m.
    pub run_s_m: Option<(f64, f64)>,
    pub pass: bool,
}

/// One onset limit compared with the worst car.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OnsetResult {
    pub axis: Axis,
    pub limit_g_s: f64,
    /// Steepest rate, g/s (infinite at a load step; null in JSON).
    pub value_g_s: f64,
    pub worst_car: usize,
    pub pass: bool,
}

/// The envelope check of a ride.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EnvelopeReport {
    pub title: String,
    pub illustrative: bool,
    /// Whether the table is enforced (the brief names it: a failure is infeasible, exit 3) or
    /// only reported (the built-in ILLUSTRATIVE table: a failure is a warning). [`evaluate`] gives
    /// an enforced report; [`EnvelopeReport::reported_only`] marks it otherwise.
    pub enforced: bool,
    pub levels: Vec<LevelResult>,
    pub onsets: Vec<OnsetResult>,
    pub pass: bool,
}

/// A horizontal line for the loads plot: one envelope level on one axis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EnvelopeLine {
    pub axis: Axis,
    pub bound: Bound,
    pub level_g: f64,
    pub allowed_s: f64,
    /// e.g. "normal above 5.000 g for at most 1.000 s: never beyond — ok".
    pub label: String,
    pub pass: bool,
    /// Whether the table is enforced (a failing line is "FAIL") or only reported ("exceeded
    /// (reported, not enforced)").
    pub enforced: bool,
    /// Arc-length span of the worst run beyond the level, to highlight, m.
    pub run_s_m: Option<(f64, f64)>,
}

impl EnvelopeReport {
    /// The same report, marked as reported only (not enforced).
    pub fn reported_only(self) -> Self {
        EnvelopeReport {
            enforced: false,
            ..self
        }
    }

    /// The verdict word of the whole table: "pass", "FAIL" (enforced) or "exceeded (reported,
    /// not enforced)".
    pub fn verdict(&self) -> &'static str {
        if self.pass {
            "pass"
        } else {
            verdict_word(false, self.enforced)
        }
    }

    /// The failing level and onset lines, as text.
    pub fn failures(&self) -> Vec<String> {
        let mut out: Vec<String> = self
            .levels
            .iter()
            .filter(|l| !l.pass)
            .map(|l| describe_level(l, self.enforced))
            .collect();
        out.extend(
            self.onsets
                .iter()
                .filter(|o| !o.pass)
                .map(|o| describe_onset(o, self.enforced)),
        );
        out
    }

    /// Lines for the loads plot: draw each at `level_g` on its axis's panel, labelled, coloured by
    /// `pass`, with the worst run's arc-length span highlighted.
    pub fn plot_lines(&self) -> Vec<EnvelopeLine> {
        self.levels
            .iter()
            .map(|l| EnvelopeLine {
                axis: l.axis,
                bound: l.bound,
                level_g: l.level_g,
                allowed_s: l.allowed_s,
                label: describe_level(l, self.enforced),
                pass: l.pass,
                enforced: self.enforced,
                run_s_m: l.run_s_m,
            })
            .collect()
    }
}

/// The verdict word of a line: "ok"/"pass" inside, "FAIL" outside an enforced table, and a
/// warning, never "FAIL", outside a table that is only reported.
fn verdict_word(pass: bool, enforced: bool) -> &'static str {
    match (pass, enforced) {
        (true, _) => "ok",
        (false, true) => "FAIL",
        (false, false) => "exceeded (reported, not enforced)",
    }
}

/// A level line as text, e.g. "normal above 5.000 g for at most 1.000 s: longest 0.812 s (car 0)
/// — ok"; a failing line of a table that is only reported says "exceeded (reported, not
/// enforced)" instead of "FAIL".
pub fn describe_level(l: &LevelResult, enforced: bool) -> String {
    let side = if l.bound == Bound::Above {
        "above"
    } else {
        "below"
    };
    let allowed = if l.allowed_s == 0.0 {
        "(absolute)".to_string()
    } else {
        format!("for at most {:.3} s", l.allowed_s)
    };
    let got = if l.exceeded {
        format!("longest {:.3} s (car {})", l.longest_s, l.worst_car)
    } else {
        "never beyond".to_string()
    };
    let verdict = verdict_word(l.pass, enforced);
    format!(
        "{} {side} {:.3} g {allowed}: {got} — {verdict}",
        l.axis.name(),
        l.level_g
    )
}

/// An onset line as text (the verdict word as for [`describe_level`]).
pub fn describe_onset(o: &OnsetResult, enforced: bool) -> String {
    let v = if o.value_g_s.is_finite() {
        format!("{:.3} g/s", o.value_g_s)
    } else {
        "unbounded (load step)".into()
    };
    format!(
        "{} onset: {v} (car {}), limit {:.3} g/s — {}",
        o.axis.name(),
        o.worst_car,
        o.limit_g_s,
        verdict_word(o.pass, enforced)
    )
}

/// Evaluate a table on every car of a train ride.
pub fn evaluate(table: &EnvelopeTable, path: &Centreline, train: &TrainRide) -> EnvelopeReport {
    let mut levels = Vec::new();
    let mut onsets = Vec::new();
    for (axis, lim) in table.axes() {
        for l in &lim.level {
            for bound in [Bound::Above, Bound::Below] {
                let (sign, level) = if bound == Bound::Above {
                    (1.0, l.max_g)
                } else {
                    (-1.0, l.min_g)
                };
                let mut worst: Option<(usize, (f64, f64, f64))> = None;
                for (j, car) in train.cars.iter().enumerate() {
                    let run =
                        longest_above(&car.points, |p| sign * axis_load(axis, p), sign * level);
                    if let Some(run) = run.filter(|r| worst.is_none_or(|(_, w)| r.0 > w.0)) {
                        worst = Some((j, run));
                    }
                }
                let (longest_s, worst_car, run_s_m) = match worst {
                    Some((j, (d, a, b))) => (d, j, Some((a, b))),
                    None => (0.0, 0, None),
                };
                let exceeded = worst.is_some();
                let pass = !exceeded || (l.duration_s > 0.0 && longest_s <= l.duration_s);
                levels.push(LevelResult {
                    axis,
                    bound,
                    level_g: level,
                    allowed_s: l.duration_s,
                    longest_s,
                    exceeded,
                    worst_car,
                    run_s_m,
                    pass,
                });
            }
        }
        if let Some(limit) = lim.max_onset_g_s {
            let (worst_car, value) = train
                .cars
                .iter()
                .enumerate()
                .map(|(j, r)| (j, peak_onset(path, r, axis)))
                .fold((0, 0.0f64), |a, b| if b.1 > a.1 { b } else { a });
            onsets.push(OnsetResult {
                axis,
                limit_g_s: limit,
                value_g_s: value,
                worst_car,
                pass: value <= limit,
            });
        }
    }
    let pass = levels.iter().all(|l| l.pass) && onsets.iter().all(|o| o.pass);
    EnvelopeReport {
        title: table
            .title
            .clone()
            .unwrap_or_else(|| "acceleration envelope".into()),
        illustrative: table.illustrative,
        enforced: true,
        levels,
        onsets,
        pass,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn series(ts: &[f64], ys: &[f64]) -> Vec<LoadPoint> {
        ts.iter()
            .zip(ys)
            .map(|(&t, &y)| LoadPoint {
                s_m: 10.0 * t,
                time_s: t,
                speed_m_s: 10.0,
                normal_g: y,
                tangential_g: 0.0,
                lateral_g: 0.0,
                onset_g_s: 0.0,
            })
            .collect()
    }

    // A triangle pulse 0 → 4 → 0 g over t = 0..2 s is above 3 g for t in (1.5·…): by similar
    // triangles the crossings are at 0.75 s and 1.25 s, so 0.5 s above (elementary geometry).
    #[test]
    fn longest_run_uses_interpolated_crossings() {
        let p = series(&[0.0, 1.0, 2.0], &[0.0, 4.0, 0.0]);
        let (d, a, b) = longest_above(&p, |p| p.normal_g, 3.0).unwrap();
        assert!((d - 0.5).abs() < 1e-12 && (a - 7.5).abs() < 1e-12 && (b - 12.5).abs() < 1e-12);
        assert!(longest_above(&p, |p| p.normal_g, 4.0).is_none());
        // Two runs: the longer one is reported.
        let p = series(
            &[0.0, 1.0, 2.0, 3.0, 4.0, 5.0],
            &[0.0, 2.0, 0.0, 2.0, 2.0, 0.0],
        );
        let (d, _, _) = longest_above(&p, |p| p.normal_g, 1.0).unwrap();
        assert!((d - 2.0).abs() < 1e-12, "{d}");
    }

    #[test]
    fn the_shipped_table_is_valid_and_labelled_illustrative() {
        let t = EnvelopeTable::illustrative();
        assert!(t.illustrative);
        assert!(t.title.as_deref().unwrap().contains("ILLUSTRATIVE"));
        assert!(ILLUSTRATIVE_TOML.contains("ASTM F2291") && ILLUSTRATIVE_TOML.contains("EN 13814"));
        assert_eq!(t.axes().count(), 3);
    }
}
