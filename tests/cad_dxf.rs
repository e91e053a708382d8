//! Issue 11: a DXF a CAD user accepts, checked by an independent reader, ezdxf (PyPI), through
//! `tests/py/cad_dxf.py`: audit with 0 errors and 0 fixes, true DIMENSIONs of the loop, splines
//! within 1 mm of the exact centreline, the elevation as ezdxf's drawing add-on draws it, a
//! read-save-reread round trip, and drawings made in other units and planes checked to the same
//! loads. Expected values come from the design itself (its summary and loads CSV).

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

use loopwright::brief::{Brief, DxfCurves};
use loopwright::export::dxf::{dxf_bytes, dxf_output};
use loopwright::export::table::loads_csv;
use loopwright::optimiser::design;
use loopwright::report::CAUTION;

/// Agreement required between loads from different drawings of one loop (the 0.01 g).
const SAME_LOADS_G: f64 = 0.01;

fn run(args: &[&str]) -> (bool, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_loopwright"))
        .args(args)
        .output()
        .expect("run loopwright");
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    (out.status.success() || out.status.code() == Some(1), text)
}

/// `loopwright check FILE` (plus `extra`), then its JSON report.
fn check_json(file: &Path, out: &Path, extra: &[&str]) -> (serde_json::Value, String) {
    let mut args = vec![
        "check",
        file.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ];
    args.extend(extra);
    // A check that runs writes its report whether or not the limits pass (exit 0 or 1).
    let (_, text) = run(&args);
    let json = std::fs::read_dir(out)
        .unwrap()
        .map(|e| e.unwrap().path())
        .find(|p| p.to_string_lossy().ends_with("-check.json"))
        .unwrap_or_else(|| panic!("check {} wrote no report:\n{text}", file.display()));
    let v = serde_json::from_slice(&std::fs::read(&json).unwrap()).unwrap();
    std::fs::remove_dir_all(out).unwrap();
    (v, text)
}

fn loads(v: &serde_json::Value) -> [f64; 3] {
    ["peak_normal_g", "top_normal_g", "min_inverted_normal_g"].map(|k| v[k].as_f64().unwrap())
}

fn assert_same_loads(got: [f64; 3], want: [f64; 3], what: &str) {
    for (g, w) in got.iter().zip(want) {
        assert!(
            (g - w).abs() < SAME_LOADS_G,
            "{what}: loads {got:?}, expected {want:?}"
        );
    }
}

fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let f = dir.join(name);
    std::fs::write(&f, bytes).unwrap();
    f
}

// ezdxf audit: 0 errors and 0 fixes; $INSUNITS 6 (DXF reference: 6 = metres); every entity
// inside $EXTMIN/$EXTMAX; the three DIMENSIONs measure the summary's loop height and footprint
// and the top radius; the caution and key figures are on the notes layer.
#[test]
fn demo_dxf_audits_clean_with_true_dimensions() {
    let d = design(&Brief::demo()).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let f = write(dir.path(), "demo.dxf", &dxf_bytes(&d).unwrap());
    let s = &d.best.summary;
    let out = common::python(
        "cad_dxf.py",
        &[Path::new("audit"), &f],
        &[
            &format!("{:.12}", s.loop_height_m),
            &format!("{:.12}", s.footprint_length_m),
            &format!("{:.12}", d.best.top_radius_m),
            CAUTION,
        ],
    );
    assert!(out.lines().any(|l| l == "PASS"), "{out}");
}

// Same brief, same bytes (no clock, GUIDs from the brief); a different brief changes the GUIDs.
// Size: the polyline DXF of the demo was 838,485 bytes before this change; the spline form must
// be well below it (issue 11 asks "well below"; we hold it under a third: the 0.3 µm fit tolerance
// makes it ~235 KB, the price of a reader's curvature giving the design's loads to 0.01 g).
#[test]
fn dxf_is_reproducible_and_small() {
    let b = Brief::demo();
    let (a, c) = (design(&b).unwrap(), design(&b).unwrap());
    let (x, y) = (dxf_bytes(&a).unwrap(), dxf_bytes(&c).unwrap());
    assert_eq!(x, y, "two runs of one brief differ");
    assert!(x.len() < 838_485 / 3, "demo DXF is {} bytes", x.len());
    let mut other = b.clone();
    other.title.push_str(" (copy)");
    let z = dxf_bytes(&design(&other).unwrap()).unwrap();
    let guid = |bytes: &[u8]| {
        let t = String::from_utf8_lossy(bytes).to_string();
        let i = t.find("$VERSIONGUID").unwrap();
        t[i..i + 60].to_string()
    };
    assert_ne!(guid(&x), guid(&z));
    // The polyline form stays available, one vertex per station on each 3D layer.
    let mut p = b.clone();
    p.dxf_curves = DxfCurves::Polyline;
    let poly = String::from_utf8(dxf_bytes(&design(&p).unwrap()).unwrap()).unwrap();
    let vertices = poly.matches("\nVERTEX\n").count();
    assert_eq!(vertices, 4 * a.best.path.stations.len());
    assert!(!poly.contains("\nSPLINE\n"));
}

// Splines evaluated by ezdxf (its own B-spline code) at each station's arc length stay within
// 1 mm of the exact centreline (the loads CSV's heartline and rail columns); the running rails
// are the brief's gauge apart, the left one on the frame's lateral side.
#[test]
fn splines_fit_the_exact_centreline_within_1_mm() {
    let d = design(&Brief::demo()).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let o = dxf_output(&d).unwrap();
    assert!(
        o.max_fit_error_m <= 1e-3,
        "writer measured {} m",
        o.max_fit_error_m
    );
    let f = write(dir.path(), "demo.dxf", &o.bytes);
    let csv = write(dir.path(), "demo-loads.csv", &loads_csv(&d).unwrap());
    let out = common::python(
        "cad_dxf.py",
        &[Path::new("splinefit"), &f, &csv],
        &[&d.brief.gauge_m.to_string()],
    );
    print!("{out}");
    assert!(out.lines().any(|l| l == "PASS"), "{out}");
}

// ezdxf's drawing add-on (matplotlib backend) draws the elevation layers; the heartline it draws
// spans the loop height vertically and the footprint from entry to exit, within 1 %.
#[test]
fn drawing_add_on_draws_the_loop_at_its_size() {
    let d = design(&Brief::demo()).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let f = write(dir.path(), "demo.dxf", &dxf_bytes(&d).unwrap());
    let png = dir.path().join("elevation.png");
    let s = &d.best.summary;
    let out = common::python(
        "cad_dxf.py",
        &[Path::new("render"), &f, &png],
        &[
            &s.loop_height_m.to_string(),
            &s.footprint_length_m.to_string(),
        ],
    );
    assert!(out.lines().any(|l| l == "PASS"), "{out}");
    assert!(std::fs::metadata(&png).unwrap().len() > 10_000);
}

// Read, saved and re-read by ezdxf, the design's DXF still checks to the design's loads.
#[test]
fn ezdxf_round_trip_checks_to_the_design_loads() {
    let d = design(&Brief::demo()).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let f = write(dir.path(), "demo.dxf", &dxf_bytes(&d).unwrap());
    let saved = dir.path().join("resaved.dxf");
    common::python("cad_dxf.py", &[Path::new("resave"), &f, &saved], &[]);
    let (v, text) = check_json(&saved, &dir.path().join("o"), &[]);
    let s = &d.best.summary;
    let want = [s.peak_normal_g, s.top_normal_g, s.min_inverted_normal_g];
    assert_same_loads(loads(&v), want, &format!("resaved DXF\n{text}"));
}

// Drawings a CAD user makes with ezdxf from the design's rail: metres in the XZ plane (the
// original), inches in XZ, metres in the XY plane (an elevation, Y up) as an LWPOLYLINE, and
// millimetres in XY as a chain of LINEs: all check to the same loads; the report says the units
// were converted ($INSUNITS: DXF reference, 1 = inches, 4 = millimetres) and which axis is up.
// With --up z the XY drawing is refused (its plane is not vertical with Z up).
#[test]
fn other_units_and_planes_check_to_the_same_loads() {
    let mut b = Brief::demo();
    b.lateral_shift_m = 0.0;
    let d = design(&b).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let csv = write(dir.path(), "planar-loads.csv", &loads_csv(&d).unwrap());
    common::python(
        "cad_dxf.py",
        &[Path::new("variants"), &csv, dir.path()],
        &[],
    );
    let out = dir.path().join("o");
    let (metre, _) = check_json(&dir.path().join("metre_xz.dxf"), &out, &[]);
    let want = loads(&metre);
    let s = &d.best.summary;
    assert_same_loads(
        want,
        [s.peak_normal_g, s.top_normal_g, s.min_inverted_normal_g],
        "metre XZ",
    );
    for (name, says) in [
        ("inch_xz.dxf", "inches ($INSUNITS 1) converted to metres"),
        ("metre_xy.dxf", "up: Y (detected"),
        ("mm_lines_xy.dxf", "LINE chain"),
    ] {
        let (v, text) = check_json(&dir.path().join(name), &out, &[]);
        assert_same_loads(loads(&v), want, &format!("{name}\n{text}"));
        assert!(
            text.contains(says),
            "{name}: report does not say '{says}':\n{text}"
        );
    }
    let xy = dir.path().join("metre_xy.dxf");
    let (ok, text) = run(&[
        "check",
        xy.to_str().unwrap(),
        "--up",
        "z",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(!ok && text.contains("tilted"), "{text}");
    let (v, _) = check_json(&xy, &out, &["--up", "y"]);
    assert_same_loads(loads(&v), want, "metre XY with --up y");
}

// The frame columns: unit, mutually perpendicular, right-handed with tangent × lateral = up
// (the documented convention), and the tangent agrees with the heartline's own direction by
// central differences of the x_m, y_m, z_m columns (an independent estimate, to 1e-3).
#[test]
fn loads_csv_frame_columns_follow_the_convention() {
    let mut b = Brief::demo();
    b.lateral_shift_m = 3.0;
    let d = design(&b).unwrap();
    let text = String::from_utf8(loads_csv(&d).unwrap()).unwrap();
    let mut lines = text.lines();
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |n: &str| head.iter().position(|h| *h == n).unwrap();
    let rows: Vec<Vec<f64>> = lines
        .map(|l| l.split(',').map(|c| c.parse().unwrap()).collect())
        .collect();
    let vec3 = |r: &Vec<f64>, p: &str| {
        nalgebra::Vector3::new(
            r[col(&format!("{p}x"))],
            r[col(&format!("{p}y"))],
            r[col(&format!("{p}z"))],
        )
    };
    for r in &rows {
        let (t, u, l) = (vec3(r, "tangent_"), vec3(r, "up_"), vec3(r, "lateral_"));
        for v in [t, u, l] {
            assert!((v.norm() - 1.0).abs() < 1e-8);
        }
        assert!(t.dot(&u).abs() < 1e-8 && t.dot(&l).abs() < 1e-8 && u.dot(&l).abs() < 1e-8);
        assert!((t.cross(&l) - u).norm() < 1e-8);
    }
    for w in rows.windows(3).step_by(37) {
        let ds = w[2][col("s_m")] - w[0][col("s_m")];
        if ds <= 0.0 {
            continue;
        }
        let at = |r: &Vec<f64>| nalgebra::Vector3::new(r[col("x_m")], r[col("y_m")], r[col("z_m")]);
        let fd = (at(&w[2]) - at(&w[0])) / ds;
        assert!((fd.normalize() - vec3(&w[1], "tangent_")).norm() < 1e-3);
    }
}
