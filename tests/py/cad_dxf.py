#!/usr/bin/env python3
"""Independent checks of loopwright's DXF with ezdxf (PyPI) and its drawing add-on (matplotlib
backend); ezdxf shares no code with loopwright's own DXF writer.

usage:
  cad_dxf.py audit FILE.dxf LOOP_HEIGHT_M FOOTPRINT_M TOP_RADIUS_M CAUTION
  cad_dxf.py splinefit FILE.dxf LOADS.csv GAUGE_M  prints "max_fit_error_mm <v>" per layer
  cad_dxf.py render FILE.dxf OUT.png LOOP_HEIGHT_M FOOTPRINT_M
  cad_dxf.py resave IN.dxf OUT.dxf                 ezdxf read, save, re-read
  cad_dxf.py variants LOADS.csv OUTDIR             metre XZ, inch XZ, metre XY, mm LINE-chain XY
Each check prints one line; the script exits 1 on the first failure and prints PASS at the end.
"""

import csv
import sys

import ezdxf
from ezdxf.math import BSpline

ELEV = ["LW-ELEV-RAIL", "LW-ELEV-HEARTLINE", "LW-ELEV-LEAD", "LW-ELEV-MARKS", "LW-ELEV-DIMS", "LW-NOTES"]
MODEL = ["LW-RAIL", "LW-HEARTLINE", "LW-RAIL-LEFT", "LW-RAIL-RIGHT"]


def fail(msg):
    print(f"FAIL: {msg}")
    sys.exit(1)


def ok(msg):
    print(f"ok: {msg}")


def close(a, b, rel, what):
    if abs(a - b) > rel * abs(b):
        fail(f"{what}: {a!r}, expected {b!r} within {rel * 100:g} %")
    ok(f"{what}: {a:.6f} vs {b:.6f}")


def audit(path, height, footprint, radius, caution):
    doc = ezdxf.readfile(path)
    a = doc.audit()
    for e in a.errors:
        print(f"  audit error: {e.message}")
    for f in a.fixes:
        print(f"  audit fix: {f.message}")
    if a.has_errors or a.fixes:
        fail(f"ezdxf audit: {len(a.errors)} error(s), {len(a.fixes)} fix(es); expected 0 and 0")
    ok(f"ezdxf {ezdxf.__version__} audit: 0 errors, 0 fixes (DXF {doc.dxfversion})")
    if doc.header.get("$INSUNITS") != 6:
        fail(f"$INSUNITS = {doc.header.get('$INSUNITS')!r}, expected 6 (metres)")
    ok("$INSUNITS = 6 (metres)")
    for name in ELEV + MODEL:
        if not doc.layers.has_entry(name):
            fail(f"layer {name} missing")
    ok("all layers present")
    msp = doc.modelspace()
    # Every entity inside the header extents (ezdxf.bbox computes entity extents on its own).
    from ezdxf import bbox
    box = bbox.extents(msp, fast=False)
    lo, hi = doc.header["$EXTMIN"], doc.header["$EXTMAX"]
    slack = 1e-3
    for k in range(3):
        if box.extmin[k] < lo[k] - slack or box.extmax[k] > hi[k] + slack:
            fail(f"entities span {box.extmin}..{box.extmax}, outside $EXTMIN {lo} / $EXTMAX {hi}")
    ok(f"entities within $EXTMIN/$EXTMAX ({lo} .. {hi})")
    # 2D layers lie in the XY plane.
    for e in msp:
        if e.dxf.layer.startswith("LW-ELEV") and e.dxftype() == "SPLINE":
            if max(abs(p[2]) for p in e.control_points) > 1e-9:
                fail(f"{e.dxf.layer} SPLINE is not in the XY plane")
    ok("elevation curves lie in the XY plane (Z = 0)")
    dims = msp.query('DIMENSION[layer=="LW-ELEV-DIMS"]')
    got = sorted(round(d.get_measurement(), 6) for d in dims)
    want = sorted(round(v, 6) for v in (height, footprint, radius))
    if len(dims) != 3 or any(abs(g - w) > 1e-5 for g, w in zip(got, want)):
        fail(f"DIMENSION measurements {got}, expected {want}")
    kinds = sorted(d.dimtype for d in dims)
    if kinds != [0, 0, 4]:
        fail(f"dimension types {kinds}, expected two linear (0) and one radial (4)")
    for d in dims:
        if d.get_geometry_block() is None:
            fail("a DIMENSION has no geometry block")
    ok(f"DIMENSIONs measure {got} (loop height, footprint, top radius)")
    notes = " ".join(t.dxf.text for t in msp.query('TEXT[layer=="LW-NOTES"]'))
    if " ".join(caution.split()) not in " ".join(notes.split()):
        fail(f"caution missing from LW-NOTES: {notes!r}")
    if not msp.query('MTEXT[layer=="LW-NOTES"]'):
        fail("no key-figure MTEXT on LW-NOTES")
    ok("caution (TEXT) and key figures (MTEXT) on LW-NOTES")


def splinefit(path, loads, gauge):
    doc = ezdxf.readfile(path)
    msp = doc.modelspace()
    rows = list(csv.DictReader(open(loads)))
    s = [float(r["s_m"]) for r in rows]
    exact = {
        "LW-HEARTLINE": [(float(r["x_m"]), float(r["y_m"]), float(r["z_m"])) for r in rows],
        "LW-RAIL": [(float(r["rail_x_m"]), float(r["rail_y_m"]), float(r["rail_z_m"])) for r in rows],
    }
    worst = 0.0
    for layer, pts in exact.items():
        (sp,) = msp.query(f'SPLINE[layer=="{layer}"]')
        if sp.dxf.degree != 3:
            fail(f"{layer}: degree {sp.dxf.degree}, expected cubic")
        # ezdxf evaluates the NURBS from control points and knots on its own (de Boor).
        curve = BSpline(sp.control_points, order=4, knots=sp.knots)
        lo, hi = curve.knots()[0], curve.knots()[-1]
        err = 0.0
        for si, p in zip(s, pts):
            q = curve.point(min(max(si, lo), hi))
            err = max(err, ((q[0] - p[0]) ** 2 + (q[1] - p[1]) ** 2 + (q[2] - p[2]) ** 2) ** 0.5)
        print(f"max_fit_error_mm {layer} {err * 1e3:.6f} ({len(sp.control_points)} control points, {len(pts)} stations)")
        worst = max(worst, err)
    # Running rails: gauge apart at every station, the left one on the frame's lateral side.
    (left,) = msp.query('SPLINE[layer=="LW-RAIL-LEFT"]')
    (right,) = msp.query('SPLINE[layer=="LW-RAIL-RIGHT"]')
    cl = BSpline(left.control_points, order=4, knots=left.knots)
    cr = BSpline(right.control_points, order=4, knots=right.knots)
    lo, hi = cl.knots()[0], cl.knots()[-1]
    gerr = 0.0
    for si, r in zip(s, rows):
        a, b = cl.point(min(max(si, lo), hi)), cr.point(min(max(si, lo), hi))
        d = [a[k] - b[k] for k in range(3)]
        gerr = max(gerr, abs(sum(c * c for c in d) ** 0.5 - gauge))
        lat = [float(r[f"lateral_{c}"]) for c in "xyz"]
        if sum(d[k] * lat[k] for k in range(3)) <= 0:
            fail(f"at s = {si} the left rail is not on the lateral (left) side")
    if gerr > 1e-3:
        fail(f"running rails are {gerr * 1e3:.4f} mm off the gauge {gauge} m")
    ok(f"running rails {gauge} m apart within {gerr * 1e3:.4f} mm, left rail on the lateral side")
    if worst > 1e-3:
        fail(f"spline strays {worst * 1e3:.4f} mm from the exact centreline; at most 1 mm allowed")
    ok(f"every station within {worst * 1e3:.4f} mm of its SPLINE (at most 1 mm)")


def render(path, png, height, footprint):
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from ezdxf.addons.drawing import Frontend, RenderContext
    from ezdxf.addons.drawing.matplotlib import MatplotlibBackend

    doc = ezdxf.readfile(path)
    msp = doc.modelspace()

    def draw(layers, out=None):
        fig = plt.figure(figsize=(10, 8))
        ax = fig.add_axes([0, 0, 1, 1])
        ctx = RenderContext(doc)
        Frontend(ctx, MatplotlibBackend(ax)).draw_layout(
            msp, finalize=True, filter_func=lambda e: e.dxf.layer in layers
        )
        if out:
            fig.savefig(out, dpi=110)
        verts = []
        for c in ax.collections + ax.patches:
            paths = c.get_paths() if hasattr(c, "get_paths") else [c.get_path()]
            for p in paths:
                verts.append(p.vertices)
        for line in ax.lines:
            verts.append(line.get_xydata())
        plt.close(fig)
        return verts

    draw(ELEV, png)
    ok(f"ezdxf drawing add-on rendered the elevation layers to {png}")
    verts = draw(["LW-ELEV-HEARTLINE"])
    if not verts:
        fail("nothing drawn on LW-ELEV-HEARTLINE")
    path_v = max(verts, key=len)
    ys = [v[1] for v in path_v]
    close(max(ys) - min(ys), height, 0.01, "drawn heartline height = loop height")
    close(abs(path_v[-1][0] - path_v[0][0]), footprint, 0.01, "drawn entry-to-exit distance = footprint")


def resave(src, dst):
    doc = ezdxf.readfile(src)
    doc.saveas(dst)
    again = ezdxf.readfile(dst)
    a = again.audit()
    if a.has_errors:
        fail(f"re-read after save: {len(a.errors)} audit error(s)")
    ok(f"ezdxf read {src}, saved {dst}, re-read it (0 audit errors)")


def variants(loads, outdir):
    rows = list(csv.DictReader(open(loads)))
    rail = [(float(r["rail_x_m"]), float(r["rail_y_m"]), float(r["rail_z_m"])) for r in rows]
    # Thin to every 4th station (plus the last): a CAD user's polyline is not every station.
    rail = rail[::4] + [rail[-1]]

    def new(units):
        doc = ezdxf.new("R2000")
        doc.header["$INSUNITS"] = units
        return doc

    doc = new(6)
    doc.modelspace().add_polyline3d(rail, dxfattribs={"layer": "TRACK"})
    doc.saveas(f"{outdir}/metre_xz.dxf")
    doc = new(1)
    doc.modelspace().add_polyline3d([tuple(c / 0.0254 for c in p) for p in rail], dxfattribs={"layer": "TRACK"})
    doc.saveas(f"{outdir}/inch_xz.dxf")
    # The elevation as a 2D CAD user draws it: X along, Y up, in the XY plane.
    doc = new(6)
    doc.modelspace().add_lwpolyline([(p[0], p[2]) for p in rail], dxfattribs={"layer": "TRACK"})
    doc.saveas(f"{outdir}/metre_xy.dxf")
    doc = new(4)
    msp = doc.modelspace()
    mm = [(p[0] * 1000.0, p[2] * 1000.0, 0.0) for p in rail]
    for a, b in zip(mm, mm[1:]):
        msp.add_line(a, b, dxfattribs={"layer": "TRACK"})
    doc.saveas(f"{outdir}/mm_lines_xy.dxf")
    ok(f"wrote 4 drawings with ezdxf into {outdir}")


def main(argv):
    cmd = argv[1]
    if cmd == "audit":
        audit(argv[2], float(argv[3]), float(argv[4]), float(argv[5]), argv[6])
    elif cmd == "splinefit":
        splinefit(argv[2], argv[3], float(argv[4]))
    elif cmd == "render":
        render(argv[2], argv[3], float(argv[4]), float(argv[5]))
    elif cmd == "resave":
        resave(argv[2], argv[3])
    elif cmd == "variants":
        variants(argv[2], argv[3])
    else:
        fail(f"unknown command {cmd}")
    print("PASS")


if __name__ == "__main__":
    main(sys.argv)
