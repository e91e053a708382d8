"""Reference for loopwright's smoothing spline: scipy.interpolate.make_smoothing_spline (PyPI).

Usage: python3 tests/py/smoothing_spline_check.py DATA.csv LAM OURS.csv
DATA.csv: t,y (the data). OURS.csv: t,f,df,ddf (loopwright's spline and derivatives at some t).
scipy's make_smoothing_spline minimises Σ wᵢ(yᵢ − g(tᵢ))² + λ∫g''² (w = 1), the same criterion.
Prints the worst differences; exits non-zero if value/slope/curvature differ by more than 1e-7
relative to the data's scale.
"""
import sys

import numpy as np
from scipy.interpolate import make_smoothing_spline

d = np.loadtxt(sys.argv[1], delimiter=",")
lam = float(sys.argv[2])
o = np.loadtxt(sys.argv[3], delimiter=",")
spl = make_smoothing_spline(d[:, 0], d[:, 1], lam=lam)
worst = []
for k in range(3):
    ref = spl(o[:, 0], nu=k)
    scale = max(1.0, float(np.max(np.abs(ref))))
    worst.append(float(np.max(np.abs(ref - o[:, k + 1]))) / scale)
print("smoothing spline vs scipy: worst relative |Δ| value %.2e, slope %.2e, second derivative %.2e" % tuple(worst))
sys.exit(1 if max(worst) > 1e-7 else 0)
