#!/usr/bin/env python3
"""Independent check of a loopwright DXF with ezdxf (PyPI), a reader that shares no code with the
Rust `dxf` crate that wrote the file.

usage: audit_dxf.py FILE.dxf STATIONS LOOP_HEIGHT_M CAUTION

Checks, each printed as one line; exits 1 on the first failure, 2 if ezdxf is missing:
- ezdxf reads the file and its audit reports no errors;
- layers LW-RAIL, LW-HEARTLINE and LW-NOTES exist;
- each of the two layers holds exactly one 3D polyline with STATIONS vertices;
- the heartline's highest vertex is LOOP_HEIGHT_M above its first (entry) vertex, within 1e-6 m,
  and the entry vertex is at z = 0;
- $INSUNITS is 6 (metres);
- the TEXT lines on LW-NOTES, joined with spaces, contain CAUTION word for word.
"""

import sys

try:
    import ezdxf
except ImportError:
    print("FAIL: cannot import ezdxf; pip install -r tests/requirements.txt")
    sys.exit(2)

TOL_M = 1e-6


def fail(msg):
    print(f"FAIL: {msg}")
    sys.exit(1)


def ok(msg):
    print(f"ok: {msg}")


def main(argv):
    if len(argv) != 5:
        fail(f"usage: {argv[0]} FILE.dxf STATIONS LOOP_HEIGHT_M CAUTION")
    path, stations, loop_height, caution = argv[1], int(argv[2]), float(argv[3]), argv[4]

    try:
        doc = ezdxf.readfile(path)
    except (IOError, ezdxf.DXFStructureError) as e:
        fail(f"ezdxf cannot read {path}: {e}")
    ok(f"ezdxf {ezdxf.__version__} read {path} (DXF version {doc.dxfversion})")

    auditor = doc.audit()
    if auditor.has_errors:
        for e in auditor.errors:
            print(f"  audit error: {e.message}")
        fail(f"ezdxf audit found {len(auditor.errors)} error(s)")
    ok(f"audit: no errors ({len(auditor.fixes)} fix(es) applied)")

    for name in ("LW-RAIL", "LW-HEARTLINE", "LW-NOTES"):
        if not doc.layers.has_entry(name):
            fail(f"layer {name} missing")
    ok("layers LW-RAIL, LW-HEARTLINE, LW-NOTES present")

    msp = doc.modelspace()
    curves = {}
    for name in ("LW-RAIL", "LW-HEARTLINE"):
        polys = msp.query(f'POLYLINE[layer=="{name}"]')
        if len(polys) != 1:
            fail(f"layer {name}: expected 1 POLYLINE, found {len(polys)}")
        poly = polys[0]
        if not poly.is_3d_polyline:
            fail(f"layer {name}: POLYLINE is not a 3D polyline (flags {poly.dxf.flags})")
        pts = [tuple(v.dxf.location) for v in poly.vertices]
        if len(pts) != stations:
            fail(f"layer {name}: {len(pts)} vertices, expected {stations} (one per station)")
        curves[name] = pts
    ok(f"both layers hold one 3D polyline of {stations} vertices")

    heart = curves["LW-HEARTLINE"]
    if abs(heart[0][2]) > TOL_M:
        fail(f"heartline entry z = {heart[0][2]!r}, expected 0")
    top = max(p[2] for p in heart) - heart[0][2]
    if abs(top - loop_height) > TOL_M:
        fail(f"heartline top {top!r} m above entry, expected {loop_height!r} m (tolerance {TOL_M} m)")
    ok(f"heartline top {top:.9f} m above entry = loop height {loop_height:.9f} m")

    units = doc.header.get("$INSUNITS")
    if units != 6:
        fail(f"$INSUNITS = {units!r}, expected 6 (metres)")
    ok("$INSUNITS = 6 (metres)")

    notes = " ".join(t.dxf.text for t in msp.query('TEXT[layer=="LW-NOTES"]'))
    if " ".join(caution.split()) not in notes:
        fail(f"caution text missing from layer LW-NOTES; found: {notes!r}")
    ok("caution text present on LW-NOTES")
    print("PASS")


if __name__ == "__main__":
    main(sys.argv)
