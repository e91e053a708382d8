//! Regenerate every picture in `gallery/`: the demo design's elevation and loads plot, the compare
//! overlays of the demo brief and a sweep summary. Run from the repository root:
//!
//! ```sh
//! cargo run --release --example gallery
//! ```
//!
//! The same files come from the command line (`loopwright compare`, `loopwright sweep ...`); this
//! example pins the sweep grid so the gallery is reproducible byte for byte.

use std::path::Path;

use loopwright::brief::{BriefInput, DEMO_BRIEF_TOML, ShapeKind};
use loopwright::compare::compare;
use loopwright::export::{overlay, plot, svg, write_all_atomic};
use loopwright::optimiser::design;
use loopwright::sweep::{self, AxisText, SweepInput, SweepSpec};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("gallery");
    std::fs::create_dir_all(&dir)?;
    let input = BriefInput::from_toml(DEMO_BRIEF_TOML)?;
    let brief = input.resolve()?;

    let c = compare(&brief, &ShapeKind::ALL);
    // The sweep: every family, entry speed 20 to 30 m/s, three peak-load limits, the demo's top-load
    // limit and losses, but no onset limit (a circle entered from straight track has unbounded onset,
    // so with one it would never appear). Spacing 0.1 m keeps it to well under a minute on two cores.
    let grid = SweepInput {
        entry_speed: Some(AxisText::Text("20..30:11".into())),
        max_g: Some(AxisText::Text("4.5..7.5:3".into())),
        min_top_g: None,
        shapes: None,
    };
    let mut sweep_input = input.clone();
    sweep_input.max_onset_g_s = None;
    sweep_input.spacing_m = Some(0.1);
    let spec = SweepSpec::new(sweep_input, &grid)?;
    let rows = sweep::run(&spec, None, &|| {});

    let demo = design(&brief)?;
    let files = vec![
        (
            dir.join("copperwing.svg"),
            svg::elevation_svg(&demo).into_bytes(),
        ),
        (
            dir.join("copperwing-loads.svg"),
            plot::loads_svg(&demo).into_bytes(),
        ),
        (
            dir.join("copperwing-compare-elevation.svg"),
            overlay::elevation_overlay_svg(&c).into_bytes(),
        ),
        (
            dir.join("copperwing-compare-loads.svg"),
            overlay::loads_overlay_svg(&c).into_bytes(),
        ),
        (
            dir.join("copperwing-sweep.svg"),
            overlay::sweep_summary_svg(&rows, &spec.base_brief.title, spec.base_brief.objective)
                .into_bytes(),
        ),
    ];
    write_all_atomic(&files)?;
    for (p, _) in &files {
        println!("wrote {}", p.display());
    }
    Ok(())
}
