//! Studies over many loops: `compare` (every family on one brief) and `sweep` (a grid of briefs),
//! checked against separate design runs, the lossless circle's closed form, and themselves
//! (determinism across thread counts, shards merged against the unsharded run).

use loopwright::brief::{Brief, BriefInput, ShapeKind};
use loopwright::checks::limits::DESIGN_MARGIN;
use loopwright::compare::{KeyFigures, compare};
use loopwright::export::{overlay, study};
use loopwright::optimiser::design_family;
use loopwright::report::CAUTION;
use loopwright::sweep::{self, Shard, SweepInput, SweepSpec, parse_axis, parse_speed_axis};
use loopwright::units::STANDARD_GRAVITY_M_S2 as G;

/// The demo brief without losses, onset limit or lateral shift (a planar loop), so the circle's
/// closed form applies; a coarser spacing keeps the suite fast without touching the closed-form
/// checks (the circle's loads are exact at any spacing).
fn lossless_input(max_g: f64) -> BriefInput {
    let text = format!(
        "name = \"study\"\nentry_speed = 25.0\nmax_g = {max_g}\nmin_top_g = 0.2\nrolling_resistance = 0.0\n\
         drag_area_m2 = 0.0\nspacing_m = 0.1\nlateral_shift_m = 0.0\n"
    );
    BriefInput::from_toml(&text).unwrap()
}

fn lossless(max_g: f64) -> Brief {
    lossless_input(max_g).resolve().unwrap()
}

/// Closed form of the tallest lossless circle with top load ≥ n_top (vertical circular motion,
/// e.g. Halliday, Resnick & Walker, "Fundamentals of Physics", ch. 6 and 8): n_top = v²/(gR) − 5,
/// so R = v²/(g(5 + n_top)), height 2R and bottom load n_top + 6.
fn tallest_circle_height_m(v: f64, n_top: f64) -> f64 {
    2.0 * v * v / (G * (5.0 + n_top))
}

#[test]
fn compare_numbers_equal_separate_design_runs() {
    // max_g 7 g lets the circle through (it needs 6 + 0.2 g), so every family is feasible.
    let b = lossless(7.0);
    let c = compare(&b, &ShapeKind::ALL);
    assert_eq!(c.entries.len(), ShapeKind::ALL.len());
    for e in &c.entries {
        let mut alone = b.clone();
        alone.shape = e.kind;
        let d = design_family(&alone, e.kind).unwrap_or_else(|err| panic!("{}: {err}", e.kind));
        // Same brief, same deterministic search: the figures must be identical, not just close.
        assert_eq!(e.figures().unwrap(), KeyFigures::of(&d), "{}", e.kind);
    }
    // And the circle's figures are the closed form's at the limit plus the design margin.
    let circle = c
        .entries
        .iter()
        .find(|e| e.kind == ShapeKind::Circle)
        .unwrap()
        .figures()
        .unwrap();
    let h = tallest_circle_height_m(25.0, 0.2 + DESIGN_MARGIN.load_g);
    assert!(
        (circle.loop_height_m - h).abs() < 2e-3,
        "{} vs {h}",
        circle.loop_height_m
    );
    assert!(
        (circle.peak_normal_g - 6.2 - DESIGN_MARGIN.load_g).abs() < 2e-4,
        "{}",
        circle.peak_normal_g
    );

    // The CSV carries the same numbers with fixed decimals, one row per family.
    let csv = String::from_utf8(study::compare_csv(&c).unwrap()).unwrap();
    let mut r = csv::Reader::from_reader(csv.as_bytes());
    let head = r.headers().unwrap().clone();
    let col = |name: &str| head.iter().position(|h| h == name).unwrap();
    let rows: Vec<csv::StringRecord> = r.records().map(Result::unwrap).collect();
    assert_eq!(rows.len(), 3);
    assert_eq!(&rows[0][col("shape")], "circle");
    assert_eq!(
        rows[0][col("loop_height_m")],
        study::fixed(circle.loop_height_m)
    );
    let json: serde_json::Value =
        serde_json::from_slice(&study::compare_json(&c).unwrap()).unwrap();
    assert_eq!(json["caution"], CAUTION);
    let jh = json["families"][0]["figures"]["loop_height_m"]
        .as_f64()
        .unwrap();
    assert_eq!(jh, circle.loop_height_m);
}

#[test]
fn circle_below_six_plus_top_is_reported_infeasible_and_others_still_run() {
    // 6.1 g < 6 + 0.2 g: no lossless circle can meet it (closed form above).
    let b = lossless(6.1);
    let c = compare(&b, &ShapeKind::ALL);
    let circle = c
        .entries
        .iter()
        .find(|e| e.kind == ShapeKind::Circle)
        .unwrap();
    let why = circle.figures().unwrap_err();
    assert!(why.contains("6 + n_top"), "{why}");
    // The other families are designed regardless, and meet the limits.
    for e in c.entries.iter().filter(|e| e.kind != ShapeKind::Circle) {
        let f = e.figures().unwrap_or_else(|w| panic!("{}: {w}", e.kind));
        assert!(
            f.peak_normal_g <= 6.1 && f.top_normal_g >= 0.2,
            "{}: {f:?}",
            e.kind
        );
    }
    // The table, CSV and JSON keep the circle with its reason.
    let table = loopwright::report::compare_table(&c);
    assert!(
        table.contains("circle: no circle loop meets the brief") && table.contains("6 + n_top"),
        "{table}"
    );
    let csv = String::from_utf8(study::compare_csv(&c).unwrap()).unwrap();
    let circle_row = csv.lines().find(|l| l.starts_with("circle,")).unwrap();
    assert!(
        circle_row.starts_with("circle,no,") && circle_row.contains("6 + n_top"),
        "{circle_row}"
    );
    let json: serde_json::Value =
        serde_json::from_slice(&study::compare_json(&c).unwrap()).unwrap();
    assert_eq!(json["families"][0]["feasible"], false);
    // The overlays draw every family (the failing one dashed, tests/pictures.rs), note the
    // infeasible one and carry the caution.
    let elev = overlay::elevation_overlay_svg(&c);
    assert!(elev.contains("circle: FAILING"), "elevation note");
    assert!(elev.contains("CAUTION"));
    assert!(overlay::loads_overlay_svg(&c).contains("CAUTION"));
}

fn small_sweep() -> SweepSpec {
    let s = SweepInput {
        entry_speed: Some(sweep::AxisText::Text("22..28:4".into())),
        max_g: Some(sweep::AxisText::Text("4.5..6.5:2".into())),
        min_top_g: None,
        shapes: Some(vec!["circle".into(), "clothoid".into()]),
    };
    SweepSpec::new(lossless_input(4.5), &s).unwrap()
}

fn sweep_csv_with_threads(spec: &SweepSpec, threads: usize, shard: Option<Shard>) -> Vec<u8> {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap();
    let rows = pool.install(|| sweep::run(spec, shard, &|| {}));
    study::sweep_csv(&rows, spec.len(), &spec.id()).unwrap()
}

#[test]
fn sweep_is_deterministic_across_thread_counts_and_shards_merge_to_the_whole() {
    let spec = small_sweep();
    assert_eq!(spec.len(), 2 * 2 * 4);
    let one = sweep_csv_with_threads(&spec, 1, None);
    let two = sweep_csv_with_threads(&spec, 2, None);
    assert_eq!(
        one, two,
        "the same sweep must give byte-identical CSV whatever the thread count"
    );

    // Rows against the closed form: a lossless circle at 6.5 g (≥ 6.2) reaches 2v²/(g·5.2); at
    // 4.5 g it is infeasible with the 6 + n_top reason.
    let text = String::from_utf8(one.clone()).unwrap();
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let head = r.headers().unwrap().clone();
    let col = |name: &str| head.iter().position(|h| h == name).unwrap();
    let rows: Vec<csv::StringRecord> = r.records().map(Result::unwrap).collect();
    assert_eq!(rows.len(), 16);
    for (i, row) in rows.iter().enumerate() {
        assert_eq!(
            row[col("design")].parse::<usize>().unwrap(),
            i,
            "rows sorted by grid index"
        );
        if &row[col("shape")] != "circle" {
            continue;
        }
        let v: f64 = row[col("entry_speed_m_s")].parse().unwrap();
        let max_g: f64 = row[col("max_g")].parse().unwrap();
        if max_g > 6.2 {
            assert_eq!(&row[col("feasible")], "yes");
            let h: f64 = row[col("loop_height_m")].parse().unwrap();
            let want = tallest_circle_height_m(v, 0.2 + DESIGN_MARGIN.load_g);
            assert!((h - want).abs() < 2e-3, "v = {v}: {h} vs {want}");
        } else {
            assert_eq!(&row[col("feasible")], "no");
            assert!(
                row[col("reason")].contains("6 + n_top"),
                "{}",
                &row[col("reason")]
            );
        }
    }

    // Three shards, merged in any order, are exactly the unsharded CSV.
    let shards: Vec<(String, Vec<u8>)> = [3, 1, 2]
        .iter()
        .map(|&i| {
            let s = Shard {
                number: i,
                count: 3,
            };
            (
                format!("shard {i}"),
                sweep_csv_with_threads(&spec, 2, Some(s)),
            )
        })
        .collect();
    assert_eq!(study::merge_sweep_csv(&shards).unwrap(), one);
    // A missing shard, a repeated shard or a shard of another sweep is refused.
    let missing = study::merge_sweep_csv(&shards[..2]).unwrap_err();
    assert!(missing.message.contains("missing"), "{missing}");
    let twice = [shards.clone(), vec![shards[0].clone()]].concat();
    assert!(
        study::merge_sweep_csv(&twice)
            .unwrap_err()
            .message
            .contains("more than one shard")
    );
    let mut other_input = lossless_input(4.5);
    other_input.heartline_height_m = Some(1.2);
    let other = SweepSpec::new(
        other_input,
        &SweepInput {
            shapes: Some(vec!["circle".into()]),
            ..small_sweep_input()
        },
    )
    .unwrap();
    let foreign = sweep_csv_with_threads(
        &other,
        1,
        Some(Shard {
            number: 1,
            count: 3,
        }),
    );
    let mixed = vec![
        shards[0].clone(),
        shards[1].clone(),
        ("foreign".to_string(), foreign),
    ];
    assert!(
        study::merge_sweep_csv(&mixed)
            .unwrap_err()
            .message
            .contains("different sweep")
    );

    // The summary plot draws one curve per family and g-limit, with the caution.
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(2)
        .build()
        .unwrap();
    let rows = pool.install(|| sweep::run(&spec, None, &|| {}));
    let svg = overlay::sweep_summary_svg(&rows, "study", spec.base_brief.objective);
    // No lossless circle meets 4.5 g (6 + n_top): that curve is not drawn, so not in the legend.
    assert!(
        svg.contains("clothoid, max 6.50 g")
            && svg.contains("circle, max 6.50 g")
            && !svg.contains("circle, max 4.50 g"),
        "legend"
    );
    assert!(svg.contains("CAUTION"));
}

fn small_sweep_input() -> SweepInput {
    SweepInput {
        entry_speed: Some(sweep::AxisText::Text("22..28:4".into())),
        max_g: Some(sweep::AxisText::Text("4.5..6.5:2".into())),
        min_top_g: None,
        shapes: None,
    }
}

#[test]
fn ranges_parse_and_hostile_ranges_are_refused_clearly() {
    // Evenly spaced, both ends included.
    let v = parse_axis("entry_speed", "20..30:11").unwrap();
    assert_eq!(v.len(), 11);
    assert_eq!((v[0], v[5], v[10]), (20.0, 25.0, 30.0));
    assert_eq!(
        parse_axis("min_top_g", "-0.5..0.5:3").unwrap(),
        vec![-0.5, 0.0, 0.5]
    );
    // 90 km/h = 25 m/s exactly (1 km/h = 1/3.6 m/s, SI definition).
    let kmh = parse_speed_axis("entry_speed", "72..108:3 km/h").unwrap();
    assert!(
        (kmh[0] - 20.0).abs() < 1e-12
            && (kmh[1] - 25.0).abs() < 1e-12
            && (kmh[2] - 30.0).abs() < 1e-12
    );
    for (text, says) in [
        ("20..10:5", "not below end"),
        ("a..b", "not a number"),
        ("a..b:3", "not a number"),
        (":0", "no range"),
        ("20..30:0", "count 0"),
        ("20..30:1", "count 1"),
        ("20..30", "no count"),
        ("NaN", "not a finite number"),
        ("20..NaN:3", "not a finite number"),
        ("inf..30:3", "not a finite number"),
        ("20..30:-2", "not a whole number"),
        ("20..30:99999999999", "outside 2 to"),
        ("", "empty"),
    ] {
        let e = parse_axis("entry_speed", text).unwrap_err();
        assert!(e.to_string().contains(says), "'{text}': {e}");
        assert!(
            e.to_string().starts_with("sweep entry_speed:"),
            "'{text}': names the field: {e}"
        );
    }
    assert!(
        parse_speed_axis("entry_speed", "a..b")
            .unwrap_err()
            .to_string()
            .contains("not a number")
    );
    assert!(
        parse_speed_axis("entry_speed", "20..30:3 furlongs")
            .unwrap_err()
            .to_string()
            .contains("unknown speed unit")
    );
    // Values outside a brief field's range are refused with the field's range and unit.
    let bad = SweepInput {
        max_g: Some(sweep::AxisText::Text("4..25:3".into())),
        ..SweepInput::default()
    };
    let e = SweepSpec::new(lossless_input(4.5), &bad)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("max_g") && e.contains("25") && e.contains("1 to 20 g"),
        "{e}"
    );
    // Shards count from 1.
    for text in ["0/3", "4/3", "1/0", "x/3", "3", "-1/3"] {
        assert!(Shard::parse(text).is_err(), "{text}");
    }
    // Contradictory combinations are rows with the brief's reason, not a crash.
    let clash = SweepInput {
        max_g: Some(sweep::AxisText::Text("2..3:2".into())),
        min_top_g: Some(sweep::AxisText::Text("2.5".into())),
        shapes: Some(vec!["circle".into()]),
        ..SweepInput::default()
    };
    let spec = SweepSpec::new(lossless_input(4.5), &clash).unwrap();
    let row = sweep::run_point(&spec, 0);
    assert!(row.result.unwrap_err().contains("min_top_g"));
}

#[test]
fn command_line_sweep_merge_and_compare_write_their_files() {
    use loopwright::cli::main_with_args;
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().to_str().unwrap();
    let brief = dir.path().join("study.toml");
    std::fs::write(
        &brief,
        "name = \"cli\"\nrolling_resistance = 0.0\ndrag_area_m2 = 0.0\nspacing_m = 0.1\nlateral_shift_m = 0.0\n\
         [sweep]\nentry_speed = \"24..26:2\"\nmax_g = 6.5\nshapes = [\"circle\"]\n",
    )
    .unwrap();
    let b = brief.to_str().unwrap();
    let run = |extra: &[&str]| {
        let mut args = vec!["loopwright", "sweep", b, "--out", out, "--quiet"];
        args.extend_from_slice(extra);
        main_with_args(args)
    };
    assert_eq!(run(&[]), 0);
    assert_eq!(run(&["--shard", "1/2"]), 0);
    assert_eq!(run(&["--shard", "2/2"]), 0);
    let whole = std::fs::read(dir.path().join("cli-sweep.csv")).unwrap();
    assert!(
        std::fs::read_to_string(dir.path().join("cli-sweep.svg"))
            .unwrap()
            .contains("CAUTION")
    );
    let merged = dir.path().join("merged.csv");
    let code = main_with_args([
        "loopwright",
        "merge",
        dir.path()
            .join("cli-sweep-shard-2-of-2.csv")
            .to_str()
            .unwrap(),
        dir.path()
            .join("cli-sweep-shard-1-of-2.csv")
            .to_str()
            .unwrap(),
        "--out",
        merged.to_str().unwrap(),
    ]);
    assert_eq!(code, 0);
    assert_eq!(std::fs::read(&merged).unwrap(), whole);
    // Hostile input: usage errors (exit 2), nothing panics.
    assert_eq!(run(&["--entry-speed", "20..10:5"]), 2);
    assert_eq!(run(&["--max-g", "NaN"]), 2);
    assert_eq!(run(&["--shard", "3/2"]), 2);
    assert_eq!(run(&["--jobs", "0"]), 2);
    let missing = dir.path().join("nope.csv");
    assert_eq!(
        main_with_args([
            "loopwright",
            "merge",
            missing.to_str().unwrap(),
            "--out",
            out
        ]),
        4
    );

    // compare: table files for every family; a brief no family meets exits 3.
    let code = main_with_args([
        "loopwright",
        "compare",
        "--max-g",
        "6.5",
        "--spacing",
        "0.1",
        "--out",
        out,
        "--quiet",
    ]);
    assert_eq!(code, 0);
    for f in [
        "compare.csv",
        "compare.json",
        "compare-elevation.svg",
        "compare-loads.svg",
    ] {
        // Flags without a brief file start from the defaults (README brief table): name "loop".
        assert!(dir.path().join(format!("loop-{f}")).exists(), "{f}");
    }
    let code = main_with_args([
        "loopwright",
        "compare",
        "--entry-speed",
        "3",
        "--name",
        "slow",
        "--out",
        out,
        "--quiet",
    ]);
    assert_eq!(code, 3);
    assert_eq!(
        main_with_args([
            "loopwright",
            "compare",
            "--shape",
            "circle,oval",
            "--out",
            out
        ]),
        2
    );
}
