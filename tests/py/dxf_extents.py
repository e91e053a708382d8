#!/usr/bin/env python3
"""Lateral extents of a loopwright DXF, read by ezdxf (PyPI), which shares no code with the Rust
`dxf` crate that wrote the file.

usage: dxf_extents.py FILE.dxf MIN_Y_EXTENT_M

Checks, each printed as one line; exits 1 on the first failure, 2 if ezdxf is missing:
- ezdxf reads the file and its audit reports no errors;
- every POLYLINE on layers LW-RAIL and LW-HEARTLINE is a 3D polyline (SPLINEs are 3D by nature);
- the heartline's vertices span at least MIN_Y_EXTENT_M in Y (a shifted loop is truly 3D).
Prints "y_extent_m <value>" for the heartline and "PASS" at the end.
"""

import sys

try:
    import ezdxf
except ImportError:
    print("FAIL: cannot import ezdxf; pip install -r tests/requirements.txt")
    sys.exit(2)


def fail(msg):
    print(f"FAIL: {msg}")
    sys.exit(1)


def main(argv):
    if len(argv) != 3:
        fail(f"usage: {argv[0]} FILE.dxf MIN_Y_EXTENT_M")
    path, min_extent = argv[1], float(argv[2])
    try:
        doc = ezdxf.readfile(path)
    except (IOError, ezdxf.DXFStructureError) as e:
        fail(f"ezdxf cannot read {path}: {e}")
    auditor = doc.audit()
    if auditor.has_errors:
        for e in auditor.errors:
            print(f"  audit error: {e.message}")
        fail(f"ezdxf audit found {len(auditor.errors)} error(s)")
    print("ok: audit found no errors")
    msp = doc.modelspace()
    extent = None
    for layer in ("LW-RAIL", "LW-HEARTLINE"):
        polys = msp.query(f'POLYLINE[layer=="{layer}"]')
        splines = msp.query(f'SPLINE[layer=="{layer}"]')
        if len(polys) + len(splines) == 0:
            fail(f"layer {layer}: no POLYLINE or SPLINE")
        # SPLINEs are evaluated by ezdxf itself (flattened to 0.1 mm).
        ys = [p[1] for sp in splines for p in sp.flattening(1e-4)]
        for poly in polys:
            if not poly.is_3d_polyline:
                fail(f"layer {layer}: POLYLINE is not a 3D polyline (flags {poly.dxf.flags})")
            ys.extend(v.dxf.location[1] for v in poly.vertices)
        span = max(ys) - min(ys)
        print(f"ok: layer {layer} y from {min(ys):.6f} to {max(ys):.6f} m")
        if layer == "LW-HEARTLINE":
            extent = span
    print(f"y_extent_m {extent:.9f}")
    if extent < min_extent:
        fail(f"heartline Y extent {extent} m is below {min_extent} m: the loop is not spread sideways")
    print("PASS")


if __name__ == "__main__":
    main(sys.argv)
