//! A global, monotone optimum (issue 10): relaxing a limit never gives a worse design, the tallest
//! loop scales with v₀² as similarity says, the variable-radius family is never worse than the
//! teardrop, and an independent brute-force search over the shape parameters does not beat the
//! optimiser. Briefs use a coarse spacing (0.5 m) so that the file stays fast.

use loopwright::brief::{Brief, Objective, ShapeKind};
use loopwright::optimiser::{SizeRange, design_family, evaluate, height_per_radius, size_range};
use loopwright::shape::family;
use rayon::prelude::*;
use std::process::Command;
use std::sync::atomic::AtomicUsize;

/// The demo brief with a family, a coarse spacing and no onset limit.
fn base(kind: ShapeKind) -> Brief {
    let mut b = Brief::demo();
    b.shape = kind;
    b.spacing_m = 0.5;
    b.max_onset_g_s = None;
    b
}

/// The objective's figure of a design: its heartline height (tallest) or peak load (height
/// brief); `None` when infeasible.
fn figure(b: &Brief) -> Option<f64> {
    let d = design_family(b, b.shape).ok()?;
    Some(match b.objective {
        Objective::Tallest => d.best.summary.loop_height_m,
        Objective::Height { .. } => d.best.summary.peak_normal_g,
    })
}

/// Monotone tolerance: 1 mm or 0.05 % of the figure, whichever is larger (the optimiser's size
/// root and shape polish stop at tolerances of that order).
fn tol(x: f64) -> f64 {
    (5e-4 * x.abs()).max(1e-3)
}

/// One axis of the grid: its values from strictest to most relaxed, and how to set one.
type Axis = (&'static str, Vec<f64>, fn(&mut Brief, f64));

/// The grid's axes for a family: a circle needs 6 + n_top g at the bottom (the closed form of
/// vertical circular motion), so its max g values sit higher; its entry is a load step
/// (unbounded onset), so any onset limit fails it, and a third min radius value takes the onset
/// axis's place.
fn axes(kind: ShapeKind) -> Vec<Axis> {
    let circle = kind == ShapeKind::Circle;
    let max_g = if circle {
        vec![6.0, 6.5, 7.5]
    } else {
        vec![4.0, 5.0, 6.0]
    };
    let min_radius = if circle {
        vec![8.0, 6.0, 4.0]
    } else {
        vec![6.0, 4.0]
    };
    let all: Vec<Axis> = vec![
        ("entry speed", vec![22.0, 27.0], |b, v| {
            b.entry_speed_m_s = v
        }),
        ("max g", max_g, |b, v| b.max_g = v),
        ("min top g", vec![0.4, 0.2, -0.1], |b, v| b.min_top_g = v),
        ("max onset", vec![6.0, 14.0], |b, v| {
            b.max_onset_g_s = Some(v)
        }),
        ("max height", vec![16.0, f64::INFINITY], |b, v| {
            b.max_height_m = v.is_finite().then_some(v)
        }),
        ("min radius", min_radius, |b, v| b.min_radius_m = v),
    ];
    all.into_iter()
        .filter(|a| !(circle && a.0 == "max onset"))
        .collect()
}

/// Every combination of the axes' values (index vectors), in order.
fn grid(sizes: &[usize]) -> Vec<Vec<usize>> {
    let mut all = vec![vec![]];
    for &n in sizes {
        all = all
            .into_iter()
            .flat_map(|p| {
                (0..n).map(move |i| {
                    let mut q = p.clone();
                    q.push(i);
                    q
                })
            })
            .collect();
    }
    all
}

/// Design every brief of the grid, then compare each with its neighbour one step more relaxed
/// along every axis: the relaxed one must be at least as tall (or, for a height brief, have a
/// peak load no higher), within [`tol`]. Returns the number of briefs.
fn assert_monotone(kind: ShapeKind, height_m: Option<f64>, axes: &[Axis]) -> usize {
    let sizes: Vec<usize> = axes.iter().map(|a| a.1.len()).collect();
    let points = grid(&sizes);
    let brief_at = |p: &[usize]| {
        let mut b = base(kind);
        if let Some(h) = height_m {
            b.objective = Objective::Height { height_m: h };
        }
        for (a, &i) in axes.iter().zip(p) {
            (a.2)(&mut b, a.1[i]);
        }
        b
    };
    let figures: Vec<Option<f64>> = points.par_iter().map(|p| figure(&brief_at(p))).collect();
    let index = |p: &[usize]| points.iter().position(|q| q == p).unwrap();
    let mut bad = Vec::new();
    for (i, p) in points.iter().enumerate() {
        let Some(strict) = figures[i] else { continue };
        for (k, a) in axes.iter().enumerate() {
            // A faster train under a height cap may need a loop taller than the cap to keep its
            // loads (a circle's bottom load is 1 + v²/(gR)), so the feasible set grows with speed
            // only without a cap: speed pairs are compared uncapped.
            let capped = brief_at(p).max_height_m.is_some();
            if p[k] + 1 == a.1.len() || (a.0 == "entry speed" && capped) {
                continue;
            }
            let mut q = p.clone();
            q[k] += 1;
            let relaxed = figures[index(&q)];
            let ok = match (relaxed, height_m) {
                (None, _) => false,
                (Some(r), None) => r >= strict - tol(strict),
                (Some(r), Some(_)) => r <= strict + tol(strict),
            };
            if !ok {
                let b = brief_at(p);
                bad.push(format!(
                    "{kind}: relaxing {} from {} to {} gives {relaxed:?}, was {strict} ({:+.3} %) at {} m/s, {} g, top {} g, onset {:?} g/s, height {:?} m, radius {} m",
                    a.0,
                    a.1[p[k]],
                    a.1[q[k]],
                    relaxed.map_or(f64::NAN, |r| 100.0 * (r / strict - 1.0)),
                    b.entry_speed_m_s,
                    b.max_g,
                    b.min_top_g,
                    b.max_onset_g_s,
                    b.max_height_m,
                    b.min_radius_m
                ));
            }
        }
    }
    assert!(
        bad.is_empty(),
        "{} failures:\n{}",
        bad.len(),
        bad.join("\n")
    );
    assert!(
        figures.iter().filter(|f| f.is_some()).count() >= 10,
        "{kind}: too few feasible briefs for the property to mean much"
    );
    points.len()
}

// The issue's property: relaxing any limit (max g up, min top g down, onset up, max height up,
// min radius down) or raising the entry speed never gives a shorter tallest loop. Grounds: the
// feasible set of loops only grows when a limit is relaxed, so its optimum cannot get worse (the
// definition of a constrained optimum); a shorter answer is a search failure.
#[test]
fn tallest_loop_is_monotone_in_every_limit() {
    for kind in [ShapeKind::Circle, ShapeKind::Clothoid] {
        let n = assert_monotone(kind, None, &axes(kind));
        assert!(n >= 100, "{kind}: {n} briefs");
    }
}

// The same for the variable-radius family (four shape parameters), tallest and height briefs.
// Its landscape has shallow valleys about 0.1 % apart along the top slope, which is why the search
// profiles that parameter (optimiser/shape.rs); before that, 5 of the 144 tallest briefs had a
// relaxed neighbour up to 0.18 % shorter (and 9, up to 2.5 %, before the global search). The
// slowest test of the suite: about 17 minutes on 2 cores.
#[test]
fn spline_tallest_loop_is_monotone_in_every_limit() {
    let n = assert_monotone(ShapeKind::Spline, None, &axes(ShapeKind::Spline));
    assert!(n >= 100, "spline: {n} briefs");
    assert_monotone(
        ShapeKind::Spline,
        Some(20.0),
        &height_axes(ShapeKind::Spline),
    );
}

// The same for a height brief: a loop of fixed height with the lowest peak load; relaxing any
// other limit cannot raise the least peak load (the feasible set only grows).
#[test]
fn height_brief_peak_is_monotone() {
    assert_monotone(
        ShapeKind::Clothoid,
        Some(20.0),
        &height_axes(ShapeKind::Clothoid),
    );
}

/// The axes of a height brief: its height is fixed, so no max height; entry speed stays 25 m/s.
fn height_axes(kind: ShapeKind) -> Vec<Axis> {
    axes(kind)
        .into_iter()
        .filter(|a| a.0 != "max height" && a.0 != "entry speed")
        .collect()
}

// Similarity (first principles): in a planar, lossless loop, n = v²κ/g + cos θ and
// v² = v₀² − 2gz. Scaling every length by λ (κ by 1/λ) and v₀² by λ leaves n unchanged at every
// angle, so the tallest loop under load limits scales exactly by λ while neither the radius bound
// nor onset (which scales as 1/√λ) binds. The spacing is scaled too, so that the sampling is
// similar; the tolerance (0.05 %) is the optimiser's.
#[test]
fn tallest_loop_scales_with_entry_speed_squared() {
    for kind in ShapeKind::ALL {
        let mut b = base(kind);
        (b.rolling_resistance, b.drag_area_m2, b.lateral_shift_m) = (0.0, 0.0, 0.0);
        (b.min_radius_m, b.max_g, b.min_top_g) = (0.5, 6.5, 0.2);
        b.entry_speed_m_s = 20.0;
        b.spacing_m = 0.1;
        let lambda: f64 = (29.0f64 / 20.0).powi(2);
        let mut big = b.clone();
        big.entry_speed_m_s = 29.0;
        big.spacing_m = b.spacing_m * lambda;
        let (d1, d2) = (
            design_family(&b, kind).unwrap(),
            design_family(&big, kind).unwrap(),
        );
        let (h1, h2) = (d1.best.summary.loop_height_m, d2.best.summary.loop_height_m);
        // The radius bound does not bind.
        assert!(d1.best.min_radius_m() > 2.0 * b.min_radius_m, "{kind}");
        assert!(
            (h2 / h1 - lambda).abs() < 5e-4 * lambda,
            "{kind}: {h1} m at 20 m/s, {h2} m at 29 m/s, ratio {} vs λ = {lambda}",
            h2 / h1
        );
        // And the small optimum, scaled by λ, rides the big brief with the same loads (to the
        // sampling: the spacing is scaled too).
        let scaled = evaluate(
            &big,
            kind,
            d1.best.shape(),
            lambda * d1.best.top_radius_m,
            big.spacing_m,
        )
        .unwrap();
        let (p1, p2) = (d1.best.summary.peak_normal_g, scaled.summary.peak_normal_g);
        assert!((p1 - p2).abs() < 1e-6, "{kind}: peak {p1} vs {p2}");
        let (t1, t2) = (d1.best.summary.top_normal_g, scaled.summary.top_normal_g);
        assert!((t1 - t2).abs() < 1e-6, "{kind}: top {t1} vs {t2}");
    }
}

/// The briefs of the issue's examples: the demo; the demo without onset at 23 m/s with 4 and 5 g;
/// 21 and 30 m/s with 4 and 6 g.
fn issue_briefs() -> Vec<Brief> {
    let mut v = vec![{
        let mut b = Brief::demo();
        b.spacing_m = 0.5;
        b
    }];
    for (speed, g) in [
        (23.0, 4.0),
        (23.0, 5.0),
        (21.0, 4.0),
        (21.0, 6.0),
        (30.0, 4.5),
    ] {
        let mut b = base(ShapeKind::Spline);
        (b.entry_speed_m_s, b.max_g) = (speed, g);
        v.push(b);
    }
    v
}

// The spline family contains the double spiral (shape/spline.rs, tested there), the tallest
// teardrop of these briefs, so its optimum is at least as tall (the optimum over a superset).
#[test]
fn spline_at_least_as_tall_as_clothoid() {
    let rows: Vec<(f64, f64, String)> = issue_briefs()
        .par_iter()
        .map(|b| {
            let h = |k| {
                design_family(b, k)
                    .map(|d| d.best.summary.loop_height_m)
                    .unwrap_or(0.0)
            };
            (
                h(ShapeKind::Spline),
                h(ShapeKind::Clothoid),
                format!("{} m/s, {} g", b.entry_speed_m_s, b.max_g),
            )
        })
        .collect();
    for (s, c, what) in rows {
        assert!(c > 0.0, "{what}: the clothoid is feasible");
        assert!(s >= c - tol(c), "{what}: spline {s} m, clothoid {c} m");
    }
}

// The issue's examples: 23 m/s without onset, 5 g is not shorter than 4 g; 21 m/s, 6 g is not
// shorter than 4 g (the feasible set grows with max g).
#[test]
fn issue_examples_are_monotone() {
    let h: Vec<f64> = issue_briefs()[1..5]
        .par_iter()
        .map(|b| {
            design_family(b, ShapeKind::Spline)
                .unwrap()
                .best
                .summary
                .loop_height_m
        })
        .collect();
    assert!(
        h[1] >= h[0] - tol(h[0]),
        "23 m/s: {} m at 5 g, {} m at 4 g",
        h[1],
        h[0]
    );
    assert!(
        h[3] >= h[2] - tol(h[2]),
        "21 m/s: {} m at 6 g, {} m at 4 g",
        h[3],
        h[2]
    );
}

/// Tallest coarse (search-model) height of one shape, if it has a feasible size.
fn coarse_height(b: &Brief, kind: ShapeKind, shape: &[f64]) -> Option<f64> {
    let counter = AtomicUsize::new(0);
    match size_range(b, kind, shape, false, &counter).ok()? {
        SizeRange::Feasible { hi_m, .. } => {
            let h = height_per_radius(kind, shape)? * hi_m;
            Some(b.max_height_m.map_or(h, |m| h.min(m)))
        }
        _ => None,
    }
}

/// Every point of a grid with `n` values per shape parameter, both bounds included.
fn shape_grid(kind: ShapeKind, n: usize) -> Vec<Vec<f64>> {
    let bounds = family(kind).expect("a geometric family").shape_bounds();
    grid(&vec![n; bounds.len()])
        .into_iter()
        .map(|p| {
            p.iter()
                .zip(bounds)
                .map(|(&i, (lo, hi))| lo + (hi - lo) * i as f64 / (n - 1) as f64)
                .collect()
        })
        .collect()
}

// Independent global reference: an exhaustive (brute-force) grid over the shape parameters —
// 201 values of the clothoid's spiral fraction, 6⁴ spline shapes — each sized by the same size
// search, on 10 briefs. The optimiser's answer (measured with the same coarse model) must be
// within 0.5 % of the grid's best: a grid finds every valley the landscape has at its spacing.
#[test]
fn optimum_matches_a_brute_force_grid() {
    let mut briefs = Vec::new();
    for (speed, g, top, onset) in [
        (20.0, 4.0, 0.2, None),
        (23.0, 4.0, 0.2, None),
        (23.0, 5.0, 0.2, None),
        (25.0, 4.5, 0.2, Some(8.0)),
        (26.0, 6.0, 0.5, None),
        (28.0, 5.0, 0.0, Some(10.0)),
        (30.0, 4.5, 0.2, None),
        (30.0, 7.5, 0.2, None),
        (22.0, 4.2, 0.3, None),
        (27.0, 5.5, -0.2, Some(6.0)),
    ] {
        let mut b = base(ShapeKind::Spline);
        (b.entry_speed_m_s, b.max_g, b.min_top_g, b.max_onset_g_s) = (speed, g, top, onset);
        briefs.push(b);
    }
    for (kind, n) in [(ShapeKind::Clothoid, 201), (ShapeKind::Spline, 6)] {
        let shapes = shape_grid(kind, n);
        let rows: Vec<(f64, f64)> = briefs
            .par_iter()
            .map(|b| {
                let d = design_family(b, kind).expect("feasible");
                let found = coarse_height(b, kind, d.best.shape()).unwrap_or(0.0);
                let reference = shapes
                    .iter()
                    .filter_map(|s| coarse_height(b, kind, s))
                    .fold(0.0, f64::max);
                (found, reference)
            })
            .collect();
        for (b, (found, reference)) in briefs.iter().zip(rows) {
            assert!(
                found >= reference * (1.0 - 0.005),
                "{kind} at {} m/s, {} g: optimiser {found} m, grid {reference} m",
                b.entry_speed_m_s,
                b.max_g
            );
        }
    }
}

/// Run the `loopwright` binary.
fn loopwright(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_loopwright"))
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into(),
        String::from_utf8_lossy(&out.stderr).into(),
    )
}

// `evaluate` assesses one loop with the same model as `design`: a design's own shape and top
// radius evaluate to its height and peak load (the same chain, so to rounding), exit 0; a loop
// too large for the top load fails (exit 3, files written); bad input exits 2.
#[test]
fn evaluate_reproduces_a_design() {
    let mut b = Brief::demo();
    b.spacing_m = 0.25;
    let d = design_family(&b, ShapeKind::Clothoid).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().to_str().unwrap();
    let params = format!("{}", d.best.shape()[0]);
    let radius = format!("{}", d.best.top_radius_m);
    let demo = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/demo-brief.toml");
    let (code, json, err) = loopwright(&[
        "evaluate",
        demo,
        "--params",
        &params,
        "--top-radius",
        &radius,
        "--spacing",
        "0.25",
        "--json",
        "--out",
        out,
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    let h = v["loop_height_m"].as_f64().unwrap();
    assert!((h - d.best.summary.loop_height_m).abs() < 1e-9, "{h}");
    let p = v["peak_normal_g"].as_f64().unwrap();
    assert!((p - d.best.summary.peak_normal_g).abs() < 1e-9, "{p}");
    assert!(dir.path().join("copperwing.dxf").exists());
    // A tenth larger: the top load falls below the 0.2 g it was sized to (v_top² and κ fall).
    let big = format!("{}", 1.1 * d.best.top_radius_m);
    let (code, json, _) = loopwright(&[
        "evaluate",
        "--params",
        &params,
        "--top-radius",
        &big,
        "--spacing",
        "0.25",
        "--json",
        "--out",
        out,
    ]);
    assert_eq!(code, 3);
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert_eq!(v["feasible"], serde_json::Value::Bool(false));
    for bad in [
        vec!["--params", "0.5,0.5", "--top-radius", "8"],
        vec!["--params", "1.5", "--top-radius", "8"],
        vec!["--params", "nan", "--top-radius", "8"],
        vec!["--params", "0.5", "--top-radius", "inf"],
        vec!["--params", "0.5", "--top-radius", "-1"],
        vec!["--shape", "bogus", "--params", "0.5", "--top-radius", "8"],
        vec!["--shape", "circle", "--params", "0.5", "--top-radius", "8"],
    ] {
        let mut args = vec!["evaluate", "--out", out];
        args.extend(bad.iter().copied());
        let (code, _, err) = loopwright(&args);
        assert_eq!(code, 2, "{bad:?}: {err}");
    }
}

// The gallery's sweep picture (examples/gallery.rs: every family, 20 to 30 m/s, max g 4.5, 6 and
// 7.5, the demo's losses and top-load limit, no onset limit) must show no zig-zags: within a
// family, a higher entry speed or a larger max g never gives a shorter tallest loop (the feasible
// set only grows; the issue's picture had the 7.5 g spline curve up to 2 m below the 4.5 g one).
// Same grid at the coarse test spacing. With 40 Nelder–Mead iterations per slice of the spline
// search one pair failed (24 m/s: 25.2075 m at 6 g, 25.1922 m at 7.5 g, −0.061 %); 80 fixed it
// (optimiser/shape.rs, SLICE_ITERS).
#[test]
fn gallery_sweep_has_no_zig_zags() {
    use loopwright::brief::{BriefInput, DEMO_BRIEF_TOML};
    use loopwright::sweep::{self, AxisText, SweepInput, SweepSpec};
    let mut input = BriefInput::from_toml(DEMO_BRIEF_TOML).unwrap();
    input.max_onset_g_s = None;
    input.spacing_m = Some(0.5);
    let grid = SweepInput {
        entry_speed: Some(AxisText::Text("20..30:11".into())),
        max_g: Some(AxisText::Text("4.5..7.5:3".into())),
        min_top_g: None,
        shapes: None,
    };
    let spec = SweepSpec::new(input, &grid).unwrap();
    let rows = sweep::run(&spec, None, &|| {});
    let height = |kind: ShapeKind, v: f64, g: f64| {
        rows.iter()
            .find(|r| {
                r.point.kind == kind
                    && (r.point.entry_speed_m_s - v).abs() < 1e-9
                    && (r.point.max_g - g).abs() < 1e-9
            })
            .and_then(|r| r.result.as_ref().ok())
            .map(|k| k.loop_height_m)
    };
    let mut bad = Vec::new();
    let mut feasible = 0;
    for kind in ShapeKind::ALL {
        let Some(_) = family(kind) else { continue };
        for i in 0..=10 {
            let v = 20.0 + i as f64;
            for (j, g) in [4.5, 6.0, 7.5].into_iter().enumerate() {
                let Some(h) = height(kind, v, g) else {
                    continue;
                };
                feasible += 1;
                let mut neighbours = vec![(v + 1.0, g)];
                if j < 2 {
                    neighbours.push((v, [4.5, 6.0, 7.5][j + 1]));
                }
                for (v2, g2) in neighbours.into_iter().filter(|(v2, _)| *v2 <= 30.0) {
                    match height(kind, v2, g2) {
                        Some(h2) if h2 >= h - tol(h) => {}
                        other => bad.push(format!(
                            "{kind} {v} m/s {g} g: {h} m, then {v2} m/s {g2} g: {other:?}"
                        )),
                    }
                }
            }
        }
    }
    assert!(bad.is_empty(), "{}", bad.join("\n"));
    // Circle: 6 + 0.2 g at the bottom leaves only 7.5 g; clothoid and spline: all 33 each.
    assert_eq!(feasible, 11 + 33 + 33);
}
