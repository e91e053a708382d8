//! Benchmarks: one per figure of the speed table in the README's "Performance" section (issue 12).
//! Run with `cargo bench --bench study`; each prints the optimum it found beside its time, so that
//! speed is never bought with a worse loop.
//!
//! - `design/*`: one design of the issue's brief (25 m/s, 4.5 g, top ≥ 0.2 g, min radius 3 m,
//!   lossless, planar) with each family, in process; `process/design clothoid` the same brief as a
//!   whole `loopwright design` process (files written);
//! - `train/*`: the clothoid design of that brief with 1 and 12 cars (the table's ratio);
//! - `sweep/*`: 1000 clothoid designs and 1000 spline designs (10 × 10 × 10 grids of entry speed,
//!   peak and top limits on the demo brief, both cores);
//! - `kernel/*`: one evaluation of a clothoid loop at the search's coarse sampling (16 stations per
//!   top radius, planar): centreline alone, ride alone, and the whole model evaluation; the
//!   station count is printed so the time reads per sample;
//! - `train40/*`: the demo brief with a 40-car train (peak memory is measured by
//!   `scripts/ratio`, with `/usr/bin/time -v`, not here).
//!
//! Short mode for CI (`LOOPWRIGHT_BENCH_QUICK=1`): the sweeps shrink to 100 clothoid and 8 spline
//! designs (the label says how many; scale per design for the table) and the 40-car train runs the
//! lossless planar brief rather than the demo brief, so the whole run takes a few minutes; the
//! figures still show a regression of the per-design cost.

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use std::process::Command;

use loopwright::brief::{Brief, BriefInput, ShapeKind};
use loopwright::optimiser::design_family;
use loopwright::sweep::{self, AxisText, SweepInput, SweepSpec};

/// The issue's brief: the one the scipy reference script solves (its header names it).
const ISSUE_BRIEF: &str = "entry_speed = 25.0\nmax_g = 4.5\nmin_top_g = 0.2\nmin_radius_m = 3.0\n\
    rolling_resistance = 0.0\ndrag_area_m2 = 0.0\nlateral_shift_m = 0.0\n";

/// The same flags for a whole `loopwright design` process.
const ISSUE_FLAGS: &[&str] = &[
    "--entry-speed",
    "25",
    "--max-g",
    "4.5",
    "--min-top-g",
    "0.2",
    "--min-radius",
    "3",
    "--rolling-resistance",
    "0",
    "--drag-area",
    "0",
    "--lateral-shift",
    "0",
];

fn quick() -> bool {
    std::env::var_os("LOOPWRIGHT_BENCH_QUICK").is_some()
}

/// `base` (TOML) with `cars` cars, resolved.
fn brief_with_cars(base: &str, cars: usize) -> Brief {
    let text = format!("{base}cars = {cars}\n");
    BriefInput::from_toml(&text)
        .and_then(|b| b.resolve())
        .expect("benchmark brief is valid")
}

/// Design once and print the optimum, so the time below it is read beside what it bought.
fn print_optimum(label: &str, brief: &Brief, kind: ShapeKind) {
    match design_family(brief, kind) {
        Ok(a) => println!(
            "optimum {label}: loop height {:.3} m, top radius {:.3} m, peak {:.3} g ({} evaluations)",
            a.best.path.loop_height_m(),
            a.best.top_radius_m,
            a.best.summary.peak_normal_g,
            a.evaluations
        ),
        Err(e) => println!("optimum {label}: infeasible ({e})"),
    }
}

fn designs(c: &mut Criterion) {
    let brief = brief_with_cars(ISSUE_BRIEF, 1);
    let mut g = c.benchmark_group("design");
    g.sample_size(10);
    // The circle is left out: it cannot meet this brief, so it would time only its diagnosis.
    for kind in [ShapeKind::Clothoid, ShapeKind::Spline] {
        print_optimum(kind.name(), &brief, kind);
        g.bench_function(kind.name(), |b| {
            b.iter(|| black_box(design_family(black_box(&brief), kind).is_ok()))
        });
    }
    g.finish();
}

fn whole_process(c: &mut Criterion) {
    let out = tempfile::tempdir().expect("temporary folder");
    let exe = env!("CARGO_BIN_EXE_loopwright");
    let mut g = c.benchmark_group("process");
    g.sample_size(10);
    g.bench_function("design clothoid", |b| {
        b.iter(|| {
            let status = Command::new(exe)
                .arg("design")
                .args(ISSUE_FLAGS)
                .args(["--shape", "clothoid", "--quiet", "--out"])
                .arg(out.path())
                .status()
                .expect("run loopwright");
            assert!(status.success());
        })
    });
    g.finish();
}

/// 1 car against 12 cars on the issue's brief: the table's ratio is the second time over the first.
fn trains(c: &mut Criterion) {
    let mut g = c.benchmark_group("train");
    g.sample_size(10);
    for cars in [1, 12] {
        let brief = brief_with_cars(ISSUE_BRIEF, cars);
        let label = format!("clothoid {cars} car(s)");
        print_optimum(&label, &brief, ShapeKind::Clothoid);
        g.bench_function(&label, |b| {
            b.iter(|| black_box(design_family(black_box(&brief), ShapeKind::Clothoid).is_ok()))
        });
    }
    g.finish();
}

/// The largest train the brief allows; quick mode runs the cheaper lossless planar brief.
fn train_40(c: &mut Criterion) {
    let (brief, label) = if quick() {
        (
            brief_with_cars(ISSUE_BRIEF, 40),
            "clothoid 40 cars, issue brief",
        )
    } else {
        (
            brief_with_cars(loopwright::brief::DEMO_BRIEF_TOML, 40),
            "clothoid 40 cars, demo brief",
        )
    };
    print_optimum(label, &brief, ShapeKind::Clothoid);
    let mut g = c.benchmark_group("train40");
    g.sample_size(10);
    g.bench_function(label, |b| {
        b.iter(|| black_box(design_family(black_box(&brief), ShapeKind::Clothoid).is_ok()))
    });
    g.finish();
}

/// The inner loop of every search, in pieces: per-sample cost of geometry, ride and the model.
fn kernel(c: &mut Criterion) {
    use loopwright::dynamics::{Conditions, simulate};
    use loopwright::geometry::Centreline;
    use loopwright::model::{Curve, evaluate};
    let brief = brief_with_cars(ISSUE_BRIEF, 1);
    let (shape, r) = ([0.5], 9.0);
    let spacing = r / 16.0;
    let fam = loopwright::shape::family(ShapeKind::Clothoid).expect("clothoid is a family");
    let profile = fam
        .curvature_with_leads(&shape, r, brief.lead_length_m)
        .expect("valid loop");
    let path = Centreline::build_shifted(&profile, brief.heartline_height_m, spacing, 0.0);
    println!(
        "kernel: clothoid top radius {r} m at {spacing:.4} m spacing: {} stations, loop height {:.3} m",
        path.stations.len(),
        path.loop_height_m()
    );
    let cond = Conditions::lossless(brief.entry_speed_m_s);
    let mut g = c.benchmark_group("kernel");
    g.bench_function("centreline (planar)", |b| {
        b.iter(|| {
            Centreline::build_shifted(black_box(&profile), 1.1, spacing, 0.0)
                .stations
                .len()
        })
    });
    g.bench_function("ride (point mass)", |b| {
        b.iter(|| simulate(black_box(&path), &cond).map(|r| r.points.len()))
    });
    let curve = Curve::family(ShapeKind::Clothoid, &shape, r);
    g.bench_function("model evaluation", |b| {
        b.iter(|| evaluate(black_box(&brief), &curve, spacing, 0.0).is_ok())
    });
    g.finish();
}

/// A sweep of the demo brief: `speeds × peaks × tops` designs of `shape`.
fn sweep_spec(shape: &str, (speeds, peaks, tops): (usize, usize, usize)) -> SweepSpec {
    let base = BriefInput::from_toml(loopwright::brief::DEMO_BRIEF_TOML).expect("demo brief");
    let grid = SweepInput {
        entry_speed: Some(AxisText::Text(format!("20..30:{speeds}"))),
        max_g: Some(AxisText::Text(format!("4..6:{peaks}"))),
        min_top_g: Some(AxisText::Text(format!("0..0.5:{tops}"))),
        shapes: Some(vec![shape.into()]),
    };
    let spec = SweepSpec::new(base, &grid).expect("valid sweep");
    assert_eq!(spec.len(), speeds * peaks * tops);
    spec
}

fn sweeps(c: &mut Criterion) {
    let cases = if quick() {
        [("clothoid", (4, 5, 5)), ("spline", (2, 2, 2))]
    } else {
        [("clothoid", (10, 10, 10)), ("spline", (10, 10, 10))]
    };
    let mut g = c.benchmark_group("sweep");
    g.sample_size(10);
    for (shape, dims) in cases {
        let spec = sweep_spec(shape, dims);
        let label = format!("{} {shape} designs", spec.len());
        // The tallest feasible loop of the sweep and how many designs were feasible.
        let rows = sweep::run(&spec, None, &|| {});
        let ok: Vec<f64> = rows
            .iter()
            .filter_map(|r| r.result.as_ref().ok().map(|k| k.loop_height_m))
            .collect();
        println!(
            "optimum {label}: {} feasible, tallest {:.3} m, mean height {:.3} m",
            ok.len(),
            ok.iter().cloned().fold(f64::NAN, f64::max),
            ok.iter().sum::<f64>() / ok.len().max(1) as f64
        );
        g.bench_function(&label, |b| {
            b.iter(|| black_box(sweep::run(&spec, None, &|| {}).len()))
        });
    }
    g.finish();
}

criterion_group!(
    benches,
    kernel,
    designs,
    whole_process,
    trains,
    train_40,
    sweeps
);
criterion_main!(benches);
