"""Check loopwright's monotone interpolation (PCHIP) against scipy's PchipInterpolator (PyPI).

scipy implements Fritsch & Carlson, SIAM J. Numer. Anal. 17 (1980) 238-246, with the
Fritsch-Butland weighted harmonic mean at interior knots and one-sided three-point end slopes.

Usage: python3 tests/py/pchip_check.py GRID.txt KNOTS VALUES TOLERANCE
GRID.txt: lines "t value" from loopwright. KNOTS, VALUES: comma-separated (KNOTS in the same unit
as t). Exits non-zero if any value differs by more than TOLERANCE.
"""
import sys

from scipy.interpolate import PchipInterpolator

rows = [tuple(map(float, l.split())) for l in open(sys.argv[1]) if l.strip()]
t = [float(v) for v in sys.argv[2].split(",")]
y = [float(v) for v in sys.argv[3].split(",")]
ref = PchipInterpolator(t, y)
worst = max(abs(float(ref(x)) - v) for x, v in rows)
print(f"pchip: worst |Δ| = {worst:.3e} over {len(rows)} points")
sys.exit(1 if worst > float(sys.argv[4]) else 0)
