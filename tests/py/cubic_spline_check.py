"""Check a loopwright cubic spline against scipy's CubicSpline (PyPI).

Usage: python3 tests/py/cubic_spline_check.py GRID.txt KNOTS VALUES END_CONDITION TOLERANCE
GRID.txt: lines "t value" from loopwright. KNOTS, VALUES: comma-separated. END_CONDITION:
"natural" (zero second derivative at both ends) or "natural-flat" (zero second derivative at the
first knot, zero slope at the last). Exits non-zero if any value differs by more than TOLERANCE.
"""
import sys

from scipy.interpolate import CubicSpline

rows = [tuple(map(float, l.split())) for l in open(sys.argv[1]) if l.strip()]
t = [float(v) for v in sys.argv[2].split(",")]
y = [float(v) for v in sys.argv[3].split(",")]
bc = {"natural": "natural", "natural-flat": ((2, 0.0), (1, 0.0))}[sys.argv[4]]
ref = CubicSpline(t, y, bc_type=bc)
worst = max(abs(float(ref(x)) - v) for x, v in rows)
print(f"cubic spline ({sys.argv[4]}): worst |Δ| = {worst:.3e} over {len(rows)} points")
sys.exit(1 if worst > float(sys.argv[5]) else 0)
