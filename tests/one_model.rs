//! One model for every command: `design`, `check`, `compare` and `sweep` evaluate a loop the same
//! way (trains, limit tables, losses, heartline height), so a design's own files checked with the
//! same brief give the design's figures back, and every command honours the limit table.
//!
//! References: the design itself (its per-car figures, computed from the exact curvature) is the
//! expectation the `check` of its sampled points must reproduce; the tolerance of 0.02 g is the
//! issue's floor for a smoothing-spline refit of exact points (common practice, no source).

use loopwright::cli::{EXIT_INFEASIBLE, EXIT_OK, EXIT_USAGE, main_with_args};
use std::path::Path;

fn run(args: &[&str]) -> i32 {
    let mut a = vec!["loopwright"];
    a.extend_from_slice(args);
    main_with_args(a)
}

/// The demo brief file: brief flags without a file start from the defaults, not the demo.
const DEMO: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/demo-brief.toml");

fn json(path: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

/// A table the demo loop cannot meet: its normal load stays above 2 g far longer than 0.05 s.
const STRICT_TABLE: &str = "title = \"strict test table\"\n[normal]\nlevel = [{ duration_s = 0.05, max_g = 2.0, min_g = -1.0 }]\n";

/// `check` of a 7-car design's own DXF (rail layer) and loads CSV (heartline columns), with the
/// same brief, gives every car's peak, least and top normal load within 0.02 g of the design's.
#[test]
fn check_reproduces_a_seven_car_design_per_car() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("design");
    let o = out.to_str().unwrap();
    let train = ["--cars", "7", "--car-pitch", "2.4"];
    let mut args = vec!["design", DEMO, "--out", o, "--quiet"];
    args.extend_from_slice(&train);
    assert_eq!(run(&args), EXIT_OK);
    let design = json(&out.join("copperwing.json"));
    let dxf = out.join("copperwing.dxf");
    let csv = out.join("copperwing-loads.csv");
    for (file, extra) in [
        (&dxf, vec!["--layer", "LW-RAIL", "--points", "rail"]),
        (&csv, vec!["--points", "heartline"]),
    ] {
        let cout = dir.path().join("check");
        let c = cout.to_str().unwrap();
        // The design sits on its top-load limit; the refit may land a hair under it, so the
        // verdict is not what is tested here (see the limits tests below).
        let mut args = vec![
            "check",
            file.to_str().unwrap(),
            "--out",
            c,
            "--quiet",
            "--min-top-g",
            "0.1",
        ];
        args.extend_from_slice(&train);
        args.extend_from_slice(&extra);
        assert_eq!(run(&args), EXIT_OK, "{file:?}");
        let checked = json(&cout.join("copperwing-check.json"));
        let (dc, cc) = (
            design["per_car"].as_array().unwrap(),
            checked["per_car"].as_array().unwrap(),
        );
        assert_eq!(dc.len(), 7);
        assert_eq!(cc.len(), 7, "check must ride the brief's train");
        for (a, b) in dc.iter().zip(cc) {
            for key in ["peak_normal_g", "min_normal_g", "top_normal_g"] {
                let (x, y) = (a[key].as_f64().unwrap(), b[key].as_f64().unwrap());
                assert!(
                    (x - y).abs() < 0.02,
                    "{file:?} car {}: {key} design {x:.4} g, check {y:.4} g",
                    a["car"]
                );
            }
        }
        // The same five drawings and tables as design, plus the per-car table.
        for f in [
            "copperwing-check.dxf",
            "copperwing-check.svg",
            "copperwing-check-loads.svg",
            "copperwing-check-loads.csv",
            "copperwing-check.json",
            "copperwing-check-cars.csv",
        ] {
            assert!(cout.join(f).exists(), "check did not write {f}");
        }
    }
}

/// `check --limits` with a table the centreline violates exits 3; without it, the same file passes.
#[test]
fn check_enforces_a_limit_table() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("d");
    assert_eq!(
        run(&[
            "design",
            DEMO,
            "--spacing",
            "0.1",
            "--out",
            out.to_str().unwrap(),
            "--quiet"
        ]),
        EXIT_OK
    );
    let table = dir.path().join("strict.toml");
    std::fs::write(&table, STRICT_TABLE).unwrap();
    let csv = out.join("copperwing-loads.csv");
    let c = dir.path().join("c");
    let base = [
        "check",
        csv.to_str().unwrap(),
        "--points",
        "heartline",
        "--min-top-g",
        "0.1",
        "--out",
        c.to_str().unwrap(),
        "--quiet",
    ];
    assert_eq!(run(&base), EXIT_OK);
    let mut strict = base.to_vec();
    strict.extend_from_slice(&["--limits", table.to_str().unwrap()]);
    assert_eq!(run(&strict), EXIT_INFEASIBLE);
}

/// A missing limits file is a usage error (exit 2) from every command that takes a brief.
#[test]
fn missing_limits_file_exits_2_everywhere() {
    let dir = tempfile::tempdir().unwrap();
    let missing = dir.path().join("no-such-table.toml");
    let m = missing.to_str().unwrap();
    let out = dir.path().join("out");
    let o = out.to_str().unwrap();
    let pts = dir.path().join("pts.csv");
    std::fs::write(&pts, "x,y,z\n0,0,0\n1,0,0\n2,0,0\n3,0,1\n").unwrap();
    for args in [
        vec!["design", "--limits", m, "--out", o],
        vec!["compare", "--limits", m, "--out", o],
        vec!["sweep", "--entry-speed", "25", "--limits", m, "--out", o],
        vec!["check", pts.to_str().unwrap(), "--limits", m, "--out", o],
    ] {
        assert_eq!(run(&args), EXIT_USAGE, "{args:?}");
    }
    assert!(!out.exists(), "nothing may be written");
}

/// `compare` and `sweep` enforce the table like `design`: with a table no family meets, compare
/// exits 3 and every sweep row is infeasible, naming the envelope.
#[test]
fn compare_and_sweep_enforce_the_limit_table() {
    let dir = tempfile::tempdir().unwrap();
    let table = dir.path().join("strict.toml");
    std::fs::write(&table, STRICT_TABLE).unwrap();
    let t = table.to_str().unwrap();
    let out = dir.path().join("out");
    let o = out.to_str().unwrap();
    let common = ["--spacing", "0.2", "--out", o, "--quiet"];
    let mut cmp = vec!["compare", "--shape", "clothoid", "--limits", t];
    cmp.extend_from_slice(&common);
    assert_eq!(run(&cmp), EXIT_INFEASIBLE);
    let mut sw = vec![
        "sweep",
        "--entry-speed",
        "24..25:2",
        "--shape",
        "clothoid",
        "--limits",
        t,
    ];
    sw.extend_from_slice(&common);
    assert_eq!(run(&sw), EXIT_OK);
    let text = std::fs::read_to_string(out.join("loop-sweep.csv")).unwrap();
    let rows: Vec<&str> = text.lines().skip(1).collect();
    assert_eq!(rows.len(), 2);
    for r in rows {
        assert!(r.contains("acceleration envelope"), "{r}");
    }
    // Without the table the same sweep is feasible.
    let mut free = vec!["sweep", "--entry-speed", "24..25:2", "--shape", "clothoid"];
    free.extend_from_slice(&common);
    assert_eq!(run(&free), EXIT_OK);
    let text = std::fs::read_to_string(out.join("loop-sweep.csv")).unwrap();
    assert!(!text.contains("acceleration envelope"));
}

/// A relative `limits_file` in a brief is read from the brief's folder, wherever the command runs.
#[test]
fn limits_file_in_a_brief_is_relative_to_the_brief() {
    let dir = tempfile::tempdir().unwrap();
    let sub = dir.path().join("study");
    std::fs::create_dir_all(&sub).unwrap();
    std::fs::write(sub.join("strict.toml"), STRICT_TABLE).unwrap();
    let brief = sub.join("brief.toml");
    std::fs::write(
        &brief,
        format!(
            "{}\nlimits_file = \"strict.toml\"\nspacing_m = 0.2\n",
            loopwright::brief::DEMO_BRIEF_TOML
        ),
    )
    .unwrap();
    let out = dir.path().join("out");
    // The table is found (not a missing file, exit 2) and enforced (exit 3).
    assert_eq!(
        run(&[
            "design",
            brief.to_str().unwrap(),
            "--out",
            out.to_str().unwrap()
        ]),
        EXIT_INFEASIBLE
    );
}

/// Flags that describe a design, not a given centreline, are refused by `check` (exit 2), never
/// silently dropped.
#[test]
fn check_refuses_design_only_flags() {
    let dir = tempfile::tempdir().unwrap();
    let pts = dir.path().join("pts.csv");
    std::fs::write(&pts, "x,y,z\n0,0,0\n1,0,0\n2,0,0\n3,0,1\n").unwrap();
    let p = pts.to_str().unwrap();
    for flag in [
        ["--shape", "circle"],
        ["--height", "20"],
        ["--spacing", "0.1"],
        ["--lead-length", "3"],
        ["--lateral-shift", "0"],
    ] {
        assert_eq!(run(&["check", p, flag[0], flag[1]]), EXIT_USAGE, "{flag:?}");
    }
}

/// A design's own DXF checks with the same brief without naming a layer: loopwright's file holds
/// the rail (LW-RAIL) and the heartline (LW-HEARTLINE), and `check` reads the rail by default and
/// the heartline with `--points heartline`, each giving the design's height back (the design's
/// JSON is the reference). A foreign file with several curves still needs `--layer` (exit 2).
#[test]
fn own_dxf_checks_without_a_layer() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("d");
    let demo = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/demo-brief.toml");
    let o = out.to_str().unwrap();
    assert_eq!(
        run(&["design", demo, "--spacing", "0.1", "--out", o, "--quiet"]),
        EXIT_OK
    );
    let design = json(&out.join("copperwing.json"));
    let dxf = out.join("copperwing.dxf");
    let d = dxf.to_str().unwrap();
    for (extra, layer) in [
        (vec![], "LW-RAIL"),
        (vec!["--points", "heartline"], "LW-HEARTLINE"),
    ] {
        let c = dir.path().join("c");
        let mut args = vec!["check", d, demo, "--out", c.to_str().unwrap(), "--quiet"];
        args.extend_from_slice(&extra);
        assert_eq!(run(&args), EXIT_OK, "{extra:?}");
        let checked = json(&c.join("copperwing-check.json"));
        assert!(
            checked["drawing"]["source"]
                .as_str()
                .unwrap()
                .contains(layer)
        );
        let (a, b) = (
            design["loop_height_m"].as_f64().unwrap(),
            checked["loop_height_m"].as_f64().unwrap(),
        );
        assert!((a - b).abs() < 0.01, "{layer}: design {a} m, check {b} m");
    }
    // Two curves on layers of another program: the user must choose.
    let foreign = std::fs::read_to_string(&dxf)
        .unwrap()
        .replace("LW-RAIL", "TRACK-A")
        .replace("LW-HEARTLINE", "TRACK-B");
    let f = dir.path().join("foreign.dxf");
    std::fs::write(&f, foreign).unwrap();
    let c = dir.path().join("f");
    assert_eq!(
        run(&[
            "check",
            f.to_str().unwrap(),
            demo,
            "--out",
            c.to_str().unwrap(),
            "--quiet"
        ]),
        EXIT_USAGE
    );
}
