//! Report: the caution every output carries and the terminal summary of a design.

use crate::checks::limits::DESIGN_MARGIN;
use crate::checks::{CheckLine, Place, Summary};
use crate::compare::{Comparison, Entry, KeyFigures};
use crate::geometry::fit::FitMethod;
use crate::model::{Assessment, Origin};
use crate::optimiser::Infeasible;
use crate::units::describe_speed;

/// The caution printed in every report, JSON file, SVG and the README.
pub const CAUTION: &str = "CAUTION: concept-study results only. Final ride design must follow the governing \
standard (e.g. ASTM F2291, EN 13814), local codes and a licensed engineer's review. Default limits are \
illustrative, not values from any standard.";

/// A short terminal table of the key figures, with the checks and the caution.
pub fn terminal_summary(d: &Assessment) -> String {
    let s = &d.best.summary;
    let b = &d.brief;
    let mut out = format!("loopwright design: {} ({})\n", b.title, d.best.label());
    row(&mut out, "entry speed", describe_speed(b.entry_speed_m_s));
    figure_rows(&mut out, s, Some(d.best.top_radius_m));
    let onset = if s.max_load_step_g > 1e-9 {
        format!(
            "{:.2} g/s on smooth track ({}); steps of {:.3} g (unbounded onset)",
            s.peak_onset_g_s,
            place(&s.peak_onset_at),
            s.max_load_step_g
        )
    } else {
        format!("{:.2} g/s at {}", s.peak_onset_g_s, place(&s.peak_onset_at))
    };
    row(&mut out, "peak onset", onset);
    row(
        &mut out,
        "time in loop",
        format!("{:.2} s", s.time_in_loop_s),
    );
    row(&mut out, "exit speed", describe_speed(s.exit_speed_m_s));
    // Force-first loops with losses leave above or below their entry (the way down is slower, so
    // the same loads need a different curve); the other families always leave at entry height.
    let exit_dz = exit_height_m(&d.best.path);
    if exit_dz.abs() > 1e-3 {
        row(
            &mut out,
            "exit above entry (heartline)",
            format!("{exit_dz:.3} m"),
        );
    }
    if !d.shape_labels.is_empty() {
        let p: Vec<String> = d
            .shape_labels
            .iter()
            .zip(d.best.shape())
            .map(|(l, v)| format!("{l} = {v:.4}"))
            .collect();
        row(&mut out, "shape parameters", p.join(", "));
    }
    if let Some(why) = &d.search_stopped {
        row(
            &mut out,
            "search",
            format!("{} loops evaluated; {why}", d.evaluations),
        );
    }
    out.push_str("  checks (re-evaluated at a quarter of the sample spacing):\n");
    check_lines(&mut out, &d.verification.verdict.lines);
    row(
        &mut out,
        "design margin kept inside limits",
        format!(
            "{:.3} g on loads, {:.1} % of the onset limit, {:.1} mm on height and radius",
            DESIGN_MARGIN.load_g,
            100.0 * DESIGN_MARGIN.onset_fraction,
            1e3 * DESIGN_MARGIN.length_m
        ),
    );
    out.push_str(&train_and_envelope(d));
    out.push_str(CAUTION);
    out.push('\n');
    out
}

/// Where an extreme occurs, for a terminal row.
fn place(p: &Place) -> String {
    format!(
        "s = {:.2} m, pitch {:.1}°, car {}",
        p.s_m, p.pitch_deg, p.car
    )
}

/// Terminal lines for the lateral shift, the train's cars and the duration envelope.
pub fn train_and_envelope(d: &Assessment) -> String {
    let b = &d.brief;
    let s = &d.verification.summary;
    let mut out = String::new();
    out.push_str(&format!(
        "  {:<34} {:.2} m (exit beside entry); peak roll of the rider {:.2} deg\n",
        "lateral shift",
        d.lateral_shift_m(),
        s.peak_roll_deg
    ));
    let cars = &d.verification.cars;
    if cars.len() > 1 {
        out.push_str(&format!(
            "  train: {} cars at {:.2} m pitch ({:.2} m front to rear); limits apply to the worst car\n",
            cars.len(),
            b.car_pitch_m,
            d.verification.train.train.length_m()
        ));
        out.push_str(&format!(
            "  loads table {}-loads.csv: the front car; every car in {}-cars.csv\n",
            b.name, b.name
        ));
        let mid = d.verification.train.train.middle();
        for (label, j) in [("front", 0), ("middle", mid), ("rear", cars.len() - 1)] {
            let c = &cars[j];
            out.push_str(&format!(
                "    {label:<6} (car {j:>2}) peak {:.3} g, least inverted {:.3} g (pitch {:.1}°), top {:.3} g at {:.2} m/s, peak lateral {:.3} g\n",
                c.peak_normal_g,
                c.min_inverted_normal_g,
                c.min_inverted_at.pitch_deg,
                c.top_normal_g,
                c.top_speed_m_s,
                c.peak_lateral_g
            ));
        }
    }
    let Some(e) = &d.verification.envelope else {
        out.push_str("  acceleration envelope: not assessed\n");
        return out;
    };
    out.push_str(&format!(
        "  acceleration envelope ({}): {}{} — {}\n",
        if e.enforced {
            "enforced"
        } else {
            "reported, not enforced"
        },
        e.title,
        if e.illustrative {
            " [ILLUSTRATIVE values: verify against the governing standard]"
        } else {
            ""
        },
        e.verdict()
    ));
    for l in &e.levels {
        out.push_str(&format!(
            "    {}\n",
            crate::checks::envelope::describe_level(l, e.enforced)
        ));
    }
    for o in &e.onsets {
        out.push_str(&format!(
            "    {}\n",
            crate::checks::envelope::describe_onset(o, e.enforced)
        ));
    }
    out
}

/// A short terminal table of a checked centreline: the fit, the key figures, the checks, the
/// train and the envelope.
pub fn check_summary(a: &Assessment) -> String {
    let (s, b) = (&a.best.summary, &a.brief);
    let Origin::Drawing { file, source, fit } = &a.best.origin else {
        return terminal_summary(a);
    };
    let mut out = format!("loopwright check: {file} ({source})\n");
    row(
        &mut out,
        "points read as",
        format!("{:?} ({} points)", fit.points_are, fit.points).to_lowercase(),
    );
    row(
        &mut out,
        match fit.method {
            FitMethod::Interpolated => "fit: interpolated",
            FitMethod::Smoothed => "fit: smoothed",
        },
        format!(
            "RMS {:.2} mm, largest {:.2} mm (tolerance {:.2} mm RMS; noise about {:.3} mm); {} curvature jump(s)",
            fit.rms_residual_m * 1e3,
            fit.max_residual_m * 1e3,
            fit.tolerance_m * 1e3,
            fit.noise_estimate_m * 1e3,
            fit.curvature_jumps
        ),
    );
    row(
        &mut out,
        "plane",
        format!(
            "tilt {:.3}° from vertical; lateral spread {:.3} m across it",
            fit.plane_tilt_deg, fit.lateral_extent_m
        ),
    );
    row(&mut out, "entry speed", describe_speed(b.entry_speed_m_s));
    figure_rows(&mut out, s, None);
    row(
        &mut out,
        "peak onset",
        format!("{:.2} g/s at {}", s.peak_onset_g_s, place(&s.peak_onset_at)),
    );
    row(
        &mut out,
        "peak lateral load",
        format!("{:.3} g", s.peak_lateral_g),
    );
    row(&mut out, "exit speed", describe_speed(s.exit_speed_m_s));
    out.push_str("  checks (re-evaluated at a quarter of the sample spacing):\n");
    check_lines(&mut out, &a.verification.verdict.lines);
    out.push_str(&train_and_envelope(a));
    out.push_str(CAUTION);
    out.push('\n');
    out
}

/// Heartline height of the end of the path above its start, m.
pub fn exit_height_m(path: &crate::geometry::Centreline) -> f64 {
    match (path.stations.first(), path.stations.last()) {
        (Some(a), Some(b)) => b.heartline_m.z - a.heartline_m.z,
        _ => 0.0,
    }
}

/// One labelled row of a terminal table.
fn row(out: &mut String, label: &str, value: String) {
    out.push_str(&format!("  {label:<34} {value}\n"));
}

/// The figures `design` and `check` both report: size, radius and the loads at peak and top.
fn figure_rows(out: &mut String, s: &Summary, top_radius_m: Option<f64>) {
    row(
        out,
        "loop height (heartline)",
        format!("{:.2} m", s.loop_height_m),
    );
    row(
        out,
        "loop height (rail)",
        format!("{:.2} m", s.rail_height_m),
    );
    row(
        out,
        "path length in loop (heartline)",
        format!("{:.2} m", s.path_length_m),
    );
    if let Some(r) = top_radius_m {
        row(out, "top radius (heartline)", format!("{r:.2} m"));
    }
    row(
        out,
        "smallest radius (heartline)",
        format!("{:.2} m", s.min_radius_m),
    );
    row(
        out,
        "peak normal load",
        format!("{:.3} g at {}", s.peak_normal_g, place(&s.peak_normal_at)),
    );
    row(out, "least normal load", format!("{:.3} g", s.min_normal_g));
    let inverted = if s.min_inverted_normal_g.is_finite() {
        format!(
            "{:.3} g at {}",
            s.min_inverted_normal_g,
            place(&s.min_inverted_at)
        )
    } else {
        "never inverted".into()
    };
    row(out, "least normal load while inverted", inverted);
    row(
        out,
        "normal load at the apex",
        format!("{:.3} g", s.top_normal_g),
    );
    row(out, "speed at the top", describe_speed(s.top_speed_m_s));
}

/// The limit checks, one line each.
fn check_lines(out: &mut String, lines: &[CheckLine]) {
    for l in lines {
        let value = if l.value.is_finite() {
            format!("{:.3}", l.value)
        } else {
            "unbounded".into()
        };
        out.push_str(&format!(
            "    {:<4} {:<34} {value:>9} {:<4} limit {:.3}\n",
            if l.pass { "ok" } else { "FAIL" },
            l.label,
            l.unit,
            l.limit_value
        ));
    }
}

/// The message for an infeasible brief.
pub fn infeasible_message(e: &Infeasible) -> String {
    format!("{e}.\n{CAUTION}\n")
}

/// The side-by-side table for a terminal: one column per family.
pub fn compare_table(c: &Comparison) -> String {
    use crate::checks::limits::LimitKind;
    let figures: Vec<Option<KeyFigures>> = c.entries.iter().map(Entry::shown_figures).collect();
    let mut out = format!("loopwright compare: {}\n", c.brief.title);
    out.push_str(&format!("  {:<30}", ""));
    for e in &c.entries {
        out.push_str(&format!(" {:>14}", e.kind.name()));
    }
    out.push('\n');
    type Cell = fn(&KeyFigures) -> String;
    // Each row with the limit that bounds its figure, if any: a failing family's value is marked.
    let rows: [(&str, Option<LimitKind>, Cell); 9] = [
        (
            "loop height (heartline), m",
            Some(LimitKind::MaxHeight),
            |f| format!("{:.2}", f.loop_height_m),
        ),
        ("path length in loop, m", None, |f| {
            format!("{:.2}", f.path_length_m)
        }),
        ("top radius, m", None, |f| format!("{:.2}", f.top_radius_m)),
        ("peak normal load, g", Some(LimitKind::MaxG), |f| {
            format!("{:.3}", f.peak_normal_g)
        }),
        ("normal load at the top, g", Some(LimitKind::MinTopG), |f| {
            format!("{:.3}", f.top_normal_g)
        }),
        ("speed at the top, m/s", None, |f| {
            format!("{:.2}", f.top_speed_m_s)
        }),
        (
            "peak onset (smooth track), g/s",
            Some(LimitKind::MaxOnset),
            |f| format!("{:.2}", f.peak_onset_g_s),
        ),
        (
            "load step (unbounded onset), g",
            Some(LimitKind::MaxOnset),
            |f| {
                if f.onset_unbounded() {
                    format!("{:.3}", f.max_load_step_g)
                } else {
                    "none".into()
                }
            },
        ),
        ("time in loop, s", None, |f| {
            format!("{:.2}", f.time_in_loop_s)
        }),
    ];
    for (label, limit, cell) in rows {
        out.push_str(&format!("  {label:<30}"));
        for (e, f) in c.entries.iter().zip(&figures) {
            let mark = limit.is_some_and(|l| e.fails(l));
            let text = f.as_ref().map_or_else(
                || "-".to_string(),
                |f| format!("{}{}", cell(f), if mark { " FAIL" } else { "" }),
            );
            out.push_str(&format!(" {text:>14}"));
        }
        out.push('\n');
    }
    out.push_str(&format!("  {:<30}", "feasible"));
    for e in &c.entries {
        out.push_str(&format!(
            " {:>14}",
            if e.result.is_ok() { "yes" } else { "NO" }
        ));
    }
    out.push('\n');
    for e in &c.entries {
        let Err(why) = &e.result else { continue };
        if let Some(shown) = &e.failing {
            let failed: Vec<&str> = shown.fails.iter().map(|l| l.field()).collect();
            out.push_str(&format!(
                "  {}: figures of the loop at the {} (top radius {:.2} m); it fails {} (marked FAIL)\n",
                e.kind,
                shown.sized,
                shown.assessment.best.top_radius_m,
                if failed.is_empty() {
                    "the checks at the verification spacing or the limit table".to_string()
                } else {
                    failed.join(", ")
                }
            ));
        }
        out.push_str(&format!("  {}: {why}\n", e.kind));
    }
    out.push_str(CAUTION);
    out.push('\n');
    out
}
