//! Benchmarks: one design per family (in process and as a whole `loopwright design` process) and a
//! 1000-design sweep. Run with `cargo bench --bench study`; figures are in the README.
//!
//! Short mode for CI (`LOOPWRIGHT_BENCH_QUICK=1`): the sweep shrinks to 100 designs so the whole
//! run takes under a minute, and the figures still show a regression of the per-design cost.

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use std::process::Command;

use loopwright::brief::{Brief, BriefInput, ShapeKind};
use loopwright::optimiser::design_family;
use loopwright::sweep::{self, AxisText, SweepInput, SweepSpec};

fn designs(c: &mut Criterion) {
    let brief = Brief::demo();
    let mut g = c.benchmark_group("design");
    g.sample_size(20);
    for kind in ShapeKind::ALL {
        // The demo brief's circle is infeasible: this times the search plus its explanation.
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
    g.sample_size(20);
    g.bench_function("design clothoid", |b| {
        b.iter(|| {
            let status = Command::new(exe)
                .args(["design", "--shape", "clothoid", "--quiet", "--out"])
                .arg(out.path())
                .status()
                .expect("run loopwright");
            assert!(status.success());
        })
    });
    g.finish();
}

/// 1000 clothoid designs: 10 entry speeds × 10 peak limits × 10 top limits on the demo brief.
fn sweep_1000(c: &mut Criterion) {
    let base = BriefInput::from_toml(loopwright::brief::DEMO_BRIEF_TOML).expect("demo brief");
    let quick = std::env::var_os("LOOPWRIGHT_BENCH_QUICK").is_some();
    let (n, label) = if quick {
        (100, "100 clothoid designs")
    } else {
        (1000, "1000 clothoid designs")
    };
    let grid = SweepInput {
        entry_speed: Some(AxisText::Text(
            if quick { "20..30:4" } else { "20..30:10" }.into(),
        )),
        max_g: Some(AxisText::Text(
            if quick { "4..6:5" } else { "4..6:10" }.into(),
        )),
        min_top_g: Some(AxisText::Text(
            if quick { "0..0.5:5" } else { "0..0.5:10" }.into(),
        )),
        shapes: Some(vec!["clothoid".into()]),
    };
    let spec = SweepSpec::new(base, &grid).expect("valid sweep");
    assert_eq!(spec.len(), n);
    let mut g = c.benchmark_group("sweep");
    g.sample_size(10);
    g.bench_function(label, |b| {
        b.iter(|| black_box(sweep::run(&spec, None, &|| {}).len()))
    });
    g.finish();
}

criterion_group!(benches, designs, whole_process, sweep_1000);
criterion_main!(benches);
