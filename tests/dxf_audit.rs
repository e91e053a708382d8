//! The DXF export read back by an independent reader: ezdxf (PyPI), via `tests/py/audit_dxf.py`.
//!
//! ezdxf shares no code with the Rust `dxf` crate that writes the file, so a passing audit means
//! the file is valid DXF as another implementation understands it, not merely round-trippable.
//! The expected values come from the design itself (station count, summary loop height) and from
//! the DXF reference ($INSUNITS code 6 = metres).

use std::process::Command;

use loopwright::brief::{Brief, DxfCurves};
use loopwright::export::dxf::dxf_bytes;
use loopwright::optimiser::design;
use loopwright::report::CAUTION;

#[test]
fn demo_dxf_passes_ezdxf_audit() {
    // The polyline form (brief `dxf_curves = "polyline"`): one vertex per station; the default
    // spline form is audited by tests/cad_dxf.rs.
    let mut brief = Brief::demo();
    brief.dxf_curves = DxfCurves::Polyline;
    let design = design(&brief).expect("the demo brief is feasible");
    let stations = design.best.path.stations.len();
    // The demo must not be thinned, or the vertex-count check below would not test "every station".
    assert!(
        stations <= loopwright::export::dxf::MAX_VERTICES,
        "demo has {stations} stations"
    );

    let dir = tempfile::tempdir().expect("temp dir");
    let file = dir.path().join("demo.dxf");
    std::fs::write(&file, dxf_bytes(&design).expect("DXF encodes")).expect("write DXF");

    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/py/audit_dxf.py");
    // independent reader: ezdxf (PyPI)
    let out = Command::new("python3")
        .arg(script)
        .arg(&file)
        .arg(stations.to_string())
        .arg(format!("{:.12}", design.best.summary.loop_height_m))
        .arg(CAUTION)
        .output()
        .expect(
            "python3 must be on PATH to run the DXF audit; pip install -r tests/requirements.txt",
        );
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    print!("{stdout}");
    eprint!("{stderr}");
    // Exit code 2 is the script's "ezdxf missing": fail loudly, never skip.
    assert_ne!(
        out.status.code(),
        Some(2),
        "ezdxf is not installed: pip install -r tests/requirements.txt"
    );
    assert!(
        out.status.success(),
        "ezdxf audit of the DXF failed:\n{stdout}{stderr}"
    );
    assert!(
        stdout.lines().any(|l| l == "PASS"),
        "audit script did not report PASS:\n{stdout}"
    );
}
