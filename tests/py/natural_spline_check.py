"""Check loopwright's target-load spline against scipy's natural cubic spline (PyPI).

Usage: python3 tests/py/natural_spline_check.py GRID.txt ANGLES_DEG LOADS_G
GRID.txt: lines "theta_rad value" from loopwright. ANGLES_DEG, LOADS_G: comma-separated control
points over the whole turn (already mirrored). Exits non-zero if any value differs by > 1e-9 g.
"""
import sys

import numpy as np
from scipy.interpolate import CubicSpline

rows = [tuple(map(float, l.split())) for l in open(sys.argv[1]) if l.strip()]
t = np.radians([float(v) for v in sys.argv[2].split(",")])
y = [float(v) for v in sys.argv[3].split(",")]
ref = CubicSpline(t, y, bc_type="natural")
worst = max(abs(ref(th) - v) for th, v in rows)
print(f"natural spline: worst |Δ| = {worst:.3e} g")
sys.exit(1 if worst > 1e-9 else 0)
